//! Runs every example of the user guide (`docs/guide/`) so the guide cannot
//! drift from the tool.
//!
//! Each page runs in a fresh temporary folder that holds a copy of the
//! repository's `analyses/` folder. The page's fenced blocks are taken in
//! order:
//!
//! - a block whose info string carries `title="PATH"` (for example
//!   ```` ```toml title="analyses/tea.toml" ````) is a file: its text is
//!   written to PATH, replacing any earlier version;
//! - a ```` ```console ```` block holds commands: each line starting with
//!   `$ attest …` is run with the real binary, and the lines after it, up to
//!   the next `$` line, are the output the page promises. A trailing
//!   `# exit N` comment on the command line gives the expected exit code
//!   (0 when absent).
//!
//! Expected output is compared line by line with what the command printed
//! (its error stream first, then its standard output, trailing spaces
//! ignored). Inside a line, `…` stands for any text; a line holding only
//! `…` stands for any number of lines; lines printed after the last
//! expected line are not compared, so a page may show only the first line.
//!
//! Every full analysis file shown in `reference/analysis-file.md` is also
//! parsed with the library's own validator.

use assert_cmd::Command;
use std::path::{Path, PathBuf};

mod common;

/// One runnable piece of a page.
#[derive(Debug)]
enum Step {
    /// Write a file (path relative to the case folder, text).
    File(String, String),
    /// Run a command: arguments after `attest`, expected exit code,
    /// expected output lines, and the page line for messages.
    Run(Vec<String>, i32, Vec<String>, usize),
}

/// A fenced block: its info string, its text and the line it starts on.
struct Block {
    info: String,
    body: String,
    line: usize,
}

/// The fenced blocks of a Markdown page (``` fences only, not indented).
fn blocks(text: &str) -> Vec<Block> {
    let mut out = Vec::new();
    let mut open: Option<Block> = None;
    for (i, line) in text.lines().enumerate() {
        match &mut open {
            None => {
                if let Some(info) = line.strip_prefix("```") {
                    open = Some(Block {
                        info: info.trim().to_string(),
                        body: String::new(),
                        line: i + 1,
                    });
                }
            }
            Some(b) => {
                if line.trim_end() == "```" {
                    out.push(open.take().expect("open block"));
                } else {
                    b.body.push_str(line);
                    b.body.push('\n');
                }
            }
        }
    }
    assert!(open.is_none(), "a fenced block is never closed");
    out
}

/// The value of `title="…"` in a block's info string.
fn title(info: &str) -> Option<String> {
    let rest = info.split_once("title=\"")?.1;
    Some(rest.split_once('"')?.0.to_string())
}

/// Splits a command line into words; double quotes group words.
fn words(line: &str) -> Vec<String> {
    let mut out = Vec::new();
    let mut cur = String::new();
    let mut quoted = false;
    let mut any = false;
    for ch in line.chars() {
        match ch {
            '"' => {
                quoted = !quoted;
                any = true;
            }
            c if c.is_whitespace() && !quoted => {
                if any {
                    out.push(std::mem::take(&mut cur));
                    any = false;
                }
            }
            c => {
                cur.push(c);
                any = true;
            }
        }
    }
    assert!(!quoted, "unbalanced quote in `{line}`");
    if any {
        out.push(cur);
    }
    out
}

/// The runnable steps of a page, in order.
fn steps(page: &str, text: &str) -> Vec<Step> {
    let mut out = Vec::new();
    for b in blocks(text) {
        if let Some(path) = title(&b.info) {
            out.push(Step::File(path, b.body));
        } else if b.info == "console" {
            for (k, line) in b.body.lines().enumerate() {
                let at = b.line + 1 + k;
                if let Some(cmd) = line.strip_prefix("$ ") {
                    let (cmd, code) = match cmd.split_once(" # exit ") {
                        Some((c, n)) => (c, n.trim().parse().expect("exit code")),
                        None => (cmd, 0),
                    };
                    let mut w = words(cmd);
                    assert_eq!(
                        w.first().map(String::as_str),
                        Some("attest"),
                        "{page}:{at}: console blocks run only `attest` commands"
                    );
                    w.remove(0);
                    out.push(Step::Run(w, code, Vec::new(), at));
                } else if let Some(Step::Run(_, _, expected, _)) = out.last_mut() {
                    expected.push(line.trim_end().to_string());
                } else {
                    panic!("{page}:{at}: output before any `$ attest` line");
                }
            }
        }
    }
    out
}

/// Whether one output line matches one expected line (`…` = any text).
fn line_matches(pattern: &str, actual: &str) -> bool {
    let parts: Vec<&str> = pattern.split('…').collect();
    if parts.len() == 1 {
        return pattern == actual;
    }
    let (first, last) = (parts[0], parts[parts.len() - 1]);
    if !actual.starts_with(first) || actual.len() < first.len() + last.len() {
        return false;
    }
    let mut rest = &actual[first.len()..];
    for p in &parts[1..parts.len() - 1] {
        match rest.find(p) {
            Some(i) => rest = &rest[i + p.len()..],
            None => return false,
        }
    }
    rest.ends_with(last)
}

/// Whether the output lines match the expected lines from the start.
fn output_matches(expected: &[String], actual: &[&str]) -> bool {
    match expected.split_first() {
        None => true,
        Some((e, rest)) if e == "…" => {
            (0..=actual.len()).any(|skip| output_matches(rest, &actual[skip..]))
        }
        Some((e, rest)) => match actual.split_first() {
            Some((a, more)) => line_matches(e, a) && output_matches(rest, more),
            None => false,
        },
    }
}

/// Runs the examples of one page; returns how many commands ran.
fn run_page(page: &Path) -> usize {
    let name = page.display().to_string();
    let text = std::fs::read_to_string(page).unwrap_or_else(|e| panic!("{name}: {e}"));
    let case = common::Case::new();
    common::copy_dir(
        &common::root().join("analyses"),
        &case.path().join("analyses"),
    );
    let mut ran = 0;
    for step in steps(&name, &text) {
        match step {
            Step::File(path, body) => case.write(&path, &body),
            Step::Run(args, code, expected, at) => {
                let out = Command::cargo_bin("attest")
                    .unwrap()
                    .current_dir(case.path())
                    .env("SOURCE_DATE_EPOCH", "1764547200")
                    .env("NO_COLOR", "1")
                    .args(&args)
                    .output()
                    .expect("run attest");
                let printed = format!(
                    "{}{}",
                    String::from_utf8_lossy(&out.stderr),
                    String::from_utf8_lossy(&out.stdout)
                );
                let lines: Vec<&str> = printed.lines().map(str::trim_end).collect();
                assert_eq!(
                    out.status.code(),
                    Some(code),
                    "{name}:{at}: `attest {}` exited differently; it printed:\n{printed}",
                    args.join(" ")
                );
                assert!(
                    output_matches(&expected, &lines),
                    "{name}:{at}: `attest {}` printed\n{printed}\nbut the page shows\n{}",
                    args.join(" "),
                    expected.join("\n")
                );
                ran += 1;
            }
        }
    }
    ran
}

/// Every Markdown file under `docs/guide/`, in path order.
fn pages() -> Vec<PathBuf> {
    fn walk(dir: &Path, out: &mut Vec<PathBuf>) {
        for e in std::fs::read_dir(dir).expect("docs/guide exists") {
            let p = e.unwrap().path();
            if p.is_dir() {
                walk(&p, out);
            } else if p.extension().is_some_and(|x| x == "md") {
                out.push(p);
            }
        }
    }
    let mut out = Vec::new();
    walk(&common::root().join("docs/guide"), &mut out);
    out.sort();
    out
}

#[test]
fn every_guide_example_runs_as_shown() {
    let task_pages = [
        "write-a-plan.md",
        "lock-it.md",
        "run-it.md",
        "read-the-report.md",
        "declare-a-deviation.md",
        "regenerate-everything.md",
        "verify-a-report.md",
        "plan-the-sample-size.md",
        "quote-results-in-a-thesis.md",
    ];
    let all = pages();
    for want in task_pages {
        let page = all
            .iter()
            .find(|p| p.file_name().is_some_and(|n| n == want))
            .unwrap_or_else(|| panic!("docs/guide/{want} is missing"));
        assert!(run_page(page) > 0, "{want} runs no command");
    }
    for page in all.iter().filter(|p| {
        !task_pages
            .iter()
            .any(|w| p.file_name().is_some_and(|n| n == *w))
    }) {
        run_page(page);
    }
}

#[test]
fn every_full_analysis_file_in_the_reference_parses() {
    let path = common::root().join("docs/guide/reference/analysis-file.md");
    let text = std::fs::read_to_string(&path).expect("reference page exists");
    let mut parsed = 0;
    for b in blocks(&text) {
        let is_toml = b.info.split_whitespace().next() == Some("toml");
        if is_toml && b.body.lines().any(|l| l.starts_with("attest =")) {
            let at = Path::new("analysis-file.md");
            if let Err(e) = attest::plan::validate::parse(at, &b.body) {
                panic!("reference/analysis-file.md:{}: {e:?}", b.line);
            }
            parsed += 1;
        }
    }
    assert!(parsed >= 3, "only {parsed} full analysis files were parsed");
}

#[test]
fn the_harness_reads_fences_and_patterns() {
    // The harness itself: hand-made inputs with known answers.
    let page = "```toml title=\"a/b.toml\"\nx = 1\n```\n\n```console\n$ attest check \"a b.toml\" # exit 1\nerror: …\n…\nend\n```\n";
    let s = steps("p", page);
    assert!(matches!(&s[0], Step::File(p, t) if p == "a/b.toml" && t == "x = 1\n"));
    match &s[1] {
        Step::Run(args, code, exp, _) => {
            assert_eq!(args, &["check", "a b.toml"]);
            assert_eq!(*code, 1);
            assert_eq!(exp, &["error: …", "…", "end"]);
            assert!(output_matches(exp, &["error: x", "y", "z", "end", "more"]));
            assert!(!output_matches(exp, &["warning: x", "end"]));
            assert!(!output_matches(exp, &["error: x", "y"]));
        }
        other => panic!("unexpected step {other:?}"),
    }
    assert!(line_matches(
        "H1  welch-t  diff …  supported",
        "H1  welch-t  diff 1 [2, 3]  d 1  p .01  supported"
    ));
    assert!(!line_matches("a…b", "ab c"));
}
