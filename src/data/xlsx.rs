//! Excel workbooks (`.xlsx`), read with calamine.
//!
//! The sheet is the one `sheet` names, or the first. Its first used row is
//! the header; every later row is a data row, numbered in messages as the
//! spreadsheet numbers it: `data/loaves.xlsx[Bakes]:14:3`. Numeric cells are
//! taken as they are; text cells go through the same rules as delimited
//! text (missing texts, the decimal mark, refusing `inf`). A date cell in a
//! column read as numbers is refused with its address (Excel stores dates as
//! day counts, which would otherwise pass as numbers); in a label column it
//! reads as the date the sheet shows. Booleans and formula errors are not
//! numbers and are reported as such.

use super::cell::{self, Builder, Problem};
use super::{locate, LineMap, Table, Use};
use crate::error::{shown, Failure, Result};
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
    let index = match locate(&padded, wanted, &source, header_line) {
        Ok(index) => index,
        Err(e) if spec.sheet.is_none() && names.len() > 1 => {
            return Err(suggest_sheet(e, &mut book, &names, &sheet, wanted))
        }
        Err(e) => return Err(e),
    };
    let mut b = Builder::new(wanted, spec.decimal, &spec.missing);
    let mut rows = 0usize;
    for (r, row) in rows_iter.enumerate() {
        let line = header_line + 1 + r;
        for (k, &i) in index.iter().enumerate() {
            let cell = i
                .checked_sub(col0)
                .and_then(|j| row.get(j))
                .unwrap_or(&Data::Empty);
            if let (Data::DateTime(d), true) = (cell, wanted[k].numeric) {
                return Err(date_in_numeric_column(d, &wanted[k].name, line, i).at(
                    &source,
                    line,
                    Some(i + 1),
                ));
            }
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

/// The plan names no sheet, the first sheet lacks a column the plan uses,
/// and the workbook has more sheets: names the sheet whose first row holds
/// every column the plan uses, or else lists the sheets.
fn suggest_sheet(
    e: Failure,
    book: &mut Xlsx<Cursor<Vec<u8>>>,
    names: &[String],
    first: &str,
    wanted: &[Use],
) -> Failure {
    let fits = names.iter().filter(|n| n.as_str() != first).find(|n| {
        let Ok(range) = book.worksheet_range(n) else {
            return false;
        };
        let header: Vec<String> = range
            .rows()
            .next()
            .unwrap_or(&[])
            .iter()
            .map(|c| c.to_string().trim().to_string())
            .collect();
        wanted.iter().all(|w| header.contains(&w.name))
    });
    let help = match fits {
        Some(n) => format!(
            "attest read the first sheet, \"{}\"; the sheet \"{}\" has every column the plan \
             uses: add `sheet = \"{}\"` to [data]",
            shown(first),
            shown(n),
            n.replace('\\', "\\\\").replace('"', "\\\"")
        ),
        None => format!(
            "attest read the first sheet, \"{}\"; the workbook also has {}: name the one \
             that holds the data with `sheet = \"…\"` in [data]",
            shown(first),
            names
                .iter()
                .filter(|n| n.as_str() != first)
                .map(|n| format!("\"{}\"", shown(n)))
                .collect::<Vec<_>>()
                .join(", ")
        ),
    };
    Failure {
        help: Some(help),
        ..e
    }
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
        Data::DateTime(d) => {
            // A date used as a label (a session or a day as the pairing
            // unit) is read as the date the sheet shows, not as Excel's day
            // count; numeric columns never get here (see the caller).
            let text = calendar_text(d);
            b.push_text(k, text.as_bytes()).map_err(|p| (p, text))
        }
        other => {
            // Booleans and formula errors: usable as labels or missing texts only.
            let text = other.to_string();
            b.push_text(k, text.as_bytes()).map_err(|p| (p, text))
        }
    }
}

/// A 0-based column index as the spreadsheet names it: A … Z, AA, AB, ….
fn column_letters(index: usize) -> String {
    let mut n = index + 1;
    let mut out = Vec::new();
    while n > 0 {
        let r = (n - 1) % 26;
        out.push(b'A' + r as u8);
        n = (n - 1) / 26;
    }
    out.reverse();
    String::from_utf8(out).expect("ASCII letters")
}

/// A date or time cell as the sheet shows it: `2020-01-01`, with the time
/// of day when there is one (`2020-01-01 08:30:00`), or a duration as
/// hours, minutes and seconds.
fn calendar_text(d: &calamine::ExcelDateTime) -> String {
    if d.is_duration() {
        let secs = (d.as_f64() * 86_400.0).round() as i64;
        let (h, m, s) = (secs / 3600, (secs % 3600) / 60, secs % 60);
        return format!("{h}:{m:02}:{s:02}");
    }
    let (y, mo, da, h, mi, se, _) = d.to_ymd_hms_milli();
    if (h, mi, se) == (0, 0, 0) {
        format!("{y:04}-{mo:02}-{da:02}")
    } else {
        format!("{y:04}-{mo:02}-{da:02} {h:02}:{mi:02}:{se:02}")
    }
}

/// A date cell where the plan reads numbers. Excel stores dates as day
/// counts (2020-01-01 is 43831), so taking the cell's value would silently
/// analyse day counts; attest refuses and names the cell instead.
fn date_in_numeric_column(
    d: &calamine::ExcelDateTime,
    column: &str,
    line: usize,
    index: usize,
) -> Failure {
    Failure::input(format!(
        "column \"{}\": cell {}{line} holds the date or time {}, not a number",
        shown(column),
        column_letters(index),
        calendar_text(d)
    ))
    .help(
        "the spreadsheet formats this cell as a date; if the value is a measurement, \
         format the column as Number in the spreadsheet and save again; if the column \
         holds dates, it cannot be an outcome",
    )
}

#[cfg(test)]
mod tests {
    use super::*;
    use calamine::{ExcelDateTime, ExcelDateTimeType};

    #[test]
    fn columns_are_named_as_the_spreadsheet_names_them() {
        // Common practice: the letters of spreadsheet column headings.
        assert_eq!(column_letters(0), "A");
        assert_eq!(column_letters(25), "Z");
        assert_eq!(column_letters(26), "AA");
        assert_eq!(column_letters(701), "ZZ");
        assert_eq!(column_letters(702), "AAA");
    }

    #[test]
    fn dates_read_as_the_calendar_date_not_the_day_count() {
        // 43831 is 2020-01-01 in the 1900 date system and 45943.5 is
        // 2025-10-13 12:00 (both from the calamine documentation of
        // `ExcelDateTime::to_ymd_hms_milli`, which cites Excel's epoch).
        let d = ExcelDateTime::new(43831.0, ExcelDateTimeType::DateTime, false);
        assert_eq!(calendar_text(&d), "2020-01-01");
        let d = ExcelDateTime::new(45943.5, ExcelDateTimeType::DateTime, false);
        assert_eq!(calendar_text(&d), "2025-10-13 12:00:00");
        let d = ExcelDateTime::new(1.5 / 24.0, ExcelDateTimeType::TimeDelta, false);
        assert_eq!(calendar_text(&d), "1:30:00");
    }
}
