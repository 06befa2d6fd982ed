//! The values one hypothesis analyses, and an account of every row.
//!
//! For each layout the rows are first assigned to the first group, the
//! second group, another level (`other_levels`) or none (group cell missing,
//! `no_group`); then the exclusion rules' removals are counted per group;
//! then rows with a missing value are dropped listwise (`missing`); paired
//! designs finally drop units that lack one of their two measurements
//! (`incomplete_pairs`, `unpaired`). For each group:
//! `read − Σ rules − missing − unpaired = analysed`.

use super::{Dataset, TextColumn};
use crate::error::{Failure, Result};
use crate::plan::{Comparison, Hypothesis, Plan};
use crate::results::{RowFlow, RuleStep};

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

/// Which group each row belongs to.
const FIRST: u8 = 0;
const SECOND: u8 = 1;
const OTHER: u8 = 2;
const NONE: u8 = 3;

/// Selects the values of hypothesis `h` from the loaded, excluded dataset.
pub fn select(ds: &Dataset, plan: &Plan, h: &Hypothesis) -> Result<Selected> {
    let mut flow = RowFlow {
        read: [0, 0],
        other_levels: 0,
        no_group: 0,
        rules: plan
            .exclude
            .iter()
            .map(|r| RuleStep {
                reason: r.reason.clone(),
                first: 0,
                second: 0,
                other: 0,
            })
            .collect(),
        missing: [0, 0],
        incomplete_pairs: 0,
        unpaired: [0, 0],
        analysed: [0, 0],
    };
    let slots: Vec<u8> = match &h.comparison {
        Comparison::Groups { group, levels } => assign(ds, group, levels)?,
        Comparison::PairedRows {
            condition, levels, ..
        } => assign(ds, condition, levels)?,
        Comparison::PairedColumns { .. } | Comparison::Reference { .. } => vec![FIRST; ds.rows],
    };
    for (i, &slot) in slots.iter().enumerate() {
        match slot {
            FIRST | SECOND => flow.read[usize::from(slot)] += 1,
            OTHER => flow.other_levels += 1,
            _ => flow.no_group += 1,
        }
        let k = ds.excluded_by.get(i).copied().unwrap_or(0) as usize;
        if let Some(step) = k.checked_sub(1).and_then(|k| flow.rules.get_mut(k)) {
            match slot {
                FIRST => step.first += 1,
                SECOND => step.second += 1,
                _ => step.other += 1,
            }
        }
    }
    let kept = |i: usize| slots[i] <= SECOND && ds.excluded_by.get(i).copied().unwrap_or(0) == 0;
    let (mut first, mut second) = (
        Vec::with_capacity(flow.read[0]),
        Vec::with_capacity(flow.read[1]),
    );
    match &h.comparison {
        Comparison::Groups { .. } | Comparison::Reference { .. } => {
            let y = ds.numbers(outcome(h)?)?;
            // Zipped slices (no per-row bounds checks): this loop touches
            // every row of the file.
            let excluded = ds.excluded_by.iter().copied().chain(std::iter::repeat(0));
            for ((&slot, &v), ex) in slots.iter().zip(y).zip(excluded) {
                if slot > SECOND || ex != 0 {
                    continue;
                }
                if v.is_nan() {
                    flow.missing[usize::from(slot)] += 1;
                } else if slot == FIRST {
                    first.push(v);
                } else {
                    second.push(v);
                }
            }
            if matches!(h.comparison, Comparison::Reference { .. }) {
                flow.read[1] = 0;
            }
        }
        Comparison::PairedColumns {
            first: f,
            second: s,
        } => {
            let (x, y) = (ds.numbers(f)?, ds.numbers(s)?);
            flow.read[1] = flow.read[0];
            for step in &mut flow.rules {
                step.second = step.first;
            }
            for i in (0..ds.rows).filter(|&i| kept(i)) {
                let (mx, my) = (x[i].is_nan(), y[i].is_nan());
                if mx || my {
                    flow.incomplete_pairs += 1;
                    flow.missing[0] += usize::from(mx);
                    flow.missing[1] += usize::from(my);
                    flow.unpaired[0] += usize::from(!mx);
                    flow.unpaired[1] += usize::from(!my);
                } else {
                    first.push(x[i]);
                    second.push(y[i]);
                }
            }
        }
        Comparison::PairedRows {
            pair_by,
            condition,
            levels,
        } => {
            let y = ds.numbers(outcome(h)?)?;
            let unit = ds.text(pair_by)?;
            check_duplicates(ds, unit, &slots, pair_by, condition, levels)?;
            // Per unit: the row of its first and of its second measurement, if usable.
            let mut pairs: Vec<[Option<usize>; 2]> = vec![[None, None]; unit.levels.len()];
            let mut order: Vec<u32> = Vec::new();
            for i in (0..ds.rows).filter(|&i| kept(i)) {
                let s = slots[i] as usize;
                if unit.is_missing(i) || y[i].is_nan() {
                    flow.missing[s] += 1;
                    continue;
                }
                let u = unit.codes[i];
                if pairs[u as usize] == [None, None] {
                    order.push(u);
                }
                pairs[u as usize][s] = Some(i);
            }
            for u in order {
                match pairs[u as usize] {
                    [Some(a), Some(b)] => {
                        first.push(y[a]);
                        second.push(y[b]);
                    }
                    [a, b] => {
                        flow.incomplete_pairs += 1;
                        flow.unpaired[0] += usize::from(a.is_some());
                        flow.unpaired[1] += usize::from(b.is_some());
                    }
                }
            }
        }
    }
    flow.analysed = [first.len(), second.len()];
    Ok(Selected {
        first,
        second,
        flow,
    })
}

fn outcome(h: &Hypothesis) -> Result<&str> {
    h.outcome
        .as_deref()
        .ok_or_else(|| Failure::internal(format!("hypothesis {} has no outcome column", h.id)))
}

/// Assigns each row to a level of `column`; errors when a planned level is absent.
pub(crate) fn assign(ds: &Dataset, column: &str, levels: &[String; 2]) -> Result<Vec<u8>> {
    let t = ds.text(column)?;
    let code = |l: &str| -> Result<u32> {
        t.code_of(l).ok_or_else(|| {
            let present: Vec<String> = t.present().iter().map(|p| format!("\"{p}\"")).collect();
            Failure::input(format!("column \"{column}\" has no rows with the level \"{l}\" that the plan names"))
                .in_file(&ds.source)
                .help(format!(
                "the levels in the data are: {}; levels must match the cells exactly, including case",
                if present.is_empty() { "none".to_string() } else { present.join(", ") }
            ))
        })
    };
    let (a, b) = (code(&levels[0])?, code(&levels[1])?);
    Ok(t.codes
        .iter()
        .map(|&c| {
            if c == a {
                FIRST
            } else if c == b {
                SECOND
            } else if t.missing[c as usize] {
                NONE
            } else {
                OTHER
            }
        })
        .collect())
}

/// Fails when a unit has two rows for the same condition.
fn check_duplicates(
    ds: &Dataset,
    unit: &TextColumn,
    slots: &[u8],
    pair_by: &str,
    condition: &str,
    levels: &[String; 2],
) -> Result<()> {
    // Per unit and condition: the first row seen (NONE_YET if none). A
    // table indexed by the unit's code, so no row is hashed.
    const NONE_YET: usize = usize::MAX;
    let mut seen: Vec<[usize; 2]> = vec![[NONE_YET; 2]; unit.levels.len()];
    for (i, &s) in slots.iter().enumerate() {
        if s > SECOND || unit.is_missing(i) {
            continue;
        }
        let code = unit.codes[i];
        let slot = &mut seen[code as usize][usize::from(s)];
        if *slot == NONE_YET {
            *slot = i;
        } else {
            let prev = *slot;
            let u = &unit.levels[code as usize];
            let (l1, l2) = (ds.lines.line(prev), ds.lines.line(i));
            let pos = ds.columns.get(pair_by).map(|c| c.position);
            return Err(Failure::input(format!(
                "{pair_by} \"{u}\" has two rows with {condition} \"{}\" (lines {l1} and {l2})",
                levels[usize::from(s)]
            ))
            .at(&ds.source, l2, pos)
            .help(format!("a paired long layout needs exactly one row per {pair_by} and {condition}; remove or relabel the duplicate")));
        }
    }
    Ok(())
}
