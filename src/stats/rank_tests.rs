//! The result of a rank test and the pieces both rank tests share:
//! continuity-corrected normal p values, distribution-free Hodges–Lehmann
//! intervals from a critical count, and the rank-biserial interval.
//!
//! The tests themselves live in [`super::mann_whitney`] and
//! [`super::wilcoxon`]; both return a [`RankTest`] so the results model
//! handles them alike.

use super::dist::{normal_cdf, normal_quantile, normal_sf};
use super::{Alternative, Interval, PMethod, StatsError};
use serde::{Deserialize, Serialize};

/// Outcome of a Mann–Whitney or Wilcoxon signed-rank test.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct RankTest {
    /// U1 for Mann–Whitney (first group, ties count ½); W+ for Wilcoxon.
    pub statistic: f64,
    /// p value for the stated alternative.
    pub p: f64,
    /// Exact permutation distribution or normal approximation.
    pub p_method: PMethod,
    /// Continuity-corrected z whose normal tail gives `p` (normal
    /// approximation only; `None` when `p` is exact).
    pub z: Option<f64>,
    /// Observations used: n1 + n2, or the non-zero differences for Wilcoxon.
    pub n_used: usize,
    /// Zero differences dropped before ranking (always 0 for Mann–Whitney).
    pub zeros_dropped: usize,
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
/// Returns `(z, p)`; tails come from `normal_sf` directly.
pub(crate) fn normal_p(s: f64, mu: f64, sigma: f64, alt: Alternative) -> (f64, f64) {
    let d = s - mu;
    match alt {
        Alternative::Greater => {
            let z = (d - 0.5) / sigma;
            (z, normal_sf(z))
        }
        Alternative::Less => {
            let z = (d + 0.5) / sigma;
            (z, normal_cdf(z))
        }
        Alternative::TwoSided => {
            let z = d.signum() * (d.abs() - 0.5).max(0.0) / sigma;
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

/// The interval `[A_(k), A_(M+1−k)]` (1-based order statistics of `count`
/// ordered values given by `kth`, 0-based), one-sided as `alt` says.
pub(crate) fn order_interval(
    k: usize,
    count: usize,
    alt: Alternative,
    level: f64,
    kth: impl Fn(usize) -> Option<f64> + Sync,
) -> Interval {
    let ok = k >= 1 && k <= count;
    // The two selections are independent; on large samples each is worth a core.
    let (low, high) = rayon::join(
        || {
            (ok && alt != Alternative::Less)
                .then(|| kth(k - 1))
                .flatten()
        },
        || {
            (ok && alt != Alternative::Greater)
                .then(|| kth(count - k))
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
        assert_eq!(normal_p(12.0, 10.0, 1.5, Alternative::Greater).0, 1.0);
        assert_eq!(normal_p(12.0, 10.0, 2.5, Alternative::Less).0, 1.0);
        let (z, p) = normal_p(10.25, 10.0, 1.0, Alternative::TwoSided);
        assert_eq!((z, p), (0.0, 1.0));
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
