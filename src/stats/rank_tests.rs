//! The result of a rank test and the pieces both rank tests share:
//! continuity-corrected normal p values, distribution-free Hodges–Lehmann
//! intervals from a critical count, and the rank-biserial interval.
//!
//! The tests themselves live in [`super::mann_whitney`] and
//! [`super::wilcoxon`]; both return a [`RankTest`] so the results model
//! handles them alike.

use super::dist::{log_normal_sf, normal_cdf, normal_quantile, normal_sf};
use super::rank_exact::{ExactDistribution, TIES_EXACT_MAX_CELLS};
use super::{alpha_of_level, Alternative, Decision, Interval, PMethod, RankPMethod, StatsError};
use serde::{Deserialize, Serialize};

/// Outcome of a Mann–Whitney or Wilcoxon signed-rank test.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct RankTest {
    /// U1 for Mann–Whitney (first group, ties count ½); W+ for Wilcoxon.
    pub statistic: f64,
    /// p value for the stated alternative.
    pub p: f64,
    /// Exact permutation distribution or normal approximation
    /// (`p_detail.coarse()`).
    pub p_method: PMethod,
    /// Exact untied, exact conditional on ties, or normal approximation.
    pub p_detail: RankPMethod,
    /// log10 of `p`, computed from the counts (exact) or from the log of
    /// the normal tail (approximation), so it stays finite where `p`
    /// underflows to 0 (|z| beyond about 38).
    pub log10_p: f64,
    /// Continuity-corrected z whose normal tail gives `p` (normal
    /// approximation only; `None` when `p` is exact).
    pub z: Option<f64>,
    /// Observations used: n1 + n2, or the non-zero differences for Wilcoxon.
    pub n_used: usize,
    /// Zero differences dropped before ranking (always 0 for Mann–Whitney
    /// and under [`ZeroRule::Pratt`]).
    pub zeros_dropped: usize,
    /// Zero differences kept in the ranking ([`ZeroRule::Pratt`] only).
    pub zeros_ranked: usize,
    /// Hodges–Lehmann estimate: shift (first − second) or pseudo-median.
    pub estimate: f64,
    /// Distribution-free interval for the estimate; one-sided for a
    /// one-sided alternative. An end is `None` also when the samples are
    /// too small to reach the level on that side.
    pub interval: Interval,
    /// Rank-biserial correlation, positive when the first group (or the
    /// difference) tends to be larger.
    pub rank_biserial: f64,
    /// Interval for the rank-biserial correlation (see [`fisher_interval`]).
    pub rank_biserial_interval: Interval,
    /// Mann–Whitney only: P(X > Y) + ½·P(X = Y), estimated by U1/(n1·n2).
    pub prob_superiority: Option<f64>,
}

/// What the signed-rank test does with differences that are exactly zero.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum ZeroRule {
    /// Drop zeros before ranking (Wilcoxon 1945; attest's default).
    #[default]
    Drop,
    /// Rank zeros with the other |d|, then leave them out of W+ (Pratt
    /// 1959, "Remarks on zeros and ties in the Wilcoxon signed rank
    /// procedures", JASA 54, 655–667).
    KeepInRanking,
}

/// The conventions of a rank test, each one a choice a plan can state.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct RankOptions {
    /// Zero-difference rule of the signed-rank test.
    pub zeros: ZeroRule,
    /// Continuity correction of ½ in the normal approximation.
    pub continuity: bool,
    /// Largest DP work for the exact distribution conditional on ties or
    /// kept zeros ([`TIES_EXACT_MAX_CELLS`] by default). 0 keeps attest
    /// 1's rule: exact only without ties and zeros, else the normal
    /// approximation.
    pub exact_max_cells: u64,
}

impl Default for RankOptions {
    fn default() -> Self {
        RankOptions {
            zeros: ZeroRule::Drop,
            continuity: true,
            exact_max_cells: TIES_EXACT_MAX_CELLS,
        }
    }
}

/// Exact p, its log10 and the interval's critical counts from an exact
/// distribution on a scale `step` times the statistic's (2 on the doubled
/// scale), observed value `obs` on that scale.
///
/// Two-sided rule: twice the smaller tail, capped at 1 (common practice;
/// the same rule as the untied exact tests and the normal approximation).
/// The critical counts `(k_low, k_high)` count the order statistics whose
/// tail p (by the same conversion) rejects by [`Decision::at`] at
/// α = [`alpha_of_level`], so that the interval excludes the null exactly
/// when p < α: the lower end from the upper tail of the statistic, since
/// a large statistic is what puts the shift above the lower end; the
/// upper end from the lower tail. Without ties the two are equal.
pub(crate) fn exact_p(
    d: &ExactDistribution,
    obs: i64,
    step: usize,
    alt: Alternative,
    level: f64,
) -> (f64, f64, (usize, usize)) {
    let total = d.total();
    let tf = total as f64;
    let (num, two) = match alt {
        Alternative::Greater => (d.count_ge(obs), false),
        Alternative::Less => (d.count_le(obs), false),
        Alternative::TwoSided => (d.count_ge(obs).min(d.count_le(obs)), true),
    };
    let p = if two {
        (2.0 * (num as f64 / tf)).min(1.0)
    } else {
        num as f64 / tf
    };
    let factor = if two { 2.0f64 } else { 1.0 };
    let log10_p = ((factor * num as f64).log10() - tf.log10()).min(0.0);
    let alpha = alpha_of_level(level);
    let reject = |c: u128, t: u128| {
        let q = if two {
            (2.0 * (c as f64 / t as f64)).min(1.0)
        } else {
            c as f64 / t as f64
        };
        Decision::at(q, alpha).rejects()
    };
    let k_low = d.critical_k_upper_by(step, reject);
    let k_high = d.critical_k_by(step, reject);
    (p, log10_p, (k_low, k_high))
}

/// log10 of the normal-approximation p for `z` from [`normal_p`],
/// computed from the log of the tail so it survives underflow.
pub(crate) fn normal_log10_p(z: f64, alt: Alternative) -> f64 {
    let ln = match alt {
        Alternative::Greater => log_normal_sf(z),
        Alternative::Less => log_normal_sf(-z),
        Alternative::TwoSided => (std::f64::consts::LN_2 + log_normal_sf(z.abs())).min(0.0),
    };
    ln / std::f64::consts::LN_10
}

/// Checks a confidence level is strictly between 0 and 1.
pub(crate) fn check_level(level: f64) -> Result<(), StatsError> {
    if level > 0.0 && level < 1.0 {
        Ok(())
    } else {
        Err(StatsError::BadParameter(
            "confidence level must be in (0, 1)",
        ))
    }
}

/// Probability in each bounded tail of an interval at `level`.
pub(crate) fn tail_alpha(level: f64, alt: Alternative) -> f64 {
    match alt {
        Alternative::TwoSided => 0.5 * (1.0 - level),
        _ => 1.0 - level,
    }
}

/// Normal-approximation p for a statistic with null mean `mu` and
/// standard deviation `sigma`, with the continuity correction of ½ taken
/// towards the mean (common practice): `(s − μ − ½)/σ` for `greater`,
/// `(s − μ + ½)/σ` for `less`, and `sign(s − μ)·max(|s − μ| − ½, 0)/σ` for
/// two-sided (so p = 1 when the statistic is within ½ of its mean).
/// Returns `(z, p)`; tails come from `normal_sf` directly. `continuity`
/// false drops the ½ (a plan may say so).
pub(crate) fn normal_p(
    s: f64,
    mu: f64,
    sigma: f64,
    alt: Alternative,
    continuity: bool,
) -> (f64, f64) {
    let d = s - mu;
    let c = if continuity { 0.5 } else { 0.0 };
    match alt {
        Alternative::Greater => {
            let z = (d - c) / sigma;
            (z, normal_sf(z))
        }
        Alternative::Less => {
            let z = (d + c) / sigma;
            (z, normal_cdf(z))
        }
        Alternative::TwoSided => {
            let z = d.signum() * (d.abs() - c).max(0.0) / sigma;
            (z, (2.0 * normal_sf(z.abs())).min(1.0))
        }
    }
}

/// Large-sample critical count for a distribution-free interval: the
/// 1-based order statistic `k = round(μ − z_{1−tail}·σ)` with μ, σ the null
/// mean and (untied) standard deviation of the rank statistic (Hollander &
/// Wolfe 1999, *Nonparametric Statistical Methods*, 2nd ed., large-sample
/// approximations in §3.2 and §4.3; rounding half up). 0 means unbounded.
pub(crate) fn normal_critical_k(mu: f64, sigma: f64, tail: f64) -> usize {
    let z = -normal_quantile(tail);
    let k = (mu - z * sigma + 0.5).floor();
    if k >= 1.0 {
        k as usize
    } else {
        0
    }
}

/// The interval `[A_(k_low), A_(M+1−k_high)]` (1-based order statistics
/// of `count` ordered values given by `kth`, 0-based), one-sided as `alt`
/// says; `k` is `(k_low, k_high)`, 0 leaving that end unbounded.
pub(crate) fn order_interval(
    (k_low, k_high): (usize, usize),
    count: usize,
    alt: Alternative,
    level: f64,
    kth: impl Fn(usize) -> Option<f64> + Sync,
) -> Interval {
    let ok = |k: usize| k >= 1 && k <= count;
    // The two selections are independent; on large samples each is worth a core.
    let (low, high) = rayon::join(
        || {
            (ok(k_low) && alt != Alternative::Less)
                .then(|| kth(k_low - 1))
                .flatten()
        },
        || {
            (ok(k_high) && alt != Alternative::Greater)
                .then(|| kth(count - k_high))
                .flatten()
        },
    );
    Interval { low, high, level }
}

/// Interval for a rank-biserial correlation `r` by the Fisher
/// z-transformation, `tanh(atanh(r) ± z_{1−tail}·se)`, with `se` the null
/// standard deviation of `r` from the normal approximation of its rank
/// statistic (tie-corrected). At r = 0 the transformation has slope 1, so
/// `se` is also the null standard error of atanh(r). `r` is first pulled
/// in from ±1 by half a count (`bound` = 1 − ½·(2/range)) so a complete
/// separation still gets an interval of positive width. This is an
/// approximation: it uses the null variance, so away from 0 coverage is
/// only approximate.
pub(crate) fn fisher_interval(
    r: f64,
    se: f64,
    bound: f64,
    alt: Alternative,
    level: f64,
) -> Interval {
    let z = -normal_quantile(tail_alpha(level, alt));
    let center = r.clamp(-bound, bound).atanh();
    let low = (alt != Alternative::Less).then(|| (center - z * se).tanh());
    let high = (alt != Alternative::Greater).then(|| (center + z * se).tanh());
    Interval { low, high, level }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn continuity_correction_directions() {
        // z = (12 − 10 − 0.5)/1.5 = 1 for greater; (12 − 10 + 0.5)/2.5 = 1 for less.
        assert_eq!(normal_p(12.0, 10.0, 1.5, Alternative::Greater, true).0, 1.0);
        assert_eq!(normal_p(12.0, 10.0, 2.5, Alternative::Less, true).0, 1.0);
        let (z, p) = normal_p(10.25, 10.0, 1.0, Alternative::TwoSided, true);
        assert_eq!((z, p), (0.0, 1.0));
        // Without the correction: (12 − 10)/2 = 1 either way.
        assert_eq!(
            normal_p(12.0, 10.0, 2.0, Alternative::Greater, false).0,
            1.0
        );
        assert_eq!(
            normal_p(10.25, 10.0, 0.25, Alternative::TwoSided, false).0,
            1.0
        );
    }

    #[test]
    fn critical_k_rounds_half_up() {
        // μ = 10, σ = 1, tail 0.025: 10 − 1.959964 = 8.04 → 8.
        assert_eq!(normal_critical_k(10.0, 1.0, 0.025), 8);
        assert_eq!(normal_critical_k(1.0, 3.0, 0.025), 0);
    }

    #[test]
    fn fisher_interval_is_one_sided_when_asked() {
        let i = fisher_interval(0.3, 0.1, 0.99, Alternative::Greater, 0.95);
        assert!(i.high.is_none() && i.low.unwrap() < 0.3);
        let i = fisher_interval(1.0, 0.1, 0.99, Alternative::TwoSided, 0.95);
        assert!(i.low.unwrap() < i.high.unwrap() && i.high.unwrap() < 1.0);
    }

    #[test]
    fn fisher_interval_at_zero_is_symmetric() {
        // r = 0: tanh(±z·se) with z_0.975 = 1.959963984540054 (standard
        // normal table value, from memory).
        let i = fisher_interval(0.0, 0.1, 0.99, Alternative::TwoSided, 0.95);
        let want = (1.959963984540054f64 * 0.1).tanh();
        assert!((i.high.unwrap() - want).abs() < 1e-12);
        assert!((i.low.unwrap() + want).abs() < 1e-12);
    }

    #[test]
    fn rejects_bad_levels() {
        assert!(check_level(1.0).is_err());
        assert!(check_level(f64::NAN).is_err());
        assert!(check_level(0.95).is_ok());
    }
}
