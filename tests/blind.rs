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
