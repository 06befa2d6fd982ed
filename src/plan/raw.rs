//! The analysis file exactly as written: strict serde structures that keep
//! the position of every value so that validation can point at it.
//!
//! Unknown keys are rejected here (`deny_unknown_fields`), which gives the
//! TOML parser's own line and column; every numeric value accepts both
//! `3` and `3.0`, because researchers write both.

use serde::{Deserialize, Deserializer};
use toml::Spanned;

/// A number written as an integer or a float.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct Num(pub f64);

impl<'de> Deserialize<'de> for Num {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct V;
        impl serde::de::Visitor<'_> for V {
            type Value = Num;
            fn expecting(&self, f: &mut std::fmt::Formatter) -> std::fmt::Result {
                f.write_str("a number")
            }
            fn visit_i64<E>(self, v: i64) -> Result<Num, E> {
                Ok(Num(v as f64))
            }
            fn visit_u64<E>(self, v: u64) -> Result<Num, E> {
                Ok(Num(v as f64))
            }
            fn visit_f64<E>(self, v: f64) -> Result<Num, E> {
                Ok(Num(v))
            }
        }
        d.deserialize_any(V)
    }
}

/// Top level of the analysis file.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct RawFile {
    /// File-format version.
    pub attest: Option<Spanned<i64>>,
    /// Study title.
    pub title: Option<Spanned<String>>,
    /// Authors.
    pub authors: Option<Vec<String>>,
    /// Free-text summary.
    pub summary: Option<String>,
    /// Significance level.
    pub alpha: Option<Spanned<Num>>,
    /// Confidence level.
    pub confidence: Option<Spanned<Num>>,
    /// Multiplicity correction.
    pub correction: Option<Spanned<String>>,
    /// Seed for resampling.
    pub seed: Option<Spanned<i64>>,
    /// Level of the assumption checks.
    pub check_alpha: Option<Spanned<Num>>,
    /// The data section.
    pub data: Option<Spanned<RawData>>,
    /// Exclusion rules.
    #[serde(default)]
    pub exclude: Vec<Spanned<RawExclude>>,
    /// Hypotheses.
    #[serde(default)]
    pub hypothesis: Vec<Spanned<RawHypothesis>>,
    /// Declared deviations.
    #[serde(default)]
    pub deviation: Vec<Spanned<RawDeviation>>,
}

/// `[data]`.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct RawData {
    /// Path relative to the analysis file.
    pub path: Option<Spanned<String>>,
    /// `csv`, `tsv`, `txt` or `xlsx`.
    pub format: Option<Spanned<String>>,
    /// One-character delimiter.
    pub delimiter: Option<Spanned<String>>,
    /// `"."` or `","`.
    pub decimal: Option<Spanned<String>>,
    /// Cell texts that mean missing.
    pub missing: Option<Vec<String>>,
    /// Worksheet name.
    pub sheet: Option<Spanned<String>>,
    /// `postgres` or `duckdb`: the data are a query's result.
    pub source: Option<Spanned<String>>,
    /// Connection string (PostgreSQL) or database file (DuckDB).
    pub connect: Option<Spanned<String>>,
    /// The query.
    pub query: Option<Spanned<String>>,
}

/// `[[exclude]]`.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct RawExclude {
    /// Why.
    pub reason: Option<Spanned<String>>,
    /// Which column.
    pub column: Option<Spanned<String>>,
    /// Remove values below this.
    pub below: Option<Spanned<Num>>,
    /// Remove values above this.
    pub above: Option<Spanned<Num>>,
    /// Remove rows with these cell texts.
    pub values: Option<Spanned<Vec<String>>>,
    /// `median-distance` or `tukey-fences`.
    pub outlier: Option<Spanned<String>>,
    /// The outlier rule's cut-off.
    pub limit: Option<Spanned<Num>>,
    /// Grouping column for the outlier rule.
    pub by: Option<Spanned<String>>,
}

/// `[[hypothesis]]`.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct RawHypothesis {
    /// Identifier.
    pub id: Option<Spanned<String>>,
    /// The claim.
    pub claim: Option<Spanned<String>>,
    /// Design name.
    pub design: Option<Spanned<String>>,
    /// Outcome column.
    pub outcome: Option<Spanned<String>>,
    /// Grouping column (independent).
    pub group: Option<Spanned<String>>,
    /// The two levels (independent, or paired long layout).
    pub levels: Option<Spanned<Vec<String>>>,
    /// First measurement column (paired, wide).
    pub first: Option<Spanned<String>>,
    /// Second measurement column (paired, wide).
    pub second: Option<Spanned<String>>,
    /// Unit column (paired, long).
    pub pair_by: Option<Spanned<String>>,
    /// Condition column (paired, long).
    pub condition: Option<Spanned<String>>,
    /// Reference value (one-sample).
    pub reference: Option<Spanned<Num>>,
    /// Alternative.
    pub alternative: Option<Spanned<String>>,
    /// Method name.
    pub method: Option<Spanned<String>>,
    /// Equivalence bounds.
    pub equivalence: Option<Spanned<Vec<Num>>>,
    /// Axis label.
    pub label: Option<String>,
    /// Measurement unit.
    pub units: Option<String>,
    /// Decimals the outcome was recorded with.
    pub decimals: Option<Spanned<i64>>,
    /// Display names of the groups, conditions or columns.
    pub names: Option<Spanned<std::collections::BTreeMap<String, String>>>,
    /// Robustness analyses on/off.
    pub robustness: Option<bool>,
    /// Signed-rank zero rule: `drop` or `keep-in-ranking`.
    pub zero_differences: Option<Spanned<String>>,
    /// Continuity correction of the rank tests' normal approximation.
    pub continuity_correction: Option<Spanned<bool>>,
    /// Trimming proportion of the trimmed-mean methods.
    pub trim: Option<Spanned<Num>>,
    /// Number of permutations of the permutation p values.
    pub permutations: Option<Spanned<i64>>,
    /// Rank test `checked` falls back to for independent groups.
    pub rank_fallback: Option<Spanned<String>>,
    /// `[hypothesis.planning]`.
    pub planning: Option<Spanned<RawPlanning>>,
}

/// `[hypothesis.planning]`.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct RawPlanning {
    /// Cohen's d of the smallest effect of interest.
    pub effect: Option<Spanned<Num>>,
    /// Raw difference of interest.
    pub difference: Option<Spanned<Num>>,
    /// Expected SD.
    pub sd: Option<Spanned<Num>>,
    /// Target power.
    pub power: Option<Spanned<Num>>,
    /// n₂/n₁.
    pub ratio: Option<Spanned<Num>>,
    /// sd₂/sd₁ for Welch.
    pub sd_ratio: Option<Spanned<Num>>,
}

/// `[[deviation]]`.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct RawDeviation {
    /// When.
    pub date: Option<Spanned<String>>,
    /// What changed.
    pub change: Option<Spanned<String>>,
    /// Why.
    pub reason: Option<Spanned<String>>,
    /// The changed field of the plan (as the changes table names it).
    pub field: Option<Spanned<String>>,
    /// What the plan said, in the researcher's words.
    pub planned: Option<Spanned<String>>,
    /// When the change was decided, one of four timings.
    pub when: Option<Spanned<String>>,
    /// How the change affects the reading of the results.
    pub effect: Option<Spanned<String>>,
    /// Whether the change makes the test weaker or stronger.
    pub severity: Option<Spanned<String>>,
}
