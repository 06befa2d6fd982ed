//! Shared helpers for the integration tests: a temporary case folder, the
//! real `attest` binary run inside it, and tolerant float comparison.
#![allow(dead_code)]

pub mod checkout;
pub mod fixture;

use assert_cmd::Command;
use std::path::{Path, PathBuf};

/// The committed demo analyses, by stem (`analyses/<stem>.toml`).
pub const DEMOS: [&str; 6] = [
    "commute",
    "espresso",
    "loaves",
    "picking",
    "thermostat",
    "tutoring",
];

/// A temporary folder holding one test case.
pub struct Case {
    /// Keeps the folder alive for the test's duration.
    pub dir: tempfile::TempDir,
}

impl Case {
    /// An empty case folder.
    pub fn new() -> Case {
        Case {
            dir: tempfile::tempdir().expect("temp dir"),
        }
    }

    /// The folder's path.
    pub fn path(&self) -> &Path {
        self.dir.path()
    }

    /// Writes a file (creating folders).
    pub fn write(&self, rel: &str, text: &str) {
        let p = self.dir.path().join(rel);
        std::fs::create_dir_all(p.parent().unwrap()).unwrap();
        std::fs::write(p, text).unwrap();
    }

    /// Reads a file as text.
    pub fn read(&self, rel: &str) -> String {
        std::fs::read_to_string(self.dir.path().join(rel)).unwrap_or_else(|e| panic!("{rel}: {e}"))
    }

    /// Whether a file exists.
    pub fn exists(&self, rel: &str) -> bool {
        self.dir.path().join(rel).exists()
    }

    /// Runs `attest ARGS` inside the case folder.
    pub fn attest(&self, args: &[&str]) -> assert_cmd::assert::Assert {
        Command::cargo_bin("attest")
            .unwrap()
            .current_dir(self.dir.path())
            .env("SOURCE_DATE_EPOCH", "1764547200")
            .env("NO_COLOR", "1")
            .args(args)
            .assert()
    }
}

/// The repository root.
pub fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

/// Copies `tests/cases/NAME` into a fresh case folder.
pub fn case(name: &str) -> Case {
    let c = Case::new();
    copy_dir(&root().join("tests/cases").join(name), c.path());
    c
}

/// Every file below `dir` with its bytes, keyed by its `/`-separated
/// path relative to `dir`.
pub fn tree(dir: &Path) -> std::collections::BTreeMap<String, Vec<u8>> {
    fn walk(root: &Path, dir: &Path, out: &mut std::collections::BTreeMap<String, Vec<u8>>) {
        for e in std::fs::read_dir(dir).unwrap() {
            let p = e.unwrap().path();
            if p.is_dir() {
                walk(root, &p, out);
            } else {
                let rel = p.strip_prefix(root).unwrap().to_string_lossy();
                out.insert(rel.replace('\\', "/"), std::fs::read(&p).unwrap());
            }
        }
    }
    let mut out = std::collections::BTreeMap::new();
    walk(dir, dir, &mut out);
    out
}

/// Copies a folder tree.
pub fn copy_dir(from: &Path, to: &Path) {
    std::fs::create_dir_all(to).unwrap();
    for e in std::fs::read_dir(from).unwrap() {
        let e = e.unwrap();
        let target = to.join(e.file_name());
        if e.file_type().unwrap().is_dir() {
            copy_dir(&e.path(), &target);
        } else {
            std::fs::copy(e.path(), target).unwrap();
        }
    }
}

/// Parses JSON text.
pub fn plan_json(text: &str) -> serde_json::Value {
    serde_json::from_str(text).expect("valid JSON")
}

/// Asserts |a − b| ≤ rel·|b| (or ≤ rel when b = 0).
pub fn close(a: f64, b: f64, rel: f64) {
    let tol = if b == 0.0 { rel } else { rel * b.abs() };
    assert!((a - b).abs() <= tol, "{a} vs {b} (rel tol {rel})");
}
