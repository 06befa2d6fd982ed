//! The methods section and its references, through the real binary: the
//! list names only the methods that ran, every listed work is cited in the
//! methods text, and `references.bib` holds the same works. Also
//! `tables.tex`: one booktabs table per numbered table of the report.

mod common;

use common::{copy_dir, root, Case, DEMOS};

const DATA: &str = "room,score\nnorth,12.1\nnorth,13.4\nnorth,11.8\nnorth,12.9\nnorth,14.0\nnorth,13.1\nnorth,12.2\nnorth,13.7\nsouth,10.9\nsouth,11.6\nsouth,12.0\nsouth,10.4\nsouth,11.1\nsouth,12.3\nsouth,10.8\nsouth,11.5\n";

/// An invented plan: one hypothesis, a fixed method, robustness as given.
fn plan(method: &str, robustness: bool) -> String {
    format!(
        r#"attest = 1
title = "Rooms"
authors = ["Test"]

[data]
path = "rooms.csv"

[[hypothesis]]
id = "H1"
claim = "North rooms score higher"
design = "independent"
outcome = "score"
group = "room"
levels = ["north", "south"]
alternative = "greater"
method = "{method}"
robustness = {robustness}
"#
    )
}

/// Runs a plan unlocked and returns (report.md, references.bib).
fn run(plan_text: &str) -> (String, String) {
    let c = Case::new();
    c.write("rooms.csv", DATA);
    c.write("rooms.toml", plan_text);
    c.attest(&["run", "--unlocked", "--quiet", "rooms.toml"])
        .success();
    (
        c.read("out/rooms/report.md"),
        c.read("out/rooms/references.bib"),
    )
}

/// The text between a heading and the next heading of the same level.
fn section<'a>(md: &'a str, heading: &str) -> &'a str {
    let start = md
        .find(heading)
        .unwrap_or_else(|| panic!("no {heading:?} in\n{md}"));
    let rest = &md[start + heading.len()..];
    let end = rest.find("\n## ").unwrap_or(rest.len());
    &rest[..end]
}

/// The references list: one entry per paragraph.
fn entries(md: &str) -> Vec<String> {
    section(md, "## References\n")
        .split("\n\n")
        .map(str::trim)
        .filter(|e| !e.is_empty())
        .map(String::from)
        .collect()
}

/// The in-text citation an APA entry calls for: "Family, year",
/// "A & B, year" or "A et al., year" (APA 7 §8.17), taken from the entry.
fn in_text(entry: &str) -> String {
    let (authors, rest) = entry.split_once(" (").expect("an entry has a year");
    let year = &rest[..4];
    let families: Vec<&str> = authors
        .split(", ")
        .map(|p| p.trim_start_matches("& "))
        // Initials ("B. L.") and "Jr." are not family names; a single
        // name such as a pseudonym ends with the element's full stop.
        .filter(|p| {
            *p != "Jr."
                && !p
                    .chars()
                    .all(|c| c.is_uppercase() || c == '.' || c == ' ' || c == '-')
        })
        .map(|p| p.trim_end_matches('.'))
        .collect();
    match families.as_slice() {
        [one] => format!("{one}, {year}"),
        [a, b] => format!("{a} & {b}, {year}"),
        [a, ..] => format!("{a} et al., {year}"),
        [] => panic!("no author in {entry}"),
    }
}

/// True when the methods text cites `entry`, in parentheses or in the
/// narrative form "A and B (year)".
fn cited(methods: &str, entry: &str) -> bool {
    let c = in_text(entry);
    let narrative = {
        let (names, year) = c.rsplit_once(", ").unwrap();
        format!("{} ({year})", names.replace(" & ", " and "))
    };
    methods.contains(&c) || methods.contains(&narrative)
}

#[test]
fn a_plan_with_only_welch_cites_neither_rank_test() {
    let (md, bib) = run(&plan("welch-t", false));
    let refs = entries(&md).join("\n");
    assert!(refs.contains("Welch, B. L. (1947)"), "{refs}");
    assert!(refs.contains("Satterthwaite, F. E. (1946)"), "{refs}");
    for absent in [
        "Mann, H. B.",
        "Wilcoxon",
        "Brunner",
        "Yuen",
        "Hodges",
        "Student. (1908)",
    ] {
        assert!(!refs.contains(absent), "{absent} cited:\n{refs}");
        assert!(!bib.contains(absent), "{absent} in references.bib:\n{bib}");
    }
    // The checks ran (they are reported), so their sources are cited.
    assert!(
        refs.contains("Shapiro, S. S., & Wilk, M. B. (1965)"),
        "{refs}"
    );
}

#[test]
fn robustness_checks_cite_the_methods_they_ran() {
    let (md, _) = run(&plan("welch-t", true));
    let refs = entries(&md).join("\n");
    for present in [
        "Mann, H. B., & Whitney, D. R. (1947)",
        "Student. (1908)",
        "Brunner, E., & Munzel, U. (2000)",
        "Yuen, K. K. (1974)",
        "Hodges, J. L., Jr., & Lehmann, E. L. (1963)",
    ] {
        assert!(refs.contains(present), "{present} missing:\n{refs}");
    }
}

#[test]
fn every_reference_is_cited_and_every_citation_is_listed() {
    let c = Case::new();
    copy_dir(&root().join("analyses"), &c.path().join("analyses"));
    for stem in DEMOS {
        c.attest(&["run", "--quiet", &format!("analyses/{stem}.toml")])
            .success();
        let md = c.read(&format!("out/{stem}/report.md"));
        let methods = section(&md, "## How the analysis was done\n");
        let list = entries(&md);
        assert!(!list.is_empty(), "{stem}: no references");
        for e in &list {
            assert!(cited(methods, e), "{stem}: {e}\nis not cited in\n{methods}");
        }
        let bib = c.read(&format!("out/{stem}/references.bib"));
        assert_eq!(
            bib.matches("\n@").count(),
            list.len(),
            "{stem}: references.bib and the list differ:\n{bib}"
        );
        // The other way round: each "(Name, 1999)"-style citation in the
        // methods names a listed work.
        for (i, _) in methods
            .match_indices(", 1")
            .chain(methods.match_indices(", 2"))
        {
            let year = &methods[i + 2..(i + 6).min(methods.len())];
            if year.len() == 4 && year.chars().all(|d| d.is_ascii_digit()) {
                let before = &methods[..i];
                let name_start = before.rfind(['(', ';']).map(|j| j + 1).unwrap_or(0);
                let name = before[name_start..].trim();
                let first = name.split([' ', ',']).next().unwrap();
                if first.chars().next().is_some_and(char::is_uppercase) {
                    assert!(
                        list.iter()
                            .any(|e| e.starts_with(first) && e.contains(&format!("({year})"))),
                        "{stem}: {name}, {year} is cited but not listed"
                    );
                }
            }
        }
    }
}

#[test]
fn the_methods_say_what_was_preregistered_and_how_the_test_was_chosen() {
    let c = Case::new();
    copy_dir(&root().join("analyses"), &c.path().join("analyses"));
    c.attest(&["run", "--quiet", "analyses/picking.toml"])
        .success();
    let md = c.read("out/picking/report.md");
    let methods = section(&md, "## How the analysis was done\n");
    assert!(
        methods.contains("were preregistered: the analysis plan was locked on"),
        "{methods}"
    );
    assert!(
        methods.contains("The test was chosen by a preregistered rule"),
        "{methods}"
    );
    assert!(methods.contains("The checks led to"), "{methods}");
    assert!(methods.contains("judged at α = "), "{methods}");
}

#[test]
fn tables_tex_has_one_labelled_booktabs_table_per_report_table() {
    let c = Case::new();
    copy_dir(&root().join("analyses"), &c.path().join("analyses"));
    c.attest(&["run", "--quiet", "analyses/tutoring.toml"])
        .success();
    let md = c.read("out/tutoring/report.md");
    let tex = c.read("out/tutoring/tables.tex");
    let numbered = md.matches("\n**Table ").count();
    assert!(numbered >= 3, "{md}");
    assert_eq!(tex.matches("\\begin{table}").count(), numbered, "{tex}");
    assert_eq!(tex.matches("\\toprule").count(), numbered);
    assert_eq!(tex.matches("\\bottomrule").count(), numbered);
    let mut labels: Vec<&str> = tex
        .match_indices("\\label{")
        .map(|(i, _)| {
            let rest = &tex[i + 7..];
            &rest[..rest.find('}').unwrap()]
        })
        .collect();
    assert!(
        labels.iter().all(|l| l.starts_with("tab:tutoring-")),
        "{labels:?}"
    );
    let n = labels.len();
    labels.sort();
    labels.dedup();
    assert_eq!(labels.len(), n, "labels repeat");
    // Every numbered table of the report, by number and title.
    for (i, _) in md.match_indices("**Table ") {
        let rest = &md[i + 8..];
        let number = &rest[..rest.find("**").unwrap()];
        let title = rest
            .split("\n\n")
            .nth(1)
            .unwrap()
            .trim_matches('*')
            .replace('\\', "");
        assert!(
            tex.contains(&format!("% Table {number}: {title}\n")),
            "Table {number}, {title}, is not in tables.tex:\n{tex}"
        );
    }
}
