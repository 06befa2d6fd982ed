//! Catching mistakes before the lock: names that only the data used to
//! break, the header read at `lock`, rehearsals on blinded data, declared
//! deviations on the record, and a hypothesis that cannot be computed.

mod common;

use common::Case;

/// Delimited data: one `(group, value)` per row, with an id column.
fn groups_csv(rows: &[(&str, f64)]) -> String {
    let mut s = String::from("id,group,score\n");
    for (i, (g, v)) in rows.iter().enumerate() {
        s.push_str(&format!("{},{g},{v}\n", i + 1));
    }
    s
}

/// Eight values per level, spread around `centre`, deterministic.
fn spread(level: &'static str, centre: f64) -> Vec<(&'static str, f64)> {
    (0..8)
        .map(|i| {
            (
                level,
                centre + [-1.5, 0.5, 2.0, -0.5, 1.0, -2.0, 0.0, 1.5][i],
            )
        })
        .collect()
}

fn independent(id: &str, levels: [&str; 2]) -> String {
    format!(
        "[[hypothesis]]\nid = \"{id}\"\nclaim = \"The first group scores higher.\"\ndesign = \"independent\"\noutcome = \"score\"\ngroup = \"group\"\nlevels = [\"{}\", \"{}\"]\nmethod = \"welch-t\"\n\n",
        levels[0], levels[1]
    )
}

#[test]
fn colliding_and_non_ascii_names_pass_check_lock_and_run() {
    let cases: [(&str, [&str; 2], [&str; 2]); 3] = [
        ("ascii", ["a1", "a-1"], ["H1", "H-1"]),
        ("cjk", ["男", "女"], ["H1", "H2"]),
        ("accents", ["é", "ü"], ["H1", "H2"]),
    ];
    for (stem, levels, ids) in cases {
        let c = Case::new();
        let mut rows = spread(levels[0], 12.0);
        rows.extend(spread(levels[1], 10.0));
        c.write("data.csv", &groups_csv(&rows));
        let plan = format!(
            "attest = 1\ntitle = \"Names\"\nauthors = [\"A. Researcher\"]\n\n[data]\npath = \"data.csv\"\n\n{}{}",
            independent(ids[0], levels),
            independent(ids[1], levels)
        );
        let file = format!("{stem}.toml");
        c.write(&file, &plan);
        c.attest(&["check", &file]).success();
        c.attest(&["lock", &file]).success();
        c.attest(&["run", &file]).success();
        let values = c.read(&format!("out/{stem}/values.json"));
        let map: serde_json::Map<String, serde_json::Value> =
            serde_json::from_str(&values).unwrap();
        // Every per-group value of both groups of both hypotheses is there
        // under its own name.
        assert_eq!(
            map.keys().filter(|k| k.contains("Mean")).count(),
            4,
            "{stem}: {values}"
        );
    }
}

/// Every number written in a rehearsal's Markdown, HTML text, SVG text and
/// JSON (SVG and HTML coordinates are drawing positions, not reported
/// numbers, so only text content and attribute-free text count).
fn numbers_in(dir: &std::path::Path) -> Vec<f64> {
    let mut out = Vec::new();
    for (name, bytes) in common::tree(dir) {
        let text = String::from_utf8_lossy(&bytes).into_owned();
        let text = if name.ends_with(".svg") || name.ends_with(".html") {
            // Keep what lies between tags.
            let mut s = String::new();
            let mut inside = false;
            for ch in text.chars() {
                match ch {
                    '<' => inside = true,
                    '>' => {
                        inside = false;
                        s.push(' ');
                    }
                    _ if !inside => s.push(ch),
                    _ => {}
                }
            }
            s
        } else {
            text
        };
        let text = text.replace('−', "-");
        // A number is a whole token: hashes and names that hold digits
        // ("d24f", "H1") are not numbers. Whole numbers are counts, sizes,
        // degrees of freedom (JSON writes 23 as 23.0) and figure or table
        // numbers ("Figure 11"); the data are recorded to four decimals,
        // so no estimate or effect is a whole number, and only the other
        // tokens can reveal one.
        for token in text.split(|c: char| !(c.is_ascii_alphanumeric() || c == '.' || c == '-')) {
            let token = token.trim_end_matches('.');
            if let Some(v) = token.parse::<f64>().ok().filter(|v| v.fract() != 0.0) {
                out.push(v);
            }
        }
    }
    out
}

/// Whether some number lies within 3 % of `target` (or of its negative).
fn reveals(numbers: &[f64], target: f64) -> Option<f64> {
    numbers
        .iter()
        .copied()
        .find(|v| (v.abs() - target.abs()).abs() <= 0.03 * target.abs())
}

/// A deterministic normal-looking scatter (Box–Muller on a fixed sequence).
fn noise(i: usize) -> f64 {
    let u1 = ((i * 7919 + 13) % 1000) as f64 / 1000.0 + 0.0005;
    let u2 = ((i * 104_729 + 7) % 1000) as f64 / 1000.0;
    (-2.0 * u1.ln()).sqrt() * (2.0 * std::f64::consts::PI * u2).cos()
}

#[test]
fn a_rehearsal_reveals_no_true_effect_in_any_design() {
    // True effects far from any number the blinded report has: a mean
    // difference of 23.7 on values near 100 with SD about 2 (d about 11.8).
    let c = Case::new();
    let mut csv = String::from("unit,group,score,before,after,level\n");
    for i in 0..40 {
        let (g, centre) = if i < 20 {
            ("new", 111.85)
        } else {
            ("old", 88.15)
        };
        let before = 100.0 + 2.0 * noise(i + 100);
        let after = before - 23.7 + 2.0 * noise(i + 300);
        csv.push_str(&format!(
            "{i},{g},{:.4},{before:.4},{after:.4},{:.4}\n",
            centre + 2.0 * noise(i),
            100.0 + 2.0 * noise(i + 500)
        ));
    }
    c.write("data.csv", &csv);
    let plan = "attest = 1\ntitle = \"Blind\"\nauthors = [\"A. Researcher\"]\n\n[data]\npath = \"data.csv\"\n\n\
        [[hypothesis]]\nid = \"H1\"\nclaim = \"New is higher.\"\ndesign = \"independent\"\noutcome = \"score\"\ngroup = \"group\"\nlevels = [\"new\", \"old\"]\nmethod = \"welch-t\"\nrobustness = true\n\n\
        [[hypothesis]]\nid = \"H2\"\nclaim = \"Before is higher.\"\ndesign = \"paired\"\nfirst = \"before\"\nsecond = \"after\"\nmethod = \"paired-t\"\nrobustness = true\n\n\
        [[hypothesis]]\nid = \"H3\"\nclaim = \"Scores differ from 76.3.\"\ndesign = \"one-sample\"\noutcome = \"level\"\nreference = 76.3\nmethod = \"one-sample-t\"\nrobustness = true\n";
    c.write("blind.toml", plan);
    c.attest(&["rehearse", "blind.toml"]).success();
    let dir = c.path().join("out/blind.rehearsal");
    assert!(!dir.join("values.tex").exists() && !dir.join("values.json").exists());
    let numbers = numbers_in(&dir);
    // The unblinded run is the control: the same scan finds the effects
    // there, so the scan can fail.
    c.attest(&["run", "--unlocked", "blind.toml"]).success();
    let real = numbers_in(&c.path().join("out/blind"));
    let results: serde_json::Value =
        serde_json::from_str(&c.read("out/blind/results.json")).unwrap();
    for (i, design) in ["independent", "paired", "one-sample"].iter().enumerate() {
        let h = &results["hypotheses"][i];
        let diff = h["estimate"]["value"].as_f64().unwrap();
        let effect = h["effect"]["value"].as_f64().unwrap();
        let median = match *design {
            "independent" => {
                h["groups"][0]["median"].as_f64().unwrap()
                    - h["groups"][1]["median"].as_f64().unwrap()
            }
            "paired" => h["groups"][2]["median"].as_f64().unwrap(),
            _ => h["groups"][0]["median"].as_f64().unwrap() - 76.3,
        };
        for (what, v) in [
            ("mean difference", diff),
            ("median difference", median),
            ("effect size", effect),
        ] {
            assert!(
                v.abs() > 5.0,
                "{design} {what} {v}: the test needs a large effect"
            );
            assert!(
                reveals(&real, v).is_some(),
                "control: the run shows the {design} {what}"
            );
            assert_eq!(
                reveals(&numbers, v),
                None,
                "the rehearsal reveals the {design} {what} ({v})"
            );
        }
    }
    // Every output says what it is.
    for (name, bytes) in common::tree(&dir) {
        if name.ends_with(".sha256") {
            continue;
        }
        let text = String::from_utf8_lossy(&bytes);
        assert!(
            text.contains("REHEARSAL ON BLINDED DATA")
                || text.contains("Rehearsal on blinded data"),
            "{name} is not stamped as a rehearsal"
        );
    }
}

#[test]
fn one_degenerate_hypothesis_is_explained_and_the_others_reported() {
    let c = Case::new();
    let mut csv = String::from("unit,group,score,flat\n");
    for i in 0..24 {
        let g = if i % 2 == 0 { "a" } else { "b" };
        csv.push_str(&format!(
            "{i},{g},{},{}\n",
            10.0 + (i % 5) as f64 + if g == "a" { 2.0 } else { 0.0 },
            if g == "a" { 5 } else { 7 }
        ));
    }
    c.write("data.csv", &csv);
    let hyp = |id: &str, outcome: &str| {
        format!("[[hypothesis]]\nid = \"{id}\"\nclaim = \"Group a differs.\"\ndesign = \"independent\"\noutcome = \"{outcome}\"\ngroup = \"group\"\nlevels = [\"a\", \"b\"]\nmethod = \"welch-t\"\n\n")
    };
    c.write(
        "three.toml",
        &format!(
            "attest = 1\ntitle = \"Three\"\nauthors = [\"A. Researcher\"]\ncorrection = \"bonferroni\"\n\n[data]\npath = \"data.csv\"\n\n{}{}{}",
            hyp("H1", "score"),
            hyp("H2", "flat"),
            hyp("H3", "score")
        ),
    );
    let out = c.attest(&["run", "--unlocked", "three.toml"]).code(5);
    let stderr = String::from_utf8_lossy(&out.get_output().stderr).into_owned();
    assert!(stderr.contains("not computed: H2"), "{stderr}");
    let r: serde_json::Value = serde_json::from_str(&c.read("out/three/results.json")).unwrap();
    let ids: Vec<&str> = r["hypotheses"]
        .as_array()
        .unwrap()
        .iter()
        .map(|h| h["id"].as_str().unwrap())
        .collect();
    assert_eq!(ids, ["H1", "H3"]);
    let reason = r["not_computed"][0]["reason"].as_str().unwrap();
    assert_eq!(r["not_computed"][0]["id"], "H2");
    // The groups differ (5 against 7), so "identical" would be untrue.
    assert!(!reason.contains("identical"), "{reason}");
    assert!(reason.contains("within each group is the same"), "{reason}");
    // Bonferroni still counts three hypotheses.
    let p = r["hypotheses"][0]["p"].as_f64().unwrap();
    let adj = r["hypotheses"][0]["p_adjusted"].as_f64().unwrap();
    assert!((adj - (3.0 * p).min(1.0)).abs() < 1e-12, "{p} {adj}");
    let report = c.read("out/three/report.md");
    assert!(report.contains("## Not computed"), "{report}");
    assert!(
        report.contains("Hypothesis H2 could not be computed"),
        "{report}"
    );
}

#[test]
fn a_deviation_is_tabled_with_the_locked_value_and_a_contradicted_timing_is_flagged() {
    let c = Case::new();
    let mut rows = spread("a", 12.0);
    rows.extend(spread("b", 10.0));
    c.write("data.csv", &groups_csv(&rows));
    let head = "attest = 1\ntitle = \"Dev\"\nauthors = [\"A. Researcher\"]\n\n[data]\npath = \"data.csv\"\n\n";
    c.write(
        "dev.toml",
        &format!("{head}{}", independent("H1", ["a", "b"])),
    );
    c.attest(&["lock", "dev.toml"]).success();
    // A rehearsal after the lock reads the data and is recorded.
    c.attest(&["rehearse", "dev.toml"]).success();
    assert!(c.exists("dev.rehearsal-1.json"));
    c.attest(&["rehearse", "dev.toml"]).success();
    assert!(
        c.exists("dev.rehearsal-2.json"),
        "a second record never overwrites the first"
    );
    let changed = independent("H1", ["a", "b"]).replace("welch-t", "student-t");
    c.write(
        "dev.toml",
        &format!(
            "{head}{changed}[[deviation]]\ndate = \"2025-12-01\"\nfield = \"hypotheses[H1].method\"\nchange = \"Student's t\"\nreason = \"The spreads were planned to be equal.\"\nwhen = \"before-access\"\neffect = \"The p value assumes equal spreads.\"\nseverity = \"unclear\"\n"
        ),
    );
    c.attest(&["run", "dev.toml"]).success();
    let report = c.read("out/dev/report.md");
    let row = report
        .lines()
        .find(|l| {
            l.starts_with("| hypotheses\\[H1\\].method") || l.starts_with("| hypotheses[H1].method")
        })
        .unwrap_or_else(|| panic!("{report}"));
    assert!(
        row.contains("welch-t"),
        "the locked value fills what the plan said: {row}"
    );
    assert!(row.contains("Student's t (now: student-t)"), "{row}");
    assert!(
        row.contains("CONTRADICTED by the record, a rehearsal read the data"),
        "{row}"
    );
    assert!(row.contains("unclear"), "{row}");
    assert!(
        report.contains("The record contradicts the timing one deviation claims"),
        "{report}"
    );
    // Both analyses, side by side.
    assert!(report.contains("## As locked and as run"), "{report}");
    assert!(
        report.contains("**H1**. As locked: Welch's *t* test")
            && report.contains("As run: Student's *t* test"),
        "{report}"
    );
    let r: serde_json::Value = serde_json::from_str(&c.read("out/dev/results.json")).unwrap();
    assert_eq!(r["as_locked"]["hypotheses"][0]["method"], "welch-t");
    assert_eq!(r["hypotheses"][0]["method"], "student-t");
    assert_eq!(r["deviations"][0]["when"], "before-access");
    assert_eq!(r["lock_record"]["rehearsals"].as_array().unwrap().len(), 2);
}

#[test]
fn lock_reads_the_header_and_labels_but_never_an_outcome_value() {
    let c = Case::new();
    let head = "attest = 1\ntitle = \"Lock\"\nauthors = [\"A. Researcher\"]\n\n[data]\npath = \"data.csv\"\n\n";
    c.write(
        "data.csv",
        "id,group,score\n1,a,12\n2,b,10\n3,a,11\n4,b,9\n",
    );
    // An outcome cell no number reader accepts: lock must not read it.
    c.write(
        "bad.csv",
        "id,group,score\n1,a,12\n2,b,not-a-number\n3,a,11\n4,b,9\n",
    );
    c.write(
        "wrong-level.toml",
        &format!("{head}{}", independent("H1", ["A", "b"])),
    );
    let err = c.attest(&["lock", "wrong-level.toml"]).code(1);
    let lock_msg = String::from_utf8_lossy(&err.get_output().stderr).into_owned();
    let run = c.attest(&["run", "--unlocked", "wrong-level.toml"]).code(1);
    let run_msg = String::from_utf8_lossy(&run.get_output().stderr).into_owned();
    assert_eq!(lock_msg, run_msg, "lock and run say the same");
    assert!(
        lock_msg.contains("no rows with the level \"A\""),
        "{lock_msg}"
    );
    assert!(!c.exists("wrong-level.lock"));
    c.write(
        "misspelt.toml",
        &format!(
            "{head}{}",
            independent("H1", ["a", "b"]).replace("\"score\"", "\"scroe\"")
        ),
    );
    let err = c.attest(&["lock", "misspelt.toml"]).code(1);
    let msg = String::from_utf8_lossy(&err.get_output().stderr).into_owned();
    assert!(
        msg.contains("the plan uses column \"scroe\", which is not in the header"),
        "{msg}"
    );
    // Columns and levels right: the lock is written although an outcome
    // cell is unreadable, because lock never reads one (run will refuse it).
    c.write(
        "fine.toml",
        &format!("{head}{}", independent("H1", ["a", "b"])).replace("data.csv", "bad.csv"),
    );
    c.attest(&["lock", "fine.toml"]).success();
    assert!(c.exists("fine.lock"));
}

#[test]
fn a_stricter_alpha_after_the_lock_shows_the_conclusion_changed() {
    let c = Case::new();
    let mut rows = spread("a", 12.0);
    rows.extend(spread("b", 10.0));
    c.write("data.csv", &groups_csv(&rows));
    let head = "attest = 1\ntitle = \"Alpha\"\nauthors = [\"A. Researcher\"]\n\n[data]\npath = \"data.csv\"\n\n";
    c.write(
        "alpha.toml",
        &format!("{head}{}", independent("H1", ["a", "b"])),
    );
    c.attest(&["lock", "alpha.toml"]).success();
    c.attest(&["run", "alpha.toml"]).success();
    let r: serde_json::Value = serde_json::from_str(&c.read("out/alpha/results.json")).unwrap();
    let p = r["hypotheses"][0]["p"].as_f64().unwrap();
    assert!(p < 0.05 && p > 0.0001, "the data give p = {p}");
    assert!(
        r.get("as_locked").is_none(),
        "as locked: no second analysis"
    );
    c.write(
        "alpha.toml",
        &format!(
            "{}{}",
            head.replace("authors", "alpha = 0.0001\nauthors"),
            independent("H1", ["a", "b"])
        ),
    );
    c.attest(&["run", "alpha.toml"]).success();
    let report = c.read("out/alpha/report.md");
    assert!(report.contains("**The conclusion changed**: as locked the claim is supported, as run it is not supported"), "{report}");
    // A change of wording only runs one analysis.
    c.write(
        "alpha.toml",
        &format!(
            "{}{}",
            head.replace("Alpha", "Alpha, retitled"),
            independent("H1", ["a", "b"])
        ),
    );
    c.attest(&["run", "alpha.toml"]).success();
    let r: serde_json::Value = serde_json::from_str(&c.read("out/alpha/results.json")).unwrap();
    assert!(r.get("as_locked").is_none());
}

#[test]
fn every_slip_in_the_data_file_stops_the_rehearsal_as_it_would_stop_run() {
    // Cases of the bad-input catalogue: a wrong delimiter, the wrong
    // worksheet, a misspelt column, a level the file does not have, a
    // cell that is not a number, an exclusion that empties a group.
    let folders = [
        "data-wrong-delimiter",
        "data-xlsx-on-second-sheet",
        "data-unknown-column",
        "data-missing-level",
        "data-text-in-numeric-column",
        "data-all-rows-excluded",
    ];
    let check = |c: &Case, what: &str| {
        let run = c.attest(&["run", "--unlocked", "plan.toml"]).code(1);
        let run_err = String::from_utf8_lossy(&run.get_output().stderr).into_owned();
        let rehearsal = c.attest(&["rehearse", "plan.toml"]).code(1);
        let err = String::from_utf8_lossy(&rehearsal.get_output().stderr).into_owned();
        assert_eq!(err, run_err, "{what}: rehearse and run say the same");
        assert!(err.starts_with("error: "), "{what}: {err}");
        assert!(!c.exists("out"), "{what}: nothing is shown");
    };
    for f in folders {
        let c = Case::new();
        common::copy_dir(&common::root().join("tests/bad_inputs").join(f), c.path());
        check(&c, f);
    }
    let plan = |data: &str, extra: &str| {
        format!(
            "attest = 1\ntitle = \"Slips\"\nauthors = [\"A. Researcher\"]\n\n[data]\npath = \"data.csv\"\n{extra}\n{}",
            independent("H1", ["a", "b"])
        )
        .replace("data.csv", data)
    };
    // A decimal comma the plan does not declare.
    let c = Case::new();
    c.write(
        "data.csv",
        "id;group;score\n1;a;12,5\n2;b;10,5\n3;a;11,5\n4;b;9,5\n",
    );
    c.write("plan.toml", &plan("data.csv", "delimiter = \";\""));
    check(&c, "decimal comma");
    // A missing-value code the plan does not declare.
    let c = Case::new();
    c.write(
        "data.csv",
        "id,group,score\n1,a,12\n2,b,not recorded\n3,a,11\n4,b,9\n5,a,13\n6,b,8\n",
    );
    c.write("plan.toml", &plan("data.csv", ""));
    check(&c, "undeclared missing-value code");
    // A level in the wrong case is caught at lock already, from the labels.
    let c = Case::new();
    c.write(
        "data.csv",
        "id,group,score\n1,A,12\n2,b,10\n3,A,11\n4,b,9\n",
    );
    c.write("plan.toml", &plan("data.csv", ""));
    check(&c, "level in the wrong case");
    c.attest(&["lock", "plan.toml"]).code(1);
    assert!(!c.exists("plan.lock"));
}

#[test]
fn a_locked_plan_on_another_outcome_runs_on_its_own_column_and_the_report_verifies() {
    let c = Case::new();
    let mut csv = String::from("id,group,score,other\n");
    for (i, (g, v)) in spread("a", 12.0)
        .into_iter()
        .chain(spread("b", 10.0))
        .enumerate()
    {
        csv.push_str(&format!("{},{g},{v},{}\n", i + 1, v * 2.0));
    }
    c.write("data.csv", &csv);
    let head = "attest = 1\ntitle = \"Outcome\"\nauthors = [\"A. Researcher\"]\n\n[data]\npath = \"data.csv\"\n\n";
    c.write(
        "o.toml",
        &format!("{head}{}", independent("H1", ["a", "b"])),
    );
    c.attest(&["lock", "o.toml"]).success();
    c.write(
        "o.toml",
        &format!(
            "{head}{}",
            independent("H1", ["a", "b"]).replace("\"score\"", "\"other\"")
        ),
    );
    c.attest(&["run", "o.toml"]).success();
    let r: serde_json::Value = serde_json::from_str(&c.read("out/o/results.json")).unwrap();
    let locked = r["as_locked"]["hypotheses"][0]["estimate"]["value"]
        .as_f64()
        .unwrap();
    let run = r["hypotheses"][0]["estimate"]["value"].as_f64().unwrap();
    assert!((run - 2.0 * locked).abs() < 1e-9, "{locked} {run}");
    c.attest(&["verify", "out/o"]).success();
}

#[test]
fn a_hypothesis_not_computed_leaves_the_other_names_as_the_plan_gives_them() {
    let c = Case::new();
    let mut csv = String::from("unit,group,score,flat\n");
    for (i, (g, v)) in spread("a", 12.0)
        .into_iter()
        .chain(spread("b", 10.0))
        .enumerate()
    {
        csv.push_str(&format!("{i},{g},{v},{}\n", if g == "a" { 5 } else { 7 }));
    }
    c.write("data.csv", &csv);
    let h = |id: &str, outcome: &str| {
        independent(id, ["a", "b"]).replace("\"score\"", &format!("\"{outcome}\""))
    };
    c.write(
        "n.toml",
        &format!(
            "attest = 1\ntitle = \"N\"\nauthors = [\"A. Researcher\"]\n\n[data]\npath = \"data.csv\"\n\n{}{}",
            h("H1", "score"),
            h("H-1", "flat")
        ),
    );
    c.attest(&["run", "--unlocked", "n.toml"]).code(5);
    let values = c.read("out/n/values.json");
    assert!(values.contains("\"NHOneAtOneStat\""), "{values}");
    assert!(!values.contains("HOneAtTwo"), "{values}");
}
