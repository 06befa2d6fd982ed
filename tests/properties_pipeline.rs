//! Properties of the whole pipeline on small random data sets, run through
//! the real binary: a run writes nothing outside its output folder, leaves
//! every output complete or absent, gives the same bytes the second time,
//! and ends with exit code 0 (ran) or 1 (refused the data) — never a panic
//! (101) and never an internal error (3).

mod common;

use assert_cmd::Command;
use proptest::prelude::*;
use std::collections::BTreeMap;
use std::path::Path;

/// One generated cell: a small integer (ties are common), a value spread
/// over many magnitudes, an extreme value, or a missing cell.
fn cell() -> impl Strategy<Value = String> {
    prop_oneof![
        6 => (-4i32..5).prop_map(|v| v.to_string()),
        6 => (-1e4f64..1e4).prop_map(|v| v.to_string()),
        1 => prop_oneof![Just(1e300), Just(-1e300), Just(1e-300), Just(4.5e15)]
            .prop_map(|v: f64| format!("{v:e}")),
        1 => Just("NA".to_string()),
    ]
}

/// A generated analysis: the plan's hypothesis block and the CSV text.
#[derive(Clone, Debug)]
struct Generated {
    hypothesis: String,
    csv: String,
}

fn alternative() -> impl Strategy<Value = &'static str> {
    prop_oneof![Just("two-sided"), Just("greater"), Just("less")]
}

fn independent() -> impl Strategy<Value = Generated> {
    (
        prop::collection::vec(cell(), 0..9),
        prop::collection::vec(cell(), 0..9),
        prop_oneof![
            Just("student-t"),
            Just("welch-t"),
            Just("mann-whitney"),
            Just("checked")
        ],
        alternative(),
    )
        .prop_map(|(a, b, method, alt)| {
            let mut csv = String::from("id,arm,score\n");
            let rows = a.iter().map(|v| ("a", v)).chain(b.iter().map(|v| ("b", v)));
            for (i, (arm, v)) in rows.enumerate() {
                csv.push_str(&format!("{i},{arm},{v}\n"));
            }
            Generated {
                hypothesis: format!(
                    "design = \"independent\"\noutcome = \"score\"\ngroup = \"arm\"\n\
                     levels = [\"a\", \"b\"]\nmethod = \"{method}\"\nalternative = \"{alt}\"\n"
                ),
                csv,
            }
        })
}

fn paired() -> impl Strategy<Value = Generated> {
    (
        prop::collection::vec((cell(), cell()), 0..9),
        prop_oneof![
            Just("paired-t"),
            Just("wilcoxon-signed-rank"),
            Just("checked")
        ],
        alternative(),
    )
        .prop_map(|(pairs, method, alt)| {
            let mut csv = String::from("id,before,after\n");
            for (i, (x, y)) in pairs.iter().enumerate() {
                csv.push_str(&format!("{i},{x},{y}\n"));
            }
            Generated {
                hypothesis: format!(
                    "design = \"paired\"\nfirst = \"after\"\nsecond = \"before\"\n\
                     method = \"{method}\"\nalternative = \"{alt}\"\n"
                ),
                csv,
            }
        })
}

fn one_sample() -> impl Strategy<Value = Generated> {
    (
        prop::collection::vec(cell(), 0..9),
        prop_oneof![
            Just("one-sample-t"),
            Just("wilcoxon-signed-rank"),
            Just("checked")
        ],
        alternative(),
        -3i32..4,
    )
        .prop_map(|(xs, method, alt, reference)| {
            let mut csv = String::from("id,score\n");
            for (i, v) in xs.iter().enumerate() {
                csv.push_str(&format!("{i},{v}\n"));
            }
            Generated {
                hypothesis: format!(
                    "design = \"one-sample\"\noutcome = \"score\"\nreference = {reference}\n\
                     method = \"{method}\"\nalternative = \"{alt}\"\n"
                ),
                csv,
            }
        })
}

fn plan_text(g: &Generated) -> String {
    format!(
        "attest = 1\ntitle = \"Generated comparison\"\n\n[data]\npath = \"data.csv\"\n\n\
         [[hypothesis]]\nid = \"H1\"\nclaim = \"A generated claim.\"\n{}",
        g.hypothesis
    )
}

/// Every file below `dir` with its bytes, by `/`-separated relative path.
fn snapshot(dir: &Path) -> BTreeMap<String, Vec<u8>> {
    common::tree(dir)
}

/// Runs `attest run --unlocked plan.toml` in `dir`; returns the exit code
/// and stderr.
fn run(dir: &Path) -> (Option<i32>, String) {
    let out = Command::cargo_bin("attest")
        .unwrap()
        .current_dir(dir)
        .env("SOURCE_DATE_EPOCH", "1764547200")
        .env("NO_COLOR", "1")
        .args(["run", "--unlocked", "--quiet", "plan.toml"])
        .output()
        .unwrap();
    (
        out.status.code(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

/// Checks every output file is whole: JSON parses, HTML and SVG are closed.
fn outputs_are_complete(files: &BTreeMap<String, Vec<u8>>) -> Result<(), TestCaseError> {
    for (name, bytes) in files {
        prop_assert!(!name.contains(".partial-"), "partial file {}", name);
        // The binary formats, each checked by where its format ends.
        if name.ends_with(".png") {
            // PNG specification §5.6: the IEND chunk closes the file.
            prop_assert!(
                bytes.starts_with(b"\x89PNG\r\n\x1a\n"),
                "{} is no PNG",
                name
            );
            prop_assert!(bytes.ends_with(b"IEND\xaeB`\x82"), "{} is cut short", name);
            continue;
        }
        if name.ends_with(".pdf") {
            prop_assert!(bytes.starts_with(b"%PDF-"), "{} is no PDF", name);
            prop_assert!(
                bytes.trim_ascii_end().ends_with(b"%%EOF"),
                "{} is cut short",
                name
            );
            continue;
        }
        if name.ends_with(".docx") {
            // A ZIP ends with its end-of-central-directory record.
            let z = zip::ZipArchive::new(std::io::Cursor::new(bytes.as_slice()));
            prop_assert!(z.is_ok(), "{} is not a whole ZIP package", name);
            continue;
        }
        let text = String::from_utf8(bytes.clone());
        prop_assert!(text.is_ok(), "{} is not UTF-8", name);
        let text = text.unwrap();
        if name.ends_with(".json") {
            let v: Result<serde_json::Value, _> = serde_json::from_str(&text);
            prop_assert!(v.is_ok(), "{} is not valid JSON", name);
        } else if name.ends_with(".html") {
            prop_assert!(
                text.trim_end().ends_with("</html>"),
                "{} is cut short",
                name
            );
        } else if name.ends_with(".svg") {
            prop_assert!(text.trim_end().ends_with("</svg>"), "{} is cut short", name);
        } else if name.ends_with(".md") {
            prop_assert!(!text.trim().is_empty(), "{} is empty", name);
        }
    }
    Ok(())
}

/// One generated plan and data file, run twice: returns whether attest ran
/// it (exit 0) rather than refusing the data (exit 1).
fn contained_complete_and_repeatable(g: &Generated) -> Result<bool, TestCaseError> {
    let case = common::Case::new();
    case.write("plan.toml", &plan_text(g));
    case.write("data.csv", &g.csv);
    let before = snapshot(case.path());

    let (code, stderr) = run(case.path());
    prop_assert!(
        matches!(code, Some(0) | Some(1)),
        "exit code {:?}\n{}\n{}\n{}",
        code,
        stderr,
        plan_text(g),
        g.csv
    );
    let after = snapshot(case.path());
    // Nothing outside out/ was created, changed or removed.
    let outside: BTreeMap<_, _> = after
        .iter()
        .filter(|(k, _)| !k.starts_with("out/"))
        .map(|(k, v)| (k.clone(), v.clone()))
        .collect();
    prop_assert_eq!(&outside, &before);
    let outputs: BTreeMap<String, Vec<u8>> = after
        .iter()
        .filter(|(k, _)| k.starts_with("out/"))
        .map(|(k, v)| (k.clone(), v.clone()))
        .collect();
    outputs_are_complete(&outputs)?;
    if code == Some(0) {
        prop_assert!(outputs.contains_key("out/plan/results.json"));
        let (again, stderr2) = run(case.path());
        prop_assert_eq!(again, Some(0), "{}", stderr2);
        prop_assert!(
            snapshot(case.path()) == after,
            "second run wrote different bytes"
        );
        Ok(true)
    } else {
        prop_assert!(stderr.starts_with("error: "), "{}", stderr);
        prop_assert!(
            outputs.is_empty(),
            "a refused run left {:?}",
            outputs.keys()
        );
        Ok(false)
    }
}

/// Every generated run is contained, complete and repeatable, and enough
/// of them run: a generator whose plans were all refused would make the
/// property say nothing, so at least a third of the cases must produce a
/// report (with the fixed seed below, 14 of 32 do; the others are refused
/// for data that are too few or degenerate, which the property also checks).
#[test]
fn a_run_is_contained_complete_and_repeatable() {
    use proptest::test_runner::{Config, RngAlgorithm, TestRng, TestRunner};
    use std::sync::atomic::{AtomicUsize, Ordering};
    let (ran, total) = (AtomicUsize::new(0), AtomicUsize::new(0));
    // A fixed seed, so the share of runs is a property of the generators,
    // not of the day's draw.
    let mut runner = TestRunner::new_with_rng(
        Config {
            cases: 32,
            failure_persistence: None,
            ..Config::default()
        },
        TestRng::deterministic_rng(RngAlgorithm::ChaCha),
    );
    let strategy = prop_oneof![independent(), paired(), one_sample()];
    runner
        .run(&strategy, |g| {
            total.fetch_add(1, Ordering::Relaxed);
            if contained_complete_and_repeatable(&g)? {
                ran.fetch_add(1, Ordering::Relaxed);
            }
            Ok(())
        })
        .unwrap();
    let (ran, total) = (ran.into_inner(), total.into_inner());
    eprintln!("{ran} of {total} generated plans ran; the rest were refused");
    assert!(
        3 * ran >= total,
        "only {ran} of {total} generated plans ran: the generators no longer exercise the pipeline"
    );
}
