//! Midranks with ties, the building block of the rank tests.
//!
//! Tied values share the mean of the ranks they occupy (midranks; common
//! practice). Besides the ranks, the rank tests need the tie term
//! Σ(t³ − t) over tie groups of size t, which shrinks the null variance of
//! a rank sum (Hollander & Wolfe 1999, *Nonparametric Statistical Methods*,
//! 2nd ed., chapters 3 and 4). One sort, O(n log n), then linear walks.

/// The midrank shared by `len` tied values that occupy the 0-based sorted
/// positions `start .. start + len`.
pub(crate) fn midrank(start: usize, len: usize) -> f64 {
    start as f64 + (len as f64 + 1.0) / 2.0
}

/// `t³ − t` for a tie group of size `t` (zero for an untied value).
pub(crate) fn tie_term(t: usize) -> f64 {
    let t = t as f64;
    t * t * t - t
}

/// Calls `f(start, len)` for each run of equal values in an ascending
/// sequence (0-based start in the sorted order).
pub(crate) fn for_each_tie_group(
    sorted: impl Iterator<Item = f64>,
    mut f: impl FnMut(usize, usize),
) {
    let mut start = 0;
    let mut len = 0;
    let mut current = f64::NAN;
    for v in sorted {
        if len > 0 && v == current {
            len += 1;
        } else {
            if len > 0 {
                f(start, len);
            }
            start += len;
            len = 1;
            current = v;
        }
    }
    if len > 0 {
        f(start, len);
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Midranks of `x` in its original order and the tie term, built the
    /// way the rank tests use these helpers: sort, then one pass per tie group.
    fn ranks(x: &[f64]) -> (Vec<f64>, f64) {
        let mut order: Vec<(f64, usize)> = x.iter().copied().zip(0..).collect();
        order.sort_unstable_by(|a, b| a.0.total_cmp(&b.0));
        let (mut r, mut ties) = (vec![0.0; x.len()], 0.0);
        for_each_tie_group(order.iter().map(|p| p.0), |start, len| {
            for &(_, i) in &order[start..start + len] {
                r[i] = midrank(start, len);
            }
            ties += tie_term(len);
        });
        (r, ties)
    }

    #[test]
    fn ranks_without_ties_are_positions() {
        let (r, t) = ranks(&[3.0, 1.0, 2.0]);
        assert_eq!(r, vec![3.0, 1.0, 2.0]);
        assert_eq!(t, 0.0);
    }

    #[test]
    fn ties_share_midranks() {
        // Hand-derived: 1 → 1; the three 2s share (2+3+4)/3 = 3; the two 5s
        // share (5+6)/2 = 5.5. Tie term (27 − 3) + (8 − 2) = 30.
        let (r, t) = ranks(&[2.0, 5.0, 1.0, 2.0, 5.0, 2.0]);
        assert_eq!(r, vec![3.0, 5.5, 1.0, 3.0, 5.5, 3.0]);
        assert_eq!(t, 30.0);
    }

    #[test]
    fn signed_zeros_tie_and_empty_is_fine() {
        let (r, t) = ranks(&[0.0, -0.0]);
        assert_eq!(r, vec![1.5, 1.5]);
        assert_eq!(t, 6.0);
        assert_eq!(ranks(&[]), (vec![], 0.0));
    }
}
