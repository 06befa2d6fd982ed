//! Errors a user sees, with where they happened and what to do next.
//!
//! Every failure that reaches the terminal is a [`Failure`]: a sentence
//! saying what is wrong, an optional position (file, line, column), an
//! optional `help:` line, and a [`Kind`] that decides the exit code. The
//! exit codes are part of the interface and documented in the README:
//!
//! | code | meaning |
//! |---|---|
//! | 0 | success |
//! | 1 | bad input: the plan, the data, the lock or the command line |
//! | 2 | verification failed: something did not reproduce or changed |
//! | 3 | an internal error or an I/O failure of the machine (disk full, …) |
//! | 4 | `verify` cannot confirm an outside record the report claims (a git commit that is gone); nothing was found to differ |
//! | 5 | `run` or `rehearse` wrote its outputs, but at least one hypothesis could not be computed (its values leave the test undefined); the report says which and why |
//! | 6 | the database the plan reads from could not be reached, or refused the plan's query |

use std::fmt;
use std::path::{Path, PathBuf};

/// What kind of failure this is; decides the exit code.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Kind {
    /// The plan, the data, the lock or the command line is not usable (exit 1).
    Input,
    /// `verify` or `--check-unchanged` found a difference (exit 2).
    Verification,
    /// Something failed that the user could not have caused (exit 3).
    Internal,
    /// `verify` found nothing changed but cannot confirm an outside record
    /// the report claims, such as its git commit (exit 4).
    Unconfirmed,
    /// The database a plan reads from could not be reached or refused the
    /// query (exit 6).
    Source,
}

/// Exit code of a `run` or `rehearse` that wrote its outputs while at
/// least one hypothesis could not be computed.
pub(crate) const NOT_COMPUTED: i32 = 5;

impl Kind {
    /// The process exit code for this kind.
    pub(crate) fn exit_code(self) -> i32 {
        match self {
            Kind::Input => 1,
            Kind::Verification => 2,
            Kind::Internal => 3,
            Kind::Unconfirmed => 4,
            Kind::Source => 6,
        }
    }
}

/// A position inside a file, 1-based; `line`/`column` are absent when the
/// failure concerns the whole file.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Location {
    /// The file, as the user named it (relative where possible).
    pub file: PathBuf,
    /// 1-based line number.
    pub line: Option<usize>,
    /// 1-based column number.
    pub column: Option<usize>,
}

impl fmt::Display for Location {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}", self.file.display())?;
        if let Some(line) = self.line {
            write!(f, ":{line}")?;
            if let Some(col) = self.column {
                write!(f, ":{col}")?;
            }
        }
        Ok(())
    }
}

/// A failure as the user reads it: `error: <where>: <what>` then `help: …`.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Failure {
    /// What went wrong, in one sentence.
    pub what: String,
    /// Where, if a place exists.
    pub location: Option<Location>,
    /// What to do next.
    pub help: Option<String>,
    /// Decides the exit code.
    pub kind: Kind,
}

impl Failure {
    /// A bad-input failure with no location.
    pub(crate) fn input(what: impl Into<String>) -> Self {
        Failure {
            what: what.into(),
            location: None,
            help: None,
            kind: Kind::Input,
        }
    }

    /// An internal failure (I/O of the machine, a broken invariant).
    pub(crate) fn internal(what: impl Into<String>) -> Self {
        Failure {
            kind: Kind::Internal,
            ..Failure::input(what)
        }
    }

    /// Attaches a file (no line) to the failure.
    pub(crate) fn in_file(mut self, file: impl AsRef<Path>) -> Self {
        self.location = Some(Location {
            file: file.as_ref().to_path_buf(),
            line: None,
            column: None,
        });
        self
    }

    /// Attaches a file position to the failure.
    pub(crate) fn at(mut self, file: impl AsRef<Path>, line: usize, column: Option<usize>) -> Self {
        self.location = Some(Location {
            file: file.as_ref().to_path_buf(),
            line: Some(line),
            column,
        });
        self
    }

    /// Adds the `help:` line.
    pub(crate) fn help(mut self, help: impl Into<String>) -> Self {
        self.help = Some(help.into());
        self
    }

    /// A failure to read or write a file, worded for the user.
    pub(crate) fn io(action: &str, path: &Path, err: &std::io::Error) -> Self {
        let kind = match err.kind() {
            std::io::ErrorKind::NotFound | std::io::ErrorKind::PermissionDenied => Kind::Input,
            _ => Kind::Internal,
        };
        Failure {
            what: format!("cannot {action} {}: {}", path.display(), plain_io(err)),
            location: None,
            help: None,
            kind,
        }
    }
}

/// The OS error without Rust's "(os error 2)" suffix.
fn plain_io(err: &std::io::Error) -> String {
    let s = err.to_string();
    match s.find(" (os error") {
        Some(i) => s[..i].to_string(),
        None => s,
    }
}

/// `s` with every control character (and every Unicode character that
/// reorders or hides text on a terminal) written as a visible escape such
/// as `\u{1b}`, so text from a plan, a data cell or a file name can never
/// steer the terminal or forge a line. Tabs become `\t`, newlines `\n`.
pub fn clean(s: &str) -> std::borrow::Cow<'_, str> {
    fn unsafe_char(c: char) -> bool {
        c.is_control()
            || matches!(c, '\u{200e}' | '\u{200f}' | '\u{202a}'..='\u{202e}' | '\u{2066}'..='\u{2069}')
    }
    if !s.chars().any(unsafe_char) {
        return std::borrow::Cow::Borrowed(s);
    }
    let mut out = String::with_capacity(s.len() + 8);
    for c in s.chars() {
        match c {
            '\n' => out.push_str("\\n"),
            '\t' => out.push_str("\\t"),
            c if unsafe_char(c) => out.push_str(&format!("\\u{{{:x}}}", c as u32)),
            c => out.push(c),
        }
    }
    std::borrow::Cow::Owned(out)
}

impl fmt::Display for Failure {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        // A message is one line: a line break inside it (from a quoted
        // cell, say) shows as `\n` and cannot forge a `help:` line.
        let what = clean(&self.what);
        match &self.location {
            Some(loc) => write!(f, "error: {}: {what}", clean(&loc.to_string()))?,
            None => write!(f, "error: {what}")?,
        }
        if let Some(help) = &self.help {
            write!(f, "\nhelp: {}", clean(help))?;
        }
        Ok(())
    }
}

impl std::error::Error for Failure {}

/// Result type used across the pipeline.
pub type Result<T, E = Failure> = std::result::Result<T, E>;

/// The most characters of user text an error message quotes.
pub(crate) const QUOTE_LIMIT: usize = 60;

/// User text as an error message quotes it: escaped by [`clean`] (line
/// breaks, tabs, terminal escapes and reordering characters written as
/// `\n`, `\u{1b}` and so on, so nothing from the input can steer the
/// terminal), and at most
/// [`QUOTE_LIMIT`] characters, the rest replaced by "… (N more characters)".
pub(crate) fn shown(text: &str) -> String {
    let count = text.chars().count();
    if count <= QUOTE_LIMIT {
        return clean(text).into_owned();
    }
    let head: String = text.chars().take(QUOTE_LIMIT).collect();
    format!(
        "{}… ({} more characters)",
        clean(&head),
        count - QUOTE_LIMIT
    )
}

/// Caps a whole message (one that may embed user text the parser quoted)
/// at a few lines' worth, cutting at a character boundary.
pub(crate) fn capped_message(msg: &str) -> String {
    const LIMIT: usize = 300;
    if msg.chars().count() <= LIMIT {
        return msg.to_string();
    }
    let cut: String = msg.chars().take(LIMIT).collect();
    format!("{cut}… (message cut)")
}

/// Converts a byte offset in `source` to a 1-based (line, column); the
/// column counts characters, not bytes.
pub(crate) fn line_col(source: &str, offset: usize) -> (usize, usize) {
    let offset = offset.min(source.len());
    let before = &source[..floor_char_boundary(source, offset)];
    let line = before.matches('\n').count() + 1;
    let line_start = before.rfind('\n').map_or(0, |i| i + 1);
    let column = before[line_start..].chars().count() + 1;
    (line, column)
}

fn floor_char_boundary(s: &str, mut i: usize) -> usize {
    while i > 0 && !s.is_char_boundary(i) {
        i -= 1;
    }
    i
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn renders_location_and_help() {
        let f = Failure::input("`alpha` must be between 0 and 1")
            .at("a.toml", 3, Some(9))
            .help("write a value such as 0.05");
        assert_eq!(
            f.to_string(),
            "error: a.toml:3:9: `alpha` must be between 0 and 1\nhelp: write a value such as 0.05"
        );
        assert_eq!(f.kind.exit_code(), 1);
    }

    #[test]
    fn shown_caps_and_escapes_user_text() {
        assert_eq!(shown("n/a"), "n/a");
        assert_eq!(shown("a\nb\u{1b}[31m"), "a\\nb\\u{1b}[31m");
        let long = "x".repeat(QUOTE_LIMIT + 40);
        let s = shown(&long);
        assert!(s.starts_with(&"x".repeat(QUOTE_LIMIT)), "{s}");
        assert!(s.ends_with("… (40 more characters)"), "{s}");
        assert!(capped_message(&"y".repeat(10_000)).chars().count() < 320);
    }

    #[test]
    fn control_characters_never_reach_the_terminal() {
        // ESC, BEL, CR and a right-to-left override (U+202E, the "Trojan
        // Source" reordering character: Boucher & Anderson, USENIX Security 2023).
        let f =
            Failure::input("bad cell \"\u{1b}[31mred\u{7}\r\u{202e}x\"").help("fix \u{1b}]0;title");
        let s = f.to_string();
        assert!(!s.chars().any(|c| c.is_control() && c != '\n'), "{s:?}");
        assert!(s.contains("\\u{1b}[31mred\\u{7}\\u{d}\\u{202e}x"), "{s}");
        assert_eq!(s.lines().count(), 2);
        assert_eq!(clean("plain"), "plain");
        assert_eq!(clean("a\nb"), "a\\nb");
    }

    #[test]
    fn line_col_counts_characters() {
        let s = "a = 1\nbé = 2\n";
        assert_eq!(line_col(s, 0), (1, 1));
        assert_eq!(line_col(s, 6), (2, 1));
        // 'b' 'é' ' ' → offset of '=' is 6 + 1 + 2 + 1 = 10 → column 4.
        assert_eq!(line_col(s, 10), (2, 4));
    }
}
