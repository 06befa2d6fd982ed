//! Reading benchmark: generates a 10-million-row, 3-column CSV (an id, a
//! two-level group and a decimal value) and reports rows per second for
//! each stage of `attest::data::load` and for `select`, on one thread and
//! on all threads. Run on demand with `tests/bench/run.sh`; it is an
//! ignored test so that `cargo test` never runs it.

use attest::data::{load, read, select, used_columns};
use attest::plan::validate::parse;
use std::io::Write;
use std::path::Path;
use std::time::Instant;

const ROWS: usize = 10_000_000;

/// Writes the benchmark file: `id,group,value`, values with one decimal.
fn generate(path: &Path) -> usize {
    let mut out = std::io::BufWriter::with_capacity(1 << 20, std::fs::File::create(path).unwrap());
    writeln!(out, "id,group,value").unwrap();
    // A small linear congruential generator keeps the file deterministic.
    let mut state: u64 = 0x2545_F491_4F6C_DD1D;
    for i in 0..ROWS {
        state = state
            .wrapping_mul(6_364_136_223_846_793_005)
            .wrapping_add(1_442_695_040_888_963_407);
        let g = if state >> 63 == 0 { "long" } else { "standard" };
        let v = (state >> 33) % 100_000;
        writeln!(out, "{},{},{}.{}", i + 1, g, 700 + v / 100, v % 100).unwrap();
    }
    out.flush().unwrap();
    std::fs::metadata(path).unwrap().len() as usize
}

fn rate(rows: usize, secs: f64) -> String {
    format!("{:>8.1} M rows/s ({:.3} s)", rows as f64 / secs / 1e6, secs)
}

fn stages(label: &str, dir: &Path, plan: &attest::plan::Plan) {
    let bytes = std::fs::read(dir.join("bench.csv")).unwrap();
    let wanted = used_columns(plan);
    let t = Instant::now();
    let _ = attest::plan::canonical::sha256_hex(&bytes);
    let hash = t.elapsed().as_secs_f64();
    let t = Instant::now();
    let table = read::read_delimited(&bytes, "bench.csv", &plan.data, &wanted).unwrap();
    let parse = t.elapsed().as_secs_f64();
    assert_eq!(table.rows, ROWS);
    let t = Instant::now();
    let ds = load(plan, dir).unwrap();
    let whole = t.elapsed().as_secs_f64();
    let t = Instant::now();
    let s = select(&ds, plan, &plan.hypotheses[0]).unwrap();
    let sel = t.elapsed().as_secs_f64();
    assert_eq!(s.flow.analysed[0] + s.flow.analysed[1], ROWS);
    println!("[{label}]");
    println!("  parse 2 of 3 columns  {}", rate(ROWS, parse));
    println!("  sha-256 of the file   {}", rate(ROWS, hash));
    println!("  load (read+hash+parse){}", rate(ROWS, whole));
    println!("  select one hypothesis {}", rate(ROWS, sel));
}

#[test]
#[ignore = "benchmark: run with tests/bench/run.sh"]
fn read_ten_million_rows() {
    let dir = tempfile::tempdir().unwrap();
    let t = Instant::now();
    let size = generate(&dir.path().join("bench.csv"));
    println!(
        "generated {ROWS} rows, {:.1} MB in {:.1} s",
        size as f64 / 1e6,
        t.elapsed().as_secs_f64()
    );
    let text = r#"attest = 1
title = "Benchmark"
[data]
path = "bench.csv"
[[hypothesis]]
id = "H1"
claim = "c"
design = "independent"
outcome = "value"
group = "group"
levels = ["long", "standard"]
method = "welch-t"
"#;
    let plan = parse(Path::new("bench.toml"), text).unwrap().plan;
    let one = rayon::ThreadPoolBuilder::new()
        .num_threads(1)
        .build()
        .unwrap();
    one.install(|| stages("1 thread", dir.path(), &plan));
    stages(
        &format!("{} threads", rayon::current_num_threads()),
        dir.path(),
        &plan,
    );
}
