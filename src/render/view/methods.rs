//! The methods paragraph: what was preregistered, how each test was
//! chosen, which conventions applied, each step with the published work
//! behind it; and the references list of exactly those works.
//!
//! It is written for a thesis writer to adapt, in the past tense and in
//! APA style (citations in parentheses, "et al." from three authors).
//! Each clause describes what the run did, never what it could have done,
//! and asks [`Citations`] for its citation as it is written, so the
//! references list is what the text cites: a run with only Welch's *t*
//! test cites Welch and Satterthwaite, not Mann and Whitney.

use super::apa::{self, sym, sym_sub};
use super::references::{self as refs, Citations, Source};
use super::sentence::{self, estimate_name, method_name, mid_sentence};
use crate::render::markdown::escape;
use crate::results::{
    Branch, Design, EffectKind, EstimateKind, HypothesisResult, LockState, Method, Results,
    SpreadMethod, TestResult,
};
use crate::stats::multiplicity::Correction;
use crate::stats::rank_tests::ZeroRule;
use crate::stats::{Alternative, RankPMethod};

/// The methods paragraphs (Markdown) and the works they cite.
pub(crate) struct Written {
    /// One paragraph on the plan as a whole, then one per hypothesis.
    pub paragraphs: Vec<String>,
    /// The works cited, in reference-list order.
    pub sources: Vec<Source>,
}

/// Writes the methods of a run; `shown` are its hypotheses under the
/// plan's display names.
pub(crate) fn write(r: &Results, shown: &[HypothesisResult]) -> Written {
    let mut c = Citations::default();
    let mut paragraphs = vec![plan_paragraph(r, &mut c)];
    for h in shown {
        paragraphs.push(hypothesis_paragraph(r, h, &mut c));
    }
    for n in &r.not_computed {
        paragraphs.push(format!(
            "**{}.** {} Its test could not be computed: {}",
            escape(&n.id),
            escape(&full_stop(&n.claim)),
            escape(&full_stop(&n.reason))
        ));
    }
    Written {
        paragraphs,
        sources: c.list(),
    }
}

fn full_stop(s: &str) -> String {
    let s = s.trim_end();
    if s.ends_with(['.', '!', '?']) {
        s.to_string()
    } else {
        format!("{s}.")
    }
}

fn plural(n: usize, one: &str, many: &str) -> String {
    if n == 1 {
        format!("1 {one}")
    } else {
        format!("{n} {many}")
    }
}

/// What was preregistered, what was excluded, α, the intervals and the
/// multiplicity correction.
fn plan_paragraph(r: &Results, c: &mut Citations) -> String {
    let mut s = match (&r.lock_record, r.lock) {
        (_, LockState::Unlocked) | (None, _) => {
            "The analysis was not preregistered: no lock records the plan before the data were seen.".to_string()
        }
        (Some(l), state) => {
            let when = super::date_of(&l.locked_at);
            let data = if l.data_existed {
                "; the data file already existed at that time"
            } else {
                ", before the data file existed"
            };
            let mut s = format!(
                "The hypotheses, the direction of each test, α, the exclusion rules and the rule for choosing each test were preregistered: the analysis plan was locked on {}{data}.",
                escape(when)
            );
            if state == LockState::Deviates {
                s.push_str(&format!(
                    " The analysis departs from the locked plan in {}, listed with the reasons in *Changes since the lock*.",
                    plural(r.changes.len(), "field", "fields")
                ));
            }
            s
        }
    };
    match r.plan.exclude.as_slice() {
        [] => s.push_str(" No rows were excluded by rule; values missing from the data were left out of the hypotheses that use them."),
        rules => s.push_str(&format!(
            " Before any statistic was computed, rows were excluded by {}: {}. Values missing from the data were left out of the hypotheses that use them.",
            if rules.len() == 1 {
                "one preregistered rule".to_string()
            } else {
                format!("{} preregistered rules, in this order", rules.len())
            },
            rules
                .iter()
                .map(|e| escape(e.reason.trim_end_matches('.')))
                .collect::<Vec<_>>()
                .join("; ")
        )),
    }
    s.push_str(&format!(
        " Each test was judged at α = {}, and every interval is a {} confidence interval, one-sided where its test is.",
        apa::bounded(r.plan.alpha, 2),
        apa::level(r.plan.confidence)
    ));
    let k = r.hypotheses.len() + r.not_computed.len();
    let correction = match r.correction_applied {
        Correction::None => None,
        Correction::Bonferroni => Some(format!(
            "the Bonferroni correction ({})",
            c.cite(&[refs::DUNN_1961])
        )),
        Correction::Holm => Some(format!(
            "Holm's step-down method ({})",
            c.cite(&[refs::HOLM_1979])
        )),
        Correction::Hochberg => Some(format!(
            "Hochberg's step-up method ({})",
            c.cite(&[refs::HOCHBERG_1988])
        )),
        Correction::FdrBh => Some(format!(
            "the false discovery rate method of {}",
            c.narrative(refs::BENJAMINI_HOCHBERG_1995)
        )),
    };
    if let Some(how) = correction {
        s.push_str(&format!(
            " The {} values of the {k} hypotheses were adjusted by {how}.",
            sym("p")
        ));
    }
    s.push_str(&format!(
        " The analysis ran in attest {}, which records the SHA-256 of the plan and of the data beside the results.",
        escape(&r.version)
    ));
    s
}

/// The works behind a method, as it ran on this design.
fn method_sources(t: &TestResult, design: Design) -> Vec<Source> {
    match t.method {
        Method::StudentT | Method::PairedT | Method::OneSampleT => vec![refs::STUDENT_1908],
        Method::WelchT => vec![refs::WELCH_1947, refs::SATTERTHWAITE_1946],
        Method::MannWhitney => vec![refs::MANN_WHITNEY_1947],
        Method::WilcoxonSignedRank => vec![refs::WILCOXON_1945],
        Method::BrunnerMunzel => vec![refs::BRUNNER_MUNZEL_2000],
        Method::TrimmedT if design == Design::Independent => vec![refs::YUEN_1974],
        Method::TrimmedT => vec![refs::TUKEY_MCLAUGHLIN_1963],
        // A result always names the method that ran; `checked` only
        // chooses one.
        Method::Checked => Vec::new(),
    }
}

/// A method's name as a noun phrase: "the Mann–Whitney *U* test", but
/// "Welch's *t* test" (a possessive takes no article).
fn named(method: Method) -> String {
    let name = method_name(method);
    if name.contains("'s ") {
        name
    } else {
        format!("the {name}")
    }
}

/// A method's name with its citation: "Welch's *t* test (Welch, 1947;
/// Satterthwaite, 1946)".
fn cited_method(t: &TestResult, design: Design, c: &mut Citations) -> String {
    let sources = method_sources(t, design);
    if sources.is_empty() {
        named(t.method)
    } else {
        format!("{} ({})", named(t.method), c.cite(&sources))
    }
}

/// The two sets compared, in words.
fn compared(h: &HypothesisResult) -> String {
    let outcome = escape(&mid_sentence(&h.outcome_label));
    let [a, b] = [escape(&h.labels[0]), escape(&h.labels[1])];
    let s = match h.design {
        Design::Independent => format!("{outcome} was compared between {a} and {b}"),
        Design::Paired => format!("{outcome} was compared within units, {a} against {b}"),
        Design::OneSample => format!(
            "{outcome} was compared with the reference value {}",
            h.reference.map(apa::stated).unwrap_or_default()
        ),
    };
    sentence::capitalise(&s)
}

fn direction(h: &HypothesisResult) -> String {
    let second = match h.design {
        Design::OneSample => "the reference value".to_string(),
        _ => escape(&h.labels[1]),
    };
    let first = escape(&h.labels[0]);
    match h.alternative {
        Alternative::TwoSided => "two-sided".into(),
        Alternative::Greater => {
            format!("one-sided in the preregistered direction of {first} above {second}")
        }
        Alternative::Less => {
            format!("one-sided in the preregistered direction of {first} below {second}")
        }
    }
}

/// The checks that ran, named with their citations: those the `checked`
/// rule reads (Shapiro–Wilk, Brown–Forsythe) and those only reported
/// (Levene).
fn checks_clause(h: &HypothesisResult, c: &mut Citations) -> (Vec<String>, Option<String>) {
    let normality = h.checks.normality.iter().any(|n| n.w.is_some());
    let ran = |m| {
        h.checks
            .spread
            .iter()
            .any(|s| s.method == m && s.f.is_some())
    };
    let mut rule = Vec::new();
    if normality {
        rule.push(format!(
            "Shapiro–Wilk tests of normality ({})",
            c.cite(&[refs::SHAPIRO_WILK_1965, refs::ROYSTON_1995])
        ));
    }
    if ran(SpreadMethod::BrownForsythe) {
        rule.push(format!(
            "the Brown–Forsythe test of equal spread ({})",
            c.cite(&[refs::BROWN_FORSYTHE_1974])
        ));
    }
    let info = ran(SpreadMethod::Levene).then(|| {
        format!(
            "Levene's test of equal spread ({})",
            c.cite(&[refs::LEVENE_1960])
        )
    });
    (rule, info)
}

fn join_and(items: &[String]) -> String {
    match items {
        [] => String::new(),
        [one] => one.clone(),
        [a, b] => format!("{a} and {b}"),
        [init @ .., last] => format!("{}, and {last}", init.join(", ")),
    }
}

/// The rule of `checked` as preregistered and where it led.
fn rule_sentence(h: &HypothesisResult, checks: Option<&str>, c: &mut Citations) -> String {
    let at = apa::bounded(h.checks.check_alpha, 2);
    let ran = cited_method(&h.test, h.design, c);
    let checks = checks.unwrap_or("the assumption checks");
    let (t, rank) = match h.design {
        Design::Independent => (
            method_name(Method::StudentT),
            match h.method {
                Method::BrunnerMunzel => method_name(Method::BrunnerMunzel),
                _ => method_name(Method::MannWhitney),
            },
        ),
        Design::Paired => (
            method_name(Method::PairedT),
            method_name(Method::WilcoxonSignedRank),
        ),
        Design::OneSample => (
            method_name(Method::OneSampleT),
            method_name(Method::WilcoxonSignedRank),
        ),
    };
    let rule = match h.design {
        Design::Independent => format!(
            "{t} if normality held in both groups and the spread did not differ, {} if only the spread differed, and the {rank} if normality was rejected",
            method_name(Method::WelchT)
        ),
        Design::Paired | Design::OneSample => format!(
            "the {t} if normality held for the differences, and the {rank} if it was rejected"
        ),
    };
    let outcome = match h.checks.branch {
        Some(Branch::CheckNotRun) => {
            format!("A check could not run (too few values), so the rule fell back, as preregistered, to {ran}.")
        }
        _ => format!("The checks led to {ran}."),
    };
    format!(
        "The test was chosen by a preregistered rule, with {checks} judged at α = {at}: {rule}. {outcome}"
    )
}

/// The effect sizes, named.
fn effect_words(kind: EffectKind) -> String {
    match kind {
        EffectKind::CohenD => format!("Cohen's {}", sym("d")),
        EffectKind::HedgesG => format!("Hedges' {}", sym("g")),
        EffectKind::DZ => sym_sub("d", "z"),
        EffectKind::RankBiserial => "the rank-biserial correlation".into(),
        EffectKind::ProbabilityOfSuperiority => "the probability of superiority".into(),
        EffectKind::RobustD => format!("the robust {}", sym_sub("d", "R")),
    }
}

fn effect_sources(kind: EffectKind, design: Design) -> Vec<Source> {
    match kind {
        EffectKind::CohenD | EffectKind::DZ => vec![refs::COHEN_1988],
        EffectKind::HedgesG => vec![refs::HEDGES_1981],
        EffectKind::RankBiserial if design == Design::Independent => vec![refs::CURETON_1956],
        EffectKind::RankBiserial => vec![refs::KERBY_2014],
        EffectKind::ProbabilityOfSuperiority => vec![refs::BRUNNER_MUNZEL_2000],
        EffectKind::RobustD => vec![refs::ALGINA_2005],
    }
}

/// The estimate and the standardised effects, with how their intervals
/// were found.
fn size_sentence(h: &HypothesisResult, c: &mut Citations) -> String {
    let level = apa::level(h.estimate.confidence);
    let estimate = match h.estimate.name {
        EstimateKind::HodgesLehmannShift | EstimateKind::HodgesLehmannEstimate => format!(
            "the {} ({}) with its distribution-free {level} confidence interval",
            estimate_name(h.estimate.name),
            c.cite(&[refs::HODGES_LEHMANN_1963])
        ),
        kind => format!(
            "the {} with its {level} confidence interval",
            estimate_name(kind)
        ),
    };
    let mut effects = Vec::new();
    let mut noncentral = false;
    for e in &h.test.effects {
        noncentral |= matches!(
            e.name,
            EffectKind::CohenD | EffectKind::HedgesG | EffectKind::DZ
        );
        let sources = effect_sources(e.name, h.design);
        effects.push(format!("{} ({})", effect_words(e.name), c.cite(&sources)));
    }
    let mut s = format!("The difference was estimated as {estimate}");
    if !effects.is_empty() {
        s.push_str(&format!(
            ", and its standardised size as {}",
            join_and(&effects)
        ));
        if noncentral {
            s.push_str(&format!(
                ", with intervals found by inverting the noncentral {} distribution ({})",
                sym("t"),
                c.cite(&[refs::STEIGER_FOULADI_1997])
            ));
        }
    }
    s.push('.');
    s
}

/// How p was found, and the conventions the test ran under.
fn p_and_conventions(t: &TestResult, c: &mut Citations) -> Vec<String> {
    let mut out = Vec::new();
    if let Some(how) = sentence::p_origin(t) {
        match t.p_detail {
            Some(RankPMethod::StudentisedPermutation) => {
                c.cite(&[refs::NEUBERT_BRUNNER_2007]);
            }
            Some(RankPMethod::StudentisedPermutationSampled) => {
                c.cite(&[refs::NEUBERT_BRUNNER_2007]);
            }
            _ => {}
        }
        out.push(format!("Its {} {how}.", sym("p")));
        match t.p_detail {
            Some(RankPMethod::ExactWithTies) => out.push(format!(
                "The exact distribution given the ties was computed with the shift algorithm described by {}.",
                c.narrative(refs::STREITBERG_ROHMEL_1986)
            )),
            Some(RankPMethod::StudentisedPermutationSampled) => out.push(format!(
                "With {} of the random splits at least as extreme as the data, {} = (1 + {})/(1 + {}), which is never 0 ({}).",
                sym("b"),
                sym("p"),
                sym("b"),
                sym("B"),
                c.cite(&[refs::PHIPSON_SMYTH_2010])
            )),
            _ => {}
        }
    }
    if let Some(words) = sentence::conventions(t) {
        if t.method == Method::TrimmedT {
            c.cite(&[refs::ALGINA_2005]);
        }
        out.push(words);
        if t.method == Method::WilcoxonSignedRank && t.zero_rule == Some(ZeroRule::KeepInRanking) {
            out.push(format!("That rule is {}'s.", c.narrative(refs::PRATT_1959)));
        }
    }
    out
}

fn hypothesis_paragraph(r: &Results, h: &HypothesisResult, c: &mut Citations) -> String {
    let mut parts = vec![format!(
        "**{}.** {}",
        escape(&h.id),
        escape(&full_stop(&h.claim))
    )];
    let (checks, info) = checks_clause(h, c);
    let chose = h.checks.branch.is_some();
    if chose {
        parts.push(format!("{} ({}).", compared(h), direction(h)));
        let rule = (!checks.is_empty()).then(|| join_and(&checks));
        parts.push(rule_sentence(h, rule.as_deref(), c));
        if let Some(info) = &info {
            parts.push(format!(
                "{} was reported for information only.",
                sentence::capitalise(info)
            ));
        }
    } else {
        let all: Vec<String> = checks.into_iter().chain(info).collect();
        let checks = (!all.is_empty()).then(|| join_and(&all));
        let sources = method_sources(&h.test, h.design);
        parts.push(format!(
            "{}, with the preregistered {} ({}), {}.",
            compared(h),
            method_name(h.test.method),
            c.cite(&sources),
            direction(h)
        ));
        if let Some(checks) = &checks {
            parts.push(format!(
                "{} were reported for information; the plan fixed the test, so they changed nothing.",
                sentence::capitalise(checks)
            ));
        }
    }
    parts.extend(p_and_conventions(&h.test, c));
    parts.push(size_sentence(h, c));
    if let Some(eq) = &h.equivalence {
        let bound = |x: f64| {
            if eq.on.in_outcome_units() {
                apa::stated(x)
            } else {
                apa::bounded(x, 2)
            }
        };
        let units = match (&h.units, eq.on.in_outcome_units()) {
            (Some(u), true) => format!(" {}", escape(u)),
            _ => String::new(),
        };
        let mut cites = vec![refs::SCHUIRMANN_1987];
        if eq.on == EstimateKind::ProbabilityOfSuperiority {
            cites.push(refs::MUNZEL_HAUSCHKE_2003);
        }
        parts.push(format!(
            "Equivalence of the {} within {} to {}{units} was tested with two one-sided tests ({}), whose verdict rests on the {} interval.",
            estimate_name(eq.on),
            bound(eq.low),
            bound(eq.high),
            c.cite(&cites),
            apa::level(eq.ci_level)
        ));
    }
    if !h.robustness.is_empty() {
        let methods: Vec<String> = h
            .robustness
            .iter()
            .map(|t| {
                let mut sources = method_sources(t, h.design);
                if matches!(
                    t.estimate.name,
                    EstimateKind::HodgesLehmannShift | EstimateKind::HodgesLehmannEstimate
                ) {
                    sources.push(refs::HODGES_LEHMANN_1963);
                }
                format!("{} ({})", named(t.method), c.cite(&sources))
            })
            .collect();
        parts.push(format!(
            "To see whether the conclusion depends on the method, the comparison was also run, not preregistered, with {}.",
            join_and(&methods)
        ));
    }
    if r.rehearsal.is_some() {
        parts.push("These are blinded values from a rehearsal, not results.".into());
    }
    parts.join(" ")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn lists_join_as_english_does() {
        let s = |v: &[&str]| join_and(&v.iter().map(|x| x.to_string()).collect::<Vec<_>>());
        assert_eq!(s(&["a"]), "a");
        assert_eq!(s(&["a", "b"]), "a and b");
        assert_eq!(s(&["a", "b", "c"]), "a, b, and c");
    }

    #[test]
    fn a_claim_gets_one_full_stop() {
        assert_eq!(
            full_stop("Tutored pupils score higher"),
            "Tutored pupils score higher."
        );
        assert_eq!(full_stop("Is it higher?"), "Is it higher?");
    }
}
