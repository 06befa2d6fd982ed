//! Parquet files, read with the `parquet` crate into Arrow arrays.
//!
//! Only the columns the plan uses are decoded (a projection: the other
//! columns' pages are never decompressed), row groups in parallel, joined
//! in file order as the chunks of a CSV file are. Every value then goes through
//! the same [`Builder`] as a CSV cell or a spreadsheet cell, so a Parquet
//! file and a CSV file with the same values give the same columns:
//!
//! - integers, floats and decimals are numbers, cast to the nearest double;
//!   a NaN or infinity is taken as the text `NaN`/`inf`, which the plan's
//!   `missing` list decides about exactly as for a CSV cell;
//! - strings (plain, large or dictionary-encoded) are cells of text,
//!   trimmed, compared with `missing`, and parsed where the plan uses them
//!   as numbers;
//! - a null is an empty cell (missing under the default `missing` list);
//! - booleans, dates and times are taken as the text Arrow writes for them;
//!   nested and binary columns are refused.
//!
//! Positions in messages are the row (1 is the first row of data) and the
//! column's number in the file's schema: `data/visits.parquet:1204:3`.

use super::cell::{self, Builder, Problem};
use super::read::Part;
use super::{locate, LineMap, Table, Use};
use crate::error::{Failure, Result};
use crate::plan::DataSpec;
use arrow_array::cast::AsArray;
use arrow_array::types::Float64Type;
use arrow_array::{Array, ArrayRef};
use arrow_schema::DataType;
use parquet::arrow::arrow_reader::{
    ArrowReaderMetadata, ArrowReaderOptions, ParquetRecordBatchReaderBuilder,
};
use parquet::arrow::ProjectionMask;
use rayon::prelude::*;

/// Rows decoded at a time.
const BATCH: usize = 64 * 1024;

/// Reads the used columns of a Parquet file held in memory.
pub(crate) fn read_parquet(
    bytes: Vec<u8>,
    display: &str,
    spec: &DataSpec,
    wanted: &[Use],
) -> Result<Table> {
    let unreadable = |e: &dyn std::fmt::Display| {
        Failure::input(format!("the file cannot be read as Parquet: {e}"))
            .in_file(display)
            .help("check that the file is a complete Parquet file (not still being written), or export the data as CSV")
    };
    let data = bytes::Bytes::from(bytes);
    let meta = ArrowReaderMetadata::load(&data, ArrowReaderOptions::default())
        .map_err(|e| unreadable(&e))?;
    let header: Vec<String> = meta
        .schema()
        .fields()
        .iter()
        .map(|f| f.name().clone())
        .collect();
    // Row numbers in messages start at 1; the "header line" is row 0.
    let index = locate(&header, wanted, display, 0).map_err(|mut f| {
        f.location = None;
        f.in_file(display)
    })?;
    for (k, u) in wanted.iter().enumerate() {
        let t = meta.schema().field(index[k]).data_type();
        if !readable(t) {
            return Err(Failure::input(format!(
                "column \"{}\" of the Parquet file holds {t} values, which are neither numbers nor labels",
                u.name
            ))
            .in_file(display)
            .help("use a column of numbers, text, booleans or dates, or export the data as CSV"));
        }
    }
    let total = meta.metadata().file_metadata().num_rows();
    let max = super::read::MAX_ROWS;
    if usize::try_from(total).map_or(true, |n| n > max) {
        return Err(Failure::input(format!(
            "the data file has more than {max} data rows, the most attest reads"
        ))
        .in_file(display)
        .help("split the data (by site or period, say) into several analyses"));
    }
    let mut roots: Vec<usize> = index.clone();
    roots.sort_unstable();
    roots.dedup();
    let mask = ProjectionMask::roots(meta.parquet_schema(), roots);
    // Row groups are decoded in parallel, each into its own columns, and
    // joined in file order as CSV chunks are: the same table, the first
    // bad cell in file order reported.
    let groups = meta.metadata().num_row_groups();
    let mut starts = Vec::with_capacity(groups);
    let mut start = 0usize;
    for g in 0..groups {
        starts.push(start);
        start += usize::try_from(meta.metadata().row_group(g).num_rows()).unwrap_or(0);
    }
    let parts: Vec<Result<Part>> = (0..groups)
        .into_par_iter()
        .map(|g| {
            let reader =
                ParquetRecordBatchReaderBuilder::new_with_metadata(data.clone(), meta.clone())
                    .with_projection(mask.clone())
                    .with_row_groups(vec![g])
                    .with_batch_size(BATCH)
                    .build()
                    .map_err(|e| unreadable(&e))?;
            let mut b = Builder::new(wanted, spec.decimal, &spec.missing);
            let mut rows = 0usize;
            for batch in reader {
                let batch = batch.map_err(|e| unreadable(&e))?;
                for (k, u) in wanted.iter().enumerate() {
                    let col = batch.column_by_name(&u.name).ok_or_else(|| {
                        Failure::internal(format!(
                            "column \"{}\" is missing from a decoded batch",
                            u.name
                        ))
                        .in_file(display)
                    })?;
                    push_column(&mut b, k, col).map_err(|(row, p, text)| {
                        cell::failure(&p, &u.name, text.as_bytes(), spec.decimal).at(
                            display,
                            starts[g] + rows + row + 1,
                            Some(index[k] + 1),
                        )
                    })?;
                }
                rows += batch.num_rows();
            }
            Ok(Part {
                rows,
                columns: b.finish(wanted, &index),
                lines: LineMap {
                    first: starts[g] + 1,
                    jumps: Vec::new(),
                },
            })
        })
        .collect();
    let parts = parts.into_iter().collect::<Result<Vec<Part>>>()?;
    let rows: usize = parts.iter().map(|p| p.rows).sum();
    if rows == 0 {
        return Err(Failure::input("the data file has no data rows")
            .in_file(display)
            .help("the file needs one row per observation"));
    }
    let (columns, lines) = super::read::join(parts);
    Ok(Table {
        rows,
        source: display.to_string(),
        columns,
        lines,
    })
}

/// A cell that could not be used: its row within the batch, the problem,
/// and the cell as text.
type CellError = (usize, Problem, String);

/// Whether a column of this type can be read as numbers or labels.
fn readable(t: &DataType) -> bool {
    !matches!(
        t,
        DataType::Binary
            | DataType::LargeBinary
            | DataType::BinaryView
            | DataType::FixedSizeBinary(_)
            | DataType::List(_)
            | DataType::LargeList(_)
            | DataType::ListView(_)
            | DataType::LargeListView(_)
            | DataType::FixedSizeList(_, _)
            | DataType::Struct(_)
            | DataType::Map(_, _)
            | DataType::Union(_, _)
    )
}

/// Adds one column of a batch to column `k` of the builder.
fn push_column(b: &mut Builder, k: usize, col: &ArrayRef) -> std::result::Result<(), CellError> {
    let failed = |e: arrow_schema::ArrowError| (0, Problem::NotNumber, e.to_string());
    if col.data_type().is_numeric() {
        let nums = arrow_cast::cast(col, &DataType::Float64).map_err(failed)?;
        let nums = nums.as_primitive::<Float64Type>();
        for i in 0..nums.len() {
            let r = if nums.is_null(i) {
                b.push_text(k, b"")
            } else {
                let v = nums.value(i);
                if v.is_nan() {
                    b.push_text(k, b"NaN")
                } else if v.is_infinite() {
                    b.push_text(k, if v > 0.0 { b"inf" } else { b"-inf" })
                } else {
                    b.push_number(k, v)
                }
            };
            r.map_err(|p| (i, p, shown(nums.is_null(i), nums.value(i))))?;
        }
    } else {
        let text = arrow_cast::cast(col, &DataType::Utf8).map_err(failed)?;
        let text = text.as_string::<i32>();
        for i in 0..text.len() {
            let cell = if text.is_null(i) { "" } else { text.value(i) };
            b.push_text(k, cell.as_bytes())
                .map_err(|p| (i, p, cell.to_string()))?;
        }
    }
    Ok(())
}

/// A numeric cell as the message shows it.
fn shown(null: bool, v: f64) -> String {
    if null {
        String::new()
    } else {
        v.to_string()
    }
}
