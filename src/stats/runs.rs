//! The value-count form of a sample: its distinct values in ascending
//! order, each with the number of times it occurs.
//!
//! Measurements are recorded at a fixed resolution, so a large sample
//! usually has far fewer distinct values than values, and every sum the
//! moments need is a sum over runs (`value × count`, added exactly by
//! [`super::exact`]). A database returns a sample in this form directly
//! (one `GROUP BY`); a sorted slice gives it by one scan.
//!
//! Equal means equal bits: `-0.0` and `0.0` are separate runs (they sort
//! apart under the total order the statistics use), which changes no
//! statistic, since every deviation from them is the same.

/// The runs of a sorted slice, lazily: `(value, count)` for each stretch
/// of equal values.
pub(crate) fn of_sorted(sorted: &[f64]) -> impl Iterator<Item = (f64, u64)> + '_ {
    let mut i = 0;
    std::iter::from_fn(move || {
        let v = *sorted.get(i)?;
        let start = i;
        i += 1;
        while sorted.get(i).is_some_and(|w| w.to_bits() == v.to_bits()) {
            i += 1;
        }
        Some((v, (i - start) as u64))
    })
}

/// Counts `(value, count)` pairs in any order, with repeats, into runs:
/// ascending by the total order, equal values merged, zero counts dropped.
pub fn from_counts(counts: impl IntoIterator<Item = (f64, u64)>) -> Vec<(f64, u64)> {
    let mut all: Vec<(f64, u64)> = counts.into_iter().filter(|p| p.1 > 0).collect();
    all.sort_unstable_by(|a, b| a.0.total_cmp(&b.0));
    let mut out: Vec<(f64, u64)> = Vec::with_capacity(all.len());
    for (v, c) in all {
        match out.last_mut() {
            Some(last) if last.0.to_bits() == v.to_bits() => last.1 += c,
            _ => out.push((v, c)),
        }
    }
    out
}

/// The sample the runs stand for, value by value, in ascending order.
pub fn expand(runs: &[(f64, u64)]) -> Vec<f64> {
    let n: u64 = runs.iter().map(|r| r.1).sum();
    let mut out = Vec::with_capacity(usize::try_from(n).unwrap_or(0));
    for &(v, c) in runs {
        out.extend(std::iter::repeat_n(v, c as usize));
    }
    out
}

/// Sorts `v` ascending by the total order by counting its distinct values,
/// when it has at most one in `ratio`: one hashing pass, a sort of the
/// distinct values, and one pass writing the runs back. Values equal
/// under the total order have the same bits, so the result is the one
/// any sort gives. Returns `false`, with `v` untouched, as soon as the
/// distinct values pass that share (then a comparison sort is cheaper);
/// the work lost is at most one pass over a `1/ratio` share of `v`.
pub(crate) fn sort_by_counting(v: &mut [f64], ratio: usize) -> bool {
    let limit = v.len() / ratio.max(1);
    let mut counts: hashbrown::HashMap<u64, u64> = hashbrown::HashMap::new();
    for x in v.iter() {
        *counts.entry(x.to_bits()).or_insert(0) += 1;
        if counts.len() > limit {
            return false;
        }
    }
    let mut runs: Vec<(f64, u64)> = counts
        .into_iter()
        .map(|(b, c)| (f64::from_bits(b), c))
        .collect();
    runs.sort_unstable_by(|a, b| a.0.total_cmp(&b.0));
    let mut at = 0;
    for (x, c) in runs {
        let c = c as usize;
        v[at..at + c].fill(x);
        at += c;
    }
    true
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn runs_of_a_sorted_slice() {
        let x = [-0.0, 0.0, 0.0, 1.5, 1.5, 1.5, 2.0];
        let r: Vec<(f64, u64)> = of_sorted(&x).collect();
        assert_eq!(r.len(), 4);
        assert!(r[0].0.is_sign_negative() && r[0].1 == 1);
        assert_eq!(&r[1..], &[(0.0, 2), (1.5, 3), (2.0, 1)]);
        assert_eq!(of_sorted(&[]).count(), 0);
    }

    #[test]
    fn counting_sorts_as_a_comparison_sort_does() {
        // Ties, signed zeros, negatives, and a sample too distinct for the
        // counting path (left untouched).
        let mut rng = crate::stats::hodges_lehmann::SplitMix64(0x0dd_ba11);
        let mut next = move || rng.next();
        for (n, levels) in [(0usize, 1u64), (1, 1), (1000, 7), (50_000, 300)] {
            let v: Vec<f64> = (0..n)
                .map(|_| match next() % levels {
                    0 => -0.0,
                    k => (k as f64 - levels as f64 / 2.0) * 0.25,
                })
                .collect();
            let mut want = v.clone();
            want.sort_by(f64::total_cmp);
            let mut got = v.clone();
            assert!(sort_by_counting(&mut got, 1));
            let bits = |x: &[f64]| x.iter().map(|a| a.to_bits()).collect::<Vec<_>>();
            assert_eq!(bits(&got), bits(&want), "{n} values, {levels} levels");
        }
        let distinct: Vec<f64> = (0..1000).map(|i| f64::from(i) * 0.5).rev().collect();
        let mut v = distinct.clone();
        assert!(!sort_by_counting(&mut v, 16));
        assert_eq!(v, distinct);
    }

    #[test]
    fn counts_merge_and_expand_back() {
        let r = from_counts([(2.0, 1), (1.5, 2), (2.0, 3), (-1.0, 0), (1.5, 1)]);
        assert_eq!(r, vec![(1.5, 3), (2.0, 4)]);
        assert_eq!(expand(&r), vec![1.5, 1.5, 1.5, 2.0, 2.0, 2.0, 2.0]);
        let back: Vec<(f64, u64)> = of_sorted(&expand(&r)).collect();
        assert_eq!(back, r);
    }
}
