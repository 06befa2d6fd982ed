//! Fuzz target: the delimited-data reader, the exclusion rules and the
//! per-hypothesis selection on arbitrary file bytes, with fixed plans (an
//! independent, a wide paired and a long paired design, with every kind of
//! exclusion rule). No file is touched: the bytes go straight to
//! `read_delimited`. Any panic is a bug; a refusal must be bad input.
#![no_main]

use attest::data::{exclude, read::read_delimited, select, used_columns, Dataset};
use attest::plan::validate::parse;
use attest::plan::Plan;
use libfuzzer_sys::fuzz_target;
use std::path::{Path, PathBuf};
use std::sync::OnceLock;

const PLANS: [&str; 2] = [
    r#"attest = 1
title = "Fuzzed data, independent and wide paired"
[data]
path = "d.csv"
missing = ["", "NA"]
[[exclude]]
reason = "r1"
column = "g"
values = ["x"]
[[exclude]]
reason = "r2"
column = "v"
below = -1e6
above = 1e6
[[exclude]]
reason = "r3"
column = "v"
outlier = "median-distance"
limit = 3
by = "g"
[[exclude]]
reason = "r4"
column = "w"
outlier = "tukey-fences"
limit = 1.5
[[hypothesis]]
id = "H1"
claim = "c"
design = "independent"
outcome = "v"
group = "g"
levels = ["a", "b"]
method = "checked"
[[hypothesis]]
id = "H2"
claim = "c"
design = "paired"
first = "v"
second = "w"
method = "wilcoxon-signed-rank"
"#,
    r#"attest = 1
title = "Fuzzed data, long paired and one-sample, semicolons and decimal commas"
[data]
path = "d.csv"
delimiter = ";"
decimal = ","
[[hypothesis]]
id = "H1"
claim = "c"
design = "paired"
outcome = "v"
pair_by = "u"
condition = "g"
levels = ["a", "b"]
method = "paired-t"
[[hypothesis]]
id = "H2"
claim = "c"
design = "one-sample"
outcome = "v"
reference = 0
method = "checked"
"#,
];

fn plans() -> &'static Vec<Plan> {
    static P: OnceLock<Vec<Plan>> = OnceLock::new();
    P.get_or_init(|| {
        PLANS
            .iter()
            .map(|t| parse(Path::new("plan.toml"), t).expect("fixed plan").plan)
            .collect()
    })
}

fuzz_target!(|bytes: &[u8]| {
    // The first byte picks the plan; the rest is the file.
    let Some((&which, file)) = bytes.split_first() else {
        return;
    };
    let plan = &plans()[usize::from(which) % PLANS.len()];
    let wanted = used_columns(plan);
    let table = match read_delimited(file, "d.csv", &plan.data, &wanted) {
        Ok(t) => t,
        Err(f) => {
            assert_eq!(f.kind.exit_code(), 1, "{f}");
            return;
        }
    };
    let mut ds = Dataset {
        display_path: "d.csv".into(),
        path: PathBuf::from("d.csv"),
        sha256: String::new(),
        rows: table.rows,
        source: table.source,
        columns: table.columns,
        lines: table.lines,
        excluded_by: Vec::new(),
    };
    ds.excluded_by = match exclude::apply(&ds, &plan.exclude) {
        Ok(e) => e,
        Err(f) => {
            assert_eq!(f.kind.exit_code(), 1, "{f}");
            return;
        }
    };
    for h in &plan.hypotheses {
        if let Err(f) = select(&ds, plan, h) {
            assert_eq!(f.kind.exit_code(), 1, "{f}");
        }
    }
});
