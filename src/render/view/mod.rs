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
pub(crate) mod methods;
pub(crate) mod planning;
pub(crate) mod provenance;
pub(crate) mod references;
pub(crate) mod sentence;

use self::apa::{sym, two};
use self::sentence::{method_name, method_plain};
use super::markdown::escape;
use crate::results::{
    Branch, Decision, Design, HypothesisResult, LockState, Results, SpreadMethod,
};
use minijinja::Value;
use serde::Serialize;
use std::collections::BTreeMap;

/// Markdown the view wrote itself: inserted into templates as it is.
pub(crate) fn md(s: impl Into<String>) -> Value {
    Value::from_safe_string(s.into())
}

/// A numbered table as APA style sets it (Publication Manual, 7th ed.,
/// §§7.8–7.21): the number in bold, the title in italic title case on the
/// line below, a header row, the body, and a note where one is needed.
/// The view decides every cell and the order of the columns once; each
/// format supplies only its own table syntax.
#[derive(Clone, Debug, Serialize)]
pub(crate) struct TableView {
    /// Table number in the report (tables and figures are numbered apart).
    pub number: usize,
    /// The title, in title case (plain text; templates escape it).
    pub title: String,
    /// Header cells (Markdown: symbols such as *n*, *SD* and *p* italic).
    pub header: Vec<Value>,
    /// Body rows, one list of cells (Markdown) per row.
    pub rows: Vec<Vec<Value>>,
    /// The table note, without the leading "Note." (Markdown).
    pub note: Option<Value>,
}

impl TableView {
    fn new(title: String, header: Vec<Value>, rows: Vec<Vec<Value>>) -> TableView {
        TableView {
            number: 0,
            title,
            header,
            rows,
            note: None,
        }
    }
}

/// A table of plan, lock or data text, escaped; none when it has no rows.
fn text_table(title: &str, header: &[&str], rows: Vec<Vec<String>>) -> Option<TableView> {
    let rows: Vec<Vec<Value>> = rows
        .into_iter()
        .map(|r| r.iter().map(|t| md(escape(t))).collect())
        .collect();
    (!rows.is_empty()).then(|| TableView::new(title.into(), cells(header.iter().copied()), rows))
}

fn cells<'a>(words: impl IntoIterator<Item = &'a str>) -> Vec<Value> {
    words.into_iter().map(md).collect()
}

/// Everything said about one hypothesis.
#[derive(Serialize)]
pub(crate) struct HypothesisView {
    id: String,
    claim: String,
    /// The descriptives table.
    descriptives: TableView,
    checks: Vec<Value>,
    rule: Value,
    test: Vec<Value>,
    size: Vec<Value>,
    planning: Option<Value>,
    sentence: Value,
    /// Other methods, not preregistered: one sentence per method (the
    /// figure with every method's interval is `figures.methods`).
    robustness: Vec<Value>,
    /// The figures, by where the report places them.
    figures: BTreeMap<FigureRole, FigureView>,
    /// The rows-in-rows-out table.
    rows: TableView,
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
    /// Every method's estimate and interval on one axis.
    Methods,
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
            FigureRole::Methods => "methods",
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
    /// Labels of the categories, panels or rows drawn, in order (plain text).
    #[serde(skip)]
    pub categories: Vec<String>,
    /// Words of the legend, one per colour that needs one (plain text;
    /// the note says the same).
    #[serde(skip)]
    pub legend: Vec<String>,
}

/// The whole report, worded.
#[derive(Serialize)]
pub(crate) struct ReportView {
    title: String,
    status: Value,
    /// The banner of a rehearsal on blinded data.
    rehearsal: Option<Value>,
    /// How a rehearsal blinded each design.
    blinding: Vec<String>,
    /// The one table of changes since the lock, declared or detected.
    changes: Option<TableView>,
    /// The plan as locked beside the plan as run, per hypothesis.
    both: Vec<Value>,
    /// Hypotheses that could not be computed, with the reason.
    not_computed: Option<TableView>,
    lock_state: LockState,
    glance: TableView,
    hypotheses: Vec<HypothesisView>,
    /// The methods paragraphs: what was preregistered, how each test was
    /// chosen, which conventions applied, with citations.
    methods: Vec<Value>,
    /// The references list (APA style), one entry per work the methods
    /// cite.
    references: Vec<Value>,
    data_notes: Vec<Value>,
    provenance: Vec<Value>,
    command: Value,
    /// Every figure, in report order.
    #[serde(skip)]
    pub figures: Vec<FigureView>,
    /// Every table, numbered, in report order (the same tables the fields
    /// above place), for renderers that set tables outside a template.
    #[serde(skip)]
    pub tables: Vec<TableView>,
    /// The works the methods cite, for `references.bib`.
    #[serde(skip)]
    pub sources: Vec<references::Source>,
    /// Provenance as machine-readable `<meta>` tags of the HTML report.
    #[serde(skip)]
    pub meta: Vec<(&'static str, String)>,
}

/// Words the whole report.
pub(crate) fn report(r: &Results) -> ReportView {
    let mut all_figures: Vec<FigureView> = Vec::new();
    let mut hyps = Vec::new();
    let mut used_stems = Vec::new();
    let shown: Vec<HypothesisResult> = r.hypotheses.iter().map(|h| displayed(r, h)).collect();
    for (i, h) in shown.iter().enumerate() {
        let stem = stem(&h.id, i, &used_stems);
        used_stems.push(stem.clone());
        let mut fctx = BTreeMap::new();
        let planned = r.plan.hypotheses.iter().find(|p| p.id == h.id);
        for mut f in figures(h, planned, i, &stem) {
            f.number = all_figures.len() + 1;
            fctx.insert(f.role, f.clone());
            all_figures.push(f);
        }
        hyps.push(hypothesis(r, h, fctx));
    }
    // Tables are numbered in the order the report shows them.
    let mut tables = Vec::new();
    let mut number = |t: &mut TableView| {
        t.number = tables.len() + 1;
        tables.push(t.clone());
    };
    let mut changes = text_table(
        "Changes Since the Lock",
        &[
            "What changed",
            "What the plan said",
            "What was done instead",
            "Why",
            "When",
            "Effect on the reading",
            "Declared",
        ],
        deviations::changes_table(r),
    );
    let mut not_computed = text_table(
        "Hypotheses Not Computed",
        &["Hypothesis", "Claim", "Why it could not be computed"],
        deviations::not_computed(r),
    );
    if let Some(t) = changes.as_mut() {
        number(t);
    }
    let mut glance = glance_table(r, &shown);
    number(&mut glance);
    if let Some(t) = not_computed.as_mut() {
        number(t);
    }
    for h in hyps.iter_mut() {
        number(&mut h.descriptives);
    }
    for h in hyps.iter_mut() {
        number(&mut h.rows);
    }
    let written = methods::write(r, &shown);
    ReportView {
        title: r.plan.title.clone(),
        status: md(status(r)),
        rehearsal: deviations::rehearsal_banner(r).map(md),
        blinding: deviations::blinding(r),
        changes,
        both: deviations::both(r).into_iter().map(md).collect(),
        not_computed,
        lock_state: r.lock,
        glance,
        hypotheses: hyps,
        methods: written.paragraphs.into_iter().map(md).collect(),
        references: written.sources.iter().map(|s| md(s.apa())).collect(),
        sources: written.sources,
        data_notes: data_notes(r).into_iter().map(md).collect(),
        provenance: provenance(r),
        command: md(code_block(&r.command)),
        figures: all_figures,
        tables,
        meta: provenance_meta(r),
    }
}

/// A hypothesis as the reports show it: every group, condition or column
/// under the name the plan's `names` gives it (results.json keeps the
/// data's own spelling).
pub(crate) fn displayed(r: &Results, h: &HypothesisResult) -> HypothesisResult {
    let mut h = h.clone();
    let Some(names) = r
        .plan
        .hypotheses
        .iter()
        .find(|p| p.id == h.id)
        .map(|p| &p.names)
        .filter(|n| !n.is_empty())
    else {
        return h;
    };
    let rename = |label: &mut String| {
        if let Some(words) = names.get(label.as_str()) {
            *label = words.clone();
        }
    };
    h.labels.iter_mut().for_each(rename);
    h.groups.iter_mut().for_each(|g| rename(&mut g.label));
    h.checks
        .normality
        .iter_mut()
        .for_each(|n| rename(&mut n.label));
    h.plot.iter_mut().for_each(|p| rename(&mut p.label));
    h
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
        if r.data.source.is_some() {
            notes.push("A lock never reads a database: it records the query, and the count table's SHA-256 above is what a later run must reproduce.".to_string());
        } else if l.data_existed {
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

/// An estimate in a table cell, with its level: the value with its units
/// for a difference (to the data's resolution); a probability of
/// superiority is named, since it is not a difference.
fn estimate_cell(e: &crate::results::Estimate, h: &HypothesisResult) -> String {
    let f = sentence::estimate_number(e.name, apa::measured(h.recorded_decimals));
    let ci = apa::ci(e.confidence, e.ci_low, e.ci_high, f);
    if e.name.in_outcome_units() {
        format!("{}{}, {ci}", f(e.value), units(h))
    } else {
        format!("{} {}, {ci}", sentence::estimate_name(e.name), f(e.value))
    }
}

/// The tests drawn on the common axis of "Does the conclusion depend on
/// the method?": the preregistered test first, then each robustness check
/// whose estimate is on the same scale (a difference in the outcome's
/// units, or a probability of superiority). The figure and its labels
/// both come from this list.
pub(crate) fn methods_drawn(h: &HypothesisResult) -> Vec<&crate::results::TestResult> {
    let scale = h.test.estimate.name.in_outcome_units();
    std::iter::once(&h.test)
        .chain(
            h.robustness
                .iter()
                .filter(|t| t.estimate.name.in_outcome_units() == scale),
        )
        .collect()
}

/// "At a glance": one row per hypothesis; every interval with its level.
fn glance_table(r: &Results, shown: &[HypothesisResult]) -> TableView {
    let p_header = match sentence::correction_name(r.correction_applied) {
        Some(c) => format!("{} ({c})", sym("p")),
        None => sym("p"),
    };
    let rows = shown
        .iter()
        .map(|h| {
            let e = &h.estimate;
            let p = match r.correction_applied {
                crate::results::Correction::None => h.p,
                _ => h.p_adjusted,
            };
            let p = match &h.equivalence {
                Some(eq) => format!("{} (equivalence)", apa::p_number(eq.p)),
                None => apa::p_number(p),
            };
            vec![
                md(format!("{}: {}", escape(&h.id), escape(&h.claim))),
                md(method_name(h.method)),
                md(estimate_cell(e, h)),
                md(sentence::effect(&h.effect, e.confidence)),
                md(p),
                md(verdict(h)),
            ]
        })
        .collect();
    TableView::new(
        "At a Glance".into(),
        vec![
            md("Claim"),
            md("Method used"),
            md("Difference"),
            md("Effect"),
            md(p_header),
            md("Verdict"),
        ],
        rows,
    )
}

fn hypothesis(
    r: &Results,
    h: &HypothesisResult,
    figures: BTreeMap<FigureRole, FigureView>,
) -> HypothesisView {
    let digits = apa::measured(h.recorded_decimals);
    let f = |x| apa::fixed(x, digits);
    let raw = |x| apa::fixed(x, apa::as_recorded(h.recorded_decimals));
    let body = h
        .groups
        .iter()
        .map(|g| {
            let d = &g.describe;
            vec![
                md(escape(&g.label)),
                md(d.n.to_string()),
                md(f(d.mean)),
                md(d.sd.map(f).unwrap_or_else(|| "—".into())),
                md(f(d.median)),
                md(format!("{} to {}", f(d.q1), f(d.q3))),
                md(format!("{} to {}", raw(d.min), raw(d.max))),
            ]
        })
        .collect();
    let mut descriptives = TableView::new(
        format!("What the Data Look Like in {}", h.id),
        vec![
            md(""),
            md(sym("n")),
            md(sym("M")),
            md(sym("SD")),
            md(sym("Mdn")),
            md("Quartiles"),
            md("Range"),
        ],
        body,
    );
    descriptives.note = Some(md(match h.recorded_decimals {
        Some(d) => format!(
            "{} = mean; {} = median. Values were recorded to {}; means, SDs, medians and quartiles are given to one decimal more, the range as recorded.",
            sym("M"),
            sym("Mdn"),
            match d {
                0 => "whole numbers".to_string(),
                1 => "one decimal".to_string(),
                d => format!("{d} decimals"),
            }
        ),
        None => format!("{} = mean; {} = median.", sym("M"), sym("Mdn")),
    }));
    let robustness = robustness_sentences(r, h);
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
        rows: rows_table(h),
    }
}

/// One sentence per method that was not preregistered, each ending with
/// whether it reaches the preregistered test's conclusion at the plan's α.
fn robustness_sentences(r: &Results, h: &HypothesisResult) -> Vec<Value> {
    let digits = apa::measured(h.recorded_decimals);
    let alpha = apa::bounded(r.plan.alpha, 2);
    let sided = apa::sidedness(h.alternative != crate::stats::Alternative::TwoSided)
        .map(|s| format!(", {s}"))
        .unwrap_or_default();
    h.robustness
        .iter()
        .map(|t| {
            // The same classification the preregistered test's verdict
            // uses (its p is already for the plan's sidedness).
            let agrees = Decision::at(t.p, r.plan.alpha) == Decision::at(h.test.p, r.plan.alpha);
            let reading = if h.equivalence.is_some() {
                "it tests for a difference, not for equivalence, so it does not bear on the verdict"
                    .to_string()
            } else if agrees {
                format!("at α = {alpha} it reaches the same conclusion as the preregistered test")
            } else {
                format!("at α = {alpha} it does not reach the preregistered test's conclusion")
            };
            let mut s = format!(
                "{}: {}, {}{sided}; {}",
                capital(&method_name(t.method)),
                sentence::statistic(t),
                apa::p_clause(t.p),
                sentence::estimate(&t.estimate, h.units.as_deref(), digits),
            );
            if let Some(e) = t.effects.first() {
                s.push_str(&format!("; {}", sentence::effect(e, t.estimate.confidence)));
            }
            md(format!("{s}; {reading}."))
        })
        .collect()
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
                    // Three decimals: W sits close to 1, where two
                    // decimals would show most samples alike.
                    apa::bounded(w, 3),
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
        None => capital(&format!(
            "{}, {}.",
            sentence::statistic(&h.test),
            sentence::p_of(h, r.correction_applied)
        )),
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
    if let Some(rule) = sentence::conventions(&h.test) {
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
        let bound = |x: f64| {
            if eq.on.in_outcome_units() {
                apa::stated(x)
            } else {
                apa::bounded(x, 2)
            }
        };
        out.push(md(format!(
            "Equivalence on the {} (bounds {} to {}{}), {}; the equivalence {} is the larger of the two, {}.",
            sentence::estimate_name(eq.on),
            bound(eq.low),
            bound(eq.high),
            if eq.on.in_outcome_units() { units(h) } else { String::new() },
            sentence::equivalence_tests(h, eq, true),
            sym("p"),
            apa::p_number(eq.p),
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
    let digits = apa::measured(h.recorded_decimals);
    let mut out = vec![md(capital(&sentence::estimate(
        &h.estimate,
        h.units.as_deref(),
        digits,
    )))];
    for e in &h.test.effects {
        out.push(md(capital(&sentence::effect(e, h.estimate.confidence))));
    }
    if let Some(eq) = &h.equivalence {
        let what = match eq.on {
            crate::results::EstimateKind::MeanDifference => "difference",
            other => sentence::estimate_name(other),
        };
        out.push(md(format!(
            "For equivalence: {} CI of the {what} {} (the 1 − 2α interval the two one-sided tests rest on).",
            apa::level(eq.ci_level),
            apa::bounds(
                Some(eq.ci_low),
                Some(eq.ci_high),
                sentence::estimate_number(eq.on, digits)
            )
        )));
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

fn rows_table(h: &HypothesisResult) -> TableView {
    let [a, b] = set_labels(h);
    TableView::new(
        format!("Rows In, Rows Out in {}", h.id),
        vec![md("Step"), md(escape(&a)), md(escape(&b))],
        rows(h),
    )
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
            " With the sample analysed, the smallest effect the *t* test detects with {} power is {sym} = {}.",
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
        (Design::OneSample, Some(r)) => {
            [h.labels[0].clone(), format!("reference {}", apa::stated(r))]
        }
        _ => h.labels.clone(),
    }
}

/// The figures of one hypothesis, in the order the report shows them,
/// with every word drawn in them or said around them.
fn figures(
    h: &HypothesisResult,
    planned: Option<&crate::plan::Hypothesis>,
    index: usize,
    stem: &str,
) -> Vec<FigureView> {
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
    // The title of the axis along which the sets sit: the plan's grouping
    // or condition column.
    let sets_axis = match planned.map(|p| &p.comparison) {
        Some(crate::plan::Comparison::Groups { group, .. }) => group.clone(),
        Some(crate::plan::Comparison::PairedRows { condition, .. }) => condition.clone(),
        Some(crate::plan::Comparison::PairedColumns { .. }) => "measurement".into(),
        Some(crate::plan::Comparison::Reference { .. }) | None => "sample".into(),
    };
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
            legend: Vec::new(),
        }
    };
    match h.design {
        Design::Paired => {
            if let Some(pp) = &h.paired_plot {
                let note = format!(
                    "Each line joins one unit's value in {a} (left) to its value in {b} (right); orange lines rise (higher in {b}), blue lines fall or stay level (lower in {b} or the same); grey dots are the values.{}",
                    if pp.sampled {
                        " The lines are a sample of all units."
                    } else {
                        ""
                    }
                );
                let mut f = figure(
                    FigureRole::Pairs,
                    &format!("Each unit in {a} and in {b}"),
                    note,
                    axis.clone(),
                    &sets_axis,
                    vec![a.clone(), b.clone()],
                );
                f.legend = vec![
                    format!("higher in {b}"),
                    format!("lower in {b} or the same"),
                ];
                out.push(f);
            }
        }
        Design::Independent | Design::OneSample => {
            let reference = match h.design {
                Design::OneSample => " The dashed line marks the reference value.",
                _ => "",
            };
            let colours = match h.design {
                Design::Independent => {
                    " The colours only tell the groups apart (blue: the first, orange: the second)."
                }
                _ => "",
            };
            let note = format!(
                "Each dot is one value, spread sideways only to avoid overlap. The box spans the quartiles with the median as a line; the whiskers reach the smallest and largest values.{colours}{reference}{sample_note}"
            );
            out.push(figure(
                FigureRole::Groups,
                "Each group's values",
                note,
                axis.clone(),
                &sets_axis,
                set_labels.clone(),
            ));
        }
    }
    if !h.plot.is_empty() {
        let note = format!(
            "Sample values against the values a normal distribution would give at the same ranks; points near the line mean the shape is close to normal. The line runs through the quartiles.{sample_note}"
        );
        let (title, values) = match h.design {
            Design::Paired => (
                "Normal Q–Q, the differences",
                format!("difference in {}", sentence::mid_sentence(&axis)),
            ),
            Design::Independent | Design::OneSample => ("Normal Q–Q, each group", axis.clone()),
        };
        out.push(figure(
            FigureRole::Qq,
            title,
            note,
            values,
            "normal quantile",
            set_labels,
        ));
    }
    if h.design == Design::Paired && !h.plot.is_empty() {
        let note = format!(
            "How often each size of difference ({a} − {b}) occurred, over all analysed units; the bin width follows the rule of Freedman and Diaconis (1981); the dashed line marks zero."
        );
        out.push(figure(
            FigureRole::Differences,
            "Each unit's difference",
            note,
            format!("difference in {}", sentence::mid_sentence(&axis)),
            "number of units",
            Vec::new(),
        ));
    }
    let e = &h.estimate;
    let open = match h.alternative {
        crate::stats::Alternative::TwoSided => "",
        _ => " The interval is one-sided: its open side runs to the edge of the plot, marked by an arrow.",
    };
    let name = sentence::estimate_name(e.name);
    let (null_words, value_axis) = if e.name.in_outcome_units() {
        ("no difference", format!("{name}{unit}, {a} − {b}"))
    } else {
        (
            "½, where neither group tends to have the larger values",
            format!("{name}, {a} over {b}"),
        )
    };
    let note = match &h.equivalence {
        Some(eq) => {
            let (low, high, u) = if eq.on.in_outcome_units() {
                (
                    apa::stated(eq.low),
                    apa::stated(eq.high),
                    h.units.as_deref().map(|u| format!(" {u}")).unwrap_or_default(),
                )
            } else {
                (apa::bounded(eq.low, 2), apa::bounded(eq.high, 2), String::new())
            };
            format!(
                "The {name} (dot) with its {} confidence interval (bar), the 1 − 2α interval the equivalence verdict rests on; the dotted vermilion lines mark the equivalence bounds, {low} and {high}{u}; the dashed line marks {null_words}.",
                apa::level(eq.ci_level),
            )
        }
        None => format!(
            "The {name} (dot) with its {} confidence interval (bar); the dashed line marks {null_words}.{open}",
            apa::level(e.confidence)
        ),
    };
    out.push(figure(
        FigureRole::Difference,
        "The difference and its interval",
        note,
        value_axis,
        "",
        Vec::new(),
    ));
    let drawn = methods_drawn(h);
    if drawn.len() > 1 {
        let mut names = vec![format!("{} (preregistered)", method_plain(h.test.method))];
        names.extend(drawn[1..].iter().map(|t| method_plain(t.method)));
        // Methods whose estimate is on another scale (a probability of
        // superiority beside differences, or the reverse) are left off
        // the common axis and said so; their sentences stay below.
        let left_off: Vec<String> = h
            .robustness
            .iter()
            .filter(|t| !drawn.iter().any(|d| d.method == t.method))
            .map(|t| method_plain(t.method))
            .collect();
        let left_off = if left_off.is_empty() {
            String::new()
        } else {
            format!(
                " Not drawn, since its estimate is on another scale: {}.",
                left_off.join(", ")
            )
        };
        let scale = if e.name.in_outcome_units() {
            "Methods on means estimate the mean difference, trimmed means the trimmed mean difference and rank methods the Hodges–Lehmann shift, so the dots need not coincide; the dashed line marks no difference."
        } else {
            "Each estimates the probability of superiority; the dashed line marks ½."
        };
        let note = format!(
            "Each row is one method: its estimate (dot) and {} confidence interval (bar){}; blue: the preregistered method; grey: the others, which were not preregistered. {scale}{left_off}",
            apa::level(e.confidence),
            if open.is_empty() { "" } else { ", an arrow where a side is open" },
        );
        out.push(figure(
            FigureRole::Methods,
            "Each method's estimate and interval",
            note,
            if e.name.in_outcome_units() {
                format!("difference{unit}, {a} − {b}")
            } else {
                format!("probability of superiority, {a} over {b}")
            },
            "",
            names,
        ));
    }
    out
}
