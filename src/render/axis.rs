//! Figure axes with tick marks at "nice" numbers, labelled as the reports
//! write numbers.
//!
//! Ticks follow the loose labelling of Heckbert (1990), "Nice numbers for
//! graph labels", in A. S. Glassner (Ed.), *Graphics Gems* (pp. 61–63),
//! Academic Press: the step is 1, 2 or 5 times a power of ten, and the axis
//! runs from a tick at or below the smallest value to a tick at or above
//! the largest, so both ends are labelled. Every label has the decimals
//! of the step (no "1950.0" beside "1960.0"), the true minus sign and no
//! "−0" (through [`crate::render::view::apa::fixed`]). Counts take whole
//! steps only, so a histogram never shows "0.5" of a unit.
//!
//! plotters chooses its own key points for a plain `f64` range and prints
//! them with Rust's `Debug` form; this axis hands it the ticks and the
//! words instead, through plotters' own `Ranged` and `ValueFormatter`
//! traits, so the rest of the drawing stays plotters' work.

use super::view::apa;
use plotters::coord::ranged1d::{KeyPointHint, NoDefaultFormatting, Ranged, ValueFormatter};
use std::ops::Range;

/// One axis: its drawn range, its ticks and how many decimals they take.
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct Axis {
    /// Lower end of the drawn range.
    pub lo: f64,
    /// Upper end of the drawn range.
    pub hi: f64,
    /// Tick positions, ascending, inside `lo..=hi`.
    pub ticks: Vec<f64>,
    /// Decimals of every tick label.
    pub decimals: usize,
}

/// Heckbert's nice number near `x` (> 0): 1, 2, 5 or 10 times a power of
/// ten, rounded to the nearest when `round`, else the next at or above.
fn nice(x: f64, round: bool) -> f64 {
    let exp = x.log10().floor();
    let f = x / 10f64.powf(exp);
    let nf = if round {
        match f {
            f if f < 1.5 => 1.0,
            f if f < 3.0 => 2.0,
            f if f < 7.0 => 5.0,
            _ => 10.0,
        }
    } else {
        match f {
            f if f <= 1.0 => 1.0,
            f if f <= 2.0 => 2.0,
            f if f <= 5.0 => 5.0,
            _ => 10.0,
        }
    };
    nf * 10f64.powf(exp)
}

impl Axis {
    /// An axis over `lo..hi` with about `n` ticks (at least 2).
    pub(crate) fn nice(lo: f64, hi: f64, n: usize) -> Axis {
        Self::build(lo, hi, n, false)
    }

    /// An axis of counts from 0 to at least `max`: whole-number steps.
    pub(crate) fn counts(max: u64, n: usize) -> Axis {
        Self::build(0.0, max.max(1) as f64, n, true)
    }

    fn build(lo: f64, hi: f64, n: usize, whole: bool) -> Axis {
        let (lo, hi) = match (lo.is_finite(), hi.is_finite()) {
            (true, true) if hi > lo => (lo, hi),
            (true, true) => (lo - lo.abs().max(1.0) * 0.1, lo + lo.abs().max(1.0) * 0.1),
            _ => (-1.0, 1.0),
        };
        let n = n.max(2);
        let range = nice(hi - lo, false);
        let mut step = nice(range / (n - 1) as f64, true);
        if whole {
            step = step.max(1.0).round();
        }
        // Ticks as whole multiples of the step, so no sum drifts.
        let first = (lo / step).floor();
        let last = (hi / step).ceil();
        let count = (last - first) as i64;
        let ticks: Vec<f64> = (0..=count)
            .map(|k| {
                let v = (first + k as f64) * step;
                if v == 0.0 {
                    0.0
                } else {
                    v
                }
            })
            .collect();
        let decimals = (-step.log10().floor()).max(0.0) as usize;
        Axis {
            lo: first * step,
            hi: last * step,
            ticks,
            decimals,
        }
    }

    /// A tick label as the reports write numbers.
    pub(crate) fn label(&self, v: f64) -> String {
        apa::fixed(v, self.decimals)
    }
}

impl Ranged for Axis {
    type FormatOption = NoDefaultFormatting;
    type ValueType = f64;

    fn map(&self, value: &f64, limit: (i32, i32)) -> i32 {
        let share = (value - self.lo) / (self.hi - self.lo);
        limit.0 + (share * (limit.1 - limit.0) as f64).round() as i32
    }

    fn key_points<Hint: KeyPointHint>(&self, _hint: Hint) -> Vec<f64> {
        self.ticks.clone()
    }

    fn range(&self) -> Range<f64> {
        self.lo..self.hi
    }
}

impl ValueFormatter<f64> for Axis {
    fn format_ext(&self, value: &f64) -> String {
        self.label(*value)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn labels(a: &Axis) -> Vec<String> {
        a.ticks.iter().map(|t| a.label(*t)).collect()
    }

    #[test]
    fn large_values_get_whole_number_labels() {
        // Heckbert (1990): steps of 1, 2 or 5 × 10^k; a step of 50 needs no decimals.
        let a = Axis::nice(1672.0, 1978.0, 6);
        assert_eq!(a.decimals, 0);
        assert!(labels(&a).iter().all(|l| !l.contains('.')), "{a:?}");
        assert!(a.lo <= 1672.0 && a.hi >= 1978.0);
        assert_eq!(labels(&a).first().map(String::as_str), Some("1600"));
    }

    #[test]
    fn labels_share_the_decimals_of_the_step() {
        let a = Axis::nice(-0.183, 0.24, 6);
        let l = labels(&a);
        assert!(
            l.iter()
                .all(|s| s.split('.').nth(1).map(str::len) == Some(1)),
            "{l:?}"
        );
    }

    #[test]
    fn negatives_use_the_minus_sign_and_zero_has_none() {
        // APA Publication Manual, 7th ed., §6.44 (minus sign); a tick at zero is "0".
        let a = Axis::nice(-1.8, 0.4, 6);
        let l = labels(&a);
        assert!(l.iter().all(|s| !s.contains('-')), "{l:?}");
        assert!(l.iter().any(|s| s.starts_with('\u{2212}')), "{l:?}");
        assert!(
            l.contains(&"0.0".to_string()) || l.contains(&"0".to_string()),
            "{l:?}"
        );
        assert!(
            !l.iter().any(|s| s == "\u{2212}0.0" || s == "\u{2212}0"),
            "{l:?}"
        );
    }

    #[test]
    fn counts_take_whole_steps() {
        for max in [1, 2, 3, 7, 13, 250] {
            let a = Axis::counts(max, 5);
            assert_eq!(a.decimals, 0, "{max}");
            assert!(a.ticks.iter().all(|t| t.fract() == 0.0), "{max}: {a:?}");
            assert_eq!(a.lo, 0.0);
            assert!(a.hi >= max as f64);
        }
    }

    #[test]
    fn degenerate_ranges_still_give_an_axis() {
        for (lo, hi) in [(5.0, 5.0), (f64::NAN, 1.0), (0.0, 0.0)] {
            let a = Axis::nice(lo, hi, 5);
            assert!(a.hi > a.lo && a.ticks.len() >= 2, "{lo} {hi}: {a:?}");
        }
    }
}
