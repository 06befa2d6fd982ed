//! The view: the typed results model turned into the words and numbers a
//! reader sees, once, for every output format.
//!
//! Everything a report says is decided here (with the APA number rules in
//! [`apa`], the sentences in [`sentence`] and the sample-size words in
//! [`planning`]); nothing here computes a statistic. Templates own the
//! layout and the table syntax: the view hands them cells, never rows.
//! Text from the plan (labels, claims, reasons) is either escaped here,
//! where it is mixed into Markdown the view wrote, or left for the
//! template's auto-escaping. Every renderer (Markdown, HTML, SVG, named
//! values) is fed the same [`ReportView`] next to the raw model.

pub(crate) mod apa;
pub(crate) mod deviations;
pub(crate) mod planning;
pub(crate) mod provenance;
pub(crate) mod sentence;

use self::apa::{sym, two};
use self::sentence::method_name;
use super::markdown::escape;
use crate::results::{
    Branch, Decision, Design, HypothesisResult, LockState, Method, Results, SpreadMethod,
};
use minijinja::Value;
use serde::Serialize;
use std::collections::BTreeMap;

/// Markdown the view wrote itself: inserted into templates as it is.
pub(crate) fn md(s: impl Into<String>) -> Value {
    Value::from_safe_string(s.into())
}

/// One row of the "At a glance" table, as cells.
#[derive(Serialize)]
pub(crate) struct GlanceRow {
    id: String,
    claim: String,
    method: Value,
    difference: Value,
    effect: Value,
    p: Value,
    verdict: String,
}

/// Everything said about one hypothesis.
#[derive(Serialize)]
pub(crate) struct HypothesisView {
    id: String,
    claim: String,
    /// The descriptives table: one list of cells per set.
    descriptives: Vec<Vec<Value>>,
    checks: Vec<Value>,
    rule: Value,
    test: Vec<Value>,
    size: Vec<Value>,
    planning: Option<Value>,
    sentence: Value,
    /// The robustness table: one list of cells per method.
    robustness: Vec<Vec<Value>>,
    /// The figures, by where the report places them.
    figures: BTreeMap<FigureRole, FigureView>,
    /// The rows-in-rows-out table: one list of cells per step.
    rows: Vec<Vec<Value>>,
    row_groups: [String; 2],
}

/// Where a figure sits in the report, and which drawing it is.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Serialize)]
#[serde(rename_all = "kebab-case")]
pub(crate) enum FigureRole {
    /// Each group's values (independent, one-sample).
    Groups,
    /// Each unit, before and after (paired).
    Pairs,
    /// Normal Q–Q plots.
    Qq,
    /// The histogram of paired differences.
    Differences,
    /// The estimate and its interval.
    Difference,
}

impl FigureRole {
    /// The file-name suffix and report key.
    pub(crate) fn as_str(self) -> &'static str {
        match self {
            FigureRole::Groups => "groups",
            FigureRole::Pairs => "pairs",
            FigureRole::Qq => "qq",
            FigureRole::Differences => "differences",
            FigureRole::Difference => "difference",
        }
    }
}

/// The words of one figure: what the SVG renderer writes into it and what
/// the report says around it.
#[derive(Clone, Debug, Serialize)]
pub(crate) struct FigureView {
    /// Index of the hypothesis in the results.
    #[serde(skip)]
    pub hypothesis: usize,
    /// Which drawing.
    #[serde(skip)]
    pub role: FigureRole,
    /// Figure number in the report.
    pub number: usize,
    /// File name, e.g. `figures/h1-groups.svg`.
    pub file: String,
    /// Element id stem inside the SVG, e.g. `h1-groups`.
    #[serde(skip)]
    pub id: String,
    /// The question it answers (the figure title).
    pub title: String,
    /// Short alternative text.
    pub alt: String,
    /// What is drawn (the figure note and the SVG's `<desc>`).
    pub note: String,
    /// Title of the value axis (plain text).
    #[serde(skip)]
    pub value_axis: String,
    /// Title of the other axis where it has one: the normal quantiles of a
    /// Q–Q plot, the counts of a histogram (plain text).
    #[serde(skip)]
    pub other_axis: String,
    /// Labels of the categories or panels drawn, in order (plain text).
    #[serde(skip)]
    pub categories: Vec<String>,
}

/// The whole report, worded.
#[derive(Serialize)]
pub(crate) struct ReportView {
    title: String,
    status: Value,
    rehearsal: Option<Value>,
    blinding: Vec<String>,
    not_computed: Vec<Vec<String>>,
    changes_table: Vec<Vec<String>>,
    both: Vec<Value>,
    changes: Vec<Vec<String>>,
    deviations: Vec<Vec<String>>,
    lock_state: LockState,
    p_header: Value,
    glance: Vec<GlanceRow>,
    hypotheses: Vec<HypothesisView>,
    data_notes: Vec<Value>,
    provenance: Vec<Value>,
    command: Value,
    /// Every figure, in report order.
    #[serde(skip)]
    pub figures: Vec<FigureView>,
    /// Provenance as machine-readable `<meta>` tags of the HTML report.
    #[serde(skip)]
    pub meta: Vec<(&'static str, String)>,
}

/// Words the whole report.
pub(crate) fn report(r: &Results) -> ReportView {
    let mut all_figures: Vec<FigureView> = Vec::new();
    let mut hyps = Vec::new();
    let mut used_stems = Vec::new();
    for (i, h) in r.hypotheses.iter().enumerate() {
        let stem = stem(&h.id, i, &used_stems);
        used_stems.push(stem.clone());
        let mut fctx = BTreeMap::new();
        for mut f in figures(h, i, &stem) {
            f.number = all_figures.len() + 1;
            fctx.insert(f.role, f.clone());
            all_figures.push(f);
        }
        hyps.push(hypothesis(r, h, fctx));
    }
    let p_header = match sentence::correction_name(r.correction_applied) {
        Some(c) => format!("p ({c})"),
        None => "p".into(),
    };
    ReportView {
        title: r.plan.title.clone(),
        status: md(status(r)),
        rehearsal: deviations::rehearsal_banner(r).map(md),
        blinding: deviations::blinding(r),
        not_computed: deviations::not_computed(r),
        changes_table: deviations::changes_table(r),
        both: deviations::both(r).into_iter().map(md).collect(),
        changes: r
            .changes
            .iter()
            .map(|c| vec![c.field.clone(), c.locked.clone(), c.current.clone()])
            .collect(),
        deviations: r
            .deviations
            .iter()
            .map(|d| vec![d.date.clone(), d.change.clone(), d.reason.clone()])
            .collect(),
        lock_state: r.lock,
        p_header: md(p_header),
        glance: r.hypotheses.iter().map(|h| glance(r, h)).collect(),
        hypotheses: hyps,
        data_notes: data_notes(r).into_iter().map(md).collect(),
        provenance: provenance(r),
        command: md(code_block(&r.command)),
        figures: all_figures,
        meta: provenance_meta(r),
    }
}

/// A file-name stem for a hypothesis id: lowercase letters, digits and
/// dashes; `h<n>` when nothing is left or the stem is taken.
pub(crate) fn stem(id: &str, index: usize, used: &[String]) -> String {
    let s: String = id
        .chars()
        .map(|c| {
            if c.is_ascii_alphanumeric() {
                c.to_ascii_lowercase()
            } else {
                '-'
            }
        })
        .collect();
    let s = s.trim_matches('-').to_string();
    if s.is_empty() || used.contains(&s) {
        format!("h{}", index + 1)
    } else {
        s
    }
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
            "**Ran with deviations from the lock**{locked}: {} differ from the locked plan; see *Changes since the lock*{}.",
            if r.changes.len() == 1 { "1 field".to_string() } else { format!("{} fields", r.changes.len()) },
            if r.as_locked.is_some() { ", and *As locked and as run* for both analyses" } else { "" }
        ),
        LockState::Unlocked if r.rehearsal.is_some() => "**Not locked yet**: a rehearsal comes before the lock; lock the plan once the rehearsal runs clean.".into(),
        LockState::Unlocked => "**Not preregistered**: this analysis ran without a lock, so nothing shows it was planned before the data were seen.".into(),
    };
    if let Some(l) = &r.lock_record {
        if !l.intact {
            s.push_str(
                " The lock file does not match its own hash: it was edited after it was written.",
            );
        }
        for w in provenance::witness_sentences(&l.witness) {
            s.push(' ');
            s.push_str(&escape(&w));
        }
    }
    if let Some(l) = &r.lock_record {
        if let Some(first) = l.rehearsals.first() {
            s.push_str(&format!(
                " Rehearsed on blinded data after the lock: {} (first {}).",
                if l.rehearsals.len() == 1 {
                    "once".to_string()
                } else {
                    format!("{} times", l.rehearsals.len())
                },
                escape(date_of(&first.at))
            ));
        }
    }
    if r.lock == LockState::AsLocked && !r.deviations.is_empty() {
        s.push_str(" Deviations are declared; see *Changes since the lock*.");
    }
    let contradicted = r
        .deviations
        .iter()
        .filter(|d| deviations::timing_conflict(r, d).is_some())
        .count();
    if contradicted > 0 {
        s.push_str(&format!(
            " **The record contradicts the timing {} claims**; see *Changes since the lock*.",
            if contradicted == 1 {
                "one deviation".to_string()
            } else {
                format!("{contradicted} deviations")
            }
        ));
    }
    if let Some(n) = deviations::not_computed_status(r) {
        s.push(' ');
        s.push_str(&n);
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

/// The verdict in words, as every output states it.
pub(crate) fn verdict(h: &HypothesisResult) -> &'static str {
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
    let p = match r.correction_applied {
        crate::results::Correction::None => h.p,
        _ => h.p_adjusted,
    };
    let p = match &h.equivalence {
        Some(eq) => format!("{} (equivalence)", apa::p_number(eq.p)),
        None => apa::p_number(p),
    };
    GlanceRow {
        id: h.id.clone(),
        claim: h.claim.clone(),
        method: md(method_name(h.method)),
        difference: md(format!(
            "{}{} {}",
            two(e.value),
            units(h),
            apa::bounds(e.ci_low, e.ci_high, two)
        )),
        effect: md(sentence::effect_with_bounds(fx)),
        p: md(p),
        verdict: verdict(h).into(),
    }
}

fn hypothesis(
    r: &Results,
    h: &HypothesisResult,
    figures: BTreeMap<FigureRole, FigureView>,
) -> HypothesisView {
    let descriptives = h
        .groups
        .iter()
        .map(|g| {
            let d = &g.describe;
            vec![
                md(escape(&g.label)),
                md(d.n.to_string()),
                md(two(d.mean)),
                md(d.sd.map(two).unwrap_or_else(|| "—".into())),
                md(two(d.median)),
                md(format!("{} to {}", two(d.q1), two(d.q3))),
                md(format!("{} to {}", two(d.min), two(d.max))),
            ]
        })
        .collect();
    let robustness = h
        .robustness
        .iter()
        .map(|t| {
            vec![
                md(method_name(t.method)),
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
    HypothesisView {
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
        sentence: md(sentence::one_sentence(h, r.correction_applied)),
        robustness,
        figures,
        rows: rows(h),
        row_groups: set_labels(h),
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
        let whose = match h.design {
            Design::Independent => "each group",
            Design::Paired | Design::OneSample => "the differences",
        };
        out.push(md(format!("Shapiro–Wilk, {whose}: {}.", parts.join("; "))));
    }
    for s in &c.spread {
        let name = match s.method {
            SpreadMethod::BrownForsythe => "Brown–Forsythe (spread around the medians)",
            SpreadMethod::Levene => "Levene (spread around the means)",
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
        out.push(md(format!("{name}: {body}.")));
    }
    out
}

fn rule(r: &Results, h: &HypothesisResult) -> String {
    let chosen = method_name(h.method);
    let alpha = apa::bounded(h.checks.check_alpha, 2);
    let tail = if r.lock == LockState::Unlocked {
        ""
    } else {
        ", as preregistered"
    };
    let both = match h.design {
        Design::Independent => "in both groups",
        Design::Paired | Design::OneSample => "for the differences",
    };
    match h.checks.branch {
        None => format!(
            "The plan fixed the method ({chosen}); the checks are shown for information and changed nothing."
        ),
        Some(Branch::NormalEqualSpread) => {
            let spread = match h.design {
                Design::Independent => ", and the spread did not differ",
                Design::Paired | Design::OneSample => "",
            };
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
        format!(" (planned: {})", method_name(h.method_planned))
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
            sentence::p_of(h, r.correction_applied)
        ),
    };
    let mut out = vec![
        md(format!("Method used: {}{planned}.", method_name(h.method))),
        md(test_line),
    ];
    if let Some(how) = sentence::p_origin(&h.test) {
        out.push(md(format!("{} {how}.", sym("p"))));
    }
    if h.test.p == 0.0 {
        out.push(md(apa::p_underflow(h.test.log10_p)));
    }
    if let Some(rule) = sentence::rank_conventions(&h.test) {
        out.push(md(rule));
    }
    if let Some(name) = sentence::correction_method(r.correction_applied) {
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
            sym("t"), apa::df(eq.df, h.method == Method::WelchT), two(eq.t_lower), apa::p_clause(eq.p_lower),
            sym("t"), apa::df(eq.df, h.method == Method::WelchT), two(eq.t_upper), apa::p_clause(eq.p_upper),
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
    if h.design == Design::Paired {
        out.push(vec![
            md(format!(
                "Dropped: the other measurement of the unit was missing or excluded (incomplete pairs: {})",
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
            out.push(md(format!("Lock file SHA-256: `{}`", l.sha256)));
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
    out.extend(provenance::evidence(r).iter().map(|e| md(escape(e))));
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
    let planned = planning::planned_sentence(&p.planned, h.design, alpha, h.alternative);
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
        let sym = planning::effect_symbol(h.design);
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

/// The names of the two sets as a reader sees them; the second set of a
/// one-sample design is its reference value.
fn set_labels(h: &HypothesisResult) -> [String; 2] {
    match (h.design, h.reference) {
        (Design::OneSample, Some(r)) => [h.labels[0].clone(), format!("reference {r}")],
        _ => h.labels.clone(),
    }
}

/// The figures of one hypothesis, in the order the report shows them,
/// with every word drawn in them or said around them.
fn figures(h: &HypothesisResult, index: usize, stem: &str) -> Vec<FigureView> {
    let mut out = Vec::new();
    let sampled =
        h.plot.iter().any(|p| p.sampled) || h.paired_plot.as_ref().is_some_and(|p| p.sampled);
    let sample_note = if sampled {
        " The points are an evenly spaced sample of the sorted values, not every value."
    } else {
        ""
    };
    let unit = h
        .units
        .as_deref()
        .map(|u| format!(" ({u})"))
        .unwrap_or_default();
    let axis = format!("{}{unit}", h.outcome_label);
    let [a, b] = &set_labels(h);
    let set_labels: Vec<String> = h.plot.iter().map(|p| p.label.clone()).collect();
    let figure = |role: FigureRole,
                  title: &str,
                  note: String,
                  value_axis: String,
                  other_axis: &str,
                  categories: Vec<String>| {
        let id = format!("{stem}-{}", role.as_str());
        FigureView {
            hypothesis: index,
            role,
            number: 0,
            file: format!("figures/{id}.svg"),
            alt: format!("{title}: {}", note.split(". ").next().unwrap_or("")),
            id,
            title: title.into(),
            note,
            value_axis,
            other_axis: other_axis.into(),
            categories,
        }
    };
    match h.design {
        Design::Paired => {
            if let Some(pp) = &h.paired_plot {
                let note = format!(
                    "Each line joins one unit's value in {a} (left) to its value in {b} (right).{}",
                    if pp.sampled {
                        " The lines are a sample of all units."
                    } else {
                        ""
                    }
                );
                out.push(figure(
                    FigureRole::Pairs,
                    "Each unit, before and after",
                    note,
                    axis.clone(),
                    "",
                    vec![a.clone(), b.clone()],
                ));
            }
        }
        Design::Independent | Design::OneSample => {
            let reference = match h.design {
                Design::OneSample => " The dashed line marks the reference value.",
                _ => "",
            };
            let note = format!(
                "Each dot is one value, spread sideways only to avoid overlap. The box spans the quartiles with the median as a line; the whiskers reach the smallest and largest values.{reference}{sample_note}"
            );
            out.push(figure(
                FigureRole::Groups,
                "Each group's values",
                note,
                axis.clone(),
                "",
                set_labels.clone(),
            ));
        }
    }
    if !h.plot.is_empty() {
        let note = format!(
            "Sample values against the values a normal distribution would give at the same ranks; points near the line mean the shape is close to normal. The line runs through the quartiles.{sample_note}"
        );
        let title = match h.design {
            Design::Paired => "Normal Q–Q, the differences",
            Design::Independent | Design::OneSample => "Normal Q–Q, each group",
        };
        out.push(figure(
            FigureRole::Qq,
            title,
            note,
            String::new(),
            "normal quantile",
            set_labels,
        ));
    }
    if h.design == Design::Paired && !h.plot.is_empty() {
        let note = format!(
            "How often each size of difference ({a} − {b}) occurred, over all analysed units; the dashed line marks zero."
        );
        out.push(figure(
            FigureRole::Differences,
            "Each unit's difference",
            note,
            format!("difference in {axis}"),
            "units",
            Vec::new(),
        ));
    }
    let e = &h.estimate;
    let open = match h.alternative {
        crate::stats::Alternative::TwoSided => "",
        _ => " The interval is one-sided: its open side runs to the edge of the plot, marked by an arrow.",
    };
    let eq = if h.equivalence.is_some() {
        " Dotted lines mark the equivalence bounds."
    } else {
        ""
    };
    let name = sentence::estimate_name(e.name);
    let note = format!(
        "The {name} (dot) with its {:.0}% confidence interval (bar); the dashed line marks no difference.{open}{eq}",
        e.confidence * 100.0
    );
    out.push(figure(
        FigureRole::Difference,
        "The difference and its interval",
        note,
        format!("{name}{unit}, {a} − {b}"),
        "",
        Vec::new(),
    ));
    out
}
