//! The command line: argument definitions (clap) and the terminal lines
//! each command prints. The work itself is done in `pipeline`.

mod args;
mod batch;
mod terminal;

pub(crate) use args::{Cli, Command};

use crate::error::{Failure, Result};
use crate::pipeline::{self, RunOptions};
use clap::Parser;
use std::io::Write;

/// Parses the command line, runs the command, and returns the exit code.
pub fn main() -> i32 {
    let cli = match Cli::try_parse() {
        Ok(c) => c,
        Err(e) => {
            if let Some(f) = one_sided_without_direction(&e) {
                warn(&f.to_string());
                return f.kind.exit_code();
            }
            // clap prints help/version to stdout (exit 0) and usage errors to
            // stderr; usage errors are bad input (exit 1).
            let code = if e.use_stderr() { 1 } else { 0 };
            let _ = e.print();
            return code;
        }
    };
    match dispatch(cli) {
        Ok(code) => code,
        Err(f) => {
            warn(&f.to_string());
            f.kind.exit_code()
        }
    }
}

/// `--alternative one-sided` (or one-tailed): clap would suggest the
/// nearest spelling, "two-sided", which means the opposite; say instead
/// how a one-sided test is named here.
fn one_sided_without_direction(e: &clap::Error) -> Option<Failure> {
    use clap::error::{ContextKind, ContextValue, ErrorKind};
    if e.kind() != ErrorKind::InvalidValue {
        return None;
    }
    let arg = match e.get(ContextKind::InvalidArg)? {
        ContextValue::String(s) => s.clone(),
        _ => return None,
    };
    let value = match e.get(ContextKind::InvalidValue)? {
        ContextValue::String(s) => s.clone(),
        _ => return None,
    };
    if !arg.starts_with("--alternative") || !crate::plan::validate::is_one_sided_name(&value) {
        return None;
    }
    Some(
        Failure::input(format!(
            "`--alternative {}` does not say which direction",
            crate::error::shown(&value)
        ))
        .help(
            "a one-sided test is named by its direction: `--alternative greater` (the \
             difference is above zero) or `--alternative less` (below zero); two-sided is the \
             default",
        ),
    )
}

/// Writes one block of text and a newline to standard output.
fn say(s: &str) -> Result<()> {
    let mut out = std::io::stdout().lock();
    match writeln!(out, "{s}") {
        // A reader that stops early (`attest man | head`) is not an error.
        Err(e) if e.kind() == std::io::ErrorKind::BrokenPipe => Ok(()),
        other => other.map_err(|e| Failure::internal(format!("cannot write to the terminal: {e}"))),
    }
}

/// Writes one line to standard error; a closed stderr is not worth a panic.
fn warn(s: &str) {
    let _ = writeln!(std::io::stderr().lock(), "{s}");
}

fn dispatch(cli: Cli) -> Result<i32> {
    match cli.command {
        Command::New {
            name,
            design,
            method,
        } => {
            let path = crate::starter::write(std::path::Path::new("."), &name, design, method)?;
            say(&format!(
                "wrote {}\nnext: read its comments and edit it, then `attest check {}`",
                path.display(),
                path.display()
            ))?;
        }
        Command::Completions { shell } => {
            let mut cmd = <Cli as clap::CommandFactory>::command();
            let mut buf = Vec::new();
            clap_complete::generate(shell, &mut cmd, "attest", &mut buf);
            say(String::from_utf8_lossy(&buf).trim_end())?;
        }
        Command::Man => {
            let cmd = <Cli as clap::CommandFactory>::command();
            let mut buf = Vec::new();
            clap_mangen::Man::new(cmd)
                .render(&mut buf)
                .map_err(|e| Failure::internal(format!("cannot render the manual page: {e}")))?;
            say(String::from_utf8_lossy(&buf).trim_end())?;
        }
        Command::Check { file } => {
            let f = pipeline::check(&file)?;
            say(&terminal::plan_summary(&f))?;
        }
        Command::Lock {
            file,
            out,
            templates,
            force,
            sign,
            tsa,
        } => {
            let at = crate::seal::before_lock(&file, sign.as_deref(), &tsa)?;
            let o = pipeline::lock(&file, out.as_deref(), templates.as_deref(), force)?;
            say(&terminal::locked(&o))?;
            if sign.is_some() || !tsa.is_empty() {
                say(&crate::seal::after_lock(&o.lock_path, &at)?)?;
            }
        }
        Command::Rehearse {
            file,
            out,
            seed,
            templates,
            force,
        } => {
            let o = pipeline::rehearse(&file, out.as_deref(), seed, templates.as_deref(), force)?;
            let n = o.results.hypotheses.len();
            say(&format!(
                "rehearsed on blinded data: {n} {} ran, {} could not be computed\nwrote {} (every page stamped as a rehearsal; no named values)",
                if n == 1 { "hypothesis" } else { "hypotheses" },
                o.results.not_computed.len(),
                crate::error::clean(&o.out_dir.display().to_string())
            ))?;
            if let Some(r) = &o.recorded {
                say(&format!(
                    "recorded beside the lock: {}",
                    crate::error::clean(&r.display().to_string())
                ))?;
            }
            for n in &o.results.not_computed {
                warn(&format!(
                    "not computed: {}: {}",
                    crate::error::clean(&n.id),
                    crate::error::clean(&n.reason)
                ));
            }
            say("next: fix what the rehearsal showed, then `attest lock` (or, if locked, `attest run`)")?;
            if !o.results.not_computed.is_empty() {
                return Ok(crate::error::NOT_COMPUTED);
            }
        }
        Command::Sign { file, key } => say(&crate::seal::sign_command(&file, &key)?)?,
        Command::Stamp { file, tsa } => say(&crate::seal::stamp_command(&file, &tsa)?)?,
        Command::Run {
            paths,
            out,
            unlocked,
            templates,
            force,
            expect_same,
            quiet,
            json,
            tsa,
        } => {
            let files = pipeline::expand(&paths)?;
            if json && (files.len() > 1 || expect_same) {
                return Err(Failure::input("--json prints the summary of one analysis")
                    .help("run one analysis file with --json, or leave --json out"));
            }
            if files.len() > 1 && out.is_some() {
                return Err(Failure::input(
                    "--out names one folder, but several analyses were given",
                )
                .help("leave out --out; each analysis writes to out/<stem>/"));
            }
            let opts = RunOptions {
                out,
                unlocked,
                templates,
                force,
            };
            if !tsa.is_empty() && files.len() > 1 {
                return Err(Failure::input("--tsa stamps the data of one analysis")
                    .help("run one analysis file with --tsa"));
            }
            if files.len() == 1 && !expect_same {
                if !tsa.is_empty() {
                    eprintln!("{}", crate::seal::stamp_data(&files[0], &tsa)?);
                }
                let o = pipeline::run(&files[0], &opts)?;
                for line in terminal::lock_warnings(&o.results) {
                    warn(&line);
                }
                if json {
                    say(&terminal::run_json(&o))?;
                } else if !quiet {
                    say(&terminal::run_summary(&o, terminal::colour()))?;
                }
                if !o.results.not_computed.is_empty() {
                    for n in &o.results.not_computed {
                        warn(&format!(
                            "not computed: {}: {}",
                            crate::error::clean(&n.id),
                            crate::error::clean(&n.reason)
                        ));
                    }
                    return Ok(crate::error::NOT_COMPUTED);
                }
            } else {
                return batch::run(&files, &opts, expect_same, quiet);
            }
        }
        Command::Power {
            design,
            effect,
            power,
            n,
            alpha,
            alternative,
            ratio,
            sd_ratio,
            simulate,
            seed,
            json,
        } => {
            if !(alpha > 0.0 && alpha < 1.0) {
                return Err(Failure::input(format!(
                    "--alpha must lie strictly between 0 and 1, found {alpha}"
                ))
                .help("e.g. --alpha 0.05"));
            }
            let q = crate::analysis::planning::Question {
                design,
                effect,
                power,
                n,
                alpha,
                alternative: alternative.into(),
                ratio,
                sd_ratio,
                simulate,
                seed,
            };
            let a = crate::analysis::planning::answer(&q)?;
            if json {
                say(&terminal::power_json(&a))?;
            } else {
                say(&crate::render::view::planning::answer_lines(&a).join("\n"))?;
            }
        }
        Command::Values { file, unlocked } => {
            let r = pipeline::compute(&file, unlocked)?;
            let v = crate::render::values::from_results(&r)?;
            let width = v.iter().map(|(k, _)| k.len() + 1).max().unwrap_or(0);
            let lines: Vec<String> = v
                .iter()
                .map(|(k, val)| {
                    format!(
                        "{:<width$}  {}",
                        format!("\\{k}"),
                        crate::error::clean(&crate::render::values::plain(val))
                    )
                })
                .collect();
            say(&lines.join("\n"))?;
        }
        Command::Verify {
            report,
            plan,
            templates,
            signers,
            tsa_roots,
            run_query,
        } => {
            let trust = crate::seal::Options { signers, tsa_roots };
            trust.read()?;
            let mut v =
                crate::verify::verify(&report, plan.as_deref(), templates.as_deref(), run_query)?;
            let lock = crate::lock::lock_path(&v.analysis);
            for f in crate::seal::check_all(&lock, &trust)? {
                use crate::seal::Status;
                let bad = f.status == Status::Bad;
                v.items.push(crate::verify::Item {
                    what: f.what,
                    outcome: if bad {
                        crate::verify::Outcome::Changed {
                            how: f.text,
                            fatal: true,
                        }
                    } else {
                        crate::verify::Outcome::Note(f.text)
                    },
                });
            }
            say(&terminal::verification(&v))?;
            return Ok(v.exit_code());
        }
    }
    Ok(0)
}
