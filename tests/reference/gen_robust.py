#!/usr/bin/env python3
"""Reference values for the Brunner-Munzel and trimmed-mean t tests.

Re-runnable: `python3 tests/reference/gen_robust.py` rewrites
tests/reference/robust.json next to this file. scipy and statsmodels
serve only as general-purpose sources of reference numbers; inputs are
generated here from a fixed seed plus hand-written cases and stored in
the JSON.

* Brunner-Munzel t approximation: scipy.stats.brunnermunzel (statistic
  and p; scipy's statistic is positive when the *second* sample tends to
  be larger, so attest's t is its negative, and scipy's 'greater' means
  the first sample tends to be larger, as in attest). The interval for
  theta = P(Y < X) + P(X = Y)/2 comes from
  statsmodels.stats.nonparametric.rank_compare_2indep(x, y) (its prob1 is
  P(first > second) + P(tie)/2, attest's orientation), conf_int with its
  default t distribution.
* Brunner-Munzel permutation p (Neubert & Brunner 2007): every split of
  the pooled sample enumerated with itertools, scipy's statistic on each;
  a split whose variance is 0 counts as +-inf by its sign (0 if theta is
  exactly 1/2), the rule attest documents.
* Yuen's two-sample trimmed t: scipy.stats.ttest_ind(equal_var=False,
  trim=...), interval from scipy.stats.t.ppf with scipy's df.
* One-sample / paired trimmed t (Tukey & McLaughlin 1963):
  scipy.stats.trim_mean and scipy.stats.mstats.winsorize, assembled by
  hand here: se^2 = (n-1) s_w^2 / (h (h-1)), df = h - 1.
* Equivalence on the probability of superiority (Munzel & Hauschke 2003):
  statsmodels rank_compare_2indep(x, y).tost_prob_superior(low, upp).
* Equivalence on the Hodges-Lehmann shift: scipy.stats.mannwhitneyu
  (method='exact', untied data) on x - low (greater) and x - high (less).
* Equivalence on the pseudo-median of paired differences:
  scipy.stats.wilcoxon (method='exact', untied data without zeros) on
  d - low (greater) and d - high (less).
* Equivalence on trimmed means: scipy.stats.ttest_ind(equal_var=False,
  trim=...) on x - low (greater) and x - high (less) for two groups; the
  one-sample pieces above, shifted by each bound, for one sample.
* Signed-rank test with zeros kept in the ranking (Pratt 1959), normal
  approximation with tie and continuity correction:
  scipy.stats.wilcoxon(zero_method='pratt', method='approx', correction=True).
* The robust effect d_R of Algina, Keselman & Penfield (2005) with its
  constant c = winsorised SD of the standard normal, from scipy.stats.norm.
"""
import itertools
import json
import math
import os
import warnings

import numpy as np
import scipy
import statsmodels
from scipy import stats
from scipy.stats import mstats
from statsmodels.stats.nonparametric import rank_compare_2indep

OUT = os.path.join(os.path.dirname(os.path.abspath(__file__)), "robust.json")
rng = np.random.default_rng(20261203)
LEVEL = 0.95
ALTS = ["two-sided", "greater", "less"]


def fl(a):
    return [float(v) for v in a]


def bm_t_of(x, y):
    """attest's orientation: minus scipy's statistic; nan (0/0) -> 0."""
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        w = stats.brunnermunzel(x, y, distribution="t").statistic
    if math.isnan(w):
        return 0.0
    return -float(w)


def bm_permutation(x, y, alt):
    pooled = list(x) + list(y)
    n1 = len(x)
    obs = bm_t_of(x, y)
    hits = total = 0
    for combo in itertools.combinations(range(len(pooled)), n1):
        chosen = set(combo)
        a = [pooled[i] for i in combo]
        b = [pooled[i] for i in range(len(pooled)) if i not in chosen]
        t = bm_t_of(a, b)
        # Relative slack 1e-9 so that splits equal in exact arithmetic but
        # not in rounding count as equally extreme (attest's rule).
        slack = 1e-9 * abs(obs) if math.isfinite(obs) else 0.0
        if alt == "greater":
            hit = t >= obs - slack
        elif alt == "less":
            hit = t <= obs + slack
        else:
            hit = abs(t) >= abs(obs) - slack
        hits += hit
        total += 1
    return hits / total, total


def bm_case(name, x, y):
    out = []
    for alt in ALTS:
        r = stats.brunnermunzel(x, y, alternative=alt, distribution="t")
        rc = rank_compare_2indep(np.asarray(x, float), np.asarray(y, float))
        low, high = rc.conf_int(alpha=1 - LEVEL if alt == "two-sided" else 2 * (1 - LEVEL))
        case = {
            "name": name,
            "x": fl(x),
            "y": fl(y),
            "alternative": alt,
            "t": -float(r.statistic),
            "p": float(r.pvalue),
            "estimate": float(rc.prob1),
            "df": float(rc.df),
            "interval": [
                float(low) if alt != "less" else None,
                float(high) if alt != "greater" else None,
            ],
        }
        if len(x) + len(y) <= 14:
            p, splits = bm_permutation(x, y, alt)
            case["permutation_p"] = p
            case["splits"] = splits
        out.append(case)
    return out


def winsorised_sd_normal(g):
    if g == 0:
        return 1.0
    z = stats.norm.ppf(1 - g)
    v = stats.norm.expect(lambda t: t * t, lb=-z, ub=z) + 2 * g * z * z
    return math.sqrt(v)


def trimmed_parts(x, g):
    x = np.asarray(x, float)
    n = len(x)
    k = int(math.floor(g * n))
    h = n - 2 * k
    tm = float(stats.trim_mean(x, g)) if g > 0 else float(np.mean(x))
    w = np.asarray(mstats.winsorize(x, limits=(g, g)), float) if g > 0 else x
    s2 = float(np.var(w, ddof=1))
    return tm, s2, n, h


def ci(est, se, df, alt):
    tail = (1 - LEVEL) / 2 if alt == "two-sided" else 1 - LEVEL
    q = float(stats.t.ppf(1 - tail, df))
    return [est - q * se if alt != "less" else None, est + q * se if alt != "greater" else None]


def yuen_case(name, x, y, g):
    out = []
    c = winsorised_sd_normal(g)
    t1, s1, n1, h1 = trimmed_parts(x, g)
    t2, s2, n2, h2 = trimmed_parts(y, g)
    d1 = (n1 - 1) * s1 / (h1 * (h1 - 1))
    d2 = (n2 - 1) * s2 / (h2 * (h2 - 1))
    pooled = ((n1 - 1) * s1 + (n2 - 1) * s2) / (n1 + n2 - 2)
    for alt in ALTS:
        r = stats.ttest_ind(x, y, equal_var=False, trim=g, alternative=alt)
        est = t1 - t2
        out.append(
            {
                "name": name,
                "x": fl(x),
                "y": fl(y),
                "trim": g,
                "alternative": alt,
                "t": float(r.statistic),
                "df": float(r.df),
                "p": float(r.pvalue),
                "estimate": est,
                "interval": ci(est, math.sqrt(d1 + d2), float(r.df), alt),
                "effect": c * est / math.sqrt(pooled),
            }
        )
    return out


def one_sample_case(name, x, mu, g):
    out = []
    c = winsorised_sd_normal(g)
    tm, s2, n, h = trimmed_parts(x, g)
    se = math.sqrt((n - 1) * s2 / (h * (h - 1)))
    df = h - 1
    t = (tm - mu) / se
    for alt in ALTS:
        if alt == "greater":
            p = float(stats.t.sf(t, df))
        elif alt == "less":
            p = float(stats.t.cdf(t, df))
        else:
            p = float(2 * stats.t.sf(abs(t), df))
        out.append(
            {
                "name": name,
                "x": fl(x),
                "reference": mu,
                "trim": g,
                "alternative": alt,
                "t": t,
                "df": float(df),
                "p": p,
                "estimate": tm - mu,
                "interval": ci(tm - mu, se, df, alt),
                "effect": c * (tm - mu) / math.sqrt(s2),
            }
        )
    return out


def tost_ps_case(name, x, y, low, high):
    rc = rank_compare_2indep(np.asarray(x, float), np.asarray(y, float))
    t = rc.tost_prob_superior(low, high)
    return {
        "name": name,
        "x": fl(x),
        "y": fl(y),
        "low": low,
        "high": high,
        "p": float(t.pvalue),
        "p_lower": float(t.results_larger.pvalue),
        "p_upper": float(t.results_smaller.pvalue),
    }


def tost_hl_case(name, x, y, low, high):
    xa = np.asarray(x, float)
    pl = stats.mannwhitneyu(xa - low, y, alternative="greater", method="exact").pvalue
    pu = stats.mannwhitneyu(xa - high, y, alternative="less", method="exact").pvalue
    assert len(set(list(xa - low) + list(y))) == len(x) + len(y)
    assert len(set(list(xa - high) + list(y))) == len(x) + len(y)
    return {
        "name": name,
        "x": fl(x),
        "y": fl(y),
        "low": low,
        "high": high,
        "p_lower": float(pl),
        "p_upper": float(pu),
        "p": float(max(pl, pu)),
    }


def tost_signed_rank_case(name, d, low, high):
    da = np.asarray(d, float)
    assert len(set(np.abs(da - low))) == len(d) and 0 not in list(da - low)
    assert len(set(np.abs(da - high))) == len(d) and 0 not in list(da - high)
    pl = stats.wilcoxon(da - low, alternative="greater", method="exact").pvalue
    pu = stats.wilcoxon(da - high, alternative="less", method="exact").pvalue
    return {"name": name, "d": fl(d), "low": low, "high": high,
            "p_lower": float(pl), "p_upper": float(pu), "p": float(max(pl, pu))}


def tost_yuen_case(name, x, y, g, low, high):
    xa = np.asarray(x, float)
    lo = stats.ttest_ind(xa - low, y, equal_var=False, trim=g, alternative="greater")
    up = stats.ttest_ind(xa - high, y, equal_var=False, trim=g, alternative="less")
    return {"name": name, "x": fl(x), "y": fl(y), "trim": g, "low": low, "high": high,
            "t_lower": float(lo.statistic), "t_upper": float(up.statistic), "df": float(lo.df),
            "p_lower": float(lo.pvalue), "p_upper": float(up.pvalue),
            "p": float(max(lo.pvalue, up.pvalue))}


def tost_trimmed_one_case(name, x, mu, g, low, high):
    tm, s2, n, h = trimmed_parts(x, g)
    se = math.sqrt((n - 1) * s2 / (h * (h - 1)))
    df = h - 1
    tl, tu = (tm - mu - low) / se, (tm - mu - high) / se
    pl, pu = float(stats.t.sf(tl, df)), float(stats.t.cdf(tu, df))
    return {"name": name, "x": fl(x), "reference": mu, "trim": g, "low": low, "high": high,
            "t_lower": tl, "t_upper": tu, "df": float(df),
            "p_lower": pl, "p_upper": pu, "p": max(pl, pu)}


def pratt_case(name, d):
    out = []
    for alt in ALTS:
        r = stats.wilcoxon(d, zero_method="pratt", method="approx", correction=True, alternative=alt)
        out.append({"name": name, "d": fl(d), "alternative": alt, "p": float(r.pvalue)})
    return out


def main():
    bm = []
    fixed = [
        ("small_ties", [1, 2, 2, 4, 5], [2, 3, 3, 6, 7, 8]),
        ("unequal_spread", [4.9, 5.1, 5.0, 5.2, 4.8, 5.05], [1.0, 9.0, 3.0, 7.5, 5.5, 2.0, 8.0]),
        ("likert", [3, 4, 4, 5, 2, 4, 3], [2, 2, 3, 1, 3, 4]),
        ("tiny", [1.5, 3.0, 2.0], [2.5, 4.0, 5.0, 3.5]),
    ]
    for name, x, y in fixed:
        bm += bm_case(name, x, y)
    for i, (n1, n2) in enumerate([(12, 15), (30, 20), (8, 40)]):
        x = rng.normal(0.3 * i, 1.0, n1).round(2)
        y = rng.normal(0.0, 2.0 + i, n2).round(2)
        bm += bm_case(f"normal_{n1}x{n2}", list(x), list(y))

    yu = []
    for g in (0.1, 0.2, 0.25):
        x = list(rng.standard_t(3, 19).round(3) + 0.5)
        y = list(rng.standard_t(3, 24).round(3))
        yu += yuen_case(f"heavy_tails_g{g}", x, y, g)
    yu += yuen_case("outlier", [3.1, 2.9, 3.4, 3.0, 2.7, 3.3, 40.0, 3.2, 2.8, 3.5],
                    [2.1, 2.6, 2.4, 2.2, 2.9, 2.5, 2.3, 2.0], 0.2)
    one = []
    for g in (0.1, 0.2):
        d = list(rng.standard_t(2, 21).round(3) + 0.4)
        one += one_sample_case(f"paired_diffs_g{g}", d, 0.0, g)
    one += one_sample_case("reference_value", [12.0, 15.5, 9.0, 14.0, 13.5, 60.0, 11.0, 12.5], 10.0, 0.2)

    eq_ps = []
    for i, (lo, hi) in enumerate([(0.3, 0.7), (0.4, 0.6), (0.2, 0.9)]):
        x = list(rng.normal(0.1 * i, 1.0, 25).round(2))
        y = list(rng.normal(0.0, 1.0 + 0.5 * i, 30).round(2))
        eq_ps.append(tost_ps_case(f"ps_{i}", x, y, lo, hi))
    eq_ps.append(tost_ps_case("ps_likert", [3, 4, 4, 5, 2, 4, 3, 3], [2, 3, 3, 4, 3, 4, 5], 0.25, 0.75))
    eq_hl = []
    for i, (lo, hi) in enumerate([(-1.0, 1.0), (-0.3, 0.3), (-2.0, 0.5)]):
        x = list((rng.normal(0.0, 1.0, 9 + i)).round(4) + 0.00005)
        y = list((rng.normal(0.1, 1.0, 11)).round(4))
        eq_hl.append(tost_hl_case(f"hl_{i}", x, y, lo, hi))

    pratt = []
    pratt += pratt_case("zeros_and_ties", [0, 0, 0, 1, -1, 2, 2, 3, 3, 3, -2, 4, 5, 0, 1])
    pratt += pratt_case("one_zero", [0.0, 1.2, -0.4, 2.2, 3.1, 0.7, -1.5, 2.8, 1.9, 0.3])
    pratt += pratt_case("many_zeros", [0] * 8 + [1, 2, 3, -1, 4, 5, 2, 6, 1, 3])
    pratt += pratt_case("likert_diffs", list(rng.integers(-2, 4, 40)))

    eq_sr = []
    for i, (lo, hi) in enumerate([(-1.0, 1.0), (-0.4, 0.4), (-2.5, 0.6)]):
        d = list((rng.normal(0.1, 1.0, 12 + 2 * i)).round(4) + 0.00003)
        eq_sr.append(tost_signed_rank_case(f"sr_{i}", d, lo, hi))
    eq_tr = []
    for i, (g, lo, hi) in enumerate([(0.2, -1.0, 1.0), (0.1, -0.5, 0.8), (0.25, -2.0, 2.0)]):
        x = list(rng.standard_t(3, 18 + i).round(3) + 0.2)
        y = list(rng.standard_t(3, 22).round(3))
        eq_tr.append(tost_yuen_case(f"yuen_{i}", x, y, g, lo, hi))
    eq_tr1 = []
    for i, (g, lo, hi) in enumerate([(0.2, -1.0, 1.0), (0.1, -0.3, 0.9)]):
        d = list(rng.standard_t(2, 17 + i).round(3) + 0.1)
        eq_tr1.append(tost_trimmed_one_case(f"trimmed_one_{i}", d, 0.0, g, lo, hi))
    eq_tr1.append(tost_trimmed_one_case("trimmed_reference", [12.0, 15.5, 9.0, 14.0, 13.5, 60.0, 11.0, 12.5], 10.0, 0.2, -4.0, 4.0))

    # Groups of at least 30, where attest takes p from the t
    # approximation; the skewed pair is far from normal (Shapiro-Wilk
    # rejects in a group), so a `checked` plan reaches its rank test.
    x = rng.normal(0.4, 1.0, 35).round(3)
    y = rng.normal(0.0, 2.5, 42).round(3)
    bm += bm_case("large_35x42", list(x), list(y))
    x = rng.lognormal(0.3, 1.0, 40).round(3)
    y = rng.lognormal(0.0, 1.0, 45).round(3)
    assert min(stats.shapiro(x).pvalue, stats.shapiro(y).pvalue) < 0.01
    bm += bm_case("skewed_40x45", list(x), list(y))

    doc = {
        "scipy_version": scipy.__version__,
        "statsmodels_version": statsmodels.__version__,
        "level": LEVEL,
        "normal_winsorised_sd_0.2": winsorised_sd_normal(0.2),
        "brunner_munzel": bm,
        "yuen": yu,
        "trimmed_one_sample": one,
        "tost_prob_superiority": eq_ps,
        "tost_hodges_lehmann": eq_hl,
        "wilcoxon_pratt_normal": pratt,
        "tost_signed_rank": eq_sr,
        "tost_trimmed_two": eq_tr,
        "tost_trimmed_one": eq_tr1,
    }
    with open(OUT, "w") as f:
        json.dump(doc, f, indent=1)
        f.write("\n")
    print(f"wrote {OUT}: {len(bm)} Brunner-Munzel, {len(yu)} Yuen, {len(one)} one-sample cases")


if __name__ == "__main__":
    main()
