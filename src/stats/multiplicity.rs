//! Adjusting p values for multiple comparisons.
//!
//! Bonferroni; Holm (1979), "A simple sequentially rejective multiple test
//! procedure", Scandinavian Journal of Statistics 6, 65–70 (step-down);
//! Hochberg (1988), "A sharper Bonferroni procedure for multiple tests of
//! significance", Biometrika 75, 800–802 (step-up); Benjamini & Hochberg
//! (1995), "Controlling the false discovery rate: a practical and powerful
//! approach to multiple testing", JRSS B 57, 289–300. Adjusted p values are
//! returned in input order, capped at 1, and made monotone in the order of
//! the raw p values as each procedure requires.

use serde::{Deserialize, Serialize};

/// A multiplicity correction.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Correction {
    /// No adjustment.
    None,
    /// Multiply by the number of tests.
    Bonferroni,
    /// Holm's step-down procedure (family-wise error).
    Holm,
    /// Hochberg's step-up procedure (family-wise error, independent tests).
    Hochberg,
    /// Benjamini–Hochberg false discovery rate.
    FdrBh,
}

impl Correction {
    /// The plain name used in plans and results.
    pub(crate) fn as_str(self) -> &'static str {
        match self {
            Correction::None => "none",
            Correction::Bonferroni => "bonferroni",
            Correction::Holm => "holm",
            Correction::Hochberg => "hochberg",
            Correction::FdrBh => "fdr-bh",
        }
    }
}

/// Adjusted p values, in input order. Entries that are not p values (NaN,
/// outside [0, 1]) come back as NaN and do not count towards the number of
/// tests m.
pub fn adjust(p: &[f64], method: Correction) -> Vec<f64> {
    let mut out = vec![f64::NAN; p.len()];
    // Indices of valid p values, ascending by p (stable, so ties keep order).
    let mut idx: Vec<usize> = (0..p.len())
        .filter(|&i| (0.0..=1.0).contains(&p[i]))
        .collect();
    idx.sort_by(|&a, &b| p[a].total_cmp(&p[b]));
    let m = idx.len() as f64;
    match method {
        Correction::None => idx.iter().for_each(|&i| out[i] = p[i]),
        Correction::Bonferroni => idx.iter().for_each(|&i| out[i] = (m * p[i]).min(1.0)),
        Correction::Holm => {
            // Step-down: running maximum of (m − j + 1)·p₍ⱼ₎ from the smallest p.
            let mut run = 0.0f64;
            for (j, &i) in idx.iter().enumerate() {
                run = run.max(((m - j as f64) * p[i]).min(1.0));
                out[i] = run;
            }
        }
        Correction::Hochberg | Correction::FdrBh => {
            // Step-up: running minimum from the largest p downwards.
            let mut run = 1.0f64;
            for (j, &i) in idx.iter().enumerate().rev() {
                let rank = j as f64 + 1.0;
                let v = if method == Correction::Hochberg {
                    (m - rank + 1.0) * p[i]
                } else {
                    m * p[i] / rank
                };
                run = run.min(v.min(1.0));
                out[i] = run;
            }
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn worked_by_hand() {
        // By hand, m = 3, p = (0.01, 0.04, 0.03) in input order.
        let p = [0.01, 0.04, 0.03];
        assert_eq!(adjust(&p, Correction::Bonferroni), vec![0.03, 0.12, 0.09]);
        // Holm: 3·0.01, max(0.03, 2·0.03 = 0.06), max(0.06, 1·0.04).
        let h = adjust(&p, Correction::Holm);
        assert!(
            (h[0] - 0.03).abs() < 1e-15
                && (h[2] - 0.06).abs() < 1e-15
                && (h[1] - 0.06).abs() < 1e-15
        );
        // Hochberg: 0.04, min(0.04, 2·0.03), min(0.04, 3·0.01).
        let g = adjust(&p, Correction::Hochberg);
        assert!(
            (g[1] - 0.04).abs() < 1e-15
                && (g[2] - 0.04).abs() < 1e-15
                && (g[0] - 0.03).abs() < 1e-15
        );
        // BH: 0.04, min(0.04, 3·0.03/2), min(0.04, 3·0.01).
        let b = adjust(&p, Correction::FdrBh);
        assert!(
            (b[1] - 0.04).abs() < 1e-15
                && (b[2] - 0.04).abs() < 1e-15
                && (b[0] - 0.03).abs() < 1e-15
        );
    }

    #[test]
    fn invalid_entries_are_nan_and_empty_is_empty() {
        let r = adjust(&[0.2, f64::NAN, 1.5], Correction::Holm);
        assert_eq!(r[0], 0.2);
        assert!(r[1].is_nan() && r[2].is_nan());
        assert!(adjust(&[], Correction::FdrBh).is_empty());
        assert_eq!(Correction::FdrBh.as_str(), "fdr-bh");
    }
}
