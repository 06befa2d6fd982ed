//! The results model: one serialisable structure that every output is
//! rendered from.
//!
//! `results.json` is this model serialised; the Markdown and HTML reports,
//! the figures and the named values are rendered from it and from nothing
//! else. Figures undefined for the data (an SD of one value, a check the
//! sample is too small for) are `None`/`null`, never NaN. Numbers are
//! written at full precision (shortest round-trip); rounding is the
//! renderers' business.

use crate::plan::canonical::FieldChange;
pub use crate::plan::{Design, Method};
use crate::plan::{Deviation, Plan};
use crate::stats::describe::Descriptives;
use crate::stats::equivalence::Tost;
use crate::stats::equivalence_rank::RankTost;
pub use crate::stats::multiplicity::Correction;
use crate::stats::rank_tests::ZeroRule;
pub use crate::stats::Decision;
use crate::stats::{Alternative, PMethod, RankPMethod};
use serde::{Deserialize, Serialize};

/// Everything one `attest run` produced.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Results {
    /// Always `"attest"`.
    pub tool: String,
    /// Present only on a rehearsal: the run was made on blinded data and
    /// none of its numbers is a result (see `attest rehearse`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub rehearsal: Option<Rehearsal>,
    /// Version of attest that produced the results.
    pub version: String,
    /// SHA-256 of the canonical plan that was run.
    pub plan_sha256: String,
    /// `as-locked`, `deviates` or `unlocked`.
    pub lock: LockState,
    /// What the lock file recorded (absent when unlocked).
    pub lock_record: Option<LockRecord>,
    /// Fields that differ from the locked plan (empty when as locked).
    pub changes: Vec<FieldChange>,
    /// Deviations the analysis file declares.
    pub deviations: Vec<Deviation>,
    /// The plan that was run (canonical, defaults filled).
    pub plan: Plan,
    /// The data file and how it was read.
    pub data: DataRecord,
    /// Per-hypothesis results, in plan order (hypotheses that could not be
    /// computed are in `not_computed` instead).
    pub hypotheses: Vec<HypothesisResult>,
    /// Hypotheses whose values leave the preregistered test undefined,
    /// with the reason; the others are reported as usual.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub not_computed: Vec<NotComputed>,
    /// When a deviation changed the analysis: the plan exactly as locked,
    /// run on the same data, so both conclusions can be read side by side.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub as_locked: Option<Box<LockedRun>>,
    /// The multiplicity correction that actually applies: the plan's, or
    /// `none` when the plan has a single hypothesis (nothing to correct for).
    pub correction_applied: Correction,
    /// The command that reproduces these results, with paths relative to
    /// the analysis file's folder.
    pub command: String,
    /// The analysis file's name (relative to its folder).
    pub analysis_file: String,
}

/// What marks a rehearsal's outputs: how the data were blinded.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Rehearsal {
    /// Always the same warning, so a reader of the JSON alone is told.
    pub notice: String,
    /// The seed of the blinding.
    pub seed: u64,
    /// How each design's values were blinded.
    pub blinding: Vec<String>,
}

/// A rehearsal recorded beside the lock (`<stem>.rehearsal-N.json`).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct RehearsalRecord {
    /// When the rehearsal ran (UTC, RFC 3339).
    pub at: String,
    /// SHA-256 of the data file the rehearsal read.
    pub data_sha256: String,
    /// SHA-256 of the lock file at the time.
    pub lock_sha256: String,
    /// The seed of the blinding.
    pub seed: u64,
    /// attest version that rehearsed.
    pub version: String,
}

/// One hypothesis whose test could not be computed.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct NotComputed {
    /// Identifier from the plan.
    pub id: String,
    /// The claim in the plan's words.
    pub claim: String,
    /// Why, in plain words (true of the values).
    pub reason: String,
    /// The flow of rows up to the failure.
    pub rows: RowFlow,
}

/// The plan as locked, run beside the plan as it stands.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct LockedRun {
    /// SHA-256 of the locked canonical plan.
    pub plan_sha256: String,
    /// Per-hypothesis results of the locked plan.
    pub hypotheses: Vec<HypothesisResult>,
    /// Hypotheses of the locked plan that could not be computed.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub not_computed: Vec<NotComputed>,
    /// The correction that applied to the locked plan.
    pub correction_applied: Correction,
    /// Why the locked plan could not run at all on these data (absent
    /// when it ran).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub not_run: Option<String>,
}

/// Relation between the plan that ran and the lock.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum LockState {
    /// The plan is identical to the locked plan.
    AsLocked,
    /// The plan differs from the locked plan; see `changes`.
    Deviates,
    /// No lock was used (`--unlocked`): not preregistered.
    Unlocked,
}

/// What the lock file says about itself.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct LockRecord {
    /// SHA-256 of the lock file's bytes.
    pub sha256: String,
    /// When the plan was locked (UTC, RFC 3339).
    pub locked_at: String,
    /// attest version that wrote the lock.
    pub locked_with: String,
    /// Plan hash stored in the lock.
    pub plan_sha256: String,
    /// Whether the data file existed when the plan was locked.
    pub data_existed: bool,
    /// The data file's SHA-256 at lock time, if it existed.
    pub data_sha256: Option<String>,
    /// Whether the lock's own content hash checks out (false: hand-edited).
    pub intact: bool,
    /// What version control says: the first commit holding the lock, or
    /// that it is not committed, or that there is no git here.
    pub witness: crate::witness::Witness,
    /// Signatures and timestamp tokens beside the lock at the run (none:
    /// the field is left out).
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub evidence: Vec<crate::seal::Evidence>,
    /// Rehearsals on blinded data recorded beside the lock, oldest first.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub rehearsals: Vec<RehearsalRecord>,
}

/// The data file as read.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct DataRecord {
    /// Path relative to the analysis file, as the plan gives it (empty for
    /// data read from a database).
    pub path: String,
    /// The database engine the rows came from, when not from a file.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub source: Option<crate::plan::Engine>,
    /// SHA-256 of the file's bytes, or for a database source of the
    /// canonical count table the query returned (docs/database-sources.md).
    pub sha256: String,
    /// Data rows read (header excluded).
    pub rows: usize,
    /// Whether the file lies outside the analysis file's folder tree.
    pub outside_plan_folder: bool,
}

/// Rows removed by one exclusion rule, split by the hypothesis' groups.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct RuleStep {
    /// The rule's reason, as preregistered.
    pub reason: String,
    /// Rows removed from the first group (or from all pairs, paired wide).
    pub first: usize,
    /// Rows removed from the second group.
    pub second: usize,
    /// Rows removed that belong to neither group.
    pub other: usize,
}

/// The flow of rows for one hypothesis: read → after each rule → analysed.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct RowFlow {
    /// Rows read in each group (first, second) before any rule.
    pub read: [usize; 2],
    /// Rows read that belong to neither group (other levels of the
    /// grouping column), ignored and counted.
    pub other_levels: usize,
    /// Rows whose group (or condition) cell is missing, so they belong to
    /// neither group; dropped. `read`, `other_levels` and `no_group` add up
    /// to the rows of the file.
    #[serde(default)]
    pub no_group: usize,
    /// Each exclusion rule, in order.
    pub rules: Vec<RuleStep>,
    /// Rows dropped because the outcome (or group, or pair) was missing.
    pub missing: [usize; 2],
    /// Units dropped in paired designs because one of the two measurements
    /// was missing or excluded.
    pub incomplete_pairs: usize,
    /// Rows (measurements) dropped from each side because their partner
    /// measurement was missing, excluded or absent; per group,
    /// `read − Σ rules − missing − unpaired = analysed`.
    #[serde(default)]
    pub unpaired: [usize; 2],
    /// Values analysed in each group (pairs for paired designs: both equal).
    pub analysed: [usize; 2],
}

/// Descriptive statistics of one group (or of the differences): the
/// statistics engine's [`Descriptives`] with the set's label and the
/// interval of its mean.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct GroupSummary {
    /// The group's label (level, column name, or "difference").
    pub label: String,
    /// n, mean, SD, SE, median, quartiles, range, skewness, kurtosis.
    #[serde(flatten)]
    pub describe: Descriptives,
    /// Two-sided t interval for the mean at the plan's confidence.
    pub mean_ci: Option<[f64; 2]>,
}

/// A point estimate with its confidence interval; an open side is null.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Estimate {
    /// What is estimated.
    pub name: EstimateKind,
    /// The point estimate.
    pub value: f64,
    /// Lower bound, null for −∞.
    pub ci_low: Option<f64>,
    /// Upper bound, null for +∞.
    pub ci_high: Option<f64>,
    /// Confidence level.
    pub confidence: f64,
}

/// An effect size with its interval; an open side is null.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct EffectSize {
    /// Which effect size.
    pub name: EffectKind,
    /// The value.
    pub value: f64,
    /// Lower bound, null for −∞ or not computed.
    pub ci_low: Option<f64>,
    /// Upper bound, null for +∞ or not computed.
    pub ci_high: Option<f64>,
}

/// The result of one test (the preregistered one or a robustness check).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct TestResult {
    /// The method, named as in analysis files (`welch-t`, `mann-whitney`, …).
    pub method: Method,
    /// Which statistic: `t`, `U` or `W+`.
    pub statistic_name: StatisticKind,
    /// The statistic (t; U of the first group; W+ = sum of positive
    /// ranks); null when it is undefined (Brunner–Munzel when neither
    /// group's placements vary, as when the groups do not overlap).
    pub statistic: Option<f64>,
    /// Degrees of freedom (null for rank tests).
    pub df: Option<f64>,
    /// Standardised statistic of a rank test's normal approximation.
    pub z: Option<f64>,
    /// p for the preregistered sidedness.
    pub p: f64,
    /// How p was obtained (null for t tests).
    pub p_method: Option<PMethod>,
    /// The estimate of the difference with its interval.
    pub estimate: Estimate,
    /// Effect sizes: the main one first.
    pub effects: Vec<EffectSize>,
    /// Zero differences dropped (Wilcoxon signed-rank).
    pub zeros_dropped: Option<usize>,
    /// The zero-difference rule applied (Wilcoxon signed-rank): `drop`
    /// or `keep-in-ranking`.
    pub zero_rule: Option<ZeroRule>,
    /// Zero differences kept in the ranking (Wilcoxon signed-rank under
    /// the `keep-in-ranking` rule).
    pub zeros_ranked: Option<usize>,
    /// How a rank test's p was obtained in detail: `exact`,
    /// `exact-with-ties` or `normal-approximation` (null for t tests).
    pub p_detail: Option<RankPMethod>,
    /// Whether the continuity correction of ½ was applied to a rank
    /// test's normal approximation (null for t tests and exact p).
    pub continuity_correction: Option<bool>,
    /// log10 of `p`, finite where `p` itself underflows to 0 (null when
    /// it cannot be known, a t test whose p underflows).
    pub log10_p: Option<f64>,
    /// The trimming proportion cut from each end (trimmed-mean t only).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub trim: Option<f64>,
    /// Splits of the pooled sample behind a permutation p: all of them
    /// (`p_detail` `studentised-permutation`) or the number drawn
    /// (`studentised-permutation-sampled`); Brunner–Munzel only.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub permutations: Option<u64>,
}

/// One Shapiro–Wilk check.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct NormalityCheck {
    /// Whose values were checked (a group label, or "differences").
    pub label: String,
    /// Sample size.
    pub n: usize,
    /// W statistic (null when the check could not run).
    pub w: Option<f64>,
    /// p value (null when the check could not run).
    pub p: Option<f64>,
    /// Whether normality was rejected at `check_alpha` (null: not run).
    pub rejected: Option<bool>,
    /// Why the check could not run, when it could not.
    pub not_run: Option<String>,
}

/// One test of equal spread.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct SpreadCheck {
    /// `brown-forsythe` or `levene`.
    pub method: SpreadMethod,
    /// F statistic.
    pub f: Option<f64>,
    /// Numerator df.
    pub df1: Option<f64>,
    /// Denominator df.
    pub df2: Option<f64>,
    /// p value.
    pub p: Option<f64>,
    /// Whether equal spread was rejected at `check_alpha` (null: not run).
    pub rejected: Option<bool>,
    /// Why the check could not run, when it could not.
    pub not_run: Option<String>,
}

/// The assumption checks and what the preregistered rule did with them.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Checks {
    /// Level the checks were judged at.
    pub check_alpha: f64,
    /// Shapiro–Wilk on each group (independent) or on the differences.
    pub normality: Vec<NormalityCheck>,
    /// Brown–Forsythe (used by the rule) then Levene (reported), independent only.
    pub spread: Vec<SpreadCheck>,
    /// Which branch the `checked` rule took (null when the method was fixed).
    pub branch: Option<Branch>,
}

/// Branches of the `checked` rule.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Branch {
    /// Normality held and spread did not differ (or not applicable): t test.
    NormalEqualSpread,
    /// Normality held, spread differed: Welch.
    NormalUnequalSpread,
    /// Normality was rejected: the rank test.
    NotNormal,
    /// A check could not run (too few values); the rule fell back to the
    /// rank-free choice stated in the docs: Welch (independent) or the t test.
    CheckNotRun,
}

/// Two one-sided tests for equivalence: on the mean difference (the
/// engine's [`Tost`]), the trimmed mean difference, the Hodges–Lehmann
/// shift or pseudo-median, or the probability of superiority.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct EquivalenceResult {
    /// What the bounds are on: the estimate of the preregistered method.
    pub on: EstimateKind,
    /// Lower bound (raw units; a probability for the probability of
    /// superiority).
    pub low: f64,
    /// Upper bound.
    pub high: f64,
    /// t against the lower bound (null for the rank-shift tests, whose
    /// statistic is U or W+ on shifted data).
    pub t_lower: Option<f64>,
    /// t against the upper bound.
    pub t_upper: Option<f64>,
    /// Degrees of freedom (null for the rank-shift tests).
    pub df: Option<f64>,
    /// p of the test against the lower bound.
    pub p_lower: f64,
    /// p of the test against the upper bound.
    pub p_upper: f64,
    /// The larger of the two: the TOST p value.
    pub p: f64,
    /// Lower end of the 1 − 2α interval.
    pub ci_low: f64,
    /// Upper end of the 1 − 2α interval.
    pub ci_high: f64,
    /// Level of that interval (1 − 2α).
    pub ci_level: f64,
}

/// Values kept for drawing figures: all of them up to a cap, otherwise an
/// evenly spaced sample of the sorted values (so quantiles are kept) plus a
/// histogram of all values.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct PlotData {
    /// Label of the set (group, condition or "difference").
    pub label: String,
    /// The values drawn as points (sorted when sampled).
    pub points: Vec<f64>,
    /// Whether `points` is a sample rather than every value.
    pub sampled: bool,
    /// Histogram over all values: bin edges (len = counts + 1).
    pub bin_edges: Vec<f64>,
    /// Histogram counts.
    pub bin_counts: Vec<u64>,
    /// The normal Q–Q plot of `points`.
    pub qq: QqData,
}

/// A normal Q–Q plot: `points` (sorted) against the normal quantiles at
/// plotting positions (i + ½)/n (Hazen's positions; common practice), with
/// the reference line through the points' quartiles.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct QqData {
    /// Normal quantile for each of the set's sorted `points`.
    pub theoretical: Vec<f64>,
    /// Reference line `sample = intercept + slope · theoretical`, through
    /// the type-7 quartiles of the points; null with fewer than two points.
    pub line: Option<QqLine>,
}

/// A straight line on a Q–Q plot.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct QqLine {
    /// Value at theoretical quantile 0.
    pub intercept: f64,
    /// Change per unit of theoretical quantile.
    pub slope: f64,
}

/// Pairs for the before/after figure of paired designs (capped like points).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct PairedPlot {
    /// (first, second) for each unit drawn.
    pub pairs: Vec<[f64; 2]>,
    /// Whether the pairs are a sample of all units.
    pub sampled: bool,
}

/// Everything reported for one hypothesis.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct HypothesisResult {
    /// Identifier from the plan.
    pub id: String,
    /// The claim in the plan's words.
    pub claim: String,
    /// `independent`, `paired` or `one-sample`.
    pub design: Design,
    /// Method named in the plan.
    pub method_planned: Method,
    /// Method actually run (differs from the plan only for `checked`).
    pub method: Method,
    /// Preregistered sidedness.
    pub alternative: Alternative,
    /// Outcome label for figures and tables.
    pub outcome_label: String,
    /// Measurement unit, if the plan gives one.
    pub units: Option<String>,
    /// Decimals the outcome was recorded with: the plan's `decimals` when
    /// it gives one, otherwise the fewest decimals that hold every analysed
    /// value exactly (null when no count up to six does: computed or
    /// transformed values). The reports show descriptives and differences
    /// to one decimal more; this file keeps full precision.
    pub recorded_decimals: Option<u32>,
    /// Labels of first and second (for one-sample: outcome and reference).
    pub labels: [String; 2],
    /// Reference value (one-sample only).
    pub reference: Option<f64>,
    /// Descriptives: the two groups (independent), the two conditions and
    /// the differences (paired), or the sample (one-sample).
    pub groups: Vec<GroupSummary>,
    /// The preregistered test's statistic (named by `test.statistic_name`;
    /// null when undefined, see [`TestResult::statistic`]).
    pub statistic: Option<f64>,
    /// Degrees of freedom of the preregistered test (null for rank tests).
    pub df: Option<f64>,
    /// p of the preregistered test for its sidedness.
    pub p: f64,
    /// p after the plan's multiplicity correction.
    pub p_adjusted: f64,
    /// How p was obtained (null for t tests).
    pub p_method: Option<PMethod>,
    /// The estimate with its interval.
    pub estimate: Estimate,
    /// The main effect size with its interval.
    pub effect: EffectSize,
    /// `reject` or `retain` (at alpha, on `p_adjusted`; on the TOST p for
    /// equivalence hypotheses).
    pub decision: Decision,
    /// The preregistered test in full.
    pub test: TestResult,
    /// Assumption checks (always computed where possible; they drive the
    /// rule only for `checked`).
    pub checks: Checks,
    /// The other methods for this design, not preregistered.
    pub robustness: Vec<TestResult>,
    /// Equivalence result, when the plan declares bounds.
    pub equivalence: Option<EquivalenceResult>,
    /// The flow of rows.
    pub rows: RowFlow,
    /// Data behind the figures.
    pub plot: Vec<PlotData>,
    /// Unit-level pairs for paired designs.
    pub paired_plot: Option<PairedPlot>,
    /// Planned against achieved size, when the plan states a sample-size plan.
    pub planning: Option<PlanningOutcome>,
}

/// The sample-size plan of a hypothesis next to what was achieved.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct PlanningOutcome {
    /// What the plan implied.
    pub planned: crate::analysis::planning::Planned,
    /// Sizes analysed: `[n₁, n₂]` or `[n]`.
    pub achieved: Vec<usize>,
    /// The smallest effect (d or d_z, Student's t) the achieved sample
    /// detects with the planned power; reported instead of "observed
    /// power", which is only a transform of p (Hoenig & Heisey 2001).
    pub sensitivity: Option<f64>,
}

impl EquivalenceResult {
    /// The result of [`Tost`] at level α (its interval is the 1 − 2α one),
    /// on the estimate `on` (mean or trimmed mean difference).
    pub(crate) fn from_tost(t: &Tost, alpha: f64, on: EstimateKind) -> Self {
        EquivalenceResult {
            on,
            low: t.low,
            high: t.high,
            t_lower: Some(t.t_lower),
            t_upper: Some(t.t_upper),
            df: Some(t.df),
            p_lower: t.p_lower,
            p_upper: t.p_upper,
            p: t.p,
            ci_low: t.interval.low.unwrap_or(f64::NEG_INFINITY),
            ci_high: t.interval.high.unwrap_or(f64::INFINITY),
            ci_level: 1.0 - 2.0 * alpha,
        }
    }

    /// The result of a rank [`RankTost`] at level α on the estimate `on`
    /// (Hodges–Lehmann shift or pseudo-median, or the probability of
    /// superiority, which also carries its t statistics and df).
    pub(crate) fn from_rank_tost(t: &RankTost, alpha: f64, on: EstimateKind) -> Self {
        let t_stats = t.t;
        EquivalenceResult {
            on,
            low: t.low,
            high: t.high,
            t_lower: t_stats.map(|(s, _)| s[0]),
            t_upper: t_stats.map(|(s, _)| s[1]),
            df: t_stats.map(|(_, df)| df),
            p_lower: t.p_lower,
            p_upper: t.p_upper,
            p: t.p,
            ci_low: t.interval.low.unwrap_or(f64::NEG_INFINITY),
            ci_high: t.interval.high.unwrap_or(f64::INFINITY),
            ci_level: 1.0 - 2.0 * alpha,
        }
    }
}

/// What an estimate of the difference is.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub enum EstimateKind {
    /// Difference of means (t-tests).
    #[serde(rename = "mean difference")]
    MeanDifference,
    /// The Hodges–Lehmann shift between two groups (Mann–Whitney).
    #[serde(rename = "Hodges–Lehmann shift")]
    HodgesLehmannShift,
    /// The Hodges–Lehmann pseudo-median (Wilcoxon signed-rank).
    #[serde(rename = "Hodges–Lehmann estimate")]
    HodgesLehmannEstimate,
    /// Difference of trimmed means (Yuen), or a trimmed mean minus the
    /// reference value (one sample).
    #[serde(rename = "trimmed mean difference")]
    TrimmedMeanDifference,
    /// The trimmed mean of the paired differences (not the difference of
    /// the two trimmed means).
    #[serde(rename = "trimmed mean of the differences")]
    TrimmedMeanOfDifferences,
    /// The probability of superiority θ = P(first > second) + ½ P(tie)
    /// (Brunner–Munzel), ½ under the null.
    #[serde(rename = "probability of superiority")]
    ProbabilityOfSuperiority,
}

impl EstimateKind {
    /// The estimate's value under the null: ½ for the probability of
    /// superiority, 0 for every difference.
    pub fn null_value(self) -> f64 {
        match self {
            EstimateKind::ProbabilityOfSuperiority => 0.5,
            _ => 0.0,
        }
    }

    /// Whether the estimate is in the outcome's units (a difference)
    /// rather than a probability.
    pub fn in_outcome_units(self) -> bool {
        self != EstimateKind::ProbabilityOfSuperiority
    }
}

/// Which effect size.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub enum EffectKind {
    /// Cohen's d with the pooled SD.
    #[serde(rename = "cohen-d")]
    CohenD,
    /// Hedges' g, d corrected for small-sample bias.
    #[serde(rename = "hedges-g")]
    HedgesG,
    /// d_z: mean difference over the SD of the differences.
    #[serde(rename = "d-z")]
    DZ,
    /// The rank-biserial correlation.
    #[serde(rename = "rank-biserial")]
    RankBiserial,
    /// The probability of superiority, P(X > Y) + ½ P(X = Y).
    #[serde(rename = "probability-of-superiority")]
    ProbabilityOfSuperiority,
    /// The robust standardised difference d_R of Algina, Keselman &
    /// Penfield (2005): trimmed means over the winsorised SD, rescaled to
    /// estimate Cohen's d under normality.
    #[serde(rename = "robust-d")]
    RobustD,
}

/// Which test statistic.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub enum StatisticKind {
    /// Student's or Welch's t.
    #[serde(rename = "t")]
    T,
    /// Mann–Whitney U of the first group.
    #[serde(rename = "U")]
    U,
    /// Wilcoxon's W+, the sum of the positive ranks.
    #[serde(rename = "W+")]
    WPlus,
}

/// Which test of equal spread.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum SpreadMethod {
    /// Brown–Forsythe: deviations from the medians (drives `checked`).
    BrownForsythe,
    /// Levene: deviations from the means (reported).
    Levene,
}
