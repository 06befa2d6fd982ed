//! Reading the committed reference fixtures (`tests/reference/*.json`):
//! numbers, lists of numbers and alternatives, each refused loudly when the
//! fixture holds something else.

use attest::stats::Alternative;
use serde_json::Value;

/// A number of the fixture.
pub fn f(v: &Value) -> f64 {
    v.as_f64().expect("number")
}

/// A list of numbers of the fixture.
pub fn vec(v: &Value) -> Vec<f64> {
    v.as_array().expect("array").iter().map(f).collect()
}

/// An alternative as the generators write it.
pub fn alt(v: &Value) -> Alternative {
    match v.as_str().expect("alternative") {
        "two-sided" => Alternative::TwoSided,
        "greater" => Alternative::Greater,
        "less" => Alternative::Less,
        other => panic!("unknown alternative {other}"),
    }
}
