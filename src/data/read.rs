//! Delimited text (CSV, semicolon files, TSV), read in one streaming pass.
//!
//! The header row is required and columns are found by name. Only the used
//! columns are looked at; each is handed to [`cell::Builder`](super::cell::Builder).
//! A UTF-8 byte-order mark and CRLF line ends are accepted.
//!
//! A file is read in blocks of [`BLOCK`] bytes, each cut after its last
//! line end that is outside quotes, hashed and parsed while the next is
//! read, so memory holds one block (plus the used columns), never the
//! whole file. Within a block without quote characters the text is split at
//! line ends into chunks parsed in parallel (rayon) and joined in order; a
//! block with quotes (whose fields may contain line breaks) is parsed in
//! one sequential pass. Every way gives the same columns and messages.
//! More than [`MAX_ROWS`] data rows are refused.

use super::cell::{self, Builder};
use super::{locate, LineMap, Table, TextColumn, Use};
use crate::error::{Failure, Result};
use crate::plan::DataSpec;
use rayon::prelude::*;
use std::collections::HashMap;

/// Chunks smaller than this are not worth a thread.
const MIN_CHUNK: usize = 1 << 20;

/// Bytes read from the file at a time (a block grows only when a single
/// record is longer).
pub(crate) const BLOCK: usize = 1 << 24;

/// The most data rows a file may have. Each used column keeps 8 bytes
/// (numbers) or 4 bytes (labels) per row, and the statistics work on
/// copies of the selected values, so this bounds memory to a few GB; a
/// larger file is refused with a message rather than exhausting memory.
pub(crate) const MAX_ROWS: usize = 50_000_000;

/// Reads a delimited text file's used columns from memory.
pub fn read_delimited(
    bytes: &[u8],
    source: &str,
    spec: &DataSpec,
    wanted: &[Use],
) -> Result<Table> {
    let io = |e: std::io::Error| Failure::internal(format!("reading from memory failed: {e}"));
    let (table, _) = read_stream(bytes, source, spec, wanted, Limits::default(), io)?;
    Ok(table)
}

/// Reads a delimited text file's used columns from `path` in blocks,
/// returning them with the SHA-256 (hex) of the file's bytes.
pub(crate) fn read_delimited_file(
    path: &std::path::Path,
    source: &str,
    spec: &DataSpec,
    wanted: &[Use],
) -> Result<(Table, String)> {
    let file = crate::files::open_regular(path, "read the data file", crate::files::Links::Follow)
        .map_err(|f| f.help("check `path` in [data]; it is relative to the analysis file"))?;
    let io = |e: std::io::Error| Failure::io("read the data file", path, &e);
    read_stream(file, source, spec, wanted, Limits::default(), io)
}

/// Block size, chunking and row limit of one read (tests shrink them).
#[derive(Clone, Copy)]
struct Limits {
    block: usize,
    threads: usize,
    min_chunk: usize,
    max_rows: usize,
}

impl Default for Limits {
    fn default() -> Self {
        Limits {
            block: BLOCK,
            threads: rayon::current_num_threads(),
            min_chunk: MIN_CHUNK,
            max_rows: MAX_ROWS,
        }
    }
}

/// Appends up to `want` more bytes from `r` to `buf`; false at end of input.
fn fill(
    r: &mut impl std::io::Read,
    buf: &mut Vec<u8>,
    want: usize,
    io: &impl Fn(std::io::Error) -> Failure,
) -> Result<bool> {
    use std::io::Read;
    buf.reserve(want.min(BLOCK));
    let got = r.by_ref().take(want as u64).read_to_end(buf).map_err(io)?;
    Ok(got == want)
}

/// The offset just after the last line feed of `buf` that lies outside
/// quotes (an even number of `"` before it; `buf` starts at a record
/// boundary), if there is one.
fn record_cut(buf: &[u8]) -> Option<usize> {
    if !buf.contains(&b'"') {
        return buf.iter().rposition(|&b| b == b'\n').map(|p| p + 1);
    }
    let mut inside = false;
    let mut cut = None;
    for (i, &b) in buf.iter().enumerate() {
        match b {
            b'"' => inside = !inside,
            b'\n' if !inside => cut = Some(i + 1),
            _ => {}
        }
    }
    cut
}

/// Where the complete records of `buf` end: at the last record boundary,
/// reading further blocks until there is one (a record longer than a
/// block), or at the end of the input.
fn complete_records(
    r: &mut impl std::io::Read,
    buf: &mut Vec<u8>,
    more: &mut bool,
    block: usize,
    io: &impl Fn(std::io::Error) -> Failure,
) -> Result<usize> {
    loop {
        match (*more, record_cut(buf)) {
            (false, _) => return Ok(buf.len()),
            (true, Some(c)) => return Ok(c),
            (true, None) => *more = fill(r, buf, block, io)?,
        }
    }
}

/// Reads blocks from `r` (see the module notes): the header from the first
/// complete records, then each block's complete records, hashing every
/// byte read. Returns the table and the SHA-256 of all the bytes.
fn read_stream(
    mut r: impl std::io::Read + Send,
    source: &str,
    spec: &DataSpec,
    wanted: &[Use],
    limits: Limits,
    io: impl Fn(std::io::Error) -> Failure + Sync,
) -> Result<(Table, String)> {
    use sha2::{Digest, Sha256};
    let mut hasher = Sha256::new();
    let mut buf: Vec<u8> = Vec::new();
    let mut more = fill(&mut r, &mut buf, limits.block, &io)?;
    // The first cut must hold the header.
    let mut cut = complete_records(&mut r, &mut buf, &mut more, limits.block, &io)?;
    let bom = if buf.starts_with(b"\xEF\xBB\xBF") {
        3
    } else {
        0
    };
    let head = Header::read(&buf[bom..cut], source, spec, wanted)?;
    let job = Job {
        delim: spec.delimiter as u8,
        ncols: head.ncols,
        index: &head.index,
        wanted,
        spec,
        source,
    };
    let mut parts: Vec<Part> = Vec::new();
    let mut rows = 0usize;
    let mut line = head.first_line;
    let mut start = bom + head.body_start;
    let mut next: Vec<u8> = Vec::new();
    loop {
        // Hash and parse this block's complete records while the next block
        // is read behind the incomplete record they leave over.
        let body = &buf[start..cut];
        next.clear();
        next.extend_from_slice(&buf[cut..]);
        let (((), parsed), read) = rayon::join(
            || {
                rayon::join(
                    || hasher.update(&buf[..cut]),
                    || job.parse(body, line, limits.threads, limits.min_chunk),
                )
            },
            || {
                if more {
                    fill(&mut r, &mut next, limits.block, &io)
                } else {
                    Ok(false)
                }
            },
        );
        let (new_parts, lines_in) = parsed?;
        rows += new_parts.iter().map(|p| p.rows).sum::<usize>();
        if rows > limits.max_rows {
            return Err(too_many_rows(source, limits.max_rows));
        }
        parts.extend(new_parts);
        line += lines_in;
        if !more {
            break;
        }
        more = read?;
        std::mem::swap(&mut buf, &mut next);
        start = 0;
        cut = complete_records(&mut r, &mut buf, &mut more, limits.block, &io)?;
    }
    let sha = crate::plan::canonical::hex(&hasher.finalize());
    if rows == 0 {
        return Err(
            Failure::input("the data file has a header row but no data rows")
                .at(source, head.line, None)
                .help("check that the file was saved completely"),
        );
    }
    let (columns, lines) = join(parts);
    Ok((
        Table {
            rows,
            source: source.to_string(),
            columns,
            lines,
        },
        sha,
    ))
}

fn too_many_rows(source: &str, max: usize) -> Failure {
    Failure::input(format!(
        "the data file has more than {max} data rows, the most attest reads"
    ))
    .in_file(source)
    .help("attest keeps the used columns in memory; split the data (for example by site or period) and analyse each part, or select the rows you need before running")
}

/// What the header row tells: where each used column is and where the data start.
struct Header {
    /// Fields per row.
    ncols: usize,
    /// 0-based position of each used column.
    index: Vec<usize>,
    /// Offset of the first data byte (after the header's line end).
    body_start: usize,
    /// Line of the header row.
    line: usize,
    /// Line of the first data byte.
    first_line: usize,
}

impl Header {
    /// Reads the header from complete records `bytes` (the BOM removed).
    fn read(bytes: &[u8], source: &str, spec: &DataSpec, wanted: &[Use]) -> Result<Header> {
        if bytes.iter().all(|b| b.is_ascii_whitespace()) {
            return Err(Failure::input("the data file is empty")
                .in_file(source)
                .help(
                    "the file needs a header row naming the columns, then one row per observation",
                ));
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
        if body_start > 0 && bytes[body_start - 1] == b'\r' && bytes.get(body_start) == Some(&b'\n')
        {
            body_start += 1;
        }
        Ok(Header {
            ncols: names.len(),
            index,
            body_start,
            line: header_line,
            first_line: 1 + breaks(&bytes[..body_start]),
        })
    }
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

/// Splits the body at line ends into about two chunks per thread, or keeps
/// it whole when it is small or contains quotes.
fn split(body: &[u8], threads: usize, min_chunk: usize) -> Vec<(usize, usize)> {
    if body.len() < 2 * min_chunk || threads <= 1 || body.contains(&b'"') {
        return vec![(0, body.len())];
    }
    // Two chunks per thread, so work stealing evens out the hashing and
    // reading that run beside the parse.
    let n = (2 * threads).min(body.len() / min_chunk.max(1)).max(1);
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

/// One chunk's rows, its columns finished (their lookup tables dropped
/// as soon as the chunk is read, not kept until every chunk is).
pub(super) struct Part {
    pub(super) rows: usize,
    pub(super) columns: HashMap<String, super::Column>,
    pub(super) lines: LineMap,
}

impl Job<'_> {
    /// Parses complete records `body` starting on `first_line`, in chunks
    /// when it is large and has no quotes. Returns the parts in order and
    /// the line feeds in `body` (where the next body's lines continue).
    fn parse(
        &self,
        body: &[u8],
        first_line: usize,
        threads: usize,
        min_chunk: usize,
    ) -> Result<(Vec<Part>, usize)> {
        let chunks = split(body, threads, min_chunk);
        // Line feeds in each chunk: each next chunk's first line follows.
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
        let parts = chunks
            .par_iter()
            .zip(firsts)
            .map(|((a, b), l)| self.chunk(&body[*a..*b], l))
            .collect::<Vec<Result<Part>>>();
        // The first failure in file order, whichever thread met it first:
        // rayon's collect into a `Result` returns any one of several
        // errors ("the one returned is not deterministic", its docs say).
        let parts = parts.into_iter().collect::<Result<Vec<Part>>>()?;
        Ok((parts, line - first_line))
    }

    fn chunk(&self, bytes: &[u8], first_line: usize) -> Result<Part> {
        if !bytes.contains(&b'"') {
            if let Some(part) = self.plain_chunk(bytes, first_line) {
                return Ok(part);
            }
        }
        self.csv_chunk(bytes, first_line)
    }

    /// The fast path for a chunk without quote characters (the common
    /// case): lines split at line feeds and fields at the delimiter with
    /// `memchr`, no csv state machine. Anything irregular (a lone carriage
    /// return, a row with the wrong number of fields, a cell that does not
    /// read) gives `None`, and [`Self::csv_chunk`] reads the chunk again and
    /// words the message, so both paths agree on every table and error.
    fn plain_chunk(&self, bytes: &[u8], first_line: usize) -> Option<Part> {
        let mut b = Builder::new(self.wanted, self.spec.decimal, &self.spec.missing);
        let mut slot = vec![usize::MAX; self.ncols];
        for (k, &i) in self.index.iter().enumerate() {
            slot[i] = k;
        }
        let mut lines = LineMap {
            first: first_line,
            jumps: Vec::new(),
        };
        let (mut rows, mut line, mut expect) = (0usize, first_line, first_line);
        // A carriage return anywhere but before a line feed is for the csv
        // reader; knowing there is none spares a check per row.
        let has_cr = memchr::memchr(b'\r', bytes).is_some();
        let mut start = 0;
        let ends = memchr::memchr_iter(b'\n', bytes).chain([bytes.len()]);
        for end in ends {
            if start >= bytes.len() {
                break;
            }
            let raw = &bytes[start..end];
            start = end + 1;
            let row = if has_cr {
                let row = raw.strip_suffix(b"\r").unwrap_or(raw);
                if row.contains(&b'\r') {
                    return None;
                }
                row
            } else {
                raw
            };
            if row.is_empty() {
                line += 1; // a blank line
                continue;
            }
            if line != expect {
                lines.jumps.push((rows, line));
                expect = line;
            }
            let mut n = 0;
            for cell in row.split(|&c| c == self.delim) {
                match slot.get(n) {
                    Some(&k) if k != usize::MAX => b.push_text(k, cell).ok()?,
                    Some(_) => {}
                    None => return None,
                }
                n += 1;
            }
            if n != self.ncols {
                return None;
            }
            rows += 1;
            line += 1;
            expect += 1;
        }
        Some(Part {
            rows,
            columns: b.finish(self.wanted, self.index),
            lines,
        })
    }

    /// Any chunk, through the csv reader (quotes, odd line ends, and the
    /// wording of every error).
    fn csv_chunk(&self, bytes: &[u8], first_line: usize) -> Result<Part> {
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
            columns: b.finish(self.wanted, self.index),
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

/// One column's pieces from every chunk, in file order.
struct Gathered {
    /// The first chunk's column, its values taken out.
    column: super::Column,
    numbers: Vec<Vec<f64>>,
    texts: Vec<TextColumn>,
}

/// Joins the chunks in order; text codes of later chunks are renumbered so
/// levels stay in order of first appearance in the file.
pub(super) fn join(parts: Vec<Part>) -> (HashMap<String, super::Column>, LineMap) {
    let mut lines: Option<LineMap> = None;
    let mut rows = 0;
    // Every chunk has the same columns; each is gathered from all chunks.
    let mut gathered: HashMap<String, Gathered> = HashMap::new();
    for p in parts {
        match &mut lines {
            None => lines = Some(p.lines),
            Some(lines) => {
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
            }
        }
        rows += p.rows;
        for (name, mut c) in p.columns {
            let numbers = c.numbers.take();
            let text = c.text.take();
            let g = gathered.entry(name).or_insert_with(|| Gathered {
                column: c,
                numbers: Vec::new(),
                texts: Vec::new(),
            });
            g.numbers.extend(numbers);
            g.texts.extend(text);
        }
    }
    let columns = gathered
        .into_iter()
        .map(|(name, g)| {
            let mut c = g.column;
            if !g.numbers.is_empty() {
                c.numbers = Some(g.numbers.concat());
            }
            if !g.texts.is_empty() {
                c.text = Some(cell::merge_levels(g.texts));
            }
            (name, c)
        })
        .collect();
    (columns, lines.unwrap_or_default())
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
            source: None,
            connect: None,
            query: None,
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

    /// One block, one chunk: the plainest way through.
    fn whole() -> Limits {
        Limits {
            block: usize::MAX / 4,
            threads: 1,
            min_chunk: MIN_CHUNK,
            max_rows: MAX_ROWS,
        }
    }

    /// Small blocks, each split into up to 7 chunks.
    fn small() -> Limits {
        Limits {
            block: 1000,
            threads: 7,
            min_chunk: 64,
            max_rows: MAX_ROWS,
        }
    }

    fn read_with(bytes: &[u8], limits: Limits) -> Result<(Table, String)> {
        let io = |e: std::io::Error| Failure::internal(e.to_string());
        read_stream(bytes, "d.csv", &spec(), &wanted(), limits, io)
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
        let one = read_with(&bytes, whole()).unwrap().0;
        let many = read_with(&bytes, small()).unwrap().0;
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
        let one = read_with(&bytes, whole()).unwrap_err();
        let many = read_with(&bytes, small()).unwrap_err();
        assert_eq!(one, many);
        assert_eq!(one.location.unwrap().line, Some(2 + 2500 + 26));
    }

    #[test]
    fn blocks_hash_the_whole_file() {
        let bytes = file(None);
        let (_, sha) = read_with(&bytes, small()).unwrap();
        assert_eq!(sha, crate::plan::canonical::sha256_hex(&bytes));
    }

    #[test]
    fn quoted_line_breaks_survive_block_cuts() {
        // Every fourth label is quoted and holds a line break and a doubled
        // quote, so many 97-byte block ends fall inside quotes.
        let mut s = String::from("id,g,y\n");
        for i in 0..400 {
            let g = if i % 4 == 0 {
                "\"a\nb \"\"q\"\"\"".to_string()
            } else {
                "c".to_string()
            };
            s.push_str(&format!("{i},{g},{i}.25\n"));
        }
        let bytes = s.into_bytes();
        let tiny = Limits {
            block: 97,
            ..small()
        };
        let (one, _) = read_with(&bytes, whole()).unwrap();
        let (many, _) = read_with(&bytes, tiny).unwrap();
        assert_eq!(one.rows, 400);
        assert_eq!(one.columns["g"], many.columns["g"]);
        assert_eq!(one.lines, many.lines);
        assert_eq!(
            one.columns["g"].text.as_ref().unwrap().levels,
            ["a\nb \"q\"", "c"]
        );
        // Row 4 follows four one-line rows and one two-line row: line 2 + 4 + 1.
        assert_eq!(many.lines.line(4), 7);
    }

    #[test]
    fn too_many_rows_are_refused_while_reading() {
        let bytes = file(None);
        let capped = Limits {
            max_rows: 2000,
            ..small()
        };
        let err = read_with(&bytes, capped).unwrap_err();
        assert!(err.what.contains("more than 2000 data rows"), "{err:?}");
        assert!(err.help.unwrap().contains("split the data"));
    }

    #[test]
    fn plain_path_matches_the_csv_reader() {
        // CRLF ends, blank lines, missing texts, a trailing row without a
        // line end; then rows the plain path must hand back (a lone CR, a
        // ragged row, an unreadable number).
        let mut bytes = file(None);
        bytes.extend_from_slice(b"3000,a,1.5");
        let (sp, w) = (spec(), wanted());
        let head = Header::read(&bytes, "d.csv", &sp, &w).unwrap();
        let job = Job {
            delim: b',',
            ncols: head.ncols,
            index: &head.index,
            wanted: &w,
            spec: &sp,
            source: "d.csv",
        };
        let body = &bytes[head.body_start..];
        let plain = job.plain_chunk(body, head.first_line).unwrap();
        let csv = job.csv_chunk(body, head.first_line).unwrap();
        assert_eq!(plain.rows, 3001);
        assert_eq!(plain.rows, csv.rows);
        assert_eq!(plain.lines, csv.lines);
        let cols = |p: Part| p.columns;
        let (a, b) = (cols(plain), cols(csv));
        assert_eq!(a["g"], b["g"]);
        let bits = |c: &super::super::Column| -> Vec<u64> {
            c.numbers
                .as_ref()
                .unwrap()
                .iter()
                .map(|v| v.to_bits())
                .collect()
        };
        assert_eq!(bits(&a["y"]), bits(&b["y"]));
        for odd in [&b"1,a,2\r3,b,4\n"[..], b"1,a\n", b"1,a,2,\n", b"1,a,x\n"] {
            assert!(job.plain_chunk(odd, 2).is_none(), "{odd:?}");
        }
    }
}
