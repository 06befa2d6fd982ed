//! Parquet input: the same rows as a CSV file give the same statistics,
//! whatever the column types (decimals, dictionary-encoded labels, nulls)
//! and however the file is split into row groups; unusable files and
//! columns are refused with the file named.
//!
//! The files here are written with the `parquet` crate's Arrow writer. A
//! file written by another program (DuckDB) is read in `tests/sources.rs`
//! when the `duckdb` feature is on.

mod common;

use arrow_array::builder::{Decimal128Builder, StringBuilder, StringDictionaryBuilder};
use arrow_array::types::Int32Type;
use arrow_array::{ArrayRef, ListArray, RecordBatch};
use common::checkout::CSV;
use common::Case;
use parquet::arrow::ArrowWriter;
use parquet::file::properties::WriterProperties;
use std::sync::Arc;

/// The shared checkout plan over the file at `path`.
fn plan(path: &str) -> String {
    common::checkout::plan(&format!("path = \"{path}\""))
}

/// The fixture's rows: (visit, point, seconds in tenths or None, entry).
fn rows() -> Vec<(String, String, Option<i128>, String)> {
    CSV.lines()
        .skip(1)
        .map(|l| {
            let f: Vec<&str> = l.split(',').collect();
            let tenths = (!f[2].is_empty()).then(|| {
                let (whole, frac) = f[2].split_once('.').unwrap();
                whole.parse::<i128>().unwrap() * 10 + frac.parse::<i128>().unwrap()
            });
            (f[0].into(), f[1].into(), tenths, f[3].into())
        })
        .collect()
}

/// The fixture as Parquet: seconds as DECIMAL(6,1), point as a dictionary
/// of labels, at most `group` rows per row group.
fn write_parquet(path: &std::path::Path, group: usize) {
    let rows = rows();
    let mut visit = StringBuilder::new();
    let mut point = StringDictionaryBuilder::<Int32Type>::new();
    let mut seconds = Decimal128Builder::new()
        .with_precision_and_scale(6, 1)
        .unwrap();
    let mut entry = StringBuilder::new();
    for (v, p, s, e) in &rows {
        visit.append_value(v);
        point.append_value(p);
        match s {
            Some(t) => seconds.append_value(*t),
            None => seconds.append_null(),
        }
        entry.append_value(e);
    }
    let cols: Vec<(&str, ArrayRef)> = vec![
        ("visit", Arc::new(visit.finish())),
        ("point", Arc::new(point.finish())),
        ("seconds", Arc::new(seconds.finish())),
        ("entry", Arc::new(entry.finish())),
    ];
    let batch = RecordBatch::try_from_iter(cols).unwrap();
    write_batch(path, &batch, Some(group));
}

/// Writes `batch` as a Parquet file, in row groups of at most `group` rows.
fn write_batch(path: &std::path::Path, batch: &RecordBatch, group: Option<usize>) {
    let props = WriterProperties::builder()
        .set_max_row_group_row_count(group)
        .build();
    let file = std::fs::File::create(path).unwrap();
    let mut w = ArrowWriter::try_new(file, batch.schema(), Some(props)).unwrap();
    w.write(batch).unwrap();
    w.close().unwrap();
}

fn results(c: &Case) -> serde_json::Value {
    c.attest(&["run", "--unlocked", "a.toml"]).success();
    serde_json::from_str(&c.read("out/a/results.json")).unwrap()
}

#[test]
fn parquet_rows_give_the_statistics_of_the_same_csv_file() {
    let csv = Case::new();
    csv.write("checkout.csv", CSV);
    csv.write("a.toml", &plan("checkout.csv"));
    let from_csv = results(&csv);
    for group in [1_000, 37] {
        let c = Case::new();
        write_parquet(&c.path().join("checkout.parquet"), group);
        c.write("a.toml", &plan("checkout.parquet"));
        let from_parquet = results(&c);
        assert_eq!(
            from_csv["hypotheses"], from_parquet["hypotheses"],
            "row groups of {group}"
        );
        assert_eq!(from_csv["data"]["rows"], from_parquet["data"]["rows"]);
        assert_eq!(from_parquet["plan"]["data"]["format"], "parquet");
        // The file's own SHA-256, as for any data file.
        let bytes = std::fs::read(c.path().join("checkout.parquet")).unwrap();
        let sha = attest::plan::canonical::sha256_hex(&bytes);
        assert_eq!(from_parquet["data"]["sha256"], sha.as_str());
    }
}

#[test]
fn unusable_parquet_files_and_columns_are_refused() {
    let c = Case::new();
    write_parquet(&c.path().join("checkout.parquet"), 1_000);
    // A misspelt column: the near name is suggested.
    c.write(
        "a.toml",
        &plan("checkout.parquet").replace("outcome = \"seconds\"", "outcome = \"second\""),
    );
    let a = c.attest(&["run", "--unlocked", "a.toml"]).code(1);
    let err = String::from_utf8_lossy(&a.get_output().stderr).into_owned();
    assert!(
        err.starts_with("error: checkout.parquet: the plan uses column \"second\""),
        "{err}"
    );
    assert!(err.contains("did you mean \"seconds\"?"), "{err}");

    // Not a Parquet file at all.
    c.write("broken.parquet", "visit,point\nV1,desk\n");
    c.write("a.toml", &plan("broken.parquet"));
    let a = c.attest(&["run", "--unlocked", "a.toml"]).code(1);
    let err = String::from_utf8_lossy(&a.get_output().stderr).into_owned();
    assert!(
        err.starts_with("error: broken.parquet: the file cannot be read as Parquet"),
        "{err}"
    );
    assert!(err.contains("help: "), "{err}");

    // A nested column where the plan wants numbers.
    let values = ListArray::from_iter_primitive::<Int32Type, _, _>(
        (0..4).map(|i| Some(vec![Some(i), Some(i + 1)])),
    );
    let groups: ArrayRef = Arc::new(arrow_array::StringArray::from(vec![
        "kiosk", "desk", "kiosk", "desk",
    ]));
    let batch = RecordBatch::try_from_iter(vec![
        ("point", groups),
        ("seconds", Arc::new(values) as ArrayRef),
        (
            "entry",
            Arc::new(arrow_array::StringArray::from(vec!["patron"; 4])) as ArrayRef,
        ),
    ])
    .unwrap();
    write_batch(&c.path().join("nested.parquet"), &batch, None);
    c.write("a.toml", &plan("nested.parquet"));
    let a = c.attest(&["run", "--unlocked", "a.toml"]).code(1);
    let err = String::from_utf8_lossy(&a.get_output().stderr).into_owned();
    assert!(
        err.contains("column \"seconds\" of the Parquet file holds List"),
        "{err}"
    );
    assert!(!c.exists("out/a/results.json"));
}

#[test]
fn a_null_is_an_empty_cell_and_a_nan_is_the_text_nan() {
    // Without "" and "NaN" among the missing texts, a null or NaN in a
    // numeric column is an error, as an empty or "NaN" cell in a CSV file
    // would be; with the defaults both are missing values.
    let c = Case::new();
    let seconds: ArrayRef = Arc::new(arrow_array::Float64Array::from(vec![
        Some(41.0),
        None,
        Some(f64::NAN),
        Some(39.5),
        Some(55.0),
        Some(52.5),
        Some(60.0),
    ]));
    let point: ArrayRef = Arc::new(arrow_array::StringArray::from(vec![
        "kiosk", "kiosk", "kiosk", "kiosk", "desk", "desk", "desk",
    ]));
    let entry: ArrayRef = Arc::new(arrow_array::StringArray::from(vec!["patron"; 7]));
    let batch = RecordBatch::try_from_iter(vec![
        ("point", point),
        ("seconds", seconds),
        ("entry", entry),
    ])
    .unwrap();
    write_batch(&c.path().join("few.parquet"), &batch, None);
    c.write("a.toml", &plan("few.parquet"));
    let r = results(&c);
    let flow = &r["hypotheses"][0]["rows"];
    assert_eq!(flow["missing"], serde_json::json!([2, 0]), "{flow}");
    c.write(
        "a.toml",
        &plan("few.parquet").replace("[data]\n", "[data]\nmissing = [\"NA\"]\n"),
    );
    let a = c.attest(&["run", "--unlocked", "a.toml"]).code(1);
    let err = String::from_utf8_lossy(&a.get_output().stderr).into_owned();
    assert!(
        err.starts_with("error: few.parquet:2:2: column \"seconds\""),
        "{err}"
    );
}

#[test]
fn a_bad_cell_in_a_later_row_group_is_placed_by_its_row_in_the_file() {
    // 100 rows in row groups of 37, decoded in parallel: the first bad
    // cell in file order is reported, at its row in the whole file.
    let c = Case::new();
    let n = 100;
    let point: Vec<&str> = (0..n)
        .map(|i| if i % 2 == 0 { "kiosk" } else { "desk" })
        .collect();
    let seconds: Vec<String> = (0..n)
        .map(|i| match i {
            79 => "n/a".to_string(),
            91 => "later".to_string(),
            _ => format!("{}.5", 30 + i % 17),
        })
        .collect();
    let batch = RecordBatch::try_from_iter(vec![
        (
            "point",
            Arc::new(arrow_array::StringArray::from(point)) as ArrayRef,
        ),
        (
            "seconds",
            Arc::new(arrow_array::StringArray::from(seconds)) as ArrayRef,
        ),
        (
            "entry",
            Arc::new(arrow_array::StringArray::from(vec!["patron"; n])) as ArrayRef,
        ),
    ])
    .unwrap();
    write_batch(&c.path().join("bad.parquet"), &batch, Some(37));
    c.write("a.toml", &plan("bad.parquet"));
    let a = c.attest(&["run", "--unlocked", "a.toml"]).code(1);
    let err = String::from_utf8_lossy(&a.get_output().stderr).into_owned();
    assert!(
        err.starts_with("error: bad.parquet:80:2: column \"seconds\": \"n/a\" is not a number"),
        "{err}"
    );
}
