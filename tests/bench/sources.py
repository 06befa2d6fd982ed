#!/usr/bin/env python3
"""Shapes and sources benchmark: the cases beyond one CSV file.

usage (from the repository root):
    python3 tests/bench/sources.py [--rows 1e6 1e7] [--runs 5] [--work DIR]
                                   [--gen GEN_DATA.py] [--duckdb-attest PATH]

Needs numpy (for the shared data generator) and pyarrow (to write the
Parquet copy): `pip install numpy pyarrow`. GEN_DATA.py defaults to
../shared/bench/gen_data.py. For each size it writes the invented
two-group workload once as CSV and once as Parquet (zstd), then times, in
turn and --runs times each (interleaved, so a slow spell of a shared
machine falls on all alike), median wall time and peak RSS:

  csv       `attest run`, one independent-groups hypothesis, method
            `checked` with every robustness method, on the CSV file;
  parquet   the same plan and rows from the Parquet file;
  ten       ten hypotheses (the same comparison under ten ids) on the CSV;
  verify    `attest verify` of the csv run's output folder;
  duckdb    with --duckdb-attest (an attest built with --features duckdb):
            `source = "duckdb"` reading the Parquet file by a query;
  parse     `bare_parse` of the CSV file (tests/bench/bare_parse.rs).

Then, for rows/2 units, a paired design in the long layout (one row per
unit and condition, a unit-id column) against the bare parse of that file.
Prints the ratios the targets in README's Performance section name. Run
on demand; never in CI.
"""
import argparse
import os
import random
import shutil
import statistics
import subprocess
import sys
import tempfile
import time

sys.path.insert(0, os.path.dirname(__file__))
from scale import PLAN, build, machine, timed, fmt_rows, workload  # noqa: E402

ROOT = os.path.abspath(os.path.join(os.path.dirname(__file__), "..", ".."))

HEAD = """attest = 1
title = "Benchmark: {rows} rows"
summary = "Invented benchmark data: two arms, one outcome."
seed = 1

[data]
{data}
"""

# The benchmark's one hypothesis, as scale.py writes it, numbered.
HYPOTHESIS = "\n[[hypothesis]]" + PLAN.split("[[hypothesis]]", 1)[1].replace('id = "H1"', 'id = "H{k}"')

PAIRED = """attest = 1
title = "Benchmark: {pairs} pairs"
summary = "Invented benchmark data: one score per unit before and after."
seed = 1

[data]
path = "paired.csv"

[[hypothesis]]
id = "H1"
claim = "Scores change from before to after."
design = "paired"
outcome = "score"
pair_by = "unit"
condition = "phase"
levels = ["before", "after"]
method = "paired-t"
"""


def write_plan(path, rows, data, hypotheses=1):
    with open(path, "w") as f:
        f.write(HEAD.format(rows=rows, data=data))
        for k in range(1, hypotheses + 1):
            f.write(HYPOTHESIS.format(k=k))


def to_parquet(csv, out):
    import pyarrow.csv as pc
    import pyarrow.parquet as pq

    pq.write_table(pc.read_csv(csv), out, compression="zstd")


def paired_file(path, pairs, seed=11):
    """Long layout: unit, phase, score; rows in a shuffled order."""
    rng = random.Random(seed)
    order = list(range(2 * pairs))
    rng.shuffle(order)
    with open(path, "w") as f:
        f.write("unit,phase,score\n")
        base = [round(rng.gauss(50, 9), 1) for _ in range(pairs)]
        for r in order:
            u, second = divmod(r, 2)
            v = base[u] + (round(rng.gauss(0.8, 4), 1) if second else 0.0)
            f.write(f"U{u:07d},{'after' if second else 'before'},{v:.1f}\n")


def interleaved(cmds, runs):
    samples = {k: [] for k in cmds}
    for _ in range(runs):
        for k, (cmd, cwd) in cmds.items():
            samples[k].append(timed(cmd, cwd))
    wall = {k: statistics.median(s[0] for s in v) for k, v in samples.items()}
    rss = {k: max(s[1] for s in v) for k, v in samples.items()}
    return wall, rss


def lock(attest, plan, cwd):
    stem = os.path.splitext(os.path.basename(plan))[0]
    shutil.rmtree(os.path.join(cwd, "out", stem), ignore_errors=True)
    if not os.path.exists(os.path.join(cwd, stem + ".lock")):
        timed([attest, "lock", plan], cwd=cwd)


def sizes(args, attest, bare):
    print("| rows | csv s | csv MB | parquet s | parquet/csv | ten s | ten/one | verify s | verify/run"
          + (" | duckdb s | duckdb MB" if args.duckdb_attest else "") + " | parse s | csv/parse |")
    print("|---:|---:|---:|---:|---:|---:|---:|---:|---:|" + ("---:|---:|" if args.duckdb_attest else "") + "---:|---:|")
    for rows in args.rows:
        d, csv = workload(args.work, args.gen, rows)
        pq = os.path.join(d, "bench.parquet")
        if not os.path.exists(pq):
            to_parquet(csv, pq)
        write_plan(os.path.join(d, "csv.toml"), rows, 'path = "bench.csv"')
        write_plan(os.path.join(d, "parquet.toml"), rows, 'path = "bench.parquet"')
        write_plan(os.path.join(d, "ten.toml"), rows, 'path = "bench.csv"', hypotheses=10)
        for p in ("csv", "parquet", "ten"):
            lock(attest, f"{p}.toml", d)
        timed([attest, "run", "csv.toml", "--quiet"], cwd=d)
        cmds = {
            "csv": ([attest, "run", "csv.toml", "--quiet", "--force"], d),
            "parquet": ([attest, "run", "parquet.toml", "--quiet", "--force"], d),
            "ten": ([attest, "run", "ten.toml", "--quiet", "--force"], d),
            "verify": ([attest, "verify", "out/csv"], d),
            "parse": ([bare, csv, "arm", "score"], None),
        }
        if args.duckdb_attest:
            write_plan(os.path.join(d, "duck.toml"), rows,
                       "source = \"duckdb\"\nquery = \"SELECT arm, score FROM read_parquet('bench.parquet')\"")
            lock(args.duckdb_attest, "duck.toml", d)
            cmds["duckdb"] = ([args.duckdb_attest, "run", "duck.toml", "--quiet", "--force"], d)
        wall, rss = interleaved(cmds, args.runs)
        line = (f"| {fmt_rows(rows)} | {wall['csv']:.3f} | {rss['csv']:.0f} | {wall['parquet']:.3f}"
                f" | {wall['parquet'] / wall['csv']:.2f} | {wall['ten']:.3f} | {wall['ten'] / wall['csv']:.2f}"
                f" | {wall['verify']:.3f} | {wall['verify'] / wall['csv']:.2f}")
        if args.duckdb_attest:
            line += f" | {wall['duckdb']:.3f} | {rss['duckdb']:.0f}"
        line += f" | {wall['parse']:.3f} | {wall['csv'] / wall['parse']:.2f} |"
        print(line, flush=True)


def paired(args, attest, bare):
    pairs = max(args.rows) // 2
    d = os.path.join(args.work, f"paired{pairs}")
    os.makedirs(d, exist_ok=True)
    data = os.path.join(d, "paired.csv")
    if not os.path.exists(data):
        paired_file(data, pairs)
    with open(os.path.join(d, "paired.toml"), "w") as f:
        f.write(PAIRED.format(pairs=pairs))
    lock(attest, "paired.toml", d)
    wall, rss = interleaved({
        "attest": ([attest, "run", "paired.toml", "--quiet", "--force"], d),
        "parse": ([bare, data, "phase", "score"], None),
    }, args.runs)
    print(f"\npaired, long layout, {pairs} pairs ({2 * pairs} rows): attest {wall['attest']:.3f} s, "
          f"{rss['attest']:.0f} MB; bare parse {wall['parse']:.3f} s; attest/parse "
          f"{wall['attest'] / wall['parse']:.2f}")


def main():
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--rows", nargs="+", type=float, default=[1e6, 1e7])
    ap.add_argument("--runs", type=int, default=5)
    ap.add_argument("--work", help="folder for data and outputs (default: a new temporary folder)")
    ap.add_argument("--gen", default=os.path.join(ROOT, "..", "shared", "bench", "gen_data.py"))
    ap.add_argument("--duckdb-attest", help="an attest binary built with --features duckdb")
    args = ap.parse_args()
    args.rows = [int(r) for r in args.rows]
    args.gen = os.path.abspath(args.gen)
    args.work = os.path.abspath(args.work or tempfile.mkdtemp(prefix="attest-sources-"))
    if args.duckdb_attest:
        args.duckdb_attest = os.path.abspath(args.duckdb_attest)
    attest, bare = build()
    print(f"attest sources benchmark, {time.strftime('%Y-%m-%d')}, {machine()}")
    print(f"work folder {args.work}; median of {args.runs} interleaved runs; peak RSS per process\n")
    sizes(args, attest, bare)
    paired(args, attest, bare)


if __name__ == "__main__":
    main()
