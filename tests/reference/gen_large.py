#!/usr/bin/env python3
"""Reference values for large samples whose sums need more than a running
double: thousands of values recorded to one decimal around 50, so most of
them share one binary exponent (32 to 64). Computed with scipy (t-tests)
and mpmath at 50 digits (means and standard deviations, exact for these
inputs).

Re-run from the repository root:  python3 tests/reference/gen_large.py
It rewrites tests/reference/large.json (deterministic: fixed seed, sorted
keys). The data are stored as integers in tenths; both sides build each
value as the double nearest k / 10, so the inputs are identical. scipy
and mpmath are used here only as independent reference-value generators;
nothing of them is shipped.
"""
import json
import os

import mpmath
import numpy as np
import scipy
from scipy import stats

HERE = os.path.dirname(os.path.abspath(__file__))
mpmath.mp.dps = 50
rng = np.random.default_rng(20261204)


def tenths(mean, sd, n):
    return [int(k) for k in np.rint(rng.normal(mean, sd, n) * 10)]


def values(t):
    return [k / 10 for k in t]


def moments(x):
    """Mean and SD (n − 1) in 50-digit arithmetic: exact for these sums."""
    m = mpmath.fsum(mpmath.mpf(v) for v in x) / len(x)
    ss = mpmath.fsum((mpmath.mpf(v) - m) ** 2 for v in x)
    return float(m), float(mpmath.sqrt(ss / (len(x) - 1)))


def ttest(res):
    c = res.confidence_interval(confidence_level=0.95)
    return dict(t=float(res.statistic), df=float(res.df), p=float(res.pvalue),
                ci_low=float(c.low), ci_high=float(c.high))


def main():
    x10, y10 = tenths(50.4, 9, 6000), tenths(50.0, 10, 5000)
    before10 = tenths(50, 9, 4000)
    after10 = [b + int(k) for b, k in zip(before10, np.rint(rng.normal(0.8, 4, 4000) * 10))]
    x, y, before, after = map(values, (x10, y10, before10, after10))
    out = {
        "generator": "tests/reference/gen_large.py",
        "scipy_version": scipy.__version__,
        "numpy_version": np.__version__,
        "mpmath_version": mpmath.__version__,
        "seed": 20261204,
        "x_tenths": x10,
        "y_tenths": y10,
        "before_tenths": before10,
        "after_tenths": after10,
        "moments": {k: dict(zip(("mean", "sd"), moments(v)))
                    for k, v in (("x", x), ("y", y), ("before", before), ("after", after))},
        "welch": ttest(stats.ttest_ind(x, y, equal_var=False)),
        "student": ttest(stats.ttest_ind(x, y, equal_var=True)),
        "paired": ttest(stats.ttest_rel(before, after)),
    }
    with open(os.path.join(HERE, "large.json"), "w") as f:
        json.dump(out, f, sort_keys=True, separators=(",", ":"))
        f.write("\n")


if __name__ == "__main__":
    main()
