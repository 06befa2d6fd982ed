//! Shapiro–Wilk test of normality, W and its p value.
//!
//! Royston (1995), "Remark AS R94: A remark on Algorithm AS 181: The
//! W-test for normality", Applied Statistics 44(4), 547–551. The
//! coefficients come from Royston's polynomial approximations to the
//! normalised expected normal order statistics (Blom-type scores
//! `Φ⁻¹((i − 3/8)/(n + 1/4))`), W is the squared correlation between the
//! ordered data and the coefficients (computed as 1 − W₁ to keep
//! precision when W is near 1), and p comes from Royston's normalising
//! transformations of log(1 − W). The method is defined for 3 ≤ n ≤ 5000;
//! outside that range this module refuses rather than extrapolate.
//! The data are centred on their median first (W is shift-invariant;
//! this only protects precision when values share many leading digits).

use super::dist::{normal_quantile, normal_sf};
use super::{ensure_finite, StatsError};
use serde::{Deserialize, Serialize};

/// Result of a Shapiro–Wilk test.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct ShapiroWilk {
    /// Sample size.
    pub n: usize,
    /// The W statistic, in (0, 1].
    pub w: f64,
    /// p value for the null hypothesis of normality. For 4 ≤ n ≤ 11 and
    /// W so small that Royston's transformation is undefined, AS R94
    /// reports 1e-19 (its `SMALL`); that value means "below 1e-19".
    pub p: f64,
}

/// Smallest sample size the approximation covers.
pub(crate) const MIN_N: usize = 3;
/// Largest sample size the approximation covers (Royston 1995).
pub(crate) const MAX_N: usize = 5000;
const SMALL: f64 = 1e-19;

fn poly(c: &[f64], x: f64) -> f64 {
    c.iter().rev().fold(0.0, |acc, &ci| acc * x + ci)
}

/// Shapiro–Wilk W and p for `x` (any order), by AS R94.
///
/// Errors: fewer than 3 values (`TooFew`), more than 5000 (`OutOfRange`),
/// a non-finite value (`NonFinite`), all values equal (`ZeroVariance`).
pub fn shapiro_wilk(x: &[f64]) -> Result<ShapiroWilk, StatsError> {
    let n = x.len();
    if n < MIN_N {
        return Err(StatsError::TooFew {
            needed: MIN_N,
            got: n,
        });
    }
    if n > MAX_N {
        return Err(StatsError::OutOfRange {
            what: "Shapiro–Wilk sample size",
            min: MIN_N,
            max: MAX_N,
            got: n,
        });
    }
    ensure_finite(x)?;
    let mut s = x.to_vec();
    s.sort_unstable_by(f64::total_cmp);
    let med = super::describe::quantile_sorted(&s, 0.5);
    for v in &mut s {
        *v -= med;
    }
    let range = s[n - 1] - s[0];
    if range.is_nan() || range <= 0.0 {
        return Err(StatsError::ZeroVariance);
    }
    let a = coefficients(n);
    // W as the squared correlation of the scaled data with the full,
    // antisymmetric coefficient vector (which has mean zero).
    let xs: Vec<f64> = s.iter().map(|v| v / range).collect();
    let xbar = xs.iter().sum::<f64>() / n as f64;
    let (mut ssa, mut ssx, mut sax) = (0.0, 0.0, 0.0);
    for (i, &xi) in xs.iter().enumerate() {
        let j = n - 1 - i;
        let ai = match i.cmp(&j) {
            std::cmp::Ordering::Less => -a[i],
            std::cmp::Ordering::Greater => a[j],
            std::cmp::Ordering::Equal => 0.0,
        };
        let dx = xi - xbar;
        ssa += ai * ai;
        ssx += dx * dx;
        sax += ai * dx;
    }
    let root = (ssa * ssx).sqrt();
    let w1 = ((root - sax) * (root + sax) / (ssa * ssx)).max(0.0);
    let w = 1.0 - w1;
    Ok(ShapiroWilk {
        n,
        w,
        p: p_value(n, w, w1),
    })
}

/// The n/2 positive coefficients a_n, a_{n−1}, … (largest first).
fn coefficients(n: usize) -> Vec<f64> {
    const C1: [f64; 6] = [0.0, 0.221157, -0.147981, -2.071190, 4.434685, -2.706056];
    const C2: [f64; 6] = [0.0, 0.042981, -0.293762, -1.752461, 5.682633, -3.582633];
    let half = n / 2;
    if n == 3 {
        return vec![std::f64::consts::FRAC_1_SQRT_2];
    }
    let an = n as f64;
    let m: Vec<f64> = (1..=half)
        .map(|i| normal_quantile((i as f64 - 0.375) / (an + 0.25)))
        .collect();
    let summ2 = 2.0 * m.iter().map(|v| v * v).sum::<f64>();
    let ssumm2 = summ2.sqrt();
    let rsn = 1.0 / an.sqrt();
    let a1 = poly(&C1, rsn) - m[0] / ssumm2;
    let mut a = vec![0.0; half];
    a[0] = a1;
    let (first, fac) = if n > 5 {
        let a2 = -m[1] / ssumm2 + poly(&C2, rsn);
        a[1] = a2;
        let fac = ((summ2 - 2.0 * m[0] * m[0] - 2.0 * m[1] * m[1])
            / (1.0 - 2.0 * a1 * a1 - 2.0 * a2 * a2))
            .sqrt();
        (2, fac)
    } else {
        (
            1,
            ((summ2 - 2.0 * m[0] * m[0]) / (1.0 - 2.0 * a1 * a1)).sqrt(),
        )
    };
    for i in first..half {
        a[i] = -m[i] / fac;
    }
    a
}

/// Royston's p value for W (w1 = 1 − W computed without cancellation).
fn p_value(n: usize, w: f64, w1: f64) -> f64 {
    const G: [f64; 2] = [-2.273, 0.459];
    const C3: [f64; 4] = [0.5440, -0.39978, 0.025054, -6.714e-4];
    const C4: [f64; 4] = [1.3822, -0.77857, 0.062767, -0.0020322];
    const C5: [f64; 4] = [-1.5861, -0.31082, -0.083751, 0.0038915];
    const C6: [f64; 3] = [-0.4803, -0.082676, 0.0030302];
    if n == 3 {
        // Exact for n = 3: p = (6/π)(asin √W − π/3).
        let p =
            6.0 / std::f64::consts::PI * (w.sqrt().min(1.0).asin() - std::f64::consts::FRAC_PI_3);
        return p.clamp(0.0, 1.0);
    }
    if w1 <= 0.0 {
        return 1.0;
    }
    let an = n as f64;
    let y = w1.ln();
    let (y, mean, sd) = if n <= 11 {
        let gamma = poly(&G, an);
        if y >= gamma {
            return SMALL;
        }
        (-(gamma - y).ln(), poly(&C3, an), poly(&C4, an).exp())
    } else {
        let xx = an.ln();
        (y, poly(&C5, xx), poly(&C6, xx).exp())
    };
    normal_sf((y - mean) / sd).clamp(0.0, 1.0)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn three_equally_spaced_points_are_perfectly_normal() {
        // W = 1 for three equally spaced values, and the exact n = 3
        // formula then gives p = (6/π)(π/2 − π/3) = 1 (hand-derivable).
        let r = shapiro_wilk(&[1.0, 2.0, 3.0]).unwrap();
        assert!((r.w - 1.0).abs() < 1e-12);
        assert!((r.p - 1.0).abs() < 1e-12);
    }

    #[test]
    fn refuses_outside_its_range() {
        assert!(matches!(
            shapiro_wilk(&[1.0, 2.0]),
            Err(StatsError::TooFew { .. })
        ));
        let big: Vec<f64> = (0..5001).map(f64::from).collect();
        assert!(matches!(
            shapiro_wilk(&big),
            Err(StatsError::OutOfRange { .. })
        ));
        assert_eq!(shapiro_wilk(&[2.0; 4]), Err(StatsError::ZeroVariance));
        assert_eq!(
            shapiro_wilk(&[1.0, f64::NAN, 2.0]),
            Err(StatsError::NonFinite)
        );
    }
}
