//! The value-count form and the value-by-value form of a sample give the
//! same results, bit for bit, for every statistic; and so does any order
//! of the values.
//!
//! A sample from a database arrives as `(value, count)` runs in whatever
//! order the engine returns them (`stats::runs::from_counts`, then
//! written out by `stats::runs::expand`); a sample from a file arrives
//! row by row in file order. Both must give identical results. Each
//! statistic's result is compared through its `Debug` text, which prints
//! every double in shortest round-trip form and so tells apart any two
//! different bit patterns. Data come with many ties (values on a coarse
//! grid, as measurements at a fixed resolution are) and mostly distinct
//! (arbitrary doubles).

use attest::stats::brunner_munzel::brunner_munzel;
use attest::stats::describe::describe;
use attest::stats::effect::{cohens_d, hedges_g};
use attest::stats::hodges_lehmann::{hl_one_sample, hl_shift};
use attest::stats::mann_whitney::mann_whitney;
use attest::stats::runs::{expand, from_counts};
use attest::stats::spread::{brown_forsythe, levene};
use attest::stats::ttest::{one_sample_t, paired_t, student_t, welch_t};
use attest::stats::wilcoxon::wilcoxon_signed_rank;
use attest::stats::yuen::yuen;
use attest::stats::Alternative;
use proptest::prelude::*;
use std::collections::HashMap;

/// Values on a grid of `step` (many ties) or arbitrary (mostly distinct).
fn sample(n: std::ops::Range<usize>) -> impl Strategy<Value = Vec<f64>> {
    prop_oneof![
        // A fixed resolution: 0.1 units, a narrow range, so values repeat.
        prop::collection::vec(
            (0i32..60).prop_map(|k| 40.0 + f64::from(k) * 0.1),
            n.clone()
        ),
        // Whole numbers, as counts or scores are recorded.
        prop::collection::vec((0i32..12).prop_map(f64::from), n.clone()),
        // Mostly distinct doubles at a large offset (cancellation matters).
        prop::collection::vec(-1e3f64..1e3, n.clone())
            .prop_map(|v| v.into_iter().map(|x| 1e6 + x).collect()),
        prop::collection::vec(-1e3f64..1e3, n),
    ]
}

/// The sample as an engine would return it: counts per distinct value, in
/// an order of the hash map's choosing, then merged and written out.
fn through_counts(x: &[f64]) -> Vec<f64> {
    let mut counts: HashMap<u64, u64> = HashMap::new();
    for v in x {
        *counts.entry(v.to_bits()).or_default() += 1;
    }
    let runs = from_counts(counts.into_iter().map(|(b, c)| (f64::from_bits(b), c)));
    expand(&runs)
}

/// Every two-sample statistic, as text.
fn two_sample(x: &[f64], y: &[f64]) -> Vec<String> {
    let a = Alternative::TwoSided;
    vec![
        format!("{:?}", describe(x)),
        format!("{:?}", describe(y)),
        format!("{:?}", welch_t(x, y, a, 0.95)),
        format!("{:?}", student_t(x, y, Alternative::Greater, 0.9)),
        format!("{:?}", cohens_d(x, y, a, 0.95)),
        format!("{:?}", hedges_g(x, y, Alternative::Less, 0.95)),
        format!("{:?}", levene(x, y)),
        format!("{:?}", brown_forsythe(x, y)),
        format!("{:?}", mann_whitney(x, y, a, 0.95)),
        format!("{:?}", hl_shift(x, y)),
        format!("{:?}", brunner_munzel(x, y, a, 0.95)),
        format!("{:?}", yuen(x, y, 0.2, a, 0.95)),
    ]
}

/// Every one-sample statistic, as text.
fn one_sample(d: &[f64]) -> Vec<String> {
    let a = Alternative::TwoSided;
    vec![
        format!("{:?}", describe(d)),
        format!("{:?}", one_sample_t(d, 41.0, a, 0.95)),
        format!("{:?}", wilcoxon_signed_rank(d, a, 0.95)),
        format!("{:?}", hl_one_sample(d)),
    ]
}

/// A permutation of `x` chosen by `seed`.
fn shuffled(x: &[f64], seed: u64) -> Vec<f64> {
    let mut v = x.to_vec();
    let mut s = seed | 1;
    for i in (1..v.len()).rev() {
        s ^= s << 13;
        s ^= s >> 7;
        s ^= s << 17;
        v.swap(i, (s % (i as u64 + 1)) as usize);
    }
    v
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(200))]

    #[test]
    fn counts_give_the_results_of_the_values(x in sample(2..60), y in sample(2..60)) {
        prop_assert_eq!(two_sample(&x, &y), two_sample(&through_counts(&x), &through_counts(&y)));
        prop_assert_eq!(one_sample(&x), one_sample(&through_counts(&x)));
    }

    #[test]
    fn row_order_changes_no_digit(x in sample(2..80), y in sample(2..80), seed in any::<u64>()) {
        prop_assert_eq!(two_sample(&x, &y), two_sample(&shuffled(&x, seed), &shuffled(&y, seed ^ 0x9e37)));
        prop_assert_eq!(one_sample(&x), one_sample(&shuffled(&x, seed)));
    }

    #[test]
    fn pair_order_changes_no_digit(pairs in prop::collection::vec((0i32..40, 0i32..40), 3..50), seed in any::<u64>()) {
        let first: Vec<f64> = pairs.iter().map(|p| 10.0 + f64::from(p.0) * 0.5).collect();
        let second: Vec<f64> = pairs.iter().map(|p| 10.0 + f64::from(p.1) * 0.5).collect();
        let order = shuffled(&(0..pairs.len()).map(|i| i as f64).collect::<Vec<_>>(), seed);
        let f2: Vec<f64> = order.iter().map(|&i| first[i as usize]).collect();
        let s2: Vec<f64> = order.iter().map(|&i| second[i as usize]).collect();
        let a = Alternative::TwoSided;
        prop_assert_eq!(
            format!("{:?}", paired_t(&first, &second, a, 0.95)),
            format!("{:?}", paired_t(&f2, &s2, a, 0.95))
        );
    }
}

/// A hand-checkable case: naive running sums give different last digits
/// for these two orders, the exact sums do not.
#[test]
fn a_known_order_sensitive_sample() {
    let x = [1e16, 1.0, -1e16, 1.0, 0.5];
    let mut y = x;
    y.reverse();
    let naive = |v: &[f64]| v.iter().sum::<f64>();
    assert_ne!(naive(&x).to_bits(), naive(&y).to_bits());
    assert_eq!(format!("{:?}", describe(&x)), format!("{:?}", describe(&y)));
    assert_eq!(
        format!("{:?}", describe(&x)),
        format!("{:?}", describe(&through_counts(&x)))
    );
}
