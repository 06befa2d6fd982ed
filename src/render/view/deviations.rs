//! The words for what did not go as planned: hypotheses that could not be
//! computed, the one table of changes since the lock (declared in
//! `[[deviation]]` or only detected), and the banner of a rehearsal.

use super::escape;
use crate::results::Results;

/// One row per hypothesis that could not be computed: id, claim, reason.
pub(crate) fn not_computed(r: &Results) -> Vec<Vec<String>> {
    r.not_computed
        .iter()
        .map(|n| vec![n.id.clone(), n.claim.clone(), n.reason.clone()])
        .collect()
}

/// The sentence the status line adds when hypotheses could not be computed.
pub(crate) fn not_computed_status(r: &Results) -> Option<String> {
    match r.not_computed.len() {
        0 => None,
        1 => Some(format!(
            "Hypothesis {} could not be computed; see *Not computed*.",
            escape(&r.not_computed[0].id)
        )),
        n => Some(format!(
            "{n} hypotheses could not be computed; see *Not computed*."
        )),
    }
}

/// The banner every page of a rehearsal opens with.
pub(crate) fn rehearsal_banner(r: &Results) -> Option<String> {
    r.rehearsal.as_ref().map(|_| {
        "**Rehearsal on blinded data: no number in this report is a result.** The outcome values were blinded before any statistic was computed (see *How the data were blinded*), so the differences, effects, tests and verdicts below show only that the plan runs on this file.".to_string()
    })
}

/// How the rehearsal blinded each design, one sentence each.
pub(crate) fn blinding(r: &Results) -> Vec<String> {
    r.rehearsal
        .as_ref()
        .map(|b| b.blinding.clone())
        .unwrap_or_default()
}

/// The one table of changes since the lock: every field that differs from
/// the locked plan, with the deviation that declares it, and every
/// declared deviation no field shows (a change of procedure, say). Cells:
/// what changed, what the plan said, what was done instead, why, when,
/// the effect on the reading, and whether (and when) it was declared.
pub(crate) fn changes_table(r: &Results) -> Vec<Vec<String>> {
    let mut rows = Vec::new();
    let mut used = vec![false; r.deviations.len()];
    for c in &r.changes {
        let k = r
            .deviations
            .iter()
            .position(|d| d.field.as_deref() == Some(c.field.as_str()));
        if let Some(k) = k {
            used[k] = true;
        }
        let d = k.map(|k| &r.deviations[k]);
        rows.push(vec![
            c.field.clone(),
            match d.and_then(|d| d.planned.clone()) {
                Some(p) => format!("{p} (locked: {})", c.locked),
                None => c.locked.clone(),
            },
            match d {
                Some(d) => format!("{} (now: {})", d.change, c.current),
                None => c.current.clone(),
            },
            d.map(|d| d.reason.clone())
                .unwrap_or_else(|| "not declared".into()),
            d.map(|d| timing(r, d))
                .unwrap_or_else(|| "not stated".into()),
            d.map(reading).unwrap_or_else(|| "not stated".into()),
            match d {
                Some(d) => format!("declared {}", d.date),
                None => "detected only: no [[deviation]] names this field".into(),
            },
        ]);
    }
    for (d, _) in r.deviations.iter().zip(&used).filter(|(_, u)| !**u) {
        rows.push(vec![
            d.field
                .clone()
                .unwrap_or_else(|| "(not a field of the plan)".into()),
            d.planned.clone().unwrap_or_else(|| "not stated".into()),
            d.change.clone(),
            d.reason.clone(),
            timing(r, d),
            reading(d),
            format!("declared {}", d.date),
        ]);
    }
    rows
}

fn reading(d: &crate::plan::Deviation) -> String {
    use crate::plan::Severity;
    let severity = d.severity.map(|s| match s {
        Severity::Weaker => "the test is weaker than the locked one",
        Severity::Same => "the test is as severe as the locked one",
        Severity::Stronger => "the test is stronger than the locked one",
        Severity::Unclear => "whether the test is weaker or stronger is unclear",
    });
    match (&d.effect, severity) {
        (Some(e), Some(s)) => format!("{e} ({s})"),
        (Some(e), None) => e.clone(),
        (None, Some(s)) => s.to_string(),
        (None, None) => "not stated".into(),
    }
}

/// The deviation's timing in words, flagged when what attest recorded
/// contradicts it.
fn timing(r: &Results, d: &crate::plan::Deviation) -> String {
    use crate::plan::Timing;
    let Some(when) = d.when else {
        return "not stated".into();
    };
    let words = match when {
        Timing::BeforeCollection => "before data collection",
        Timing::BeforeAccess => "after collection, before data access",
        Timing::BeforeAnalysis => "after data access, before analysis",
        Timing::AfterResults => "after seeing results",
    };
    match timing_conflict(r, d) {
        Some(why) => format!("{words}: CONTRADICTED by the record, {why}"),
        None => words.to_string(),
    }
}

/// What the record says against a deviation's timing, if anything: data
/// that existed at the lock (against "before collection"), a recorded
/// rehearsal that read the data on or before the deviation's date
/// (against "before collection" and "before access"), or a date before
/// the lock itself.
pub(crate) fn timing_conflict(r: &Results, d: &crate::plan::Deviation) -> Option<String> {
    use crate::plan::Timing;
    let when = d.when?;
    let l = r.lock_record.as_ref()?;
    let day = |t: &str| t.get(..10).unwrap_or(t).to_string();
    let dated = iso_day(&d.date);
    if let Some(day_of) = &dated {
        if *day_of < day(&l.locked_at) {
            return Some(format!(
                "it is dated {day_of}, before the plan was locked ({})",
                day(&l.locked_at)
            ));
        }
    }
    if when == Timing::BeforeCollection && l.data_existed {
        return Some("the data file already existed when the plan was locked".into());
    }
    if matches!(when, Timing::BeforeCollection | Timing::BeforeAccess) {
        let read = l.rehearsals.iter().find(|x| match &dated {
            Some(day_of) => day(&x.at) <= *day_of,
            None => true,
        });
        if let Some(x) = read {
            return Some(format!("a rehearsal read the data on {}", day(&x.at)));
        }
    }
    None
}

/// `YYYY-MM-DD` at the start of a date text, if it has one.
fn iso_day(s: &str) -> Option<String> {
    let t = s.trim().get(..10)?;
    let b = t.as_bytes();
    let ok = b.iter().enumerate().all(|(i, c)| match i {
        4 | 7 => *c == b'-',
        _ => c.is_ascii_digit(),
    });
    ok.then(|| t.to_string())
}

/// Both analyses side by side, one paragraph per hypothesis, when a
/// deviation changed the analysis: "As locked: … / As run: …" and whether
/// the conclusion changed. Empty when the plan ran as locked (or only its
/// wording changed).
pub(crate) fn both(r: &Results) -> Vec<String> {
    let Some(l) = &r.as_locked else {
        return Vec::new();
    };
    if let Some(why) = &l.not_run {
        return vec![format!(
            "The plan as locked could not run on these data, so only the plan as run is reported: {}",
            escape(why)
        )];
    }
    let mut ids: Vec<&str> = r.plan.hypotheses.iter().map(|h| h.id.as_str()).collect();
    for h in &l.hypotheses {
        if !ids.contains(&h.id.as_str()) {
            ids.push(&h.id);
        }
    }
    for n in &l.not_computed {
        if !ids.contains(&n.id.as_str()) {
            ids.push(&n.id);
        }
    }
    ids.into_iter()
        .map(|id| {
            let locked = side(id, &l.hypotheses, &l.not_computed, l.correction_applied);
            let run = side(id, &r.hypotheses, &r.not_computed, r.correction_applied);
            let verdict_of = |s: &Side| match s {
                Side::Ran(_, v) => Some(*v),
                _ => None,
            };
            let same = match (verdict_of(&locked), verdict_of(&run)) {
                (Some(a), Some(b)) if a == b => "The conclusion is the same either way.".to_string(),
                (Some(a), Some(b)) => format!(
                    "**The conclusion changed**: as locked the claim is {a}, as run it is {b}; the locked analysis is the preregistered one."
                ),
                _ => "Only one of the two analyses reaches a conclusion, so they cannot be compared.".into(),
            };
            format!(
                "**{}**. As locked: {}. As run: {}. {same}",
                escape(id),
                locked.words(),
                run.words()
            )
        })
        .collect()
}

enum Side {
    Ran(String, &'static str),
    NotComputed(String),
    Absent,
}

impl Side {
    fn words(&self) -> String {
        match self {
            Side::Ran(w, v) => format!("{w}, {v}"),
            Side::NotComputed(why) => format!("not computed ({})", escape(why)),
            Side::Absent => "not in this plan".into(),
        }
    }
}

fn side(
    id: &str,
    hyps: &[crate::results::HypothesisResult],
    not_computed: &[crate::results::NotComputed],
    correction: crate::results::Correction,
) -> Side {
    if let Some(h) = hyps.iter().find(|h| h.id == id) {
        return Side::Ran(
            format!(
                "{}, {}",
                super::sentence::method_name(h.method),
                super::sentence::p_of(h, correction)
            ),
            super::verdict(h),
        );
    }
    match not_computed.iter().find(|n| n.id == id) {
        Some(n) => Side::NotComputed(n.reason.clone()),
        None => Side::Absent,
    }
}
