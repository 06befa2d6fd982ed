//! The preregistration document, rendered from a lock.
//!
//! It is organised around the decisions the plan commits to, one block
//! per hypothesis: the claim in words and as formulas; the rule, written
//! as an if–then, that says what result will count as support; what can
//! change the rule (the checks and where each sends the test, the
//! exclusions with their reasons); and what is fixed in numbers. It ends
//! with what would make the analysis change and with the seal. A reader
//! sees at once what would count as support and what would not, rather
//! than answering a list of questions in a set order. Everything comes
//! from the locked plan, so the document cannot say more than the lock
//! holds.

use super::markdown::{escape, escape_paragraphs};
use super::view::apa;
use super::view::sentence::method_name;
use super::{md, page, render_template, PlanDoc};
use crate::error::Result;
use crate::lock::LockFile;
use crate::plan::{Comparison, Design, ExcludeKind, Hypothesis, Method, RankFallback};
use crate::stats::rank_tests::ZeroRule;
use crate::stats::Alternative;
use minijinja::{Environment, Value};

/// Renders plan.md and plan.html.
pub(super) fn render(
    lock: &LockFile,
    planned: &[Option<crate::analysis::planning::Planned>],
    env: &Environment<'static>,
) -> Result<PlanDoc> {
    let p = &lock.plan;
    let sizes: Vec<Value> = p
        .hypotheses
        .iter()
        .enumerate()
        .map(|(i, h)| {
            md(match planned.get(i).and_then(Option::as_ref) {
                Some(pl) => {
                    super::view::planning::planned_sentence(pl, h.design, p.alpha, h.alternative)
                }
                None => "not stated in the plan.".to_string(),
            })
        })
        .collect();
    let blocks: Vec<Value> = p
        .hypotheses
        .iter()
        .zip(&sizes)
        .map(|(h, size)| {
            let mut lines = hypothesis(h, p.confidence);
            lines.remove(0);
            // Inside its own block a line needs no hypothesis id in front.
            let prefix = format!("{}: ", escape(&h.id));
            let bare = |s: String| md(s.strip_prefix(&prefix).map(str::to_string).unwrap_or(s));
            minijinja::context! {
                head => md(format!("{}: {}", escape(&h.id), escape(&h.claim))),
                compared => bare(super::view::sentence::capitalise(&compared(h).replacen(&prefix, "", 1))),
                claim => lines,
                rule => md(if_then(h, p)),
                choice => bare(choice(h, p.check_alpha)),
                numbers => md(numbers(h, p)),
                size => size.clone(),
            }
        })
        .collect();
    let ctx = minijinja::context! {
        title => p.title.clone(),
        authors => p.authors.join(", "),
        summary => p.summary.as_deref().map(|s| md(escape_paragraphs(s))),
        data_path => p.data.path.clone(),
        data_source => p.data.source.map(|e| md(format!(
            "the rows that this query returns on {}: {}",
            e.display(),
            escape(p.data.query.as_deref().unwrap_or_default())
        ))),
        blocks => blocks,
        thresholds => md(format!(
            "Each hypothesis is judged at α = {}; intervals are {} intervals; {}. Seed for anything resampled: {}.",
            apa::bounded(p.alpha, 3).trim_end_matches('0'),
            apa::level(p.confidence),
            super::view::sentence::correction_method(p.correction)
                .map(|m| format!("p values are adjusted across the hypotheses with {m}"))
                .unwrap_or_else(|| "p values are not adjusted for multiple hypotheses".into()),
            p.seed
        )),
        exclusions => p.exclude.iter().map(|r| md(exclusion(r))).collect::<Vec<_>>(),
        lock_hash => lock.plan_sha256.clone(),
        lock_content => lock.content_sha256.clone(),
        locked_at => lock.locked_at.clone(),
        locked_with => lock.version.clone(),
        data_existed => lock.data.existed,
        data_sha256 => lock.data.sha256.clone(),
    };
    let plan_md = render_template(env, "plan.md.j2", ctx)?;
    let plan_html = page(
        env,
        "plan.html.j2",
        &p.title,
        &plan_md,
        &Default::default(),
        &[
            ("attest-version", lock.version.clone()),
            ("attest-plan-sha256", lock.plan_sha256.clone()),
            ("attest-lock-content-sha256", lock.content_sha256.clone()),
            ("attest-locked-at", lock.locked_at.clone()),
        ],
    )?;
    Ok(PlanDoc { plan_md, plan_html })
}

fn labels(h: &Hypothesis) -> (String, String) {
    match &h.comparison {
        Comparison::Groups { levels, .. } | Comparison::PairedRows { levels, .. } => {
            (escape(&levels[0]), escape(&levels[1]))
        }
        Comparison::PairedColumns { first, second } => (escape(first), escape(second)),
        Comparison::Reference { reference } => ("the sample".into(), apa::stated(*reference)),
    }
}

fn outcome(h: &Hypothesis) -> String {
    escape(
        h.label
            .as_deref()
            .or(h.outcome.as_deref())
            .unwrap_or("the outcome"),
    )
}

fn compared(h: &Hypothesis) -> String {
    let (a, b) = labels(h);
    let id = escape(&h.id);
    let o = outcome(h);
    match &h.comparison {
        Comparison::Groups { group, .. } => format!(
            "{id}: {o} in two independent groups, {a} and {b} (column {}).",
            escape(group)
        ),
        Comparison::PairedColumns { .. } => format!("{id}: {o} measured twice on the same units, as {a} and {b} (one row per unit)."),
        Comparison::PairedRows { pair_by, .. } => format!(
            "{id}: {o} measured twice on the same units, {a} and {b} (one row per measurement, units identified by {}).",
            escape(pair_by)
        ),
        Comparison::Reference { .. } => format!("{id}: {o} in one sample, against the reference value {b}."),
    }
}

fn hypothesis(h: &Hypothesis, _confidence: f64) -> Vec<Value> {
    let (a, b) = labels(h);
    let rank = h.method.is_rank();
    let (delta, legend) = match (h.design, h.method) {
        (Design::Independent, Method::BrunnerMunzel) => ("θ".to_string(), format!("θ is the probability that a value of {a} exceeds a value of {b}, with ties counting half (½ when neither group tends to have the larger values)")),
        (Design::Independent, Method::TrimmedT) => ("μt₁ − μt₂".to_string(), format!("μt₁ and μt₂ are the {}% trimmed means of {a} and {b}", trim_share(h))),
        (Design::Paired, Method::TrimmedT) => ("μt_D".to_string(), format!("μt_D is the {}% trimmed mean of the differences {a} − {b}", trim_share(h))),
        (Design::OneSample, Method::TrimmedT) => (format!("μt − {b}"), format!("μt is the {}% trimmed mean of {}", trim_share(h), outcome(h))),
        _ => match (h.design, rank) {
        (Design::Independent, false) => ("μ₁ − μ₂".to_string(), format!("μ₁ is the mean of {a} and μ₂ the mean of {b}")),
        (Design::Independent, true) => ("Δ".into(), format!("Δ is the shift in location of {a} relative to {b} (how far the values of {a} sit above those of {b})")),
        (Design::Paired, false) => ("μ_D".into(), format!("μ_D is the mean of the differences {a} − {b}")),
        (Design::Paired, true) => ("Δ".into(), format!("Δ is the centre (pseudo-median) of the differences {a} − {b}")),
        (Design::OneSample, false) => (format!("μ − {b}"), format!("μ is the mean of {}", outcome(h))),
        (Design::OneSample, true) => (format!("Δ − {b}"), format!("Δ is the centre (pseudo-median) of {}", outcome(h))),
        },
    };
    // The value of no difference: ½ for θ, 0 for every difference.
    let null = if h.method == Method::BrunnerMunzel {
        "½"
    } else {
        "0"
    };
    let mut lines = vec![md(format!("**{}:** {}", escape(&h.id), escape(&h.claim)))];
    match h.equivalence {
        Some([low, high]) => {
            let (l, u) = (apa::stated(low), apa::stated(high));
            lines.push(md(format!("Null: {delta} ≤ {l} or {delta} ≥ {u}")));
            lines.push(md(format!("Alternative: {l} < {delta} < {u}")));
            let (l, u) = if h.method == Method::BrunnerMunzel {
                (apa::bounded(low, 2), apa::bounded(high, 2))
            } else {
                (l, u)
            };
            let unit = if h.method == Method::BrunnerMunzel {
                String::new()
            } else {
                units(h)
            };
            lines.push(md(format!("In words: {delta} lies inside the bounds {l} to {u}{unit}, shown by two one-sided tests; {legend}.")));
        }
        None => {
            let (h0, h1, words) = match h.alternative {
                Alternative::TwoSided => (
                    "=",
                    "≠",
                    "the difference is not zero, in either direction".to_string(),
                ),
                Alternative::Greater => (
                    "≤",
                    ">",
                    format!(
                        "{a} is higher than {b}; a difference the other way counts as no support"
                    ),
                ),
                Alternative::Less => (
                    "≥",
                    "<",
                    format!(
                        "{a} is lower than {b}; a difference the other way counts as no support"
                    ),
                ),
            };
            lines.push(md(format!("Null: {delta} {h0} {null}")));
            lines.push(md(format!("Alternative: {delta} {h1} {null}")));
            lines.push(md(format!("Direction: {words}; {legend}.")));
        }
    }
    if h.method == Method::Checked {
        let reading = if h.design == Design::Independent
            && h.conventions.rank_fallback() == RankFallback::BrunnerMunzel
        {
            "as the probability that a value of the first group exceeds one of the second (null: ½) rather than a difference in means"
        } else {
            "as a shift in location rather than a difference in means"
        };
        lines.push(md(format!(
            "If the checks choose the rank test, the same hypotheses are read {reading}."
        )));
    }
    lines
}

/// The hypothesis's rule as an if–then: what result will count as
/// support, and what will not.
fn if_then(h: &Hypothesis, p: &crate::plan::Plan) -> String {
    let alpha = apa::bounded(p.alpha, 3);
    let alpha = alpha.trim_end_matches('0');
    let id = escape(&h.id);
    let test = match h.method {
        Method::Checked => "the test the checks choose".to_string(),
        // A name in the possessive ("Welch's t test") takes no article.
        m if method_name(m).contains("'s ") => method_name(m),
        m => format!("the {}", method_name(m)),
    };
    let adjusted = super::view::sentence::correction_method(p.correction)
        .filter(|_| p.hypotheses.len() > 1)
        .map(|m| format!(", after adjusting across the hypotheses with {m},"))
        .unwrap_or_default();
    let (a, b) = labels(h);
    match h.equivalence {
        Some([low, high]) => {
            // What the bounds are on: the method's estimate.
            let (what, lo, hi, unit) = match h.method {
                Method::BrunnerMunzel => (
                    "the probability of superiority θ",
                    apa::bounded(low, 2),
                    apa::bounded(high, 2),
                    String::new(),
                ),
                m => (
                    match m {
                        Method::MannWhitney => "the Hodges–Lehmann shift",
                        Method::WilcoxonSignedRank => "the Hodges–Lehmann estimate",
                        Method::TrimmedT => "the trimmed mean difference",
                        _ => "the difference",
                    },
                    apa::stated(low),
                    apa::stated(high),
                    units(h),
                ),
            };
            format!(
                "If the {} confidence interval of {what} (1 − 2α) lies wholly inside {lo} to {hi}{unit}, so that both one-sided tests give *p* below {alpha}, we will say {id} is supported: {what} is equivalent within the bounds. Otherwise we will say it is not shown equivalent; a difference that is merely not significant is not evidence of equivalence.",
                apa::level(1.0 - 2.0 * p.alpha),
            )
        }
        None => match h.alternative {
            Alternative::TwoSided => format!(
                "If the two-sided *p* of {test}{adjusted} is below {alpha}, we will say {id} is supported, in whichever direction the estimate lies. Otherwise we will say it is not supported, which does not show that there is no difference."
            ),
            Alternative::Greater | Alternative::Less => {
                let way = match (h.alternative == Alternative::Greater, h.method.is_rank()) {
                    (true, false) => "is higher",
                    (false, false) => "is lower",
                    (true, true) => "tends to be higher",
                    (false, true) => "tends to be lower",
                };
                format!(
                    "If the one-sided *p* of {test}{adjusted} is below {alpha}, so that {a} {way} than {b}, we will say {id} is supported. Otherwise we will say it is not supported, and if the estimate lies the other way we will say so; a difference in the other direction never counts as support."
                )
            }
        },
    }
}

/// What the plan fixes in numbers for one hypothesis.
fn numbers(h: &Hypothesis, p: &crate::plan::Plan) -> String {
    let alpha = apa::bounded(p.alpha, 3);
    let sided = match (h.equivalence, h.alternative) {
        (Some(_), _) => "two one-sided tests",
        (None, Alternative::TwoSided) => "two-sided",
        (None, _) => "one-sided",
    };
    format!(
        "α = {}, {sided}; intervals at {}; assumption checks at α = {}.",
        alpha.trim_end_matches('0'),
        apa::level(p.confidence),
        apa::bounded(p.check_alpha, 2),
    )
}

fn units(h: &Hypothesis) -> String {
    h.units
        .as_deref()
        .map(|u| format!(" {}", escape(u)))
        .unwrap_or_default()
}

/// The trimming proportion as a whole percentage.
fn trim_share(h: &Hypothesis) -> String {
    format!("{:.0}", h.conventions.trim() * 100.0)
}

/// The preregistered conventions of the rank and robust tests, in words,
/// for any hypothesis whose test (or a robustness check) uses them.
fn rank_rules(h: &Hypothesis) -> String {
    let mut out = String::new();
    if h.method.is_trimmed() {
        out.push_str(&format!(
            " The trimmed-mean *t* cuts {}% of the values from each end.",
            trim_share(h)
        ));
    } else if h.robustness && h.conventions.trim.is_some() {
        out.push_str(&format!(" The trimmed-mean *t* reported as a robustness check cuts {}% of the values from each end.", trim_share(h)));
    }
    let bm = h.method == Method::BrunnerMunzel
        || (h.method == Method::Checked
            && h.conventions.rank_fallback() == RankFallback::BrunnerMunzel);
    if bm || (h.design == Design::Independent && h.conventions.permutations.is_some()) {
        out.push_str(&format!(
            " Brunner–Munzel's *p* comes from the studentised permutation distribution when the smaller group has fewer than {} values and both together at most {} (every split when there are at most {n} of them, otherwise {n} random splits from the plan's seed), or when its variance estimate is 0; otherwise from Student's *t* with Satterthwaite's degrees of freedom.",
            crate::stats::brunner_munzel::PERMUTATION_BELOW,
            crate::stats::brunner_munzel::PERMUTATION_MAX_N,
            n = h.conventions.permutations(),
        ));
    }
    if !(h.method.is_rank() || h.method == Method::Checked) {
        return out;
    }
    let o = h.conventions.rank_options();
    let zeros = match (h.design, o.zeros) {
        (Design::Independent, _) => "",
        (_, ZeroRule::Drop) => " Zero differences are dropped before ranking (Wilcoxon's rule).",
        (_, ZeroRule::KeepInRanking) => {
            " Zero differences are ranked with the others and then left out of the sum of positive ranks (Pratt's rule)."
        }
    };
    let continuity = if o.continuity {
        " Where the rank test's *p* comes from the normal approximation, it carries a continuity correction of ½."
    } else {
        " Where the rank test's *p* comes from the normal approximation, it carries no continuity correction."
    };
    if h.method == Method::BrunnerMunzel {
        return out;
    }
    format!("{out}{zeros}{continuity}")
}

fn choice(h: &Hypothesis, check_alpha: f64) -> String {
    let rules = rank_rules(h);
    format!("{}{rules}", choice_words(h, check_alpha))
}

fn choice_words(h: &Hypothesis, check_alpha: f64) -> String {
    let id = escape(&h.id);
    let a = apa::bounded(check_alpha, 2);
    if h.method != Method::Checked {
        return format!(
            "{id}: {}, fixed in the plan; the checks are reported but decide nothing.",
            method_name(h.method)
        );
    }
    let fallback = match h.conventions.rank_fallback() {
        RankFallback::MannWhitney => method_name(Method::MannWhitney),
        RankFallback::BrunnerMunzel => method_name(Method::BrunnerMunzel),
    };
    match h.design {
        Design::Independent => format!(
            "{id}: Shapiro–Wilk on each group and Brown–Forsythe on the spread, each judged at α = {a}. If normality is rejected in either group → {fallback}; if normality holds and the spread differs → Welch's *t* test; if both hold → Student's *t* test; if a check cannot run (too few values) → Welch's *t* test."
        ),
        _ => format!(
            "{id}: Shapiro–Wilk on the differences, judged at α = {a}. If normality is rejected → Wilcoxon signed-rank test; otherwise, or if the check cannot run → {}.",
            if h.design == Design::Paired { "paired *t* test" } else { "one-sample *t* test" }
        ),
    }
}

fn exclusion(r: &crate::plan::ExcludeRule) -> String {
    let c = escape(&r.column);
    let what = match &r.rule {
        ExcludeKind::Range { below, above } => {
            let mut parts = Vec::new();
            if let Some(b) = below {
                parts.push(format!("below {}", apa::two(*b)));
            }
            if let Some(a) = above {
                parts.push(format!("above {}", apa::two(*a)));
            }
            format!("rows whose {c} lies {}", parts.join(" or "))
        }
        ExcludeKind::Values { values } => format!(
            "rows whose {c} is {}",
            values.iter().map(|v| format!("“{}”", escape(v))).collect::<Vec<_>>().join(", ")
        ),
        ExcludeKind::MedianDistance { limit, by } => format!(
            "rows whose {c} lies more than {} scaled median absolute deviations from the median{}",
            apa::two(*limit),
            by.as_deref().map(|b| format!(" of its {} group", escape(b))).unwrap_or_default()
        ),
        ExcludeKind::TukeyFences { limit, by } => format!(
            "rows whose {c} lies beyond the quartiles by more than {} times the interquartile range{}",
            apa::two(*limit),
            by.as_deref().map(|b| format!(" within its {} group", escape(b))).unwrap_or_default()
        ),
    };
    format!("{} — {}.", escape(&r.reason), what)
}
