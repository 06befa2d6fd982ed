#!/usr/bin/env python3
"""Reference values for attest's t-tests, noncentral t, effect-size
intervals, TOST and multiplicity corrections, computed with scipy.

Re-run from the repository root:  python3 tests/reference/gen_ttests.py
It rewrites tests/reference/ttests.json (deterministic: fixed seed, sorted
keys). scipy is used here only as an independent reference-value
generator; nothing of it is shipped.

Huge-offset cases (values near 1e15 with a small spread): the data are
stored with their offset, but scipy is run on the data minus the offset.
That subtraction is exact in float64 for these values (they are multiples
of 1/8 within 2^50), so the inputs are mathematically identical, while
scipy's own uncentred mean would round at ulp(1e15) = 0.125.
"""
import json
import math
import os
import sys

import mpmath
import numpy as np
import scipy
from scipy import optimize, stats

HERE = os.path.dirname(os.path.abspath(__file__))
rng = np.random.default_rng(20261201)
ALTS = ["two-sided", "greater", "less"]
mpmath.mp.dps = 50


def fin(v):
    """JSON has no NaN or infinity: those become null."""
    v = float(v)
    return v if math.isfinite(v) else None


def ci(res, level):
    c = res.confidence_interval(confidence_level=level)
    return fin(c.low), fin(c.high)


def r(v):
    return [float(a) for a in v]


def datasets():
    """(name, x, y, offset) pairs, random and adversarial."""
    out = []
    out.append(("normal-20-25", rng.normal(10, 2, 20), rng.normal(11, 3, 25), 0.0))
    out.append(("tiny-2-2", rng.normal(0, 1, 2), rng.normal(1, 1, 2), 0.0))
    out.append(("tiny-2-3", rng.normal(0, 1, 2), rng.normal(0.5, 2, 3), 0.0))
    out.append(("unequal-3-40", rng.normal(5, 0.5, 3), rng.normal(4, 4, 40), 0.0))
    out.append(("unequal-50-4", rng.normal(5, 4, 50), rng.normal(7, 0.3, 4), 0.0))
    out.append(("heavy-cauchy-15-18", rng.standard_cauchy(15), rng.standard_cauchy(18) + 1, 0.0))
    out.append(("heavy-t2-30-30", rng.standard_t(2, 30), rng.standard_t(2, 30) + 0.5, 0.0))
    out.append(("skewed-lognormal-12-16", rng.lognormal(0, 1, 12), rng.lognormal(0.4, 1, 16), 0.0))
    out.append(("strong-p1e-12", rng.normal(0, 1, 20), rng.normal(3.2, 1, 20), 0.0))
    out.append(("strong-p1e-40", rng.normal(0, 1, 30), rng.normal(8, 1, 30), 0.0))
    out.append(("null-equal-means-40-35", rng.normal(0, 1, 40), rng.normal(0, 1, 35), 0.0))
    out.append(("large-n-300-250", rng.normal(0.05, 1, 300), rng.normal(0, 1.3, 250), 0.0))
    off = 1e15
    nx = np.round(rng.normal(0, 3, 12) * 8) / 8
    ny = np.round(rng.normal(2, 2, 9) * 8) / 8
    out.append(("offset-1e15", off + nx, off + ny, off))
    nx = np.round(rng.normal(0, 1, 6) * 8) / 8
    ny = np.round(rng.normal(0.5, 1, 6) * 8) / 8
    out.append(("offset-1e15-equal-n", off + nx, off + ny, off))
    out.append(("scaled-1e-8", rng.normal(0, 1, 10) * 1e-8, rng.normal(1, 1, 11) * 1e-8, 0.0))
    return out


def main():
    fx = {
        "generator": "tests/reference/gen_ttests.py",
        "scipy_version": scipy.__version__,
        "numpy_version": np.__version__,
        "mpmath_version": mpmath.__version__,
        "seed": 20261201,
    }
    sets = datasets()
    one, paired, student, welch, dint, dz, tost = [], [], [], [], [], [], []
    for name, x, y, off in sets:
        xs, ys = x - off, y - off  # exact; see module docstring
        for alt in ALTS:
            for level in (0.95, 0.9) if alt == "two-sided" else (0.95,):
                for eq, bucket in ((True, student), (False, welch)):
                    res = stats.ttest_ind(xs, ys, equal_var=eq, alternative=alt)
                    lo, hi = ci(res, level)
                    bucket.append(dict(name=name, x=r(x), y=r(y), alternative=alt, level=level,
                                       t=float(res.statistic), df=float(res.df), p=float(res.pvalue),
                                       ci_low=lo, ci_high=hi))
                ref = float(np.round((np.median(xs) + 0.3) * 8) / 8)  # exact at 1e15
                res = stats.ttest_1samp(xs, ref, alternative=alt)
                lo, hi = ci(res, level)
                # scipy's interval is for the mean; attest's is for mean − reference.
                one.append(dict(name=name, x=r(x), reference=ref + off, alternative=alt, level=level,
                                t=float(res.statistic), df=float(res.df), p=float(res.pvalue),
                                ci_low=None if lo is None else lo - ref,
                                ci_high=None if hi is None else hi - ref))
                if len(x) == len(y):
                    res = stats.ttest_rel(xs, ys, alternative=alt)
                    lo, hi = ci(res, level)
                    paired.append(dict(name=name, first=r(x), second=r(y), alternative=alt,
                                       level=level, t=float(res.statistic), df=float(res.df),
                                       p=float(res.pvalue), ci_low=lo, ci_high=hi))
        # Effect-size intervals: invert scipy.stats.nct.cdf in the ncp with brentq.
        if len(x) + len(y) >= 4 and len(x) <= 200:
            res = stats.ttest_ind(xs, ys, equal_var=True)
            n1, n2 = len(x), len(y)
            scale = math.sqrt(1 / n1 + 1 / n2)
            for alt in ALTS:
                lo, hi = ncp_bounds(float(res.statistic), n1 + n2 - 2, alt, 0.95)
                dint.append(dict(name=name, x=r(x), y=r(y), alternative=alt, level=0.95,
                                 d=float(res.statistic) * scale, df=n1 + n2 - 2,
                                 low=None if lo is None else lo * scale,
                                 high=None if hi is None else hi * scale,
                                 hedges_j=hedges_j(n1 + n2 - 2)))
            if len(x) >= 2 and len(x) <= 200:
                res = stats.ttest_1samp(xs, 0.0)
                for alt in ALTS:
                    lo, hi = ncp_bounds(float(res.statistic), len(x) - 1, alt, 0.9)
                    s = 1 / math.sqrt(len(x))
                    dz.append(dict(name=name, diffs=r(x), reference=off, alternative=alt, level=0.9,
                                   d=float(res.statistic) * s,
                                   low=None if lo is None else lo * s,
                                   high=None if hi is None else hi * s))
        # TOST composed from scipy one-sided tests, margins around the estimate.
        if len(x) >= 2 and len(y) >= 2:
            est = float(np.mean(xs) - np.mean(ys))
            sd = float(np.std(np.concatenate([xs, ys]), ddof=1))
            for k, (a, b) in enumerate(((-0.5 * sd, 0.5 * sd), (est - 0.2 * sd, est + 1.5 * sd),
                                        (-3 * sd, 2 * sd))):
                for welch_flag in (False, True):
                    tl = stats.ttest_ind(xs - a, ys, equal_var=not welch_flag, alternative="greater")
                    tu = stats.ttest_ind(xs - b, ys, equal_var=not welch_flag, alternative="less")
                    c = stats.ttest_ind(xs, ys, equal_var=not welch_flag).confidence_interval(0.9)
                    tost.append(dict(name=f"{name}/margins-{k}", kind="two-sample", welch=welch_flag,
                                     x=r(x), y=r(y), low=a, high=b, alpha=0.05,
                                     t_lower=float(tl.statistic), t_upper=float(tu.statistic),
                                     df=float(tl.df), p_lower=float(tl.pvalue),
                                     p_upper=float(tu.pvalue),
                                     p=max(float(tl.pvalue), float(tu.pvalue)),
                                     ci_low=float(c.low), ci_high=float(c.high)))
            ref = 0.125  # exact at 1e15
            a, b = -0.8 * sd, 0.6 * sd
            tl = stats.ttest_1samp(xs, ref + a, alternative="greater")
            tu = stats.ttest_1samp(xs, ref + b, alternative="less")
            c = stats.ttest_1samp(xs, ref).confidence_interval(0.9)
            c = type("Ci", (), dict(low=c.low - ref, high=c.high - ref))  # for mean − reference
            tost.append(dict(name=f"{name}/one-sample", kind="one-sample", welch=False, x=r(x),
                             reference=ref + off, low=a, high=b, alpha=0.05,
                             t_lower=float(tl.statistic), t_upper=float(tu.statistic), df=float(tl.df),
                             p_lower=float(tl.pvalue), p_upper=float(tu.pvalue),
                             p=max(float(tl.pvalue), float(tu.pvalue)),
                             ci_low=float(c.low), ci_high=float(c.high)))

    # Student's (1908) sleep data: the ten paired differences (from memory).
    sleep = [1.2, 2.4, 1.3, 1.3, 0.0, 1.0, 1.8, 0.8, 4.6, 1.4]
    res = stats.ttest_1samp(sleep, 0.0)
    lo, hi = ci(res, 0.95)
    fx["sleep"] = dict(diffs=sleep, t=float(res.statistic), df=float(res.df), p=float(res.pvalue),
                       ci_low=lo, ci_high=hi)

    fx["one_sample"], fx["paired"], fx["student"], fx["welch"] = one, paired, student, welch
    fx["d_interval"], fx["d_z"], fx["tost"] = dint, dz, tost
    fx["nct"] = nct_grid()
    fx["multiplicity"] = multiplicity()
    path = os.path.join(HERE, "ttests.json")
    with open(path, "w") as f:
        json.dump(fx, f, indent=1, sort_keys=True)
        f.write("\n")
    print(f"wrote {path} with scipy {scipy.__version__}", file=sys.stderr)


def ncp_bounds(t, df, alt, level):
    """Bounds for the noncentrality parameter: brentq on scipy.stats.nct."""
    tail = (1 - level) / 2 if alt == "two-sided" else 1 - level

    def root(fun):
        a, b = t - 1 - abs(t), t + 1 + abs(t)
        while fun(a) > 0:
            a -= 2 * (b - a)
        while fun(b) < 0:
            b += 2 * (b - a)
        return optimize.brentq(fun, a, b, xtol=1e-14, rtol=4 * np.finfo(float).eps, maxiter=500)

    lo = hi = None
    if alt in ("two-sided", "greater"):
        lo = root(lambda d: stats.nct.sf(t, df, d) - tail)
    if alt in ("two-sided", "less"):
        hi = root(lambda d: tail - stats.nct.cdf(t, df, d))
    return lo, hi


def hedges_j(df):
    """Hedges' (1981) exact J(df) in 50-digit mpmath."""
    if df <= 1:
        return None
    v = mpmath.gamma(mpmath.mpf(df) / 2) / (mpmath.sqrt(mpmath.mpf(df) / 2) * mpmath.gamma(mpmath.mpf(df - 1) / 2))
    return float(v)


def nct_mp_refined(args):
    return nct_mp(args, refine=True)


def nct_mp(args, refine=False):
    """P(T <= t) and P(T >= t) in 30-digit mpmath by quadrature of
    Phi(t s - ncp) over the density of S = sqrt(chi2_df/df): an independent
    check on scipy.stats.nct, whose far tails fail (NaN or wrong by hundreds
    of orders of magnitude) at some grid points."""
    t, df, ncp = (mpmath.mpf(v) for v in args)
    h = df / 2
    lnc = mpmath.log(2) + h * mpmath.log(h) - mpmath.loggamma(h)

    def dens(s):
        return mpmath.exp(lnc + (df - 1) * mpmath.log(s) - h * s * s) if s > 0 else mpmath.mpf(0)

    sd = 1 / mpmath.sqrt(2 * h)
    pts = {mpmath.mpf(0)}
    for k in (-30, -10, -5, -2, 0, 2, 5, 10, 30, 100):
        if 1 + k * sd > 0:
            pts.add(1 + k * sd)
    if t != 0 and ncp / t > 0:
        pts.add(ncp / t)
    pts = sorted(pts)

    def integrate(g):
        if not refine:
            return mpmath.quad(g, pts + [mpmath.inf])
        # Dense geometric breakpoints from 1e-10 to 100 (20 per decade), so
        # a narrow peak anywhere in that range is resolved.
        dense = {mpmath.mpf(10) ** (k / 20) for k in range(-200, 41)}
        return mpmath.quad(g, sorted(set(pts) | dense) + [mpmath.inf])

    cdf = integrate(lambda s: dens(s) * mpmath.ncdf(t * s - ncp))
    sf = integrate(lambda s: dens(s) * mpmath.ncdf(ncp - t * s))
    return float(cdf), float(sf)


def nct_grid():
    import multiprocessing
    mpmath.mp.dps = 30
    grid = [(t, df, ncp)
            for df in (1.0, 2.5, 10.0, 100.0, 1e5)
            for ncp in (-40.0, -10.0, -3.0, 0.0, 0.5, 2.0, 5.0, 10.0, 40.0)
            for t in (-50.0, -3.0, -1.0, 0.0, 0.5, 2.0, 5.0, 10.0, 45.0, 200.0)]
    with multiprocessing.Pool(2) as pool:
        exact = pool.map(nct_mp, grid)
        # Where scipy and the quick quadrature disagree (far tails), redo the
        # quadrature with dense breakpoints.
        def agree(a, b):
            return a is not None and (a == b or abs(a - b) <= 1e-9 * abs(b))
        redo = [i for i, (t, df, ncp) in enumerate(grid)
                if not (agree(fin(stats.nct.cdf(t, df, ncp)), exact[i][0])
                        and agree(fin(stats.nct.sf(t, df, ncp)), exact[i][1]))]
        for i, v in zip(redo, pool.map(nct_mp_refined, [grid[i] for i in redo])):
            exact[i] = v
    out = []
    for (t, df, ncp), (mc, ms) in zip(grid, exact):
        out.append(dict(t=t, df=df, ncp=ncp, cdf=fin(stats.nct.cdf(t, df, ncp)),
                        sf=fin(stats.nct.sf(t, df, ncp)), mp_cdf=mc, mp_sf=ms))
    return out


def holm(p):
    m = len(p)
    order = sorted(range(m), key=lambda i: p[i])
    out, run = [0.0] * m, 0.0
    for j, i in enumerate(order):
        run = max(run, min(1.0, (m - j) * p[i]))
        out[i] = run
    return out


def hochberg(p):
    m = len(p)
    order = sorted(range(m), key=lambda i: p[i])
    out, run = [0.0] * m, 1.0
    for j in reversed(range(m)):
        i = order[j]
        run = min(run, min(1.0, (m - j) * p[i]))
        out[i] = run
    return out


def multiplicity():
    vecs = [
        [0.01, 0.04, 0.03],
        [0.001, 0.2, 0.04, 0.04, 0.5, 1.0, 0.0005, 0.03],
        [0.9, 0.95, 0.99],
        [1e-12, 3e-9, 0.02, 0.049, 0.051],
        list(rng.uniform(0, 1, 20)),
        list(rng.uniform(0, 0.05, 12)),
        [0.3],
    ]
    out = []
    for p in vecs:
        p = [float(v) for v in p]
        out.append(dict(p=p, bonferroni=[min(1.0, len(p) * v) for v in p], holm=holm(p),
                        hochberg=hochberg(p),
                        fdr_bh=[float(v) for v in stats.false_discovery_control(p, method="bh")]))
    return out


if __name__ == "__main__":
    main()
