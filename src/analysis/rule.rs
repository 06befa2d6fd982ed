//! The `checked` rule: which test the preregistered assumption checks
//! send a hypothesis to. Kept apart so that every branch is tested on its
//! own, for every design, without running a test.
//!
//! The rule (README, "The analysis file", methods): if any normality check
//! rejects, the rank test; else if a check could not run, the rank-free
//! fallback (Welch for independent groups, the t test otherwise); else, for
//! independent groups, Student's t when the spread check keeps equal
//! spread and Welch's when it rejects; for paired and one-sample designs,
//! the t test.

use crate::plan::{Design, Method};
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
pub(super) fn choose(planned: Method, design: Design, c: &Checks) -> Method {
    if planned != Method::Checked {
        return planned;
    }
    match (branch(design, c), design) {
        (Branch::NotNormal, Design::Independent) => Method::MannWhitney,
        (Branch::NotNormal, _) => Method::WilcoxonSignedRank,
        (Branch::NormalEqualSpread, Design::Independent) => Method::StudentT,
        (_, Design::Independent) => Method::WelchT,
        (_, Design::Paired) => Method::PairedT,
        (_, Design::OneSample) => Method::OneSampleT,
    }
}
