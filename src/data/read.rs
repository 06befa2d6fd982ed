//! Delimited text (CSV, semicolon files, TSV) read in one streaming pass.
//!
//! The header row is required and columns are found by name. Only the used
//! columns are looked at; each is handed to [`cell::Builder`](super::cell::Builder).
//! A UTF-8 byte-order mark and CRLF line ends are accepted. A file without
//! quote characters is split at line ends into chunks parsed in parallel
//! (rayon), then joined in order; a file with quotes (whose fields may
//! contain line breaks) is read in one sequential pass. Both give the same
//! columns and the same messages.

use super::cell::{self, Builder};
use super::{locate, LineMap, Table, Use};
use crate::error::{Failure, Result};
use crate::plan::DataSpec;
use rayon::prelude::*;
use std::collections::HashMap;

/// Chunks smaller than this are not worth a thread.
const MIN_CHUNK: usize = 1 << 22;

/// Reads a delimited text file's used columns.
pub fn read_delimited(
    bytes: &[u8],
    source: &str,
    spec: &DataSpec,
    wanted: &[Use],
) -> Result<Table> {
    read_in_chunks(
        bytes,
        source,
        spec,
        wanted,
        rayon::current_num_threads(),
        MIN_CHUNK,
    )
}

/// [`read_delimited`] with the number of chunks and their smallest size given.
fn read_in_chunks(
    bytes: &[u8],
    source: &str,
    spec: &DataSpec,
    wanted: &[Use],
    threads: usize,
    min_chunk: usize,
) -> Result<Table> {
    let bytes = bytes.strip_prefix(b"\xEF\xBB\xBF").unwrap_or(bytes);
    if bytes.iter().all(|b| b.is_ascii_whitespace()) {
        return Err(Failure::input("the data file is empty")
            .in_file(source)
            .help("the file needs a header row naming the columns, then one row per observation"));
    }
    let delim = spec.delimiter as u8;
    let mut rdr = reader(delim, bytes);
    let mut header = csv::ByteRecord::new();
    // The first non-empty record is the header (the csv crate skips blank lines).
    rdr.read_byte_record(&mut header)
        .map_err(|e| csv_failure(&e, source, 1))?;
    let header_start = skip_breaks(bytes, header.position().map_or(0, |p| p.byte() as usize));
    let header_line = 1 + breaks(&bytes[..header_start]);
    let names = header
        .iter()
        .enumerate()
        .map(|(i, h)| {
            std::str::from_utf8(h).map(|s| s.trim().to_string()).map_err(|_| {
                Failure::input("the header row is not valid UTF-8 text")
                    .at(source, header_line, Some(i + 1))
                    .help("save the data file as UTF-8 (most spreadsheet programs offer \"CSV UTF-8\")")
            })
        })
        .collect::<Result<Vec<String>>>()?;
    if let [only] = names.as_slice() {
        if let Some(d) = [',', ';', '\t', '|']
            .into_iter()
            .find(|d| *d != spec.delimiter && only.contains(*d))
        {
            return Err(Failure::input(format!(
                "the header row reads as one column, \"{only}\"; the delimiter looks like \"{}\", not \"{}\"",
                d.escape_default(),
                spec.delimiter.escape_default()
            ))
            .at(source, header_line, None)
            .help(format!("set `delimiter = \"{}\"` in [data]", d.escape_default())));
        }
    }
    let index = locate(&names, wanted, source, header_line)?;
    // The reader may stop between the \r and \n of the header's line end.
    let mut body_start = (rdr.position().byte() as usize).min(bytes.len());
    if body_start > 0 && bytes[body_start - 1] == b'\r' && bytes.get(body_start) == Some(&b'\n') {
        body_start += 1;
    }
    let body = &bytes[body_start..];
    let first_line = 1 + breaks(&bytes[..body_start]);
    let job = Job {
        delim,
        ncols: names.len(),
        index: &index,
        wanted,
        spec,
        source,
    };
    let chunks = split(body, threads, min_chunk);
    let parts: Vec<Part> = if chunks.len() == 1 {
        vec![job.chunk(body, first_line)?]
    } else {
        // Line number of each chunk's first byte: count the line ends before it.
        let counts: Vec<usize> = chunks
            .par_iter()
            .map(|(a, b)| body[*a..*b].iter().filter(|&&x| x == b'\n').count())
            .collect();
        let mut line = first_line;
        let mut firsts = Vec::with_capacity(counts.len());
        for c in &counts {
            firsts.push(line);
            line += c;
        }
        chunks
            .par_iter()
            .zip(firsts)
            .map(|((a, b), l)| job.chunk(&body[*a..*b], l))
            .collect::<Result<Vec<Part>>>()?
    };
    let rows: usize = parts.iter().map(|p| p.rows).sum();
    if rows == 0 {
        return Err(
            Failure::input("the data file has a header row but no data rows")
                .at(source, header_line, None)
                .help("check that the file was saved completely"),
        );
    }
    let (columns, lines) = join(parts, wanted, &index);
    Ok(Table {
        rows,
        source: source.to_string(),
        columns,
        lines,
    })
}

fn reader(delim: u8, bytes: &[u8]) -> csv::Reader<&[u8]> {
    csv::ReaderBuilder::new()
        .delimiter(delim)
        .has_headers(false)
        .flexible(true)
        .from_reader(bytes)
}

fn csv_failure(e: &csv::Error, source: &str, line: usize) -> Failure {
    let line = e.position().map_or(line, |p| p.line() as usize);
    Failure::input(format!("the data file cannot be read: {e}")).at(source, line, None)
}

/// Splits the body at line ends into about one chunk per thread, or keeps
/// it whole when it is small or contains quotes.
fn split(body: &[u8], threads: usize, min_chunk: usize) -> Vec<(usize, usize)> {
    if body.len() < 2 * min_chunk || threads <= 1 || body.contains(&b'"') {
        return vec![(0, body.len())];
    }
    let n = threads.min(body.len() / min_chunk.max(1)).max(1);
    let mut out = Vec::with_capacity(n);
    let mut a = 0;
    for k in 1..n {
        let target = (body.len() * k / n).max(a);
        let b = match body[target..].iter().position(|&x| x == b'\n') {
            Some(p) => target + p + 1,
            None => body.len(),
        };
        if b > a {
            out.push((a, b));
        }
        a = b;
    }
    if a < body.len() {
        out.push((a, body.len()));
    }
    out
}

/// Line breaks in `s`: each `\n`, and each `\r` not followed by `\n`.
fn breaks(s: &[u8]) -> usize {
    let lf = s.iter().filter(|&&b| b == b'\n').count();
    let lone_cr = s
        .windows(2)
        .filter(|w| w[0] == b'\r' && w[1] != b'\n')
        .count()
        + usize::from(s.last() == Some(&b'\r'));
    lf + lone_cr
}

/// The first offset at or after `i` that is not a line-end byte.
fn skip_breaks(s: &[u8], mut i: usize) -> usize {
    while i < s.len() && matches!(s[i], b'\r' | b'\n') {
        i += 1;
    }
    i.min(s.len())
}

/// What is shared by every chunk.
struct Job<'a> {
    delim: u8,
    ncols: usize,
    index: &'a [usize],
    wanted: &'a [Use],
    spec: &'a DataSpec,
    source: &'a str,
}

/// One chunk's rows.
struct Part {
    rows: usize,
    builder: Builder,
    lines: LineMap,
}

impl Job<'_> {
    fn chunk(&self, bytes: &[u8], first_line: usize) -> Result<Part> {
        let mut rdr = reader(self.delim, bytes);
        let mut b = Builder::new(self.wanted, self.spec.decimal, &self.spec.missing);
        let mut rec = csv::ByteRecord::new();
        let mut lines = LineMap {
            first: first_line,
            jumps: Vec::new(),
        };
        // Line numbers are counted here, not taken from the csv reader, whose
        // positions lag behind CRLF line ends and skip blank lines.
        let quoted = bytes.contains(&b'"');
        let (mut rows, mut prev_start, mut prev_line) = (0usize, 0usize, first_line);
        loop {
            let more = rdr
                .read_byte_record(&mut rec)
                .map_err(|e| csv_failure(&e, self.source, first_line))?;
            if !more {
                break;
            }
            let start = skip_breaks(
                bytes,
                rec.position().map_or(prev_start, |p| p.byte() as usize),
            );
            let between = &bytes[prev_start..start.max(prev_start)];
            // Without quotes no record spans lines: only the line ends just before it count.
            let gap = if quoted || rows == 0 {
                between
            } else {
                let run = between
                    .iter()
                    .rev()
                    .take_while(|b| matches!(b, b'\r' | b'\n'))
                    .count();
                &between[between.len() - run..]
            };
            let line = prev_line + breaks(gap);
            if line != lines.line(rows) {
                lines.jumps.push((rows, line));
            }
            (prev_start, prev_line) = (start, line);
            if rec.len() != self.ncols {
                return Err(self.ragged(&rec, line));
            }
            for (k, &i) in self.index.iter().enumerate() {
                let raw = &rec[i];
                b.push_text(k, raw).map_err(|p| {
                    cell::failure(&p, &self.wanted[k].name, raw, self.spec.decimal).at(
                        self.source,
                        line,
                        Some(i + 1),
                    )
                })?;
            }
            rows += 1;
        }
        Ok(Part {
            rows,
            builder: b,
            lines,
        })
    }

    fn ragged(&self, rec: &csv::ByteRecord, line: usize) -> Failure {
        let n = rec.len();
        let trailing = n == self.ncols + 1 && rec.get(n - 1).is_some_and(|c| c.is_empty());
        let fields = |k: usize| {
            if k == 1 {
                "1 field".to_string()
            } else {
                format!("{k} fields")
            }
        };
        let f = Failure::input(format!(
            "this row has {}, the header has {}",
            fields(n),
            fields(self.ncols)
        ))
        .at(self.source, line, Some(n.min(self.ncols) + 1));
        if trailing {
            f.help("the row ends with an extra delimiter; remove it, or add it to the header row as well")
        } else {
            f.help("every row needs one field per header column; check for a missing or extra delimiter, or an unquoted delimiter inside a value")
        }
    }
}

/// Joins the chunks in order; text codes of later chunks are renumbered so
/// levels stay in order of first appearance in the file.
fn join(
    parts: Vec<Part>,
    wanted: &[Use],
    index: &[usize],
) -> (HashMap<String, super::Column>, LineMap) {
    let mut it = parts.into_iter();
    let Some(first) = it.next() else {
        return (HashMap::new(), LineMap::default());
    };
    let mut lines = first.lines;
    let mut rows = first.rows;
    let mut cols = first.builder.finish(wanted, index);
    for p in it {
        let line0 = p.lines.line(0);
        if lines.line(rows) != line0 {
            lines.jumps.push((rows, line0));
        }
        lines.jumps.extend(
            p.lines
                .jumps
                .iter()
                .filter(|(r, _)| *r > 0)
                .map(|(r, l)| (r + rows, *l)),
        );
        rows += p.rows;
        for (name, c) in p.builder.finish(wanted, index) {
            let Some(into) = cols.get_mut(&name) else {
                continue;
            };
            if let (Some(a), Some(b)) = (&mut into.numbers, c.numbers) {
                a.extend_from_slice(&b);
            }
            if let (Some(a), Some(b)) = (&mut into.text, c.text) {
                let mut known: HashMap<String, u32> = a
                    .levels
                    .iter()
                    .enumerate()
                    .map(|(i, l)| (l.clone(), i as u32))
                    .collect();
                let map: Vec<u32> = b
                    .levels
                    .iter()
                    .zip(&b.missing)
                    .map(|(l, m)| {
                        *known.entry(l.clone()).or_insert_with(|| {
                            a.levels.push(l.clone());
                            a.missing.push(*m);
                            (a.levels.len() - 1) as u32
                        })
                    })
                    .collect();
                a.codes.extend(b.codes.iter().map(|&c| map[c as usize]));
            }
        }
    }
    (cols, lines)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn spec() -> DataSpec {
        DataSpec {
            path: "d.csv".into(),
            format: crate::plan::DataFormat::Delimited,
            delimiter: ',',
            decimal: '.',
            missing: vec![String::new(), "NA".into()],
            sheet: None,
        }
    }

    fn wanted() -> Vec<Use> {
        vec![
            Use {
                name: "g".into(),
                numeric: false,
                text: true,
            },
            Use {
                name: "y".into(),
                numeric: true,
                text: false,
            },
        ]
    }

    /// 3000 rows with CRLF ends, blank lines and levels first seen late.
    fn file(bad_row: Option<usize>) -> Vec<u8> {
        let mut s = String::from("id,g,y\r\n");
        for i in 0..3000 {
            let g = ["a", "b", "c", "d"][(i / 700).min(3)];
            if i % 97 == 0 {
                s.push_str("\r\n");
            }
            let y = if Some(i) == bad_row {
                "x".to_string()
            } else if i % 13 == 0 {
                "NA".into()
            } else {
                format!("{}.5", i)
            };
            s.push_str(&format!("{i},{g},{y}\r\n"));
        }
        s.into_bytes()
    }

    #[test]
    fn chunks_give_the_same_table_as_one_pass() {
        let bytes = file(None);
        let one = read_in_chunks(&bytes, "d.csv", &spec(), &wanted(), 1, MIN_CHUNK).unwrap();
        let many = read_in_chunks(&bytes, "d.csv", &spec(), &wanted(), 7, 256).unwrap();
        assert_eq!(one.rows, 3000);
        assert_eq!(many.rows, 3000);
        // NaN marks missing cells, so compare the numbers bit for bit.
        let bits = |t: &Table| -> Vec<u64> {
            t.columns["y"]
                .numbers
                .as_ref()
                .unwrap()
                .iter()
                .map(|v| v.to_bits())
                .collect()
        };
        assert_eq!(bits(&one), bits(&many));
        assert_eq!(one.columns["g"], many.columns["g"]);
        assert_eq!(one.lines, many.lines);
        // Row 0 is on line 3 (header, then a blank line); row 97 follows another blank line.
        assert_eq!(one.lines.line(0), 3);
        assert_eq!(one.lines.line(97), 2 + 97 + 2);
        assert_eq!(
            one.columns["g"].text.as_ref().unwrap().levels,
            ["a", "b", "c", "d"]
        );
    }

    #[test]
    fn chunks_report_the_same_line() {
        // Row 2500 sits after 26 blank lines (rows 0, 97, …, 2425), so on line 2 + 2500 + 26.
        let bytes = file(Some(2500));
        let one = read_in_chunks(&bytes, "d.csv", &spec(), &wanted(), 1, MIN_CHUNK).unwrap_err();
        let many = read_in_chunks(&bytes, "d.csv", &spec(), &wanted(), 7, 256).unwrap_err();
        assert_eq!(one, many);
        assert_eq!(one.location.unwrap().line, Some(2 + 2500 + 26));
    }
}
