//! Words for methods, statistics and effects, and the one APA-style
//! sentence that sums up each hypothesis ("In one sentence").
//!
//! Everything returned is Markdown; text from the plan (labels, outcome
//! names, units) is escaped here, so the result can be placed in a
//! template as it is. The numbers come from [`super::apa`].

use super::apa::{self, sym, two};
use crate::render::markdown::escape;
use crate::results::{
    Decision, Design, EffectKind, EffectSize, EquivalenceResult, Estimate, EstimateKind,
    GroupSummary, HypothesisResult, Method, StatisticKind, TestResult,
};
use crate::stats::multiplicity::Correction;
use crate::stats::rank_tests::ZeroRule;
use crate::stats::{Alternative, PMethod, RankPMethod};

/// The name of a method as a reader knows it, in Markdown: the statistic
/// in a name is a symbol and italic, as APA style writes test names
/// ("*t* test", "Mann–Whitney *U* test"; Publication Manual, 7th ed.,
/// §6.44).
pub(crate) fn method_name(method: Method) -> String {
    match method {
        Method::StudentT => "Student's *t* test",
        Method::WelchT => "Welch's *t* test",
        Method::MannWhitney => "Mann–Whitney *U* test",
        Method::PairedT => "paired *t* test",
        Method::WilcoxonSignedRank => "Wilcoxon signed-rank test",
        Method::OneSampleT => "one-sample *t* test",
        Method::BrunnerMunzel => "Brunner–Munzel test",
        Method::TrimmedT => "trimmed-mean *t* test",
        Method::Checked => "chosen by the checks, `checked`",
    }
    .into()
}

/// The name of a method as plain text, where no italics can be set (the
/// text inside a figure).
pub(crate) fn method_plain(method: Method) -> String {
    method_name(method).replace(['*', '`'], "")
}

/// An outcome's name inside a sentence: sentence case, so its first letter
/// is lowercase unless the first word is an abbreviation ("IQ score",
/// "HbA1c") that keeps its capitals.
pub(crate) fn mid_sentence(name: &str) -> String {
    let first_word = name.split_whitespace().next().unwrap_or("");
    let keeps = first_word
        .chars()
        .skip(1)
        .any(|c| c.is_uppercase() || c.is_ascii_digit());
    let mut c = name.chars();
    match c.next() {
        Some(f) if !keeps => f.to_lowercase().chain(c).collect(),
        _ => name.to_string(),
    }
}

/// What an estimate of the difference is called in sentences and figures.
pub(crate) fn estimate_name(kind: EstimateKind) -> &'static str {
    match kind {
        EstimateKind::MeanDifference => "mean difference",
        EstimateKind::HodgesLehmannShift => "Hodges–Lehmann shift",
        EstimateKind::HodgesLehmannEstimate => "Hodges–Lehmann estimate",
        EstimateKind::TrimmedMeanDifference => "trimmed mean difference",
        EstimateKind::TrimmedMeanOfDifferences => "trimmed mean of the differences",
        EstimateKind::ProbabilityOfSuperiority => "probability of superiority",
    }
}

/// The number rule of an estimate: `decimals` for a difference (see
/// [`apa::measured`]), two and no leading zero for a probability (APA 7 §6.36, values that cannot
/// exceed 1).
pub(crate) fn estimate_number(
    kind: EstimateKind,
    decimals: usize,
) -> impl Fn(f64) -> String + Copy {
    move |x| {
        if kind.in_outcome_units() {
            apa::fixed(x, decimals)
        } else {
            apa::bounded(x, 2)
        }
    }
}

/// Whether a test's df are fractional (Satterthwaite-type) and so are
/// written with two decimals.
fn fractional_df(test: &TestResult) -> bool {
    match test.method {
        Method::WelchT | Method::BrunnerMunzel => true,
        Method::TrimmedT => test.df.is_some_and(|d| d.fract() != 0.0),
        Method::StudentT
        | Method::PairedT
        | Method::OneSampleT
        | Method::MannWhitney
        | Method::WilcoxonSignedRank
        | Method::Checked => false,
    }
}

/// The statistic without the method's name: `*t*(97.31) = 2.71`,
/// `*U* = 312`, `*W*+ = 123`; for an undefined statistic, words.
pub(crate) fn bare_statistic(test: &TestResult) -> String {
    let Some(value) = test.statistic else {
        return "the statistic is undefined, since neither group's placements vary".into();
    };
    match test.statistic_name {
        StatisticKind::U => format!("{} = {}", sym("U"), apa::rank_statistic(value)),
        StatisticKind::WPlus => format!("{}+ = {}", sym("W"), apa::rank_statistic(value)),
        StatisticKind::T => {
            let df = test
                .df
                .map(|d| format!("({})", apa::df(d, fractional_df(test))))
                .unwrap_or_default();
            format!("{}{df} = {}", sym("t"), two(value))
        }
    }
}

/// The statistic with its df and the test's name where the symbol alone
/// would not say it: `Welch's *t*(97.31) = 2.71`, `*t*(48) = 2.71`,
/// `Mann–Whitney *U* = 312, *z* = 2.31`, `Wilcoxon *W*+ = 123`,
/// `Brunner–Munzel *t*(17.42) = 2.10`, `trimmed *t*(11) = 1.90`.
pub(crate) fn statistic(test: &TestResult) -> String {
    let who = match test.method {
        Method::WelchT => "Welch's ",
        Method::MannWhitney => "Mann–Whitney ",
        Method::WilcoxonSignedRank => "Wilcoxon ",
        Method::BrunnerMunzel => "Brunner–Munzel ",
        // Yuen's two-group test has Welch-type (fractional) df; the
        // one-sample and paired trimmed t have h − 1.
        Method::TrimmedT if fractional_df(test) => "Yuen's trimmed ",
        Method::TrimmedT => "trimmed ",
        Method::StudentT | Method::PairedT | Method::OneSampleT | Method::Checked => "",
    };
    let mut out = if test.statistic.is_some() {
        format!("{who}{}", bare_statistic(test))
    } else {
        format!("{who}statistic undefined (neither group's placements vary)")
    };
    if let Some(z) = test.z {
        out.push_str(&format!(", {} = {}", sym("z"), two(z)));
    }
    out
}

/// An effect size's symbol and the number rule its values follow.
fn effect_symbol(kind: EffectKind) -> (String, fn(f64) -> String) {
    let bounded: fn(f64) -> String = |x| apa::bounded(x, 2);
    match kind {
        EffectKind::CohenD => (sym("d"), two),
        EffectKind::HedgesG => (sym("g"), two),
        EffectKind::DZ => (apa::sym_sub("d", "z"), two),
        EffectKind::RankBiserial => (format!("rank-biserial {}", sym("r")), bounded),
        EffectKind::ProbabilityOfSuperiority => ("probability of superiority".into(), bounded),
        EffectKind::RobustD => (format!("robust {}", apa::sym_sub("d", "R")), two),
    }
}

/// An effect size with its symbol and (when computed) its interval:
/// `*d* = 0.52, 95% CI [0.11, 0.93]`.
pub(crate) fn effect(e: &EffectSize, confidence: f64) -> String {
    let (name, fmt) = effect_symbol(e.name);
    let mut out = format!("{name} = {}", fmt(e.value));
    if e.ci_low.is_some() || e.ci_high.is_some() {
        out.push_str(&format!(
            ", {}",
            apa::ci(confidence, e.ci_low, e.ci_high, fmt)
        ));
    }
    out
}

/// An estimate of the difference with its interval and units (none for
/// a probability), a difference to `decimals` (see [`apa::measured`]).
pub(crate) fn estimate(e: &Estimate, units: Option<&str>, decimals: usize) -> String {
    let u = units
        .filter(|_| e.name.in_outcome_units())
        .map(|u| format!(" {}", escape(u)))
        .unwrap_or_default();
    let f = estimate_number(e.name, decimals);
    format!(
        "{} = {}{u}, {}",
        estimate_name(e.name),
        f(e.value),
        apa::ci(e.confidence, e.ci_low, e.ci_high, f)
    )
}

/// What a correction is called after an adjusted p.
pub(crate) fn correction_name(c: Correction) -> Option<&'static str> {
    match c {
        Correction::None => None,
        Correction::Bonferroni => Some("Bonferroni-adjusted"),
        Correction::Holm => Some("Holm-adjusted"),
        Correction::Hochberg => Some("Hochberg-adjusted"),
        Correction::FdrBh => Some("Benjamini–Hochberg-adjusted"),
    }
}

/// The name of a correction method as a reader knows it.
pub(crate) fn correction_method(c: Correction) -> Option<&'static str> {
    match c {
        Correction::None => None,
        Correction::Bonferroni => Some("Bonferroni"),
        Correction::Holm => Some("Holm's step-down method"),
        Correction::Hochberg => Some("Hochberg's step-up method"),
        Correction::FdrBh => Some("Benjamini–Hochberg false discovery rate"),
    }
}

/// The p clause of a hypothesis: adjusted when a correction applies, with
/// the sidedness when one-sided.
pub(crate) fn p_of(h: &HypothesisResult, correction: Correction) -> String {
    let mut out = match correction_name(correction) {
        Some(name) => format!("{} ({name})", apa::p_clause(h.p_adjusted)),
        None => apa::p_clause(h.p),
    };
    if let Some(s) = apa::sidedness(h.alternative != Alternative::TwoSided) {
        out.push_str(&format!(", {s}"));
    }
    out
}

fn describe(g: Option<&GroupSummary>, rank: bool, decimals: usize) -> String {
    let Some(g) = g.map(|g| &g.describe) else {
        return String::new();
    };
    let f = |x| apa::fixed(x, decimals);
    if rank {
        format!(" ({} = {})", sym("Mdn"), f(g.median))
    } else {
        match g.sd {
            Some(sd) => format!(" ({} = {}, {} = {})", sym("M"), f(g.mean), sym("SD"), f(sd)),
            None => format!(" ({} = {})", sym("M"), f(g.mean)),
        }
    }
}

/// `s` with its first letter in capitals (a sentence's opening).
pub(crate) fn capitalise(s: &str) -> String {
    capitalised(s)
}

fn capitalised(s: &str) -> String {
    let mut c = s.chars();
    match c.next() {
        Some(f) => f.to_uppercase().chain(c).collect(),
        None => String::new(),
    }
}

/// The copyable result sentence for one hypothesis.
pub(crate) fn one_sentence(h: &HypothesisResult, correction: Correction) -> String {
    if let Some(eq) = &h.equivalence {
        return equivalence_sentence(h, eq);
    }
    let rank = h.method.is_rank();
    let digits = apa::measured(h.recorded_decimals);
    let outcome = escape(&mid_sentence(&h.outcome_label));
    let opening = escape(&capitalised(&h.outcome_label));
    let (a, b) = (escape(&h.labels[0]), escape(&h.labels[1]));
    let (da, db) = (
        describe(h.groups.first(), rank, digits),
        describe(h.groups.get(1), rank, digits),
    );
    let rejected = h.decision == Decision::Reject;
    // The estimate on the side opposite to the preregistered direction:
    // the sentence says which way the data went, and that it is not the
    // way the plan expected.
    let null = h.estimate.name.null_value();
    let opposite = match h.alternative {
        Alternative::Greater => h.estimate.value < null,
        Alternative::Less => h.estimate.value > null,
        Alternative::TwoSided => false,
    };
    let higher = match h.alternative {
        Alternative::Greater => !opposite,
        Alternative::Less => opposite,
        Alternative::TwoSided => h.estimate.value >= null,
    };
    let expected = match (h.alternative, rank) {
        (Alternative::Greater, false) => "higher",
        (Alternative::Greater, true) => "tending to be higher",
        (_, false) => "lower",
        (_, true) => "tending to be lower",
    };
    let against = format!(", the opposite of the preregistered direction ({expected})");
    let word = match (rank, higher) {
        (false, true) => "higher",
        (false, false) => "lower",
        (true, true) => "tended to be higher",
        (true, false) => "tended to be lower",
    };
    let (on_a, on_b) = match h.design {
        Design::Paired => (format!("in {a}"), format!("in {b}")),
        Design::Independent | Design::OneSample => (format!("for {a}"), format!("for {b}")),
    };
    let lead = match (h.design, rejected, h.alternative) {
        (Design::OneSample, _, _) if opposite => {
            let reference = h.reference.map(apa::stated).unwrap_or_default();
            format!(
                "{} in {a}{da} was {word} than the reference value of {reference}{against}",
                opening
            )
            .replace("was tended", "tended")
        }
        (_, _, _) if opposite => {
            format!("{} was {word} {on_a}{da} than {on_b}{db}{against}", opening)
                .replace("was tended", "tended")
        }
        (Design::OneSample, _, _) => {
            let reference = h.reference.map(apa::stated).unwrap_or_default();
            let verb = if rejected {
                format!("was {word} than")
            } else if h.alternative == Alternative::TwoSided {
                "did not differ detectably from".into()
            } else {
                format!(
                    "was not shown to be {} than",
                    word.trim_start_matches("tended to be ")
                )
            };
            format!(
                "{} in {a}{da} {verb} the reference value of {reference}",
                opening
            )
        }
        (_, true, _) => format!("{} was {word} {on_a}{da} than {on_b}{db}", opening)
            .replace("was tended", "tended"),
        (_, false, Alternative::TwoSided) => {
            format!("The data did not show a difference in {outcome} between {a}{da} and {b}{db}")
        }
        (_, false, _) => format!(
            "{} was not shown to be {} {on_a}{da} than {on_b}{db}",
            opening,
            word.trim_start_matches("tended to be ")
        ),
    };
    let conf = h.estimate.confidence;
    format!(
        "{lead}, {}, {}; {}; {}.",
        statistic(&h.test),
        p_of(h, correction),
        estimate(&h.estimate, h.units.as_deref(), digits),
        effect(&h.effect, conf)
    )
}

fn equivalence_sentence(h: &HypothesisResult, eq: &EquivalenceResult) -> String {
    let outcome = escape(&mid_sentence(&h.outcome_label));
    let digits = apa::measured(h.recorded_decimals);
    let (a, b) = (escape(&h.labels[0]), escape(&h.labels[1]));
    let u = if eq.on.in_outcome_units() {
        h.units
            .as_deref()
            .map(|u| format!(" {}", escape(u)))
            .unwrap_or_default()
    } else {
        String::new()
    };
    let fmt = estimate_number(eq.on, digits);
    let bound = |x: f64| {
        if eq.on.in_outcome_units() {
            apa::stated(x)
        } else {
            apa::bounded(x, 2)
        }
    };
    let verdict = if h.decision == Decision::Reject {
        "was equivalent within the bounds"
    } else {
        "was not shown equivalent within the bounds"
    };
    let between = match h.design {
        Design::OneSample => format!("{a} and the reference value"),
        Design::Independent | Design::Paired => format!("{a} and {b}"),
    };
    let what = match eq.on {
        EstimateKind::MeanDifference => "difference".to_string(),
        other => estimate_name(other).to_string(),
    };
    format!(
        "The {what} in {outcome} between {between} {verdict} of {} and {}{u} ({}); {what} = {}{u}, {}.",
        bound(eq.low),
        bound(eq.high),
        equivalence_tests(h, eq, false),
        fmt(h.estimate.value),
        apa::ci(eq.ci_level, Some(eq.ci_low), Some(eq.ci_high), fmt),
    )
}

/// The two one-sided tests of an equivalence result, in words: with
/// their t statistics where they have them, otherwise naming the shifted
/// rank test. `long` adds "against the lower/upper bound".
pub(crate) fn equivalence_tests(
    h: &HypothesisResult,
    eq: &EquivalenceResult,
    long: bool,
) -> String {
    let (lower, upper) = if long {
        ("against the lower bound ", "against the upper bound ")
    } else {
        ("", "")
    };
    let fractional = fractional_df(&h.test);
    let one = |t: Option<f64>, p: f64| match (t, eq.df) {
        (Some(t), Some(df)) => format!(
            "{}({}) = {}, {}",
            sym("t"),
            apa::df(df, fractional),
            two(t),
            apa::p_clause(p)
        ),
        _ => apa::p_clause(p),
    };
    let name = match (eq.t_lower, h.method) {
        (Some(_), _) => "two one-sided tests",
        (None, Method::WilcoxonSignedRank) => {
            "two one-sided signed-rank tests on the shifted differences"
        }
        (None, _) => "two one-sided Mann–Whitney tests on the shifted values",
    };
    format!(
        "{name}: {lower}{}; {upper}{}",
        one(eq.t_lower, eq.p_lower),
        one(eq.t_upper, eq.p_upper)
    )
}

/// How a test's p was obtained, as the clause after "*p*" (none for t
/// tests, whose p is from the t distribution as the statistic says).
pub(crate) fn p_origin(t: &TestResult) -> Option<String> {
    let detail = match (t.p_detail, t.p_method) {
        (Some(d), _) => d,
        (None, Some(PMethod::Exact)) => RankPMethod::Exact,
        (None, Some(PMethod::NormalApproximation)) => RankPMethod::NormalApproximation,
        (None, Some(PMethod::RandomPermutations)) => RankPMethod::StudentisedPermutationSampled,
        (None, Some(PMethod::TApproximation)) => RankPMethod::TApproximation,
        (None, None) => return None,
    };
    let splits = t.permutations.unwrap_or(0);
    Some(match (detail, t.continuity_correction) {
        (RankPMethod::StudentisedPermutation, _) => format!(
            "is exact, from all {splits} ways of splitting the pooled values into two groups of these sizes (the studentised permutation test of Neubert & Brunner, 2007)"
        ),
        (RankPMethod::StudentisedPermutationSampled, _) => format!(
            "is from {splits} random splits of the pooled values into two groups of these sizes, drawn from the plan's seed (the studentised permutation test of Neubert & Brunner, 2007)"
        ),
        (RankPMethod::TApproximation, _) => {
            "is from Student's *t* with Satterthwaite's degrees of freedom (Brunner & Munzel, 2000)".into()
        }
        (RankPMethod::Exact, _) => {
            "is exact, from the permutation distribution of the statistic".into()
        }
        (RankPMethod::ExactWithTies, _) => {
            "is exact, from the permutation distribution of the statistic given the ties".into()
        }
        (RankPMethod::NormalApproximation, Some(false)) => {
            "is from the normal approximation, corrected for ties, without a continuity correction (as the plan states)".into()
        }
        (RankPMethod::NormalApproximation, _) => {
            "is from the normal approximation, corrected for ties and continuity"
        }
        .into(),
    })
}

/// The conventions a test ran under, in words: the zero-difference rule
/// of a signed-rank test with the count it affected, the trimming of a
/// trimmed t, what Brunner–Munzel does when its variance is 0 (none for
/// the other tests).
pub(crate) fn conventions(t: &TestResult) -> Option<String> {
    match t.method {
        Method::WilcoxonSignedRank => {}
        Method::TrimmedT => {
            let share = format!("{:.0}%", t.trim.unwrap_or(0.0) * 100.0);
            let whose = match t.estimate.name {
                EstimateKind::TrimmedMeanOfDifferences => {
                    "the differences are trimmed (the trimmed *t* of Tukey & McLaughlin, 1963, on the differences; this is the trimmed mean of the differences, not the difference of the two trimmed means)".to_string()
                }
                _ if t.df.is_some_and(|d| d.fract() != 0.0) => {
                    "each group is trimmed (Yuen's 1974 test, with Welch-type degrees of freedom)".to_string()
                }
                _ => "the values are trimmed (the trimmed *t* of Tukey & McLaughlin, 1963)".to_string(),
            };
            return Some(format!(
                "{share} of the values are cut from each end before the means are taken: {whose}. The effect, robust {}, is the trimmed difference over the winsorised standard deviation, rescaled to estimate Cohen's {} under normality (Algina et al., 2005).",
                apa::sym_sub("d", "R"),
                sym("d")
            ));
        }
        Method::BrunnerMunzel => {
            return t.statistic.is_none().then(|| {
                "Neither group's placements vary (for example, the groups do not overlap), so the variance estimate is 0 and the Brunner–Munzel statistic is undefined; *p* is therefore taken from the permutation distribution and the interval is the whole range of a probability, 0 to 1.".to_string()
            });
        }
        Method::StudentT
        | Method::WelchT
        | Method::PairedT
        | Method::OneSampleT
        | Method::MannWhitney
        | Method::Checked => return None,
    }
    let dropped = t.zeros_dropped.unwrap_or(0);
    let ranked = t.zeros_ranked.unwrap_or(0);
    Some(match t.zero_rule.unwrap_or_default() {
        ZeroRule::Drop if dropped > 0 => format!(
            "Zero differences are dropped before ranking (Wilcoxon's rule); {dropped} dropped."
        ),
        ZeroRule::Drop => {
            "Zero differences are dropped before ranking (Wilcoxon's rule); there were none.".to_string()
        }
        ZeroRule::KeepInRanking => format!(
            "Zero differences are ranked with the others and then left out of the sum of positive ranks (Pratt's rule, as the plan states); {ranked} ranked."
        ),
    })
}
