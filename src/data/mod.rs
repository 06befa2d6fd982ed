//! Data: read the file the plan names, keep only the columns it uses,
//! apply the preregistered exclusions, and hand each hypothesis its values.
//!
//! The work is split by step: [`read`] streams delimited text, [`xlsx`]
//! reads a worksheet and [`parquet`](mod@parquet) a Parquet file, all
//! through [`cell`] (one place that decides what a cell means) into the
//! columns below; [`source`] runs the plan's query on a database and
//! hands back its count table as rows; [`exclude`] applies the `[[exclude]]`
//! rules once per file; [`select`](mod@select) pairs and groups the rows of
//! one hypothesis and counts where every row went.
//!
//! Only the columns some hypothesis or exclusion rule uses are kept:
//! numeric columns as `f64` (NaN marks a missing cell, 8 bytes a value) and
//! text columns as `u32` codes into a table of distinct texts.

pub(crate) mod cell;
pub(crate) mod exclude;
pub(crate) mod parquet;
pub mod read;
pub(crate) mod select;
pub(crate) mod source;
pub(crate) mod xlsx;

use crate::error::{Failure, Result};
use crate::plan::{Comparison, DataFormat, ExcludeKind, Plan};
use std::collections::HashMap;
use std::path::{Path, PathBuf};

pub use select::{select, Selected};

/// A text column: one code per row into `levels`.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct TextColumn {
    /// One code per row, an index into `levels`.
    pub codes: Vec<u32>,
    /// The distinct cell texts (trimmed), in order of first appearance.
    pub levels: Vec<String>,
    /// For each level, whether its text is one of the plan's missing texts.
    pub missing: Vec<bool>,
}

impl TextColumn {
    /// The code of a non-missing level with this text, if any row has it.
    pub(crate) fn code_of(&self, text: &str) -> Option<u32> {
        self.levels
            .iter()
            .zip(&self.missing)
            .position(|(l, m)| !m && l == text)
            .map(|p| p as u32)
    }

    /// Whether row `i` is missing.
    pub(crate) fn is_missing(&self, i: usize) -> bool {
        self.missing[self.codes[i] as usize]
    }

    /// The non-missing levels, in order of first appearance.
    pub(crate) fn present(&self) -> Vec<&str> {
        self.levels
            .iter()
            .zip(&self.missing)
            .filter(|(_, m)| !**m)
            .map(|(l, _)| l.as_str())
            .collect()
    }
}

/// A used column as kept in memory: as numbers, as text, or both when the
/// plan uses it both ways (an outcome that a `values` rule also looks at).
#[derive(Clone, Debug, PartialEq)]
pub struct Column {
    /// The header text.
    pub name: String,
    /// 1-based position in the file (the column number in messages).
    pub position: usize,
    /// The values when the plan uses the column as numbers.
    pub numbers: Option<Vec<f64>>,
    /// The texts when the plan uses the column as labels.
    pub text: Option<TextColumn>,
}

/// Maps a data row (0-based) to the line of the file (or worksheet row) it
/// starts on. Rows are consecutive lines except after blank lines or quoted
/// line breaks, which are recorded as jumps, so the map costs nothing for
/// ordinary files.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct LineMap {
    /// Line of row 0.
    pub first: usize,
    /// `(row, line)` where the line is not the previous row's line + 1.
    pub jumps: Vec<(usize, usize)>,
}

impl LineMap {
    /// The 1-based line of data row `row`.
    pub(crate) fn line(&self, row: usize) -> usize {
        let k = self.jumps.partition_point(|(r, _)| *r <= row);
        match k {
            0 => self.first + row,
            _ => {
                let (r, l) = self.jumps[k - 1];
                l + (row - r)
            }
        }
    }
}

/// The used columns of the data file, and which rows the exclusion rules removed.
#[derive(Clone, Debug)]
pub struct Dataset {
    /// The file as the plan names it.
    pub display_path: String,
    /// The resolved path.
    pub path: PathBuf,
    /// SHA-256 of the file's bytes.
    pub sha256: String,
    /// Data rows (header excluded).
    pub rows: usize,
    /// How positions are named in messages: the path, or `path[Sheet]` for workbooks.
    pub source: String,
    /// The used columns, by header name.
    pub columns: HashMap<String, Column>,
    /// Data row → file line (or worksheet row).
    pub lines: LineMap,
    /// Per row: 0 when kept, k when removed by the k-th `[[exclude]]` rule (1-based).
    pub excluded_by: Vec<u16>,
}

impl Dataset {
    /// The column named `name`, or an error when the plan uses a column
    /// this dataset was not read with.
    pub(crate) fn column(&self, name: &str) -> Result<&Column> {
        self.columns.get(name).ok_or_else(|| {
            Failure::internal(format!("column \"{name}\" was not read from the data file"))
                .in_file(&self.source)
                .help("load the data with the same plan that selects from it")
        })
    }

    /// The numeric values of a column the plan uses as numbers.
    pub(crate) fn numbers(&self, name: &str) -> Result<&[f64]> {
        let c = self.column(name)?;
        c.numbers.as_deref().ok_or_else(|| {
            Failure::internal(format!("column \"{name}\" was not read as numbers"))
                .in_file(&self.source)
        })
    }

    /// The texts of a column the plan uses as labels.
    pub(crate) fn text(&self, name: &str) -> Result<&TextColumn> {
        let c = self.column(name)?;
        c.text.as_ref().ok_or_else(|| {
            Failure::internal(format!("column \"{name}\" was not read as text"))
                .in_file(&self.source)
        })
    }
}

/// A column the plan uses and how: as numbers, as text, or both.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Use {
    /// Header name.
    pub name: String,
    /// Used as numbers (outcome, paired column, numeric rule).
    pub numeric: bool,
    /// Used as labels (group, unit, condition, `values` rule, `by`).
    pub text: bool,
}

/// Which columns the plan uses, in first-use order, and how.
pub fn used_columns(plan: &Plan) -> Vec<Use> {
    let mut out: Vec<Use> = Vec::new();
    let mut add = |name: &str, numeric: bool| {
        if let Some(e) = out.iter_mut().find(|u| u.name == name) {
            e.numeric |= numeric;
            e.text |= !numeric;
        } else {
            out.push(Use {
                name: name.to_string(),
                numeric,
                text: !numeric,
            });
        }
    };
    for h in &plan.hypotheses {
        if let Some(o) = &h.outcome {
            add(o, true);
        }
        match &h.comparison {
            Comparison::Groups { group, .. } => add(group, false),
            Comparison::PairedColumns { first, second } => {
                add(first, true);
                add(second, true);
            }
            Comparison::PairedRows {
                pair_by, condition, ..
            } => {
                add(pair_by, false);
                add(condition, false);
            }
            Comparison::Reference { .. } => {}
        }
    }
    for r in &plan.exclude {
        match &r.rule {
            ExcludeKind::Values { .. } => add(&r.column, false),
            ExcludeKind::Range { .. } => add(&r.column, true),
            ExcludeKind::MedianDistance { by, .. } | ExcludeKind::TukeyFences { by, .. } => {
                add(&r.column, true);
                if let Some(b) = by {
                    add(b, false);
                }
            }
        }
    }
    out
}

/// Reads the data file of `plan`, resolved against `plan_dir`, and applies
/// the plan's exclusion rules.
pub fn load(plan: &Plan, plan_dir: &Path) -> Result<Dataset> {
    let mut ds = read_columns(plan, plan_dir, &used_columns(plan))?;
    ds.excluded_by = exclude::apply(&ds, &plan.exclude)?;
    Ok(ds)
}

/// What `lock` may read of an existing data file: the header and the
/// labels of the grouping, condition and unit columns, never an outcome
/// value. Every column the plan names must be in the header and every
/// level it names among the labels, refused with the messages `run` gives.
pub(crate) fn check_labels(plan: &Plan, plan_dir: &Path) -> Result<()> {
    if plan.data.source.is_some() {
        // `lock` never connects to a database: the query runs at `run`.
        return Ok(());
    }
    // A column used only as numbers is located in the header and its cells
    // are skipped unread (neither numbers nor labels are kept).
    let wanted: Vec<Use> = used_columns(plan)
        .into_iter()
        .map(|u| Use {
            numeric: false,
            ..u
        })
        .collect();
    let ds = read_columns(plan, plan_dir, &wanted)?;
    for h in &plan.hypotheses {
        match &h.comparison {
            Comparison::Groups { group, levels } => {
                select::assign(&ds, group, levels)?;
            }
            Comparison::PairedRows {
                condition, levels, ..
            } => {
                select::assign(&ds, condition, levels)?;
            }
            _ => {}
        }
    }
    Ok(())
}

/// Reads the `wanted` columns of the plan's data file, no rule applied.
fn read_columns(plan: &Plan, plan_dir: &Path, wanted: &[Use]) -> Result<Dataset> {
    let path = plan_dir.join(&plan.data.path);
    let display = match plan.data.source {
        Some(engine) => source::source_name(engine),
        None => plan.data.path.clone(),
    };
    let wanted = wanted.to_vec();
    let (table, sha256) = match plan.data.format {
        DataFormat::Query => source::read_query(&plan.data, plan_dir, &wanted)?,
        DataFormat::Delimited => read::read_delimited_file(&path, &display, &plan.data, &wanted)?,
        DataFormat::Xlsx | DataFormat::Parquet => {
            let bytes = read_whole(&path)?;
            let sha256 = crate::plan::canonical::sha256_hex(&bytes);
            let table = if plan.data.format == DataFormat::Xlsx {
                xlsx::read_xlsx(bytes, &display, &plan.data, &wanted)?
            } else {
                parquet::read_parquet(bytes, &display, &plan.data, &wanted)?
            };
            (table, sha256)
        }
    };
    let ds = Dataset {
        display_path: display,
        path,
        sha256,
        rows: table.rows,
        source: table.source,
        columns: table.columns,
        lines: table.lines,
        excluded_by: Vec::new(),
    };
    Ok(ds)
}

/// A whole data file (workbooks and Parquet files are read from memory).
fn read_whole(path: &Path) -> Result<Vec<u8>> {
    let mut bytes = Vec::new();
    std::io::Read::read_to_end(
        &mut crate::files::open_regular(path, "read the data file", crate::files::Links::Follow)
            .map_err(|f| f.help("check `path` in [data]; it is relative to the analysis file"))?,
        &mut bytes,
    )
    .map_err(|e| Failure::io("read the data file", path, &e))?;
    Ok(bytes)
}

/// What a reader hands back: the used columns and where each row came from.
#[derive(Debug)]
pub struct Table {
    /// Data rows.
    pub rows: usize,
    /// Name used for positions in messages.
    pub source: String,
    /// The used columns.
    pub columns: HashMap<String, Column>,
    /// Row → line.
    pub lines: LineMap,
}

/// Finds each used column in the header, failing on unknown names (with a
/// "did you mean") and on used names that appear twice. Returns the
/// 0-based index of each used column.
pub(crate) fn locate(
    header: &[String],
    wanted: &[Use],
    source: &str,
    header_line: usize,
) -> Result<Vec<usize>> {
    let mut out = Vec::with_capacity(wanted.len());
    for u in wanted {
        let hits: Vec<usize> = (0..header.len()).filter(|&i| header[i] == u.name).collect();
        match hits.as_slice() {
            [i] => out.push(*i),
            [] => {
                // Same name in another case first, then a name that extends the
                // other, then the fewest edits.
                let wanted_lower = u.name.to_lowercase();
                let near = header
                    .iter()
                    .filter(|h| !h.is_empty())
                    .map(|h| {
                        let lower = h.to_lowercase();
                        let rank = if lower == wanted_lower {
                            0
                        } else if lower.starts_with(&wanted_lower)
                            || wanted_lower.starts_with(&lower)
                        {
                            1
                        } else {
                            2
                        };
                        (rank, crate::plan::validate::edit_distance(&u.name, h), h)
                    })
                    .filter(|(rank, d, h)| *rank < 2 || *d <= 2.max(h.chars().count() / 3))
                    .min()
                    .map(|(_, _, h)| h);
                let listed = header
                    .iter()
                    .map(|h| format!("\"{h}\""))
                    .collect::<Vec<_>>()
                    .join(", ");
                let help = match near {
                    Some(h) => format!("did you mean \"{h}\"? The header names: {listed}"),
                    None => format!("the header names: {listed}"),
                };
                return Err(Failure::input(format!(
                    "the plan uses column \"{}\", which is not in the header",
                    u.name
                ))
                .at(source, header_line, None)
                .help(help));
            }
            many => {
                let cols: Vec<String> = many.iter().map(|i| (i + 1).to_string()).collect();
                return Err(Failure::input(format!(
                    "column \"{}\" appears {} times in the header (columns {})",
                    u.name,
                    many.len(),
                    cols.join(", ")
                ))
                .at(source, header_line, Some(many[1] + 1))
                .help("rename the duplicates so every column the plan uses has one clear name"));
            }
        }
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn line_map_follows_jumps() {
        let m = LineMap {
            first: 2,
            jumps: vec![(3, 7), (5, 12)],
        };
        let lines: Vec<usize> = (0..7).map(|r| m.line(r)).collect();
        assert_eq!(lines, [2, 3, 4, 7, 8, 12, 13]);
    }

    #[test]
    fn locate_suggests_the_near_name() {
        let header: Vec<String> = ["id", "volume_ml", "proof"].map(String::from).to_vec();
        let want = [Use {
            name: "volume".into(),
            numeric: true,
            text: false,
        }];
        let e = locate(&header, &want, "d.csv", 1).unwrap_err();
        assert_eq!(
            e.to_string(),
            "error: d.csv:1: the plan uses column \"volume\", which is not in the header\n\
             help: did you mean \"volume_ml\"? The header names: \"id\", \"volume_ml\", \"proof\""
        );
    }
}
