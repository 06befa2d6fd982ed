//! Brunner–Munzel test of stochastic equality for two independent groups,
//! which unlike Mann–Whitney does not assume equal spreads.
//!
//! Brunner & Munzel (2000), "The nonparametric Behrens–Fisher problem:
//! asymptotic theory and a small-sample approximation", Biometrical
//! Journal 42(1), 17–25. The estimand is the probability of superiority
//! θ = P(Y < X) + ½·P(X = Y) of the first group `x` over the second `y`
//! (θ > ½ when `x` tends to be larger; the same orientation as
//! Mann–Whitney's U1/(n1·n2)). From pooled midranks R and within-group
//! midranks R⁽ⁱ⁾:
//!
//! * θ̂ = (R̄₁ − (n₁+1)/2)/n₂,
//! * Sᵢ² = Σₖ(Rᵢₖ − R⁽ⁱ⁾ᵢₖ − R̄ᵢ + (nᵢ+1)/2)²/(nᵢ − 1),
//! * se(θ̂) = √(n₁S₁² + n₂S₂²)/(n₁n₂), t = (θ̂ − ½)/se,
//! * Satterthwaite df = (n₁S₁² + n₂S₂²)² / ((n₁S₁²)²/(n₁−1) + (n₂S₂²)²/(n₂−1)),
//!
//! with p and the interval θ̂ ± t_{df}·se from Student's t.
//!
//! **Zero variance.** When S₁² = S₂² = 0 — the groups do not overlap, or
//! every placement is the same — se is 0 and the t approximation is
//! undefined. The result then says so ([`BmInference::ZeroVariance`])
//! rather than carrying NaN or ±∞: θ̂ is still reported, and the
//! permutation p below remains defined.
//!
//! **Permutation p.** Neubert & Brunner (2007), "A studentized permutation
//! test for the non-parametric Behrens–Fisher problem", Computational
//! Statistics & Data Analysis 51(10), 5192–5204: the studentised t is
//! recomputed for reassignments of the pooled sample to the two groups.
//! All C(N, n₁) splits are enumerated when there are at most
//! `permutations` of them (p = share of splits at least as extreme);
//! otherwise `permutations` random splits from a seeded SplitMix64 stream
//! are drawn and p = (1 + b)/(1 + B) (Phipson & Smyth 2010, "Permutation
//! p-values should never be zero", Stat. Appl. Genet. Mol. Biol. 9(1)).
//! A split with zero variance gets t = ±∞ by the sign of θ̂ − ½ (0 at
//! θ̂ = ½), so extreme splits count as the most extreme. "At least as
//! extreme" is t* ≥ t (greater), t* ≤ t (less), |t*| ≥ |t| (two-sided),
//! each with a relative slack of 1e-9 for rounding.
//! Each split costs one O(N) walk over the pooled order, since pooled
//! ranks do not change under reassignment.
//!
//! **Tie groups.** Every sum above is a sum over the pooled tie groups of
//! `count × term` (members of one group inside one tie group share both
//! midranks), so the t approximation works from each sample's
//! (value, count) runs merged once: memory follows the number of distinct
//! values, and the sums are exact ([`super::exact`]), so the result does
//! not depend on the order of the rows.

use super::dist::{t_quantile, t_sf};
use super::hodges_lehmann::SplitMix64;
use super::rank_tests::check_level;
use super::ranks::for_each_tie_group;
use super::{ensure_finite, p_from_symmetric, Alternative, Interval, StatsError};
use serde::{Deserialize, Serialize};

/// Outcome of a Brunner–Munzel test.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct BrunnerMunzel {
    /// θ̂ = P(Y < X) + ½·P(X = Y), first group over second.
    pub estimate: f64,
    /// Standard error of θ̂ (0 in the zero-variance case).
    pub se: f64,
    /// The t approximation, or why it is undefined.
    pub inference: BmInference,
}

/// The large-sample inference of a Brunner–Munzel test.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum BmInference {
    /// Student's t with Satterthwaite df.
    TApproximation {
        /// t = (θ̂ − ½)/se.
        statistic: f64,
        /// Satterthwaite degrees of freedom.
        df: f64,
        /// p for the stated alternative.
        p: f64,
        /// Interval for θ (one-sided for a one-sided alternative), not
        /// clipped to [0, 1].
        interval: Interval,
    },
    /// Both within-group placement variances are 0 (for example, the
    /// groups do not overlap), so se = 0 and no t statistic exists.
    ZeroVariance,
}

/// A permutation p value and how it was obtained.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct PermutationP {
    /// p for the stated alternative.
    pub p: f64,
    /// Splits used: all of them (exact) or the number drawn.
    pub splits: u64,
    /// Whether every split was enumerated.
    pub exact: bool,
}

/// One tie group of the pooled sample, in ascending order of value: its
/// pooled midrank and how many of its members each group holds.
#[derive(Clone, Copy)]
struct Tie {
    rank: f64,
    count: [u64; 2],
}

/// The tie groups of a sample, ascending: `(value, count)`, equal by
/// `==` (so `-0.0` ties with `0.0`, as ranks require).
fn sorted_runs(x: &[f64]) -> Vec<(f64, u64)> {
    let s = super::sorted(x);
    let mut out = Vec::new();
    for_each_tie_group(s.iter().copied(), |start, len| {
        out.push((s[start], len as u64))
    });
    out
}

/// The pooled tie groups of `x` and `y`, built from each sample's own
/// runs by one merge, so memory follows the number of distinct values
/// (plus one sorted copy of the larger sample while its runs are made).
fn pooled_ties(x: &[f64], y: &[f64]) -> Vec<Tie> {
    let (rx, ry) = (sorted_runs(x), sorted_runs(y));
    let mut out = Vec::with_capacity(rx.len() + ry.len());
    let (mut i, mut j, mut seen) = (0, 0, 0usize);
    while i < rx.len() || j < ry.len() {
        let take_x = j == ry.len() || (i < rx.len() && rx[i].0 <= ry[j].0);
        let take_y = i == rx.len() || (j < ry.len() && ry[j].0 <= rx[i].0);
        let c0 = if take_x { rx[i].1 } else { 0 };
        let c1 = if take_y { ry[j].1 } else { 0 };
        i += usize::from(take_x);
        j += usize::from(take_y);
        let len = (c0 + c1) as usize;
        out.push(Tie {
            rank: super::ranks::midrank(seen, len),
            count: [c0, c1],
        });
        seen += len;
    }
    out
}

/// (θ̂, n₁S₁², n₂S₂²) from the pooled tie groups. Within a tie group every
/// member of one group has the same pooled midrank and the same
/// within-group midrank (the group's members before it plus the midrank
/// of its own members inside it), so each sum is a sum over tie groups of
/// `count × term`, added exactly ([`super::exact`]) and rounded once: the
/// same bits whatever the order of the rows.
fn moments(ties: &[Tie], n1: usize, n2: usize) -> (f64, f64, f64) {
    use super::exact::{mean_of, ExactSum};
    let sizes = [n1 as f64, n2 as f64];
    let mut mean = [0.0f64; 2];
    for g in 0..2 {
        let mut sum_r = ExactSum::new();
        for t in ties {
            sum_r.add_times(t.rank, t.count[g]);
        }
        mean[g] = mean_of(&mut sum_r, sizes[g]);
    }
    let mut ss = [ExactSum::new(), ExactSum::new()];
    let mut before = [0u64; 2];
    for t in ties {
        for g in 0..2 {
            let c = t.count[g];
            if c == 0 {
                continue;
            }
            let internal = before[g] as f64 + (c as f64 + 1.0) / 2.0;
            let e = t.rank - internal - mean[g] + (sizes[g] + 1.0) / 2.0;
            ss[g].add_times(e * e, c);
            before[g] += c;
        }
    }
    let s1 = ss[0].value() / (sizes[0] - 1.0);
    let s2 = ss[1].value() / (sizes[1] - 1.0);
    let theta = (mean[0] - (sizes[0] + 1.0) / 2.0) / sizes[1];
    (theta, sizes[0] * s1, sizes[1] * s2)
}

/// The pooled sample for reassigning values between the groups: per
/// position in the pooled sorted order, its tie group; the tie groups
/// with every member counted in the second group (a split moves its
/// first-group members over); and which positions the observed split puts
/// in the first group.
struct Pooled {
    group_of: Vec<usize>,
    ties: Vec<Tie>,
    first: Vec<bool>,
}

fn pooled(x: &[f64], y: &[f64]) -> Pooled {
    let mut all: Vec<(f64, bool)> = x
        .iter()
        .map(|&v| (v, true))
        .chain(y.iter().map(|&v| (v, false)))
        .collect();
    all.sort_by(|a, b| a.0.total_cmp(&b.0));
    let mut group_of = vec![0; all.len()];
    let mut ties = Vec::new();
    for_each_tie_group(all.iter().map(|p| p.0), |start, len| {
        group_of[start..start + len].fill(ties.len());
        ties.push(Tie {
            rank: super::ranks::midrank(start, len),
            count: [0, len as u64],
        });
    });
    Pooled {
        group_of,
        ties,
        first: all.iter().map(|p| p.1).collect(),
    }
}

impl Pooled {
    /// The tie groups under the split `first` (true = first group), into
    /// `out` (reused between splits).
    fn split(&self, first: &[bool], out: &mut Vec<Tie>) {
        out.clear();
        out.extend_from_slice(&self.ties);
        for (&g, &f) in self.group_of.iter().zip(first) {
            if f {
                out[g].count[0] += 1;
                out[g].count[1] -= 1;
            }
        }
    }
}

/// Both groups need two finite values (each group's variance has n − 1
/// in its denominator).
fn check_groups(x: &[f64], y: &[f64]) -> Result<(), StatsError> {
    for g in [x, y] {
        if g.len() < 2 {
            return Err(StatsError::TooFew {
                needed: 2,
                got: g.len(),
            });
        }
        ensure_finite(g)?;
    }
    Ok(())
}

/// Studentised statistic of a split, ±∞ (or 0) when its variance is 0.
fn studentised(theta: f64, a: f64, b: f64, n1: usize, n2: usize) -> f64 {
    let se = (a + b).sqrt() / (n1 as f64 * n2 as f64);
    let d = theta - 0.5;
    if se > 0.0 {
        d / se
    } else if d == 0.0 {
        0.0
    } else {
        d.signum() * f64::INFINITY
    }
}

/// Brunner–Munzel test of `x` (first group) against `y` (second group)
/// with the t approximation (see the module comment).
///
/// Errors: a group with fewer than 2 values (`TooFew`), a non-finite
/// value (`NonFinite`), a level outside (0, 1) (`BadParameter`).
pub fn brunner_munzel(
    x: &[f64],
    y: &[f64],
    alt: Alternative,
    level: f64,
) -> Result<BrunnerMunzel, StatsError> {
    check_level(level)?;
    check_groups(x, y)?;
    let (n1, n2) = (x.len(), y.len());
    let (theta, a, b) = moments(&pooled_ties(x, y), n1, n2);
    let se = (a + b).sqrt() / (n1 as f64 * n2 as f64);
    if se <= 0.0 || !se.is_finite() {
        return Ok(BrunnerMunzel {
            estimate: theta,
            se: 0.0,
            inference: BmInference::ZeroVariance,
        });
    }
    let t = (theta - 0.5) / se;
    let df = (a + b).powi(2) / (a * a / (n1 as f64 - 1.0) + b * b / (n2 as f64 - 1.0));
    let pv = p_from_symmetric(t, alt, |v| t_sf(v, df));
    let tail = match alt {
        Alternative::TwoSided => 0.5 * (1.0 - level),
        _ => 1.0 - level,
    };
    let q = -t_quantile(tail, df);
    let interval = Interval {
        low: (alt != Alternative::Less).then_some(theta - q * se),
        high: (alt != Alternative::Greater).then_some(theta + q * se),
        level,
    };
    Ok(BrunnerMunzel {
        estimate: theta,
        se,
        inference: BmInference::TApproximation {
            statistic: t,
            df,
            p: pv,
            interval,
        },
    })
}

/// Largest number of splits [`brunner_munzel_permutation`] accepts.
pub const MAX_PERMUTATIONS: u64 = 10_000_000;

/// Studentised permutation p of Neubert & Brunner (2007) for the
/// Brunner–Munzel statistic: every split when C(n₁+n₂, n₁) ≤
/// `permutations`, else `permutations` seeded random splits (see the
/// module comment). Same inputs and seed, same p, on every platform.
///
/// Errors: as [`brunner_munzel`], and `permutations` outside
/// 1..=[`MAX_PERMUTATIONS`] (`BadParameter`).
pub fn brunner_munzel_permutation(
    x: &[f64],
    y: &[f64],
    alt: Alternative,
    permutations: u64,
    seed: u64,
) -> Result<PermutationP, StatsError> {
    check_groups(x, y)?;
    if permutations == 0 || permutations > MAX_PERMUTATIONS {
        return Err(StatsError::BadParameter(
            "the number of permutations must be between 1 and 10 000 000",
        ));
    }
    let (n1, n2) = (x.len(), y.len());
    let p = pooled(x, y);
    let mut buf = Vec::with_capacity(p.ties.len());
    let mut stat = |split: &[bool]| {
        p.split(split, &mut buf);
        let (theta, a, b) = moments(&buf, n1, n2);
        studentised(theta, a, b, n1, n2)
    };
    let observed = stat(&p.first);
    // Splits whose statistic equals the observed one in exact arithmetic
    // can differ from it by rounding; a relative slack of 1e-9 counts them
    // as equal (common practice).
    let slack = 1e-9 * observed.abs().min(f64::MAX);
    let extreme = |t: f64| match alt {
        Alternative::Greater => t >= observed - slack,
        Alternative::Less => t <= observed + slack,
        Alternative::TwoSided => t.abs() >= observed.abs() - slack,
    };
    let n = n1 + n2;
    let splits = binomial_at_most(n, n1, permutations);
    let mut split = vec![false; n];
    if let Some(total) = splits {
        // Enumerate every n1-subset of positions in lexicographic order.
        let mut idx: Vec<usize> = (0..n1).collect();
        let mut hits = 0u64;
        loop {
            split.iter_mut().for_each(|s| *s = false);
            for &i in &idx {
                split[i] = true;
            }
            hits += u64::from(extreme(stat(&split)));
            // Next combination.
            let mut k = n1;
            while k > 0 && idx[k - 1] == n - n1 + k - 1 {
                k -= 1;
            }
            if k == 0 {
                break;
            }
            idx[k - 1] += 1;
            for j in k..n1 {
                idx[j] = idx[j - 1] + 1;
            }
        }
        return Ok(PermutationP {
            p: hits as f64 / total as f64,
            splits: total,
            exact: true,
        });
    }
    let mut rng = SplitMix64(seed);
    let mut hits = 0u64;
    let mut order: Vec<usize> = (0..n).collect();
    for _ in 0..permutations {
        // Partial Fisher–Yates: the first n1 positions form the first group.
        for i in 0..n1 {
            let j = i + rng.below(n - i);
            order.swap(i, j);
        }
        split.iter_mut().for_each(|s| *s = false);
        for &i in &order[..n1] {
            split[i] = true;
        }
        hits += u64::from(extreme(stat(&split)));
    }
    Ok(PermutationP {
        p: (1 + hits) as f64 / (1 + permutations) as f64,
        splits: permutations,
        exact: false,
    })
}

/// The smaller group size below which [`brunner_munzel_test`] takes its
/// p from the studentised permutation distribution. Neubert & Brunner
/// (2007) recommend the permutation version for small samples, where the
/// t approximation can be liberal; where "small" ends is attest's own
/// convention, 30 per group (common practice for a small sample).
pub const PERMUTATION_BELOW: usize = 30;
/// The pooled size above which the permutation p is not used for small
/// groups (a split costs O(N), so `permutations · N` bounds the work;
/// with the default 10 000 splits and N = 2 000, 2·10⁷ steps).
pub const PERMUTATION_MAX_N: usize = 2_000;

/// A Brunner–Munzel test with its p chosen by the documented rule.
#[derive(Clone, Debug, PartialEq)]
pub struct BmTest {
    /// θ̂, its standard error and the t approximation (if defined).
    pub bm: BrunnerMunzel,
    /// p for the stated alternative.
    pub p: f64,
    /// How p was obtained.
    pub p_detail: super::RankPMethod,
    /// Splits behind a permutation p (all of them, or the number drawn).
    pub splits: Option<u64>,
    /// Interval for θ at `level`, clipped to [0, 1] (the range of a
    /// probability); [0, 1] itself when the variance estimate is 0.
    pub interval: Interval,
}

/// Brunner–Munzel with the p rule attest documents: the studentised
/// permutation p (Neubert & Brunner 2007; every split when there are at
/// most `permutations`, else `permutations` seeded random ones) when the
/// smaller group has fewer than [`PERMUTATION_BELOW`] values and the
/// pooled sample at most [`PERMUTATION_MAX_N`], and always when the
/// variance estimate is 0 (the t approximation is then undefined);
/// otherwise Student's t with Satterthwaite df (Brunner & Munzel 2000).
///
/// Errors: as [`brunner_munzel`] and [`brunner_munzel_permutation`].
pub fn brunner_munzel_test(
    x: &[f64],
    y: &[f64],
    alt: Alternative,
    level: f64,
    permutations: u64,
    seed: u64,
) -> Result<BmTest, StatsError> {
    use super::RankPMethod;
    let bm = brunner_munzel(x, y, alt, level)?;
    let small = x.len().min(y.len()) < PERMUTATION_BELOW && x.len() + y.len() <= PERMUTATION_MAX_N;
    let clip = |i: &Interval| Interval {
        low: Some(i.low.map_or(0.0, |v| v.max(0.0))),
        high: Some(i.high.map_or(1.0, |v| v.min(1.0))),
        level: i.level,
    };
    let (interval, t_p) = match &bm.inference {
        BmInference::TApproximation { interval, p, .. } => (clip(interval), Some(*p)),
        BmInference::ZeroVariance => (
            Interval {
                low: Some(0.0),
                high: Some(1.0),
                level,
            },
            None,
        ),
    };
    let (p, p_detail, splits) = match t_p {
        Some(p) if !small => (p, RankPMethod::TApproximation, None),
        _ => {
            let perm = brunner_munzel_permutation(x, y, alt, permutations, seed)?;
            let detail = if perm.exact {
                RankPMethod::StudentisedPermutation
            } else {
                RankPMethod::StudentisedPermutationSampled
            };
            (perm.p, detail, Some(perm.splits))
        }
    };
    Ok(BmTest {
        bm,
        p,
        p_detail,
        splits,
        interval,
    })
}

/// C(n, k) when it is at most `cap`, else `None` (no overflow: the
/// running product C(n−k+i, i) stays below cap·n).
fn binomial_at_most(n: usize, k: usize, cap: u64) -> Option<u64> {
    let k = k.min(n - k);
    let mut c: u128 = 1;
    for i in 1..=k {
        c = c * (n - k + i) as u128 / i as u128;
        if c > cap as u128 {
            return None;
        }
    }
    Some(c as u64)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The definition, position by position (the module comment's
    /// formulas with naive sums): the oracle for the tie-group sums.
    #[allow(clippy::needless_range_loop)] // indices mirror the formulas
    fn by_position(x: &[f64], y: &[f64]) -> (f64, f64, f64) {
        let p = pooled(x, y);
        let n = p.first.len();
        let (n1, n2) = (x.len() as f64, y.len() as f64);
        let sizes = [n1, n2];
        let mut internal = vec![0.0; n];
        let mut sum_r = [0.0; 2];
        let mut before = [0usize; 2];
        let mut k = 0;
        while k < n {
            let g0 = p.group_of[k];
            let end = (k..n).find(|&i| p.group_of[i] != g0).unwrap_or(n);
            let mut inside = [0usize; 2];
            for &f in &p.first[k..end] {
                inside[usize::from(!f)] += 1;
            }
            for i in k..end {
                let g = usize::from(!p.first[i]);
                internal[i] = before[g] as f64 + (inside[g] as f64 + 1.0) / 2.0;
                sum_r[g] += p.ties[g0].rank;
            }
            before[0] += inside[0];
            before[1] += inside[1];
            k = end;
        }
        let mean = [sum_r[0] / n1, sum_r[1] / n2];
        let mut ss = [0.0; 2];
        for i in 0..n {
            let g = usize::from(!p.first[i]);
            let e = p.ties[p.group_of[i]].rank - internal[i] - mean[g] + (sizes[g] + 1.0) / 2.0;
            ss[g] += e * e;
        }
        let theta = (mean[0] - (n1 + 1.0) / 2.0) / n2;
        (theta, ss[0] * n1 / (n1 - 1.0), ss[1] * n2 / (n2 - 1.0))
    }

    #[test]
    fn tie_group_sums_agree_with_the_definition() {
        let mut rng = SplitMix64(7);
        for case in 0..200 {
            let (n1, n2) = (2 + rng.below(40), 2 + rng.below(40));
            // Few distinct values in even cases (heavy ties), many in odd.
            let levels = if case % 2 == 0 { 5 } else { 1_000 };
            let mut draw = |n: usize| -> Vec<f64> {
                (0..n)
                    .map(|_| rng.below(levels) as f64 * 0.25 - 3.0)
                    .collect()
            };
            let (x, y) = (draw(n1), draw(n2));
            let (t0, a0, b0) = by_position(&x, &y);
            let (t1, a1, b1) = moments(&pooled_ties(&x, &y), n1, n2);
            for (u, v) in [(t0, t1), (a0, a1), (b0, b1)] {
                assert!(
                    (u - v).abs() <= 1e-12 * u.abs().max(1.0),
                    "case {case}: {u} vs {v}"
                );
            }
            // The permutation path's observed split is the same tie groups.
            let p = pooled(&x, &y);
            let mut buf = Vec::new();
            p.split(&p.first, &mut buf);
            assert_eq!(moments(&buf, n1, n2), (t1, a1, b1), "case {case}");
        }
    }

    #[test]
    fn negative_zero_ties_with_zero() {
        let a = brunner_munzel(
            &[-0.0, 1.0, 0.0],
            &[0.0, 2.0, 3.0],
            Alternative::TwoSided,
            0.95,
        );
        let b = brunner_munzel(
            &[0.0, 1.0, 0.0],
            &[0.0, 2.0, 3.0],
            Alternative::TwoSided,
            0.95,
        );
        assert_eq!(a.unwrap(), b.unwrap());
    }

    #[test]
    fn estimate_is_the_probability_of_superiority() {
        // x = {1, 3}, y = {2, 2}: pairs (1,2) x<y, (1,2) x<y, (3,2) x>y
        // twice → θ = P(Y < X) = 2/4 = 0.5 (by hand).
        let r = brunner_munzel(&[1.0, 3.0], &[2.0, 2.0], Alternative::TwoSided, 0.95).unwrap();
        assert_eq!(r.estimate, 0.5);
        // Ties count ½: x = {2, 3}, y = {2, 1}: (2,2) ½, (2,1) 1, (3,2) 1,
        // (3,1) 1 → 3.5/4.
        let r = brunner_munzel(&[2.0, 3.0], &[2.0, 1.0], Alternative::TwoSided, 0.95).unwrap();
        assert_eq!(r.estimate, 0.875);
    }

    #[test]
    fn separated_groups_have_zero_variance() {
        let r = brunner_munzel(&[5.0, 6.0, 7.0], &[1.0, 2.0], Alternative::Greater, 0.95).unwrap();
        assert_eq!((r.estimate, r.se), (1.0, 0.0));
        assert_eq!(r.inference, BmInference::ZeroVariance);
        // The permutation p is still defined: only the observed split (of
        // C(5, 3) = 10) puts all of x on top, so p = 1/10.
        let p =
            brunner_munzel_permutation(&[5.0, 6.0, 7.0], &[1.0, 2.0], Alternative::Greater, 100, 1)
                .unwrap();
        assert_eq!((p.p, p.splits, p.exact), (0.1, 10, true));
    }

    #[test]
    fn random_splits_are_seeded() {
        let x: Vec<f64> = (0..15).map(|i| (i * 7 % 11) as f64).collect();
        let y: Vec<f64> = (0..14).map(|i| (i * 5 % 13) as f64 + 1.0).collect();
        let a = brunner_munzel_permutation(&x, &y, Alternative::TwoSided, 2000, 9).unwrap();
        let b = brunner_munzel_permutation(&x, &y, Alternative::TwoSided, 2000, 9).unwrap();
        assert_eq!(a, b);
        assert!(!a.exact && a.splits == 2000 && a.p > 0.0 && a.p <= 1.0);
    }

    #[test]
    fn bad_inputs_are_errors() {
        let two = Alternative::TwoSided;
        assert!(brunner_munzel(&[1.0], &[1.0, 2.0], two, 0.95).is_err());
        assert!(brunner_munzel_permutation(&[1.0, 2.0], &[1.0, 3.0], two, 0, 1).is_err());
        assert_eq!(binomial_at_most(20, 10, u64::MAX), Some(184_756));
        assert_eq!(binomial_at_most(20, 10, 1000), None);
    }

    #[test]
    fn the_p_rule_switches_at_its_documented_sizes() {
        let two = Alternative::TwoSided;
        let group = |n: usize, shift: f64| -> Vec<f64> {
            (0..n)
                .map(|i| ((i * 7919) % 101) as f64 / 10.0 + shift)
                .collect()
        };
        // Smaller group below PERMUTATION_BELOW: permutation p, all splits
        // when few enough (C(12, 5) = 792 ≤ 10 000), else sampled.
        let r = brunner_munzel_test(&group(5, 0.5), &group(7, 0.0), two, 0.95, 10_000, 1).unwrap();
        assert_eq!(
            r.p_detail,
            super::super::RankPMethod::StudentisedPermutation
        );
        assert_eq!(r.splits, Some(792));
        let r = brunner_munzel_test(&group(29, 0.5), &group(40, 0.0), two, 0.95, 500, 1).unwrap();
        assert_eq!(
            r.p_detail,
            super::super::RankPMethod::StudentisedPermutationSampled
        );
        assert_eq!(r.splits, Some(500));
        // At PERMUTATION_BELOW in both groups: the t approximation, whose p
        // is the plain test's.
        let (x, y) = (group(PERMUTATION_BELOW, 0.5), group(PERMUTATION_BELOW, 0.0));
        let r = brunner_munzel_test(&x, &y, two, 0.95, 500, 1).unwrap();
        assert_eq!(r.p_detail, super::super::RankPMethod::TApproximation);
        let BmInference::TApproximation { p, .. } =
            brunner_munzel(&x, &y, two, 0.95).unwrap().inference
        else {
            panic!("variance is not 0 here")
        };
        assert_eq!(r.p, p);
        assert_eq!(r.splits, None);
        // A small group beside a pooled sample above PERMUTATION_MAX_N: t.
        let r = brunner_munzel_test(
            &group(5, 0.5),
            &group(PERMUTATION_MAX_N, 0.0),
            two,
            0.95,
            500,
            1,
        )
        .unwrap();
        assert_eq!(r.p_detail, super::super::RankPMethod::TApproximation);
    }

    #[test]
    fn groups_that_do_not_overlap_take_the_permutation_p_at_any_size() {
        // Every value of x above every value of y: θ̂ = 1, variance 0.
        let x: Vec<f64> = (0..40).map(|i| 100.0 + i as f64).collect();
        let y: Vec<f64> = (0..35).map(|i| i as f64).collect();
        let r = brunner_munzel_test(&x, &y, Alternative::Greater, 0.95, 999, 3).unwrap();
        assert_eq!(r.bm.inference, BmInference::ZeroVariance);
        assert_eq!(r.bm.estimate, 1.0);
        assert_eq!(
            r.p_detail,
            super::super::RankPMethod::StudentisedPermutationSampled
        );
        // Only the observed split is as extreme, so no random split is
        // (with overwhelming probability): p = 1/(1 + B).
        assert_eq!(r.p, 1.0 / 1000.0);
        assert_eq!((r.interval.low, r.interval.high), (Some(0.0), Some(1.0)));
    }

    #[test]
    fn intervals_stay_inside_zero_and_one() {
        let x = [5.0, 6.0, 7.0, 8.0, 9.0, 4.5];
        let y = [1.0, 2.0, 3.0, 4.0, 5.0, 6.0, 0.5];
        for alt in [
            Alternative::TwoSided,
            Alternative::Greater,
            Alternative::Less,
        ] {
            let r = brunner_munzel_test(&x, &y, alt, 0.99, 100, 1).unwrap();
            let (lo, hi) = (r.interval.low.unwrap(), r.interval.high.unwrap());
            assert!(
                (0.0..=1.0).contains(&lo) && (0.0..=1.0).contains(&hi) && lo <= hi,
                "{alt:?}"
            );
        }
    }
}
