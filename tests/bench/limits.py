#!/usr/bin/env python3
"""Limits benchmark: how attest handles inputs far beyond the usual size.

usage (from the repository root):
    python3 tests/bench/limits.py [--work DIR] [--big-gb 2.0]

Each case is invented data written into the work folder, run once through
the release build, and reported with exit code, wall time, peak resident
memory (wait4) and the first line of stderr:

  big file     a CSV of about --big-gb GB (three columns); attest reads it
               in blocks and refuses it once it passes the row cap, so
               memory stays bounded whatever the file size;
  1 MB cell    one 1 MiB cell in an unused column and one as an unselected
               group label;
  levels       a grouping column with 1,000,000 distinct labels;
  hypotheses   an analysis file with 5,000 hypotheses (refused at 200).

Run on demand; never in CI. Standard library only.
"""
import argparse
import os
import subprocess
import sys
import tempfile
import time

sys.path.insert(0, os.path.dirname(__file__))
from scale import measured  # noqa: E402

ROOT = os.path.abspath(os.path.join(os.path.dirname(__file__), "..", ".."))

HEAD = """attest = 1
title = "Limits: {name}"
alpha = 0.05

[data]
path = "d.csv"
"""

HYPOTHESIS = """
[[hypothesis]]
id = "H{i}"
claim = "Site a scores differently from site b."
design = "independent"
outcome = "score"
group = "site"
levels = ["a", "b"]
alternative = "two-sided"
method = "welch-t"
"""


def timed(cmd, cwd):
    code, wall, rss, err = measured(cmd, cwd)
    return code, wall, rss, (err.strip().splitlines() or [""])[0]


def write_rows(path, rows, label, note=lambda i: "ok"):
    """site,note,score rows: sites a and b alternate with label(i) rows."""
    with open(path, "w") as f:
        f.write("site,note,score\n")
        buf = []
        for i in range(rows):
            buf.append(f"{label(i)},{note(i)},{40 + (i * 7919) % 2000 / 100:.2f}\n")
            if len(buf) == 100_000:
                f.write("".join(buf))
                buf = []
        f.write("".join(buf))


def case(work, name, plan_text, make_data):
    d = os.path.join(work, name)
    os.makedirs(d, exist_ok=True)
    with open(os.path.join(d, "p.toml"), "w") as f:
        f.write(plan_text)
    data = os.path.join(d, "d.csv")
    if not os.path.exists(data):
        make_data(data)
    size = os.path.getsize(data) / 1e6
    attest = os.path.join(ROOT, "target", "release", "attest")
    code, wall, rss, first = timed([attest, "run", "--unlocked", "--quiet", "--force", "p.toml",
                                    "--out", "out"], d)
    print(f"| {name} | {size:,.0f} MB | {code} | {wall:.2f} s | {rss:.0f} MB | {first[:110]} |",
          flush=True)


def main():
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--work", help="folder for the inputs (default: a new temporary folder)")
    ap.add_argument("--big-gb", type=float, default=2.0)
    a = ap.parse_args()
    work = os.path.abspath(a.work or tempfile.mkdtemp(prefix="attest-limits-"))
    subprocess.run(["cargo", "build", "--release", "--quiet", "--bin", "attest"], cwd=ROOT, check=True)
    print(f"attest limits, {time.strftime('%Y-%m-%d')}, {os.cpu_count()} cores; work folder {work}\n")
    print("| case | data | exit | wall | peak RSS | first line of stderr |")
    print("|---|---:|---:|---:|---:|---|")
    one = HEAD.format(name="{name}") + HYPOTHESIS.format(i=1)
    ab = lambda i: "ab"[i % 2]  # noqa: E731
    big_rows = int(a.big_gb * 1e9 / 11)  # rows such as "a,ok,52.47" are 11 bytes
    case(work, "big file", one.replace("{name}", "big file"), lambda p: write_rows(p, big_rows, ab))
    mb = "x" * (1 << 20)
    case(work, "1 MB cell", one.replace("{name}", "1 MB cell"),
         lambda p: write_rows(p, 1000, lambda i: mb if i == 7 else ab(i),
                              note=lambda i: mb if i == 3 else "ok"))
    case(work, "levels", one.replace("{name}", "levels"),
         lambda p: write_rows(p, 1_002_000, lambda i: ab(i) if i < 2000 else f"site-{i:07}"))
    many = HEAD.format(name="hypotheses") + "".join(HYPOTHESIS.format(i=i) for i in range(1, 5001))
    case(work, "hypotheses", many, lambda p: write_rows(p, 1000, ab))


if __name__ == "__main__":
    sys.exit(main())
