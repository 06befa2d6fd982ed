#!/usr/bin/env python3
"""Reference values for the plan conventions of the rank tests, as the
real binary applies them (tests/conventions.rs).

Re-runnable: `python3 tests/reference/gen_conventions.py` rewrites
tests/reference/conventions.json next to this file. The inputs are made
here from a fixed seed and stored in the JSON.

* `continuity`: a signed-rank test on 600 tied integer differences with
  zeros, far beyond the exact limit, so p is the normal approximation;
  scipy.stats.wilcoxon(zero_method="wilcox", method="approx") with
  correction True and False gives the two p values.
* `underflow`: a Mann-Whitney test on two fully separated tied groups of
  2000, whose normal-approximation p underflows to 0 in double precision.
  z is computed here from the tie-corrected variance with the continuity
  correction (common practice), and log10 of the two-sided tail
  2 * Q(|z|) with mpmath at 50 digits.
"""
import json
import os

import mpmath
import numpy as np
import scipy
from scipy import stats

OUT = os.path.join(os.path.dirname(os.path.abspath(__file__)), "conventions.json")
rng = np.random.default_rng(20261202)

d = [float(v) for v in rng.integers(-3, 5, size=600)]
cont = {}
for corr in (True, False):
    res = stats.wilcoxon(d, zero_method="wilcox", correction=corr, method="approx")
    cont["with" if corr else "without"] = float(res.pvalue)

a = [float(v) for v in rng.integers(100, 110, size=2000)]
b = [float(v) for v in rng.integers(0, 10, size=2000)]
n1, n2 = len(a), len(b)
u1 = float(n1 * n2)
pooled = np.concatenate([a, b])
_, counts = np.unique(pooled, return_counts=True)
n = n1 + n2
ties = float(np.sum(counts.astype(float) ** 3 - counts))
var = n1 * n2 / 12.0 * ((n + 1) - ties / (n * (n - 1)))
mpmath.mp.dps = 50
z = (mpmath.mpf(u1) - mpmath.mpf(n1 * n2) / 2 - mpmath.mpf("0.5")) / mpmath.sqrt(var)
log10_p = mpmath.log10(2 * mpmath.ncdf(-z))

out = {
    "generator": "tests/reference/gen_conventions.py",
    "scipy_version": scipy.__version__,
    "mpmath_version": mpmath.__version__,
    "continuity": {"d": d, "alternative": "two-sided", "p": cont},
    "underflow": {"a": a, "b": b, "alternative": "two-sided", "z": float(z), "log10_p": float(log10_p)},
}
with open(OUT, "w") as f:
    json.dump(out, f, indent=1)
    f.write("\n")
