//! Equivalence testing by two one-sided tests (TOST).
//!
//! Schuirmann (1987), "A comparison of the two one-sided tests procedure
//! and the power approach for assessing the equivalence of average
//! bioavailability", Journal of Pharmacokinetics and Biopharmaceutics
//! 15(6), 657–680. The difference is declared inside `(low, high)` at level
//! α when both `H₀: Δ ≤ low` and `H₀: Δ ≥ high` are rejected by one-sided
//! t-tests at α; the overall p is the larger of the two. The matching
//! interval is the two-sided 1 − 2α interval, which lies inside the bounds
//! exactly when p < α. Standard errors and df come from [`super::ttest`].

use super::dist::{t_cdf, t_sf};
use super::ttest::{one_sample_t, student_t, welch_t, TTest};
use super::{Alternative, Interval, StatsError};

/// Result of a two one-sided tests equivalence analysis.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Tost {
    /// Lower equivalence bound (raw units of the difference).
    pub low: f64,
    /// Upper equivalence bound.
    pub high: f64,
    /// t for `H₀: Δ ≤ low`, `(estimate − low)/se`.
    pub t_lower: f64,
    /// t for `H₀: Δ ≥ high`, `(estimate − high)/se`.
    pub t_upper: f64,
    /// Degrees of freedom of both tests.
    pub df: f64,
    /// One-sided p for the lower test, `P(T ≥ t_lower)`.
    pub p_lower: f64,
    /// One-sided p for the upper test, `P(T ≤ t_upper)`.
    pub p_upper: f64,
    /// The TOST p value: the larger of the two.
    pub p: f64,
    /// The estimated difference.
    pub estimate: f64,
    /// Two-sided 1 − 2α confidence interval for the difference.
    pub interval: Interval,
}

/// Refuses bounds that are not finite or not in order, and an α outside
/// (0, 0.5) (a 1 − 2α interval needs it); shared by every equivalence test.
pub(super) fn check(low: f64, high: f64, alpha: f64) -> Result<(), StatsError> {
    if !low.is_finite() || !high.is_finite() {
        return Err(StatsError::NonFinite);
    }
    if low >= high {
        return Err(StatsError::BadParameter(
            "the lower equivalence bound must be below the upper",
        ));
    }
    if !(alpha > 0.0 && alpha < 0.5) {
        return Err(StatsError::BadParameter(
            "alpha must lie strictly between 0 and 0.5",
        ));
    }
    Ok(())
}

fn finish(r: TTest, low: f64, high: f64) -> Tost {
    from_parts(r.estimate, r.se, r.df, r.interval, low, high)
}

/// The two one-sided t tests of an estimate with standard error `se` and
/// `df` degrees of freedom against `low` and `high`; `interval` is its
/// 1 − 2α interval. Shared by the mean and the trimmed-mean TOST.
pub(super) fn from_parts(
    estimate: f64,
    se: f64,
    df: f64,
    interval: Interval,
    low: f64,
    high: f64,
) -> Tost {
    let t_lower = (estimate - low) / se;
    let t_upper = (estimate - high) / se;
    let p_lower = t_sf(t_lower, df);
    let p_upper = t_cdf(t_upper, df);
    Tost {
        low,
        high,
        t_lower,
        t_upper,
        df,
        p_lower,
        p_upper,
        p: p_lower.max(p_upper),
        estimate,
        interval,
    }
}

/// TOST for `mean(x) − mean(y)` within `(low, high)`, with the pooled
/// (Student) or Welch standard error; requirements as for those tests.
pub fn tost_two_sample(
    x: &[f64],
    y: &[f64],
    low: f64,
    high: f64,
    alpha: f64,
    welch: bool,
) -> Result<Tost, StatsError> {
    check(low, high, alpha)?;
    let level = 1.0 - 2.0 * alpha;
    let r = if welch {
        welch_t(x, y, Alternative::TwoSided, level)?
    } else {
        student_t(x, y, Alternative::TwoSided, level)?
    };
    Ok(finish(r, low, high))
}

/// TOST for `mean(x) − reference` within `(low, high)`. For paired data
/// pass the differences with reference 0.
pub fn tost_one_sample(
    x: &[f64],
    reference: f64,
    low: f64,
    high: f64,
    alpha: f64,
) -> Result<Tost, StatsError> {
    check(low, high, alpha)?;
    let r = one_sample_t(x, reference, Alternative::TwoSided, 1.0 - 2.0 * alpha)?;
    Ok(finish(r, low, high))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn interval_inside_bounds_iff_p_below_alpha() {
        // Schuirmann's duality, checked on both sides of the boundary.
        let x = [10.1, 9.8, 10.3, 10.0, 9.9, 10.2];
        let y = [10.0, 10.1, 9.7, 10.2, 9.9];
        for &m in &[0.1, 0.2, 0.3, 0.5] {
            let r = tost_two_sample(&x, &y, -m, m, 0.05, true).unwrap();
            let inside = r.interval.low.unwrap() > -m && r.interval.high.unwrap() < m;
            assert_eq!(inside, r.p < 0.05, "margin {m}");
        }
    }

    #[test]
    fn bad_bounds_are_rejected() {
        let x = [1.0, 2.0, 3.0];
        assert!(matches!(
            tost_one_sample(&x, 0.0, 1.0, 1.0, 0.05),
            Err(StatsError::BadParameter(_))
        ));
        assert!(matches!(
            tost_one_sample(&x, 0.0, -1.0, 1.0, 0.6),
            Err(StatsError::BadParameter(_))
        ));
    }
}
