//! Trimmed-mean t tests: Yuen's test for two independent groups and the
//! one-sample (and paired-difference) trimmed t, with the robust
//! standardised effect of Algina, Keselman & Penfield.
//!
//! With trimming proportion γ, each sample of size n loses g = ⌊γ·n⌋
//! values at each end; h = n − 2g remain. The trimmed mean is their mean;
//! the winsorised variance s_w² is the sample variance after the g lowest
//! values are set to the (g+1)-th and the g highest to the (n−g)-th.
//!
//! * Independent groups: Yuen (1974), "The two-sample trimmed t for
//!   unequal population variances", Biometrika 61(1), 165–170. With
//!   dⱼ = (nⱼ − 1)s_wⱼ²/(hⱼ(hⱼ − 1)): t = (t̄₁ − t̄₂)/√(d₁ + d₂), Welch-type
//!   df = (d₁ + d₂)²/(d₁²/(h₁ − 1) + d₂²/(h₂ − 1)).
//! * One sample, or paired data through their differences: Tukey &
//!   McLaughlin (1963), "Less vulnerable confidence and significance
//!   procedures for location based on a single sample:
//!   trimming/winsorization 1", Sankhyā A 25(3), 331–352:
//!   t = (t̄ − μ₀)/√d, d = (n − 1)s_w²/(h(h − 1)), df = h − 1. For paired
//!   data this tests the trimmed mean *of the differences*, which is not
//!   the difference of the two trimmed means.
//! * Effect: Algina, Keselman & Penfield (2005), "An alternative to
//!   Cohen's standardized mean difference effect size: a robust parameter
//!   and confidence interval in the two independent groups case",
//!   Psychological Methods 10(3), 317–328: d_R = c_γ·(t̄₁ − t̄₂)/S_w with
//!   S_w² the pooled winsorised variance, and c_γ the winsorised standard
//!   deviation of the standard normal (0.642 at γ = 0.2), computed here
//!   for any γ by [`normal_winsorised_sd`] so that d_R estimates Cohen's
//!   δ under normality. The one-sample form is c_γ·(t̄ − μ₀)/s_w.
//!
//! One sort per sample, O(n log n).

use super::dist::{normal_pdf, normal_quantile, t_quantile, t_sf};
use super::equivalence::Tost;
use super::rank_tests::check_level;
use super::{ensure_finite, p_from_symmetric, Alternative, Interval, StatsError};
use serde::{Deserialize, Serialize};

/// Outcome of a trimmed-mean t test.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct TrimmedT {
    /// t statistic.
    pub statistic: f64,
    /// Degrees of freedom.
    pub df: f64,
    /// p for the stated alternative.
    pub p: f64,
    /// Trimmed-mean difference (t̄₁ − t̄₂, or t̄ − μ₀).
    pub estimate: f64,
    /// Its standard error √(d₁ + d₂) or √d.
    pub se: f64,
    /// t interval for the estimate, one-sided for a one-sided alternative.
    pub interval: Interval,
    /// Robust standardised effect d_R of Algina, Keselman & Penfield.
    pub effect: f64,
    /// Trimming proportion used.
    pub trim: f64,
}

/// Trimmed mean, winsorised variance, n and h of one sample.
struct Trimmed {
    mean: f64,
    wvar: f64,
    n: f64,
    h: f64,
}

fn check_trim(trim: f64) -> Result<(), StatsError> {
    if (0.0..0.5).contains(&trim) {
        Ok(())
    } else {
        Err(StatsError::BadParameter(
            "the trimming proportion must be at least 0 and below 0.5",
        ))
    }
}

fn trimmed(x: &[f64], trim: f64) -> Result<Trimmed, StatsError> {
    ensure_finite(x)?;
    let n = x.len();
    let g = (trim * n as f64).floor() as usize;
    let h = n.saturating_sub(2 * g);
    if h < 2 {
        return Err(StatsError::TooFew {
            needed: 2 * g + 2,
            got: n,
        });
    }
    let s = super::sorted(x);
    let mean = s[g..n - g].iter().sum::<f64>() / h as f64;
    let (lo, hi) = (s[g], s[n - g - 1]);
    let w: Vec<f64> = s.iter().map(|&v| v.clamp(lo, hi)).collect();
    let wmean = w.iter().sum::<f64>() / n as f64;
    let wvar = w.iter().map(|v| (v - wmean).powi(2)).sum::<f64>() / (n as f64 - 1.0);
    Ok(Trimmed {
        mean,
        wvar,
        n: n as f64,
        h: h as f64,
    })
}

/// The winsorised standard deviation of the standard normal at trimming
/// γ: √((1 − 2γ) − 2zφ(z) + 2γz²) with z = Φ⁻¹(1 − γ) (integrating z²φ(z)
/// over the middle and adding the two winsorised tails); 1 at γ = 0.
/// At γ = 0.2 it is 0.6419…, the 0.642 of Algina, Keselman & Penfield.
pub fn normal_winsorised_sd(trim: f64) -> f64 {
    if trim <= 0.0 {
        return 1.0;
    }
    let z = -normal_quantile(trim);
    ((1.0 - 2.0 * trim) - 2.0 * z * normal_pdf(z) + 2.0 * trim * z * z).sqrt()
}

fn finish(
    estimate: f64,
    d: f64,
    df: f64,
    effect: f64,
    trim: f64,
    alt: Alternative,
    level: f64,
) -> Result<TrimmedT, StatsError> {
    check_level(level)?;
    let se = d.sqrt();
    if se == 0.0 || !se.is_finite() {
        return Err(StatsError::ZeroVariance);
    }
    let t = estimate / se;
    let p = p_from_symmetric(t, alt, |v| t_sf(v, df));
    let tail = match alt {
        Alternative::TwoSided => 0.5 * (1.0 - level),
        _ => 1.0 - level,
    };
    let q = -t_quantile(tail, df);
    Ok(TrimmedT {
        statistic: t,
        df,
        p,
        estimate,
        se,
        interval: Interval {
            low: (alt != Alternative::Less).then_some(estimate - q * se),
            high: (alt != Alternative::Greater).then_some(estimate + q * se),
            level,
        },
        effect,
        trim,
    })
}

/// Yuen's trimmed t for `x` (first group) against `y` (second group).
///
/// Errors: trimming outside [0, 0.5) (`BadParameter`), fewer than two
/// values left after trimming in a group (`TooFew`), non-finite values
/// (`NonFinite`), both winsorised variances zero (`ZeroVariance`).
pub fn yuen(
    x: &[f64],
    y: &[f64],
    trim: f64,
    alt: Alternative,
    level: f64,
) -> Result<TrimmedT, StatsError> {
    check_trim(trim)?;
    let (a, b) = (trimmed(x, trim)?, trimmed(y, trim)?);
    let d1 = (a.n - 1.0) * a.wvar / (a.h * (a.h - 1.0));
    let d2 = (b.n - 1.0) * b.wvar / (b.h * (b.h - 1.0));
    let df = (d1 + d2).powi(2) / (d1 * d1 / (a.h - 1.0) + d2 * d2 / (b.h - 1.0));
    let estimate = a.mean - b.mean;
    let pooled = ((a.n - 1.0) * a.wvar + (b.n - 1.0) * b.wvar) / (a.n + b.n - 2.0);
    let effect = normal_winsorised_sd(trim) * estimate / pooled.sqrt();
    finish(estimate, d1 + d2, df, effect, trim, alt, level)
}

/// The trimmed t of Tukey & McLaughlin for one sample against
/// `reference` (pass paired differences and 0 for the paired test).
///
/// Errors: as [`yuen`], for the one sample.
pub fn trimmed_t_one_sample(
    x: &[f64],
    reference: f64,
    trim: f64,
    alt: Alternative,
    level: f64,
) -> Result<TrimmedT, StatsError> {
    check_trim(trim)?;
    if !reference.is_finite() {
        return Err(StatsError::NonFinite);
    }
    let a = trimmed(x, trim)?;
    let d = (a.n - 1.0) * a.wvar / (a.h * (a.h - 1.0));
    let estimate = a.mean - reference;
    let effect = normal_winsorised_sd(trim) * estimate / a.wvar.sqrt();
    finish(estimate, d, a.h - 1.0, effect, trim, alt, level)
}

/// The paired trimmed t: [`trimmed_t_one_sample`] on the differences
/// `first − second` against 0 (Tukey & McLaughlin 1963).
///
/// Errors: unequal lengths (`BadParameter`), otherwise as
/// [`trimmed_t_one_sample`].
pub fn trimmed_t_paired(
    first: &[f64],
    second: &[f64],
    trim: f64,
    alt: Alternative,
    level: f64,
) -> Result<TrimmedT, StatsError> {
    if first.len() != second.len() {
        return Err(StatsError::BadParameter(
            "paired samples must have the same length",
        ));
    }
    let d: Vec<f64> = first.iter().zip(second).map(|(a, b)| a - b).collect();
    trimmed_t_one_sample(&d, 0.0, trim, alt, level)
}

/// Two one-sided tests on a trimmed-mean estimate within `(low, high)` at
/// `alpha`: Schuirmann's (1987) construction, "A comparison of the two
/// one-sided tests procedure and the power approach for assessing the
/// equivalence of average bioavailability", Journal of Pharmacokinetics
/// and Biopharmaceutics 15(6), 657–680, applied to the trimmed t in place
/// of the t (common practice). `r` is the two-sided result at
/// 1 − 2α, whose estimate, standard error and df both one-sided tests
/// share; `t_lower = (estimate − low)/se`, `t_upper = (estimate − high)/se`.
///
/// Errors: bounds not finite or not in order, alpha outside (0, 0.5)
/// (`BadParameter`, `NonFinite`).
pub fn tost_trimmed(r: &TrimmedT, low: f64, high: f64, alpha: f64) -> Result<Tost, StatsError> {
    super::equivalence::check(low, high, alpha)?;
    Ok(super::equivalence::from_parts(
        r.estimate, r.se, r.df, r.interval, low, high,
    ))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn trimming_by_hand() {
        // n = 10, γ = 0.2 → g = 2, h = 6. Sorted 1..=9, 100: trimmed mean
        // of 3..=8 = 5.5; winsorised 3,3,3,4,5,6,7,8,8,8 (mean 5.5),
        // squares of deviations sum 6.25·3 + 2.25 + .25 + .25 + 2.25 +
        // 6.25·3 = 42.5, /9.
        let x = [100.0, 1.0, 2.0, 3.0, 4.0, 5.0, 6.0, 7.0, 8.0, 9.0];
        let t = trimmed(&x, 0.2).unwrap();
        assert_eq!((t.mean, t.h), (5.5, 6.0));
        assert!((t.wvar - 42.5 / 9.0).abs() < 1e-14);
    }

    #[test]
    fn winsorised_sd_of_the_normal() {
        // 0.642 at 20% (Algina, Keselman & Penfield 2005, to 3 places).
        assert!((normal_winsorised_sd(0.2) - 0.642).abs() < 5e-4);
        assert_eq!(normal_winsorised_sd(0.0), 1.0);
        // Falls with trimming.
        assert!(normal_winsorised_sd(0.1) > normal_winsorised_sd(0.3));
    }

    #[test]
    fn no_trimming_is_welch_and_one_sample_t() {
        // γ = 0: d_j = s²/n, df Welch's; compare with the t tests.
        let x = [1.0, 4.0, 2.0, 8.0, 5.0];
        let y = [3.0, 9.0, 7.0, 6.0, 12.0, 10.0];
        let a = yuen(&x, &y, 0.0, Alternative::TwoSided, 0.95).unwrap();
        let w = super::super::ttest::welch_t(&x, &y, Alternative::TwoSided, 0.95).unwrap();
        assert!((a.statistic - w.t).abs() < 1e-12);
        assert!((a.df - w.df).abs() < 1e-10);
        let o = trimmed_t_one_sample(&x, 1.0, 0.0, Alternative::Greater, 0.95).unwrap();
        let t = super::super::ttest::one_sample_t(&x, 1.0, Alternative::Greater, 0.95).unwrap();
        assert!((o.p - t.p).abs() < 1e-14);
    }

    #[test]
    fn paired_is_the_one_sample_test_of_the_differences() {
        let a = [5.0, 7.5, 6.0, 9.0, 4.0, 8.0, 30.0, 6.5];
        let b = [4.0, 6.0, 6.5, 7.0, 3.0, 7.5, 5.0, 5.0];
        let d: Vec<f64> = a.iter().zip(&b).map(|(x, y)| x - y).collect();
        let p = trimmed_t_paired(&a, &b, 0.2, Alternative::Greater, 0.9).unwrap();
        let o = trimmed_t_one_sample(&d, 0.0, 0.2, Alternative::Greater, 0.9).unwrap();
        assert_eq!(p, o);
        assert!(trimmed_t_paired(&a, &b[1..], 0.2, Alternative::Greater, 0.9).is_err());
    }

    #[test]
    fn bad_inputs_are_errors() {
        let two = Alternative::TwoSided;
        assert!(yuen(&[1.0, 2.0], &[1.0, 2.0, 3.0], 0.5, two, 0.95).is_err());
        assert!(matches!(
            yuen(&[1.0, 2.0, 3.0], &[1.0, 2.0, 3.0, 4.0], 0.4, two, 0.95),
            Err(StatsError::TooFew { .. })
        ));
        assert_eq!(
            yuen(&[2.0; 5], &[3.0; 5], 0.2, two, 0.95),
            Err(StatsError::ZeroVariance)
        );
    }

    #[test]
    fn trimmed_tost_agrees_with_its_interval_on_both_sides_of_each_bound() {
        // Schuirmann's duality: both one-sided tests reject at α exactly
        // when the 1 − 2α interval lies inside the bounds. Bounds just
        // inside and just outside each interval end test both sides.
        let x: Vec<f64> = (0..17).map(|i| ((i * 7) % 17) as f64 * 0.3 + 1.0).collect();
        let y: Vec<f64> = (0..15).map(|i| ((i * 4) % 15) as f64 * 0.4).collect();
        let r = yuen(&x, &y, 0.2, Alternative::TwoSided, 0.9).unwrap();
        let (lo, hi) = (r.interval.low.unwrap(), r.interval.high.unwrap());
        for (low, high, inside) in [
            (lo - 1e-6, hi + 1e-6, true),
            (lo + 1e-6, hi + 1e-6, false),
            (lo - 1e-6, hi - 1e-6, false),
        ] {
            let t = tost_trimmed(&r, low, high, 0.05).unwrap();
            assert_eq!(t.p < 0.05, inside, "({low}, {high}): p = {}", t.p);
        }
        assert!(tost_trimmed(&r, 1.0, 1.0, 0.05).is_err());
    }
}
