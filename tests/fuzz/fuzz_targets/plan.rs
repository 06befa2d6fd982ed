//! Fuzz target: the analysis-file parser and validator on arbitrary bytes
//! (read as UTF-8, lossily), then the sample-size planning of any plan that
//! validates and its canonical hash. Any panic is a bug: every input must
//! give either a plan or a positioned `Failure`.
#![no_main]

use attest::plan::canonical::plan_hash;
use attest::plan::validate::parse;
use libfuzzer_sys::fuzz_target;
use std::path::Path;

fuzz_target!(|bytes: &[u8]| {
    let text = String::from_utf8_lossy(bytes);
    match parse(Path::new("plan.toml"), &text) {
        Ok(file) => {
            let _ = attest::pipeline::planned_sizes(&file.plan);
            assert_eq!(plan_hash(&file.plan).len(), 64);
        }
        Err(f) => {
            // Every refusal is bad input and renders as `error: …`.
            assert_eq!(f.kind.exit_code(), 1, "{f}");
            assert!(f.to_string().starts_with("error: "));
        }
    }
});
