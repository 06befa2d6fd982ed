#!/usr/bin/env python3
"""Reference values for attest's rank tests, normality and spread tests.

Re-runnable: `python3 tests/reference/gen_ranks.py` rewrites
tests/reference/ranks.json next to this file. scipy serves only as a
general-purpose source of reference numbers; the inputs are generated
here from a fixed seed plus hand-written adversarial cases, and stored in
the JSON so the Rust test needs nothing else.

The p-method chosen for each case mirrors attest's documented rule
(exact when no ties/zeros and within the exact limits; otherwise the
normal approximation with tie and continuity correction), so scipy is
asked for the same method. Hodges-Lehmann estimates and interval
endpoints are brute force in numpy (all pairwise differences / Walsh
averages), with critical counts from an independent big-integer
recursion (exact) or scipy.stats.norm.ppf (approximate).
"""
import json
import math
import os

import numpy as np
import scipy
from scipy import stats

OUT = os.path.join(os.path.dirname(os.path.abspath(__file__)), "ranks.json")
rng = np.random.default_rng(20261201)
LEVEL = 0.95


def r(a):
    return [float(v) for v in a]


def mw_exact_feasible(m, n):
    if m * n > 250_000:
        return False
    m, n = min(m, n), max(m, n)
    log2c = sum(math.log2((n + i) / i) for i in range(1, m + 1))
    return log2c < 120.0


def mw_counts(m, n):
    """Counts of U by the Mann-Whitney (1947) recursion
    f(m, n, u) = f(m-1, n, u-n) + f(m, n-1, u), in Python integers."""
    from functools import lru_cache

    @lru_cache(maxsize=None)
    def f(a, b):
        if a == 0 or b == 0:
            return (1,)
        left = f(a - 1, b)  # last element from group 1: adds b to U
        right = f(a, b - 1)
        out = [0] * (a * b + 1)
        for u, c in enumerate(left):
            out[u + b] += c
        for u, c in enumerate(right):
            out[u] += c
        return tuple(out)

    return f(m, n)


def w_counts(n):
    """Counts of W+ over all 2^n sign patterns, Python integers."""
    c = [1]
    for i in range(1, n + 1):
        new = c + [0] * i
        for s, v in enumerate(c):
            new[s + i] += v
        c = new
    return c


def crit_exact(counts, alt):
    """Order statistic k of the exact interval: the number of leading
    outcomes whose tail p rejects by the rule p < alpha (twice the tail
    for two-sided), compared in exact rationals with alpha as the decimal
    1 - LEVEL, so the interval excludes the null exactly when p < alpha."""
    from fractions import Fraction

    alpha = 1 - Fraction(str(LEVEL))
    factor = 2 if alt == "two-sided" else 1
    total = sum(counts)
    k, acc = 0, 0
    for c in counts:
        acc += c
        if Fraction(factor * acc, total) < alpha:
            k += 1
        else:
            break
    return k


def crit_normal(mu, sigma, tail):
    z = -stats.norm.ppf(tail)
    k = math.floor(mu - z * sigma + 0.5)
    return k if k >= 1 else 0


def tail_of(alt):
    return (1 - LEVEL) / 2 if alt == "two-sided" else 1 - LEVEL


def interval(sorted_vals, k, alt):
    m = len(sorted_vals)
    ok = 1 <= k <= m
    low = float(sorted_vals[k - 1]) if ok and alt != "less" else None
    high = float(sorted_vals[m - k]) if ok and alt != "greater" else None
    return [low, high]


def has_ties(v):
    return len(np.unique(v)) < len(v)


def mw_case(name, x, y, alt):
    x, y = np.asarray(x, float), np.asarray(y, float)
    n1, n2 = len(x), len(y)
    exact = (not has_ties(np.concatenate([x, y]))) and mw_exact_feasible(n1, n2)
    if exact:
        res = stats.mannwhitneyu(x, y, alternative=alt, method="exact")
    else:
        res = stats.mannwhitneyu(x, y, alternative=alt, method="asymptotic", use_continuity=True)
    # scipy reports U for the first sample for every alternative.
    u1 = float(res.statistic)
    diffs = np.sort(np.subtract.outer(x, y).ravel())
    tail = tail_of(alt)
    if exact:
        k = crit_exact(mw_counts(n1, n2), alt)
    else:
        k = crit_normal(n1 * n2 / 2, math.sqrt(n1 * n2 * (n1 + n2 + 1) / 12), tail)
    return dict(
        name=name, x=r(x), y=r(y), alternative=alt,
        method="exact" if exact else "normal",
        u1=u1, p=float(res.pvalue),
        hl=float(np.median(diffs)),
        interval=interval(diffs, k, alt),
        rank_biserial=2 * u1 / (n1 * n2) - 1,
        prob_superiority=u1 / (n1 * n2),
    )


def walsh(d):
    d = np.sort(d)
    i, j = np.triu_indices(len(d))
    return np.sort(0.5 * d[i] + 0.5 * d[j])


def w_case(name, d, alt):
    d = np.asarray(d, float)
    nz = d[d != 0]
    exact = len(nz) == len(d) and not has_ties(np.abs(nz)) and len(nz) <= 120
    method = "exact" if exact else "asymptotic"
    kw = dict(zero_method="wilcox", correction=not exact, method=method)
    res = stats.wilcoxon(d, alternative=alt, **kw)
    # For one-sided alternatives scipy reports W+; ask for it explicitly.
    w_plus = float(stats.wilcoxon(d, alternative="greater", **kw).statistic)
    n = len(nz)
    mu = n * (n + 1) / 4
    corner = (not exact) and alt == "two-sided" and abs(w_plus - mu) < 0.5
    wa = walsh(d)
    tail = tail_of(alt)
    if exact:
        k = crit_exact(w_counts(n), alt)
    else:
        a = len(d)
        k = crit_normal(a * (a + 1) / 4, math.sqrt(a * (a + 1) * (2 * a + 1) / 24), tail)
    total = n * (n + 1) / 2
    return dict(
        name=name, d=r(d), alternative=alt,
        method="exact" if exact else "normal",
        w_plus=w_plus, p=float(res.pvalue), n_used=n,
        zeros_dropped=int(len(d) - n),
        continuity_corner=bool(corner),
        hl=float(np.median(wa)),
        interval=interval(wa, k, alt),
        rank_biserial=(w_plus - (total - w_plus)) / total,
    )


ALTS = ["two-sided", "greater", "less"]
mw, wx, sw, sp = [], [], [], []

# Random continuous samples, unequal sizes, shifted.
for i, (n1, n2) in enumerate([(3, 4), (5, 5), (7, 12), (10, 9), (20, 25), (40, 35), (62, 62), (3, 200)]):
    x = rng.normal(0.4, 1.0, n1)
    y = rng.normal(0.0, 1.3, n2)
    for alt in ALTS:
        mw.append(mw_case(f"normal_{n1}x{n2}", x, y, alt))
# Heavy tails (Cauchy) and skew (lognormal).
for n1, n2 in [(15, 11), (80, 90)]:
    x = rng.standard_cauchy(n1) + 1.0
    y = rng.standard_cauchy(n2)
    for alt in ALTS:
        mw.append(mw_case(f"cauchy_{n1}x{n2}", x, y, alt))
x, y = rng.lognormal(0.3, 1, 30), rng.lognormal(0, 1, 45)
for alt in ALTS:
    mw.append(mw_case("lognormal_30x45", x, y, alt))
# Ties: rounded data (Likert-like), within and across groups.
for n1, n2 in [(6, 8), (25, 30), (150, 140)]:
    x = rng.integers(1, 6, n1).astype(float)
    y = rng.integers(1, 5, n2).astype(float)
    for alt in ALTS:
        mw.append(mw_case(f"likert_{n1}x{n2}", x, y, alt))
# Larger than the exact limit, no ties.
x, y = rng.normal(0.1, 1, 300), rng.normal(0, 1, 280)
for alt in ALTS:
    mw.append(mw_case("normal_300x280", x, y, alt))
# Tiny and adversarial hand cases.
hand_mw = [
    ("one_each", [2.0], [1.0]),
    ("separated", [4.0, 5.0, 6.0], [1.0, 2.0, 3.0]),
    ("cross_tie", [1.0, 2.0, 3.0], [2.0, 4.0]),
    ("almost_all_tied", [1.0, 1.0, 1.0, 2.0], [1.0, 1.0, 1.0]),
    ("negative_zero", [-0.0, 1.0, 2.5], [0.0, -1.0]),
    ("shared_digits", [107.8681568, 107.8681465, 107.8681572], [107.8681484, 107.8681469, 107.8681460, 107.8681497]),
]
for name, x, y in hand_mw:
    for alt in ALTS:
        mw.append(mw_case(name, x, y, alt))

# Wilcoxon: paired differences.
for n in [4, 6, 9, 15, 30, 60, 120]:
    d = rng.normal(0.3, 1.0, n)
    for alt in ALTS:
        wx.append(w_case(f"normal_{n}", d, alt))
d = rng.normal(0.2, 1.0, 200)
for alt in ALTS:
    wx.append(w_case("normal_200", d, alt))
d = rng.standard_t(1.5, 40) + 0.5
for alt in ALTS:
    wx.append(w_case("heavy_t_40", d, alt))
for n in [10, 35, 300]:
    d = (rng.integers(-3, 5, n)).astype(float)  # zeros and ties
    for alt in ALTS:
        wx.append(w_case(f"integer_{n}", d, alt))
hand_w = [
    ("one_positive", [2.5]),
    ("with_zero", [0.0, 1.0, -2.0, 3.0, 4.0]),
    ("ties_abs", [1.0, -1.0, 2.0, 2.0, -3.0, 5.0]),
    ("mostly_zero", [0.0, 0.0, 0.0, 0.0, 1.5, -0.5, 2.0]),
    ("all_positive_5", [1.0, 2.0, 3.0, 4.0, 5.0]),
]
for name, d in hand_w:
    for alt in ALTS:
        wx.append(w_case(name, d, alt))

# Shapiro-Wilk.
sw_inputs = [
    ("n3", [1.0, 2.0, 4.0]),
    ("n4", [2.1, 3.3, 1.0, 8.0]),
    ("n5", rng.normal(size=5)),
    ("n7_skew", rng.exponential(size=7)),
    ("n11", rng.normal(size=11)),
    ("n12", rng.normal(size=12)),
    ("n20_uniform", rng.uniform(size=20)),
    ("n50", rng.normal(10, 2, 50)),
    ("n100_lognormal", rng.lognormal(size=100)),
    ("n500", rng.normal(size=500)),
    ("n5000", rng.normal(size=5000)),
    ("n30_ties", rng.integers(0, 5, 30).astype(float)),
    ("shared_digits", 107.868 + rng.normal(0, 1.5e-5, 24)),
]
for name, x in sw_inputs:
    x = np.asarray(x, float)
    res = stats.shapiro(x)
    sw.append(dict(name=name, x=r(x), w=float(res.statistic), p=float(res.pvalue)))

# Levene / Brown-Forsythe.
sp_inputs = [
    ("small", [1.0, 3.0, 2.0, 7.0], [2.0, 2.5, 3.0]),
    ("normal_20x30", rng.normal(0, 1, 20), rng.normal(0, 2, 30)),
    ("cauchy_40x40", rng.standard_cauchy(40), rng.standard_cauchy(40)),
    ("ties", [1.0, 1.0, 2.0, 2.0, 5.0], [3.0, 3.0, 3.0, 4.0]),
    ("unequal_3x200", rng.normal(5, 1, 3), rng.normal(5, 1, 200)),
]
for name, x, y in sp_inputs:
    x, y = np.asarray(x, float), np.asarray(y, float)
    bf = stats.levene(x, y, center="median")
    lv = stats.levene(x, y, center="mean")
    sp.append(dict(name=name, x=r(x), y=r(y),
                   brown_forsythe=[float(bf.statistic), float(bf.pvalue)],
                   levene=[float(lv.statistic), float(lv.pvalue)]))

doc = dict(
    generator="tests/reference/gen_ranks.py",
    scipy_version=scipy.__version__,
    numpy_version=np.__version__,
    level=LEVEL,
    mann_whitney=mw,
    wilcoxon=wx,
    shapiro_wilk=sw,
    spread=sp,
)
with open(OUT, "w") as fh:
    json.dump(doc, fh, indent=1)
    fh.write("\n")
print(f"wrote {OUT}: {len(mw)} Mann-Whitney, {len(wx)} Wilcoxon, {len(sw)} Shapiro-Wilk, {len(sp)} spread cases")
