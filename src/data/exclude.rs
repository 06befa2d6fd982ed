//! The preregistered exclusion rules, applied in order to the whole file
//! before any statistic. Each rule sees only the rows the earlier rules
//! left, and records which rows it removed (`Dataset::excluded_by`), so
//! every hypothesis can report how many rows each rule took from its groups.
//!
//! - `below`/`above`: removes values strictly below/above the bound; a
//!   missing cell is not removed by it (it is counted as missing later).
//! - `values`: removes rows whose trimmed cell text is in the list, missing
//!   texts included (a rule may name "NA").
//! - `outlier = "median-distance"`: removes x with |x − median| / (1.4826 ·
//!   MAD) > limit (Leys, Ley, Klein, Bernard & Licata 2013, "Detecting
//!   outliers: Do not use standard deviation around the mean, use absolute
//!   deviation around the median", J. Exp. Soc. Psychol. 49(4), 764–766).
//!   When the MAD is 0 (more than half the values tied) the distance is
//!   undefined and the rule removes nothing in that group.
//! - `outlier = "tukey-fences"`: removes x < Q1 − k·IQR or x > Q3 + k·IQR,
//!   quartiles by linear interpolation (Hyndman & Fan 1996 type 7) (Tukey
//!   1977, "Exploratory Data Analysis", ch. 2).
//!
//! Outlier rules work within each group of `by` (rows whose `by` cell is
//! missing are left to be counted as missing later) or over the whole column.

use super::Dataset;
use crate::error::{Failure, Result};
use crate::plan::{ExcludeKind, ExcludeRule};
use crate::stats::describe::quantile_sorted;

/// Scale that makes the MAD estimate the SD of normal data (1/Φ⁻¹(3/4), Leys et al. 2013).
pub(crate) const MAD_SCALE: f64 = 1.4826;

/// For every row, 0 when it survives all rules, else the 1-based number of
/// the rule that removed it.
pub(crate) fn apply(ds: &Dataset, rules: &[ExcludeRule]) -> Result<Vec<u16>> {
    let mut by_rule = vec![0u16; ds.rows];
    if rules.len() > usize::from(u16::MAX) {
        return Err(Failure::input(format!(
            "the plan has {} exclusion rules; at most 65535 are supported",
            rules.len()
        )));
    }
    for (k, rule) in rules.iter().enumerate() {
        let tag = (k + 1) as u16;
        let removed = removed_by(ds, rule, &by_rule)?;
        for i in removed {
            by_rule[i] = tag;
        }
    }
    Ok(by_rule)
}

/// Rows (still kept in `state`) that `rule` removes.
fn removed_by(ds: &Dataset, rule: &ExcludeRule, state: &[u16]) -> Result<Vec<usize>> {
    let kept = |i: &usize| state[*i] == 0;
    Ok(match &rule.rule {
        ExcludeKind::Range { below, above } => {
            let x = ds.numbers(&rule.column)?;
            let lo = below.unwrap_or(f64::NEG_INFINITY);
            let hi = above.unwrap_or(f64::INFINITY);
            (0..ds.rows)
                .filter(kept)
                .filter(|&i| x[i] < lo || x[i] > hi)
                .collect()
        }
        ExcludeKind::Values { values } => {
            let t = ds.text(&rule.column)?;
            let hit: Vec<bool> = t
                .levels
                .iter()
                .map(|l| values.iter().any(|v| v.trim() == l))
                .collect();
            (0..ds.rows)
                .filter(kept)
                .filter(|&i| hit[t.codes[i] as usize])
                .collect()
        }
        ExcludeKind::MedianDistance { limit, by } => {
            grouped(ds, &rule.column, by.as_deref(), state, |v| {
                median_distance(v, *limit)
            })?
        }
        ExcludeKind::TukeyFences { limit, by } => {
            grouped(ds, &rule.column, by.as_deref(), state, |v| {
                tukey_fences(v, *limit)
            })?
        }
    })
}

/// Runs an outlier test within each group of `by` over the kept, non-missing rows.
fn grouped(
    ds: &Dataset,
    column: &str,
    by: Option<&str>,
    state: &[u16],
    test: impl Fn(&[f64]) -> Option<(f64, f64)>,
) -> Result<Vec<usize>> {
    let x = ds.numbers(column)?;
    let groups: Vec<Option<u32>> = match by {
        None => vec![Some(0); ds.rows],
        Some(b) => {
            let t = ds.text(b)?;
            (0..ds.rows)
                .map(|i| (!t.is_missing(i)).then_some(t.codes[i]))
                .collect()
        }
    };
    let mut codes: Vec<u32> = groups.iter().flatten().copied().collect();
    codes.sort_unstable();
    codes.dedup();
    let mut out = Vec::new();
    for g in codes {
        let rows: Vec<usize> = (0..ds.rows)
            .filter(|&i| state[i] == 0 && groups[i] == Some(g) && !x[i].is_nan())
            .collect();
        let values: Vec<f64> = rows.iter().map(|&i| x[i]).collect();
        if let Some((lo, hi)) = test(&values) {
            out.extend(rows.into_iter().filter(|&i| x[i] < lo || x[i] > hi));
        }
    }
    out.sort_unstable();
    Ok(out)
}

/// The interval kept by the median-distance rule, or `None` when nothing is
/// removed (no values, or MAD = 0). Returned as bounds so that
/// |x − m| / (1.4826·MAD) > limit ⇔ x outside [m − limit·s, m + limit·s].
pub(crate) fn median_distance(values: &[f64], limit: f64) -> Option<(f64, f64)> {
    if values.is_empty() {
        return None;
    }
    let mut s = values.to_vec();
    s.sort_unstable_by(f64::total_cmp);
    let m = quantile_sorted(&s, 0.5);
    let mut dev: Vec<f64> = s.iter().map(|v| (v - m).abs()).collect();
    dev.sort_unstable_by(f64::total_cmp);
    let mad = quantile_sorted(&dev, 0.5);
    if mad <= 0.0 || !mad.is_finite() {
        return None;
    }
    let scale = MAD_SCALE * mad;
    // Compare in the ratio form to keep the preregistered inequality exact.
    let lo = s
        .iter()
        .copied()
        .filter(|v| (m - v) / scale <= limit)
        .fold(f64::INFINITY, f64::min);
    let hi = s
        .iter()
        .copied()
        .filter(|v| (v - m) / scale <= limit)
        .fold(f64::NEG_INFINITY, f64::max);
    Some((lo, hi))
}

/// Tukey's fences `(Q1 − k·IQR, Q3 + k·IQR)`, or `None` for no values.
pub(crate) fn tukey_fences(values: &[f64], k: f64) -> Option<(f64, f64)> {
    if values.is_empty() {
        return None;
    }
    let mut s = values.to_vec();
    s.sort_unstable_by(f64::total_cmp);
    let (q1, q3) = (quantile_sorted(&s, 0.25), quantile_sorted(&s, 0.75));
    let iqr = q3 - q1;
    Some((q1 - k * iqr, q3 + k * iqr))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn median_distance_by_hand() {
        // 1..=9 and 100: median 5.5; |x − 5.5| = 4.5 3.5 2.5 1.5 .5 .5 1.5 2.5 3.5 94.5,
        // MAD = median of those = 2.5, scale = 3.7065. 100 is (94.5/3.7065 ≈ 25.5) far
        // out; 1 and 9+… are at most 4.5/3.7065 ≈ 1.21 away, so with limit 2.5 only 100 goes.
        let v = [1., 2., 3., 4., 5., 6., 7., 8., 9., 100.];
        let (lo, hi) = median_distance(&v, 2.5).unwrap();
        assert_eq!((lo, hi), (1.0, 9.0));
        // Limit 1: 4.5/3.7065 = 1.214 > 1 and 3.5/3.7065 = 0.944 ≤ 1 → 1 removed, 2 kept; 10 → 9 kept? 9 is 3.5 away → kept.
        assert_eq!(median_distance(&v, 1.0), Some((2.0, 9.0)));
    }

    #[test]
    fn median_distance_with_zero_mad_removes_nothing() {
        assert_eq!(median_distance(&[4., 4., 4., 4., 50.], 3.0), None);
    }

    #[test]
    fn tukey_fences_by_hand() {
        // 1..=8: type-7 Q1 = 1 + 0.25·7 = 2.75, Q3 = 1 + 0.75·7 = 6.25, IQR 3.5.
        let (lo, hi) = tukey_fences(&[1., 2., 3., 4., 5., 6., 7., 8.], 1.5).unwrap();
        assert_eq!((lo, hi), (2.75 - 5.25, 6.25 + 5.25));
    }
}
