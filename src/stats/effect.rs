//! Standardised effect sizes with confidence intervals: Cohen's d, Hedges'
//! g and d_z for paired or one-sample designs.
//!
//! Each point estimate is the t statistic rescaled (d = t·√(1/n₁ + 1/n₂),
//! d_z = t/√n), so it inherits the t-test's centring and accuracy. The
//! intervals invert the noncentral t in its noncentrality parameter
//! (Steiger & Fouladi 1997; Cumming & Finch 2001) and rescale the bounds
//! the same way, so a one-sided alternative gives a one-sided interval.

use super::nct::ncp_bounds;
use super::ttest::{one_sample_t, student_t};
use super::{Alternative, Interval, StatsError};

/// A standardised effect size and its confidence interval.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Effect {
    /// Point estimate.
    pub value: f64,
    /// Confidence interval; the open side is `None` for one-sided alternatives.
    pub interval: Interval,
}

/// Rescales t and its noncentrality bounds by `scale`.
fn scaled(t: f64, df: f64, scale: f64, alt: Alternative, level: f64) -> Effect {
    let (lo, hi) = ncp_bounds(t, df, alt, level);
    Effect {
        value: t * scale,
        interval: Interval {
            low: lo.map(|v| v * scale),
            high: hi.map(|v| v * scale),
            level,
        },
    }
}

/// Cohen's d for `first − second` with the pooled standard deviation
/// (Cohen 1988, *Statistical Power Analysis for the Behavioral Sciences*,
/// 2nd ed.). Same input requirements as [`student_t`].
pub fn cohens_d(x: &[f64], y: &[f64], alt: Alternative, level: f64) -> Result<Effect, StatsError> {
    let r = student_t(x, y, alt, level)?;
    let scale = (1.0 / x.len() as f64 + 1.0 / y.len() as f64).sqrt();
    Ok(scaled(r.t, r.df, scale, alt, level))
}

/// The exact small-sample bias correction for d,
/// `J(ν) = Γ(ν/2) / (√(ν/2) · Γ((ν−1)/2))` (Hedges 1981, "Distribution
/// theory for Glass's estimator of effect size and related estimators",
/// Journal of Educational Statistics 6(2), 107–128, eq. 6e).
///
/// Defined for ν > 1; NaN otherwise. With `w = (ν−1)/2` it is
/// `R(w)/√(ν/2)` for the gamma ratio `R(w) = Γ(w+½)/Γ(w)`. `R` is carried up
/// by the recurrence `R(w) = R(w+1)·w/(w+½)` to `W ≥ 200`, where the
/// asymptotic expansion
/// `R(W) = √W (1 − 1/(8W) + 1/(128W²) + 5/(1024W³) − 21/(32768W⁴) − 399/(262144W⁵) + O(W⁻⁶))`
/// (Graham, Knuth & Patashnik, *Concrete Mathematics*, ex. 9.60) is exact to
/// rounding; this avoids the cancellation of a difference of two ln-gammas.
pub fn hedges_correction(df: f64) -> f64 {
    if df.is_nan() || df <= 1.0 {
        return f64::NAN;
    }
    if df.is_infinite() {
        return 1.0;
    }
    let z = 0.5 * df;
    let mut w = z - 0.5;
    let mut ratio = 1.0;
    while w < 200.0 {
        ratio *= w / (w + 0.5);
        w += 1.0;
    }
    let iw = 1.0 / w;
    let series = 1.0
        + iw * (-1.0 / 8.0
            + iw * (1.0 / 128.0
                + iw * (5.0 / 1024.0 + iw * (-21.0 / 32768.0 - iw * 399.0 / 262_144.0))));
    ratio * (w / z).sqrt() * series
}

/// Hedges' g: Cohen's d and its interval bounds multiplied by the exact
/// correction [`hedges_correction`] at df = n₁ + n₂ − 2. Needs df ≥ 2
/// (n₁ + n₂ ≥ 4), since J(1) = 0.
pub fn hedges_g(x: &[f64], y: &[f64], alt: Alternative, level: f64) -> Result<Effect, StatsError> {
    let total = x.len() + y.len();
    if total < 4 {
        return Err(StatsError::TooFew {
            needed: 4,
            got: total,
        });
    }
    hedges_from_d(&cohens_d(x, y, alt, level)?, total)
}

/// Hedges' g from an already computed Cohen's d of `total` values: d and
/// its interval bounds times [`hedges_correction`]. Needs `total ≥ 4`.
pub(crate) fn hedges_from_d(d: &Effect, total: usize) -> Result<Effect, StatsError> {
    if total < 4 {
        return Err(StatsError::TooFew {
            needed: 4,
            got: total,
        });
    }
    let j = hedges_correction(total as f64 - 2.0);
    Ok(Effect {
        value: d.value * j,
        interval: Interval {
            low: d.interval.low.map(|v| v * j),
            high: d.interval.high.map(|v| v * j),
            level: d.interval.level,
        },
    })
}

/// d_z for paired differences (or a one-sample design): mean(d − reference)
/// divided by sd(d), with the interval from the noncentral t with n − 1 df
/// rescaled by 1/√n. Same input requirements as [`one_sample_t`].
pub fn d_z(
    diffs: &[f64],
    reference: f64,
    alt: Alternative,
    level: f64,
) -> Result<Effect, StatsError> {
    let r = one_sample_t(diffs, reference, alt, level)?;
    let scale = 1.0 / (diffs.len() as f64).sqrt();
    Ok(scaled(r.t, r.df, scale, alt, level))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn correction_matches_its_small_closed_forms() {
        // By hand from Γ: J(2) = Γ(1)/(1·Γ(½)) = 1/√π; J(3) = Γ(3/2)/(√1.5·Γ(1)) = √π/(2√1.5).
        let pi = std::f64::consts::PI;
        assert!((hedges_correction(2.0) - 1.0 / pi.sqrt()).abs() < 1e-14);
        assert!((hedges_correction(3.0) - pi.sqrt() / (2.0 * 1.5f64.sqrt())).abs() < 1e-14);
        assert!(hedges_correction(1.0).is_nan());
    }

    #[test]
    fn correction_approaches_the_usual_approximation() {
        // Common practice: J ≈ 1 − 3/(4ν − 1) to O(ν⁻²).
        let df = 20_001.0;
        assert!((hedges_correction(df) - (1.0 - 3.0 / (4.0 * df - 1.0))).abs() < 1e-8);
    }

    #[test]
    fn one_sided_interval_is_open_on_one_side() {
        let e = cohens_d(
            &[3.0, 4.0, 6.0, 5.0],
            &[1.0, 2.0, 2.5],
            Alternative::Greater,
            0.95,
        )
        .unwrap();
        assert!(e.interval.high.is_none() && e.interval.low.unwrap() < e.value);
        assert!(hedges_g(&[1.0], &[2.0, 3.0], Alternative::Less, 0.9).is_err());
    }
}
