//! The command line, as clap reads it.

use clap::{Args, Parser, Subcommand, ValueEnum};
use std::path::PathBuf;

#[derive(Debug, Parser)]
#[command(
    name = "kickback",
    version,
    about = "Checks SPICE netlists of PWM motor drives for the mistakes that cost boards, \
             switches and motors",
    long_about = None,
    arg_required_else_help = true,
    after_help = "Exit codes: 0 nothing at the failing level, 1 findings at the failing level \
                  (errors; warnings too with --fail-on warning), 2 the check could not be done."
)]
pub struct Cli {
    #[command(flatten)]
    pub global: GlobalArgs,
    #[command(subcommand)]
    pub command: Command,
}

#[derive(Debug, Args)]
pub struct GlobalArgs {
    /// Output format: `cards` for a person (one card per finding), `lines` for editors and
    /// terminals (one line per finding), `json`, `sarif`; `report` also writes `html` and `markdown`.
    #[arg(long, global = true, value_enum, default_value_t = Format::Cards)]
    pub format: Format,
    /// Use this configuration file instead of looking for kickback.toml beside each netlist.
    #[arg(long, global = true, value_name = "PATH")]
    pub config: Option<PathBuf>,
    /// The lowest severity that fails the check (exit code 1) [default: error].
    #[arg(long, global = true, value_enum, value_name = "LEVEL")]
    pub fail_on: Option<FailOn>,
    /// The earlier spelling of `--fail-on warning`, read for one release.
    #[arg(long, global = true, value_enum, value_name = "LEVEL", hide = true)]
    pub deny: Option<Deny>,
    /// Show only the findings that fail the check, and the summary (cards and lines formats).
    #[arg(long, short, global = true)]
    pub quiet: bool,
    /// When to colour the cards format; `auto` colours a terminal unless NO_COLOR is set.
    #[arg(long, global = true, value_enum, default_value_t = ColorChoice::Auto, value_name = "WHEN")]
    pub color: ColorChoice,
    /// Refuse netlists that flatten to more elements than this; a line with more than ten
    /// node words counts once more for each extra one [default: 1000000].
    #[arg(long, global = true, value_name = "N", value_parser = clap::value_parser!(u64).range(1..=MAX_ELEMENTS))]
    pub max_elements: Option<u64>,
    /// Refuse netlist and include files larger than this many bytes [default: 268435456].
    #[arg(long, global = true, value_name = "BYTES", value_parser = clap::value_parser!(u64).range(1..=MAX_OFFSET))]
    pub max_file_size: Option<u64>,
    /// Skip, with a finding, any statement whose code (continuation lines joined, comments
    /// left out) is longer than this many bytes [default: 1048576].
    #[arg(long, global = true, value_name = "BYTES", value_parser = clap::value_parser!(u64).range(1..=MAX_OFFSET))]
    pub max_statement_bytes: Option<u64>,
    /// Nesting of subcircuit definitions, subcircuit instances and includes allowed
    /// [default: 64].
    #[arg(long, global = true, value_name = "N", value_parser = clap::value_parser!(u64).range(1..=MAX_DEPTH))]
    pub max_depth: Option<u64>,
    /// Let .include and .lib read files outside the folder tree of the netlist.
    #[arg(long, global = true)]
    pub allow_outside_includes: bool,
    /// For this run, give findings of these rules only (comma-separated IDs). What reading the
    /// netlist reports (`syntax`, includes, dialect) is kept unless `--skip` names it.
    #[arg(long, global = true, value_name = "RULES", value_delimiter = ',')]
    pub only: Vec<String>,
    /// For this run, leave out the findings of these rules (comma-separated IDs), as `off` in
    /// `[rules]` would.
    #[arg(long, global = true, value_name = "RULES", value_delimiter = ',')]
    pub skip: Vec<String>,
}

/// Positions in a file are 32-bit, so no file or statement may be longer.
const MAX_OFFSET: u64 = u32::MAX as u64;

/// More elements than this is no board, and would not fit in memory on any machine the tool
/// runs on (each flattened element costs kilobytes through the analyses).
const MAX_ELEMENTS: u64 = 100_000_000;

/// Deeper nesting than this is no real design, and the walk over it must stay shallow.
const MAX_DEPTH: u64 = 256;

#[derive(Debug, Subcommand)]
pub enum Command {
    /// Check netlists and report each problem at its line.
    Check {
        /// Netlist files or folders (folders are searched for *.cir *.sp *.spice *.net *.ckt,
        /// honouring .gitignore).
        /// `-` reads one netlist from stdin (see `--name`).
        #[arg(value_name = "PATHS", default_value = ".")]
        paths: Vec<PathBuf>,
        /// Leave out the findings this baseline file lists (written by `kickback baseline`):
        /// only new findings fail the check, and entries that no longer occur are named.
        #[arg(long, value_name = "FILE")]
        baseline: Option<PathBuf>,
        /// The path findings give the netlist read from stdin (`check -`); kickback.toml is
        /// looked for from its folder. Includes are not read from stdin.
        #[arg(long, value_name = "PATH", default_value = "stdin.cir")]
        name: PathBuf,
        /// Cards format: before the summary, count the findings by rule and by file.
        #[arg(long)]
        counts: bool,
        /// Cards format: each finding as a short block (heading, message, fix) without its
        /// netlist lines or numbers, for runs over many boards.
        #[arg(long)]
        compact: bool,
        /// Keep running: check again whenever a netlist, an included file or kickback.toml
        /// under PATHS is saved (Ctrl-C stops).
        #[arg(long)]
        watch: bool,
    },
    /// Write a baseline file of today's errors and warnings, for `check --baseline`: a design
    /// adopted with known faults then fails only on new ones.
    Baseline {
        /// Netlist files or folders, as for `check`.
        #[arg(value_name = "PATHS", default_value = ".")]
        paths: Vec<PathBuf>,
        /// The file to write.
        #[arg(long, value_name = "FILE", default_value = "kickback-baseline.toml")]
        out: PathBuf,
    },
    /// Print what kickback works out about one netlist file: supplies, timers, switches, loads.
    /// Exits 1 when some of its lines cannot be read.
    Report {
        /// The netlist.
        #[arg(value_name = "FILE")]
        file: PathBuf,
    },
    /// List every rule, the severities it gives and the level in effect under the
    /// configuration (`--format json` for a program).
    Rules,
    /// List every part kind a kickback.toml can name, the keys that describe it with their
    /// units, and each key's default with where it comes from (`--format json` for a program).
    Parts,
    /// Print the page of one rule: what it checks, why, an example and its fix.
    Explain {
        /// The rule ID, e.g. flyback-missing.
        #[arg(value_name = "RULE")]
        rule: String,
    },
    /// Write a commented starter kickback.toml.
    Init {
        /// Folder to write it in (default: the current folder).
        #[arg(long, value_name = "DIR")]
        path: Option<PathBuf>,
    },
    /// Serve an editor over the Language Server Protocol on stdin and stdout: findings as
    /// diagnostics while you type, the numbers on hover, fixes as code actions.
    Lsp {
        /// Milliseconds a buffer must be quiet after a change before it is checked again.
        #[arg(long, value_name = "MS", default_value_t = 30)]
        debounce_ms: u64,
    },
    /// Print a shell completion script.
    Completions {
        #[arg(value_enum, value_name = "SHELL")]
        shell: clap_complete::Shell,
    },
}

#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub enum Format {
    /// For a person: a card per finding with the lines involved, the numbers and the fix.
    Cards,
    /// One line per finding after a `file:line:col: ` prefix, for editors and terminals.
    Lines,
    Json,
    Sarif,
    /// `report` only: one self-contained page with a timing diagram per timer, one PWM period
    /// per switch and the circuit around each finding.
    Html,
    /// `report` only: the findings and the key numbers per stage, for CI summaries and
    /// pull-request comments.
    Markdown,
    /// The earlier name of `cards`, read for one release.
    #[value(hide = true)]
    Human,
    /// The earlier name of `lines`, read for one release.
    #[value(hide = true)]
    Short,
}

impl Format {
    /// The format itself, with the earlier names mapped to the current ones, and the notice
    /// to give when an earlier name was used.
    pub fn current(self) -> (Format, Option<&'static str>) {
        match self {
            Format::Human => (
                Format::Cards,
                Some("`--format human` is now `--format cards`; the old name is read until the next release"),
            ),
            Format::Short => (
                Format::Lines,
                Some("`--format short` is now `--format lines`; the old name is read until the next release"),
            ),
            other => (other, None),
        }
    }
}

/// The lowest severity that fails a check.
#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub enum FailOn {
    Error,
    Warning,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub enum Deny {
    Warnings,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub enum ColorChoice {
    Auto,
    Always,
    Never,
}

#[cfg(test)]
mod tests {
    use super::*;
    use clap::CommandFactory;

    #[test]
    fn command_line_is_well_formed() {
        Cli::command().debug_assert();
    }
}
