//! Why a hypothesis cannot be computed, in words that are true of its
//! values: "all values are identical" only when every value is the same,
//! otherwise what is actually degenerate (no spread within either group,
//! every paired difference the same, …).

use crate::plan::Design;
use crate::stats::StatsError;

/// The reason a statistic failed on these values. `first` and `second`
/// are the two sets (one-sample: `second` is empty), `diffs` the paired
/// differences or the one-sample values.
pub(crate) fn why(
    e: &StatsError,
    design: Design,
    labels: &[String; 2],
    first: &[f64],
    second: &[f64],
    diffs: &[f64],
) -> String {
    if let StatsError::TooFew { got: 0, .. } = e {
        let empty: Vec<&str> = match design {
            Design::Independent => [(first, &labels[0]), (second, &labels[1])]
                .iter()
                .filter(|(x, _)| x.is_empty())
                .map(|(_, l)| l.as_str())
                .collect(),
            _ => Vec::new(),
        };
        return match empty.as_slice() {
            [one] => format!(
                "no value of \"{}\" is left after missing values and exclusions ({e})",
                crate::error::clean(one)
            ),
            [_, _] => format!(
                "no value of either group is left after missing values and exclusions ({e})"
            ),
            _ => format!("no value is left after missing values and exclusions ({e})"),
        };
    }
    let constant = |x: &[f64]| x.first().map(|a| x.iter().all(|b| b == a)).unwrap_or(false);
    match (e, design) {
        (StatsError::ZeroVariance, Design::Independent) => {
            if constant(first) && constant(second) && first.first() == second.first() {
                e.to_string()
            } else if constant(first) && constant(second) {
                "every value within each group is the same, so there is no spread within the \
                 groups (the groups differ only as a whole)"
                    .into()
            } else {
                "the values carry no spread the method can use (every value within a group is \
                 the same, or the groups do not overlap at all)"
                    .into()
            }
        }
        (StatsError::ZeroVariance, Design::Paired) if constant(diffs) => {
            if constant(first) && constant(second) && first.first() == second.first() {
                e.to_string()
            } else {
                "every paired difference is the same, so the differences have no spread".into()
            }
        }
        (StatsError::ZeroVariance, Design::OneSample) if constant(diffs) => e.to_string(),
        _ => e.to_string(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn identical_only_when_identical() {
        let z = StatsError::ZeroVariance;
        let l = ["a".to_string(), "b".to_string()];
        let same = why(&z, Design::Independent, &l, &[2.0, 2.0], &[2.0, 2.0], &[]);
        assert_eq!(same, "all values are identical, so the spread is zero");
        let apart = why(&z, Design::Independent, &l, &[2.0, 2.0], &[3.0, 3.0], &[]);
        assert!(!apart.contains("identical"), "{apart}");
        assert!(apart.contains("within each group"), "{apart}");
        let shifted = why(
            &z,
            Design::Paired,
            &l,
            &[3.0, 4.0],
            &[1.0, 2.0],
            &[2.0, 2.0],
        );
        assert!(
            shifted.contains("every paired difference is the same"),
            "{shifted}"
        );
        let other = why(
            &StatsError::TooFew { needed: 2, got: 1 },
            Design::OneSample,
            &l,
            &[1.0],
            &[],
            &[1.0],
        );
        assert_eq!(other, "needs at least 2 values, has 1");
        let empty = why(
            &StatsError::TooFew { needed: 1, got: 0 },
            Design::Independent,
            &l,
            &[1.0],
            &[],
            &[],
        );
        assert_eq!(empty, "no value of \"b\" is left after missing values and exclusions (needs at least 1 value, has 0)");
    }
}
