//! From the file as written to a typed plan: every meaning check that serde
//! cannot express, each failing with the file, line and column of the value
//! at fault and a `help:` line saying what would be accepted.

use super::raw::{Num, RawData, RawDeviation, RawExclude, RawFile, RawHypothesis, RawPlanning};
use super::*;
use crate::error::{capped_message, line_col, shown, Failure, Result};
use std::collections::{BTreeMap, HashSet};
use std::path::Path;
use toml::Spanned;

/// The cell texts that mean "missing" when a plan lists none.
fn default_missing() -> Vec<String> {
    ["", "NA", "N/A", "NaN", "."].map(String::from).to_vec()
}

/// The most hypotheses one analysis file may declare. Each becomes a
/// report section with figures (about 150 KB of output and a few MB of
/// memory at most), so this bounds a run's memory and output; a
/// confirmatory plan rarely needs more, and a larger set splits naturally
/// into several files run as one folder.
pub const MAX_HYPOTHESES: usize = 200;
/// The most decimals a plan may declare for an outcome (`decimals`), and
/// the most the reports look for in the values.
pub const MAX_DECIMALS: u32 = 6;

/// Reads, parses and validates an analysis file.
pub(crate) fn load(path: &Path) -> Result<AnalysisFile> {
    refuse_other_kinds(path)?;
    let bytes = crate::files::read_bounded(
        path,
        "read the analysis file",
        crate::files::Links::Follow,
        crate::files::MAX_PLAN,
    )
    .map_err(|f| f.help("check the path; analysis files usually live in analyses/"))?;
    let text = String::from_utf8(bytes).map_err(|e| {
        let (line, col) = line_col(
            &String::from_utf8_lossy(e.as_bytes()),
            e.utf8_error().valid_up_to(),
        );
        Failure::input("the analysis file is not valid UTF-8 text")
            .at(path, line, Some(col))
            .help("save the file as UTF-8")
    })?;
    parse(path, &text)
}

/// Files attest writes or reads besides analysis files, by extension, and
/// what each one is; naming one where an analysis file belongs is refused
/// before it is parsed, since its TOML syntax error would explain the
/// wrong thing.
const OTHER_KINDS: &[(&str, &str)] = &[
    ("md", "a report or document"),
    ("html", "a report or document"),
    ("htm", "a report or document"),
    ("json", "a results or values file"),
    ("tex", "a values file"),
    ("svg", "a figure"),
    ("lock", "a lock"),
    ("csv", "a data file"),
    ("tsv", "a data file"),
    ("txt", "a data file"),
    ("xlsx", "a data file"),
];

fn refuse_other_kinds(path: &Path) -> Result<()> {
    let ext = path
        .extension()
        .map(|e| e.to_string_lossy().to_lowercase())
        .unwrap_or_default();
    let Some((_, kind)) = OTHER_KINDS.iter().find(|(e, _)| *e == ext) else {
        return Ok(());
    };
    let help = match ext.as_str() {
        "md" | "html" | "htm" | "json" | "tex" | "svg" => format!(
            "name the analysis file (`.toml`, usually in analyses/) to run it; to check \
             that a report reproduces, use `attest verify {}`",
            path.display()
        ),
        "lock" => "name the analysis file the lock belongs to: the `.toml` file of the same name"
            .to_string(),
        _ => "name the analysis file (`.toml`) whose `[data]` path points at this data file"
            .to_string(),
    };
    Err(Failure::input(format!(
        "this is {kind}, not an analysis file: analysis files are TOML plans ending in `.toml`"
    ))
    .in_file(path)
    .help(help))
}

/// Parses and validates analysis-file text; `path` is used in messages.
pub fn parse(path: &Path, text: &str) -> Result<AnalysisFile> {
    let text_no_bom = text.strip_prefix('\u{feff}').unwrap_or(text);
    let raw: RawFile =
        toml::from_str(text_no_bom).map_err(|e| toml_failure(path, text_no_bom, &e))?;
    Checker {
        path,
        text: text_no_bom,
    }
    .file(raw)
}

/// Turns a TOML or serde error into a positioned failure, adding a
/// "did you mean" for unknown keys and tables and naming the key whose
/// value has the wrong type.
fn toml_failure(path: &Path, text: &str, e: &toml::de::Error) -> Failure {
    let msg = e.message().trim().to_string();
    let start = e.span().map(|s| s.start);
    let mut f = Failure::input(capped_message(&first_sentence(&msg)));
    if let Some(start) = start {
        let (l, c) = line_col(text, start);
        f = f.at(path, l, Some(c));
    } else {
        f = f.in_file(path);
    }
    if let Some((what, help)) = unknown_key(&msg, start.map(|s| line_before(text, s))) {
        f.what = what;
        f = f.help(help);
    } else if msg.contains("missing field") {
        f = f.help("add the key; see docs/guide/reference/analysis-file.md");
    } else if let Some((what, help)) = start.and_then(|s| wrong_type(&msg, text, s)) {
        f.what = what;
        f = f.help(help);
    } else if let Some(help) = type_help(&msg) {
        f = f.help(help);
    } else {
        f = f.help(
            "fix the TOML syntax at that position (strings need quotes, tables need [brackets])",
        );
    }
    f
}

/// The text of the line holding `offset`, up to `offset`.
fn line_before(text: &str, offset: usize) -> &str {
    let mut offset = offset.min(text.len());
    while !text.is_char_boundary(offset) {
        offset -= 1;
    }
    let before = &text[..offset];
    &before[before.rfind('\n').map_or(0, |i| i + 1)..]
}

/// For serde's "invalid type: X, expected Y" at a value written as
/// `key = value`: names the key and shows the line as it should read.
fn wrong_type(msg: &str, text: &str, start: usize) -> Option<(String, String)> {
    let rest = msg.strip_prefix("invalid type: ")?;
    let (found, expected) = rest.split_once(", expected ")?;
    let expected = expected.lines().next()?.trim();
    let line = line_before(text, start);
    let key = line.rsplit_once('=')?.0.trim();
    let key = key.rsplit('.').next()?.trim().trim_matches('"');
    if key.is_empty() || key.starts_with('[') {
        return None;
    }
    let kind = match expected {
        "a number" | "f64" | "i64" => "a number",
        "a sequence" => "a list",
        "a string" | "a borrowed string" => "text",
        "a boolean" => "`true` or `false`",
        other => other,
    };
    let found = match found.strip_prefix("string ") {
        Some(q) => format!("the text {}", shown(q)),
        None => found.to_string(),
    };
    let what = format!("`{key}` takes {kind}, but here it is {found}");
    let help = match (kind, found.strip_prefix("the text \"")) {
        ("a number", Some(q)) => {
            let inner = q.strip_suffix('"').unwrap_or(q);
            if inner.trim().parse::<f64>().is_ok() {
                format!(
                    "write the number without quotes: `{key} = {}`",
                    inner.trim()
                )
            } else {
                format!("write a number without quotes, e.g. `{key} = 0.05`")
            }
        }
        ("a number", None) => format!("write a number without quotes, e.g. `{key} = 0.05`"),
        ("a list", Some(q)) => format!(
            "write a list in square brackets: `{key} = [\"{}\", …]`",
            q.strip_suffix('"').unwrap_or(q)
        ),
        ("a list", None) => {
            format!("write a list in square brackets, e.g. `{key} = [\"first\", \"second\"]`")
        }
        ("text", _) => format!("write the value in double quotes, e.g. `{key} = \"…\"`"),
        ("`true` or `false`", _) => {
            format!("write `{key} = true` or `{key} = false`, without quotes")
        }
        (other, _) => format!("write {other} for `{key}`"),
    };
    Some((what, help))
}

/// For serde's "invalid type: …, expected X" message (a value of the wrong
/// kind, which is not a syntax error), says how to write an X.
fn type_help(msg: &str) -> Option<String> {
    if msg.contains("number overflowed") {
        return Some("write a number between -1.8e308 and 1.8e308".into());
    }
    let rest = msg.strip_prefix("invalid type: ")?;
    let expected = rest.split_once(", expected ")?.1.lines().next()?.trim();
    Some(match expected {
        "a number" | "f64" | "i64" => {
            "this key takes a number: write it without quotes, e.g. `0.05`".into()
        }
        "a sequence" => {
            "this key takes a list in square brackets, e.g. `[\"first\", \"second\"]`; \
             a repeated block such as [[hypothesis]] needs double brackets"
                .into()
        }
        "a string" | "a borrowed string" => "this key takes text: write it in double quotes".into(),
        "a boolean" => "this key takes `true` or `false`, without quotes".into(),
        other => format!("write {other} here"),
    })
}

fn first_sentence(msg: &str) -> String {
    msg.lines().next().unwrap_or(msg).to_string()
}

/// For serde's "unknown field `x`, expected one of `a`, `b`" message: what
/// to say (a key, or a table when the line starts with `[`) and the help,
/// with the closest known name. `line` is the line up to the name.
fn unknown_key(msg: &str, line: Option<&str>) -> Option<(String, String)> {
    let rest = msg.strip_prefix("unknown field `")?;
    let (key, rest) = rest.split_once('`')?;
    let known: Vec<&str> = rest.split('`').skip(1).step_by(2).collect();
    let head = line.unwrap_or("").trim_start();
    let (open, close) = if head.starts_with("[[") {
        ("[[", "]]")
    } else if head.starts_with('[') {
        ("[", "]")
    } else {
        ("", "")
    };
    let dotted = head.trim_start_matches('[').trim();
    let name = |k: &str| format!("{open}{dotted}{k}{close}");
    let what = if open.is_empty() {
        format!("unknown key `{}`", shown(key))
    } else {
        format!("unknown table `{}`", name(&shown(key)))
    };
    let help = match closest(key, &known) {
        Some(k) => format!(
            "did you mean `{}`? Known here: {}",
            if open.is_empty() {
                k.to_string()
            } else {
                name(k)
            },
            known.join(", ")
        ),
        None => format!("known here: {}", known.join(", ")),
    };
    Some((what, help))
}

/// The known name a mistyped one most likely meant: within a small edit
/// distance, or sharing a long start (`exclusion` for `exclude`).
pub(crate) fn closest<'a>(given: &str, known: &[&'a str]) -> Option<&'a str> {
    let given_l = given.to_lowercase();
    let by_edit = known
        .iter()
        .map(|k| (edit_distance(&given_l, k), *k))
        .min()
        .filter(|(d, k)| *d <= 2.max(k.len() / 3))
        .map(|(_, k)| k);
    by_edit.or_else(|| {
        known
            .iter()
            .map(|k| {
                let common = given_l
                    .chars()
                    .zip(k.chars())
                    .take_while(|(a, b)| a == b)
                    .count();
                (common, *k)
            })
            .filter(|(common, k)| {
                *common >= 4 && *common * 2 >= k.chars().count().min(given_l.chars().count())
            })
            .max_by_key(|(common, _)| *common)
            .map(|(_, k)| k)
    })
}

/// Levenshtein distance (common practice, Wagner–Fischer dynamic programme).
pub(crate) fn edit_distance(a: &str, b: &str) -> usize {
    let b: Vec<char> = b.chars().collect();
    let mut prev: Vec<usize> = (0..=b.len()).collect();
    for (i, ca) in a.chars().enumerate() {
        let mut cur = vec![i + 1; b.len() + 1];
        for (j, cb) in b.iter().enumerate() {
            let cost = usize::from(ca != *cb);
            cur[j + 1] = (prev[j] + cost).min(prev[j + 1] + 1).min(cur[j] + 1);
        }
        prev = cur;
    }
    prev[b.len()]
}

/// Whether a value names a one-sided test without saying its direction
/// ("one-sided", "one-tailed", "one sided", …).
pub(crate) fn is_one_sided_name(given: &str) -> bool {
    let g = given.to_lowercase();
    g.starts_with("one") && (g.contains("side") || g.contains("tail"))
}

/// What to say when a one-sided test is asked for without its direction.
pub(crate) const ONE_SIDED_HELP: &str = "a one-sided test is named by its direction: \
     \"greater\" (first − second > 0, or outcome − reference > 0) or \"less\" \
     (the difference < 0); \"two-sided\" is the default";

struct Checker<'a> {
    path: &'a Path,
    text: &'a str,
}

impl Checker<'_> {
    fn at<T>(&self, s: &Spanned<T>, what: impl Into<String>) -> Failure {
        let (l, c) = line_col(self.text, s.span().start);
        Failure::input(what).at(self.path, l, Some(c))
    }

    fn top(&self, what: impl Into<String>) -> Failure {
        Failure::input(what).at(self.path, 1, Some(1))
    }

    fn file(&self, raw: RawFile) -> Result<AnalysisFile> {
        let version = raw.attest.as_ref().ok_or_else(|| {
            self.top("the analysis file has no `attest` format version")
                .help("add `attest = 1` as the first line")
        })?;
        if *version.get_ref() != i64::from(FORMAT_VERSION) {
            return Err(self
                .at(
                    version,
                    format!("format version {} is not supported", version.get_ref()),
                )
                .help(format!(
                    "this build of attest reads `attest = {FORMAT_VERSION}`"
                )));
        }
        let title = match raw.title {
            Some(t) if !t.get_ref().trim().is_empty() => t.into_inner(),
            Some(t) => {
                return Err(self
                    .at(&t, "`title` is empty")
                    .help("give the study a title"))
            }
            None => {
                return Err(self
                    .top("the analysis file has no `title`")
                    .help("add a line such as `title = \"Loaf volume after a long proof\"`"))
            }
        };
        let alpha = self.unit_interval(raw.alpha.as_ref(), "alpha", 0.05)?;
        let confidence = self.unit_interval(raw.confidence.as_ref(), "confidence", 0.95)?;
        let check_alpha = self.unit_interval(raw.check_alpha.as_ref(), "check_alpha", 0.05)?;
        let correction = match &raw.correction {
            None => Correction::Holm,
            Some(c) => self.choice(
                c,
                "correction",
                &[
                    ("none", Correction::None),
                    ("bonferroni", Correction::Bonferroni),
                    ("holm", Correction::Holm),
                    ("hochberg", Correction::Hochberg),
                    ("fdr-bh", Correction::FdrBh),
                ],
            )?,
        };
        let seed = match &raw.seed {
            None => 1,
            Some(s) if *s.get_ref() >= 0 => *s.get_ref() as u64,
            Some(s) => {
                return Err(self
                    .at(s, "`seed` must be zero or a positive whole number")
                    .help("write for example `seed = 1`"))
            }
        };
        let data = match raw.data {
            Some(d) => self.data(d)?,
            None => {
                return Err(self
                    .top("the analysis file has no [data] section")
                    .help("add `[data]` with `path = \"data/your-file.csv\"`"))
            }
        };
        let exclude = raw
            .exclude
            .into_iter()
            .map(|e| self.exclude(e))
            .collect::<Result<Vec<_>>>()?;
        if raw.hypothesis.is_empty() {
            return Err(self
                .top("the analysis file declares no hypothesis")
                .help("add at least one [[hypothesis]] block"));
        }
        if let Some(extra) = raw.hypothesis.get(MAX_HYPOTHESES) {
            let (l, c) = line_col(self.text, extra.span().start);
            return Err(Failure::input(format!(
                "the analysis file declares {} hypotheses; one file holds at most {MAX_HYPOTHESES}",
                raw.hypothesis.len()
            ))
            .at(self.path, l, Some(c))
            .help("split the hypotheses over several analysis files (each with its own lock) and run them together with `attest run <folder>`"));
        }
        let mut ids = HashSet::new();
        let mut hypotheses = Vec::new();
        for h in raw.hypothesis {
            let span_holder = h.span();
            let hyp = self.hypothesis(h)?;
            if !ids.insert(hyp.id.clone()) {
                let (l, c) = line_col(self.text, span_holder.start);
                return Err(
                    Failure::input(format!("hypothesis id `{}` is used twice", hyp.id))
                        .at(self.path, l, Some(c))
                        .help("give every hypothesis its own id, e.g. H1, H2"),
                );
            }
            hypotheses.push(hyp);
        }
        let deviations = raw
            .deviation
            .into_iter()
            .map(|d| self.deviation(d))
            .collect::<Result<Vec<_>>>()?;
        Ok(AnalysisFile {
            path: self.path.to_path_buf(),
            plan: Plan {
                attest: FORMAT_VERSION,
                title,
                authors: raw.authors.unwrap_or_default(),
                summary: raw.summary,
                alpha,
                confidence,
                correction,
                seed,
                check_alpha,
                data,
                exclude,
                hypotheses,
            },
            deviations,
        })
    }

    fn unit_interval(&self, v: Option<&Spanned<Num>>, key: &str, default: f64) -> Result<f64> {
        match v {
            None => Ok(default),
            Some(s) => {
                let x = s.get_ref().0;
                if x > 0.0 && x < 1.0 {
                    Ok(x)
                } else {
                    Err(self
                        .at(
                            s,
                            format!("`{key}` must lie strictly between 0 and 1, found {x}"),
                        )
                        .help(format!("write a proportion, e.g. `{key} = {default}`")))
                }
            }
        }
    }

    fn choice<T: Copy>(&self, s: &Spanned<String>, key: &str, options: &[(&str, T)]) -> Result<T> {
        let given = s.get_ref().as_str();
        if let Some((_, v)) = options.iter().find(|(name, _)| *name == given) {
            return Ok(*v);
        }
        let names: Vec<&str> = options.iter().map(|(n, _)| *n).collect();
        let near = names
            .iter()
            .map(|n| (edit_distance(given, n), *n))
            .min()
            .filter(|(d, _)| *d <= 3);
        let help = if key == "alternative" && is_one_sided_name(given) {
            ONE_SIDED_HELP.to_string()
        } else {
            match near {
                Some((_, n)) => {
                    format!("did you mean \"{n}\"? Choose one of: {}", names.join(", "))
                }
                None => format!("choose one of: {}", names.join(", ")),
            }
        };
        Err(self
            .at(
                s,
                format!("`{key}` = \"{}\" is not a known value", shown(given)),
            )
            .help(help))
    }

    fn text_key(
        &self,
        v: Option<Spanned<String>>,
        key: &str,
        block: &Spanned<impl Sized>,
    ) -> Result<String> {
        match v {
            Some(s) if !s.get_ref().trim().is_empty() => Ok(s.into_inner()),
            Some(s) => Err(self
                .at(&s, format!("`{key}` is empty"))
                .help(format!("give `{key}` a value"))),
            None => Err(self
                .at(block, format!("this block has no `{key}`"))
                .help(format!("add `{key} = \"…\"`"))),
        }
    }

    fn data(&self, d: Spanned<RawData>) -> Result<DataSpec> {
        let span = d.span();
        let (l, c) = line_col(self.text, span.start);
        let d = d.into_inner();
        if let Some(src) = &d.source {
            return self.query_source(src, &d, (l, c));
        }
        if let Some(k) = d.connect.as_ref().or(d.query.as_ref()) {
            let key = if d.connect.is_some() {
                "connect"
            } else {
                "query"
            };
            return Err(self
                .at(k, format!("`{key}` applies only when [data] names a `source`"))
                .help("add `source = \"postgres\"` or `source = \"duckdb\"`, or remove `connect` and `query` to read the file at `path`"));
        }
        let path = match d.path {
            Some(p) if !p.get_ref().trim().is_empty() => p.into_inner(),
            _ => {
                return Err(Failure::input("[data] has no `path`")
                    .at(self.path, l, Some(c))
                    .help("add `path = \"data/your-file.csv\"` (relative to this analysis file)"))
            }
        };
        let ext = Path::new(&path)
            .extension()
            .map(|e| e.to_string_lossy().to_ascii_lowercase())
            .unwrap_or_default();
        let format_name = match &d.format {
            Some(f) => f.get_ref().clone(),
            None => ext.clone(),
        };
        let (format, default_delim) = match format_name.as_str() {
            "csv" => (DataFormat::Delimited, ','),
            "tsv" | "tab" => (DataFormat::Delimited, '\t'),
            "txt" => (DataFormat::Delimited, '\t'),
            "xlsx" => (DataFormat::Xlsx, ','),
            "parquet" => (DataFormat::Parquet, ','),
            other => {
                let f = Failure::input(if d.format.is_some() {
                    format!("`format` = \"{}\" is not a known data format", shown(other))
                } else {
                    format!("cannot tell the data format from the file name `{path}`")
                });
                let f = match &d.format {
                    Some(s) => self.at(s, f.what),
                    None => f.at(self.path, l, Some(c)),
                };
                return Err(f.help("set `format` to one of: csv, tsv, txt, xlsx, parquet"));
            }
        };
        let delimiter = match &d.delimiter {
            None => default_delim,
            Some(s) => {
                let v = s.get_ref();
                let mut chars = v.chars();
                match (chars.next(), chars.next()) {
                    (Some(ch), None) if ch != '"' && ch != '\n' && ch != '\r' && ch.is_ascii() => {
                        ch
                    }
                    _ if v == "\\t" => '\t',
                    _ => {
                        return Err(self
                            .at(
                                s,
                                format!(
                                    "`delimiter` must be one ASCII character, found \"{}\"",
                                    shown(v)
                                ),
                            )
                            .help(
                                "write for example `delimiter = \";\"` or `delimiter = \"\\t\"`",
                            ))
                    }
                }
            }
        };
        let decimal = match &d.decimal {
            None => '.',
            Some(s) => match s.get_ref().as_str() {
                "." => '.',
                "," => ',',
                other => {
                    return Err(self
                        .at(
                            s,
                            format!(
                                "`decimal` must be \".\" or \",\", found \"{}\"",
                                shown(other)
                            ),
                        )
                        .help("use `decimal = \",\"` for numbers written like 12,5"))
                }
            },
        };
        if decimal == delimiter && format == DataFormat::Delimited {
            return Err(Failure::input(
                "the decimal mark and the delimiter are the same character",
            )
            .at(self.path, l, Some(c))
            .help("files with decimal commas usually use `delimiter = \";\"`"));
        }
        if format != DataFormat::Xlsx {
            if let Some(s) = &d.sheet {
                return Err(self
                    .at(s, "`sheet` only applies to spreadsheet (xlsx) data")
                    .help("remove `sheet`, or point `path` at an .xlsx file"));
            }
        }
        Ok(DataSpec {
            path,
            format,
            delimiter,
            decimal,
            missing: d.missing.unwrap_or_else(default_missing),
            sheet: d.sheet.map(Spanned::into_inner),
            source: None,
            connect: None,
            query: None,
        })
    }

    /// `[data]` with a `source`: the engine, where it is, and the query.
    fn query_source(
        &self,
        src: &Spanned<String>,
        d: &RawData,
        (l, c): (usize, usize),
    ) -> Result<DataSpec> {
        let engine = match src.get_ref().as_str() {
            "postgres" => Engine::Postgres,
            "duckdb" => Engine::Duckdb,
            other => {
                return Err(self
                    .at(src, format!("`source` = \"{}\" is not a known engine", shown(other)))
                    .help("set `source` to \"postgres\" or \"duckdb\", or remove it to read the file at `path`"))
            }
        };
        let file_keys = [
            ("path", &d.path),
            ("format", &d.format),
            ("delimiter", &d.delimiter),
            ("decimal", &d.decimal),
            ("sheet", &d.sheet),
        ];
        if let Some((key, Some(v))) = file_keys.iter().find(|(_, v)| v.is_some()) {
            return Err(self
                .at(
                    v,
                    format!("`{key}` does not apply when the data come from `source`"),
                )
                .help(format!(
                    "remove `{key}`; the query says which rows the plan reads"
                )));
        }
        let query = match &d.query {
            Some(q) => {
                let text = q
                    .get_ref()
                    .trim()
                    .trim_end_matches([';', ' ', '\t', '\n', '\r']);
                if text.is_empty() {
                    return Err(self
                        .at(q, "`query` is empty")
                        .help("write the query whose columns the plan names, e.g. `query = \"SELECT arm, score FROM visits\"`"));
                }
                if text.contains(';') {
                    return Err(self
                        .at(q, "`query` holds more than one statement (a `;`)")
                        .help("write one SELECT (or WITH … SELECT) without `;`; attest runs it inside its own counting query"));
                }
                text.to_string()
            }
            None => {
                return Err(Failure::input(format!(
                    "[data] names `source` = \"{}\" but has no `query`",
                    src.get_ref()
                ))
                .at(self.path, l, Some(c))
                .help("add `query = \"SELECT …\"`; the plan's column names refer to its result"))
            }
        };
        let connect = match (&d.connect, engine) {
            (Some(k), _) => {
                if let Err(why) = crate::data::source::check_connect(k.get_ref(), engine) {
                    return Err(self.at(k, why).help(
                        "keep secrets out of the plan (it is hashed, printed and shared): set PGPASSWORD or use a password file (~/.pgpass or PGPASSFILE)",
                    ));
                }
                Some(k.get_ref().clone())
            }
            (None, Engine::Postgres) => {
                return Err(Failure::input("[data] names `source` = \"postgres\" but has no `connect`")
                    .at(self.path, l, Some(c))
                    .help("add a libpq connection string without a password, e.g. `connect = \"host=/run/postgresql dbname=trial\"`"))
            }
            (None, Engine::Duckdb) => None,
        };
        Ok(DataSpec {
            path: String::new(),
            format: DataFormat::Query,
            delimiter: ',',
            decimal: '.',
            missing: d.missing.clone().unwrap_or_else(default_missing),
            sheet: None,
            source: Some(engine),
            connect,
            query: Some(query),
        })
    }

    fn exclude(&self, e: Spanned<RawExclude>) -> Result<ExcludeRule> {
        let reason = self.text_key(e.get_ref().reason.clone(), "reason", &e)?;
        let column = self.text_key(e.get_ref().column.clone(), "column", &e)?;
        let r = e.get_ref();
        let kinds = [
            r.below.is_some() || r.above.is_some(),
            r.values.is_some(),
            r.outlier.is_some(),
        ]
        .iter()
        .filter(|b| **b)
        .count();
        if kinds != 1 {
            return Err(self
                .at(
                    &e,
                    "an exclusion rule needs exactly one of: `below`/`above`, `values`, `outlier`",
                )
                .help("split combined rules into separate [[exclude]] blocks"));
        }
        let rule = if let Some(o) = &r.outlier {
            let limit =
                match &r.limit {
                    Some(l) if l.get_ref().0 > 0.0 && l.get_ref().0.is_finite() => l.get_ref().0,
                    Some(l) => {
                        return Err(self
                            .at(l, "`limit` must be a positive number")
                            .help("2.5 or 3 are usual for median-distance, 1.5 for tukey-fences"))
                    }
                    None => return Err(self.at(o, "an outlier rule needs a `limit`").help(
                        "add e.g. `limit = 3` (median-distance) or `limit = 1.5` (tukey-fences)",
                    )),
                };
            let by = r.by.as_ref().map(|b| b.get_ref().clone());
            match o.get_ref().as_str() {
                "median-distance" => ExcludeKind::MedianDistance { limit, by },
                "tukey-fences" => ExcludeKind::TukeyFences { limit, by },
                other => {
                    return Err(self
                        .at(o, format!("`outlier` = \"{}\" is not a known rule", shown(other)))
                        .help("choose \"median-distance\" (in median absolute deviations) or \"tukey-fences\" (in IQRs)"))
                }
            }
        } else {
            if let Some(l) = &r.limit {
                return Err(self
                    .at(l, "`limit` only applies to an outlier rule")
                    .help("remove `limit`, or add `outlier = \"median-distance\"`"));
            }
            if let Some(b) = &r.by {
                return Err(self
                    .at(b, "`by` only applies to an outlier rule")
                    .help("remove `by`"));
            }
            if let Some(v) = &r.values {
                if v.get_ref().is_empty() {
                    return Err(self
                        .at(v, "`values` is empty")
                        .help("list the cell texts that exclude a row"));
                }
                ExcludeKind::Values {
                    values: v.get_ref().clone(),
                }
            } else {
                let below = r.below.as_ref().map(|b| b.get_ref().0);
                let above = r.above.as_ref().map(|b| b.get_ref().0);
                if let (Some(lo), Some(hi)) = (below, above) {
                    if lo > hi {
                        return Err(self.at(&e, format!("`below` ({lo}) is larger than `above` ({hi}), so every row would be excluded")).help("swap the two values"));
                    }
                }
                ExcludeKind::Range { below, above }
            }
        };
        Ok(ExcludeRule {
            reason,
            column,
            rule,
        })
    }

    fn deviation(&self, d: Spanned<RawDeviation>) -> Result<Deviation> {
        let r = d.get_ref();
        let optional = |v: &Option<Spanned<String>>, key: &str| -> Result<Option<String>> {
            v.clone()
                .map(|s| self.text_key(Some(s), key, &d))
                .transpose()
        };
        use super::{Severity, Timing};
        Ok(Deviation {
            date: self.text_key(r.date.clone(), "date", &d)?,
            change: self.text_key(r.change.clone(), "change", &d)?,
            reason: self.text_key(r.reason.clone(), "reason", &d)?,
            field: optional(&r.field, "field")?,
            planned: optional(&r.planned, "planned")?,
            when: r
                .when
                .as_ref()
                .map(|w| {
                    self.choice(
                        w,
                        "when",
                        &[
                            ("before-collection", Timing::BeforeCollection),
                            ("before-access", Timing::BeforeAccess),
                            ("before-analysis", Timing::BeforeAnalysis),
                            ("after-results", Timing::AfterResults),
                        ],
                    )
                })
                .transpose()?,
            effect: optional(&r.effect, "effect")?,
            severity: r
                .severity
                .as_ref()
                .map(|w| {
                    self.choice(
                        w,
                        "severity",
                        &[
                            ("weaker", Severity::Weaker),
                            ("same", Severity::Same),
                            ("stronger", Severity::Stronger),
                            ("unclear", Severity::Unclear),
                        ],
                    )
                })
                .transpose()?,
        })
    }

    fn hypothesis(&self, h: Spanned<RawHypothesis>) -> Result<Hypothesis> {
        let id = self.text_key(h.get_ref().id.clone(), "id", &h)?;
        let claim = self.text_key(h.get_ref().claim.clone(), "claim", &h)?;
        let r = h.get_ref();
        let design = match &r.design {
            Some(d) => self.choice(
                d,
                "design",
                &[
                    ("independent", Design::Independent),
                    ("paired", Design::Paired),
                    ("one-sample", Design::OneSample),
                ],
            )?,
            None => {
                return Err(self
                    .at(&h, format!("hypothesis {id} has no `design`"))
                    .help("add `design = \"independent\"`, \"paired\" or \"one-sample\""))
            }
        };
        let method_names: Vec<(&str, Method)> =
            Method::ALL.iter().map(|m| (m.as_str(), *m)).collect();
        let method = match &r.method {
            Some(m) => self.choice(m, "method", &method_names)?,
            None => {
                return Err(self
                    .at(&h, format!("hypothesis {id} has no `method`"))
                    .help("add e.g. `method = \"welch-t\"`, or `method = \"checked\"` for the assumption-gated choice"))
            }
        };
        self.unused_keys(design, r)?;
        if let Some(e) = method.misfit(design) {
            let at = self.at(r.method.as_ref().expect("method present"), e.what);
            return Err(Failure { help: e.help, ..at });
        }
        let alternative = match &r.alternative {
            None => Alternative::TwoSided,
            Some(a) => self.choice(
                a,
                "alternative",
                &[
                    ("two-sided", Alternative::TwoSided),
                    ("greater", Alternative::Greater),
                    ("less", Alternative::Less),
                ],
            )?,
        };
        let comparison = self.comparison(&id, design, r, &h)?;
        let outcome = match (&comparison, &r.outcome) {
            (Comparison::PairedColumns { .. }, Some(o)) => {
                return Err(self
                    .at(o, "`outcome` is not used with `first`/`second` columns")
                    .help(
                        "remove `outcome`; the two measurement columns are `first` and `second`",
                    ))
            }
            (Comparison::PairedColumns { .. }, None) => None,
            (_, Some(o)) if !o.get_ref().trim().is_empty() => Some(o.get_ref().clone()),
            (_, _) => {
                return Err(self
                    .at(&h, format!("hypothesis {id} has no `outcome`"))
                    .help("name the numeric column to compare, e.g. `outcome = \"volume_ml\"`"))
            }
        };
        let equivalence = match &r.equivalence {
            None => None,
            Some(e) => {
                let v = e.get_ref();
                if v.len() != 2 || v[0].0 >= v[1].0 || !v[0].0.is_finite() || !v[1].0.is_finite() {
                    return Err(self
                        .at(e, "`equivalence` must be two numbers [low, high] with low < high")
                        .help("write the smallest differences that matter, e.g. `equivalence = [-5, 5]` in the outcome's units"));
                }
                if method == Method::Checked {
                    return Err(self
                        .at(e, "equivalence bounds need a fixed method; with \"checked\" the bounds would mean a mean difference or a rank shift depending on the checks")
                        .help("preregister the method the bounds are written for: welch-t, student-t, trimmed-t, mann-whitney or brunner-munzel (independent); paired-t, one-sample-t, trimmed-t or wilcoxon-signed-rank"));
                }
                if method == Method::BrunnerMunzel && (v[0].0 < 0.0 || v[1].0 > 1.0) {
                    return Err(self
                        .at(e, "with brunner-munzel the equivalence bounds are on the probability of superiority, so they must lie between 0 and 1")
                        .help("write bounds around ½, e.g. `equivalence = [0.4, 0.6]`: the first group's values are larger than the second's with a probability between 40% and 60%"));
                }
                if alternative != Alternative::TwoSided {
                    return Err(self
                        .at(r.alternative.as_ref().expect("alternative present"), "an equivalence hypothesis is tested with two one-sided tests; `alternative` must be \"two-sided\" or absent")
                        .help("remove `alternative` from this hypothesis"));
                }
                Some([v[0].0, v[1].0])
            }
        };
        let decimals = match &r.decimals {
            None => None,
            Some(d) => match u32::try_from(*d.get_ref()) {
                Ok(v) if v <= MAX_DECIMALS => Some(v),
                _ => {
                    return Err(self
                        .at(d, format!("`decimals` must be a whole number from 0 to {MAX_DECIMALS}"))
                        .help("give the decimals the outcome was recorded with, e.g. `decimals = 1` for 1828.4, or remove the key to let attest find them from the values"))
                }
            },
        };
        let mut h_out = Hypothesis {
            id,
            claim,
            design,
            outcome,
            comparison,
            alternative,
            method,
            equivalence,
            label: r.label.clone(),
            units: r.units.clone(),
            decimals,
            names: BTreeMap::new(),
            robustness: r.robustness.unwrap_or(true),
            conventions: self.conventions(design, method, r)?,
            planning: match &r.planning {
                Some(p) => Some(self.planning(design, method, p)?),
                None => None,
            },
        };
        if let Some(names) = &r.names {
            let sets = h_out.set_names();
            for (key, words) in names.get_ref() {
                if !sets.contains(key) || words.trim().is_empty() {
                    return Err(self
                        .at(
                            names,
                            format!(
                                "`names` gives {} for \"{}\", which is not one of this hypothesis's sets ({})",
                                if words.trim().is_empty() { "no words" } else { "words" },
                                shown(key),
                                sets.iter().map(|s| format!("\"{}\"", shown(s))).collect::<Vec<_>>().join(", ")
                            ),
                        )
                        .help("name each group, condition or column as the data spell it, with the words to show, e.g. `names = { long = \"90-minute proof\" }`"));
                }
            }
            h_out.names = names.get_ref().clone();
        }
        Ok(h_out)
    }

    /// The rank and robust conventions of a hypothesis; a stated default
    /// is stored as absent (see [`Conventions`]).
    fn conventions(
        &self,
        design: Design,
        method: Method,
        r: &RawHypothesis,
    ) -> Result<Conventions> {
        let zero_differences = match &r.zero_differences {
            None => None,
            Some(z) => {
                if design == Design::Independent {
                    return Err(self
                        .at(
                            z,
                            "`zero_differences` applies to paired and one-sample designs only",
                        )
                        .help("remove it; independent groups have no differences to be zero"));
                }
                let rule = self.choice(
                    z,
                    "zero_differences",
                    &[
                        ("drop", ZeroRule::Drop),
                        ("keep-in-ranking", ZeroRule::KeepInRanking),
                    ],
                )?;
                (rule != ZeroRule::default()).then_some(rule)
            }
        };
        let continuity_correction = r
            .continuity_correction
            .as_ref()
            .map(|c| *c.get_ref())
            .filter(|&c| !c);
        let rank_fallback = match &r.rank_fallback {
            None => None,
            Some(f) => {
                if method != Method::Checked || design != Design::Independent {
                    return Err(self
                        .at(f, "`rank_fallback` is used only by `method = \"checked\"` with independent groups")
                        .help("remove it, or preregister the rank test itself as the method"));
                }
                let v = self.choice(
                    f,
                    "rank_fallback",
                    &[
                        ("mann-whitney", RankFallback::MannWhitney),
                        ("brunner-munzel", RankFallback::BrunnerMunzel),
                    ],
                )?;
                (v != RankFallback::default()).then_some(v)
            }
        };
        // A key that changes nothing is refused rather than ignored: the
        // trimming proportion reaches the trimmed t (preregistered, or as
        // a robustness check), the number of permutations Brunner–Munzel
        // (preregistered, the `checked` rule's fallback, or a robustness
        // check, for independent groups only).
        let robustness = r.robustness.unwrap_or(true);
        let trim = match &r.trim {
            None => None,
            Some(t) => {
                if !(method.is_trimmed() || robustness) {
                    return Err(self
                        .at(t, "`trim` is used only by the trimmed-mean t, which this hypothesis does not run")
                        .help("remove it, or preregister `method = \"trimmed-t\"` (or keep `robustness` on to report it as a check)"));
                }
                let v = t.get_ref().0;
                if !(0.0..0.5).contains(&v) {
                    return Err(self
                        .at(
                            t,
                            format!("`trim` must be at least 0 and below 0.5, found {v}"),
                        )
                        .help(format!(
                            "the proportion cut from each end; {DEFAULT_TRIM} is usual"
                        )));
                }
                (v != DEFAULT_TRIM).then_some(v)
            }
        };
        let permutations = match &r.permutations {
            None => None,
            Some(p) => {
                let runs_bm = design == Design::Independent
                    && (method == Method::BrunnerMunzel
                        || robustness
                        || rank_fallback == Some(RankFallback::BrunnerMunzel));
                if !runs_bm {
                    return Err(self
                        .at(p, "`permutations` is used only by Brunner–Munzel, which this hypothesis does not run")
                        .help("remove it, or preregister `method = \"brunner-munzel\"` for independent groups"));
                }
                let v = *p.get_ref();
                let max = crate::stats::brunner_munzel::MAX_PERMUTATIONS as i64;
                if !(1..=max).contains(&v) {
                    return Err(self
                        .at(
                            p,
                            format!("`permutations` must be between 1 and {max}, found {v}"),
                        )
                        .help(format!("{DEFAULT_PERMUTATIONS} is usual")));
                }
                (v as u64 != DEFAULT_PERMUTATIONS).then_some(v as u64)
            }
        };
        Ok(Conventions {
            zero_differences,
            continuity_correction,
            trim,
            permutations,
            rank_fallback,
        })
    }

    fn planning(
        &self,
        design: Design,
        method: Method,
        p: &Spanned<RawPlanning>,
    ) -> Result<Planning> {
        let r = p.get_ref();
        let positive = |v: &Option<Spanned<Num>>, key: &str| -> Result<Option<f64>> {
            match v {
                None => Ok(None),
                Some(s) if s.get_ref().0.is_finite() && s.get_ref().0 > 0.0 => Ok(Some(s.get_ref().0)),
                Some(s) => Err(self
                    .at(s, format!("`{key}` must be a positive number"))
                    .help("write the size of the effect in the tested direction, e.g. 0.4; the direction comes from `alternative`")),
            }
        };
        let effect = positive(&r.effect, "effect")?;
        let difference = positive(&r.difference, "difference")?;
        let sd = positive(&r.sd, "sd")?;
        match (effect, difference, sd) {
            (Some(_), None, None) | (None, Some(_), Some(_)) => {}
            _ => {
                return Err(self
                    .at(p, "planning needs the smallest effect of interest: either `effect` (Cohen's d) or both `difference` and `sd`")
                    .help("e.g. `effect = 0.4`, or `difference = 20` with `sd = 50` in the outcome's units"))
            }
        }
        let power = match &r.power {
            Some(s) if s.get_ref().0 > 0.0 && s.get_ref().0 < 1.0 => s.get_ref().0,
            Some(s) => {
                return Err(self
                    .at(s, "`power` must lie strictly between 0 and 1")
                    .help("0.8 or 0.9 are usual"))
            }
            None => {
                return Err(self
                    .at(p, "planning needs a target `power`")
                    .help("add for example `power = 0.9`"))
            }
        };
        let ratio = positive(&r.ratio, "ratio")?;
        let sd_ratio = positive(&r.sd_ratio, "sd_ratio")?;
        if design != Design::Independent {
            if let Some(s) = r.ratio.as_ref().or(r.sd_ratio.as_ref()) {
                return Err(self
                    .at(
                        s,
                        "`ratio` and `sd_ratio` apply to independent designs only",
                    )
                    .help("remove them from this planning block"));
            }
        }
        if method == Method::TrimmedT {
            return Err(self
                .at(p, "sample-size planning is computed for the t-tests and the rank tests, not for trimmed-t")
                .help("remove `[hypothesis.planning]`, or plan with the t-test for the same design (`attest power`) and state in the plan's summary why the trimmed t is run"));
        }
        if sd_ratio.is_some() && method != Method::WelchT {
            return Err(self
                .at(
                    r.sd_ratio.as_ref().expect("sd_ratio present"),
                    "`sd_ratio` is used only when the method is welch-t",
                )
                .help("remove `sd_ratio`, or preregister welch-t"));
        }
        Ok(Planning {
            effect,
            difference,
            sd,
            power,
            ratio: ratio.unwrap_or(1.0),
            sd_ratio,
        })
    }

    /// Keys that the design does not use are errors, named one by one,
    /// before anything else about the hypothesis is judged: a stray key is
    /// the first thing to fix. Returns the keys the design uses.
    fn unused_keys(&self, design: Design, r: &RawHypothesis) -> Result<&'static [&'static str]> {
        let used: &[&str] = match design {
            Design::Independent => &["group", "levels"],
            Design::Paired if r.first.is_some() || r.second.is_some() => &["first", "second"],
            Design::Paired => &["pair_by", "condition", "levels"],
            Design::OneSample => &["reference"],
        };
        let present: [(&str, Option<std::ops::Range<usize>>); 7] = [
            ("group", r.group.as_ref().map(|s| s.span())),
            ("levels", r.levels.as_ref().map(|s| s.span())),
            ("first", r.first.as_ref().map(|s| s.span())),
            ("second", r.second.as_ref().map(|s| s.span())),
            ("pair_by", r.pair_by.as_ref().map(|s| s.span())),
            ("condition", r.condition.as_ref().map(|s| s.span())),
            ("reference", r.reference.as_ref().map(|s| s.span())),
        ];
        for (key, span) in &present {
            if let Some(span) = span {
                if !used.contains(key) {
                    let (l, c) = line_col(self.text, span.start);
                    let wide = design == Design::Paired
                        && used.contains(&"first")
                        && ["levels", "pair_by", "condition"].contains(key);
                    let (what, help) = if wide {
                        (
                            format!(
                                "`{key}` is not used by the paired design with `first`/`second` columns"
                            ),
                            format!(
                                "remove `{key}` (the wide layout compares the columns `first` and \
                                 `second`, one unit per row), or use the long layout instead: \
                                 `outcome`, `pair_by`, `condition` and `levels`, without \
                                 `first`/`second`"
                            ),
                        )
                    } else {
                        (
                            format!("`{key}` is not used by the {} design", design.as_str()),
                            format!(
                                "remove `{key}`; the {} design uses: {}",
                                design.as_str(),
                                used.join(", ")
                            ),
                        )
                    };
                    return Err(Failure::input(what).at(self.path, l, Some(c)).help(help));
                }
            }
        }
        Ok(used)
    }

    fn comparison(
        &self,
        id: &str,
        design: Design,
        r: &RawHypothesis,
        h: &Spanned<RawHypothesis>,
    ) -> Result<Comparison> {
        let used = self.unused_keys(design, r)?;
        let need = |v: &Option<Spanned<String>>, key: &str| -> Result<String> {
            match v {
                Some(s) if !s.get_ref().trim().is_empty() => Ok(s.get_ref().clone()),
                Some(s) => Err(self
                    .at(s, format!("`{key}` is empty"))
                    .help(format!("name a column in `{key}`"))),
                None => Err(self
                    .at(
                        h,
                        format!(
                            "hypothesis {id} ({} design) has no `{key}`",
                            design.as_str()
                        ),
                    )
                    .help(format!(
                        "add `{key}`; this design uses: {}",
                        used.join(", ")
                    ))),
            }
        };
        let levels = || -> Result<[String; 2]> {
            match &r.levels {
                Some(l) if l.get_ref().len() == 2 && l.get_ref()[0] != l.get_ref()[1] => {
                    Ok([l.get_ref()[0].clone(), l.get_ref()[1].clone()])
                }
                Some(l) => Err(self
                    .at(l, "`levels` must name two different values: [first, second]")
                    .help("effects are computed as first − second, e.g. `levels = [\"long\", \"standard\"]`")),
                None => Err(self
                    .at(h, format!("hypothesis {id} has no `levels`"))
                    .help("add `levels = [\"first\", \"second\"]`; effects are first − second")),
            }
        };
        Ok(match design {
            Design::Independent => Comparison::Groups {
                group: need(&r.group, "group")?,
                levels: levels()?,
            },
            Design::Paired if used.contains(&"first") => Comparison::PairedColumns {
                first: need(&r.first, "first")?,
                second: need(&r.second, "second")?,
            },
            Design::Paired => Comparison::PairedRows {
                pair_by: need(&r.pair_by, "pair_by")?,
                condition: need(&r.condition, "condition")?,
                levels: levels()?,
            },
            Design::OneSample => match &r.reference {
                Some(v) if v.get_ref().0.is_finite() => Comparison::Reference {
                    reference: v.get_ref().0,
                },
                Some(v) => {
                    return Err(self
                        .at(v, "`reference` must be a finite number")
                        .help("write the published value, e.g. `reference = 3.5`"))
                }
                None => {
                    return Err(self
                        .at(
                            h,
                            format!("hypothesis {id} (one-sample design) has no `reference`"),
                        )
                        .help("add the value to compare against, e.g. `reference = 3.5`"))
                }
            },
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    const GOOD: &str = r#"attest = 1
title = "Loaf volume"
[data]
path = "data/loaves.csv"
[[hypothesis]]
id = "H1"
claim = "Long proofing gives larger loaves."
design = "independent"
outcome = "volume_ml"
group = "proof"
levels = ["long", "standard"]
alternative = "greater"
method = "welch-t"
"#;

    #[test]
    fn fills_defaults() {
        let f = parse(Path::new("a.toml"), GOOD).unwrap();
        assert_eq!(f.plan.alpha, 0.05);
        assert_eq!(f.plan.confidence, 0.95);
        assert_eq!(f.plan.correction, Correction::Holm);
        assert_eq!(f.plan.data.delimiter, ',');
        assert_eq!(f.plan.hypotheses[0].alternative, Alternative::Greater);
    }

    #[test]
    fn unknown_key_suggests_the_near_one() {
        let text = GOOD.replace("alternative =", "alternativ =");
        let e = parse(Path::new("a.toml"), &text).unwrap_err();
        assert_eq!(e.location.as_ref().unwrap().line, Some(12));
        assert!(e.help.unwrap().starts_with("did you mean `alternative`?"));
    }

    #[test]
    fn design_keys_are_checked() {
        let text = GOOD
            .replace("design = \"independent\"", "design = \"paired\"")
            .replace("welch-t", "paired-t");
        let e = parse(Path::new("a.toml"), &text).unwrap_err();
        assert_eq!(e.what, "`group` is not used by the paired design");
    }

    #[test]
    fn table_names_get_a_did_you_mean_too() {
        let known = ["data", "exclude", "hypothesis", "deviation"];
        assert_eq!(closest("exclusion", &known), Some("exclude"));
        assert_eq!(closest("hypotheses", &known), Some("hypothesis"));
        assert_eq!(closest("Deviations", &known), Some("deviation"));
        assert_eq!(closest("notes", &known), None);
        let text = format!("{GOOD}[[exclusion]]\nreason = \"x\"\n");
        let e = parse(Path::new("a.toml"), &text).unwrap_err();
        assert_eq!(e.what, "unknown table `[[exclusion]]`");
        assert!(e.help.unwrap().starts_with("did you mean `[[exclude]]`?"));
    }

    #[test]
    fn a_value_of_the_wrong_type_names_its_key_and_the_fix() {
        let text = GOOD.replace(
            "title = \"Loaf volume\"",
            "title = \"Loaf volume\"\nalpha = \"0.05\"",
        );
        let e = parse(Path::new("a.toml"), &text).unwrap_err();
        assert_eq!(
            e.what,
            "`alpha` takes a number, but here it is the text \"0.05\""
        );
        assert_eq!(
            e.help.unwrap(),
            "write the number without quotes: `alpha = 0.05`"
        );
    }

    #[test]
    fn one_sided_is_answered_with_the_two_directions() {
        let text = GOOD.replace("\"greater\"", "\"one-sided\"");
        let e = parse(Path::new("a.toml"), &text).unwrap_err();
        let help = e.help.unwrap();
        assert!(
            help.contains("\"greater\"") && help.contains("\"less\""),
            "{help}"
        );
        assert!(!help.contains("did you mean"), "{help}");
        assert!(is_one_sided_name("One-tailed"));
        assert!(!is_one_sided_name("two-sided"));
    }

    #[test]
    fn a_key_the_design_does_not_use_comes_before_the_method() {
        let text = GOOD
            .replace("design = \"independent\"", "design = \"paired\"")
            .replace(
                "outcome = \"volume_ml\"\ngroup = \"proof\"\n",
                "first = \"a\"\nsecond = \"b\"\n",
            );
        let e = parse(Path::new("a.toml"), &text).unwrap_err();
        assert_eq!(
            e.what,
            "`levels` is not used by the paired design with `first`/`second` columns"
        );
    }

    #[test]
    fn other_kinds_of_file_are_refused_before_parsing() {
        let e = load(Path::new("out/x/report.md")).unwrap_err();
        assert!(
            e.what
                .starts_with("this is a report or document, not an analysis file"),
            "{}",
            e.what
        );
        let e = load(Path::new("analyses/x.lock")).unwrap_err();
        assert!(
            e.what.starts_with("this is a lock, not an analysis file"),
            "{}",
            e.what
        );
    }

    #[test]
    fn edit_distance_is_levenshtein() {
        // Classic example (common practice): kitten → sitting needs 3 edits.
        assert_eq!(edit_distance("kitten", "sitting"), 3);
        assert_eq!(edit_distance("", "abc"), 3);
    }

    #[test]
    fn conventions_are_read_and_defaults_stay_absent() {
        let paired = GOOD
            .replace("design = \"independent\"", "design = \"paired\"")
            .replace(
                "group = \"proof\"\nlevels = [\"long\", \"standard\"]\n",
                "first = \"a\"\nsecond = \"b\"\n",
            )
            .replace("outcome = \"volume_ml\"\n", "")
            .replace("welch-t", "wilcoxon-signed-rank");
        let keep = paired.replace(
            "method =",
            "zero_differences = \"keep-in-ranking\"\ncontinuity_correction = false\nmethod =",
        );
        let c = parse(Path::new("a.toml"), &keep).unwrap().plan.hypotheses[0].conventions;
        assert_eq!(c.zero_differences, Some(ZeroRule::KeepInRanking));
        assert_eq!(c.rank_options().zeros, ZeroRule::KeepInRanking);
        assert!(!c.rank_options().continuity);
        // Writing the defaults is the same plan as leaving them out.
        let defaults = paired.replace(
            "method =",
            "zero_differences = \"drop\"\ncontinuity_correction = true\nmethod =",
        );
        let a = parse(Path::new("a.toml"), &defaults).unwrap().plan;
        let b = parse(Path::new("a.toml"), &paired).unwrap().plan;
        assert!(a.hypotheses[0].conventions.is_default());
        assert_eq!(
            super::super::canonical::plan_hash(&a),
            super::super::canonical::plan_hash(&b)
        );
    }

    #[test]
    fn conventions_are_checked() {
        let bad =
            |from: &str, to: &str| parse(Path::new("a.toml"), &GOOD.replace(from, to)).unwrap_err();
        let e = bad("method =", "zero_differences = \"drop\"\nmethod =");
        assert!(e.what.contains("paired and one-sample designs only"));
        // A key that would change nothing is refused, not ignored.
        let no_robustness = |key: &str| {
            parse(
                Path::new("a.toml"),
                &GOOD.replace("method =", &format!("robustness = false\n{key}\nmethod =")),
            )
            .unwrap_err()
        };
        assert!(no_robustness("trim = 0.1")
            .what
            .contains("used only by the trimmed-mean t"));
        assert!(no_robustness("permutations = 2000")
            .what
            .contains("used only by Brunner–Munzel"));
        let e = bad("method =", "rank_fallback = \"brunner-munzel\"\nmethod =");
        assert!(
            e.what.contains("only by `method = \"checked\"`"),
            "{}",
            e.what
        );
        // Ranges, each side of the boundary.
        let with = |from: &str, to: &str| parse(Path::new("a.toml"), &GOOD.replace(from, to));
        for (key, ok) in [
            ("trim = 0.0", true),
            ("trim = 0.49", true),
            ("trim = 0.5", false),
            ("trim = -0.01", false),
            ("permutations = 1", true),
            ("permutations = 10000000", true),
            ("permutations = 10000001", false),
            ("permutations = 0", false),
        ] {
            let r = with("method =", &format!("{key}\nmethod ="));
            assert_eq!(r.is_ok(), ok, "{key}");
        }
        // Used where they apply, stored only when not the default.
        let c = with(
            "method = \"welch-t\"",
            "method = \"checked\"\nrank_fallback = \"brunner-munzel\"\npermutations = 500\ntrim = 0.1",
        )
        .unwrap()
        .plan
        .hypotheses[0]
            .conventions;
        assert_eq!(c.rank_fallback(), RankFallback::BrunnerMunzel);
        assert_eq!((c.permutations(), c.trim()), (500, 0.1));
        let d = with(
            "method = \"welch-t\"",
            "method = \"trimmed-t\"\ntrim = 0.2\npermutations = 10000",
        )
        .unwrap()
        .plan
        .hypotheses[0]
            .conventions;
        assert!(d.is_default());
        // Paired designs never run Brunner–Munzel.
        let paired = GOOD
            .replace("design = \"independent\"", "design = \"paired\"")
            .replace(
                "group = \"proof\"\nlevels = [\"long\", \"standard\"]",
                "first = \"after\"\nsecond = \"before\"",
            )
            .replace("outcome = \"volume_ml\"\n", "")
            .replace("welch-t", "trimmed-t");
        let e = parse(
            Path::new("a.toml"),
            &paired.replace("method =", "permutations = 100\nmethod ="),
        )
        .unwrap_err();
        assert!(e.what.contains("used only by Brunner–Munzel"));
        assert!(parse(
            Path::new("a.toml"),
            &paired.replace("method =", "trim = 0.1\nmethod =")
        )
        .is_ok());
    }

    #[test]
    fn equivalence_bounds_fit_their_method() {
        let with = |method: &str, bounds: &str| {
            parse(
                Path::new("a.toml"),
                &GOOD.replace("alternative = \"greater\"\n", "").replace(
                    "\"welch-t\"",
                    &format!("\"{method}\"\nequivalence = {bounds}"),
                ),
            )
        };
        assert!(with("mann-whitney", "[-20, 20]").is_ok());
        assert!(with("trimmed-t", "[-20, 20]").is_ok());
        assert!(with("brunner-munzel", "[0.4, 0.6]").is_ok());
        assert!(with("brunner-munzel", "[0, 1]").is_ok());
        let e = with("brunner-munzel", "[-20, 20]").unwrap_err();
        assert!(e.what.contains("probability of superiority"), "{}", e.what);
        assert!(with("brunner-munzel", "[0.4, 1.01]").is_err());
        let e = with("checked", "[-20, 20]").unwrap_err();
        assert!(e.what.contains("need a fixed method"), "{}", e.what);
    }
}
