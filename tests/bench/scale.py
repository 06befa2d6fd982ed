#!/usr/bin/env python3
"""Scale benchmark: `attest run` against a bare parse and the peer pipeline.

usage (from the repository root):
    python3 tests/bench/scale.py PEER_PIPELINE.py [--sizes 1e4 1e5 1e6 1e7]
                                 [--runs 3] [--work DIR] [--no-batch]

PEER_PIPELINE.py is the scripted pandas + scipy + matplotlib pipeline we
measure against; its `gen_data.py` (beside it, or --gen) writes the
invented two-group workload. For each size the script writes the data
once, writes and locks one analysis file (one independent-groups
hypothesis, method `checked`, every robustness check on), then times, in
turn and `--runs` times each:

  attest   `attest run` end to end (read, hash, exclusions, statistics,
           figures, Markdown + HTML + values), release build;
  parse    `bare_parse`, a one-thread streaming parse of the same two
           columns and nothing else (tests/bench/bare_parse.rs);
  peer     the peer pipeline on the same file, when python3 can import
           pandas, scipy and matplotlib.

The three alternate run by run (so a slow spell of a shared machine falls
on all alike). It prints the median wall time, the peak resident memory
(from wait4, per process), rows per second, attest's time over the bare
parse, and the peer's time and memory over attest's. Then it times one `attest run` over a
folder of 50 small analyses (n = 200 each). Run on demand; never in CI.
Needs numpy for the data generator.
"""
import argparse
import os
import shutil
import statistics
import subprocess
import sys
import tempfile
import time

ROOT = os.path.abspath(os.path.join(os.path.dirname(__file__), "..", ".."))

PLAN = """attest = 1
title = "Benchmark: {rows} rows"
summary = "Invented benchmark data: two arms, one outcome."
alpha = 0.05
confidence = 0.95
seed = 1

[data]
path = "{data}"

[[hypothesis]]
id = "H1"
claim = "The treated arm scores differently from the control arm."
design = "independent"
outcome = "score"
group = "arm"
levels = ["treated", "control"]
alternative = "two-sided"
method = "checked"
robustness = true
"""


# Each command is started by a small runner process that forks it, times
# it and reads its peak RSS with wait4. Linux keeps a process's peak RSS
# across exec, so a command started straight from this script (which
# subprocess does by vfork and exec) reports this script's own peak
# instead whenever that is larger: after this script had generated data,
# a 74 MB run of attest was recorded as 194 MB. The runner is a fresh
# interpreter (about 10 MB), and the wall time it reports leaves out its
# own start-up.
RUNNER = """
import os, sys, time
fd = int(sys.argv[1])
os.set_inheritable(fd, False)
start = time.perf_counter()
pid = os.fork()
if pid == 0:
    try:
        os.execvp(sys.argv[2], sys.argv[2:])
    except OSError as e:
        sys.stderr.write(f"{sys.argv[2]}: {e.strerror}\\n")
    os._exit(127)
_, status, usage = os.wait4(pid, 0)
wall = time.perf_counter() - start
os.write(fd, f"{wall!r} {usage.ru_maxrss}".encode())
code = os.waitstatus_to_exitcode(status)
sys.exit(code if code >= 0 else 128 - code)
"""


def measured(cmd, cwd=None, out=None):
    """Runs cmd through RUNNER; returns (exit code, wall seconds, peak RSS
    in MB, stderr text)."""
    r, w = os.pipe()
    try:
        p = subprocess.Popen([sys.executable, "-c", RUNNER, str(w), *cmd], cwd=cwd,
                             stdout=out or subprocess.DEVNULL, stderr=subprocess.PIPE,
                             pass_fds=(w,))
    finally:
        os.close(w)
    with os.fdopen(r) as f:
        report = f.read()
    _, err = p.communicate()
    if not report:
        sys.exit(f"the benchmark runner could not start: {' '.join(cmd)}\n{err.decode(errors='replace')}")
    wall, kb = report.split()
    return p.returncode, float(wall), int(kb) / 1024.0, err.decode(errors="replace")


def timed(cmd, cwd=None, out=None):
    """Runs cmd; returns (wall seconds, peak RSS in MB). Fails loudly."""
    code, wall, rss, err = measured(cmd, cwd, out)
    if code != 0:
        sys.exit(f"failed ({code}): {' '.join(cmd)}\n{err}")
    return wall, rss


def median_of(runs, cmd, cwd=None):
    """Median wall time and largest peak RSS of `runs` runs."""
    samples = [timed(cmd, cwd) for _ in range(runs)]
    return statistics.median(s[0] for s in samples), max(s[1] for s in samples)


def peer_available():
    probe = "import pandas, scipy, matplotlib"
    return subprocess.run([sys.executable, "-c", probe], capture_output=True).returncode == 0


def build():
    subprocess.run(["cargo", "build", "--release", "--quiet", "--bin", "attest", "--example", "bare_parse"],
                   cwd=ROOT, check=True)
    return (os.path.join(ROOT, "target", "release", "attest"),
            os.path.join(ROOT, "target", "release", "examples", "bare_parse"))


def machine():
    cpu = "unknown CPU"
    try:
        with open("/proc/cpuinfo") as f:
            for line in f:
                if line.startswith("model name"):
                    cpu = line.split(":", 1)[1].strip()
                    break
    except OSError:
        pass
    return f"{os.cpu_count()} cores, {cpu}"


def fmt_rows(n):
    return f"10^{len(str(n)) - 1}" if str(n).strip("0") == "1" else str(n)


def workload(work, gen, rows):
    """The folder for `rows` rows under `work` and the invented workload
    CSV in it, written by the generator `gen` unless it is there."""
    d = os.path.join(work, f"n{rows}")
    os.makedirs(d, exist_ok=True)
    data = os.path.join(d, "bench.csv")
    if not os.path.exists(data):
        subprocess.run([sys.executable, gen, str(rows), data], check=True)
    return d, data


def scale(args, attest, bare, peer_ok):
    print(f"| rows | attest s | attest MB | attest rows/s | parse s | attest/parse | HTML KB |"
          + (" peer s | peer MB | peer/attest time | peer/attest memory |" if peer_ok else ""))
    print("|---:|---:|---:|---:|---:|---:|---:|" + ("---:|---:|---:|---:|" if peer_ok else ""))
    for rows in args.sizes:
        d, data = workload(args.work, args.gen, rows)
        plan = os.path.join(d, "bench.toml")
        lock = os.path.join(d, "bench.lock")
        if not os.path.exists(lock):
            with open(plan, "w") as f:
                f.write(PLAN.format(rows=rows, data="bench.csv"))
            shutil.rmtree(os.path.join(d, "out"), ignore_errors=True)
            timed([attest, "lock", plan, "--out", os.path.join(d, "out")], cwd=d)
        cmds = {
            "attest": ([attest, "run", plan, "--out", os.path.join(d, "out"), "--quiet"], d),
            "parse": ([bare, data, "arm", "score"], None),
        }
        if peer_ok:
            cmds["peer"] = ([sys.executable, args.peer, data, os.path.join(d, "peer")], None)
        # Interleaved (attest, parse, peer, attest, …) so that a slow spell of
        # a shared machine falls on all of them alike.
        samples = {k: [] for k in cmds}
        for _ in range(args.runs):
            for k, (cmd, cwd) in cmds.items():
                samples[k].append(timed(cmd, cwd))
        wall = {k: statistics.median(s[0] for s in v) for k, v in samples.items()}
        rss = {k: max(s[1] for s in v) for k, v in samples.items()}
        a_wall, a_rss, b_wall = wall["attest"], rss["attest"], wall["parse"]
        html = os.path.getsize(os.path.join(d, "out", "report.html")) / 1024
        line = (f"| {fmt_rows(rows)} | {a_wall:.3f} | {a_rss:.0f} | {rows / a_wall / 1e6:.2f} M"
                f" | {b_wall:.3f} | {a_wall / b_wall:.2f} | {html:.0f} |")
        if peer_ok:
            p_wall, p_rss = wall["peer"], rss["peer"]
            line += f" {p_wall:.3f} | {p_rss:.0f} | {p_wall / a_wall:.1f}x | {p_rss / a_rss:.1f}x |"
        print(line, flush=True)


def batch(args, attest):
    d = os.path.join(args.work, "batch")
    folder = os.path.join(d, "analyses")
    if not os.path.exists(os.path.join(folder, "a50.lock")):
        shutil.rmtree(d, ignore_errors=True)
        os.makedirs(os.path.join(folder, "data"))
        for k in range(1, 51):
            data = os.path.join(folder, "data", f"a{k:02}.csv")
            subprocess.run([sys.executable, args.gen, "200", data, "--seed", str(k)], check=True)
            plan = os.path.join(folder, f"a{k:02}.toml")
            with open(plan, "w") as f:
                f.write(PLAN.format(rows=200, data=f"data/a{k:02}.csv"))
            timed([attest, "lock", plan], cwd=d)
    wall, rss = median_of(args.runs, [attest, "run", "analyses", "--quiet"], cwd=d)
    print(f"\n50 analyses (n = 200 each), one `attest run analyses/`: "
          f"median {wall:.3f} s wall, peak {rss:.0f} MB")


def main():
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("peer", help="path to the peer pipeline script (peer_pipeline.py)")
    ap.add_argument("--gen", help="data generator (default: gen_data.py beside the peer)")
    ap.add_argument("--sizes", nargs="+", type=float, default=[1e4, 1e5, 1e6, 1e7])
    ap.add_argument("--runs", type=int, default=3)
    ap.add_argument("--work", help="folder for data and outputs (default: a new temporary folder)")
    ap.add_argument("--no-batch", action="store_true")
    args = ap.parse_args()
    args.peer = os.path.abspath(args.peer)
    args.gen = os.path.abspath(args.gen or os.path.join(os.path.dirname(args.peer), "gen_data.py"))
    args.sizes = [int(s) for s in args.sizes]
    args.work = os.path.abspath(args.work or tempfile.mkdtemp(prefix="attest-bench-"))
    os.makedirs(args.work, exist_ok=True)
    attest, bare = build()
    peer_ok = peer_available()
    print(f"attest scale benchmark, {time.strftime('%Y-%m-%d')}, {machine()}")
    print(f"work folder {args.work}; median of {args.runs} runs; peak RSS per process")
    if not peer_ok:
        print("python3 cannot import pandas, scipy and matplotlib: the peer is skipped")
    print()
    scale(args, attest, bare, peer_ok)
    if not args.no_batch:
        batch(args, attest)


if __name__ == "__main__":
    main()
