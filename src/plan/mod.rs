//! The analysis plan: what will be compared, how, and at which thresholds.
//!
//! A plan is read from a TOML analysis file in three steps, each in its own
//! module: [`raw`] deserialises the text strictly (unknown keys are errors,
//! positions are kept), [`validate`] checks meaning and produces the typed
//! [`Plan`] below with every default filled in, and [`canonical`] writes the
//! plan in one deterministic form and hashes it, so comments, whitespace and
//! key order never change the hash while every change of meaning does.

pub mod canonical;
pub(crate) mod raw;
pub mod validate;

use crate::stats::multiplicity::Correction;
use crate::stats::rank_tests::{RankOptions, ZeroRule};
use crate::stats::Alternative;
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;
use std::path::PathBuf;

/// The version of the analysis-file format this build reads.
pub(crate) const FORMAT_VERSION: u32 = 1;

/// An analysis file as read from disk: the hashed plan plus what lives
/// outside the hash (declared deviations) and where it came from.
#[derive(Clone, Debug)]
pub struct AnalysisFile {
    /// The path as the user gave it.
    pub path: PathBuf,
    /// The validated plan (the part that is locked and hashed).
    pub plan: Plan,
    /// Declared deviations from the locked plan (not hashed).
    pub deviations: Vec<Deviation>,
}

/// The validated, defaults-filled plan. Its serialised form is the
/// canonical plan that the lock stores and hashes. Optional parts are
/// left out of that form when absent, so a key added in a later version
/// of the format leaves the hash of every existing plan unchanged.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Plan {
    /// File-format version (`attest = 1`).
    pub attest: u32,
    /// Title of the study.
    pub title: String,
    /// Authors, in order.
    pub authors: Vec<String>,
    /// Free text shown in the preregistration.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub summary: Option<String>,
    /// Significance level for every hypothesis.
    pub alpha: f64,
    /// Confidence level of every interval.
    pub confidence: f64,
    /// Multiplicity correction across the hypotheses of this file.
    pub correction: Correction,
    /// Seed for anything resampled.
    pub seed: u64,
    /// Significance level of the assumption checks used by `checked`.
    pub check_alpha: f64,
    /// Where the data are and how to read them.
    pub data: DataSpec,
    /// Exclusion rules, applied in order before any statistic.
    pub exclude: Vec<ExcludeRule>,
    /// The hypotheses, in the order the file gives them.
    pub hypotheses: Vec<Hypothesis>,
}

/// How to find and read the data: a file at `path`, or the result of a
/// query on a database engine (`source`, `connect`, `query`).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct DataSpec {
    /// Path relative to the analysis file (empty for a database source).
    #[serde(default, skip_serializing_if = "String::is_empty")]
    pub path: String,
    /// File format; inferred from the extension.
    pub format: DataFormat,
    /// Field delimiter for delimited text.
    pub delimiter: char,
    /// Decimal mark in numeric cells.
    pub decimal: char,
    /// Cell texts that mean "missing".
    pub missing: Vec<String>,
    /// Worksheet name for spreadsheets (first sheet when absent).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub sheet: Option<String>,
    /// The database engine the data are read from; absent for a file.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub source: Option<Engine>,
    /// Where the engine is: a libpq connection string for PostgreSQL, a
    /// database file (relative to the analysis file) for DuckDB. Never a
    /// password: the plan is hashed, printed and shared.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub connect: Option<String>,
    /// The query whose result the plan's column names refer to.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub query: Option<String>,
}

impl DataSpec {
    /// The data file's path, or `None` when the data come from a database.
    pub fn file(&self) -> Option<&str> {
        match self.source {
            None => Some(&self.path),
            Some(_) => None,
        }
    }
}

/// A database engine that runs the plan's query and returns counts.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Engine {
    /// A PostgreSQL server, reached by a libpq connection string.
    Postgres,
    /// DuckDB, embedded (in attest builds with the `duckdb` feature).
    Duckdb,
}

impl Engine {
    /// The engine's name as reports print it.
    pub fn display(self) -> &'static str {
        match self {
            Engine::Postgres => "PostgreSQL",
            Engine::Duckdb => "DuckDB",
        }
    }
}

/// Supported data formats.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum DataFormat {
    /// Delimited text (comma, semicolon, tab, …).
    Delimited,
    /// An Excel workbook (`.xlsx`).
    Xlsx,
    /// An Apache Parquet file (`.parquet`).
    Parquet,
    /// The result of a query on a database engine (`source`).
    Query,
}

/// One preregistered exclusion rule.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct ExcludeRule {
    /// Why rows are excluded, in the researcher's words (printed in reports).
    pub reason: String,
    /// The column the rule looks at.
    pub column: String,
    /// What the rule removes.
    pub rule: ExcludeKind,
}

/// What an exclusion rule removes.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case", tag = "kind")]
pub enum ExcludeKind {
    /// Rows whose value lies below `below` or above `above` (either may be absent).
    Range {
        /// Rows with a value strictly below this are removed.
        below: Option<f64>,
        /// Rows with a value strictly above this are removed.
        above: Option<f64>,
    },
    /// Rows whose cell text is one of these values.
    Values {
        /// The cell texts that exclude a row.
        values: Vec<String>,
    },
    /// Rows farther than `limit` median absolute deviations (scaled by
    /// 1.4826) from their group's median (Leys et al. 2013).
    MedianDistance {
        /// The cut-off in scaled MADs (2.5 or 3 are usual).
        limit: f64,
        /// Column whose values define the groups; the whole column when absent.
        by: Option<String>,
    },
    /// Rows outside Tukey's fences, `Q1 − k·IQR` and `Q3 + k·IQR`, per group.
    TukeyFences {
        /// The fence multiplier (1.5 is usual).
        limit: f64,
        /// Column whose values define the groups; the whole column when absent.
        by: Option<String>,
    },
}

/// The study design of one hypothesis (also a command-line value, named
/// the same way).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize, clap::ValueEnum)]
#[serde(rename_all = "kebab-case")]
pub enum Design {
    /// Two independent groups.
    Independent,
    /// Two measurements on the same units.
    Paired,
    /// One sample against a reference value.
    OneSample,
}

impl Design {
    /// The name used in analysis files.
    pub(crate) fn as_str(self) -> &'static str {
        match self {
            Design::Independent => "independent",
            Design::Paired => "paired",
            Design::OneSample => "one-sample",
        }
    }
}

/// Where the two sets of values of a hypothesis come from.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case", tag = "layout")]
pub enum Comparison {
    /// Independent groups: rows with `group == levels[0]` against `levels[1]`.
    Groups {
        /// The grouping column.
        group: String,
        /// `[first, second]`; effects are first − second.
        levels: [String; 2],
    },
    /// Paired, wide layout: two numeric columns on the same row.
    PairedColumns {
        /// Column of the first measurement.
        first: String,
        /// Column of the second measurement.
        second: String,
    },
    /// Paired, long layout: one row per measurement.
    PairedRows {
        /// Column identifying the unit measured twice.
        pair_by: String,
        /// Column naming the condition of each row.
        condition: String,
        /// `[first, second]` condition levels; differences are first − second.
        levels: [String; 2],
    },
    /// One sample against a reference value.
    Reference {
        /// The reference value; differences are outcome − reference.
        reference: f64,
    },
}

/// Test methods a plan can name (trade names, kept as they are; also a
/// command-line value, named the same way).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Serialize, Deserialize, clap::ValueEnum)]
#[serde(rename_all = "kebab-case")]
pub enum Method {
    /// Student's t-test with pooled variance.
    StudentT,
    /// Welch's t-test.
    WelchT,
    /// Mann–Whitney U test.
    MannWhitney,
    /// Paired t-test.
    PairedT,
    /// Wilcoxon signed-rank test.
    WilcoxonSignedRank,
    /// One-sample t-test.
    OneSampleT,
    /// Brunner–Munzel test of stochastic equality (independent groups),
    /// which does not assume equal spreads.
    BrunnerMunzel,
    /// Trimmed-mean t: Yuen's test for independent groups, the trimmed t
    /// of the differences (paired) or of the values (one sample).
    TrimmedT,
    /// Preregistered checks choose the test.
    Checked,
}

impl Method {
    /// Every method, in the order the docs list them.
    pub(crate) const ALL: [Method; 9] = [
        Method::StudentT,
        Method::WelchT,
        Method::MannWhitney,
        Method::PairedT,
        Method::WilcoxonSignedRank,
        Method::OneSampleT,
        Method::BrunnerMunzel,
        Method::TrimmedT,
        Method::Checked,
    ];

    /// The name used in analysis files.
    pub(crate) fn as_str(self) -> &'static str {
        match self {
            Method::StudentT => "student-t",
            Method::WelchT => "welch-t",
            Method::MannWhitney => "mann-whitney",
            Method::PairedT => "paired-t",
            Method::WilcoxonSignedRank => "wilcoxon-signed-rank",
            Method::OneSampleT => "one-sample-t",
            Method::BrunnerMunzel => "brunner-munzel",
            Method::TrimmedT => "trimmed-t",
            Method::Checked => "checked",
        }
    }

    /// Whether the method fits the design.
    pub(crate) fn fits(self, design: Design) -> bool {
        use Method::*;
        match design {
            Design::Independent => matches!(
                self,
                StudentT | WelchT | MannWhitney | BrunnerMunzel | TrimmedT | Checked
            ),
            Design::Paired => matches!(self, PairedT | WilcoxonSignedRank | TrimmedT | Checked),
            Design::OneSample => {
                matches!(self, OneSampleT | WilcoxonSignedRank | TrimmedT | Checked)
            }
        }
    }

    /// The failure to report when the method does not fit the design.
    pub(crate) fn misfit(self, design: Design) -> Option<crate::error::Failure> {
        if self.fits(design) {
            return None;
        }
        let fitting: Vec<&str> = Method::ALL
            .iter()
            .filter(|m| m.fits(design))
            .map(|m| m.as_str())
            .collect();
        Some(
            crate::error::Failure::input(format!(
                "method \"{}\" does not fit the {} design",
                self.as_str(),
                design.as_str()
            ))
            .help(format!(
                "for this design choose one of: {}",
                fitting.join(", ")
            )),
        )
    }

    /// Whether the method is a rank test.
    pub(crate) fn is_rank(self) -> bool {
        matches!(
            self,
            Method::MannWhitney | Method::WilcoxonSignedRank | Method::BrunnerMunzel
        )
    }

    /// Whether the method runs under the plan's `trim` (trimmed means).
    pub(crate) fn is_trimmed(self) -> bool {
        self == Method::TrimmedT
    }
}

/// One preregistered hypothesis.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Hypothesis {
    /// Identifier, unique in the file (e.g. "H1").
    pub id: String,
    /// The claim in the researcher's words.
    pub claim: String,
    /// The design.
    pub design: Design,
    /// The numeric outcome column (for paired wide layouts: absent, the two
    /// columns are in `comparison`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub outcome: Option<String>,
    /// Where the two sets of values come from.
    pub comparison: Comparison,
    /// Direction of the alternative for first − second.
    pub alternative: Alternative,
    /// The preregistered method.
    pub method: Method,
    /// Equivalence bounds `[low, high]` in raw units (TOST), if declared.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub equivalence: Option<[f64; 2]>,
    /// Axis label for figures (the outcome column name when absent).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub label: Option<String>,
    /// Measurement unit shown with values (e.g. "ml").
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub units: Option<String>,
    /// Decimals the outcome was recorded with (0 to 6), when the reports
    /// should not find them from the values.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub decimals: Option<u32>,
    /// What the reports call each group, condition or column in sentences,
    /// tables and figures (level or column name → words).
    #[serde(default, skip_serializing_if = "BTreeMap::is_empty")]
    pub names: BTreeMap<String, String>,
    /// Whether to add the other methods for this design as robustness checks.
    pub robustness: bool,
    /// Conventions of the rank and robust methods; every one absent (and
    /// left out of the canonical plan) unless the file states a
    /// non-default choice.
    #[serde(default, skip_serializing_if = "Conventions::is_default")]
    pub conventions: Conventions,
    /// The sample-size plan, if the analysis file gives one.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub planning: Option<Planning>,
}

impl Hypothesis {
    /// The outcome's name: the outcome column, or `first − second` for a
    /// paired wide layout, whose two columns are the outcome.
    pub(crate) fn outcome_name(&self) -> String {
        match (&self.outcome, &self.comparison) {
            (Some(o), _) => o.clone(),
            (None, Comparison::PairedColumns { first, second }) => format!("{first} − {second}"),
            (None, _) => String::new(),
        }
    }

    /// The names of the two sets compared, first and second: the levels,
    /// the two columns, or the outcome and "reference" (the reference
    /// value itself is a number, worded by the report).
    pub(crate) fn set_names(&self) -> [String; 2] {
        match &self.comparison {
            Comparison::Groups { levels, .. } | Comparison::PairedRows { levels, .. } => {
                levels.clone()
            }
            Comparison::PairedColumns { first, second } => [first.clone(), second.clone()],
            Comparison::Reference { .. } => [self.outcome_name(), "reference".into()],
        }
    }
}

/// Default trimming proportion of the trimmed-mean methods (Yuen 1974;
/// 20% is common practice).
pub const DEFAULT_TRIM: f64 = 0.2;
/// Default number of permutations for permutation p values.
pub const DEFAULT_PERMUTATIONS: u64 = 10_000;

/// The rank test the `checked` rule uses for independent groups when the
/// data do not look normal.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum RankFallback {
    /// Mann–Whitney U (the default).
    #[default]
    MannWhitney,
    /// Brunner–Munzel, which does not assume equal spreads.
    BrunnerMunzel,
}

/// The conventions a hypothesis may state for its rank and robust
/// methods. Each is `None` when the file leaves the key out *or* writes
/// the default, so stating a default never changes the plan's hash and
/// plans written before these keys existed keep theirs.
#[derive(Clone, Copy, Debug, Default, PartialEq, Serialize, Deserialize)]
pub struct Conventions {
    /// `zero_differences`: Pratt's rule when `keep-in-ranking`.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub zero_differences: Option<ZeroRule>,
    /// `continuity_correction`: `Some(false)` switches it off.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub continuity_correction: Option<bool>,
    /// `trim`: trimming proportion other than [`DEFAULT_TRIM`].
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub trim: Option<f64>,
    /// `permutations`: a count other than [`DEFAULT_PERMUTATIONS`].
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub permutations: Option<u64>,
    /// `rank_fallback`: a fallback other than Mann–Whitney.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub rank_fallback: Option<RankFallback>,
}

impl Conventions {
    /// Whether nothing differs from the defaults.
    pub fn is_default(&self) -> bool {
        *self == Conventions::default()
    }

    /// The rank-test options these conventions ask for.
    pub fn rank_options(&self) -> RankOptions {
        let d = RankOptions::default();
        RankOptions {
            zeros: self.zero_differences.unwrap_or(d.zeros),
            continuity: self.continuity_correction.unwrap_or(d.continuity),
            ..d
        }
    }

    /// The trimming proportion.
    pub fn trim(&self) -> f64 {
        self.trim.unwrap_or(DEFAULT_TRIM)
    }

    /// The number of permutations.
    pub fn permutations(&self) -> u64 {
        self.permutations.unwrap_or(DEFAULT_PERMUTATIONS)
    }

    /// The rank test `checked` falls back to for independent groups.
    pub fn rank_fallback(&self) -> RankFallback {
        self.rank_fallback.unwrap_or_default()
    }
}

/// The sample-size plan of one hypothesis (`[hypothesis.planning]`).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Planning {
    /// Smallest effect of interest as Cohen's d (d_z for paired designs).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub effect: Option<f64>,
    /// Smallest effect of interest as a raw difference (with `sd`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub difference: Option<f64>,
    /// Expected standard deviation (of the differences for paired designs).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub sd: Option<f64>,
    /// Target power.
    pub power: f64,
    /// Planned n₂/n₁ (independent designs; 1 otherwise).
    pub ratio: f64,
    /// Planned sd₂/sd₁ for Welch's test.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub sd_ratio: Option<f64>,
}

impl Planning {
    /// The standardised effect planned for: `effect`, or `difference / sd`.
    pub(crate) fn effect_size(&self) -> f64 {
        match (self.effect, self.difference, self.sd) {
            (Some(d), _, _) => d,
            (None, Some(diff), Some(sd)) => diff / sd,
            _ => f64::NAN,
        }
    }
}

/// A declared deviation from the locked plan (outside the hash). The
/// optional fields follow the reporting guidance of Willroth & Atherton
/// (2024, "Best laid plans: A guide to reporting preregistration
/// deviations", *Advances in Methods and Practices in Psychological
/// Science* 7(1)) and Lakens (2024, "When and how to deviate from a
/// preregistration", *Collabra: Psychology* 10(1), 117094); each is left
/// out of `results.json` when absent.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Deviation {
    /// When the change was made (free text, ISO date recommended).
    pub date: String,
    /// What was done instead.
    pub change: String,
    /// Why.
    pub reason: String,
    /// The field of the plan it concerns, as the changes table names it
    /// (`hypotheses[H1].method`); its locked value fills `planned`.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub field: Option<String>,
    /// What the plan said.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub planned: Option<String>,
    /// When the change was decided.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub when: Option<Timing>,
    /// How it affects the reading of the results.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub effect: Option<String>,
    /// Whether it makes the test weaker or stronger (Lakens 2024).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub severity: Option<Severity>,
}

/// When a deviation was decided, relative to the data.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Timing {
    /// Before any data were collected.
    BeforeCollection,
    /// After collection, before anyone looked at the data.
    BeforeAccess,
    /// After looking at the data, before analysing them.
    BeforeAnalysis,
    /// After seeing results.
    AfterResults,
}

/// What a deviation does to the test's severity.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Severity {
    /// The test can fail less easily than the locked one.
    Weaker,
    /// About as able to fail as the locked one.
    Same,
    /// Able to fail more easily than the locked one.
    Stronger,
    /// Not known.
    Unclear,
}
