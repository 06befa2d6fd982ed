//! Mann–Whitney U test (Wilcoxon rank-sum) for two independent groups,
//! with the Hodges–Lehmann shift, its distribution-free interval, the
//! rank-biserial correlation and the probability of superiority.
//!
//! Mann & Whitney (1947), "On a test of whether one of two random variables
//! is stochastically larger than the other", Ann. Math. Statist. 18, 50–60.
//! Each group is sorted once; U1 and the tie term come from one merge walk
//! over the two sorted groups, so the whole test is O(N log N) in time and
//! O(N) in memory.

use super::hodges_lehmann::{hl_shift_sorted, kth_pairwise_difference_sorted};
use super::rank_exact::{mann_whitney_exact, rank_sum_conditional};
use super::rank_tests::{
    check_level, exact_p, fisher_interval, normal_critical_k, normal_log10_p, normal_p,
    order_interval, tail_alpha, RankOptions, RankTest,
};
use super::ranks::{for_each_tie_group, tie_term};
use super::{ensure_finite, Alternative, RankPMethod, StatsError};

/// U1 (first group over second, ties counting ½) and the tie term
/// Σ(t³ − t) of the pooled sample, from both groups sorted ascending.
pub fn u_statistic_sorted(x: &[f64], y: &[f64]) -> (f64, f64) {
    let (mut i, mut j) = (0, 0);
    let mut twice_u: u128 = 0;
    let mut ties = 0.0;
    while i < x.len() || j < y.len() {
        let v = if j == y.len() || (i < x.len() && x[i] <= y[j]) {
            x[i]
        } else {
            y[j]
        };
        let cx = x[i..].iter().take_while(|&&a| a == v).count();
        let cy = y[j..].iter().take_while(|&&b| b == v).count();
        // Each x here beats the j values of y below it and ties with cy.
        twice_u += cx as u128 * (2 * j + cy) as u128;
        ties += tie_term(cx + cy);
        i += cx;
        j += cy;
    }
    (twice_u as f64 / 2.0, ties)
}

/// Mann–Whitney U test of `x` (first group) against `y` (second group),
/// with attest's default conventions ([`RankOptions::default`]).
pub fn mann_whitney(
    x: &[f64],
    y: &[f64],
    alt: Alternative,
    level: f64,
) -> Result<RankTest, StatsError> {
    mann_whitney_with(x, y, alt, level, &RankOptions::default())
}

/// Doubled midranks (integers) of the pooled sample of two ascending
/// groups, in merge order.
pub(crate) fn doubled_pooled_ranks(x: &[f64], y: &[f64]) -> Vec<u64> {
    // One merge of the two sorted groups (values equal under the total
    // order have the same bits, so this is the sorted pooled sample).
    let mut pooled: Vec<f64> = Vec::with_capacity(x.len() + y.len());
    let (mut i, mut j) = (0, 0);
    while i < x.len() && j < y.len() {
        if x[i].total_cmp(&y[j]).is_le() {
            pooled.push(x[i]);
            i += 1;
        } else {
            pooled.push(y[j]);
            j += 1;
        }
    }
    pooled.extend_from_slice(&x[i..]);
    pooled.extend_from_slice(&y[j..]);
    let mut scores = Vec::with_capacity(pooled.len());
    for_each_tie_group(pooled.iter().copied(), |start, len| {
        let r2 = (2 * start + len + 1) as u64;
        scores.extend(std::iter::repeat_n(r2, len));
    });
    scores
}

/// Mann–Whitney U test of `x` (first group) against `y` (second group).
///
/// * Statistic: U1 = R1 − n1(n1+1)/2 with midranks for ties.
/// * p, three routes, reported in [`RankTest::p_detail`]:
///   - no ties, sizes within [`super::rank_exact::mw_exact_feasible`]
///     (n1·n2 ≤ 250 000 and C(n1+n2, n1) < 2¹²⁰): the exact permutation
///     distribution (`exact`);
///   - ties, and the exact count conditional on the tie pattern within
///     `options.exact_max_cells` DP cells
///     ([`super::rank_exact::rank_sum_conditional`]): that distribution
///     (`exact-with-ties`);
///   - otherwise the normal approximation with tie-corrected variance
///     n1n2/12·((N+1) − Σ(t³−t)/(N(N−1))) and, unless switched off, the
///     continuity correction (`normal-approximation`).
///
///   Two-sided exact p is twice the smaller tail, capped at 1.
/// * Estimate: Hodges–Lehmann shift, the median of all `x_i − y_j`, with
///   the distribution-free interval `[D_(k), D_(n1n2+1−k)]` (Bauer 1972,
///   "Constructing confidence sets using rank statistics", JASA 67,
///   687–690; Hollander & Wolfe 1999, §4.3): `k` from the same exact
///   distribution the p came from (counts of U ≤ k − 1, conditional on
///   ties when p is), chosen so that the interval excludes 0 exactly when
///   p < α (see [`exact_p`]); else from the large-sample approximation
///   (see `normal_critical_k`, untied variance).
/// * Rank-biserial r = 2·U1/(n1n2) − 1 (Glass 1965; Cureton 1956) with the
///   Fisher-z interval of [`fisher_interval`], se = 2σ_U/(n1n2).
/// * Probability of superiority U1/(n1n2) (McGraw & Wong 1992,
///   common-language effect size; ties count ½).
///
/// Errors: an empty group (`TooFew`), a non-finite value (`NonFinite`),
/// a level outside (0, 1) (`BadParameter`), and every pooled value equal
/// (`ZeroVariance`: the ranks carry no information).
pub fn mann_whitney_with(
    x: &[f64],
    y: &[f64],
    alt: Alternative,
    level: f64,
    options: &RankOptions,
) -> Result<RankTest, StatsError> {
    check_level(level)?;
    for g in [x, y] {
        if g.is_empty() {
            return Err(StatsError::TooFew { needed: 1, got: 0 });
        }
        ensure_finite(g)?;
    }
    let (xs, ys) = (super::sorted(x), super::sorted(y));
    let (n1, n2) = (xs.len(), ys.len());
    let (u1, ties) = u_statistic_sorted(&xs, &ys);
    let cells = n1 as f64 * n2 as f64;
    let n = (n1 + n2) as f64;
    let mu = 0.5 * cells;
    let var = cells / 12.0 * ((n + 1.0) - ties / (n * (n - 1.0)));
    if var.is_nan() || var <= 0.0 {
        return Err(StatsError::ZeroVariance);
    }
    let sigma = var.sqrt();
    let tail = tail_alpha(level, alt);
    let exact = if ties == 0.0 {
        mann_whitney_exact(n1, n2).map(|d| (d, 1, RankPMethod::Exact))
    } else if options.exact_max_cells > 0 && super::rank_exact::mw_exact_feasible(n1, n2) {
        // (Beyond those sizes the conditional count is never tried, so
        // the pooled ranks are not built.)
        let scores = doubled_pooled_ranks(&xs, &ys);
        rank_sum_conditional(&scores, n1, options.exact_max_cells)
            .map(|d| (d, 2, RankPMethod::ExactWithTies))
    } else {
        None
    };
    let (p, log10_p, p_detail, z, k) = match &exact {
        Some((d, step, how)) => {
            // U1 is a multiple of ½, so step·U1 is an exact integer.
            let obs = (*step as f64 * u1) as i64;
            let (p, log10_p, k) = exact_p(d, obs, *step, alt, level);
            (p, log10_p, *how, None, k)
        }
        None => {
            let (z, p) = normal_p(u1, mu, sigma, alt, options.continuity);
            let plain_sigma = (cells * (n + 1.0) / 12.0).sqrt();
            let k = normal_critical_k(mu, plain_sigma, tail);
            let k = (k, k);
            let log10_p = normal_log10_p(z, alt);
            (p, log10_p, RankPMethod::NormalApproximation, Some(z), k)
        }
    };
    let count = n1 * n2;
    let kth = |i: usize| kth_pairwise_difference_sorted(&xs, &ys, i);
    let (estimate, interval) = rayon::join(
        || hl_shift_sorted(&xs, &ys),
        || order_interval(k, count, alt, level, kth),
    );
    // (U1 − U2)/(n1n2) = 2U1/(n1n2) − 1, written so swapping groups
    // negates it exactly.
    let r = (u1 - (cells - u1)) / cells;
    let se = 2.0 * sigma / cells;
    let bound = 1.0 - 1.0 / cells;
    Ok(RankTest {
        statistic: u1,
        p,
        p_method: p_detail.coarse(),
        p_detail,
        log10_p,
        z,
        n_used: n1 + n2,
        zeros_dropped: 0,
        zeros_ranked: 0,
        estimate: estimate?,
        interval,
        rank_biserial: r,
        rank_biserial_interval: fisher_interval(r, se, bound, alt, level),
        prob_superiority: Some(u1 / cells),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn pooled_ranks_of_merged_groups_are_those_of_the_sorted_pool() {
        // Reference: sort the concatenation and give each tie group its
        // doubled midrank, 2·start + len + 1 (common practice midranks).
        let mut rng = crate::stats::hodges_lehmann::SplitMix64(0x51_7cc1_b727_220a);
        let mut next = move || rng.next();
        for (n1, n2, levels) in [(0usize, 3usize, 2u64), (5, 0, 3), (7, 9, 3), (40, 55, 11)] {
            let mut draw = |n: usize| {
                let mut v: Vec<f64> = (0..n)
                    .map(|_| match next() % levels {
                        0 => -0.0,
                        1 => 0.0,
                        k => k as f64 * 0.5 - 2.0,
                    })
                    .collect();
                v.sort_by(f64::total_cmp);
                v
            };
            let (x, y) = (draw(n1), draw(n2));
            let mut pool: Vec<f64> = x.iter().chain(&y).copied().collect();
            pool.sort_by(f64::total_cmp);
            let mut want = vec![0u64; pool.len()];
            let mut start = 0;
            while start < pool.len() {
                let mut end = start + 1;
                while end < pool.len() && pool[end] == pool[start] {
                    end += 1;
                }
                let r2 = (2 * start + (end - start) + 1) as u64;
                want[start..end].fill(r2);
                start = end;
            }
            assert_eq!(doubled_pooled_ranks(&x, &y), want, "{n1} and {n2}");
        }
    }

    #[test]
    fn u_counts_ties_as_half() {
        // x = {1, 2, 3}, y = {2, 4}: pairs x>y: (3,2); ties: (2,2) → U1 = 1.5.
        let (u, t) = u_statistic_sorted(&[1.0, 2.0, 3.0], &[2.0, 4.0]);
        assert_eq!((u, t), (1.5, 6.0));
    }

    #[test]
    fn complete_separation_exact_p() {
        // x above every y, n1 = n2 = 3: one arrangement in C(6,3) = 20, so
        // the one-sided exact p is 1/20 and U1 = 9.
        let t = mann_whitney(
            &[4.0, 5.0, 6.0],
            &[1.0, 2.0, 3.0],
            Alternative::Greater,
            0.95,
        )
        .unwrap();
        assert_eq!(t.statistic, 9.0);
        assert_eq!(t.p, 0.05);
        assert_eq!(t.p_detail, RankPMethod::Exact);
        assert_eq!(t.rank_biserial, 1.0);
        assert_eq!(t.prob_superiority, Some(1.0));
        // Differences 1..5 (median 3). p = .05 is not below α = .05, so the
        // test retains and the 95% one-sided interval must include 0: no
        // order statistic qualifies (P(U ≤ 0) = .05 does not reject).
        assert_eq!(t.estimate, 3.0);
        assert_eq!((t.interval.low, t.interval.high), (None, None));
        // Just across the boundary (α = .0500001 > p): reject, and the
        // interval starts at the smallest difference, above 0.
        let t = mann_whitney(
            &[4.0, 5.0, 6.0],
            &[1.0, 2.0, 3.0],
            Alternative::Greater,
            0.949_999_9,
        )
        .unwrap();
        assert_eq!(t.interval.low, Some(1.0));
        assert!((t.log10_p - 0.05f64.log10()).abs() < 1e-15);
    }

    #[test]
    fn ties_use_the_conditional_exact_distribution() {
        // x = {1, 2}, y = {2, 3}: doubled ranks 2, 5, 5, 8; x holds 2 and
        // one 5 → 2·R1 = 7, 2·U1 = 1. Of the six splits two have 2·U1 ≤ 1
        // (hand count, see rank_exact), so P(U ≤ ½) = 1/3.
        let t = mann_whitney(&[1.0, 2.0], &[2.0, 3.0], Alternative::Less, 0.95).unwrap();
        assert_eq!(t.statistic, 0.5);
        assert_eq!(t.p_detail, RankPMethod::ExactWithTies);
        assert_eq!(t.p, 1.0 / 3.0);
        let legacy = RankOptions {
            exact_max_cells: 0,
            ..RankOptions::default()
        };
        let t =
            mann_whitney_with(&[1.0, 2.0], &[2.0, 3.0], Alternative::Less, 0.95, &legacy).unwrap();
        assert_eq!(t.p_detail, RankPMethod::NormalApproximation);
    }

    #[test]
    fn degenerate_inputs_are_errors() {
        let two = Alternative::TwoSided;
        assert_eq!(
            mann_whitney(&[1.0, 1.0], &[1.0], two, 0.95),
            Err(StatsError::ZeroVariance)
        );
        assert!(mann_whitney(&[], &[1.0], two, 0.95).is_err());
        assert_eq!(
            mann_whitney(&[f64::INFINITY], &[1.0], two, 0.95),
            Err(StatsError::NonFinite)
        );
        assert!(mann_whitney(&[1.0], &[2.0], two, 1.5).is_err());
    }
}
