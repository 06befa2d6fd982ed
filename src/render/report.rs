//! The report's context: every number already worded, every plan text
//! either escaped or left for the template's auto-escaping.
//!
//! The template decides the layout; this module decides the words. One
//! context feeds `report.md.j2`; the HTML is that Markdown converted.

use super::apa::{self, sym, two};
use super::figures::{self, Figure};
use super::markdown::escape;
use super::sentence::{self, method_name};
use super::{md, page, render_template, Rendered};
use crate::error::Result;
use crate::results::{Branch, Decision, HypothesisResult, LockState, Results};
use minijinja::{Environment, Value};
use serde::Serialize;
use std::collections::BTreeMap;

#[derive(Serialize)]
struct GlanceRow {
    id: String,
    claim: String,
    method: Value,
    difference: Value,
    effect: Value,
    p: Value,
    verdict: String,
}

#[derive(Serialize)]
struct Hyp {
    id: String,
    claim: String,
    descriptives: Vec<Value>,
    checks: Vec<Value>,
    rule: Value,
    test: Vec<Value>,
    size: Vec<Value>,
    planning: Option<Value>,
    sentence: Value,
    robustness: Vec<Vec<Value>>,
    figures: BTreeMap<String, FigureCtx>,
    rows: Vec<Vec<Value>>,
    row_groups: [String; 2],
}

#[derive(Serialize)]
struct FigureCtx {
    number: usize,
    file: String,
    title: String,
    alt: String,
    note: String,
}

/// Renders the report.
pub(super) fn render(r: &Results, env: &Environment<'static>) -> Result<Rendered> {
    let mut all_figures: Vec<Figure> = Vec::new();
    let mut hyps = Vec::new();
    let mut used_stems = Vec::new();
    for (i, h) in r.hypotheses.iter().enumerate() {
        let stem = figures::stem(&h.id, i, &used_stems);
        used_stems.push(stem.clone());
        let figs = figures::for_hypothesis(h, &stem);
        let mut fctx = BTreeMap::new();
        for f in figs {
            all_figures.push(f);
            let f = all_figures.last().expect("just pushed");
            fctx.insert(
                f.role.to_string(),
                FigureCtx {
                    number: all_figures.len(),
                    file: f.file.clone(),
                    title: f.title.clone(),
                    alt: f.alt.clone(),
                    note: f.desc.clone(),
                },
            );
        }
        hyps.push(hypothesis(r, h, fctx));
    }
    let glance: Vec<GlanceRow> = r.hypotheses.iter().map(|h| glance(r, h)).collect();
    let p_header = match sentence::correction_name(sentence::applied_correction(r)) {
        Some(c) => format!("p ({c})"),
        None => "p".into(),
    };
    let ctx = minijinja::context! {
        title => r.plan.title.clone(),
        status => md(status(r)),
        changes => r.changes.iter().map(|c| vec![c.field.clone(), c.locked.clone(), c.current.clone()]).collect::<Vec<_>>(),
        deviations => r.deviations.iter().map(|d| vec![d.date.clone(), d.change.clone(), d.reason.clone()]).collect::<Vec<_>>(),
        lock_state => match r.lock { LockState::AsLocked => "as-locked", LockState::Deviates => "deviates", LockState::Unlocked => "unlocked" },
        p_header => md(p_header),
        glance => Value::from_serialize(&glance),
        hypotheses => Value::from_serialize(&hyps),
        data => Value::from_serialize(&r.data),
        data_notes => data_notes(r).into_iter().map(md).collect::<Vec<_>>(),
        provenance => provenance(r),
        command => md(code_block(&r.command)),
    };
    let report_md = render_template(env, "report.md.j2", ctx)?;
    let svgs: BTreeMap<String, String> = all_figures
        .iter()
        .map(|f| (f.file.clone(), f.svg.clone()))
        .collect();
    let report_html = page(
        env,
        "report.html.j2",
        &r.plan.title,
        &report_md,
        &svgs,
        &provenance_meta(r),
    )?;
    Ok(Rendered {
        report_md,
        report_html,
        figures: all_figures.into_iter().map(|f| (f.file, f.svg)).collect(),
    })
}

fn date_of(t: &str) -> &str {
    t.get(..10).unwrap_or(t)
}

fn status(r: &Results) -> String {
    let locked = r
        .lock_record
        .as_ref()
        .map(|l| format!(" (locked {})", escape(date_of(&l.locked_at))))
        .unwrap_or_default();
    let mut s = match r.lock {
        LockState::AsLocked => format!("**Ran as locked**{locked}."),
        LockState::Deviates => format!(
            "**Ran with deviations from the lock**{locked}: {} field(s) differ from the locked plan; see *Changes since the lock*.",
            r.changes.len()
        ),
        LockState::Unlocked => "**Not preregistered**: this analysis ran without a lock, so nothing shows it was planned before the data were seen.".into(),
    };
    if let Some(l) = &r.lock_record {
        if !l.intact {
            s.push_str(
                " The lock file does not match its own hash: it was edited after it was written.",
            );
        }
        s.push(' ');
        s.push_str(&match &l.witness {
            crate::witness::Witness::Committed { commit, date } => format!(
                "Outside record: the lock was first committed to git in `{}` on {}.",
                escape(&commit[..commit.len().min(12)]),
                escape(date_of(date))
            ),
            crate::witness::Witness::NotCommitted => {
                "Outside record: the lock is not committed to git yet, so only its own date vouches for it.".into()
            }
            crate::witness::Witness::NoGit => {
                "Outside record: none; the analysis is not in a git work tree.".into()
            }
        });
    }
    s
}

fn data_notes(r: &Results) -> Vec<String> {
    let mut notes = Vec::new();
    if let Some(l) = &r.lock_record {
        if l.data_existed {
            notes.push("The data file already existed when the plan was locked.".to_string());
            if let Some(h) = &l.data_sha256 {
                if *h != r.data.sha256 {
                    notes.push("The data file has changed since the lock: its SHA-256 then differs from the one read now.".into());
                }
            }
        } else {
            notes.push("The data file did not exist yet when the plan was locked.".into());
        }
    }
    if r.data.outside_plan_folder {
        notes.push("The data file lies outside the analysis file's folder.".into());
    }
    notes
}

fn verdict(h: &HypothesisResult) -> &'static str {
    match (h.equivalence.is_some(), h.decision) {
        (true, Decision::Reject) => "equivalent within the bounds",
        (true, Decision::Retain) => "not shown equivalent",
        (false, Decision::Reject) => "supported",
        (false, Decision::Retain) => "not supported",
    }
}

fn units(h: &HypothesisResult) -> String {
    h.units
        .as_deref()
        .map(|u| format!(" {}", escape(u)))
        .unwrap_or_default()
}

fn glance(r: &Results, h: &HypothesisResult) -> GlanceRow {
    let e = &h.estimate;
    let fx = &h.effect;
    let effect = sentence::effect(fx, e.confidence);
    let p = if sentence::applied_correction(r) == crate::stats::multiplicity::Correction::None {
        h.p
    } else {
        h.p_adjusted
    };
    let p = match &h.equivalence {
        Some(eq) => format!("{} (equivalence)", apa::p_number(eq.p)),
        None => apa::p_number(p),
    };
    GlanceRow {
        id: h.id.clone(),
        claim: h.claim.clone(),
        method: md(method_name(&h.method)),
        difference: md(format!(
            "{}{} {}",
            two(e.value),
            units(h),
            apa::bounds(e.ci_low, e.ci_high, two)
        )),
        effect: md(effect.replace(", 95% CI", "").replacen(
            &format!(", {} CI", apa::level(e.confidence)),
            "",
            1,
        )),
        p: md(p),
        verdict: verdict(h).into(),
    }
}

fn hypothesis(r: &Results, h: &HypothesisResult, figures: BTreeMap<String, FigureCtx>) -> Hyp {
    let descriptives = h
        .groups
        .iter()
        .map(|g| {
            md(format!(
                "| {} | {} | {} | {} | {} | {} to {} | {} to {} |",
                escape(&g.label),
                g.n,
                two(g.mean),
                g.sd.map(two).unwrap_or_else(|| "—".into()),
                two(g.median),
                two(g.q1),
                two(g.q3),
                two(g.min),
                two(g.max)
            ))
        })
        .collect();
    let robustness = h
        .robustness
        .iter()
        .map(|t| {
            vec![
                md(method_name(&t.method)),
                md(sentence::statistic(t)),
                md(apa::p_number(t.p)),
                md(format!(
                    "{}{} {}",
                    two(t.estimate.value),
                    units(h),
                    apa::bounds(t.estimate.ci_low, t.estimate.ci_high, two)
                )),
                md(t.effects
                    .first()
                    .map(|e| sentence::effect(e, t.estimate.confidence))
                    .unwrap_or_else(|| "—".into())),
            ]
        })
        .collect();
    Hyp {
        id: h.id.clone(),
        claim: h.claim.clone(),
        descriptives,
        checks: checks(h),
        rule: md(rule(r, h)),
        test: test_lines(r, h),
        size: size_lines(h),
        planning: h
            .planning
            .as_ref()
            .map(|p| md(planning_paragraph(h, p, r.plan.alpha))),
        sentence: md(sentence::one_sentence(h, sentence::applied_correction(r))),
        robustness,
        figures,
        rows: rows(h),
        row_groups: h.labels.clone(),
    }
}

fn checks(h: &HypothesisResult) -> Vec<Value> {
    let c = &h.checks;
    let mut out = Vec::new();
    if !c.normality.is_empty() {
        let parts: Vec<String> = c
            .normality
            .iter()
            .map(|n| match (n.w, n.p, &n.not_run) {
                (Some(w), Some(p), _) => format!(
                    "{} (*n* = {}): {} = {}, {}",
                    escape(&n.label),
                    n.n,
                    sym("W"),
                    apa::bounded(w, 2),
                    apa::p_clause(p)
                ),
                (_, _, Some(why)) => format!("{}: not run ({})", escape(&n.label), escape(why)),
                _ => format!("{}: not run", escape(&n.label)),
            })
            .collect();
        let whose = if h.design == "independent" {
            "each group"
        } else {
            "the differences"
        };
        out.push(md(format!("Shapiro–Wilk, {whose}: {}.", parts.join("; "))));
    }
    for s in &c.spread {
        let name = match s.method.as_str() {
            "brown-forsythe" => "Brown–Forsythe (spread around the medians)",
            "levene" => "Levene (spread around the means)",
            other => other,
        };
        let body = match (s.f, s.df1, s.df2, s.p, &s.not_run) {
            (Some(f), Some(d1), Some(d2), Some(p), _) => format!(
                "{}({}, {}) = {}, {}",
                sym("F"),
                apa::df(d1, false),
                apa::df(d2, d2.fract() != 0.0),
                two(f),
                apa::p_clause(p)
            ),
            (_, _, _, _, Some(why)) => format!("not run ({})", escape(why)),
            _ => "not run".into(),
        };
        out.push(md(format!("{}: {body}.", escape(name))));
    }
    out
}

fn rule(r: &Results, h: &HypothesisResult) -> String {
    let chosen = method_name(&h.method);
    let alpha = apa::bounded(h.checks.check_alpha, 2);
    let tail = if r.lock == LockState::Unlocked {
        ""
    } else {
        ", as preregistered"
    };
    let both = if h.design == "independent" {
        "in both groups"
    } else {
        "for the differences"
    };
    match h.checks.branch {
        None => format!(
            "The plan fixed the method ({chosen}); the checks are shown for information and changed nothing."
        ),
        Some(Branch::NormalEqualSpread) => {
            let spread = if h.design == "independent" { ", and the spread did not differ" } else { "" };
            format!("Judged at α = {alpha}: normality held {both}{spread} → {chosen}{tail}.")
        }
        Some(Branch::NormalUnequalSpread) => {
            format!("Judged at α = {alpha}: normality held {both}, spread differed → {chosen}{tail}.")
        }
        Some(Branch::NotNormal) => format!("Judged at α = {alpha}: normality was rejected → {chosen}{tail}."),
        Some(Branch::CheckNotRun) => format!(
            "A check could not run (too few values), so the rule fell back to {chosen}{tail}."
        ),
    }
}

fn test_lines(r: &Results, h: &HypothesisResult) -> Vec<Value> {
    let planned = if h.method_planned == h.method {
        String::new()
    } else {
        format!(" (planned: {})", method_name(&h.method_planned))
    };
    let test_line = match &h.equivalence {
        // The verdict rests on the two one-sided tests below; the ordinary
        // test of a difference is shown with its own p, and says so.
        Some(_) => format!(
            "Test of any difference (for information; the verdict rests on the equivalence tests): {}, {}.",
            sentence::statistic(&h.test),
            apa::p_clause(h.test.p)
        ),
        None => format!(
            "{}, {}.",
            sentence::statistic(&h.test),
            sentence::p_of(h, sentence::applied_correction(r))
        ),
    };
    let mut out = vec![
        md(format!("Method used: {}{planned}.", method_name(&h.method))),
        md(test_line),
    ];
    if let Some(pm) = h.p_method {
        let how = match pm {
            crate::stats::PMethod::Exact => {
                "is exact, from the permutation distribution of the statistic"
            }
            crate::stats::PMethod::NormalApproximation => {
                "is from the normal approximation, corrected for ties and continuity"
            }
        };
        out.push(md(format!("{} {how}.", sym("p"))));
    }
    if let Some(z) = h.test.zeros_dropped.filter(|z| *z > 0) {
        out.push(md(format!(
            "{z} zero difference(s) were dropped before ranking."
        )));
    }
    if let Some(name) = sentence::correction_method(sentence::applied_correction(r)) {
        out.push(md(format!(
            "Unadjusted {}; adjusted across the {} hypotheses of this plan ({name}).",
            apa::p_clause(h.p),
            r.hypotheses.len(),
        )));
    }
    if let Some(eq) = &h.equivalence {
        out.push(md(format!(
            "Equivalence (two one-sided tests, bounds {} to {}{}): against the lower bound {}({}) = {}, {}; against the upper bound {}({}) = {}, {}; the equivalence {} is the larger of the two, {}.",
            two(eq.low), two(eq.high), units(h),
            sym("t"), apa::df(eq.df, h.method == "welch-t"), two(eq.t_lower), apa::p_clause(eq.p_lower),
            sym("t"), apa::df(eq.df, h.method == "welch-t"), two(eq.t_upper), apa::p_clause(eq.p_upper),
            sym("p"), apa::p_number(eq.p),
        )));
    }
    out.push(md(format!(
        "Judged at α = {}: **{}**.",
        apa::bounded(r.plan.alpha, 2),
        verdict(h)
    )));
    out
}

fn size_lines(h: &HypothesisResult) -> Vec<Value> {
    let mut out = vec![md(capital(&sentence::estimate(
        &h.estimate,
        h.units.as_deref(),
    )))];
    for e in &h.test.effects {
        out.push(md(capital(&sentence::effect(e, h.estimate.confidence))));
    }
    if let Some(eq) = &h.equivalence {
        out.push(md(format!(
            "For equivalence: {} of the difference {}.",
            apa::level(eq.ci_level),
            apa::bounds(Some(eq.ci_low), Some(eq.ci_high), two)
        )
        .replace("% of", "% CI of")));
    }
    out
}

fn capital(s: &str) -> String {
    let mut c = s.chars();
    match c.next() {
        Some('*') => s.to_string(),
        Some(f) => f.to_uppercase().chain(c).collect(),
        None => String::new(),
    }
}

fn rows(h: &HypothesisResult) -> Vec<Vec<Value>> {
    let f = &h.rows;
    let n = |v: usize| md(v.to_string());
    let mut out = vec![vec![md("Read"), n(f.read[0]), n(f.read[1])]];
    for s in &f.rules {
        out.push(vec![
            md(format!("Excluded: {}", escape(&s.reason))),
            n(s.first),
            n(s.second),
        ]);
    }
    out.push(vec![md("Missing values"), n(f.missing[0]), n(f.missing[1])]);
    if h.design == "paired" {
        out.push(vec![
            md(format!(
                "Dropped: the other measurement of the unit was missing or excluded ({} incomplete pairs)",
                f.incomplete_pairs
            )),
            n(f.unpaired[0]),
            n(f.unpaired[1]),
        ]);
    }
    if f.other_levels + f.no_group > 0 {
        out.push(vec![
            md(format!(
                "Not in either group: {} rows of other levels, {} with no group label (ignored)",
                f.other_levels, f.no_group
            )),
            md("–"),
            md("–"),
        ]);
    }
    out.push(vec![
        md("**Analysed**"),
        md(format!("**{}**", f.analysed[0])),
        md(format!("**{}**", f.analysed[1])),
    ]);
    out
}

fn provenance(r: &Results) -> Vec<Value> {
    let mut out = vec![
        md(format!("Tool: {} {}", escape(&r.tool), escape(&r.version))),
        md(format!("Analysis file: {}", escape(&r.analysis_file))),
        md(format!("Plan SHA-256: `{}`", r.plan_sha256)),
    ];
    match &r.lock_record {
        Some(l) => {
            out.push(md(format!("Lock SHA-256: `{}`", l.sha256)));
            out.push(md(format!(
                "Locked at: {} with attest {}",
                escape(&l.locked_at),
                escape(&l.locked_with)
            )));
            for e in &l.evidence {
                out.push(md(format!("{}: {}", escape(&e.file), escape(&e.shows))));
            }
        }
        None => out.push(md("Lock: none")),
    }
    out.push(md(format!("Data SHA-256: `{}`", r.data.sha256)));
    out.push(md(format!("Seed: {}", r.plan.seed)));
    out
}

/// A fenced code block that no backtick run inside `text` can close.
fn code_block(text: &str) -> String {
    let longest = text.split(|c| c != '`').map(str::len).max().unwrap_or(0);
    let fence = "`".repeat(longest.max(2) + 1);
    format!("{fence}\n{}\n{fence}", text.replace('\n', " "))
}

/// Planned against achieved size, and the sensitivity of the achieved sample.
fn planning_paragraph(
    h: &HypothesisResult,
    p: &crate::results::PlanningOutcome,
    alpha: f64,
) -> String {
    let planned = super::planning::planned_sentence(&p.planned, &h.design, alpha, h.alternative);
    let achieved = match p.achieved.as_slice() {
        [a, b] => format!("{a} and {b}"),
        [a] => a.to_string(),
        _ => String::new(),
    };
    let planned_n = p
        .planned
        .n
        .iter()
        .map(|n| n.to_string())
        .collect::<Vec<_>>()
        .join(" and ");
    let mut s =
        format!("Sample size. The plan said: {planned} Planned {planned_n}; analysed {achieved}.");
    if let Some(d) = p.sensitivity {
        let sym = if h.design == "paired" { "*d_z*" } else { "*d*" };
        s.push_str(&format!(
            " With the sample analysed, the smallest effect the t-test detects with {} power is {sym} = {}.",
            apa::level(p.planned.power_target),
            apa::two(d.abs())
        ));
    }
    s
}

/// Provenance as machine-readable `<meta>` tags of the HTML report (data,
/// not code: the page stays free of scripts).
fn provenance_meta(r: &Results) -> Vec<(&'static str, String)> {
    let state = match r.lock {
        crate::results::LockState::AsLocked => "as-locked",
        crate::results::LockState::Deviates => "deviates",
        crate::results::LockState::Unlocked => "unlocked",
    };
    let mut m = vec![
        ("attest-version", r.version.clone()),
        ("attest-plan-sha256", r.plan_sha256.clone()),
        ("attest-lock-state", state.to_string()),
    ];
    if let Some(l) = &r.lock_record {
        m.push(("attest-lock-sha256", l.sha256.clone()));
        m.push(("attest-locked-at", l.locked_at.clone()));
    }
    m.push(("attest-data-path", r.data.path.clone()));
    m.push(("attest-data-sha256", r.data.sha256.clone()));
    m.push(("attest-command", r.command.clone()));
    m
}
