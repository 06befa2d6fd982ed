//! What the commands print on the terminal: short, aligned, in attest's
//! own voice. Numbers are formatted by the same APA rules as the reports.

use crate::error::clean;
use crate::pipeline::{LockOutcome, RunOutcome};
use crate::plan::{AnalysisFile, Comparison};
use crate::render::view::apa;
use crate::results::{EffectKind, LockState, Results};

/// `attest check`: a one-screen summary of the plan.
pub(crate) fn plan_summary(f: &AnalysisFile) -> String {
    let p = &f.plan;
    let mut s = format!(
        "plan: {} — \"{}\"\n  alpha {}  confidence {}  correction {}  check_alpha {}\n  data: {}\n",
        clean(&f.path.display().to_string()),
        clean(&p.title),
        p.alpha,
        p.confidence,
        p.correction.as_str(),
        p.check_alpha,
        match p.data.source {
            Some(e) => clean(&crate::data::source::source_name(e)).into_owned(),
            None => clean(&p.data.path).into_owned(),
        }
    );
    for r in &p.exclude {
        s.push_str(&format!(
            "  exclude: {} ({})\n",
            clean(&r.reason),
            clean(&r.column)
        ));
    }
    for h in &p.hypotheses {
        let what = match &h.comparison {
            Comparison::Groups { group, levels } => format!(
                "{} by {group}: {} vs {}",
                h.outcome.as_deref().unwrap_or(""),
                levels[0],
                levels[1]
            ),
            Comparison::PairedColumns { first, second } => format!("{first} − {second} (paired)"),
            Comparison::PairedRows {
                condition, levels, ..
            } => format!(
                "{} by {condition}: {} − {} (paired)",
                h.outcome.as_deref().unwrap_or(""),
                levels[0],
                levels[1]
            ),
            Comparison::Reference { reference } => {
                format!("{} vs {reference}", h.outcome.as_deref().unwrap_or(""))
            }
        };
        let eq = h
            .equivalence
            .map(|[a, b]| format!("  equivalence [{a}, {b}]"))
            .unwrap_or_default();
        s.push_str(&format!(
            "  {}  {}  {}  {}{}\n",
            clean(&h.id),
            h.method.as_str(),
            h.alternative.as_str(),
            clean(&what),
            eq
        ));
    }
    s.push_str("plan is valid; no data were read");
    s
}

/// `attest lock`: what was sealed and where.
pub(crate) fn locked(o: &LockOutcome) -> String {
    let mut s = format!(
        "locked: {}\n  plan sha256 {}\n  at {}\n",
        clean(&o.lock_path.display().to_string()),
        o.lock.plan_sha256,
        o.lock.locked_at
    );
    s.push_str(if o.lock.data.existed {
        "  the data file already existed at lock time (recorded in the lock)\n"
    } else {
        "  the data file did not exist yet at lock time\n"
    });
    for p in o.written.iter().skip(1) {
        s.push_str(&format!(
            "plan document: {}\n",
            clean(&p.display().to_string())
        ));
    }
    s.push_str(&match &o.witness {
        crate::witness::Witness::NoGit => "no git work tree here: keep the lock somewhere others can date it (e-mail it, or commit it to version control)".to_string(),
        crate::witness::Witness::NotCommitted => format!(
            "not committed yet: `git add {0} && git commit -m \"Lock the analysis plan\"` gives the lock an outside date",
            clean(&o.lock_path.display().to_string())
        ),
        w @ crate::witness::Witness::Committed { .. } => format!(
            "already in git: {}",
            crate::render::view::provenance::witness_line(w)
        ),
    });
    s
}

/// Warnings about the lock, one line per changed field.
pub(crate) fn lock_warnings(r: &Results) -> Vec<String> {
    let mut out = Vec::new();
    if let Some(rec) = &r.lock_record {
        if !rec.intact {
            out.push(
                "lock: the lock file's content does not match its own hash; it was edited by hand"
                    .to_string(),
            );
        }
    }
    if r.lock == LockState::Deviates && !r.changes.is_empty() {
        let fields: Vec<String> = r
            .changes
            .iter()
            .map(|c| {
                format!(
                    "{} ({} → {})",
                    clean(&c.field),
                    clean(&c.locked),
                    clean(&c.current)
                )
            })
            .collect();
        out.push(format!(
            "lock: plan differs from the lock in {}",
            fields.join(", ")
        ));
        if r.deviations.is_empty() {
            out.push(
                "lock: no [[deviation]] is declared; add one saying what changed and why"
                    .to_string(),
            );
        }
    }
    if r.lock == LockState::Unlocked {
        out.push(
            "lock: running without a lock; outputs are stamped \"not preregistered\"".to_string(),
        );
    }
    out
}

/// `attest run`: one line per hypothesis, then where the report is.
pub(crate) fn run_summary(o: &RunOutcome, colour: bool) -> String {
    let r = &o.results;
    let mut s = String::new();
    let width = r
        .hypotheses
        .iter()
        .map(|h| clean(&h.id).chars().count())
        .max()
        .unwrap_or(2);
    for h in &r.hypotheses {
        let est = &h.estimate;
        let eff = &h.effect;
        let verdict = crate::render::view::verdict(h);
        let (symbol, effect_value) = match eff.name {
            EffectKind::CohenD => ("d", apa::two(eff.value)),
            EffectKind::HedgesG => ("g", apa::two(eff.value)),
            EffectKind::DZ => ("d_z", apa::two(eff.value)),
            EffectKind::RankBiserial => ("r", apa::bounded(eff.value, 2)),
            EffectKind::ProbabilityOfSuperiority => ("PS", apa::bounded(eff.value, 2)),
            EffectKind::RobustD => ("d_R", apa::two(eff.value)),
        };
        // A difference, shown to the data's resolution, or for
        // Brunner–Munzel the probability of superiority, which is not one.
        let decimals = apa::measured(h.recorded_decimals);
        let (what, f): (&str, Box<dyn Fn(f64) -> String>) = if est.name.in_outcome_units() {
            ("diff", Box::new(move |x| apa::fixed(x, decimals)))
        } else {
            ("PS", Box::new(|x| apa::bounded(x, 2)))
        };
        s.push_str(&format!(
            "{:<width$}  {}  {what} {} {}  {} {}  p {}  {}\n",
            clean(&h.id),
            h.method.as_str(),
            f(est.value),
            apa::ci(est.confidence, est.ci_low, est.ci_high, &f),
            symbol,
            effect_value,
            apa::p_number(h.p_adjusted),
            paint(verdict, colour),
        ));
    }
    s.push_str(&format!(
        "report: {}",
        clean(&o.out_dir.join("report.html").display().to_string())
    ));
    s
}

/// `attest verify`: one line per item, then the verdict.
pub(crate) fn verification(v: &crate::verify::Verification) -> String {
    use crate::verify::Outcome;
    let mut s = format!("verify: {}\n", clean(&v.analysis.display().to_string()));
    let width = v
        .items
        .iter()
        .map(|i| clean(&i.what).chars().count())
        .max()
        .unwrap_or(4);
    for i in &v.items {
        let what = clean(&i.what);
        let said = match &i.outcome {
            Outcome::Same => "same".to_string(),
            Outcome::Note(note) => clean(note).into_owned(),
            Outcome::Changed { how, .. } => format!("changed: {}", clean(how)),
            Outcome::CannotConfirm(why) => format!("cannot confirm: {}", clean(why)),
        };
        s.push_str(&format!("  {what:<width$}  {said}\n"));
    }
    s.push_str(match v.exit_code() {
        0 => "the report reproduces",
        4 => "the outputs reproduce, but an outside record the report claims cannot be confirmed",
        _ => "the report does NOT reproduce",
    });
    s
}

/// The short symbol of an effect size on the terminal.
/// `attest power --json`: the answer, with `n` a number for one-group
/// designs and an array of group sizes for independent ones.
pub(crate) fn power_json(a: &crate::analysis::planning::Answer) -> String {
    let mut v = serde_json::to_value(a).expect("an answer always serialises");
    if a.n.len() == 1 {
        v["n"] = serde_json::json!(a.n[0]);
    }
    serde_json::to_string_pretty(&v).expect("a value always serialises")
}

/// Whether to colour terminal output: only on a terminal, never when
/// `NO_COLOR` is set (https://no-color.org convention, common practice).
pub(crate) fn colour() -> bool {
    use std::io::IsTerminal;
    std::env::var_os("NO_COLOR").is_none() && std::io::stdout().is_terminal()
}

/// A verdict in colour: green when supported or equivalent, yellow otherwise.
fn paint(verdict: &str, colour: bool) -> String {
    if !colour {
        return verdict.to_string();
    }
    let code = if verdict.starts_with("not") {
        "33"
    } else {
        "32"
    };
    format!("\x1b[{code}m{verdict}\x1b[0m")
}

/// `attest run --json`: one object per hypothesis and the report's place.
pub(crate) fn run_json(o: &RunOutcome) -> String {
    let hyps: Vec<serde_json::Value> = o
        .results
        .hypotheses
        .iter()
        .map(|h| {
            serde_json::json!({
                "id": h.id,
                "method": h.method,
                "estimate": h.estimate,
                "effect": h.effect,
                "p": h.p,
                "p_adjusted": h.p_adjusted,
                "decision": h.decision,
            })
        })
        .collect();
    let v = serde_json::json!({
        "lock": o.results.lock,
        "hypotheses": hyps,
        "report": o.out_dir.join("report.html"),
        "results": o.out_dir.join("results.json"),
    });
    serde_json::to_string_pretty(&v).expect("a value always serialises")
}
