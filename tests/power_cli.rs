//! `attest power` on the command line: the three questions it answers, its
//! JSON shape, and its refusals. The numbers themselves are checked against
//! published tables and scipy in tests/reference_power.rs.

mod common;

use common::Case;
use serde_json::Value;

fn json(args: &[&str]) -> Value {
    let c = Case::new();
    let mut all = vec!["power", "--json"];
    all.extend_from_slice(args);
    let out = c.attest(&all).success();
    serde_json::from_slice(&out.get_output().stdout).unwrap()
}

/// Cohen (1988), Table 2.4.1, d = 0.5, α = .05 two-sided, power .80: 64 per
/// group (common textbook value, from memory); the exact noncentral t agrees.
#[test]
fn independent_n_is_an_array_of_group_sizes() {
    let v = json(&[
        "--design",
        "independent",
        "--smallest-effect",
        "0.5",
        "--chance-to-detect",
        "0.8",
    ]);
    assert_eq!(v["n"], serde_json::json!([64, 64]));
    assert!(v["power"].as_f64().unwrap() >= 0.8);
    assert_eq!(v["solved"], "n");
}

#[test]
fn unequal_allocation_follows_the_ratio() {
    let v = json(&[
        "--design",
        "independent",
        "--smallest-effect",
        "0.5",
        "--chance-to-detect",
        "0.8",
        "--second-per-first",
        "2",
    ]);
    let n = v["n"].as_array().unwrap();
    assert_eq!(n[1].as_u64().unwrap(), 2 * n[0].as_u64().unwrap());
}

#[test]
fn one_group_designs_give_a_number() {
    let v = json(&[
        "--design",
        "paired",
        "--smallest-effect",
        "0.5",
        "--chance-to-detect",
        "0.8",
    ]);
    assert!(v["n"].is_u64(), "{v}");
    let p = json(&[
        "--design",
        "one-sample",
        "--smallest-effect",
        "0.5",
        "--units",
        "20",
    ]);
    assert_eq!(p["n"], 20);
    assert_eq!(p["solved"], "power");
}

#[test]
fn the_terminal_answer_is_a_sentence() {
    let c = Case::new();
    let out = c
        .attest(&[
            "power",
            "--design",
            "independent",
            "--smallest-effect",
            "0.4",
            "--chance-to-detect",
            "0.9",
            "--alternative",
            "greater",
        ])
        .success();
    let text = String::from_utf8_lossy(&out.get_output().stdout).into_owned();
    assert!(
        text.starts_with(
            "to detect d = 0.40 with 90% power at α = .05, one-sided, 108 per group are needed"
        ),
        "{text}"
    );
    assert!(text.contains("for a rank test:"), "{text}");
}

#[test]
fn exactly_two_of_three_are_required() {
    let c = Case::new();
    let out = c
        .attest(&["power", "--design", "paired", "--smallest-effect", "0.5"])
        .failure()
        .code(1);
    let err = String::from_utf8_lossy(&out.get_output().stderr).into_owned();
    assert!(
        err.starts_with(
            "error: give exactly two of --smallest-effect, --chance-to-detect and --units"
        ),
        "{err}"
    );
    assert!(err.contains("\nhelp: "), "{err}");
}
