//! Argument definitions. Help text, the man page and shell completions are
//! all generated from these structures.

use clap::{Parser, Subcommand};
use std::path::PathBuf;

/// Preregister a two-group comparison, lock it, run it unchanged, and
/// render an audit-ready report.
#[derive(Debug, Parser)]
#[command(name = "attest", version, about, long_about = None, propagate_version = true, term_width = 100)]
pub(crate) struct Cli {
    /// What to do.
    #[command(subcommand)]
    pub command: Command,
}

/// The commands.
#[derive(Debug, Subcommand)]
pub(crate) enum Command {
    /// Start a new analysis plan: write a complete, commented
    /// analyses/NAME.toml for a design. Never overwrites.
    New {
        /// Name of the analysis (letters, digits, - and _).
        name: String,
        /// The design of the comparison.
        #[arg(long, value_enum, default_value = "independent")]
        design: crate::plan::Design,
        /// The test method [default: welch-t, paired-t or one-sample-t].
        #[arg(long, value_enum)]
        method: Option<crate::plan::Method>,
    },
    /// Check an analysis file without reading any data.
    Check {
        /// The analysis file (TOML).
        file: PathBuf,
    },
    /// Rehearse the whole plan on blinded data before the lock: reads the
    /// real data file with the plan's settings, hides every effect, and
    /// writes a report stamped as a rehearsal into out/<stem>.rehearsal/.
    Rehearse {
        /// The analysis file (TOML).
        file: PathBuf,
        /// Output folder [default: out/<stem>.rehearsal/].
        #[arg(long)]
        out: Option<PathBuf>,
        /// Seed of the blinding [default: the plan's seed].
        #[arg(long)]
        seed: Option<u64>,
        /// Use templates from this folder where it has them.
        #[arg(long, value_name = "DIR")]
        templates: Option<PathBuf>,
        /// Write into an output folder that holds files attest did not write.
        #[arg(long)]
        force: bool,
    },
    /// Seal the plan: write `<stem>.lock` next to the analysis file and the
    /// preregistration document into the output folder. Never overwrites.
    Lock {
        /// The analysis file (TOML).
        file: PathBuf,
        /// Folder for plan.md and plan.html [default: out/<stem>/].
        #[arg(long)]
        out: Option<PathBuf>,
        /// Use templates from this folder where it has them.
        #[arg(long, value_name = "DIR")]
        templates: Option<PathBuf>,
        /// Write into an output folder that holds files attest did not write.
        #[arg(long)]
        force: bool,
        /// Also sign the lock with this SSH private key (see `attest sign`).
        #[arg(long, value_name = "KEY")]
        sign: Option<PathBuf>,
        /// Also have this time-stamping authority stamp the plan (see
        /// `attest stamp`); repeat for several.
        #[arg(long, value_name = "URL")]
        tsa: Vec<String>,
    },
    /// Sign a lock with an SSH private key: writes `<stem>.lock.sig`
    /// (SSHSIG, namespace attest-lock) beside it. Never overwrites.
    Sign {
        /// The lock (or its analysis file).
        file: PathBuf,
        /// Your SSH private key (OpenSSH format), e.g. ~/.ssh/id_ed25519.
        #[arg(long, value_name = "KEY")]
        key: PathBuf,
    },
    /// Have time-stamping authorities (RFC 3161) stamp a lock's plan hash:
    /// writes `<stem>.plan-stamp-N.tst` beside it; the lock is unchanged.
    Stamp {
        /// The lock (or its analysis file).
        file: PathBuf,
        /// The authority's http:// address; repeat for several.
        #[arg(long, value_name = "URL", required = true)]
        tsa: Vec<String>,
    },
    /// Run locked plans against their data and write the reports. Takes
    /// analysis files or folders (every *.toml inside, in path order);
    /// several analyses run in parallel, each into out/<stem>/.
    Run {
        /// Analysis files (TOML) or folders of them.
        #[arg(required = true, value_name = "PATH")]
        paths: Vec<PathBuf>,
        /// Output folder for a single analysis [default: out/<stem>/].
        #[arg(long)]
        out: Option<PathBuf>,
        /// Run without a lock; every output is stamped "not preregistered".
        #[arg(long)]
        unlocked: bool,
        /// Use templates from this folder where it has them.
        #[arg(long, value_name = "DIR")]
        templates: Option<PathBuf>,
        /// Write into an output folder that holds files attest did not write.
        #[arg(long)]
        force: bool,
        /// Write nothing; fail (exit 2) if the outputs a run would write
        /// differ from those already in the output folder. For CI pipelines
        /// and thesis builds.
        #[arg(long, conflicts_with = "force")]
        expect_same: bool,
        /// Print nothing but errors and lock warnings.
        #[arg(long, short)]
        quiet: bool,
        /// Print the summary as JSON instead of lines.
        #[arg(long, conflicts_with = "quiet")]
        json: bool,
        /// Have this time-stamping authority stamp the data's SHA-256
        /// beside the lock (one analysis); repeat for several.
        #[arg(long, value_name = "URL", conflicts_with_all = ["unlocked", "expect_same"])]
        tsa: Vec<String>,
    },
    /// Plan a sample size: give two of --smallest-effect, --chance-to-detect and --units, and the
    /// third is solved for with the exact noncentral t distribution.
    Power {
        /// The design of the comparison.
        #[arg(long, value_enum)]
        design: crate::plan::Design,
        /// The smallest effect worth detecting: Cohen's d (d_z for paired
        /// designs), as a size in the tested direction.
        #[arg(long = "smallest-effect", value_name = "D")]
        effect: Option<f64>,
        /// The chance you want of detecting that effect if it is there
        /// (power), e.g. 0.9.
        #[arg(long = "chance-to-detect", value_name = "P")]
        power: Option<f64>,
        /// The units you can have: the first group (independent designs),
        /// the pairs, or the values.
        #[arg(long = "units", value_name = "N")]
        n: Option<usize>,
        /// Significance level.
        #[arg(long, default_value_t = 0.05)]
        alpha: f64,
        /// Sidedness of the planned test.
        #[arg(long, value_enum, default_value = "two-sided")]
        alternative: AlternativeArg,
        /// Units in the second group for each unit in the first
        /// (independent designs; 1 for equal groups).
        #[arg(long = "second-per-first", value_name = "R", default_value_t = 1.0)]
        ratio: f64,
        /// Planned ratio of SDs (second/first): plan for Welch's test.
        #[arg(long)]
        sd_ratio: Option<f64>,
        /// Check the answer by simulating this many studies.
        #[arg(long, value_name = "N")]
        simulate: Option<usize>,
        /// Seed of the simulation.
        #[arg(long, default_value_t = 1)]
        seed: u64,
        /// Print the answer as JSON.
        #[arg(long)]
        json: bool,
    },
    /// Print the named values a run writes to values.tex and values.json,
    /// so a writer can find the macro they need. Writes nothing.
    Values {
        /// The analysis file (TOML).
        file: PathBuf,
        /// Compute without a lock (values are the same; the lock is not checked).
        #[arg(long)]
        unlocked: bool,
    },
    /// Print shell completions for attest.
    Completions {
        /// The shell.
        #[arg(value_enum)]
        shell: clap_complete::Shell,
    },
    /// Print attest's manual page (roff), e.g. `attest man > attest.1`.
    Man,
    /// Check that a report reproduces: same plan, lock, data and output bytes.
    Verify {
        /// A report folder written by `attest run`, or its results.json.
        report: PathBuf,
        /// The analysis file [default: the one the results name, looked up
        /// in the current folder and in analyses/].
        #[arg(long, value_name = "FILE")]
        plan: Option<PathBuf>,
        /// Templates the report was rendered with, if not the built-in ones.
        #[arg(long, value_name = "DIR")]
        templates: Option<PathBuf>,
        /// Check the lock's signature against this allowed-signers file
        /// (OpenSSH format).
        #[arg(long, value_name = "FILE")]
        signers: Option<PathBuf>,
        /// Check the lock's timestamp tokens against these trusted root
        /// certificates (PEM).
        #[arg(long, value_name = "FILE")]
        tsa_roots: Option<PathBuf>,
        /// For a plan whose data are in a database: connect to the database
        /// its [data] names and run its query again. The folder names both,
        /// so pass this only for a plan you trust.
        #[arg(long)]
        run_query: bool,
    },
}

/// Alternatives, as named on the command line.
#[derive(Clone, Copy, Debug, clap::ValueEnum)]
pub(crate) enum AlternativeArg {
    /// The difference is not zero.
    TwoSided,
    /// The difference is greater than zero.
    Greater,
    /// The difference is less than zero.
    Less,
}

impl From<AlternativeArg> for crate::stats::Alternative {
    fn from(a: AlternativeArg) -> Self {
        match a {
            AlternativeArg::TwoSided => crate::stats::Alternative::TwoSided,
            AlternativeArg::Greater => crate::stats::Alternative::Greater,
            AlternativeArg::Less => crate::stats::Alternative::Less,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use clap::CommandFactory;

    #[test]
    fn clap_definitions_are_consistent() {
        Cli::command().debug_assert();
    }
}
