//! The data layer as a user meets it: fixture files in every supported
//! layout and format (expected values worked out by hand from the files in
//! tests/data/), and a table of malformed inputs, each with the exact
//! message the user reads or, where the data are usable, the counts.

use attest::data::{load, select, Selected};
use attest::plan::validate::parse;
use attest::plan::Plan;
use std::path::Path;

const INDEPENDENT: &str = r#"
[[hypothesis]]
id = "H1"
claim = "The first group scores higher."
design = "independent"
outcome = "y"
group = "g"
levels = ["a", "b"]
method = "welch-t"
"#;

const PAIRED_LONG: &str = r#"
[[hypothesis]]
id = "H1"
claim = "Scores drop after the session."
design = "paired"
outcome = "y"
pair_by = "u"
condition = "c"
levels = ["pre", "post"]
method = "paired-t"
"#;

/// A plan reading `path` with extra `[data]` keys, extra top-level blocks and one hypothesis.
fn plan(path: &str, data_keys: &str, blocks: &str) -> Plan {
    let text = format!(
        "attest = 1\ntitle = \"Data test\"\n[data]\npath = \"{path}\"\n{data_keys}\n{blocks}"
    );
    parse(Path::new("a.toml"), &text)
        .unwrap_or_else(|e| panic!("{e}\n{text}"))
        .plan
}

fn run(dir: &Path, plan: &Plan) -> Result<Selected, String> {
    let ds = load(plan, dir).map_err(|e| e.to_string())?;
    select(&ds, plan, &plan.hypotheses[0]).map_err(|e| e.to_string())
}

fn fixtures() -> &'static Path {
    Path::new(concat!(env!("CARGO_MANIFEST_DIR"), "/tests/data"))
}

fn sum(x: &[f64]) -> f64 {
    x.iter().sum()
}

#[test]
fn semicolon_file_with_decimal_commas_bom_and_crlf() {
    let hyp = INDEPENDENT
        .replace("\"y\"", "\"volume_ml\"")
        .replace("\"g\"", "\"proof\"");
    let hyp = hyp.replace("[\"a\", \"b\"]", "[\"long\", \"standard\"]");
    let p = plan(
        "semicolon_comma.csv",
        "delimiter = \";\"\ndecimal = \",\"",
        &hyp,
    );
    let s = run(fixtures(), &p).unwrap();
    // long: 812,5 + 799 + 805,5 = 2417 (row 6 is NA); standard: 780,25 + 790,75 + 770 = 2341.
    assert_eq!(s.first, [812.5, 799.0, 805.5]);
    assert_eq!(s.second, [780.25, 790.75, 770.0]);
    assert_eq!((sum(&s.first), sum(&s.second)), (2417.0, 2341.0));
    assert_eq!(s.flow.read, [4, 3]);
    assert_eq!(s.flow.missing, [1, 0]);
    assert_eq!(s.flow.other_levels, 1, "the row of \"short\"");
    assert_eq!(s.flow.no_group, 1, "row 9 has an empty group cell");
    assert_eq!(s.flow.analysed, [3, 3]);
}

#[test]
fn na_cells_are_dropped_listwise_and_counted() {
    let hyp = INDEPENDENT
        .replace("\"y\"", "\"yield_kg\"")
        .replace("\"g\"", "\"fertiliser\"");
    let hyp = hyp.replace("[\"a\", \"b\"]", "[\"organic\", \"mineral\"]");
    let s = run(fixtures(), &plan("with_na.csv", "", &hyp)).unwrap();
    // organic: 4.2, NA, 4.6, N/A, 5.2; mineral: 3.9, "", ".", 4.1; A5's group is NA.
    assert_eq!(s.first, [4.2, 4.6, 5.2]);
    assert_eq!(s.second, [3.9, 4.1]);
    assert_eq!(s.flow.read, [5, 4]);
    assert_eq!(s.flow.missing, [2, 2]);
    assert_eq!(s.flow.no_group, 1);
    assert_eq!(s.flow.analysed, [3, 2]);
}

#[test]
fn long_layout_pairs_units_and_drops_incomplete_ones() {
    let hyp = PAIRED_LONG
        .replace("\"y\"", "\"seconds\"")
        .replace("\"u\"", "\"runner\"")
        .replace("\"c\"", "\"session\"")
        .replace("[\"pre\", \"post\"]", "[\"before\", \"after\"]");
    let s = run(fixtures(), &plan("paired_long.csv", "", &hyp)).unwrap();
    // Units in order of first appearance; R4 has no "after" row, R5's is NA,
    // R6's "after" row comes first in the file; R7 is a warm-up (other level).
    assert_eq!(s.first, [62.0, 58.5, 65.25, 60.0]);
    assert_eq!(s.second, [60.5, 57.0, 63.75, 59.0]);
    let d: Vec<f64> = s.first.iter().zip(&s.second).map(|(a, b)| a - b).collect();
    assert_eq!(d, [1.5, 1.5, 1.5, 1.0]);
    assert_eq!(s.flow.read, [6, 5]);
    assert_eq!(s.flow.missing, [0, 1]);
    assert_eq!(s.flow.incomplete_pairs, 2);
    assert_eq!(s.flow.unpaired, [2, 0]);
    assert_eq!(s.flow.other_levels, 1);
    assert_eq!(s.flow.analysed, [4, 4]);
}

#[test]
fn workbook_sheet_by_name_with_numbers_stored_as_text() {
    let hyp = INDEPENDENT
        .replace("\"y\"", "\"volume_ml\"")
        .replace("\"g\"", "\"proof\"");
    let hyp = hyp.replace("[\"a\", \"b\"]", "[\"long\", \"standard\"]");
    let s = run(fixtures(), &plan("bakes.xlsx", "sheet = \"Bakes\"", &hyp)).unwrap();
    // See tests/data/make_xlsx.py: long 812.5, "799.5", empty; standard 780, " 790.25 ", "NA"; one "rye".
    assert_eq!(s.first, [812.5, 799.5]);
    assert_eq!(s.second, [780.0, 790.25]);
    assert_eq!(s.flow.missing, [1, 1]);
    assert_eq!(s.flow.other_levels, 1);
    // Without `sheet` the first sheet ("Notes") is read, which lacks the columns.
    let e = run(fixtures(), &plan("bakes.xlsx", "", &hyp)).unwrap_err();
    assert!(
        e.starts_with("error: bakes.xlsx[Notes]:1: the plan uses column \"volume_ml\""),
        "{e}"
    );
}

#[test]
fn workbook_errors_give_sheet_row_and_column() {
    let hyp = INDEPENDENT
        .replace("\"y\"", "\"volume_ml\"")
        .replace("\"g\"", "\"proof\"");
    let hyp = hyp.replace("[\"a\", \"b\"]", "[\"long\", \"standard\"]");
    let e = run(fixtures(), &plan("bakes.xlsx", "sheet = \"Shifted\"", &hyp)).unwrap_err();
    assert_eq!(
        e,
        "error: bakes.xlsx[Shifted]:5:4: column \"volume_ml\": \"12x\" is not a number\n\
         help: fix the cell, or list its text under `missing` in [data] if it means a missing value"
    );
    let e = run(fixtures(), &plan("bakes.xlsx", "sheet = \"Bake\"", &hyp)).unwrap_err();
    assert_eq!(
        e,
        "error: bakes.xlsx: the workbook has no sheet named \"Bake\"\n\
         help: the sheets are: \"Notes\", \"Bakes\", \"Shifted\""
    );
}

#[test]
fn exclusion_rules_apply_in_order_and_are_counted_per_group() {
    let hyp = INDEPENDENT
        .replace("\"y\"", "\"rt_ms\"")
        .replace("\"g\"", "\"arm\"");
    let rules = r#"
[[exclude]]
reason = "no consent"
column = "consent"
values = ["no"]
[[exclude]]
reason = "anticipation"
column = "rt_ms"
below = 100
[[exclude]]
reason = "far out overall"
column = "rt_ms"
outlier = "tukey-fences"
limit = 1.5
[[exclude]]
reason = "far from the arm's median"
column = "rt_ms"
outlier = "median-distance"
limit = 2.5
by = "arm"
"#;
    let s = run(
        fixtures(),
        &plan("exclusions.csv", "", &format!("{rules}{hyp}")),
    )
    .unwrap();
    // By hand: id 8 has no consent; id 12 (50 ms) is below 100. Tukey over the 12
    // values left: type-7 Q1 = 337.5, Q3 = 442.5, IQR 105, fences 180 and 600 →
    // 2000 and 5000 go. Arm b's median of 300, 320, 330, 340, 372 is 330, MAD 10,
    // 2.5·1.4826·10 = 37.065 < 42 → 372 goes; arm a (410…450) keeps all.
    assert_eq!(s.first, [410.0, 420.0, 430.0, 440.0, 450.0]);
    assert_eq!(s.second, [300.0, 320.0, 330.0, 340.0]);
    let steps: Vec<[usize; 3]> = s
        .flow
        .rules
        .iter()
        .map(|r| [r.first, r.second, r.other])
        .collect();
    assert_eq!(steps, [[0, 1, 0], [0, 1, 0], [2, 0, 0], [0, 1, 0]]);
    assert_eq!(s.flow.rules[3].reason, "far from the arm's median");
    assert_eq!(s.flow.read, [7, 8]);
    assert_eq!(
        s.flow.missing,
        [0, 1],
        "id 13 has no time; the range rule leaves it"
    );
    assert_eq!(s.flow.analysed, [5, 4]);
}

/// What a malformed input must give.
enum Expect {
    /// The exact message.
    Error(&'static str),
    /// Usable: the values of the two groups.
    Values(&'static [f64], &'static [f64]),
}

struct Case {
    name: &'static str,
    file: &'static [u8],
    data_keys: &'static str,
    hyp: &'static str,
    expect: Expect,
}

fn cases() -> Vec<Case> {
    use Expect::*;
    let c = |name, file, data_keys, hyp, expect| Case {
        name,
        file,
        data_keys,
        hyp,
        expect,
    };
    vec![
        c("empty file", b"", "", INDEPENDENT, Error("error: d.csv: the data file is empty\nhelp: the file needs a header row naming the columns, then one row per observation")),
        c("blank lines only", b"\n\r\n\n", "", INDEPENDENT, Error("error: d.csv: the data file is empty\nhelp: the file needs a header row naming the columns, then one row per observation")),
        c("header only", b"g,y\n", "", INDEPENDENT, Error("error: d.csv:1: the data file has a header row but no data rows\nhelp: check that the file was saved completely")),
        c("ragged row", b"g,y\na,1\nb\n", "", INDEPENDENT, Error("error: d.csv:3:2: this row has 1 field, the header has 2 fields\nhelp: every row needs one field per header column; check for a missing or extra delimiter, or an unquoted delimiter inside a value")),
        c("trailing delimiter on data rows", b"g,y\na,1,\nb,2,\n", "", INDEPENDENT, Error("error: d.csv:2:3: this row has 3 fields, the header has 2 fields\nhelp: the row ends with an extra delimiter; remove it, or add it to the header row as well")),
        c("trailing delimiter on every line", b"g,y,\na,1,\nb,2,\n", "", INDEPENDENT, Values(&[1.0], &[2.0])),
        c("wrong delimiter", b"g;y\na;1\nb;2\n", "", INDEPENDENT, Error("error: d.csv:1: the header row reads as one column, \"g;y\"; the delimiter looks like \";\", not \",\"\nhelp: set `delimiter = \";\"` in [data]")),
        c("text in a numeric column", b"g,y\na,1\nb,12x\n", "", INDEPENDENT, Error("error: d.csv:3:2: column \"y\": \"12x\" is not a number\nhelp: fix the cell, or list its text under `missing` in [data] if it means a missing value")),
        c("decimal comma not declared", b"g;y\na;1,5\nb;2\n", "delimiter = \";\"", INDEPENDENT, Error("error: d.csv:2:2: column \"y\": \"1,5\" is not a number\nhelp: the number is written with a decimal comma; add `decimal = \",\"` to [data]")),
        c("decimal point in a decimal-comma file", b"g;y\na;1,5\nb;2.5\n", "delimiter = \";\"\ndecimal = \",\"", INDEPENDENT, Error("error: d.csv:3:2: column \"y\": \"2.5\" is not a number\nhelp: the plan says `decimal = \",\"` but this cell uses a decimal point; write every number the same way")),
        c("unknown column", b"grp,y\na,1\nb,2\n", "", INDEPENDENT, Error("error: d.csv:1: the plan uses column \"g\", which is not in the header\nhelp: did you mean \"grp\"? The header names: \"grp\", \"y\"")),
        c("non-UTF-8 label", b"g,y\na,1\n\xff,2\n", "", INDEPENDENT, Error("error: d.csv:3:1: column \"g\": the cell is not valid UTF-8 text\nhelp: save the data file as UTF-8 (most spreadsheet programs offer \"CSV UTF-8\")")),
        c("non-UTF-8 in a numeric cell", b"g,y\na,1\nb,2\xe9\n", "", INDEPENDENT, Error("error: d.csv:3:2: column \"y\": the cell is not valid UTF-8 text\nhelp: save the data file as UTF-8 (most spreadsheet programs offer \"CSV UTF-8\")")),
        c("huge number", b"g,y\na,1e400\nb,2\n", "", INDEPENDENT, Error("error: d.csv:2:2: column \"y\": \"1e400\" is too large to be a number (beyond ±1.8e308)\nhelp: check the cell; a value this large is almost always a typing or export error")),
        c("inf", b"g,y\na,inf\nb,2\n", "", INDEPENDENT, Error("error: d.csv:2:2: column \"y\": \"inf\" is not a finite number\nhelp: attest does not analyse infinite or undefined values; if \"inf\" means a missing value, list it under `missing` in [data]")),
        c("nan", b"g,y\na,1\nb,nan\n", "", INDEPENDENT, Error("error: d.csv:3:2: column \"y\": \"nan\" is not a finite number\nhelp: attest does not analyse infinite or undefined values; if \"nan\" means a missing value, list it under `missing` in [data]")),
        c("nan listed as missing", b"g,y\na,1\nb,nan\nb,3\n", "missing = [\"nan\"]", INDEPENDENT, Values(&[1.0], &[3.0])),
        c("duplicate used header", b"g,y,y\na,1,2\nb,2,3\n", "", INDEPENDENT, Error("error: d.csv:1:3: column \"y\" appears 2 times in the header (columns 2, 3)\nhelp: rename the duplicates so every column the plan uses has one clear name")),
        c("duplicate unused header", b"g,y,z,z\na,1,0,0\nb,2,0,0\n", "", INDEPENDENT, Values(&[1.0], &[2.0])),
        c("byte-order mark", b"\xef\xbb\xbfg,y\na,1\nb,2\n", "", INDEPENDENT, Values(&[1.0], &[2.0])),
        c("CRLF line ends", b"g,y\r\na,1\r\nb,2\r\n", "", INDEPENDENT, Values(&[1.0], &[2.0])),
        c("spaces around cells", b"g,y\n a , 1.5 \nb,\t2\n", "", INDEPENDENT, Values(&[1.5], &[2.0])),
        c("missing level", b"g,y\na,1\nc,2\n", "", INDEPENDENT, Error("error: d.csv: column \"g\" has no rows with the level \"b\" that the plan names\nhelp: the levels in the data are: \"a\", \"c\"; levels must match the cells exactly, including case")),
        c("level differs in case", b"g,y\na,1\nB,2\n", "", INDEPENDENT, Error("error: d.csv: column \"g\" has no rows with the level \"b\" that the plan names\nhelp: the levels in the data are: \"a\", \"B\"; levels must match the cells exactly, including case")),
        c("duplicate pair ids", b"u,c,y\n1,pre,5\n1,post,4\n1,pre,6\n", "", PAIRED_LONG, Error("error: d.csv:4:1: u \"1\" has two rows with c \"pre\" (lines 2 and 4)\nhelp: a paired long layout needs exactly one row per u and c; remove or relabel the duplicate")),
        c("quoted line break keeps line numbers", b"g,y,note\na,1,\"two\nlines\"\nb,x,z\n", "", INDEPENDENT, Error("error: d.csv:4:2: column \"y\": \"x\" is not a number\nhelp: fix the cell, or list its text under `missing` in [data] if it means a missing value")),
        c("blank line keeps line numbers", b"g,y\na,1\n\nb,zz\n", "", INDEPENDENT, Error("error: d.csv:4:2: column \"y\": \"zz\" is not a number\nhelp: fix the cell, or list its text under `missing` in [data] if it means a missing value")),
        c("one column as group and outcome", b"g,y\na,1\nb,2\n", "", "[[hypothesis]]\nid = \"H1\"\nclaim = \"c\"\ndesign = \"independent\"\noutcome = \"y\"\ngroup = \"y\"\nlevels = [\"1\", \"2\"]\nmethod = \"welch-t\"\n", Values(&[1.0], &[2.0])),
        c("no usable values in a group", b"g,y\na,1\nb,NA\n", "", INDEPENDENT, Values(&[1.0], &[])),
    ]
}

#[test]
fn malformed_inputs_give_positioned_messages_or_documented_counts() {
    let dir = tempfile::tempdir().unwrap();
    let mut failed = Vec::new();
    for case in cases() {
        std::fs::write(dir.path().join("d.csv"), case.file).unwrap();
        let p = plan("d.csv", case.data_keys, case.hyp);
        let got = run(dir.path(), &p);
        let ok = match (&case.expect, &got) {
            (Expect::Error(msg), Err(e)) => e == msg,
            (Expect::Values(a, b), Ok(s)) => s.first == *a && s.second == *b,
            _ => false,
        };
        if !ok {
            failed.push(format!(
                "{}: got {:?}",
                case.name,
                got.map(|s| (s.first, s.second))
            ));
        }
    }
    assert!(cases().len() >= 20);
    assert!(failed.is_empty(), "\n{}", failed.join("\n"));
}

#[test]
fn a_file_that_is_not_a_workbook_is_refused() {
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(dir.path().join("d.xlsx"), b"g,y\na,1\n").unwrap();
    let e = run(dir.path(), &plan("d.xlsx", "", INDEPENDENT)).unwrap_err();
    assert!(
        e.starts_with("error: d.xlsx: the file cannot be read as an Excel workbook"),
        "{e}"
    );
    assert!(
        e.ends_with("help: save the file as .xlsx (Excel Workbook), or export it as CSV"),
        "{e}"
    );
}

#[test]
fn the_examples_in_docs_data_md_are_valid_plans() {
    let doc =
        std::fs::read_to_string(concat!(env!("CARGO_MANIFEST_DIR"), "/docs/data.md")).unwrap();
    let blocks: Vec<&str> = doc
        .split("```toml\n")
        .skip(1)
        .map(|b| b.split("```").next().unwrap_or(""))
        .collect();
    assert_eq!(blocks.len(), 2, "one [data] and one [[exclude]] example");
    let hyp = INDEPENDENT
        .replace("\"y\"", "\"volume_ml\"")
        .replace("\"g\"", "\"proof\"");
    let text = format!(
        "attest = 1\ntitle = \"Doc\"\n{}\n{}\n{}",
        blocks[0], blocks[1], hyp
    );
    let p = parse(Path::new("a.toml"), &text).unwrap_or_else(|e| panic!("{e}"));
    assert_eq!(p.plan.data.delimiter, ';');
    assert_eq!(p.plan.exclude.len(), 3);
}

proptest::proptest! {
    #![proptest_config(proptest::prelude::ProptestConfig::with_cases(300))]

    /// Any bytes at all give either values or a positioned message, never a panic.
    #[test]
    fn any_bytes_give_values_or_a_message(body in proptest::collection::vec(
        proptest::sample::select(vec![
            &b"a"[..], b"b", b"c", b",", b";", b"\n", b"\r\n", b"\"", b"1", b"2.5", b"-", b"e", b"NA",
            b"inf", b" ", b"\xff", b"\xef\xbb\xbf", b"1e400", b",,",
        ]),
        0..60,
    ), paired in proptest::bool::ANY) {
        let dir = tempfile::tempdir().unwrap();
        let mut file = b"u,c,g,y\n".to_vec();
        file.extend(body.concat());
        std::fs::write(dir.path().join("d.csv"), &file).unwrap();
        let hyp = if paired {
            PAIRED_LONG.replace("[\"pre\", \"post\"]", "[\"a\", \"b\"]")
        } else {
            INDEPENDENT.to_string()
        };
        let rules = "[[exclude]]\nreason = \"r\"\ncolumn = \"y\"\noutlier = \"median-distance\"\nlimit = 2\nby = \"g\"\n\
                     [[exclude]]\nreason = \"t\"\ncolumn = \"y\"\noutlier = \"tukey-fences\"\nlimit = 1.5\n";
        let p = plan("d.csv", "", &format!("{rules}{hyp}"));
        match run(dir.path(), &p) {
            Ok(s) => {
                let f = &s.flow;
                for k in 0..2 {
                    let removed: usize = f.rules.iter().map(|r| if k == 0 { r.first } else { r.second }).sum();
                    proptest::prop_assert_eq!(f.read[k] - removed - f.missing[k] - f.unpaired[k], f.analysed[k]);
                }
            }
            Err(e) => proptest::prop_assert!(e.starts_with("error: d.csv"), "{}", e),
        }
    }
}
