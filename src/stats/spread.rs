//! Tests that two groups have equal spread: Levene's test (deviations from
//! the group means) and the Brown–Forsythe variant (deviations from the
//! group medians).
//!
//! Both are a one-way analysis of variance on the absolute deviations
//! z = |x − centre| of each group: Levene (1960), "Robust tests for
//! equality of variances", in Olkin (ed.), *Contributions to Probability
//! and Statistics*, 278–292; Brown & Forsythe (1974), "Robust tests for
//! the equality of variances", JASA 69, 364–367. With two groups the F
//! statistic has 1 and N − 2 degrees of freedom. Means come from exact
//! sums, as in [`super::describe`], so data with many shared leading
//! digits keep their precision and row order changes no digit.

use super::describe::{mean, median};
use super::dist::f_sf;
use super::exact;
use super::{ensure_finite, StatsError};
use serde::{Deserialize, Serialize};

/// Result of an equal-spread test.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct SpreadTest {
    /// The F statistic.
    pub f: f64,
    /// Numerator degrees of freedom (groups − 1 = 1).
    pub df1: f64,
    /// Denominator degrees of freedom (N − 2).
    pub df2: f64,
    /// Upper-tail p value of F.
    pub p: f64,
}

/// Brown–Forsythe test: absolute deviations from each group's median.
pub fn brown_forsythe(x: &[f64], y: &[f64]) -> Result<SpreadTest, StatsError> {
    deviation_anova(x, y, median)
}

/// Levene's test: absolute deviations from each group's mean.
pub fn levene(x: &[f64], y: &[f64]) -> Result<SpreadTest, StatsError> {
    deviation_anova(x, y, mean)
}

/// One-way ANOVA F on |value − centre(group)| for two groups.
///
/// Needs at least 2 values per group. When the absolute deviations are
/// constant within each group the within-group sum of squares is zero and
/// F is undefined (0/0) or infinite; both cases return `ZeroVariance`
/// rather than a number that would read as evidence.
fn deviation_anova(
    x: &[f64],
    y: &[f64],
    centre: fn(&[f64]) -> f64,
) -> Result<SpreadTest, StatsError> {
    for g in [x, y] {
        if g.len() < 2 {
            return Err(StatsError::TooFew {
                needed: 2,
                got: g.len(),
            });
        }
        ensure_finite(g)?;
    }
    // The deviations |v − centre| are recomputed in each pass rather than
    // stored: two copies of a large sample would cost more than the passes.
    let (cx, cy) = (centre(x), centre(y));
    // F is scale-free, so the deviations are divided by their largest
    // before squaring: squares of values beyond about 1e154 would
    // overflow. A deviation that itself overflows cannot be rescued.
    let largest = |g: &[f64], c: f64| g.iter().fold(0.0_f64, |m, v| m.max((v - c).abs()));
    let scale = largest(x, cx).max(largest(y, cy));
    if !scale.is_finite() {
        return Err(StatsError::Overflow);
    }
    if scale == 0.0 {
        return Err(StatsError::ZeroVariance);
    }
    let zx = Deviations { g: x, c: cx, scale };
    let zy = Deviations { g: y, c: cy, scale };
    let (mx, my) = (zx.mean(), zy.mean());
    let (n1, n2) = (x.len() as f64, y.len() as f64);
    let n = n1 + n2;
    let grand = (n1 * mx + n2 * my) / n;
    let between = n1 * (mx - grand).powi(2) + n2 * (my - grand).powi(2);
    let within = zx.sum_sq(mx) + zy.sum_sq(my);
    if within.is_nan() || within <= 0.0 {
        return Err(StatsError::ZeroVariance);
    }
    let df2 = n - 2.0;
    let f = between / (within / df2);
    if !f.is_finite() {
        // Within-group spread negligible next to the between-group one: as
        // good as zero, and no F would mean anything.
        return Err(StatsError::ZeroVariance);
    }
    Ok(SpreadTest {
        f,
        df1: 1.0,
        df2,
        p: f_sf(f, 1.0, df2),
    })
}

/// The scaled absolute deviations `|v − c| / scale` of a group, computed
/// on the fly.
struct Deviations<'a> {
    g: &'a [f64],
    c: f64,
    scale: f64,
}

impl Deviations<'_> {
    fn iter(&self) -> impl Iterator<Item = f64> + '_ {
        self.g.iter().map(|v| (v - self.c).abs() / self.scale)
    }

    /// The mean from the exact sum, as [`mean`] computes it on a stored
    /// copy (independent of the order of the values).
    fn mean(&self) -> f64 {
        exact::mean(self.iter(), self.g.len())
    }

    fn sum_sq(&self, m: f64) -> f64 {
        exact::sum(self.iter().map(|v| (v - m).powi(2)))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn huge_deviations_do_not_overflow() {
        // Found by the stats fuzz target (2026-12-01): squaring deviations
        // near 1e231 overflowed and F came out infinite with p = 0.
        let x = [-3.104_278_119_126_661_7e231, 3.210_205_749_342_177_5e-75];
        let y = [2_194_728_218_623.926, 1.5e-323, 9.06732e-318];
        for r in [brown_forsythe(&x, &y), levene(&x, &y)] {
            match r {
                Ok(s) => assert!(s.f.is_finite() && (0.0..=1.0).contains(&s.p), "{s:?}"),
                Err(e) => assert!(matches!(e, StatsError::ZeroVariance | StatsError::Overflow)),
            }
        }
        // Rescaling leaves F unchanged (F is scale-free): the same data
        // divided by 1e200 give the same F to rounding.
        let a = [1.0, 2.0, 4.0, 7.0];
        let b = [3.0, 3.5, 9.0];
        let small = |v: &[f64]| v.iter().map(|t| t * 1e-200).collect::<Vec<_>>();
        let (f1, f2) = (
            levene(&a, &b).unwrap().f,
            levene(&small(&a), &small(&b)).unwrap().f,
        );
        assert!((f1 - f2).abs() <= 1e-12 * f1, "{f1} vs {f2}");
    }

    #[test]
    fn hand_worked_levene() {
        // x = {0, 2}: |dev| = 1, 1; y = {0, 4, 8}: mean 4, |dev| = 4, 0, 4.
        // z̄ = 1 and 8/3, grand 2; between = 2·1 + 3·(2/3)² = 10/3;
        // within = 0 + (16/9·2 + 64/9) = 96/9; F = (10/3)/((96/9)/3) = 15/16.
        let t = levene(&[0.0, 2.0], &[0.0, 4.0, 8.0]).unwrap();
        assert!((t.f - 15.0 / 16.0).abs() < 1e-14);
        assert_eq!((t.df1, t.df2), (1.0, 3.0));
    }

    #[test]
    fn constant_deviations_are_zero_variance() {
        assert_eq!(
            brown_forsythe(&[1.0, 3.0], &[0.0, 10.0]),
            Err(StatsError::ZeroVariance)
        );
        assert!(levene(&[1.0], &[1.0, 2.0]).is_err());
    }
}
