//! The floor for reading: a bare streaming parse of two columns of a
//! comma-separated file, the baseline `tests/bench/scale.py` compares
//! `attest run` with (issue: statistics, figures and report together may
//! cost no more than reading).
//!
//! usage: bare_parse FILE GROUP_COLUMN VALUE_COLUMN
//!
//! One thread reads the file in 1 MiB blocks, splits lines, finds the two
//! fields, keeps the group as a small integer code and the value as `f64`
//! (std's parser), and prints the row count, the per-group sums (so the
//! work cannot be optimised away) and the seconds taken. No quoting, no
//! missing values, no checks: nothing a real reader may skip.

use std::io::{BufRead, BufReader};
use std::time::Instant;

fn main() {
    let args: Vec<String> = std::env::args().collect();
    let [_, file, group, value] = args.as_slice() else {
        eprintln!("usage: bare_parse FILE GROUP_COLUMN VALUE_COLUMN");
        std::process::exit(2);
    };
    let start = Instant::now();
    let f = std::fs::File::open(file).expect("open the data file");
    let mut r = BufReader::with_capacity(1 << 20, f);
    let mut line = Vec::new();
    r.read_until(b'\n', &mut line).expect("read the header");
    let names: Vec<&[u8]> = trim(&line).split(|&b| b == b',').collect();
    let find = |name: &str| {
        names
            .iter()
            .position(|n| *n == name.as_bytes())
            .expect("column not in header")
    };
    let (gi, vi) = (find(group), find(value));
    let mut labels: Vec<Vec<u8>> = Vec::new();
    let mut codes: Vec<u8> = Vec::new();
    let mut values: Vec<f64> = Vec::new();
    loop {
        line.clear();
        if r.read_until(b'\n', &mut line).expect("read a row") == 0 {
            break;
        }
        let row = trim(&line);
        if row.is_empty() {
            continue;
        }
        let (mut g, mut v): (&[u8], &[u8]) = (b"", b"");
        for (i, field) in row.split(|&b| b == b',').enumerate() {
            if i == gi {
                g = field;
            } else if i == vi {
                v = field;
            }
        }
        let code = match labels.iter().position(|l| l == g) {
            Some(c) => c,
            None => {
                labels.push(g.to_vec());
                labels.len() - 1
            }
        };
        codes.push(code as u8);
        let text = std::str::from_utf8(v).expect("UTF-8 value");
        values.push(text.parse::<f64>().expect("a number"));
    }
    let mut sums = vec![0.0; labels.len()];
    for (c, v) in codes.iter().zip(&values) {
        sums[*c as usize] += v;
    }
    println!(
        "rows {} sums {:?} seconds {:.3}",
        values.len(),
        sums,
        start.elapsed().as_secs_f64()
    );
}

fn trim(line: &[u8]) -> &[u8] {
    let mut end = line.len();
    while end > 0 && matches!(line[end - 1], b'\n' | b'\r') {
        end -= 1;
    }
    &line[..end]
}
