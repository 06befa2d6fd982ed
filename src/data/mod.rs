//! Data: read the file the plan names, keep only the columns it uses,
//! apply the preregistered exclusions, and hand each hypothesis its values.
//!
//! Reading is streaming: only the columns some hypothesis or exclusion rule
//! uses are kept, numeric columns as `f64` (NaN marks a missing cell) and
//! text columns as small integer codes into a table of distinct values.

use crate::error::{Failure, Result};
use crate::plan::{Comparison, Hypothesis, Plan};
use crate::results::{RowFlow, RuleStep};
use std::collections::HashMap;
use std::path::{Path, PathBuf};

/// A column as kept in memory.
#[derive(Clone, Debug)]
pub enum Column {
    /// Numbers; NaN marks a missing cell.
    Numeric(Vec<f64>),
    /// Text as codes into `levels`; `u32::MAX` marks a missing cell.
    Text {
        /// One code per row.
        codes: Vec<u32>,
        /// The distinct texts, in order of first appearance.
        levels: Vec<String>,
    },
}

/// The used columns of the data file.
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
    /// 1-based file line of each data row's start (for messages).
    pub columns: HashMap<String, Column>,
}

/// The values one hypothesis analyses, and how rows flowed to them.
#[derive(Clone, Debug)]
pub struct Selected {
    /// First group / first measurement / the one-sample values.
    pub first: Vec<f64>,
    /// Second group / second measurement (aligned with `first` for paired
    /// designs) / empty for one-sample.
    pub second: Vec<f64>,
    /// Row flow.
    pub flow: RowFlow,
}

/// Which columns the plan uses, and whether each must be numeric.
pub fn used_columns(plan: &Plan) -> Vec<(String, bool)> {
    let mut out: Vec<(String, bool)> = Vec::new();
    let mut add = |name: &str, numeric: bool| {
        if let Some(e) = out.iter_mut().find(|(n, _)| n == name) {
            e.1 |= numeric;
        } else {
            out.push((name.to_string(), numeric));
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
            Comparison::PairedRows { pair_by, condition, .. } => {
                add(pair_by, false);
                add(condition, false);
            }
            Comparison::Reference { .. } => {}
        }
    }
    for r in &plan.exclude {
        let numeric = !matches!(r.rule, crate::plan::ExcludeKind::Values { .. });
        add(&r.column, numeric);
    }
    out
}

/// Reads the data file of `plan`, resolved against `plan_dir`.
pub fn load(plan: &Plan, plan_dir: &Path) -> Result<Dataset> {
    let path = plan_dir.join(&plan.data.path);
    let bytes = std::fs::read(&path).map_err(|e| {
        Failure::io("read the data file", &path, &e)
            .help("check `path` in [data]; it is relative to the analysis file")
    })?;
    let sha256 = crate::plan::canonical::sha256_hex(&bytes);
    let display = plan.data.path.clone();
    let mut rdr = csv::ReaderBuilder::new()
        .delimiter(plan.data.delimiter as u8)
        .has_headers(true)
        .from_reader(bytes.as_slice());
    let headers = rdr
        .byte_headers()
        .map_err(|e| Failure::input(format!("cannot read the header row: {e}")).in_file(&display))?
        .clone();
    let names: Vec<String> = headers
        .iter()
        .map(|h| String::from_utf8_lossy(h).trim_start_matches('\u{feff}').trim().to_string())
        .collect();
    let wanted = used_columns(plan);
    let mut slots = Vec::new();
    for (name, numeric) in &wanted {
        let idx = names.iter().position(|n| n == name).ok_or_else(|| {
            Failure::input(format!("column \"{name}\" is not in the data"))
                .in_file(&display)
                .help(format!("the file has the columns: {}", names.join(", ")))
        })?;
        slots.push((name.clone(), idx, *numeric));
    }
    let mut numeric: Vec<Vec<f64>> = vec![Vec::new(); slots.len()];
    let mut text: Vec<(Vec<u32>, Vec<String>, HashMap<Vec<u8>, u32>)> =
        (0..slots.len()).map(|_| (Vec::new(), Vec::new(), HashMap::new())).collect();
    let mut rec = csv::ByteRecord::new();
    let mut rows = 0;
    loop {
        let more = rdr.read_byte_record(&mut rec).map_err(|e| {
            let line = e.position().map(|p| p.line() as usize).unwrap_or(0);
            Failure::input(format!("the data file cannot be read: {e}")).at(&display, line.max(1), None)
        })?;
        if !more {
            break;
        }
        rows += 1;
        let line = rec.position().map(|p| p.line() as usize).unwrap_or(rows + 1);
        for (k, (name, idx, is_num)) in slots.iter().enumerate() {
            let cell = rec.get(*idx).unwrap_or(b"");
            let cell_s = String::from_utf8_lossy(cell);
            let trimmed = cell_s.trim();
            let missing = plan.data.missing.iter().any(|m| m == trimmed);
            if *is_num {
                let v = if missing {
                    f64::NAN
                } else {
                    let t = if plan.data.decimal == ',' {
                        trimmed.replace(',', ".")
                    } else {
                        trimmed.to_string()
                    };
                    match t.parse::<f64>() {
                        Ok(v) if v.is_finite() => v,
                        _ => {
                            return Err(Failure::input(format!(
                                "column \"{name}\": \"{trimmed}\" is not a number"
                            ))
                            .at(&display, line, Some(idx + 1))
                            .help("fix the cell, or list its text under `missing` in [data] if it means a missing value"))
                        }
                    }
                };
                numeric[k].push(v);
            } else {
                let (codes, levels, index) = &mut text[k];
                if missing {
                    codes.push(u32::MAX);
                } else {
                    let key = trimmed.as_bytes().to_vec();
                    let next = levels.len() as u32;
                    let code = *index.entry(key).or_insert_with(|| {
                        levels.push(trimmed.to_string());
                        next
                    });
                    codes.push(code);
                }
            }
        }
    }
    let mut columns = HashMap::new();
    for (k, (name, _, is_num)) in slots.into_iter().enumerate() {
        let col = if is_num {
            Column::Numeric(std::mem::take(&mut numeric[k]))
        } else {
            let (codes, levels, _) = std::mem::take(&mut text[k]);
            Column::Text { codes, levels }
        };
        columns.insert(name, col);
    }
    Ok(Dataset {
        display_path: display,
        path,
        sha256,
        rows,
        columns,
    })
}

/// Selects the values of one hypothesis (exclusion rules are applied by
/// the data issue's extension; here every row is kept).
pub fn select(ds: &Dataset, _plan: &Plan, h: &Hypothesis) -> Result<Selected> {
    let num = |name: &str| -> &Vec<f64> {
        match ds.columns.get(name) {
            Some(Column::Numeric(v)) => v,
            _ => unreachable!("used_columns registered {name} as numeric"),
        }
    };
    let mut flow = RowFlow {
        read: [0, 0],
        other_levels: 0,
        rules: Vec::<RuleStep>::new(),
        missing: [0, 0],
        incomplete_pairs: 0,
        analysed: [0, 0],
    };
    let (mut first, mut second) = (Vec::new(), Vec::new());
    match &h.comparison {
        Comparison::Groups { group, levels } => {
            let y = num(h.outcome.as_deref().unwrap_or_default());
            let Some(Column::Text { codes, levels: lv }) = ds.columns.get(group) else {
                unreachable!("group column registered as text")
            };
            let code_of = |l: &str| lv.iter().position(|x| x == l).map(|p| p as u32);
            let (a, b) = (code_of(&levels[0]), code_of(&levels[1]));
            for (i, c) in codes.iter().enumerate() {
                let slot = if Some(*c) == a {
                    0
                } else if Some(*c) == b {
                    1
                } else {
                    flow.other_levels += 1;
                    continue;
                };
                flow.read[slot] += 1;
                if y[i].is_nan() {
                    flow.missing[slot] += 1;
                } else if slot == 0 {
                    first.push(y[i]);
                } else {
                    second.push(y[i]);
                }
            }
        }
        Comparison::PairedColumns { first: f, second: s } => {
            let (x, y) = (num(f), num(s));
            flow.read = [ds.rows, ds.rows];
            for i in 0..ds.rows {
                if x[i].is_nan() || y[i].is_nan() {
                    flow.incomplete_pairs += 1;
                    flow.missing[0] += usize::from(x[i].is_nan());
                    flow.missing[1] += usize::from(y[i].is_nan());
                } else {
                    first.push(x[i]);
                    second.push(y[i]);
                }
            }
        }
        Comparison::Reference { .. } => {
            let y = num(h.outcome.as_deref().unwrap_or_default());
            flow.read = [ds.rows, 0];
            for &v in y {
                if v.is_nan() {
                    flow.missing[0] += 1;
                } else {
                    first.push(v);
                }
            }
        }
        Comparison::PairedRows { .. } => {
            return Err(Failure::input(format!(
                "hypothesis {}: paired data in long layout (`pair_by`/`condition`) cannot be read by this build yet",
                h.id
            ))
            .help("store the two measurements as two columns and use `first`/`second`"))
        }
    }
    flow.analysed = [first.len(), second.len()];
    Ok(Selected { first, second, flow })
}
