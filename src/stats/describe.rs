//! Descriptive statistics of one sample: location, spread, shape.
//!
//! The mean and central moments use two passes (mean first, then the
//! deviations, with the compensating term of Chan, Golub & LeVeque 1983,
//! "Algorithms for computing the sample variance", eq. 1.7), which keeps
//! NIST StRD NumAcc4 to the digits float64 allows. Every sum is exact and
//! rounded once ([`super::exact`]), so the result does not depend on the
//! order of the values. Quartiles use linear
//! interpolation between order statistics (Hyndman & Fan 1996, type 7;
//! common practice).

use super::exact::{self, ExactSum};
use super::{ensure_finite, StatsError};
use serde::{Deserialize, Serialize};

/// Descriptive summary of one sample.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Descriptives {
    /// Number of observations.
    pub n: usize,
    /// Arithmetic mean.
    pub mean: f64,
    /// Standard deviation with denominator n − 1 (`None` when n < 2).
    pub sd: Option<f64>,
    /// Standard error of the mean, sd/√n (`None` when n < 2).
    pub se: Option<f64>,
    /// Median.
    pub median: f64,
    /// First quartile (type 7).
    pub q1: f64,
    /// Third quartile (type 7).
    pub q3: f64,
    /// Smallest value.
    pub min: f64,
    /// Largest value.
    pub max: f64,
    /// Adjusted Fisher–Pearson skewness G1 (`None` when n < 3 or sd = 0).
    pub skewness: Option<f64>,
    /// Adjusted excess kurtosis G2 (`None` when n < 4 or sd = 0).
    pub excess_kurtosis: Option<f64>,
}

/// Two-sided t interval for the mean at `level`:
/// mean ± t(½ + level/2; n − 1)·SE (Student 1908; common practice). None
/// when the SE is undefined or zero.
pub(crate) fn mean_interval(d: &Descriptives, level: f64) -> Option<[f64; 2]> {
    d.se.filter(|se| *se > 0.0).map(|se| {
        let q = super::dist::t_quantile(0.5 + level / 2.0, (d.n - 1) as f64);
        [d.mean - q * se, d.mean + q * se]
    })
}

/// Describes a sample. Needs at least one value, all finite.
pub fn describe(x: &[f64]) -> Result<Descriptives, StatsError> {
    if x.is_empty() {
        return Err(StatsError::TooFew { needed: 1, got: 0 });
    }
    ensure_finite(x)?;
    describe_sorted(x, &super::sorted(x))
}

/// Describes a sample whose sorted copy the caller already has (the rank
/// tests sort anyway, so a run sorts each group once).
pub(crate) fn describe_sorted(x: &[f64], sorted: &[f64]) -> Result<Descriptives, StatsError> {
    let n = x.len();
    if n == 0 {
        return Err(StatsError::TooFew { needed: 1, got: 0 });
    }
    let nf = n as f64;
    let mean = mean(x);
    let [comp, mut m2, m3, m4] = central_sums(sorted, mean);
    // Chan, Golub & LeVeque's correction removes the rounding error of the mean.
    m2 -= comp * comp / nf;
    let var = if n > 1 { Some(m2 / (nf - 1.0)) } else { None };
    let sd = var.map(f64::sqrt);
    let se = sd.map(|s| s / nf.sqrt());
    let (g1, g2) = shape(nf, m2, m3, m4);
    let (median, q1, q3) = (
        quantile_sorted(sorted, 0.5),
        quantile_sorted(sorted, 0.25),
        quantile_sorted(sorted, 0.75),
    );
    // Finite values near ±1.8e308 overflow when summed or squared; that is
    // a refusal with its own message, never an infinite SD in a report.
    if !(mean.is_finite()
        && sd.is_none_or(f64::is_finite)
        && median.is_finite()
        && q1.is_finite()
        && q3.is_finite())
    {
        return Err(StatsError::Overflow);
    }
    Ok(Descriptives {
        n,
        mean,
        sd,
        se,
        median,
        q1,
        q3,
        min: sorted[0],
        max: sorted[n - 1],
        skewness: g1.filter(|v| v.is_finite()),
        excess_kurtosis: g2.filter(|v| v.is_finite()),
    })
}

/// Sample skewness G1 and excess kurtosis G2 with the usual small-sample
/// adjustments (Joanes & Gill 1998, "Comparing measures of sample skewness
/// and kurtosis", The Statistician 47, 183–189).
fn shape(n: f64, m2: f64, m3: f64, m4: f64) -> (Option<f64>, Option<f64>) {
    if m2 <= 0.0 {
        return (None, None);
    }
    let (m2n, m3n, m4n) = (m2 / n, m3 / n, m4 / n);
    let g1 = m3n / m2n.powf(1.5);
    let b2 = m4n / (m2n * m2n);
    let skew = (n >= 3.0).then(|| g1 * (n * (n - 1.0)).sqrt() / (n - 2.0));
    let kurt =
        (n >= 4.0).then(|| ((n + 1.0) * (b2 - 3.0) + 6.0) * (n - 1.0) / ((n - 2.0) * (n - 3.0)));
    (skew, kurt)
}

/// The exact sums Σd, Σd², Σd³, Σd⁴ of the deviations d = v − `centre`,
/// each d and power rounded as a double and the sums rounded once. The
/// values are taken as runs of equal values, so a sorted sample with many
/// ties costs one term per distinct value.
fn central_sums(sorted: &[f64], centre: f64) -> [f64; 4] {
    let mut s = [(); 4].map(|_| ExactSum::new());
    for (v, c) in super::runs::of_sorted(sorted) {
        let d = v - centre;
        let d2 = d * d;
        s[0].add_times(d, c);
        s[1].add_times(d2, c);
        s[2].add_times(d2 * d, c);
        s[3].add_times(d2 * d2, c);
    }
    s.map(|mut a| a.value())
}

/// Arithmetic mean from the exact sum, within about half a unit in the
/// last place ([`exact::mean_of`]); independent of the order of `x`.
pub(crate) fn mean(x: &[f64]) -> f64 {
    exact::mean(x.iter().copied(), x.len())
}

/// Sample variance with denominator n − 1 (two-pass, corrected, exact
/// sums). `None` for n < 2.
pub(crate) fn variance(x: &[f64]) -> Option<f64> {
    let n = x.len();
    if n < 2 {
        return None;
    }
    let m = mean(x);
    let comp = exact::sum(x.iter().map(|v| v - m));
    let ss = exact::sum(x.iter().map(|v| (v - m) * (v - m)));
    Some((ss - comp * comp / n as f64) / (n as f64 - 1.0))
}

/// Quantile of a sorted sample by linear interpolation (Hyndman & Fan type 7).
pub(crate) fn quantile_sorted(sorted: &[f64], p: f64) -> f64 {
    let n = sorted.len();
    if n == 1 {
        return sorted[0];
    }
    let h = (n as f64 - 1.0) * p;
    let lo = h.floor() as usize;
    let hi = (lo + 1).min(n - 1);
    let frac = h - lo as f64;
    let gap = sorted[hi] - sorted[lo];
    if gap.is_finite() {
        sorted[lo] + frac * gap
    } else {
        // The gap overflows only for values near ±1.8e308; weighting each
        // end separately stays finite.
        sorted[lo] * (1.0 - frac) + sorted[hi] * frac
    }
}

/// Median of a sample (sorts a copy unless it is sorted already).
pub(crate) fn median(x: &[f64]) -> f64 {
    quantile_sorted(&super::sorted(x), 0.5)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn small_sample_shape() {
        // Hand-computable: 1..=5 has mean 3, sd √2.5, median 3, q1 2, q3 4, skew 0.
        let d = describe(&[5.0, 1.0, 4.0, 2.0, 3.0]).unwrap();
        assert_eq!(d.mean, 3.0);
        assert!((d.sd.unwrap() - 2.5f64.sqrt()).abs() < 1e-15);
        assert_eq!((d.q1, d.median, d.q3), (2.0, 3.0, 4.0));
        assert!(d.skewness.unwrap().abs() < 1e-15);
        // G2 for 1..=5 is −1.2 (Joanes & Gill's formula worked by hand).
        assert!((d.excess_kurtosis.unwrap() + 1.2).abs() < 1e-12);
    }

    #[test]
    fn large_samples_have_the_exact_mean_and_sd() {
        // 50,000 values of one decimal between 40 and 64, unsorted: most
        // share the binary exponent of 32–64, the case where the earlier
        // accumulator crate lost whole multiples of 2^64 ulps. Reference:
        // exact rational arithmetic on the doubles (mean to half an ulp,
        // the variance's rational value to 1e-12 relative).
        use num_rational::BigRational;
        let mut state = 0x1234_5678_9abc_def1u64;
        let x: Vec<f64> = (0..50_000)
            .map(|_| {
                state ^= state << 13;
                state ^= state >> 7;
                state ^= state << 17;
                (400 + state % 240) as f64 / 10.0
            })
            .collect();
        let q = |v: f64| BigRational::from_float(v).unwrap();
        let n = BigRational::from_integer((x.len() as i64).into());
        let exact_mean = x.iter().map(|&v| q(v)).sum::<BigRational>() / &n;
        let ss: BigRational = x
            .iter()
            .map(|&v| {
                let d = q(v) - &exact_mean;
                &d * &d
            })
            .sum();
        let exact_var = ss / (n - BigRational::from_integer(1.into()));
        let within = |got: f64, want: &BigRational, tol: f64| {
            let e = q(got) - want;
            let t = q(tol);
            e <= t && -e <= t
        };
        let d = describe(&x).unwrap();
        assert!((d.mean - 52.0).abs() < 0.1, "mean {}", d.mean);
        assert!(
            within(d.mean, &exact_mean, f64::EPSILON * d.mean / 2.0),
            "mean {}",
            d.mean
        );
        let var = d.sd.unwrap().powi(2);
        assert!(within(var, &exact_var, 1e-12 * var), "variance {var}");
    }

    #[test]
    fn rejects_empty_and_nonfinite() {
        assert_eq!(
            describe(&[]).unwrap_err(),
            StatsError::TooFew { needed: 1, got: 0 }
        );
        assert_eq!(
            describe(&[1.0, f64::NAN]).unwrap_err(),
            StatsError::NonFinite
        );
    }

    /// Regression for a fuzzing find (tests/fuzz, stats target, 2026-12-01):
    /// values near ±1.7e308 gave an infinite SD and a NaN skewness.
    #[test]
    fn overflowing_spread_is_refused() {
        let x = [-1.7e308, -1.175e308, 1.175e308, 1.7e308];
        assert_eq!(describe(&x).unwrap_err(), StatsError::Overflow);
        // Quartiles of huge but representable values stay finite.
        let mut s = x.to_vec();
        s.sort_by(f64::total_cmp);
        assert!(quantile_sorted(&s, 0.5).is_finite());
    }

    #[test]
    fn single_value_has_no_sd() {
        let d = describe(&[4.2]).unwrap();
        assert_eq!(d.sd, None);
        assert_eq!(d.median, 4.2);
    }
}
