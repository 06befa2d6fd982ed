//! The statistics engine: pure functions over `&[f64]`, no I/O, no text.
//!
//! Every function here takes numbers and returns numbers (or a typed
//! [`StatsError`]). Nothing formats, prints or reads files; the `results`
//! module turns these values into the serialisable model and the renderers
//! turn that into words. One module per family keeps each published
//! algorithm next to its citation and its tests.

pub mod brunner_munzel;
pub mod describe;
pub mod dist;
pub mod effect;
pub mod equivalence;
pub mod equivalence_rank;
pub(crate) mod exact;
pub mod hodges_lehmann;
pub mod mann_whitney;
pub mod multiplicity;
pub mod nct;
pub mod normality;
pub mod power;
pub mod rank_exact;
pub mod rank_tests;
pub(crate) mod ranks;
pub mod runs;
pub mod spread;
pub mod ttest;
pub mod wilcoxon;
pub mod yuen;

use serde::{Deserialize, Serialize};

/// Direction of the alternative hypothesis for `first − second`
/// (or `outcome − reference` for one-sample designs).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Alternative {
    /// The difference is not zero.
    TwoSided,
    /// The difference is greater than zero.
    Greater,
    /// The difference is less than zero.
    Less,
}

impl Alternative {
    /// The alternative seen from the other group (swap first and second).
    pub fn flipped(self) -> Self {
        match self {
            Alternative::TwoSided => Alternative::TwoSided,
            Alternative::Greater => Alternative::Less,
            Alternative::Less => Alternative::Greater,
        }
    }

    /// The plain name used in plans and results (`two-sided`, `greater`, `less`).
    pub(crate) fn as_str(self) -> &'static str {
        match self {
            Alternative::TwoSided => "two-sided",
            Alternative::Greater => "greater",
            Alternative::Less => "less",
        }
    }
}

/// A confidence interval whose open side (for one-sided tests) is `None`.
///
/// `low == None` means the interval reaches −∞, `high == None` that it
/// reaches +∞. With a one-sided test the interval is one-sided too, so it
/// excludes the null value exactly when p < alpha.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct Interval {
    /// Lower bound, or `None` for −∞.
    pub low: Option<f64>,
    /// Upper bound, or `None` for +∞.
    pub high: Option<f64>,
    /// Confidence level, e.g. 0.95.
    pub level: f64,
}

/// How a p value was obtained.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum PMethod {
    /// From the exact permutation distribution of the statistic.
    Exact,
    /// From the normal approximation (with tie and continuity correction).
    NormalApproximation,
    /// From a seeded random sample of the permutations (Brunner–Munzel's
    /// studentised permutation p when there are too many to enumerate).
    RandomPermutations,
    /// From Student's t with Satterthwaite df (Brunner–Munzel in larger
    /// samples).
    TApproximation,
}

/// How a rank test's p value was obtained, in the detail a reader needs:
/// [`PMethod`] says exact or approximate; this also says whether the
/// exact distribution is the one conditional on ties (and kept zeros).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum RankPMethod {
    /// Exact permutation distribution of untied ranks.
    Exact,
    /// Exact permutation distribution conditional on the observed tie
    /// pattern (doubled midranks; see [`rank_exact`]).
    ExactWithTies,
    /// Normal approximation with tie-corrected variance (and continuity
    /// correction unless switched off).
    NormalApproximation,
    /// Brunner–Munzel: every split of the pooled sample enumerated, the
    /// studentised statistic recomputed on each (Neubert & Brunner 2007).
    StudentisedPermutation,
    /// Brunner–Munzel: the studentised statistic on a seeded random sample
    /// of splits, p = (1 + b)/(1 + B).
    StudentisedPermutationSampled,
    /// Brunner–Munzel: Student's t with Satterthwaite df.
    TApproximation,
}

impl RankPMethod {
    /// The coarse exact/approximate distinction.
    pub fn coarse(self) -> PMethod {
        match self {
            RankPMethod::Exact
            | RankPMethod::ExactWithTies
            | RankPMethod::StudentisedPermutation => PMethod::Exact,
            RankPMethod::NormalApproximation => PMethod::NormalApproximation,
            RankPMethod::StudentisedPermutationSampled => PMethod::RandomPermutations,
            RankPMethod::TApproximation => PMethod::TApproximation,
        }
    }
}

/// The outcome of comparing a p value with the significance level.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Decision {
    /// p < α: the null hypothesis is rejected.
    Reject,
    /// p ≥ α (or p undefined): the null hypothesis is retained.
    Retain,
}

impl Decision {
    /// The one decision rule of the project: reject exactly when p < α
    /// (README, "interval excludes the null value exactly when p < alpha").
    /// A NaN p never rejects. Every interval boundary, equivalence test and
    /// power simulation goes through this function.
    pub fn at(p: f64, alpha: f64) -> Decision {
        if p < alpha {
            Decision::Reject
        } else {
            Decision::Retain
        }
    }

    /// Whether this is [`Decision::Reject`].
    pub fn rejects(self) -> bool {
        self == Decision::Reject
    }
}

/// The significance level α belonging to a confidence level: `1 − level`
/// taken as the decimal a plan writes (levels are decimals of at most 12
/// places), so that level 0.95 gives exactly the α of `alpha = 0.05`
/// rather than 1 − 0.95 = 0.050000000000000044 in binary.
pub fn alpha_of_level(level: f64) -> f64 {
    let a = 1.0 - level;
    let r = (a * 1e12).round() / 1e12;
    if (r - a).abs() <= 8.0 * f64::EPSILON {
        r
    } else {
        a
    }
}

/// Why a statistic could not be computed. Each variant is a distinct,
/// reportable situation; none of them is a bug.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum StatsError {
    /// Fewer observations than the method needs.
    #[error("needs at least {needed} {}, has {got}", if *.needed == 1 { "value" } else { "values" })]
    TooFew {
        /// Minimum number of observations the method needs.
        needed: usize,
        /// Number of observations given.
        got: usize,
    },
    /// A value is NaN or infinite.
    #[error("contains a value that is not a finite number")]
    NonFinite,
    /// Every value is the same, so the spread is zero.
    #[error("all values are identical, so the spread is zero")]
    ZeroVariance,
    /// The values are finite but a sum, difference, square or ratio of
    /// them exceeds the largest double (about ±1.8e308).
    #[error("a sum, square or ratio of the values exceeds the largest representable number (about 1.8e308)")]
    Overflow,
    /// Every paired difference (or difference from the reference) is zero.
    #[error("every difference is zero")]
    AllZero,
    /// A parameter (alpha, level, df, …) is outside its valid range.
    #[error("parameter out of range: {0}")]
    BadParameter(&'static str),
    /// The method is only defined (or only validated) for a range of
    /// sizes, and the data fall outside it; the caller should report that
    /// the method does not apply rather than a number.
    #[error("{what} must be between {min} and {max}, got {got}")]
    OutOfRange {
        /// What is out of range, e.g. "Shapiro–Wilk sample size".
        what: &'static str,
        /// Smallest valid value.
        min: usize,
        /// Largest valid value.
        max: usize,
        /// The value given.
        got: usize,
    },
}

/// `x` in ascending (total) order: borrowed when it already is, which the
/// analysis arranges for large samples, otherwise a sorted copy.
pub(crate) fn sorted(x: &[f64]) -> std::borrow::Cow<'_, [f64]> {
    if x.is_sorted_by(|a, b| a.total_cmp(b).is_le()) {
        std::borrow::Cow::Borrowed(x)
    } else {
        let mut v = x.to_vec();
        v.sort_unstable_by(f64::total_cmp);
        std::borrow::Cow::Owned(v)
    }
}

/// Checks that every value is finite.
pub(crate) fn ensure_finite(x: &[f64]) -> Result<(), StatsError> {
    if x.iter().all(|v| v.is_finite()) {
        Ok(())
    } else {
        Err(StatsError::NonFinite)
    }
}

/// The one-sided tail probability `P(T ≥ t)`/`P(T ≤ t)` or the two-sided
/// `2·min(…)` for a symmetric reference distribution, from its survival
/// function `sf`. Upper tails are computed directly, never as `1 − cdf`.
pub(crate) fn p_from_symmetric(
    stat: f64,
    alternative: Alternative,
    sf: impl Fn(f64) -> f64,
) -> f64 {
    let p = match alternative {
        Alternative::Greater => sf(stat),
        Alternative::Less => sf(-stat),
        Alternative::TwoSided => 2.0 * sf(stat.abs()),
    };
    p.clamp(0.0, 1.0)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn decision_is_strict_at_alpha() {
        assert_eq!(Decision::at(0.05, 0.05), Decision::Retain);
        assert_eq!(Decision::at(0.049_999_999, 0.05), Decision::Reject);
        assert_eq!(Decision::at(f64::NAN, 0.05), Decision::Retain);
        assert!(Decision::at(0.0, 0.05).rejects());
    }

    #[test]
    fn alpha_of_level_is_the_plan_decimal() {
        assert_eq!(alpha_of_level(0.95), 0.05);
        assert_eq!(alpha_of_level(0.9), 0.1);
        assert_eq!(alpha_of_level(0.99), 0.01);
        assert_eq!(alpha_of_level(1.0 - 0.05), 0.05);
        // Not a short decimal: left as the binary complement.
        let odd = 1.0 - 1.0 / 3.0;
        assert_eq!(alpha_of_level(odd), 1.0 - odd);
    }

    #[test]
    fn rank_p_method_coarsens() {
        assert_eq!(RankPMethod::ExactWithTies.coarse(), PMethod::Exact);
        assert_eq!(
            RankPMethod::NormalApproximation.coarse(),
            PMethod::NormalApproximation
        );
    }
}
