//! Property tests for the rank tests and the Hodges–Lehmann selection.
//! Every property is a hand-derivable identity (symmetry under swapping
//! groups or negating differences, probabilities in [0, 1], and selection
//! agreeing with sorting all n1·n2 values), so no expected value comes from
//! the code under test.

use attest::stats::hodges_lehmann::{
    hl_one_sample, hl_shift, kth_pairwise_difference, kth_walsh_average,
};
use attest::stats::mann_whitney::mann_whitney;
use attest::stats::wilcoxon::wilcoxon_signed_rank;
use attest::stats::Alternative;
use proptest::prelude::*;

/// Small samples with many ties (half-integers from a short range) or
/// continuous values.
fn sample(max: usize) -> impl Strategy<Value = Vec<f64>> {
    prop_oneof![
        prop::collection::vec((-6i32..6).prop_map(|v| v as f64 * 0.5), 1..max),
        prop::collection::vec(-1e3f64..1e3, 1..max),
    ]
}

fn sorted(mut v: Vec<f64>) -> Vec<f64> {
    v.sort_by(f64::total_cmp);
    v
}

fn brute_median(v: &[f64]) -> f64 {
    let n = v.len();
    if n % 2 == 1 {
        v[n / 2]
    } else {
        0.5 * v[n / 2 - 1] + 0.5 * v[n / 2]
    }
}

/// About 30 ranks spread over `0..len`, always including both ends.
fn ks(len: usize) -> impl Iterator<Item = usize> {
    let step = (len / 30).max(1);
    (0..len).step_by(step).chain(std::iter::once(len - 1))
}

const ALTS: [Alternative; 3] = [
    Alternative::TwoSided,
    Alternative::Greater,
    Alternative::Less,
];

proptest! {
    #![proptest_config(ProptestConfig::with_cases(400))]

    #[test]
    fn pairwise_selection_equals_brute_force(x in sample(40), y in sample(40)) {
        let all = sorted(x.iter().flat_map(|a| y.iter().map(move |b| a - b)).collect());
        for k in ks(all.len()) {
            prop_assert_eq!(kth_pairwise_difference(&x, &y, k), Some(all[k]));
        }
        prop_assert_eq!(kth_pairwise_difference(&x, &y, all.len()), None);
        prop_assert_eq!(hl_shift(&x, &y).unwrap(), brute_median(&all));
    }

    #[test]
    fn walsh_selection_equals_brute_force(d in sample(50)) {
        let s = sorted(d.clone());
        let mut w = Vec::new();
        for i in 0..s.len() {
            for j in i..s.len() {
                w.push(0.5 * s[i] + 0.5 * s[j]);
            }
        }
        let w = sorted(w);
        for k in ks(w.len()) {
            prop_assert_eq!(kth_walsh_average(&d, k), Some(w[k]));
        }
        prop_assert_eq!(hl_one_sample(&d).unwrap(), brute_median(&w));
    }

    #[test]
    fn swapping_groups_mirrors_mann_whitney(x in sample(30), y in sample(30)) {
        for alt in ALTS {
            let (Ok(a), Ok(b)) = (
                mann_whitney(&x, &y, alt, 0.9),
                mann_whitney(&y, &x, alt.flipped(), 0.9),
            ) else {
                continue; // every value tied: an error both ways
            };
            prop_assert!((0.0..=1.0).contains(&a.p));
            prop_assert!((a.p - b.p).abs() <= 1e-12 * a.p.max(1e-300), "{} vs {}", a.p, b.p);
            prop_assert_eq!(a.rank_biserial, -b.rank_biserial);
            prop_assert_eq!(a.estimate, -b.estimate);
            prop_assert_eq!(a.interval.low, b.interval.high.map(|v| -v));
            prop_assert_eq!(a.interval.high, b.interval.low.map(|v| -v));
            let (lo, hi) = (a.rank_biserial_interval.low, b.rank_biserial_interval.high);
            prop_assert_eq!(lo.is_some(), hi.is_some());
            if let (Some(l), Some(h)) = (lo, hi) {
                prop_assert!((l + h).abs() < 1e-12);
            }
            let n = (x.len() * y.len()) as f64;
            prop_assert!((a.statistic + b.statistic - n).abs() < 1e-9);
        }
    }

    #[test]
    fn negating_differences_mirrors_wilcoxon(d in sample(40)) {
        let neg: Vec<f64> = d.iter().map(|v| -v).collect();
        for alt in ALTS {
            let (Ok(a), Ok(b)) = (
                wilcoxon_signed_rank(&d, alt, 0.95),
                wilcoxon_signed_rank(&neg, alt.flipped(), 0.95),
            ) else {
                continue; // all differences zero
            };
            prop_assert!((0.0..=1.0).contains(&a.p));
            prop_assert!((a.p - b.p).abs() <= 1e-12 * a.p.max(1e-300), "{} vs {}", a.p, b.p);
            prop_assert_eq!(a.rank_biserial, -b.rank_biserial);
            prop_assert_eq!(a.estimate, -b.estimate);
            prop_assert_eq!(a.interval.low, b.interval.high.map(|v| -v));
            prop_assert_eq!(a.n_used + a.zeros_dropped, d.len());
        }
    }
}
