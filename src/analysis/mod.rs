//! One hypothesis, analysed: the assumption checks, the preregistered test
//! (or the branch the `checked` rule takes), effect sizes, equivalence,
//! robustness checks and figure data, gathered into the results model.
//!
//! This is where the plan meets the statistics engine. It chooses and
//! collects: every number comes from `stats`, and everything the words and
//! figures need (the branch the rule took, Q–Q positions, histogram bins,
//! the mean's interval) is decided here, as typed fields of the model, so
//! renderers only read. It formats no text.

use crate::data::Selected;
use crate::error::{Failure, Result};
use crate::plan::{Comparison, Design, Hypothesis, Method, Plan};
use crate::results::*;
use crate::stats::{self, describe, Alternative, StatsError};
use rayon::prelude::*;

mod degenerate;
pub(crate) mod planning;
mod resolution;
mod rule;

use rule::{branch, choose};

/// Figures draw at most this many points per set; larger sets are drawn
/// from evenly spaced order statistics (so the quantiles stay exact).
pub(crate) const PLOT_POINTS: usize = 2000;
/// Before/after figures draw at most this many units.
pub(crate) const PLOT_PAIRS: usize = 400;
/// The most histogram bins a figure draws.
pub(crate) const PLOT_BINS: usize = 60;

/// Analyses one hypothesis on its selected values. `p_adjusted` and
/// `decision` are provisional here; the caller applies the plan's
/// multiplicity correction across hypotheses.
pub(crate) fn analyse(plan: &Plan, h: &Hypothesis, sel: Selected) -> Result<HypothesisResult> {
    let level = plan.confidence;
    let labels = h.set_names();
    let Selected {
        mut first,
        mut second,
        flow,
    } = sel;
    // Every statistic of an independent group is blind to the order of its
    // values, so each group is sorted once here, on both cores when large;
    // the sorts inside the statistics then find sorted input and finish in
    // one pass. Paired values keep their order (pairs and figures need it).
    if h.design == Design::Independent {
        rayon::join(|| sort_values(&mut first), || sort_values(&mut second));
    }
    // The values the one-sample machinery works on: differences (paired) or
    // the sample itself (one-sample, tested against `reference`).
    let (diffs, reference) = match &h.comparison {
        Comparison::PairedColumns { .. } | Comparison::PairedRows { .. } => (
            first
                .iter()
                .zip(&second)
                .map(|(a, b)| a - b)
                .collect::<Vec<_>>(),
            0.0,
        ),
        Comparison::Reference { reference } => (first.clone(), *reference),
        Comparison::Groups { .. } => (Vec::new(), 0.0),
    };
    let mut diffs = diffs;
    sort_values(&mut diffs);
    let fail = |what: &str, e: StatsError| -> Failure {
        let why = degenerate::why(&e, h.design, &labels, &first, &second, &diffs);
        Failure::input(format!("hypothesis {}: {what}: {why}", h.id)).help(
            "check the row counts in the data (missing values and exclusions reduce them), or revise the plan and record a deviation",
        )
    };
    let d_once = std::sync::OnceLock::new();
    let settings = Settings {
        rank: h.conventions.rank_options(),
        trim: h.conventions.trim(),
        permutations: h.conventions.permutations(),
        seed: plan.seed,
    };
    let run = |m: Method| {
        let data = Values {
            first: &first,
            second: &second,
            diffs: &diffs,
            reference,
        };
        run_method(m, h.design, h.alternative, level, &data, &settings, &d_once)
    };
    // With robustness checks on, every method that fits the design is
    // reported, so all of them run at once, beside the descriptives and the
    // assumption checks (on large samples each is worth a core).
    let fitting: Vec<Method> = Method::ALL
        .iter()
        .copied()
        .filter(|m| *m != Method::Checked && m.fits(h.design))
        .collect();
    let ((groups, checks), ran) = rayon::join(
        || {
            (
                summaries(h, &labels, &first, &second, &diffs, level),
                checks(plan, h, &labels, &first, &second, &diffs),
            )
        },
        || {
            if h.robustness {
                fitting.par_iter().map(|&m| (m, run(m))).collect()
            } else {
                Vec::new()
            }
        },
    );
    let groups = groups.map_err(|e| fail("cannot describe the data", e))?;
    let method = choose(h.method, h.design, h.conventions.rank_fallback(), &checks);
    let mut checks = checks;
    if h.method == Method::Checked {
        checks.branch = Some(branch(h.design, &checks));
    }
    let test = match ran.iter().find(|(m, _)| *m == method) {
        Some((_, r)) => r.clone(),
        None => run(method),
    }
    .map_err(|e| fail(&format!("{} cannot be computed", method.as_str()), e))?;
    let robustness: Vec<TestResult> = ran
        .into_iter()
        .filter(|(m, _)| *m != method)
        .filter_map(|(_, r)| r.ok())
        .collect();
    let equivalence = match h.equivalence {
        None => None,
        Some([low, high]) => Some(
            equivalence(
                method,
                h.design,
                plan.alpha,
                [low, high],
                &Values {
                    first: &first,
                    second: &second,
                    diffs: &diffs,
                    reference,
                },
                &settings,
            )
            .map_err(|e| fail("the equivalence test cannot be computed", e))?,
        ),
    };
    let p = equivalence.as_ref().map_or(test.p, |e| e.p);
    let (plot, paired_plot) = plot_data(h, &labels, &first, &second, &diffs);
    let planning = match &h.planning {
        None => None,
        Some(p) => {
            let achieved = match h.design {
                Design::Independent => vec![first.len(), second.len()],
                _ => vec![first.len()],
            };
            Some(PlanningOutcome {
                planned: crate::analysis::planning::planned(h, p, plan.alpha)?,
                sensitivity: crate::analysis::planning::sensitivity(h, p, plan.alpha, &achieved),
                achieved,
            })
        }
    };
    Ok(HypothesisResult {
        id: h.id.clone(),
        claim: h.claim.clone(),
        design: h.design,
        method_planned: h.method,
        method,
        alternative: h.alternative,
        outcome_label: h.label.clone().unwrap_or_else(|| h.outcome_name()),
        units: h.units.clone(),
        recorded_decimals: h
            .decimals
            .or_else(|| resolution::recorded_decimals(first.iter().chain(&second))),
        labels,
        reference: match h.comparison {
            Comparison::Reference { reference } => Some(reference),
            _ => None,
        },
        groups,
        statistic: test.statistic,
        df: test.df,
        p,
        p_adjusted: p,
        p_method: test.p_method,
        estimate: test.estimate.clone(),
        effect: test.effects[0].clone(),
        decision: Decision::at(p, plan.alpha),
        test,
        checks,
        robustness,
        equivalence,
        rows: flow,
        plot,
        paired_plot,
        planning,
    })
}

/// Sorts ascending (total order), in parallel for large samples.
fn sort_values(v: &mut [f64]) {
    use rayon::slice::ParallelSliceMut;
    if v.len() >= 1 << 16 {
        // Large samples recorded at a fixed resolution repeat their
        // values: counting them is faster than comparing.
        if stats::runs::sort_by_counting(v, 16) {
            return;
        }
        v.par_sort_unstable_by(f64::total_cmp);
    } else {
        v.sort_unstable_by(f64::total_cmp);
    }
}

/// Applies the plan's multiplicity correction and the decisions, and
/// returns the correction that applied: with a single hypothesis there is
/// nothing to correct for, whatever the plan names. `not_computed`
/// hypotheses of the family could not be tested: each counts as one with
/// p = 1, so the others are corrected for the family the plan declared,
/// never a smaller one (the conservative reading: a missing test cannot
/// loosen the others).
pub(crate) fn adjust_family(
    plan: &Plan,
    results: &mut [HypothesisResult],
    not_computed: usize,
) -> Correction {
    let applied = if results.len() + not_computed < 2 {
        Correction::None
    } else {
        plan.correction
    };
    let mut ps: Vec<f64> = results.iter().map(|r| r.p).collect();
    ps.extend(std::iter::repeat_n(1.0, not_computed));
    let adj = stats::multiplicity::adjust(&ps, applied);
    for (r, a) in results.iter_mut().zip(adj) {
        r.p_adjusted = a;
        r.decision = Decision::at(a, plan.alpha);
    }
    applied
}

fn summary(label: &str, x: &[f64], level: f64) -> std::result::Result<GroupSummary, StatsError> {
    let describe = describe::describe(x)?;
    Ok(GroupSummary {
        label: label.to_string(),
        mean_ci: describe::mean_interval(&describe, level),
        describe,
    })
}

fn summaries(
    h: &Hypothesis,
    labels: &[String; 2],
    first: &[f64],
    second: &[f64],
    diffs: &[f64],
    level: f64,
) -> std::result::Result<Vec<GroupSummary>, StatsError> {
    Ok(match h.design {
        Design::Independent => vec![
            summary(&labels[0], first, level)?,
            summary(&labels[1], second, level)?,
        ],
        Design::Paired => vec![
            summary(&labels[0], first, level)?,
            summary(&labels[1], second, level)?,
            summary("difference", diffs, level)?,
        ],
        Design::OneSample => vec![summary(&labels[0], first, level)?],
    })
}

fn normality(label: &str, x: &[f64], check_alpha: f64) -> NormalityCheck {
    match stats::normality::shapiro_wilk(x) {
        Ok(sw) => NormalityCheck {
            label: label.into(),
            n: x.len(),
            w: Some(sw.w),
            p: Some(sw.p),
            rejected: Some(sw.p < check_alpha),
            not_run: None,
        },
        Err(e) => NormalityCheck {
            label: label.into(),
            n: x.len(),
            w: None,
            p: None,
            rejected: None,
            not_run: Some(e.to_string()),
        },
    }
}

fn spread(
    method: SpreadMethod,
    r: std::result::Result<stats::spread::SpreadTest, StatsError>,
    check_alpha: f64,
) -> SpreadCheck {
    match r {
        Ok(s) => SpreadCheck {
            method,
            f: Some(s.f),
            df1: Some(s.df1),
            df2: Some(s.df2),
            p: Some(s.p),
            rejected: Some(s.p < check_alpha),
            not_run: None,
        },
        Err(e) => SpreadCheck {
            method,
            f: None,
            df1: None,
            df2: None,
            p: None,
            rejected: None,
            not_run: Some(e.to_string()),
        },
    }
}

fn checks(
    plan: &Plan,
    h: &Hypothesis,
    labels: &[String; 2],
    first: &[f64],
    second: &[f64],
    diffs: &[f64],
) -> Checks {
    let a = plan.check_alpha;
    let (normality, spread) = match h.design {
        Design::Independent => {
            // Four independent checks; on large groups each is worth a core.
            let ((n1, n2), (bf, lev)) = rayon::join(
                || {
                    rayon::join(
                        || normality(&labels[0], first, a),
                        || normality(&labels[1], second, a),
                    )
                },
                || {
                    rayon::join(
                        || stats::spread::brown_forsythe(first, second),
                        || stats::spread::levene(first, second),
                    )
                },
            );
            (
                vec![n1, n2],
                vec![
                    spread(SpreadMethod::BrownForsythe, bf, a),
                    spread(SpreadMethod::Levene, lev, a),
                ],
            )
        }
        Design::Paired | Design::OneSample => {
            let label = if h.design == Design::Paired {
                "differences"
            } else {
                labels[0].as_str()
            };
            (vec![normality(label, diffs, a)], Vec::new())
        }
    };
    Checks {
        check_alpha: a,
        normality,
        spread,
        branch: None,
    }
}

fn effect(name: EffectKind, e: &stats::effect::Effect) -> EffectSize {
    EffectSize {
        name,
        value: e.value,
        ci_low: e.interval.low,
        ci_high: e.interval.high,
    }
}

/// The conventions and seed one hypothesis's methods run with.
struct Settings {
    /// Zero rule and continuity correction of the rank tests.
    rank: stats::rank_tests::RankOptions,
    /// Trimming proportion of the trimmed-mean t.
    trim: f64,
    /// Splits for Brunner–Munzel's permutation p.
    permutations: u64,
    /// The plan's seed (random splits).
    seed: u64,
}

/// The values one hypothesis's methods run on.
struct Values<'a> {
    first: &'a [f64],
    second: &'a [f64],
    /// Paired differences, or the one-sample values.
    diffs: &'a [f64],
    /// The one-sample reference value (0 otherwise).
    reference: f64,
}

fn run_method(
    m: Method,
    design: Design,
    alt: Alternative,
    level: f64,
    v: &Values,
    settings: &Settings,
    d_once: &std::sync::OnceLock<std::result::Result<stats::effect::Effect, StatsError>>,
) -> std::result::Result<TestResult, StatsError> {
    let Values {
        first,
        second,
        diffs,
        reference,
    } = *v;
    use stats::{
        effect as fx, mann_whitney::mann_whitney_with, rank_tests as rk, ttest as tt,
        wilcoxon::wilcoxon_signed_rank_with, yuen,
    };
    let opts = &settings.rank;
    // A test whose statistic is t-distributed, with its estimate of kind
    // `kind`; the other fields are the ones no t-shaped test fills.
    let t_shaped = |name: Method,
                    (t, df, p): (f64, f64, f64),
                    kind: EstimateKind,
                    (value, interval): (f64, stats::Interval),
                    effects: Vec<EffectSize>| TestResult {
        method: name,
        statistic_name: StatisticKind::T,
        statistic: Some(t),
        df: Some(df),
        z: None,
        p,
        p_method: None,
        estimate: Estimate {
            name: kind,
            value,
            ci_low: interval.low,
            ci_high: interval.high,
            confidence: level,
        },
        effects,
        zeros_dropped: None,
        zero_rule: None,
        zeros_ranked: None,
        p_detail: None,
        continuity_correction: None,
        log10_p: (p > 0.0).then(|| p.log10()),
        trim: None,
        permutations: None,
    };
    let t_result = |name: Method, t: tt::TTest, effects: Vec<EffectSize>| {
        t_shaped(
            name,
            (t.t, t.df, t.p),
            EstimateKind::MeanDifference,
            (t.estimate, t.interval),
            effects,
        )
    };
    let rank_result = |name: Method, r: rk::RankTest, stat: StatisticKind, est: EstimateKind| {
        let mut effects = vec![EffectSize {
            name: EffectKind::RankBiserial,
            value: r.rank_biserial,
            ci_low: r.rank_biserial_interval.low,
            ci_high: r.rank_biserial_interval.high,
        }];
        if let Some(ps) = r.prob_superiority {
            effects.push(EffectSize {
                name: EffectKind::ProbabilityOfSuperiority,
                value: ps,
                ci_low: None,
                ci_high: None,
            });
        }
        TestResult {
            method: name,
            statistic_name: stat,
            statistic: Some(r.statistic),
            df: None,
            z: r.z,
            p: r.p,
            p_method: Some(r.p_method),
            estimate: Estimate {
                name: est,
                value: r.estimate,
                ci_low: r.interval.low,
                ci_high: r.interval.high,
                confidence: level,
            },
            effects,
            zeros_dropped: (name == Method::WilcoxonSignedRank).then_some(r.zeros_dropped),
            zero_rule: (name == Method::WilcoxonSignedRank).then_some(opts.zeros),
            zeros_ranked: (name == Method::WilcoxonSignedRank).then_some(r.zeros_ranked),
            p_detail: Some(r.p_detail),
            continuity_correction: (r.p_detail == stats::RankPMethod::NormalApproximation)
                .then_some(opts.continuity),
            log10_p: Some(r.log10_p),
            trim: None,
            permutations: None,
        }
    };
    Ok(match m {
        Method::StudentT | Method::WelchT => {
            let t = if m == Method::StudentT {
                tt::student_t(first, second, alt, level)?
            } else {
                tt::welch_t(first, second, alt, level)?
            };
            // Student and Welch share d (pooled SD) and g; compute them once.
            let d = d_once
                .get_or_init(|| fx::cohens_d(first, second, alt, level))
                .clone()?;
            let g = fx::hedges_from_d(&d, first.len() + second.len())?;
            t_result(
                m,
                t,
                vec![
                    effect(EffectKind::CohenD, &d),
                    effect(EffectKind::HedgesG, &g),
                ],
            )
        }
        Method::PairedT | Method::OneSampleT => {
            let t = tt::one_sample_t(diffs, reference, alt, level)?;
            let dz = fx::d_z(diffs, reference, alt, level)?;
            t_result(m, t, vec![effect(EffectKind::DZ, &dz)])
        }
        Method::MannWhitney => rank_result(
            m,
            mann_whitney_with(first, second, alt, level, opts)?,
            StatisticKind::U,
            EstimateKind::HodgesLehmannShift,
        ),
        Method::WilcoxonSignedRank => {
            // One-sample: the pseudo-median of outcome − reference, on the
            // same scale as the one-sample t's mean difference.
            let shifted: Vec<f64> = diffs.iter().map(|d| d - reference).collect();
            let r = wilcoxon_signed_rank_with(&shifted, alt, level, opts)?;
            rank_result(
                m,
                r,
                StatisticKind::WPlus,
                EstimateKind::HodgesLehmannEstimate,
            )
        }
        Method::BrunnerMunzel => {
            let r = stats::brunner_munzel::brunner_munzel_test(
                first,
                second,
                alt,
                level,
                settings.permutations,
                settings.seed,
            )?;
            let (statistic, df) = match r.bm.inference {
                stats::brunner_munzel::BmInference::TApproximation { statistic, df, .. } => {
                    (Some(statistic), Some(df))
                }
                stats::brunner_munzel::BmInference::ZeroVariance => (None, None),
            };
            // The rank-biserial correlation is 2θ − 1 (Cliff's δ), on the
            // same scale as the Mann–Whitney row's effect.
            let to_r = |v: f64| 2.0 * v - 1.0;
            TestResult {
                statistic,
                df,
                p_method: Some(r.p_detail.coarse()),
                p_detail: Some(r.p_detail),
                permutations: r.splits,
                ..t_shaped(
                    m,
                    (0.0, 0.0, r.p),
                    EstimateKind::ProbabilityOfSuperiority,
                    (r.bm.estimate, r.interval),
                    vec![EffectSize {
                        name: EffectKind::RankBiserial,
                        value: to_r(r.bm.estimate),
                        ci_low: r.interval.low.map(to_r),
                        ci_high: r.interval.high.map(to_r),
                    }],
                )
            }
        }
        Method::TrimmedT => {
            let (t, kind) = match design {
                Design::Independent => (
                    yuen::yuen(first, second, settings.trim, alt, level)?,
                    EstimateKind::TrimmedMeanDifference,
                ),
                Design::Paired => (
                    yuen::trimmed_t_one_sample(diffs, 0.0, settings.trim, alt, level)?,
                    EstimateKind::TrimmedMeanOfDifferences,
                ),
                Design::OneSample => (
                    yuen::trimmed_t_one_sample(diffs, reference, settings.trim, alt, level)?,
                    EstimateKind::TrimmedMeanDifference,
                ),
            };
            TestResult {
                trim: Some(t.trim),
                ..t_shaped(
                    m,
                    (t.statistic, t.df, t.p),
                    kind,
                    (t.estimate, t.interval),
                    vec![EffectSize {
                        name: EffectKind::RobustD,
                        value: t.effect,
                        ci_low: None,
                        ci_high: None,
                    }],
                )
            }
        }
        Method::Checked => {
            return Err(StatsError::BadParameter(
                "`checked` is resolved before a test runs",
            ))
        }
    })
}

/// The equivalence test that belongs to the method run: TOST on the
/// mean or trimmed mean difference, on the Hodges–Lehmann shift or
/// pseudo-median, or on the probability of superiority.
fn equivalence(
    method: Method,
    design: Design,
    alpha: f64,
    [low, high]: [f64; 2],
    v: &Values,
    settings: &Settings,
) -> std::result::Result<EquivalenceResult, StatsError> {
    use stats::{equivalence as eq, equivalence_rank as er, yuen};
    let Values {
        first,
        second,
        diffs,
        reference,
    } = *v;
    let level = 1.0 - 2.0 * alpha;
    Ok(match method {
        Method::StudentT | Method::WelchT => EquivalenceResult::from_tost(
            &eq::tost_two_sample(first, second, low, high, alpha, method == Method::WelchT)?,
            alpha,
            EstimateKind::MeanDifference,
        ),
        Method::PairedT | Method::OneSampleT => EquivalenceResult::from_tost(
            &eq::tost_one_sample(diffs, reference, low, high, alpha)?,
            alpha,
            EstimateKind::MeanDifference,
        ),
        Method::TrimmedT => {
            let (r, kind) = match design {
                Design::Independent => (
                    yuen::yuen(first, second, settings.trim, Alternative::TwoSided, level)?,
                    EstimateKind::TrimmedMeanDifference,
                ),
                Design::Paired => (
                    yuen::trimmed_t_one_sample(
                        diffs,
                        0.0,
                        settings.trim,
                        Alternative::TwoSided,
                        level,
                    )?,
                    EstimateKind::TrimmedMeanOfDifferences,
                ),
                Design::OneSample => (
                    yuen::trimmed_t_one_sample(
                        diffs,
                        reference,
                        settings.trim,
                        Alternative::TwoSided,
                        level,
                    )?,
                    EstimateKind::TrimmedMeanDifference,
                ),
            };
            EquivalenceResult::from_tost(&yuen::tost_trimmed(&r, low, high, alpha)?, alpha, kind)
        }
        Method::MannWhitney => EquivalenceResult::from_rank_tost(
            &er::tost_hodges_lehmann(first, second, low, high, alpha, &settings.rank)?,
            alpha,
            EstimateKind::HodgesLehmannShift,
        ),
        Method::WilcoxonSignedRank => {
            let shifted: Vec<f64> = diffs.iter().map(|d| d - reference).collect();
            EquivalenceResult::from_rank_tost(
                &er::tost_signed_rank(&shifted, low, high, alpha, &settings.rank)?,
                alpha,
                EstimateKind::HodgesLehmannEstimate,
            )
        }
        Method::BrunnerMunzel => EquivalenceResult::from_rank_tost(
            &er::tost_prob_superiority(first, second, low, high, alpha)?,
            alpha,
            EstimateKind::ProbabilityOfSuperiority,
        ),
        Method::Checked => {
            return Err(StatsError::BadParameter(
                "`checked` is resolved before a test runs",
            ))
        }
    })
}

/// Figure data: every value up to [`PLOT_POINTS`], otherwise evenly spaced
/// order statistics; a histogram over all values either way, and the
/// normal Q–Q positions of the points drawn. The points are sorted.
pub(crate) fn plot_set(label: &str, x: &[f64]) -> PlotData {
    let sorted = stats::sorted(x);
    let n = sorted.len();
    let (points, sampled) = if n <= PLOT_POINTS {
        (sorted.to_vec(), false)
    } else {
        let step = (n - 1) as f64 / (PLOT_POINTS - 1) as f64;
        (
            (0..PLOT_POINTS)
                .map(|i| sorted[((i as f64) * step).round() as usize])
                .collect(),
            true,
        )
    };
    let (bin_edges, bin_counts) = histogram(&sorted, bin_count(&sorted));
    let qq = qq_data(&points);
    PlotData {
        label: label.into(),
        points,
        sampled,
        bin_edges,
        bin_counts,
        qq,
    }
}

/// Normal quantiles at the plotting positions (i + ½)/n of sorted points,
/// and the line through their type-7 quartiles (common practice).
fn qq_data(sorted: &[f64]) -> QqData {
    use stats::dist::normal_quantile;
    let n = sorted.len();
    let theoretical = (0..n)
        .map(|i| normal_quantile((i as f64 + 0.5) / n as f64))
        .collect();
    let line = (n >= 2).then(|| {
        let (z1, z3) = (normal_quantile(0.25), normal_quantile(0.75));
        let (q1, q3) = (
            describe::quantile_sorted(sorted, 0.25),
            describe::quantile_sorted(sorted, 0.75),
        );
        let slope = (q3 - q1) / (z3 - z1);
        QqLine {
            intercept: q1 - slope * z1,
            slope,
        }
    });
    QqData { theoretical, line }
}

/// The number of histogram bins by the rule of Freedman & Diaconis (1981),
/// "On the histogram as a density estimator: L2 theory", *Zeitschrift für
/// Wahrscheinlichkeitstheorie und verwandte Gebiete*, 57, 453–476: bin
/// width 2·IQR·n^(−1/3). Where the IQR is zero (most values tied) the rule
/// of Sturges (1926), "The choice of a class interval", *Journal of the
/// American Statistical Association*, 21, 65–66, gives ⌈log₂ n⌉ + 1. At
/// least one bin, at most [`PLOT_BINS`].
pub(crate) fn bin_count(sorted: &[f64]) -> usize {
    let n = sorted.len();
    let (Some(&lo), Some(&hi)) = (sorted.first(), sorted.last()) else {
        return 1;
    };
    if n < 2 || hi <= lo {
        return 1;
    }
    let iqr = describe::quantile_sorted(sorted, 0.75) - describe::quantile_sorted(sorted, 0.25);
    let bins = if iqr > 0.0 {
        ((hi - lo) / (2.0 * iqr * (n as f64).powf(-1.0 / 3.0))).ceil()
    } else {
        (n as f64).log2().ceil() + 1.0
    };
    (bins as usize).clamp(1, PLOT_BINS)
}

fn histogram(sorted: &[f64], bins: usize) -> (Vec<f64>, Vec<u64>) {
    let (Some(&lo), Some(&hi)) = (sorted.first(), sorted.last()) else {
        return (Vec::new(), Vec::new());
    };
    if hi <= lo {
        return (vec![lo, hi], vec![sorted.len() as u64]);
    }
    let width = (hi - lo) / bins as f64;
    let edges: Vec<f64> = (0..=bins)
        .map(|i| if i == bins { hi } else { lo + width * i as f64 })
        .collect();
    let mut counts = vec![0u64; bins];
    for &v in sorted {
        let k = (((v - lo) / width) as usize).min(bins - 1);
        counts[k] += 1;
    }
    (edges, counts)
}

fn plot_data(
    h: &Hypothesis,
    labels: &[String; 2],
    first: &[f64],
    second: &[f64],
    diffs: &[f64],
) -> (Vec<PlotData>, Option<PairedPlot>) {
    match h.design {
        Design::Independent => (
            vec![plot_set(&labels[0], first), plot_set(&labels[1], second)],
            None,
        ),
        Design::OneSample => (vec![plot_set(&labels[0], first)], None),
        Design::Paired => {
            let n = first.len();
            let (pairs, sampled) = if n <= PLOT_PAIRS {
                (
                    first.iter().zip(second).map(|(a, b)| [*a, *b]).collect(),
                    false,
                )
            } else {
                let step = n as f64 / PLOT_PAIRS as f64;
                (
                    (0..PLOT_PAIRS)
                        .map(|i| {
                            let k = ((i as f64) * step) as usize;
                            [first[k], second[k]]
                        })
                        .collect(),
                    true,
                )
            };
            (
                vec![plot_set("difference", diffs)],
                Some(PairedPlot { pairs, sampled }),
            )
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn bins_follow_freedman_diaconis() {
        // 1..=23: IQR (type 7) = 17.5 − 6.5 = 11, width 2·11·23^(−1/3) ≈ 7.74,
        // range 22 → ⌈2.84⌉ = 3 bins (worked by hand from Freedman &
        // Diaconis 1981; numpy's `histogram_bin_edges(bins="fd")` documents
        // the same width).
        let x: Vec<f64> = (1..=23).map(f64::from).collect();
        assert_eq!(bin_count(&x), 3);
        let (edges, counts) = histogram(&x, bin_count(&x));
        assert_eq!(edges.len(), 4);
        assert_eq!(counts.iter().sum::<u64>(), 23);
    }

    #[test]
    fn tied_quartiles_fall_back_to_sturges() {
        // Sturges (1926): ⌈log₂ 16⌉ + 1 = 5.
        let mut x = vec![2.0; 14];
        x.push(0.0);
        x.push(9.0);
        x.sort_by(f64::total_cmp);
        assert_eq!(bin_count(&x), 5);
        assert_eq!(bin_count(&[1.0]), 1);
    }
}
