//! Cost of the exact rank-test distributions conditional on ties at their
//! bound (`rank_exact::TIES_EXACT_MAX_CELLS`): the largest tied
//! Mann–Whitney tables inside the bound (balanced 50 × 50 and unbalanced
//! 10 × 400, Likert-like data) and the largest signed-rank case (120
//! tied differences). Prints DP cells and wall time per case. Run on
//! demand with `sh tests/bench/ties.sh`; it is an ignored test so that
//! `cargo test` never runs it.

use attest::stats::mann_whitney::mann_whitney;
use attest::stats::rank_exact::TIES_EXACT_MAX_CELLS;
use attest::stats::wilcoxon::wilcoxon_signed_rank;
use attest::stats::{Alternative, RankPMethod};
use std::time::Instant;

/// Likert-like values 1..=levels from a fixed linear congruential stream.
fn likert(n: usize, levels: u64, seed: u64) -> Vec<f64> {
    let mut s = seed;
    (0..n)
        .map(|_| {
            s = s
                .wrapping_mul(6_364_136_223_846_793_005)
                .wrapping_add(1_442_695_040_888_963_407);
            ((s >> 33) % levels + 1) as f64
        })
        .collect()
}

/// DP cells of the two-sample count, as `rank_sum_conditional` states it.
fn mw_cells(n1: usize, n2: usize) -> u64 {
    let big_n = (n1 + n2) as u64;
    let k = n1.min(n2) as u64;
    // Upper bound on the score range: the k largest doubled ranks.
    let top: u64 = (0..k).map(|i| 2 * (big_n - i)).sum();
    big_n * (k + 1) * (top + 1)
}

#[test]
#[ignore = "benchmark; run with tests/bench/ties.sh"]
fn exact_with_ties_at_the_bound() {
    println!("bound: {TIES_EXACT_MAX_CELLS} DP cells");
    for (n1, n2) in [(30, 30), (40, 40), (50, 50), (10, 400)] {
        let x = likert(n1, 7, 1);
        let y = likert(n2, 7, 2);
        let start = Instant::now();
        let t = mann_whitney(&x, &y, Alternative::TwoSided, 0.95).unwrap();
        let took = start.elapsed();
        assert_eq!(t.p_detail, RankPMethod::ExactWithTies, "{n1} x {n2}");
        println!(
            "mann-whitney {n1:>3} x {n2:<3}  cells <= {:>11}  {:>8.1} ms  p = {:.6}",
            mw_cells(n1, n2),
            took.as_secs_f64() * 1e3,
            t.p
        );
    }
    // Just beyond the bound the normal approximation takes over.
    let t = mann_whitney(
        &likert(55, 7, 3),
        &likert(55, 7, 4),
        Alternative::TwoSided,
        0.95,
    )
    .unwrap();
    assert_eq!(t.p_detail, RankPMethod::NormalApproximation);
    println!("mann-whitney  55 x 55   beyond the bound: normal approximation");
    let d: Vec<f64> = likert(120, 9, 5).iter().map(|v| v - 4.0).collect();
    let start = Instant::now();
    let t = wilcoxon_signed_rank(&d, Alternative::TwoSided, 0.95).unwrap();
    let took = start.elapsed();
    assert_eq!(t.p_detail, RankPMethod::ExactWithTies);
    println!(
        "signed-rank  n = {:>3}  {:>8.1} ms  p = {:.6}",
        t.n_used,
        took.as_secs_f64() * 1e3,
        t.p
    );
}

#[test]
#[ignore = "benchmark; run with tests/bench/ties.sh"]
fn brunner_munzel_permutation_at_the_bound() {
    use attest::stats::brunner_munzel::{
        brunner_munzel_test, PERMUTATION_BELOW, PERMUTATION_MAX_N,
    };
    // The costliest case the rule sends to the permutation p: the smaller
    // group just below PERMUTATION_BELOW, the pooled sample at
    // PERMUTATION_MAX_N, the default 10 000 random splits.
    let n1 = PERMUTATION_BELOW - 1;
    let n2 = PERMUTATION_MAX_N - n1;
    let x = likert(n1, 7, 6);
    let y = likert(n2, 7, 7);
    let start = Instant::now();
    let t = brunner_munzel_test(&x, &y, Alternative::TwoSided, 0.95, 10_000, 1).unwrap();
    let took = start.elapsed();
    assert_eq!(t.p_detail, RankPMethod::StudentisedPermutationSampled);
    println!(
        "brunner-munzel {n1} x {n2}  10 000 random splits  {:>8.1} ms  p = {:.6}",
        took.as_secs_f64() * 1e3,
        t.p
    );
}
