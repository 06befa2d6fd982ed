#!/usr/bin/env python3
"""Brute-force exact p values for the rank tests with ties (and zeros).

Re-runnable: `python3 tests/reference/gen_ties.py` rewrites
tests/reference/ties.json next to this file. Nothing here shares code or
method with attest's dynamic programme: every case is enumerated
outright, in exact rational arithmetic.

* Mann-Whitney: the pooled values get midranks; every one of the
  C(n1+n2, n1) ways of choosing which positions form the first group is
  listed (itertools.combinations) and U1 = R1 - n1(n1+1)/2 counted.
  Sizes n1, n2 <= 10 with tie patterns from small integer scales.
* Wilcoxon signed-rank: every one of the 2^n sign patterns of the
  ranked |d| (n <= 16), with zeros dropped (Wilcoxon's rule) or kept in
  the ranking (Pratt's rule). Interval counts: from the same distribution
  when there are no zeros, else from the untied distribution of all the
  differences (every sign pattern of ranks 1..n).

p values: one-sided tails P(S >= s) / P(S <= s); two-sided is twice the
smaller tail, capped at 1 (attest's documented rule). The exact
Hodges-Lehmann interval ends are the order statistics D_(k_low) and
D_(M+1-k_high) of all pairwise differences (Walsh averages), where k_low
counts the leading u = 0, 1, ... with P(S >= top - u) rejecting and k_high
those with P(S <= u) rejecting, the rule being p < alpha with alpha the
decimal 1 - level, compared as fractions.
"""
import itertools
import json
import os
import random
from collections import Counter
from fractions import Fraction

OUT = os.path.join(os.path.dirname(os.path.abspath(__file__)), "ties.json")
LEVEL = "0.95"
ALPHA = 1 - Fraction(LEVEL)
ALTS = ["two-sided", "greater", "less"]
rnd = random.Random(20261202)


def midranks(values):
    """Midranks (as Fractions) of values, in their original order."""
    order = sorted(range(len(values)), key=lambda i: values[i])
    ranks = [None] * len(values)
    i = 0
    while i < len(order):
        j = i
        while j + 1 < len(order) and values[order[j + 1]] == values[order[i]]:
            j += 1
        r = Fraction(i + 1 + j + 1, 2)
        for t in range(i, j + 1):
            ranks[order[t]] = r
        i = j + 1
    return ranks


def tails(counts, obs):
    total = sum(counts.values())
    ge = Fraction(sum(c for s, c in counts.items() if s >= obs), total)
    le = Fraction(sum(c for s, c in counts.items() if s <= obs), total)
    return ge, le


def p_of(counts, obs, alt):
    ge, le = tails(counts, obs)
    if alt == "greater":
        return ge
    if alt == "less":
        return le
    return min(Fraction(1), 2 * min(ge, le))


def crit(counts, top, alt):
    """(k_low, k_high) by the rule p < alpha, from the upper and lower tail."""
    factor = 2 if alt == "two-sided" else 1
    total = sum(counts.values())

    def rejects(count):
        return min(Fraction(1), Fraction(factor * count, total)) < ALPHA

    k_high = 0
    while k_high <= top and rejects(sum(c for s, c in counts.items() if s <= k_high)):
        k_high += 1
    k_low = 0
    while k_low <= top and rejects(sum(c for s, c in counts.items() if s >= top - k_low)):
        k_low += 1
    return k_low, k_high


def ends(sorted_vals, k_low, k_high, alt):
    m = len(sorted_vals)
    low = sorted_vals[k_low - 1] if 1 <= k_low <= m and alt != "less" else None
    high = sorted_vals[m - k_high] if 1 <= k_high <= m and alt != "greater" else None
    return [None if low is None else float(low), None if high is None else float(high)]


def mann_whitney_case(name, x, y):
    pooled = x + y
    ranks = midranks(pooled)
    n1, n2 = len(x), len(y)
    base = Fraction(n1 * (n1 + 1), 2)
    counts = Counter()
    for combo in itertools.combinations(range(n1 + n2), n1):
        counts[sum(ranks[i] for i in combo) - base] += 1
    u1 = sum(ranks[:n1]) - base
    diffs = sorted(Fraction(a) - Fraction(b) for a in x for b in y)
    tied = len(set(pooled)) < len(pooled)
    out = []
    for alt in ALTS:
        k_low, k_high = crit(counts, n1 * n2, alt)
        out.append(
            {
                "name": name,
                "x": x,
                "y": y,
                "alternative": alt,
                "method": "exact-with-ties" if tied else "exact",
                "u1": float(u1),
                "p": float(p_of(counts, u1, alt)),
                "interval": ends(diffs, k_low, k_high, alt),
            }
        )
    return out


def signed_rank_case(name, d, rule):
    keep = rule == "keep-in-ranking"
    ranked = [v for v in d if keep or v != 0]
    ranks = midranks([abs(v) for v in ranked])
    items = [(r, v) for r, v in zip(ranks, ranked) if v != 0]
    counts = Counter()
    for signs in itertools.product((0, 1), repeat=len(items)):
        counts[sum(r for (r, _), s in zip(items, signs) if s)] += 1
    w_plus = sum(r for r, v in items if v > 0)
    zeros = sum(1 for v in d if v == 0)
    tied = len(set(abs(v) for v in ranked)) < len(ranked)
    exact_untied = not tied and not (keep and zeros)
    # Interval: order statistics of all Walsh averages. Without zeros the
    # critical counts come from the same (conditional) distribution as p;
    # with zeros from the untied distribution of all len(d) differences.
    walsh = sorted((Fraction(d[i]) + Fraction(d[j])) / 2 for i in range(len(d)) for j in range(i, len(d)))
    m = len(d) * (len(d) + 1) // 2
    if zeros == 0:
        ci_counts = counts
    else:
        ci_counts = Counter()
        for signs in itertools.product((0, 1), repeat=len(d)):
            ci_counts[sum(r + 1 for r, s in enumerate(signs) if s)] += 1
    out = []
    for alt in ALTS:
        k_low, k_high = crit(ci_counts, m, alt)
        out.append(
            {
                "name": name,
                "d": d,
                "zeros": rule,
                "alternative": alt,
                "method": "exact" if exact_untied else "exact-with-ties",
                "w_plus": float(w_plus),
                "p": float(p_of(counts, w_plus, alt)),
                "interval": ends(walsh, k_low, k_high, alt),
            }
        )
    return out


def main():
    mw = []
    # Hand-picked tie patterns: one big tie, all tied but one, ties across
    # groups only, two-level data, complete separation with ties.
    fixed = [
        ("big_tie", [1, 2, 2, 2, 3], [2, 2, 2, 4]),
        ("all_but_one", [5, 5, 5], [5, 5, 6]),
        ("cross_ties", [1, 3, 5, 7], [1, 3, 5, 8, 9]),
        ("binary", [0, 0, 1, 1, 1, 1], [0, 0, 0, 0, 1]),
        ("separated_ties", [4, 4, 5, 5], [1, 1, 2]),
        ("single_vs_tied", [3], [3, 3, 1]),
        ("untied_small", [4, 5, 6], [1, 2, 3]),
        ("halves", [0.5, 1.5, 1.5, 2.5], [1.5, 2.5, 2.5, 3.5, 0.5]),
    ]
    for name, x, y in fixed:
        mw += mann_whitney_case(name, x, y)
    # Likert-like scales, sizes up to 10 x 10.
    for i, (n1, n2, scale) in enumerate(
        [(4, 5, 5), (6, 6, 3), (7, 5, 7), (8, 8, 4), (3, 10, 5), (9, 7, 5),
         (10, 10, 5), (10, 9, 3), (2, 9, 4), (10, 10, 11)]
    ):
        x = [rnd.randint(1, scale) for _ in range(n1)]
        y = [rnd.randint(1, scale) + (1 if i % 2 else 0) for _ in range(n2)]
        if len(set(x + y)) == 1:
            y[0] += 1
        mw += mann_whitney_case(f"likert_{n1}x{n2}_s{scale}", x, y)

    wx = []
    fixed_d = [
        ("constant_four", [3, 3, 3, 3]),
        ("zeros_and_ties", [0, 0, 1, -1, 2, 2, 3]),
        ("one_zero", [0, 1, 2, 3]),
        ("sign_mix", [0, -1, 2, 3]),
        ("heavy_ties", [1, 1, 1, -1, -1, 2, 2, 2, 2]),
        ("halves", [-0.5, 0.5, 1.5, 1.5, 0, 2.5]),
    ]
    for name, d in fixed_d:
        for rule in ("drop", "keep-in-ranking"):
            wx += signed_rank_case(name, d, rule)
    for i, n in enumerate([5, 8, 10, 12, 14, 16]):
        d = [rnd.randint(-2, 4) for _ in range(n)]
        if all(v == 0 for v in d):
            d[0] = 1
        for rule in ("drop", "keep-in-ranking"):
            wx += signed_rank_case(f"small_scale_{n}", d, rule)

    doc = {
        "source": "brute-force enumeration in exact rationals (tests/reference/gen_ties.py)",
        "level": float(Fraction(LEVEL)),
        "mann_whitney": mw,
        "wilcoxon": wx,
    }
    with open(OUT, "w") as f:
        json.dump(doc, f, indent=1)
        f.write("\n")
    print(f"wrote {OUT}: {len(mw)} Mann-Whitney, {len(wx)} Wilcoxon cases")


if __name__ == "__main__":
    main()
