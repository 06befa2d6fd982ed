//! The `checked` rule: which test the preregistered assumption checks
//! send a hypothesis to. Kept apart so that every branch is tested on its
//! own, for every design, without running a test.
//!
//! The rule (README, "The analysis file", methods): if any normality check
//! rejects, the rank test (for independent groups the plan's
//! `rank_fallback`: Mann–Whitney unless it names Brunner–Munzel); else if a check could not run, the rank-free
//! fallback (Welch for independent groups, the t test otherwise); else, for
//! independent groups, Student's t when the spread check keeps equal
//! spread and Welch's when it rejects; for paired and one-sample designs,
//! the t test.

use crate::plan::{Design, Method, RankFallback};
use crate::results::{Branch, Checks};

/// The branch of the `checked` rule the checks lead to.
pub(super) fn branch(design: Design, c: &Checks) -> Branch {
    if c.normality.iter().any(|n| n.rejected == Some(true)) {
        return Branch::NotNormal;
    }
    if c.normality.iter().any(|n| n.rejected.is_none()) {
        return Branch::CheckNotRun;
    }
    if design == Design::Independent {
        match c.spread.first().and_then(|s| s.rejected) {
            Some(true) => Branch::NormalUnequalSpread,
            Some(false) => Branch::NormalEqualSpread,
            None => Branch::CheckNotRun,
        }
    } else {
        Branch::NormalEqualSpread
    }
}

/// The method actually run: the plan's, or the `checked` rule's choice.
pub(super) fn choose(
    planned: Method,
    design: Design,
    fallback: RankFallback,
    c: &Checks,
) -> Method {
    if planned != Method::Checked {
        return planned;
    }
    match (branch(design, c), design) {
        (Branch::NotNormal, Design::Independent) => match fallback {
            RankFallback::MannWhitney => Method::MannWhitney,
            RankFallback::BrunnerMunzel => Method::BrunnerMunzel,
        },
        (Branch::NotNormal, _) => Method::WilcoxonSignedRank,
        (Branch::NormalEqualSpread, Design::Independent) => Method::StudentT,
        (_, Design::Independent) => Method::WelchT,
        (_, Design::Paired) => Method::PairedT,
        (_, Design::OneSample) => Method::OneSampleT,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::results::{NormalityCheck, SpreadCheck, SpreadMethod};

    /// A check outcome: `Some(true)` rejected, `Some(false)` kept, `None`
    /// could not run.
    type Outcome = Option<bool>;

    fn normality(r: Outcome) -> NormalityCheck {
        NormalityCheck {
            label: "values".into(),
            n: if r.is_some() { 12 } else { 2 },
            w: r.map(|_| 0.9),
            p: r.map(|rej| if rej { 0.01 } else { 0.4 }),
            rejected: r,
            not_run: r.is_none().then(|| "too few values".into()),
        }
    }

    fn spread(method: SpreadMethod, r: Outcome) -> SpreadCheck {
        SpreadCheck {
            method,
            f: r.map(|_| 2.0),
            df1: r.map(|_| 1.0),
            df2: r.map(|_| 22.0),
            p: r.map(|rej| if rej { 0.01 } else { 0.4 }),
            rejected: r,
            not_run: r.is_none().then(|| "too few values".into()),
        }
    }

    fn checks(norm: &[Outcome], brown_forsythe: Option<Outcome>) -> Checks {
        Checks {
            check_alpha: 0.05,
            normality: norm.iter().map(|&r| normality(r)).collect(),
            // Levene is reported but never drives the rule: give it the
            // opposite outcome to show it is ignored.
            spread: brown_forsythe
                .map(|r| {
                    vec![
                        spread(SpreadMethod::BrownForsythe, r),
                        spread(SpreadMethod::Levene, r.map(|x| !x)),
                    ]
                })
                .unwrap_or_default(),
            branch: None,
        }
    }

    const OUTCOMES: [Outcome; 3] = [Some(true), Some(false), None];

    /// Every combination of the two groups' normality checks and the
    /// spread check, against the rule as the README states it.
    #[test]
    fn independent_groups_every_combination() {
        for a in OUTCOMES {
            for b in OUTCOMES {
                for s in OUTCOMES {
                    let c = checks(&[a, b], Some(s));
                    let (want_branch, want_method) = if a == Some(true) || b == Some(true) {
                        (Branch::NotNormal, Method::MannWhitney)
                    } else if a.is_none() || b.is_none() || s.is_none() {
                        (Branch::CheckNotRun, Method::WelchT)
                    } else if s == Some(true) {
                        (Branch::NormalUnequalSpread, Method::WelchT)
                    } else {
                        (Branch::NormalEqualSpread, Method::StudentT)
                    };
                    let case = format!("normality {a:?}/{b:?}, spread {s:?}");
                    assert_eq!(branch(Design::Independent, &c), want_branch, "{case}");
                    assert_eq!(
                        choose(
                            Method::Checked,
                            Design::Independent,
                            RankFallback::MannWhitney,
                            &c
                        ),
                        want_method,
                        "{case}"
                    );
                    // The declared fallback replaces Mann–Whitney, and
                    // only Mann–Whitney.
                    let with_bm = if want_method == Method::MannWhitney {
                        Method::BrunnerMunzel
                    } else {
                        want_method
                    };
                    assert_eq!(
                        choose(
                            Method::Checked,
                            Design::Independent,
                            RankFallback::BrunnerMunzel,
                            &c
                        ),
                        with_bm,
                        "{case}, Brunner–Munzel fallback"
                    );
                }
            }
        }
    }

    #[test]
    fn paired_and_one_sample_follow_the_differences_alone() {
        for (design, t) in [
            (Design::Paired, Method::PairedT),
            (Design::OneSample, Method::OneSampleT),
        ] {
            for n in OUTCOMES {
                let c = checks(&[n], None);
                let (want_branch, want_method) = match n {
                    Some(true) => (Branch::NotNormal, Method::WilcoxonSignedRank),
                    Some(false) => (Branch::NormalEqualSpread, t),
                    None => (Branch::CheckNotRun, t),
                };
                assert_eq!(branch(design, &c), want_branch, "{design:?} {n:?}");
                for fallback in [RankFallback::MannWhitney, RankFallback::BrunnerMunzel] {
                    assert_eq!(choose(Method::Checked, design, fallback, &c), want_method);
                }
            }
        }
    }

    #[test]
    fn a_fixed_method_is_kept_whatever_the_checks_say() {
        let rejecting = checks(&[Some(true), Some(true)], Some(Some(true)));
        for m in [
            Method::StudentT,
            Method::WelchT,
            Method::MannWhitney,
            Method::BrunnerMunzel,
            Method::TrimmedT,
        ] {
            assert_eq!(
                choose(
                    m,
                    Design::Independent,
                    RankFallback::BrunnerMunzel,
                    &rejecting
                ),
                m
            );
        }
        let rejecting = checks(&[Some(true)], None);
        for m in [Method::PairedT, Method::TrimmedT] {
            assert_eq!(
                choose(m, Design::Paired, RankFallback::MannWhitney, &rejecting),
                m
            );
        }
    }
}
