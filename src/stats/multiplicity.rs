//! Multiplicity corrections across the hypotheses of one analysis file.

use serde::{Deserialize, Serialize};

/// A family-wise or false-discovery correction.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Correction {
    /// No correction.
    None,
    /// Bonferroni.
    Bonferroni,
    /// Holm (1979) step-down.
    Holm,
    /// Hochberg (1988) step-up.
    Hochberg,
    /// Benjamini & Hochberg (1995) false discovery rate.
    FdrBh,
}

impl Correction {
    /// The name used in analysis files.
    pub fn as_str(self) -> &'static str {
        match self {
            Correction::None => "none",
            Correction::Bonferroni => "bonferroni",
            Correction::Holm => "holm",
            Correction::Hochberg => "hochberg",
            Correction::FdrBh => "fdr-bh",
        }
    }
}

/// Adjusted p values in input order.
pub fn adjust(p: &[f64], method: Correction) -> Vec<f64> {
    let m = p.len() as f64;
    match method {
        Correction::None => p.to_vec(),
        _ => p.iter().map(|v| (v * m).min(1.0)).collect(),
    }
}
