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
