//! Student's t-tests: one-sample, paired, pooled two-sample and Welch.
//!
//! All four reduce to one shape — an estimate, its standard error and the
//! degrees of freedom — after which the p value and the interval come from
//! the same code ([`from_estimate`]). Data are centred on their first value
//! before any sum is taken, so values near 1e15 with a spread of a few
//! units keep their digits (the shift is exact for such data, by Sterbenz's
//! lemma), and the group means are never formed at the data's magnitude.
//!
//! The statistics are the textbook ones (common practice): one-sample
//! t = (x̄ − μ₀)/(s/√n) with n − 1 df; pooled t with
//! s²ₚ = (SS₁ + SS₂)/(n₁ + n₂ − 2); Welch (1947), "The generalization of
//! 'Student's' problem when several different population variances are
//! involved", Biometrika 34, 28–35, with the Satterthwaite (1946)
//! approximation to the df.

use super::describe::{mean, variance};
use super::dist::{log_t_sf, t_quantile, t_sf};
use super::exact::{self, ExactSum};
use super::{ensure_finite, p_from_symmetric, Alternative, Interval, StatsError};

/// Result of a t-test.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct TTest {
    /// The t statistic, `estimate / se` (or `(estimate − null)/se`).
    pub t: f64,
    /// Degrees of freedom (fractional for Welch).
    pub df: f64,
    /// p value for the requested alternative.
    pub p: f64,
    /// log10 of `p` from the log of the t tail ([`super::dist::log_t_sf`]),
    /// finite where `p` underflows to 0.
    pub log10_p: f64,
    /// Mean difference first − second, or mean(x) − reference.
    pub estimate: f64,
    /// Standard error of the estimate.
    pub se: f64,
    /// Confidence interval for the estimate; one-sided for one-sided
    /// alternatives, so it excludes the null exactly when p < 1 − level.
    pub interval: Interval,
}

/// Checks a confidence level lies strictly between 0 and 1.
pub(crate) fn check_level(level: f64) -> Result<(), StatsError> {
    if level > 0.0 && level < 1.0 {
        Ok(())
    } else {
        Err(StatsError::BadParameter(
            "confidence level must lie strictly between 0 and 1",
        ))
    }
}

/// The t statistic, p value and interval from an estimate, its standard
/// error and df. The interval uses the `level` quantile for one-sided
/// alternatives and the `(1 + level)/2` quantile for two-sided ones.
pub(crate) fn from_estimate(
    estimate: f64,
    se: f64,
    df: f64,
    alt: Alternative,
    level: f64,
) -> Result<TTest, StatsError> {
    check_level(level)?;
    // Finite inputs can still overflow when squared (|x| near 1e300).
    if se.is_nan() || !estimate.is_finite() || df.is_nan() || df <= 0.0 || se.is_infinite() {
        return Err(StatsError::Overflow);
    }
    if se <= 0.0 {
        return Err(StatsError::ZeroVariance);
    }
    let t = estimate / se;
    if !t.is_finite() {
        // A spread below about 1e-308 of the difference (fuzzing find).
        return Err(StatsError::Overflow);
    }
    let p = p_from_symmetric(t, alt, |s| t_sf(s, df));
    let ln_p = match alt {
        Alternative::Greater => log_t_sf(t, df),
        Alternative::Less => log_t_sf(-t, df),
        Alternative::TwoSided => (std::f64::consts::LN_2 + log_t_sf(t.abs(), df)).min(0.0),
    };
    let log10_p = ln_p / std::f64::consts::LN_10;
    let interval = match alt {
        Alternative::TwoSided => {
            let q = t_quantile(0.5 * (1.0 + level), df);
            Interval {
                low: Some(estimate - q * se),
                high: Some(estimate + q * se),
                level,
            }
        }
        Alternative::Greater => {
            let q = t_quantile(level, df);
            Interval {
                low: Some(estimate - q * se),
                high: None,
                level,
            }
        }
        Alternative::Less => {
            let q = t_quantile(level, df);
            Interval {
                low: None,
                high: Some(estimate + q * se),
                level,
            }
        }
    };
    Ok(TTest {
        t,
        df,
        p,
        log10_p,
        estimate,
        se,
        interval,
    })
}

/// One-sample t-test of `mean(x) = reference`. Needs n ≥ 2, finite values
/// and a non-zero spread.
pub fn one_sample_t(
    x: &[f64],
    reference: f64,
    alt: Alternative,
    level: f64,
) -> Result<TTest, StatsError> {
    if x.len() < 2 {
        return Err(StatsError::TooFew {
            needed: 2,
            got: x.len(),
        });
    }
    ensure_finite(x)?;
    ensure_finite(&[reference])?;
    let shift = smallest(x);
    let centred: Vec<f64> = x.iter().map(|v| v - shift).collect();
    let n = x.len() as f64;
    let var = variance(&centred).unwrap_or(0.0);
    // (x̄ − μ₀) = mean of the centred data + (shift − μ₀), both small terms.
    let estimate = mean(&centred) + (shift - reference);
    from_estimate(estimate, (var / n).sqrt(), n - 1.0, alt, level)
}

/// Paired t-test of `first − second`: the one-sample test on the
/// differences against 0. The slices must have the same length
/// (`BadParameter` otherwise) and at least two pairs.
pub fn paired_t(
    first: &[f64],
    second: &[f64],
    alt: Alternative,
    level: f64,
) -> Result<TTest, StatsError> {
    if first.len() != second.len() {
        return Err(StatsError::BadParameter(
            "paired samples must have the same length",
        ));
    }
    ensure_finite(first)?;
    ensure_finite(second)?;
    let diffs: Vec<f64> = first.iter().zip(second).map(|(a, b)| a - b).collect();
    one_sample_t(&diffs, 0.0, alt, level)
}

/// Means and sums of squares of two groups, centred on a common shift.
pub(crate) struct TwoGroups {
    /// Group sizes.
    pub n1: f64,
    /// Second group size.
    pub n2: f64,
    /// mean(x) − mean(y).
    pub diff: f64,
    /// Sum of squared deviations of x (0 when n1 = 1).
    pub ss1: f64,
    /// Sum of squared deviations of y (0 when n2 = 1).
    pub ss2: f64,
}

/// Mean and sum of squared deviations of `x − shift`, computed as
/// [`mean`] and [`variance`] would on the shifted copy (the mean of the
/// exact sum, then the corrected two-pass sum of squares; Chan, Golub &
/// LeVeque 1983, "Algorithms for computing the sample variance", Amer.
/// Statist. 37(3), 242–247), without making the copy. The sum of squares
/// is 0 for a single value. Every sum is exact ([`super::exact`]), so the
/// result does not depend on the order of `x`.
fn shifted_moments(x: &[f64], shift: f64) -> (f64, f64) {
    let n = x.len() as f64;
    let m = exact::mean(x.iter().map(|v| v - shift), x.len());
    if x.len() < 2 {
        return (m, 0.0);
    }
    let (mut ss, mut comp) = (ExactSum::new(), ExactSum::new());
    for v in x {
        let d = (v - shift) - m;
        ss.add(d * d);
        comp.add(d);
    }
    let comp = comp.value();
    (m, (ss.value() - comp * comp / n).max(0.0))
}

/// The smallest value: the common shift that centres a sample near zero
/// (exact for values of like magnitude), chosen by value rather than by
/// position so that it does not depend on the order of the rows.
fn smallest(x: &[f64]) -> f64 {
    x.iter().copied().min_by(f64::total_cmp).unwrap_or(0.0)
}

impl TwoGroups {
    /// Summarises two finite, non-empty groups.
    pub(crate) fn new(x: &[f64], y: &[f64]) -> Result<Self, StatsError> {
        for g in [x, y] {
            if g.is_empty() {
                return Err(StatsError::TooFew { needed: 1, got: 0 });
            }
            ensure_finite(g)?;
        }
        // Both groups shifted by the smallest value of x (exact for values
        // of like magnitude), so the difference of means does not lose
        // digits to a large offset.
        let shift = smallest(x);
        let (m1, ss1) = shifted_moments(x, shift);
        let (m2, ss2) = shifted_moments(y, shift);
        Ok(TwoGroups {
            n1: x.len() as f64,
            n2: y.len() as f64,
            diff: m1 - m2,
            ss1,
            ss2,
        })
    }

    /// Pooled variance with n1 + n2 − 2 df.
    pub(crate) fn pooled_var(&self) -> f64 {
        (self.ss1 + self.ss2) / (self.n1 + self.n2 - 2.0)
    }
}

/// Two-sample t-test with pooled variance (Student), `first − second`.
///
/// Each group needs at least one value and together at least three, so the
/// pooled variance has one degree of freedom (a group of one contributes
/// its mean only).
pub fn student_t(x: &[f64], y: &[f64], alt: Alternative, level: f64) -> Result<TTest, StatsError> {
    let total = x.len() + y.len();
    if total < 3 {
        return Err(StatsError::TooFew {
            needed: 3,
            got: total,
        });
    }
    let g = TwoGroups::new(x, y)?;
    let se = (g.pooled_var() * (1.0 / g.n1 + 1.0 / g.n2)).sqrt();
    from_estimate(g.diff, se, g.n1 + g.n2 - 2.0, alt, level)
}

/// Welch's two-sample t-test (unequal variances), `first − second`, with
/// Welch–Satterthwaite df. Each group needs at least two values.
pub fn welch_t(x: &[f64], y: &[f64], alt: Alternative, level: f64) -> Result<TTest, StatsError> {
    let (df, se, diff) = welch_parts(x, y)?;
    from_estimate(diff, se, df, alt, level)
}

/// Welch df, standard error and mean difference.
pub(crate) fn welch_parts(x: &[f64], y: &[f64]) -> Result<(f64, f64, f64), StatsError> {
    let fewest = x.len().min(y.len());
    if fewest < 2 {
        return Err(StatsError::TooFew {
            needed: 2,
            got: fewest,
        });
    }
    let g = TwoGroups::new(x, y)?;
    let v1 = g.ss1 / (g.n1 - 1.0) / g.n1;
    let v2 = g.ss2 / (g.n2 - 1.0) / g.n2;
    let se2 = v1 + v2;
    // Finite data near ±1e308 overflow when centred or squared; that is not
    // a zero spread and must not be reported as one.
    if !se2.is_finite() || !g.diff.is_finite() {
        return Err(StatsError::Overflow);
    }
    if se2 <= 0.0 {
        return Err(StatsError::ZeroVariance);
    }
    let df = se2 * se2 / (v1 * v1 / (g.n1 - 1.0) + v2 * v2 / (g.n2 - 1.0));
    Ok((df, se2.sqrt(), g.diff))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_statistic_beyond_the_doubles_is_refused() {
        // Found by the stats fuzz target (2026-12-01): an estimate of
        // 1.5e155 over a standard error of 1.4e-154 gave t = inf.
        let r = from_estimate(
            1.541_897_911_947_300_9e155,
            1.367_362_467_386_718_6e-154,
            2.0,
            Alternative::Greater,
            0.99,
        );
        assert_eq!(r, Err(StatsError::Overflow));
    }

    #[test]
    fn hand_worked_one_sample() {
        // By hand: x = 1..=5, μ₀ = 1 → x̄ − μ₀ = 2, s² = 2.5, se = √0.5, t = 2√2.
        let r = one_sample_t(&[1.0, 2.0, 3.0, 4.0, 5.0], 1.0, Alternative::TwoSided, 0.95).unwrap();
        assert!((r.t - 2.0 * 2f64.sqrt()).abs() < 1e-14);
        assert_eq!(r.df, 4.0);
    }

    #[test]
    fn errors_are_typed() {
        let a = Alternative::TwoSided;
        assert_eq!(
            one_sample_t(&[1.0], 0.0, a, 0.95).unwrap_err(),
            StatsError::TooFew { needed: 2, got: 1 }
        );
        assert_eq!(
            one_sample_t(&[2.0, 2.0], 0.0, a, 0.95).unwrap_err(),
            StatsError::ZeroVariance
        );
        assert_eq!(
            one_sample_t(&[1.0, f64::NAN], 0.0, a, 0.95).unwrap_err(),
            StatsError::NonFinite
        );
        assert!(matches!(
            paired_t(&[1.0], &[1.0, 2.0], a, 0.95),
            Err(StatsError::BadParameter(_))
        ));
        assert_eq!(
            student_t(&[1.0], &[2.0], a, 0.95).unwrap_err(),
            StatsError::TooFew { needed: 3, got: 2 }
        );
        assert_eq!(
            welch_t(&[1.0], &[2.0, 3.0], a, 0.95).unwrap_err(),
            StatsError::TooFew { needed: 2, got: 1 }
        );
        assert_eq!(
            welch_t(&[1.0, 1.0], &[2.0, 2.0], a, 0.95).unwrap_err(),
            StatsError::ZeroVariance
        );
        // Finite values whose differences overflow: found by the catalogue
        // case tests/bad_inputs/data-overflowing-values, which reported
        // "all values are identical" for them.
        let huge = [1e308, -1e308, 1.5e308];
        let other = [-1e308, 1e308, -1.7e308];
        assert_eq!(
            welch_t(&huge, &other, a, 0.95).unwrap_err(),
            StatsError::Overflow
        );
        assert_eq!(
            student_t(&huge, &other, a, 0.95).unwrap_err(),
            StatsError::Overflow
        );
        assert_eq!(
            one_sample_t(&huge, 0.0, a, 0.95).unwrap_err(),
            StatsError::Overflow
        );
        assert!(matches!(
            student_t(&[1.0, 2.0], &[3.0, 5.0], a, 1.0),
            Err(StatsError::BadParameter(_))
        ));
    }

    #[test]
    fn student_allows_a_single_value_group() {
        // By hand: x = {0}, y = {1, 3}: diff = −2, s²ₚ = 2/1, se = √(2·1.5) = √3.
        let r = student_t(&[0.0], &[1.0, 3.0], Alternative::TwoSided, 0.95).unwrap();
        assert!((r.t + 2.0 / 3f64.sqrt()).abs() < 1e-14);
        assert_eq!(r.df, 1.0);
    }

    #[test]
    fn huge_offset_keeps_digits() {
        // Identity: shifting data by 1e15 (exact here) leaves t unchanged.
        let x = [1.0, 2.0, 4.0, 7.0];
        let y = [0.5, 1.5, 2.0];
        let xs: Vec<f64> = x.iter().map(|v| v + 1e15).collect();
        let ys: Vec<f64> = y.iter().map(|v| v + 1e15).collect();
        let a = welch_t(&x, &y, Alternative::TwoSided, 0.95).unwrap();
        let b = welch_t(&xs, &ys, Alternative::TwoSided, 0.95).unwrap();
        assert!((a.t - b.t).abs() < 1e-14 * a.t.abs());
    }
}
