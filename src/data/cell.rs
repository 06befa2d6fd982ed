//! What a cell means: missing, a number, or a label — decided in one place
//! for every reader, so a CSV file and a workbook say the same thing about
//! the same cell.
//!
//! Numbers are parsed strictly: an optional sign, digits, the plan's decimal
//! mark, an optional exponent. `inf`, `nan` and values beyond the range of a
//! double are refused with their own message instead of being let through,
//! because one infinite value silently turns every mean into nonsense.
//! Short plain decimals take Clinger's exact fast path (W. D. Clinger 1990,
//! "How to read floating point numbers accurately", PLDI '90): a mantissa
//! below 2^53 divided by an exact power of ten ≤ 10^22 is one correctly
//! rounded IEEE division. Everything else goes to the standard library's
//! correctly rounded parser.

use super::{Column, TextColumn, Use};
use crate::error::Failure;
use hashbrown::{DefaultHashBuilder, HashTable};
use std::collections::HashMap;
use std::hash::BuildHasher;

/// Why a cell could not be used.
#[derive(Clone, Debug, PartialEq, Eq)]
pub(crate) enum Problem {
    /// Not a number at all.
    NotNumber,
    /// `inf`, `nan` and their spellings.
    NotFinite,
    /// A number beyond ±1.8e308.
    Overflow,
    /// The bytes are not UTF-8 text.
    NotUtf8,
}

/// Exact powers of ten representable as doubles.
const POW10: [f64; 23] = [
    1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15, 1e16,
    1e17, 1e18, 1e19, 1e20, 1e21, 1e22,
];

/// Parses a trimmed, non-missing cell as a number with `decimal` (`.` or `,`) as the decimal mark.
pub(crate) fn parse_number(s: &[u8], decimal: u8) -> Result<f64, Problem> {
    if let Some(v) = fast_path(s, decimal) {
        return Ok(v);
    }
    let text = std::str::from_utf8(s).map_err(|_| Problem::NotUtf8)?;
    let lower = text.to_ascii_lowercase();
    let bare = lower.trim_start_matches(['+', '-']);
    if matches!(bare, "inf" | "infinity" | "nan") {
        return Err(Problem::NotFinite);
    }
    let other = if decimal == b',' { b'.' } else { b',' };
    if s.is_empty()
        || s.contains(&other)
        || !s
            .iter()
            .all(|b| b.is_ascii_digit() || b"+-eE".contains(b) || *b == decimal)
    {
        return Err(Problem::NotNumber);
    }
    let owned;
    let text = if decimal == b',' {
        owned = text.replace(',', ".");
        owned.as_str()
    } else {
        text
    };
    match text.parse::<f64>() {
        Ok(v) if v.is_finite() => Ok(v),
        Ok(_) => Err(Problem::Overflow),
        Err(_) => Err(Problem::NotNumber),
    }
}

/// `[+-]digits[<decimal>digits]` with at most 15 digits: exact.
fn fast_path(s: &[u8], decimal: u8) -> Option<f64> {
    let (neg, body) = match s.first()? {
        b'-' => (true, &s[1..]),
        b'+' => (false, &s[1..]),
        _ => (false, s),
    };
    let (mut m, mut digits, mut frac, mut seen_mark) = (0u64, 0usize, 0usize, false);
    for &b in body {
        if b.is_ascii_digit() {
            m = m * 10 + u64::from(b - b'0');
            digits += 1;
            frac += usize::from(seen_mark);
            if digits > 15 {
                return None;
            }
        } else if b == decimal && !seen_mark {
            seen_mark = true;
        } else {
            return None;
        }
    }
    if digits == 0 {
        return None;
    }
    let v = m as f64 / POW10[frac];
    Some(if neg { -v } else { v })
}

/// Trims ASCII whitespace (spaces, tabs, a stray carriage return).
pub(crate) fn trim(s: &[u8]) -> &[u8] {
    s.trim_ascii()
}

/// Builds the used columns row by row; readers feed it cells and attach the
/// position when it reports a [`Problem`].
#[derive(Debug)]
pub(crate) struct Builder {
    decimal: u8,
    missing: Vec<Vec<u8>>,
    /// Whether a missing text starts with a digit (such as "999"), which
    /// turns off the plain-number shortcut.
    missing_numeric: bool,
    cols: Vec<ColumnBuild>,
}

#[derive(Debug, Default)]
struct ColumnBuild {
    numbers: Option<Vec<f64>>,
    text: Option<TextColumn>,
    index: LevelIndex,
}

/// Finds a level's code by its text. The table holds codes and their
/// texts' hashes; the texts it compares against are the column's own
/// `levels`, so a label is stored once (not again as a key), and neither a
/// lookup that misses nor growing the table reads a text. The hasher is
/// seeded per process: codes follow first appearance, never the hash, so
/// no output depends on it, and a data file cannot be crafted against a
/// known seed.
#[derive(Debug, Default)]
pub(crate) struct LevelIndex {
    table: HashTable<(u64, u32)>,
    state: DefaultHashBuilder,
}

impl LevelIndex {
    /// An index of every level of `levels`, which must be distinct.
    pub(crate) fn of(levels: &[String]) -> Self {
        let mut index = LevelIndex::default();
        for code in 0..levels.len() {
            index.add(levels, code as u32);
        }
        index
    }

    /// The code of `s` among `levels`, if it is one of them.
    pub(crate) fn get(&self, levels: &[String], s: &[u8]) -> Option<u32> {
        let hash = self.state.hash_one(s);
        self.table
            .find(hash, |&(h, c)| {
                h == hash && levels[c as usize].as_bytes() == s
            })
            .map(|&(_, c)| c)
    }

    /// Records `levels[code]`, a text not yet in the index.
    pub(crate) fn add(&mut self, levels: &[String], code: u32) {
        let hash = self.state.hash_one(levels[code as usize].as_bytes());
        self.table.insert_unique(hash, (hash, code), |e| e.0);
    }
}

impl Builder {
    /// A builder for the `wanted` columns.
    pub(crate) fn new(wanted: &[Use], decimal: char, missing: &[String]) -> Self {
        let missing: Vec<Vec<u8>> = missing
            .iter()
            .map(|m| m.trim().as_bytes().to_vec())
            .collect();
        Builder {
            decimal: decimal as u8,
            missing_numeric: missing
                .iter()
                .any(|m| m.first().is_some_and(u8::is_ascii_digit)),
            missing,
            cols: wanted
                .iter()
                .map(|u| ColumnBuild {
                    numbers: u.numeric.then(Vec::new),
                    text: u.text.then(TextColumn::default),
                    index: LevelIndex::default(),
                })
                .collect(),
        }
    }

    /// Whether a trimmed cell text is one of the missing texts.
    pub(crate) fn is_missing(&self, s: &[u8]) -> bool {
        self.missing.iter().any(|m| m.as_slice() == s)
    }

    /// Adds a cell given as text to column `k`.
    pub(crate) fn push_text(&mut self, k: usize, raw: &[u8]) -> Result<(), Problem> {
        // Shortcuts for the common cells, each giving exactly what the full
        // path below gives: a label equal to the previous row's (levels are
        // stored trimmed, so an exact match needs no trimming, and the code
        // already says whether it is missing); and a plain number whose
        // first byte is a digit and last byte a digit, which no missing
        // text can be unless one of them starts with a digit.
        match &mut self.cols[k] {
            ColumnBuild {
                numbers: None,
                text: Some(t),
                ..
            } => {
                if let Some(&last) = t.codes.last() {
                    if t.levels[last as usize].as_bytes() == raw {
                        t.codes.push(last);
                        return Ok(());
                    }
                }
            }
            ColumnBuild {
                numbers: Some(nums),
                text: None,
                ..
            } if !self.missing_numeric => {
                if let (Some(a), Some(b)) = (raw.first(), raw.last()) {
                    if a.is_ascii_digit() && b.is_ascii_digit() {
                        if let Some(v) = fast_path(raw, self.decimal) {
                            nums.push(v);
                            return Ok(());
                        }
                    }
                }
            }
            _ => {}
        }
        let s = trim(raw);
        let missing = self.is_missing(s);
        let decimal = self.decimal;
        let col = &mut self.cols[k];
        if let Some(nums) = &mut col.numbers {
            nums.push(if missing {
                f64::NAN
            } else {
                parse_number(s, decimal)?
            });
        }
        if let Some(t) = &mut col.text {
            let code = intern(t, &mut col.index, s, missing)?;
            t.codes.push(code);
        }
        Ok(())
    }

    /// Adds a cell that is already a number (a spreadsheet's numeric cell).
    pub(crate) fn push_number(&mut self, k: usize, v: f64) -> Result<(), Problem> {
        if !v.is_finite() {
            return Err(Problem::NotFinite);
        }
        let col = &mut self.cols[k];
        if let Some(nums) = &mut col.numbers {
            nums.push(v);
        }
        if let Some(t) = &mut col.text {
            let shown = v.to_string();
            let code = intern(t, &mut col.index, shown.as_bytes(), false)?;
            t.codes.push(code);
        }
        Ok(())
    }

    /// Finishes the columns; `names[k]`/`positions[k]` describe column `k`.
    pub(crate) fn finish(self, wanted: &[Use], positions: &[usize]) -> HashMap<String, Column> {
        self.cols
            .into_iter()
            .zip(wanted.iter().zip(positions))
            .map(|(c, (u, p))| {
                let col = Column {
                    name: u.name.clone(),
                    position: p + 1,
                    numbers: c.numbers,
                    text: c.text,
                };
                (u.name.clone(), col)
            })
            .collect()
    }
}

/// Joins chunk tables, given in file order, into one: levels stay in order
/// of first appearance in the whole file, and each chunk's codes are
/// renumbered into the joined levels. No text is copied or compared twice.
///
/// A column can hold a million distinct labels (unit ids), each met in
/// several chunks, so finding the repeats is split by hash into shards that
/// run in parallel, each with a table small enough for the cache; within a
/// shard, chunks are visited in order, so the first chunk and code of each
/// text are found whatever the thread count or hash seed. Numbering the
/// new texts is then one pass in file order with no hashing.
pub(crate) fn merge_levels(mut parts: Vec<TextColumn>) -> TextColumn {
    use rayon::prelude::*;
    const SHARDS: usize = 64;
    if parts.len() <= 1 {
        return parts.pop().unwrap_or_default();
    }
    let state = DefaultHashBuilder::default();
    // Per chunk and shard: (code, hash) of its levels in that shard.
    let buckets: Vec<Vec<Vec<(u32, u64)>>> = parts
        .par_iter()
        .map(|t| {
            let mut b = vec![Vec::new(); SHARDS];
            for (c, l) in t.levels.iter().enumerate() {
                let h = state.hash_one(l.as_bytes());
                // Middle bits: the table uses the low bits for its slot and
                // the top ones for its tags, which must still vary in a shard.
                b[(h >> 32) as usize % SHARDS].push((c as u32, h));
            }
            b
        })
        .collect();
    // Per shard: every (chunk, code) whose text an earlier (chunk, code) had,
    // with that earlier one.
    let repeats: Vec<Vec<[u32; 4]>> = (0..SHARDS)
        .into_par_iter()
        .map(|s| {
            let mut table: HashTable<(u64, u32, u32)> = HashTable::new();
            let mut found = Vec::new();
            for (p, b) in buckets.iter().enumerate() {
                for &(c, h) in &b[s] {
                    let text = parts[p].levels[c as usize].as_bytes();
                    let hit = table.find(h, |&(h2, q, d)| {
                        h2 == h && parts[q as usize].levels[d as usize].as_bytes() == text
                    });
                    match hit {
                        Some(&(_, q, d)) => found.push([p as u32, c, q, d]),
                        None => {
                            table.insert_unique(h, (h, p as u32, c), |e| e.0);
                        }
                    }
                }
            }
            found
        })
        .collect();
    drop(buckets);
    // earlier[p][c]: the first (chunk, code) with the text of (p, c).
    let mut earlier: Vec<Vec<Option<(u32, u32)>>> =
        parts.iter().map(|t| vec![None; t.levels.len()]).collect();
    for [p, c, q, d] in repeats.into_iter().flatten() {
        earlier[p as usize][c as usize] = Some((q, d));
    }
    let total: usize = parts.iter().map(|t| t.codes.len()).sum();
    let mut joined = TextColumn {
        codes: Vec::new(),
        levels: Vec::new(),
        missing: Vec::new(),
    };
    // code[p][c]: the joined code of (p, c); an earlier one is always from
    // an earlier chunk, so it is numbered already.
    let mut code: Vec<Vec<u32>> = Vec::with_capacity(parts.len());
    for (p, t) in parts.iter_mut().enumerate() {
        let mut here = Vec::with_capacity(t.levels.len());
        for ((l, &m), e) in t.levels.iter_mut().zip(&t.missing).zip(&earlier[p]) {
            here.push(match *e {
                Some((q, d)) => code[q as usize][d as usize],
                None => {
                    joined.levels.push(std::mem::take(l));
                    joined.missing.push(m);
                    (joined.levels.len() - 1) as u32
                }
            });
        }
        code.push(here);
    }
    // The rows' codes, renumbered chunk by chunk in parallel.
    joined.codes = vec![0; total];
    let mut rest = joined.codes.as_mut_slice();
    let mut slices = Vec::with_capacity(parts.len());
    for t in &parts {
        let (a, b) = rest.split_at_mut(t.codes.len());
        slices.push(a);
        rest = b;
    }
    slices
        .into_par_iter()
        .zip(&parts)
        .zip(&code)
        .for_each(|((out, t), map)| {
            for (o, &c) in out.iter_mut().zip(&t.codes) {
                *o = map[c as usize];
            }
        });
    // The repeats' texts are freed on both cores.
    parts.into_par_iter().for_each(drop);
    joined
}

/// The code of `s` in `t`, adding it as a new level when unseen. Small
/// level tables (the usual two or three groups) are scanned, larger ones hashed.
fn intern(
    t: &mut TextColumn,
    index: &mut LevelIndex,
    s: &[u8],
    missing: bool,
) -> Result<u32, Problem> {
    if let Some(&last) = t.codes.last() {
        if t.levels[last as usize].as_bytes() == s {
            return Ok(last);
        }
    }
    if t.levels.len() <= 16 {
        if let Some(p) = t.levels.iter().position(|l| l.as_bytes() == s) {
            return Ok(p as u32);
        }
    } else if let Some(c) = index.get(&t.levels, s) {
        return Ok(c);
    }
    let text = std::str::from_utf8(s).map_err(|_| Problem::NotUtf8)?;
    let code = u32::try_from(t.levels.len()).map_err(|_| Problem::NotNumber)?;
    t.levels.push(text.to_string());
    t.missing.push(missing);
    if t.levels.len() == 17 {
        *index = LevelIndex::of(&t.levels);
    } else if t.levels.len() > 17 {
        index.add(&t.levels, code);
    }
    Ok(code)
}

/// The user's message for a cell problem at a position.
pub(crate) fn failure(p: &Problem, column: &str, text: &[u8], decimal: char) -> Failure {
    // Quoted capped and escaped: a cell can be megabytes long when a quote
    // is left open (it then runs to the end of the file).
    let shown = crate::error::shown(&String::from_utf8_lossy(trim(text)));
    let column = crate::error::shown(column);
    match p {
        Problem::NotNumber => {
            let f = Failure::input(format!("column \"{column}\": \"{shown}\" is not a number"));
            if text.contains(&b'\n') {
                return f.help("the cell runs over a line break: a quote (\") opened in it is never closed, so every line after it was read as part of this cell; close the quote or remove it");
            }
            let as_comma = decimal == '.' && parse_number(trim(text), b',').is_ok();
            if as_comma {
                f.help("the number is written with a decimal comma; add `decimal = \",\"` to [data]")
            } else if decimal == ',' && parse_number(trim(text), b'.').is_ok() {
                f.help("the plan says `decimal = \",\"` but this cell uses a decimal point; write every number the same way")
            } else {
                f.help("fix the cell, or list its text under `missing` in [data] if it means a missing value")
            }
        }
        Problem::NotFinite => Failure::input(format!("column \"{column}\": \"{shown}\" is not a finite number"))
            .help(format!("attest does not analyse infinite or undefined values; if \"{shown}\" means a missing value, list it under `missing` in [data]")),
        Problem::Overflow => Failure::input(format!("column \"{column}\": \"{shown}\" is too large to be a number (beyond ±1.8e308)"))
            .help("check the cell; a value this large is almost always a typing or export error"),
        Problem::NotUtf8 => Failure::input(format!("column \"{column}\": the cell is not valid UTF-8 text"))
            .help("save the data file as UTF-8 (most spreadsheet programs offer \"CSV UTF-8\")"),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn shortcuts_give_what_the_full_path_gives() {
        let used = |numeric, text| Use {
            name: "c".into(),
            numeric,
            text,
        };
        // A missing code made of digits must still read as missing.
        let mut b = Builder::new(&[used(true, false)], '.', &["999".into(), String::new()]);
        for cell in ["12.5", "999", " 7 ", ""] {
            b.push_text(0, cell.as_bytes()).unwrap();
        }
        let nums = b.cols[0].numbers.clone().unwrap();
        assert_eq!(nums[0], 12.5);
        assert!(nums[1].is_nan() && nums[3].is_nan());
        assert_eq!(nums[2], 7.0);
        // Labels: a repeat, a padded repeat and a missing text repeated.
        let mut b = Builder::new(&[used(false, true)], '.', &["NA".into()]);
        for cell in ["a", "a", " a", "NA", "NA", "b"] {
            b.push_text(0, cell.as_bytes()).unwrap();
        }
        let t = b.cols[0].text.clone().unwrap();
        assert_eq!(t.codes, [0, 0, 0, 1, 1, 2]);
        assert_eq!(t.levels, ["a", "NA", "b"]);
        assert_eq!(t.missing, [false, true, false]);
    }

    #[test]
    fn numbers_parse_exactly() {
        // Decimal literals: the expected doubles are the literals themselves.
        let cases: [(&str, u8, f64); 8] = [
            ("812.5", b'.', 812.5),
            ("812,5", b',', 812.5),
            ("-0.1", b'.', -0.1),
            ("+3", b'.', 3.0),
            ("1e3", b'.', 1000.0),
            ("0.30000000000000004", b'.', 0.300_000_000_000_000_04),
            ("123456789012345.6", b'.', 123_456_789_012_345.6),
            (".5", b'.', 0.5),
        ];
        for (text, d, v) in cases {
            assert_eq!(parse_number(text.as_bytes(), d), Ok(v), "{text}");
        }
    }

    #[test]
    fn strange_numbers_are_refused() {
        assert_eq!(parse_number(b"inf", b'.'), Err(Problem::NotFinite));
        assert_eq!(parse_number(b"-Infinity", b'.'), Err(Problem::NotFinite));
        assert_eq!(parse_number(b"nan", b'.'), Err(Problem::NotFinite));
        assert_eq!(parse_number(b"1e400", b'.'), Err(Problem::Overflow));
        assert_eq!(parse_number(b"1.234,5", b','), Err(Problem::NotNumber));
        assert_eq!(parse_number(b"12,5", b'.'), Err(Problem::NotNumber));
        assert_eq!(parse_number(b"812,5O", b','), Err(Problem::NotNumber));
        assert_eq!(parse_number(b"-", b'.'), Err(Problem::NotNumber));
        assert_eq!(parse_number(b"\xff", b'.'), Err(Problem::NotUtf8));
    }

    /// Reads `cells` as one text column in one builder.
    fn column_of(cells: &[String], missing: &[String]) -> TextColumn {
        let want = [Use {
            name: "u".into(),
            numeric: false,
            text: true,
        }];
        let mut b = Builder::new(&want, '.', missing);
        for c in cells {
            b.push_text(0, c.as_bytes()).unwrap();
        }
        b.finish(&want, &[0])["u"].text.clone().unwrap()
    }

    #[test]
    fn merged_chunks_equal_one_pass() {
        // Random labels drawn from small and large pools (few repeats and
        // many), a missing text among them, cut into chunks at random
        // points, some empty: the merge must give exactly the table one
        // builder gives over all the cells (levels in order of first
        // appearance, codes, missing flags).
        let mut state = 0x2545_f491_4f6c_dd1du64;
        let mut next = move |n: u64| {
            state ^= state << 13;
            state ^= state >> 7;
            state ^= state << 17;
            state % n
        };
        let missing = vec!["NA".to_string()];
        for (pool, rows) in [(3u64, 500u64), (40, 2000), (5000, 6000), (1_000_000, 3000)] {
            let cells: Vec<String> = (0..rows)
                .map(|_| match next(pool) {
                    0 => "NA".to_string(),
                    k => format!("unit-{k}"),
                })
                .collect();
            let one = column_of(&cells, &missing);
            for pieces in [1u64, 2, 7, 64] {
                let mut cuts: Vec<usize> = (1..pieces).map(|_| next(rows + 1) as usize).collect();
                cuts.push(0);
                cuts.push(cells.len());
                cuts.sort_unstable();
                let parts: Vec<TextColumn> = cuts
                    .windows(2)
                    .map(|w| column_of(&cells[w[0]..w[1]], &missing))
                    .collect();
                assert_eq!(merge_levels(parts), one, "pool {pool}, {pieces} pieces");
            }
        }
    }

    #[test]
    fn many_levels_switch_to_hashing() {
        let want = [Use {
            name: "g".into(),
            numeric: false,
            text: true,
        }];
        let mut b = Builder::new(&want, '.', &[]);
        for i in 0..40 {
            b.push_text(0, format!("L{}", i % 20).as_bytes()).unwrap();
        }
        let cols = b.finish(&want, &[0]);
        let t = cols["g"].text.as_ref().unwrap();
        assert_eq!(t.levels.len(), 20);
        assert_eq!(t.codes[25], 5);
    }
}
