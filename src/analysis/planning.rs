//! Sample-size planning: the questions `attest power` answers, and the
//! planned size a plan's `[hypothesis.planning]` implies.
//!
//! All the arithmetic is in `stats::power` (exact noncentral-t power); this
//! module turns a question in the user's terms — a design, an effect in
//! the preregistered direction, a target power or a size — into calls to
//! it, and collects the answer in one serialisable structure that the
//! terminal, `--json`, the preregistration document and the report share.

use crate::error::{Failure, Result};
use crate::plan::{Design, Hypothesis, Planning};
use crate::stats::power::{self, PowerDesign, ARE_MIN, ARE_NORMAL};
use crate::stats::{Alternative, StatsError};
use serde::{Deserialize, Serialize};

/// A planning question. Exactly two of `effect`, `power` and `n` are given;
/// the third is solved for.
#[derive(Clone, Debug)]
pub(crate) struct Question {
    /// The design.
    pub design: Design,
    /// Cohen's d (d_z for paired), as a size in the tested direction.
    pub effect: Option<f64>,
    /// Target power.
    pub power: Option<f64>,
    /// n₁ (independent) or n (paired, one-sample).
    pub n: Option<usize>,
    /// Significance level.
    pub alpha: f64,
    /// Sidedness.
    pub alternative: Alternative,
    /// n₂/n₁ for independent designs.
    pub ratio: f64,
    /// Planned sd₂/sd₁ for Welch's test (independent only).
    pub sd_ratio: Option<f64>,
    /// Simulation check: number of simulated studies.
    pub simulate: Option<usize>,
    /// Seed of the simulation.
    pub seed: u64,
}

/// What was solved for.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub(crate) enum Solved {
    /// The sample size for a target power.
    N,
    /// The power at a given size.
    Power,
    /// The smallest detectable effect at a given size and power.
    Effect,
}

/// Sizes for the rank tests, from the t-test size and an asymptotic
/// relative efficiency (ARE).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub(crate) struct RankSizes {
    /// Using ARE = 3/π ≈ 0.955 (normal data).
    pub normal_data: Vec<usize>,
    /// Using the ARE lower bound 0.864 (any continuous shape).
    pub any_shape: Vec<usize>,
}

/// A simulation check of the answer.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub(crate) struct Simulated {
    /// Simulated studies.
    pub reps: usize,
    /// Seed.
    pub seed: u64,
    /// Rejection rate of the t test at the t-test sizes.
    pub t_power: f64,
    /// Rejection rate of the rank test at the conservative rank sizes.
    pub rank_power: f64,
}

/// The answer, as printed and as `--json`.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub(crate) struct Answer {
    /// What was solved for.
    pub solved: Solved,
    /// The design.
    pub design: Design,
    /// Sidedness.
    pub alternative: Alternative,
    /// Significance level.
    pub alpha: f64,
    /// Effect size (Cohen's d, or d_z) as a size in the tested direction:
    /// never negative, whatever the alternative, the same convention as
    /// `--smallest-effect` (a `less` test of 0.5 plans a difference of −0.5 SD).
    pub effect: f64,
    /// Sizes: `[n₁, n₂]` for independent designs, `[n]` otherwise.
    pub n: Vec<usize>,
    /// Exact power achieved at those sizes.
    pub power: f64,
    /// The target power, when one was given.
    pub target_power: Option<f64>,
    /// n₂/n₁ (independent).
    pub ratio: Option<f64>,
    /// sd₂/sd₁ used for Welch's df, if planned.
    pub sd_ratio: Option<f64>,
    /// Sizes for the rank test (when solving for n).
    pub rank: Option<RankSizes>,
    /// Simulation check, when asked for.
    pub simulated: Option<Simulated>,
}

fn stats_failure(e: StatsError) -> Failure {
    Failure::input(format!("cannot plan this: {e}"))
        .help("check the effect size, power and alpha; power must lie between alpha and 1")
}

fn power_design(design: Design, ratio: f64) -> PowerDesign {
    match design {
        Design::Independent => PowerDesign::Independent { ratio },
        Design::Paired => PowerDesign::Paired,
        Design::OneSample => PowerDesign::OneSample,
    }
}

/// The effect signed in the tested direction (a `less` test plans a
/// negative difference).
fn signed(effect: f64, alt: Alternative) -> f64 {
    if alt == Alternative::Less {
        -effect.abs()
    } else {
        effect.abs()
    }
}

/// Answers a planning question.
pub(crate) fn answer(q: &Question) -> Result<Answer> {
    let given = [q.effect.is_some(), q.power.is_some(), q.n.is_some()]
        .iter()
        .filter(|b| **b)
        .count();
    if given != 2 {
        return Err(Failure::input("give exactly two of --smallest-effect, --chance-to-detect and --units; the third is solved for")
            .help("--smallest-effect and --chance-to-detect give the sample size; --smallest-effect and --units give the power; --units and --chance-to-detect give the smallest detectable effect"));
    }
    if q.design != Design::Independent && (q.sd_ratio.is_some() || q.ratio != 1.0) {
        return Err(Failure::input(
            "--second-per-first and --sd-ratio apply to independent designs only",
        )
        .help("leave them out for paired and one-sample designs"));
    }
    let pd = power_design(q.design, q.ratio);
    let welch = q.sd_ratio;
    let power_at = |d: f64, n1: usize| match welch {
        Some(k) => power::power_welch(d, n1, q.ratio, k, q.alpha, q.alternative),
        None => power::power(pd, d, n1, q.alpha, q.alternative),
    };
    let (solved, effect, sizes, achieved) = match (q.effect, q.power, q.n) {
        (Some(e), Some(p), None) => {
            let d = signed(e, q.alternative);
            let s = match welch {
                Some(k) => power::n_for_power_welch(d, q.ratio, k, p, q.alpha, q.alternative),
                None => power::n_for_power(pd, d, p, q.alpha, q.alternative),
            }
            .map_err(stats_failure)?;
            (Solved::N, d, s.n, s.power)
        }
        (Some(e), None, Some(n)) => {
            let d = signed(e, q.alternative);
            let sizes = power::group_sizes(pd, n).map_err(stats_failure)?;
            (
                Solved::Power,
                d,
                sizes,
                power_at(d, n).map_err(stats_failure)?,
            )
        }
        (None, Some(p), Some(n)) => {
            if welch.is_some() {
                return Err(Failure::input(
                    "the smallest detectable effect is computed for Student's t only",
                )
                .help("leave out --sd-ratio"));
            }
            let d = power::min_detectable_effect(pd, n, p, q.alpha, q.alternative)
                .map_err(stats_failure)?;
            let sizes = power::group_sizes(pd, n).map_err(stats_failure)?;
            (
                Solved::Effect,
                d,
                sizes,
                power_at(d, n).map_err(stats_failure)?,
            )
        }
        _ => unreachable!("exactly two of three were checked above"),
    };
    let rank = (solved == Solved::N).then(|| RankSizes {
        normal_data: rank_sizes(pd, &sizes, ARE_NORMAL),
        any_shape: rank_sizes(pd, &sizes, ARE_MIN),
    });
    let simulated = match q.simulate {
        None => None,
        Some(reps) => {
            let rank_n = rank
                .as_ref()
                .map_or_else(|| sizes.clone(), |r| r.any_shape.clone());
            let t_power = power::simulate_power(
                pd,
                effect,
                &sizes,
                q.alpha,
                q.alternative,
                reps,
                q.seed,
                false,
            )
            .map_err(stats_failure)?;
            let rank_power = power::simulate_power(
                pd,
                effect,
                &rank_n,
                q.alpha,
                q.alternative,
                reps,
                q.seed,
                true,
            )
            .map_err(stats_failure)?;
            Some(Simulated {
                reps,
                seed: q.seed,
                t_power,
                rank_power,
            })
        }
    };
    Ok(Answer {
        solved,
        design: q.design,
        alternative: q.alternative,
        alpha: q.alpha,
        effect: effect.abs(),
        n: sizes,
        power: achieved,
        target_power: q.power,
        ratio: (q.design == Design::Independent).then_some(q.ratio),
        sd_ratio: q.sd_ratio,
        rank,
        simulated,
    })
}

fn rank_sizes(pd: PowerDesign, sizes: &[usize], are: f64) -> Vec<usize> {
    let n1 = power::n_rank_from_t(sizes[0], are);
    match pd {
        PowerDesign::Independent { ratio } => {
            power::group_sizes(PowerDesign::Independent { ratio }, n1).unwrap_or_else(|_| vec![n1])
        }
        _ => vec![n1],
    }
}

/// The planned size of one hypothesis, from its `[hypothesis.planning]`.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Planned {
    /// Effect size planned for (Cohen's d or d_z, tested direction).
    pub effect: f64,
    /// Target power.
    pub power_target: f64,
    /// Planned sizes: `[n₁, n₂]` or `[n]` (for a rank method, the
    /// conservative ARE-adjusted sizes).
    pub n: Vec<usize>,
    /// Exact power of the t test at the t-test sizes.
    pub power: f64,
    /// Whether the sizes were adjusted for a rank test (ARE 0.864).
    pub rank_adjusted: bool,
}

/// Computes the planned size of a hypothesis at the plan's alpha.
pub(crate) fn planned(h: &Hypothesis, p: &Planning, alpha: f64) -> Result<Planned> {
    let q = Question {
        design: h.design,
        effect: Some(p.effect_size()),
        power: Some(p.power),
        n: None,
        alpha,
        alternative: h.alternative,
        ratio: p.ratio,
        sd_ratio: p.sd_ratio,
        simulate: None,
        seed: 1,
    };
    let a = answer(&q).map_err(|f| Failure {
        what: format!("hypothesis {}: {}", h.id, f.what),
        ..f
    })?;
    let rank = h.method.is_rank();
    Ok(Planned {
        effect: a.effect,
        power_target: p.power,
        n: if rank {
            a.rank.map(|r| r.any_shape).unwrap_or(a.n)
        } else {
            a.n
        },
        power: a.power,
        rank_adjusted: rank,
    })
}

/// Sensitivity of an achieved sample: the smallest effect (d or d_z) the
/// test could detect with the planned power (Student's t; reported instead
/// of "observed power", which is a transform of p — Hoenig & Heisey 2001).
pub(crate) fn sensitivity(
    h: &Hypothesis,
    p: &Planning,
    alpha: f64,
    achieved: &[usize],
) -> Option<f64> {
    let n1 = *achieved.first()?;
    let ratio = match (h.design, achieved) {
        (Design::Independent, [a, b]) if *a > 0 => *b as f64 / *a as f64,
        _ => 1.0,
    };
    power::min_detectable_effect(
        power_design(h.design, ratio),
        n1,
        p.power,
        alpha,
        h.alternative,
    )
    .ok()
}

#[cfg(test)]
mod tests {
    use super::*;

    fn q(effect: Option<f64>, pw: Option<f64>, n: Option<usize>) -> Question {
        Question {
            design: Design::Independent,
            effect,
            power: pw,
            n,
            alpha: 0.05,
            alternative: Alternative::TwoSided,
            ratio: 1.0,
            sd_ratio: None,
            simulate: None,
            seed: 1,
        }
    }

    #[test]
    fn solves_each_unknown() {
        // Cohen (1988), Table 2.4.1: d = 0.5, two-sided α = .05, power .80
        // needs 64 per group (common textbook value, from memory).
        let a = answer(&q(Some(0.5), Some(0.8), None)).unwrap();
        assert_eq!(a.n, vec![64, 64]);
        assert!(a.power >= 0.8);
        let b = answer(&q(Some(0.5), None, Some(64))).unwrap();
        assert_eq!(b.power, a.power);
        let c = answer(&q(None, Some(a.power), Some(64))).unwrap();
        assert!((c.effect - 0.5).abs() < 1e-6, "{}", c.effect);
    }

    #[test]
    fn needs_exactly_two_givens() {
        assert!(answer(&q(Some(0.5), None, None)).is_err());
        assert!(answer(&q(Some(0.5), Some(0.8), Some(10))).is_err());
    }

    #[test]
    fn a_less_test_reports_its_effect_in_the_tested_direction() {
        let mut question = q(Some(0.5), Some(0.8), None);
        question.alternative = Alternative::Less;
        let a = answer(&question).unwrap();
        assert_eq!(a.effect, 0.5);
        // One-sided tests need fewer units than two-sided ones.
        assert!(a.n[0] < 64);
        // Solving for the effect: the same positive size for `less` as for
        // `greater` (the two tests mirror each other), as `--smallest-effect` takes it.
        let mut less = q(None, Some(0.8), Some(30));
        less.design = Design::Paired;
        less.alternative = Alternative::Less;
        let mut greater = less.clone();
        greater.alternative = Alternative::Greater;
        let (l, g) = (answer(&less).unwrap(), answer(&greater).unwrap());
        assert!(l.effect > 0.0);
        assert!(
            (l.effect - g.effect).abs() < 1e-12,
            "{} vs {}",
            l.effect,
            g.effect
        );
        // And feeding that answer back as --smallest-effect gives the power asked for.
        let mut back = q(Some(l.effect), None, Some(30));
        back.design = Design::Paired;
        back.alternative = Alternative::Less;
        assert!((answer(&back).unwrap().power - 0.8).abs() < 1e-6);
    }
}
