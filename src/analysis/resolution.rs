//! The resolution the outcome was recorded with: how many decimals its
//! values carry.
//!
//! The reports show means, SDs, medians and differences to one decimal
//! more than the data were recorded with (APA Publication Manual, 7th ed.,
//! §6.36, "Decimal Fractions": round to as few decimals as precision and
//! use allow; common practice is one more than the measurement). Values
//! arrive as doubles, so the decimals of a cell like `1969.1` are found as
//! the fewest `d` at which `x · 10^d` is a whole number up to the double's
//! own rounding. A plan that declares `decimals` is taken at its word.

use crate::plan::validate::MAX_DECIMALS;

/// Whether `x` is a whole multiple of 10^−d, allowing for the rounding of
/// a decimal number stored as a double.
fn holds(x: f64, d: u32) -> bool {
    let scaled = x * 10f64.powi(d as i32);
    (scaled - scaled.round()).abs() <= 1e-9 * scaled.abs().max(1.0)
}

/// The fewest decimals, at most [`MAX_DECIMALS`], that hold every value;
/// `None` when no such count exists (computed values) or there are no
/// finite values. One pass, cheapest first.
pub(crate) fn recorded_decimals<'a>(values: impl IntoIterator<Item = &'a f64>) -> Option<u32> {
    let mut d = 0;
    let mut any = false;
    for &x in values {
        if !x.is_finite() {
            continue;
        }
        any = true;
        while !holds(x, d) {
            d += 1;
            if d > MAX_DECIMALS {
                return None;
            }
        }
    }
    any.then_some(d)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn tenths_are_found() {
        assert_eq!(recorded_decimals(&[1680.0, 1969.1, 1828.4]), Some(1));
    }

    #[test]
    fn whole_numbers_have_none() {
        assert_eq!(recorded_decimals(&[1.0, 4.0, 7.0, 3.0]), Some(0));
    }

    #[test]
    fn the_value_with_most_decimals_decides() {
        assert_eq!(recorded_decimals(&[0.5, 0.25, 12.0, -3.125]), Some(3));
    }

    #[test]
    fn computed_values_have_no_resolution() {
        assert_eq!(recorded_decimals(&[1.0 / 3.0, 2.0]), None);
        assert_eq!(recorded_decimals(&[std::f64::consts::PI]), None);
    }

    #[test]
    fn no_values_no_answer() {
        assert_eq!(recorded_decimals(&[f64::NAN]), None);
        assert_eq!(recorded_decimals(&[]), None);
    }
}
