//! Rehearsal on blinded data: the whole plan, every check, test, effect,
//! figure and report, run on a copy of the data in which no preregistered
//! effect can be seen (blind analysis; MacCoun & Perlmutter 2015, "Blind
//! analysis: Hide results to seek the truth", *Nature* 526, 187–189).
//!
//! The data file is read with the plan's own settings, so every mechanical
//! problem surfaces as `run` would report it; the blinding then acts on
//! each hypothesis' selected values, after the exclusions:
//!
//! - independent groups: each group is centred on the pooled mean (its own
//!   mean subtracted, the pooled mean added), and the centred values are
//!   shuffled across the two groups, keeping the group sizes;
//! - paired designs: each unit's difference is centred on zero (the mean
//!   difference subtracted) and its sign flipped at random, each pair
//!   keeping its midpoint;
//! - one sample: the values are shifted so that their mean is the
//!   reference.
//!
//! Centring first is what hides the size: a shuffle alone keeps the pooled
//! distribution, which a large effect makes bimodal, and a sign flip alone
//! keeps the spread of the differences, which a large mean difference
//! inflates. After centring, every difference, effect and test estimates
//! zero, whatever the true effect, and its direction is a coin toss.

use crate::data::Selected;
use crate::plan::{Design, Hypothesis};

/// The notice every rehearsal output carries.
pub(crate) const NOTICE: &str =
    "REHEARSAL ON BLINDED DATA: no number here is a result of the study";

/// The sentences that say how each design was blinded.
pub(crate) fn blinding_words(designs: &[Design]) -> Vec<String> {
    let mut out = Vec::new();
    for d in [Design::Independent, Design::Paired, Design::OneSample] {
        if !designs.contains(&d) {
            continue;
        }
        out.push(match d {
            Design::Independent => "Independent groups: each group's values were centred on the mean of both groups together, then shuffled at random across the two groups, keeping each group's size.",
            Design::Paired => "Paired designs: each unit's difference was centred on zero (the mean difference taken away) and its sign flipped at random; each pair keeps its midpoint.",
            Design::OneSample => "One sample: the values were shifted so that their mean equals the reference value.",
        }.to_string());
    }
    out
}

/// SplitMix64 (Steele, Lea & Flood 2014, "Fast splittable pseudorandom
/// number generators", OOPSLA). Written here rather than taken from a
/// crate so that the blinding of a seed stays the same bytes across
/// dependency upgrades; a shuffle and coin flips need nothing stronger.
struct Stream(u64);

impl Stream {
    fn next(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }

    /// Uniform on `0..n` (Lemire's multiply-shift; the bias is below
    /// n / 2⁶⁴, far under anything a shuffle of data rows could show).
    fn below(&mut self, n: usize) -> usize {
        ((self.next() as u128 * n as u128) >> 64) as usize
    }
}

fn mean(x: &[f64]) -> f64 {
    if x.is_empty() {
        return 0.0;
    }
    // Two passes (mean, then the mean of the residuals) keep the centring
    // exact to rounding even for values far from zero.
    let m = x.iter().sum::<f64>() / x.len() as f64;
    m + x.iter().map(|v| v - m).sum::<f64>() / x.len() as f64
}

/// Blinds one hypothesis' values in place. `seed` is the rehearsal's seed,
/// `index` the hypothesis' position (each gets its own stream).
pub(crate) fn blind(sel: &mut Selected, h: &Hypothesis, seed: u64, index: usize) {
    let mut rng = Stream(seed ^ (index as u64).wrapping_mul(0xD1B5_4A32_D192_ED03));
    match h.design {
        Design::Independent => {
            let (ma, mb) = (mean(&sel.first), mean(&sel.second));
            let n1 = sel.first.len();
            let mut pooled: Vec<f64> = sel.first.iter().chain(&sel.second).copied().collect();
            let grand = mean(&pooled);
            for (i, v) in pooled.iter_mut().enumerate() {
                *v = *v - if i < n1 { ma } else { mb } + grand;
            }
            // Fisher–Yates (Knuth, TAOCP vol. 2, Algorithm P).
            for i in (1..pooled.len()).rev() {
                let j = rng.below(i + 1);
                pooled.swap(i, j);
            }
            sel.second = pooled.split_off(n1);
            sel.first = pooled;
        }
        Design::Paired => {
            let diffs: Vec<f64> = sel
                .first
                .iter()
                .zip(&sel.second)
                .map(|(a, b)| a - b)
                .collect();
            let md = mean(&diffs);
            for ((a, b), d) in sel.first.iter_mut().zip(sel.second.iter_mut()).zip(&diffs) {
                let mid = (*a + *b) / 2.0;
                let half = if rng.next() & 1 == 1 { 1.0 } else { -1.0 } * (d - md) / 2.0;
                *a = mid + half;
                *b = mid - half;
            }
        }
        Design::OneSample => {
            let reference = match h.comparison {
                crate::plan::Comparison::Reference { reference } => reference,
                _ => 0.0,
            };
            let m = mean(&sel.first);
            for v in &mut sel.first {
                *v = *v - m + reference;
            }
        }
    }
}

/// The outputs of a rehearsal: only the files that carry the stamp, every
/// figure stamped, standalone and inlined in HTML. Kept by name: the
/// reports (`.md`, `.html`), the SVG figures and `results.json`. Left out:
/// the named values, `tables.tex` and `references.bib` (a thesis must never
/// pick up a blinded number by accident), and the binary formats (Word,
/// PNG, PDF), where a text stamp cannot be added after rendering.
pub(crate) fn stamp(outputs: Vec<crate::render::Output>) -> Vec<(String, Vec<u8>)> {
    let mark = format!(
        "<text x=\"6\" y=\"14\" font-family=\"sans-serif\" font-size=\"11\" font-weight=\"bold\" fill=\"#b00020\">{NOTICE}</text></svg>"
    );
    outputs
        .into_iter()
        .filter(|o| {
            o.name == "results.json" || [".md", ".html", ".svg"].iter().any(|e| o.name.ends_with(e))
        })
        .map(|o| {
            let bytes = if o.name.ends_with(".svg") || o.name.ends_with(".html") {
                String::from_utf8_lossy(&o.bytes)
                    .replace("</svg>", &mark)
                    .into_bytes()
            } else {
                o.bytes
            };
            (o.name, bytes)
        })
        .collect()
}

/// Where the `n`-th rehearsal record of an analysis file lives: beside
/// its lock, `<stem>.rehearsal-<n>.json`.
fn record_path(analysis: &std::path::Path, n: usize) -> std::path::PathBuf {
    let lock = crate::lock::lock_path(analysis);
    let stem = lock
        .file_stem()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_default();
    lock.with_file_name(format!("{stem}.rehearsal-{n}.json"))
}

/// The most rehearsal records read beside one lock.
const MAX_RECORDS: usize = 1000;

/// Writes a new rehearsal record beside the lock, never over an old one
/// (the next free number; the file is created exclusively).
pub(crate) fn record(
    analysis: &std::path::Path,
    rec: &crate::results::RehearsalRecord,
) -> crate::error::Result<std::path::PathBuf> {
    let mut text = serde_json::to_string_pretty(rec).expect("a record always serialises");
    text.push('\n');
    for n in 1..=MAX_RECORDS {
        let p = record_path(analysis, n);
        if std::fs::symlink_metadata(&p).is_ok() {
            continue;
        }
        crate::output::create_new(&p, text.as_bytes())?;
        return Ok(p);
    }
    Err(crate::error::Failure::input(format!(
        "{MAX_RECORDS} rehearsals are already recorded beside {}",
        crate::lock::lock_path(analysis).display()
    ))
    .help(
        "that is more than any plan needs; rehearse without a lock, or start a new analysis file",
    ))
}

/// The rehearsal records beside the lock, oldest first.
pub(crate) fn records(
    analysis: &std::path::Path,
) -> crate::error::Result<Vec<crate::results::RehearsalRecord>> {
    let mut out = Vec::new();
    for n in 1..=MAX_RECORDS {
        let p = record_path(analysis, n);
        if std::fs::symlink_metadata(&p).is_err() {
            break;
        }
        let bytes = crate::files::read_bounded(
            &p,
            "read the rehearsal record",
            crate::files::Links::Refuse,
            64 * 1024,
        )?;
        let rec = serde_json::from_slice(&bytes).map_err(|e| {
            crate::error::Failure::input(format!("the rehearsal record is not readable: {e}"))
                .in_file(&p)
                .help("attest writes these records itself; restore the file from version control")
        })?;
        out.push(rec);
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::results::RowFlow;

    fn flow() -> RowFlow {
        RowFlow {
            read: [0, 0],
            other_levels: 0,
            no_group: 0,
            rules: vec![],
            missing: [0, 0],
            incomplete_pairs: 0,
            unpaired: [0, 0],
            analysed: [0, 0],
        }
    }

    #[test]
    fn the_stream_is_splitmix64() {
        // First outputs of SplitMix64 from state 0, as printed by the
        // reference implementation of Vigna (prng.di.unimi.it, splitmix64.c).
        let mut s = Stream(0);
        assert_eq!(s.next(), 0xE220_A839_7B1D_CDAF);
        assert_eq!(s.next(), 0x6E78_9E6A_A1B9_65F4);
    }

    #[test]
    fn independent_blinding_keeps_sizes_and_hides_the_difference() {
        let h: crate::plan::Hypothesis = serde_json::from_value(serde_json::json!({
            "id": "H1", "claim": "c", "design": "independent", "outcome": "y",
            "comparison": {"layout": "groups", "group": "g", "levels": ["a", "b"]},
            "alternative": "two-sided", "method": "welch-t", "robustness": false
        }))
        .unwrap();
        let first: Vec<f64> = (0..30).map(|i| 100.0 + (i % 7) as f64).collect();
        let second: Vec<f64> = (0..20).map(|i| 50.0 + (i % 5) as f64).collect();
        let mut sel = Selected {
            first: first.clone(),
            second: second.clone(),
            flow: flow(),
        };
        blind(&mut sel, &h, 7, 0);
        assert_eq!((sel.first.len(), sel.second.len()), (30, 20));
        let d = mean(&sel.first) - mean(&sel.second);
        assert!(d.abs() < 2.0, "{d}");
        // Nothing of the true 50-point gap is left in the pooled values.
        let all: Vec<f64> = sel.first.iter().chain(&sel.second).copied().collect();
        let span = all.iter().cloned().fold(f64::MIN, f64::max)
            - all.iter().cloned().fold(f64::MAX, f64::min);
        assert!(span < 10.0, "{span}");
        // The same seed gives the same blinding.
        let mut again = Selected {
            first,
            second,
            flow: flow(),
        };
        blind(&mut again, &h, 7, 0);
        assert_eq!(again.first, sel.first);
    }
}
