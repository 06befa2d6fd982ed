//! Equivalence beyond the t test: two one-sided tests on the
//! Hodges–Lehmann shift and on the probability of superiority.
//!
//! * Shift: the difference is declared inside `(low, high)` when both
//!   one-sided Mann–Whitney tests reject — of `H₀: Δ ≤ low` on `x − low`
//!   against `y` (greater) and of `H₀: Δ ≥ high` on `x − high` (less) —
//!   each at α; p is the larger of the two (Schuirmann's 1987 principle
//!   applied to the rank test; Hollander & Wolfe 1999, §4.3, for the
//!   shifted test). The matching interval is the distribution-free
//!   Hodges–Lehmann interval at 1 − 2α.
//! * Pseudo-median of paired differences (or of one sample minus its
//!   reference): the same construction with the signed-rank test, on
//!   `d − low` (greater) and `d − high` (less), and the Hodges–Lehmann
//!   interval of the differences at 1 − 2α.
//! * Probability of superiority θ = P(Y < X) + ½P(X = Y): Munzel &
//!   Hauschke (2003), "A nonparametric test for proving noninferiority in
//!   clinical trials with ordered categorical data", Biometrical Journal
//!   45(8), 1039–1052 — the Brunner–Munzel standard error and
//!   Satterthwaite df, t_L = (θ̂ − θ_L)/se and t_U = (θ̂ − θ_U)/se, p the
//!   larger of P(T ≥ t_L) and P(T ≤ t_U); interval θ̂ ± t_{1−α}·se.
//!
//! Decisions go through [`Decision::at`], so "equivalent" means p < α.

use super::brunner_munzel::{brunner_munzel, BmInference};
use super::dist::{t_cdf, t_sf};
use super::mann_whitney::mann_whitney_with;
use super::rank_tests::RankOptions;
use super::wilcoxon::wilcoxon_signed_rank_with;
use super::{Alternative, Decision, Interval, StatsError};
use serde::{Deserialize, Serialize};

/// Result of a two one-sided tests analysis on a rank-based estimate.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct RankTost {
    /// Lower equivalence bound (units of the estimate).
    pub low: f64,
    /// Upper equivalence bound.
    pub high: f64,
    /// One-sided p against `H₀: estimand ≤ low`.
    pub p_lower: f64,
    /// One-sided p against `H₀: estimand ≥ high`.
    pub p_upper: f64,
    /// The TOST p: the larger of the two.
    pub p: f64,
    /// The estimate (Hodges–Lehmann shift, or θ̂).
    pub estimate: f64,
    /// Two-sided 1 − 2α interval for the estimand.
    pub interval: Interval,
    /// Whether equivalence is shown at α (p < α).
    pub decision: Decision,
    /// The t statistics against the lower and upper bound and their df
    /// (probability of superiority only; the shift tests use U or W+).
    pub t: Option<([f64; 2], f64)>,
}

use super::equivalence::check;

/// TOST for the Hodges–Lehmann shift of `x` over `y` within `(low, high)`
/// at `alpha`, with the rank conventions of `options`.
///
/// Errors: as [`mann_whitney_with`], bounds not finite (`NonFinite`) or
/// not increasing, alpha outside (0, 0.5) (`BadParameter`).
pub fn tost_hodges_lehmann(
    x: &[f64],
    y: &[f64],
    low: f64,
    high: f64,
    alpha: f64,
    options: &RankOptions,
) -> Result<RankTost, StatsError> {
    shift_tost(low, high, alpha, |by, alt, level| {
        let shifted: Vec<f64> = x.iter().map(|v| v - by).collect();
        mann_whitney_with(&shifted, y, alt, level, options)
    })
}

/// TOST for the pseudo-median of `d` (paired differences, or one sample
/// minus its reference) within `(low, high)` at `alpha`, with the
/// signed-rank conventions of `options` (zeros are those of `d − bound`).
///
/// Errors: as [`wilcoxon_signed_rank_with`], and as
/// [`tost_hodges_lehmann`] for the bounds and alpha.
pub fn tost_signed_rank(
    d: &[f64],
    low: f64,
    high: f64,
    alpha: f64,
    options: &RankOptions,
) -> Result<RankTost, StatsError> {
    shift_tost(low, high, alpha, |by, alt, level| {
        let shifted: Vec<f64> = d.iter().map(|v| v - by).collect();
        wilcoxon_signed_rank_with(&shifted, alt, level, options)
    })
}

/// The two one-sided rank tests of a shift: `test(by, alternative,
/// level)` runs the rank test on the data shifted by `by`; the tests
/// against `low` (greater) and `high` (less) are each at α, and the
/// unshifted two-sided test at 1 − 2α gives the estimate and interval.
fn shift_tost(
    low: f64,
    high: f64,
    alpha: f64,
    test: impl Fn(f64, Alternative, f64) -> Result<super::rank_tests::RankTest, StatsError>,
) -> Result<RankTost, StatsError> {
    check(low, high, alpha)?;
    let lower = test(low, Alternative::Greater, 1.0 - alpha)?;
    let upper = test(high, Alternative::Less, 1.0 - alpha)?;
    let both = test(0.0, Alternative::TwoSided, 1.0 - 2.0 * alpha)?;
    let p = lower.p.max(upper.p);
    Ok(RankTost {
        low,
        high,
        p_lower: lower.p,
        p_upper: upper.p,
        p,
        estimate: both.estimate,
        interval: both.interval,
        decision: Decision::at(p, alpha),
        t: None,
    })
}

/// TOST for the probability of superiority θ of `x` over `y` within
/// `(low, high)` (bounds in (0, 1)) at `alpha` (Munzel & Hauschke 2003).
///
/// Errors: as [`brunner_munzel`]; bounds outside [0, 1] or not increasing
/// and alpha outside (0, 0.5) (`BadParameter`); zero variance
/// (`ZeroVariance`: the samples do not overlap, so no t exists).
pub fn tost_prob_superiority(
    x: &[f64],
    y: &[f64],
    low: f64,
    high: f64,
    alpha: f64,
) -> Result<RankTost, StatsError> {
    check(low, high, alpha)?;
    if low < 0.0 || high > 1.0 {
        return Err(StatsError::BadParameter(
            "bounds for a probability of superiority must lie within 0 and 1",
        ));
    }
    let r = brunner_munzel(x, y, Alternative::TwoSided, 1.0 - 2.0 * alpha)?;
    let BmInference::TApproximation { df, interval, .. } = r.inference else {
        return Err(StatsError::ZeroVariance);
    };
    let (t_lower, t_upper) = ((r.estimate - low) / r.se, (r.estimate - high) / r.se);
    let p_lower = t_sf(t_lower, df);
    let p_upper = t_cdf(t_upper, df);
    let p = p_lower.max(p_upper);
    Ok(RankTost {
        low,
        high,
        p_lower,
        p_upper,
        p,
        estimate: r.estimate,
        interval,
        decision: Decision::at(p, alpha),
        t: Some(([t_lower, t_upper], df)),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn shift_tost_agrees_with_its_interval() {
        // Interval inclusion at 1 − 2α and both one-sided tests rejecting
        // are the same statement (untied data, exact p).
        let x: Vec<f64> = (0..12).map(|i| (i * 7 % 12) as f64 + 0.3).collect();
        let y: Vec<f64> = (0..11).map(|i| (i * 5 % 11) as f64 + 0.1).collect();
        for (low, high) in [(-3.0, 3.0), (-1.0, 1.0), (-6.0, 0.5), (-0.5, 6.0)] {
            let t = tost_hodges_lehmann(&x, &y, low, high, 0.05, &RankOptions::default()).unwrap();
            let inside = t.interval.low.unwrap() > low && t.interval.high.unwrap() < high;
            assert_eq!(inside, t.decision.rejects(), "({low}, {high})");
        }
    }

    #[test]
    fn signed_rank_tost_agrees_with_its_interval() {
        // Untied differences without zeros: exact p on both sides, so
        // inclusion of the 1 − 2α interval and rejection coincide.
        let d: Vec<f64> = (0..14).map(|i| (i * 5 % 14) as f64 - 6.3).collect();
        for (low, high) in [(-4.0, 4.0), (-1.0, 1.0), (-8.0, 0.2), (-0.1, 9.0)] {
            let t = tost_signed_rank(&d, low, high, 0.05, &RankOptions::default()).unwrap();
            let inside = t.interval.low.unwrap() > low && t.interval.high.unwrap() < high;
            assert_eq!(inside, t.decision.rejects(), "({low}, {high})");
        }
    }

    #[test]
    fn superiority_tost_rejects_bad_bounds() {
        let x = [1.0, 2.0, 3.0];
        let y = [1.5, 2.5, 3.5];
        assert!(tost_prob_superiority(&x, &y, 0.6, 0.4, 0.05).is_err());
        assert!(tost_prob_superiority(&x, &y, -0.1, 0.9, 0.05).is_err());
        assert_eq!(
            tost_prob_superiority(&[5.0, 6.0], &[1.0, 2.0], 0.2, 0.8, 0.05),
            Err(StatsError::ZeroVariance)
        );
    }
}
