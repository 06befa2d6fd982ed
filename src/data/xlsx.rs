//! Excel workbooks (`.xlsx`), read with calamine.
//!
//! The sheet is the one `sheet` names, or the first. Its first used row is
//! the header; every later row is a data row, numbered in messages as the
//! spreadsheet numbers it: `data/loaves.xlsx[Bakes]:14:3`. Numeric cells are
//! taken as they are; text cells go through the same rules as delimited
//! text (missing texts, the decimal mark, refusing `inf`). Dates, booleans
//! and formula errors are not numbers and are reported as such.

use super::cell::{self, Builder, Problem};
use super::{locate, LineMap, Table, Use};
use crate::error::{Failure, Result};
use crate::plan::DataSpec;
use calamine::{Data, Reader, Xlsx};
use std::io::Cursor;

/// Reads the used columns of one worksheet.
pub(crate) fn read_xlsx(
    bytes: Vec<u8>,
    display: &str,
    spec: &DataSpec,
    wanted: &[Use],
) -> Result<Table> {
    let mut book = Xlsx::new(Cursor::new(bytes)).map_err(|e| {
        Failure::input(format!("the file cannot be read as an Excel workbook: {e}"))
            .in_file(display)
            .help("save the file as .xlsx (Excel Workbook), or export it as CSV")
    })?;
    let names = book.sheet_names();
    let sheet = match &spec.sheet {
        Some(s) if names.iter().any(|n| n == s) => s.clone(),
        Some(s) => {
            let listed = names
                .iter()
                .map(|n| format!("\"{n}\""))
                .collect::<Vec<_>>()
                .join(", ");
            return Err(
                Failure::input(format!("the workbook has no sheet named \"{s}\""))
                    .in_file(display)
                    .help(format!("the sheets are: {listed}")),
            );
        }
        None => match names.first() {
            Some(n) => n.clone(),
            None => return Err(Failure::input("the workbook has no sheets").in_file(display)),
        },
    };
    let source = format!("{display}[{sheet}]");
    let range = book
        .worksheet_range(&sheet)
        .map_err(|e| Failure::input(format!("the sheet cannot be read: {e}")).in_file(&source))?;
    let Some((row0, col0)) = range.start() else {
        return Err(Failure::input("the sheet is empty").in_file(&source).help(
            "the sheet needs a header row naming the columns, then one row per observation",
        ));
    };
    let (row0, col0) = (row0 as usize, col0 as usize);
    let mut rows_iter = range.rows();
    let header_line = row0 + 1;
    let header: Vec<String> = rows_iter
        .next()
        .unwrap_or(&[])
        .iter()
        .map(|c| match c {
            Data::Empty => String::new(),
            other => other.to_string().trim().to_string(),
        })
        .collect();
    // Positions in messages are spreadsheet columns, so shift by the range's first column.
    let padded: Vec<String> = std::iter::repeat_n(String::new(), col0)
        .chain(header)
        .collect();
    let index = locate(&padded, wanted, &source, header_line)?;
    let mut b = Builder::new(wanted, spec.decimal, &spec.missing);
    let mut rows = 0usize;
    for (r, row) in rows_iter.enumerate() {
        let line = header_line + 1 + r;
        for (k, &i) in index.iter().enumerate() {
            let cell = i
                .checked_sub(col0)
                .and_then(|j| row.get(j))
                .unwrap_or(&Data::Empty);
            push(&mut b, k, cell).map_err(|(p, text)| {
                cell::failure(&p, &wanted[k].name, text.as_bytes(), spec.decimal).at(
                    &source,
                    line,
                    Some(i + 1),
                )
            })?;
        }
        rows += 1;
    }
    if rows == 0 {
        return Err(
            Failure::input("the sheet has a header row but no data rows").at(
                &source,
                header_line,
                None,
            ),
        );
    }
    let columns = b.finish(wanted, &index);
    Ok(Table {
        rows,
        source,
        columns,
        lines: LineMap {
            first: header_line + 1,
            jumps: Vec::new(),
        },
    })
}

/// Adds one worksheet cell; on failure returns the problem and the cell as text.
fn push(b: &mut Builder, k: usize, cell: &Data) -> std::result::Result<(), (Problem, String)> {
    match cell {
        Data::Float(v) => b.push_number(k, *v).map_err(|p| (p, v.to_string())),
        Data::Int(v) => b.push_number(k, *v as f64).map_err(|p| (p, v.to_string())),
        Data::Empty => b.push_text(k, b"").map_err(|p| (p, String::new())),
        Data::String(text) | Data::DateTimeIso(text) | Data::DurationIso(text) => b
            .push_text(k, text.as_bytes())
            .map_err(|p| (p, text.clone())),
        other => {
            // Booleans, dates and formula errors: usable as labels or missing texts only.
            let text = other.to_string();
            b.push_text(k, text.as_bytes()).map_err(|p| (p, text))
        }
    }
}
