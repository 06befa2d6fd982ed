//! The canonical form of a plan, its hash, and field-by-field differences.
//!
//! The canonical form is the validated plan (defaults filled in) written as
//! compact JSON with object keys sorted and numbers in shortest round-trip
//! form. Comments, whitespace, key order and `0.05` versus `5e-2` vanish in
//! parsing; everything that carries meaning is in the JSON. Its SHA-256 is
//! the plan hash.

use super::Plan;
use serde_json::Value;
use sha2::{Digest, Sha256};

/// The canonical JSON value of a plan (keys sorted: serde_json's map is a
/// `BTreeMap` in this build).
pub(crate) fn canonical_value(plan: &Plan) -> Value {
    serde_json::to_value(plan).expect("a plan always serialises")
}

/// The canonical text of a plan.
pub(crate) fn canonical_text(plan: &Plan) -> String {
    canonical_value(plan).to_string()
}

/// The plan hash: lowercase hex SHA-256 of the canonical text.
pub(crate) fn plan_hash(plan: &Plan) -> String {
    sha256_hex(canonical_text(plan).as_bytes())
}

/// Lowercase hex SHA-256 of some bytes.
pub fn sha256_hex(bytes: &[u8]) -> String {
    hex(&Sha256::digest(bytes))
}

/// Lowercase hexadecimal of a digest (two digits per byte).
pub(crate) fn hex(digest: &[u8]) -> String {
    let mut s = String::with_capacity(2 * digest.len());
    for b in digest {
        s.push_str(&format!("{b:02x}"));
    }
    s
}

/// One field that differs between the locked plan and the current one.
#[derive(Clone, Debug, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub struct FieldChange {
    /// Path of the field, e.g. `alpha` or `hypotheses[H1].method`.
    pub field: String,
    /// The value in the lock (`absent` when the field did not exist).
    pub locked: String,
    /// The current value (`absent` when the field was removed).
    pub current: String,
}

/// Lists every leaf field that differs between two canonical plans, in a
/// stable order. Hypotheses are matched by id, so reordering them shows as
/// one change of order rather than as every field changing.
pub(crate) fn diff(locked: &Value, current: &Value) -> Vec<FieldChange> {
    let mut a = Vec::new();
    let mut b = Vec::new();
    flatten("", locked, &mut a);
    flatten("", current, &mut b);
    let a: std::collections::BTreeMap<_, _> = a.into_iter().collect();
    let b: std::collections::BTreeMap<_, _> = b.into_iter().collect();
    let mut keys: Vec<&String> = a.keys().chain(b.keys()).collect();
    keys.sort();
    keys.dedup();
    let mut out = Vec::new();
    for k in keys {
        let (x, y) = (a.get(k), b.get(k));
        if x != y {
            out.push(FieldChange {
                field: k.clone(),
                locked: x.cloned().unwrap_or_else(|| "absent".into()),
                current: y.cloned().unwrap_or_else(|| "absent".into()),
            });
        }
    }
    let order = |v: &Value| -> Option<String> {
        v.get("hypotheses")?.as_array().map(|hs| {
            hs.iter()
                .filter_map(|h| h.get("id").and_then(Value::as_str))
                .collect::<Vec<_>>()
                .join(", ")
        })
    };
    let (oa, ob) = (order(locked), order(current));
    if oa != ob {
        out.push(FieldChange {
            field: "hypotheses (order)".into(),
            locked: oa.unwrap_or_default(),
            current: ob.unwrap_or_default(),
        });
    }
    out
}

fn flatten(prefix: &str, v: &Value, out: &mut Vec<(String, String)>) {
    let join = |k: &str| {
        if prefix.is_empty() {
            k.to_string()
        } else {
            format!("{prefix}.{k}")
        }
    };
    match v {
        Value::Object(map) => {
            for (k, v) in map {
                flatten(&join(k), v, out);
            }
        }
        Value::Array(items) if prefix.ends_with("hypotheses") => {
            for h in items {
                let id = h.get("id").and_then(Value::as_str).unwrap_or("?");
                flatten(&format!("{prefix}[{id}]"), h, out);
            }
        }
        Value::Array(items) if items.iter().any(|i| i.is_object()) => {
            for (i, item) in items.iter().enumerate() {
                flatten(&format!("{prefix}[{}]", i + 1), item, out);
            }
        }
        leaf => out.push((prefix.to_string(), display(leaf))),
    }
}

fn display(v: &Value) -> String {
    match v {
        Value::String(s) => s.clone(),
        Value::Null => "none".into(),
        other => other.to_string(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sha256_of_abc() {
        // FIPS 180-2, Appendix B.1: SHA-256("abc").
        assert_eq!(
            sha256_hex(b"abc"),
            "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
        );
    }

    #[test]
    fn demo_plans_keep_their_locked_hashes() {
        // Each committed demo lock records the hash its plan had when it
        // was locked; keys added since (all optional, left out when
        // absent) must not change it. DEVELOPERS.md, "Compatibility of
        // the analysis file".
        let demos = [
            (
                "commute",
                include_str!("../../analyses/commute.toml"),
                include_str!("../../analyses/commute.lock"),
            ),
            (
                "espresso",
                include_str!("../../analyses/espresso.toml"),
                include_str!("../../analyses/espresso.lock"),
            ),
            (
                "loaves",
                include_str!("../../analyses/loaves.toml"),
                include_str!("../../analyses/loaves.lock"),
            ),
            (
                "picking",
                include_str!("../../analyses/picking.toml"),
                include_str!("../../analyses/picking.lock"),
            ),
            (
                "thermostat",
                include_str!("../../analyses/thermostat.toml"),
                include_str!("../../analyses/thermostat.lock"),
            ),
            (
                "tutoring",
                include_str!("../../analyses/tutoring.toml"),
                include_str!("../../analyses/tutoring.lock"),
            ),
        ];
        for (name, toml_text, lock_text) in demos {
            let path = format!("{name}.toml");
            let plan = super::super::validate::parse(std::path::Path::new(&path), toml_text)
                .unwrap_or_else(|e| panic!("{name}: {}", e.what))
                .plan;
            let lock: Value = serde_json::from_str(lock_text).expect("lock is JSON");
            assert_eq!(
                plan_hash(&plan),
                lock["plan_sha256"].as_str().expect("lock has plan_sha256"),
                "{name}"
            );
        }
    }

    #[test]
    fn diff_names_leaf_fields() {
        let a: Value =
            serde_json::json!({"alpha": 0.05, "hypotheses": [{"id": "H1", "method": "welch-t"}]});
        let b: Value =
            serde_json::json!({"alpha": 0.1, "hypotheses": [{"id": "H1", "method": "student-t"}]});
        let d = diff(&a, &b);
        assert_eq!(d.len(), 2);
        assert_eq!(d[0].field, "alpha");
        assert_eq!(
            (d[0].locked.as_str(), d[0].current.as_str()),
            ("0.05", "0.1")
        );
        assert_eq!(d[1].field, "hypotheses[H1].method");
    }
}
