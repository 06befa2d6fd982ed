//! The preregistration document, rendered from a lock.
//!
//! It states, before any data are analysed, what will be compared, each
//! hypothesis in words and as formulas, how the test is chosen, who is
//! excluded, how many units are planned, and the lock itself. Everything
//! comes from the locked plan, so the document cannot say more than the
//! lock holds.

use super::markdown::{escape, escape_paragraphs};
use super::view::apa;
use super::view::sentence::method_name;
use super::{md, page, render_template, PlanDoc};
use crate::error::Result;
use crate::lock::LockFile;
use crate::plan::{Comparison, Design, ExcludeKind, Hypothesis, Method};
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
                Some(pl) => format!(
                    "{}: {}",
                    escape(&h.id),
                    super::view::planning::planned_sentence(pl, h.design, p.alpha, h.alternative)
                ),
                None => format!("{}: not stated in the plan.", escape(&h.id)),
            })
        })
        .collect();
    let ctx = minijinja::context! {
        title => p.title.clone(),
        authors => p.authors.join(", "),
        summary => p.summary.as_deref().map(|s| md(escape_paragraphs(s))),
        data_path => p.data.path.clone(),
        compared => p.hypotheses.iter().map(|h| md(compared(h))).collect::<Vec<_>>(),
        hypotheses => p.hypotheses.iter().map(|h| hypothesis(h, p.confidence)).collect::<Vec<_>>(),
        choice => p.hypotheses.iter().map(|h| md(choice(h, p.check_alpha))).collect::<Vec<_>>(),
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
        sizes => sizes,
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
        Comparison::Reference { reference } => ("the sample".into(), apa::two(*reference)),
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
    let (delta, legend) = match (h.design, rank) {
        (Design::Independent, false) => ("μ₁ − μ₂".to_string(), format!("μ₁ is the mean of {a} and μ₂ the mean of {b}")),
        (Design::Independent, true) => ("Δ".into(), format!("Δ is the shift in location of {a} relative to {b} (how far the values of {a} sit above those of {b})")),
        (Design::Paired, false) => ("μ_D".into(), format!("μ_D is the mean of the differences {a} − {b}")),
        (Design::Paired, true) => ("Δ".into(), format!("Δ is the centre (pseudo-median) of the differences {a} − {b}")),
        (Design::OneSample, false) => (format!("μ − {b}"), format!("μ is the mean of {}", outcome(h))),
        (Design::OneSample, true) => (format!("Δ − {b}"), format!("Δ is the centre (pseudo-median) of {}", outcome(h))),
    };
    let mut lines = vec![md(format!("**{}:** {}", escape(&h.id), escape(&h.claim)))];
    match h.equivalence {
        Some([low, high]) => {
            let (l, u) = (apa::two(low), apa::two(high));
            lines.push(md(format!("Null: {delta} ≤ {l} or {delta} ≥ {u}")));
            lines.push(md(format!("Alternative: {l} < {delta} < {u}")));
            lines.push(md(format!("In words: the difference lies inside the bounds {l} to {u}{}, shown by two one-sided tests; {legend}.", units(h))));
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
            lines.push(md(format!("Null: {delta} {h0} 0")));
            lines.push(md(format!("Alternative: {delta} {h1} 0")));
            lines.push(md(format!("Direction: {words}; {legend}.")));
        }
    }
    if h.method == Method::Checked {
        lines.push(md("If the checks choose the rank test, the same hypotheses are read as a shift in location rather than a difference in means.".to_string()));
    }
    lines
}

fn units(h: &Hypothesis) -> String {
    h.units
        .as_deref()
        .map(|u| format!(" {}", escape(u)))
        .unwrap_or_default()
}

/// The preregistered conventions of the rank tests, in words, for any
/// hypothesis whose test is or may be a rank test.
fn rank_rules(h: &Hypothesis) -> String {
    if !(h.method.is_rank() || h.method == Method::Checked) {
        return String::new();
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
    format!("{zeros}{continuity}")
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
    match h.design {
        Design::Independent => format!(
            "{id}: Shapiro–Wilk on each group and Brown–Forsythe on the spread, each judged at α = {a}. If normality is rejected in either group → Mann–Whitney *U* test; if normality holds and the spread differs → Welch's *t* test; if both hold → Student's *t* test; if a check cannot run (too few values) → Welch's *t* test."
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
