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
    after_help = "Exit codes: 0 no error-level findings, 1 error-level findings \
                  (warnings too with --deny warnings), 2 the check could not be done."
)]
pub struct Cli {
    #[command(flatten)]
    pub global: GlobalArgs,
    #[command(subcommand)]
    pub command: Command,
}

#[derive(Debug, Args)]
pub struct GlobalArgs {
    /// Output format.
    #[arg(long, global = true, value_enum, default_value_t = Format::Human)]
    pub format: Format,
    /// Use this configuration file instead of looking for kickback.toml beside each netlist.
    #[arg(long, global = true, value_name = "PATH")]
    pub config: Option<PathBuf>,
    /// Treat warnings as errors for the exit code.
    #[arg(long, global = true, value_enum, value_name = "LEVEL")]
    pub deny: Option<Deny>,
    /// Show only the findings that fail the check, and the summary (human and short formats).
    #[arg(long, short, global = true)]
    pub quiet: bool,
    /// When to colour the human format; `auto` colours a terminal unless NO_COLOR is set.
    #[arg(long, global = true, value_enum, default_value_t = ColorChoice::Auto, value_name = "WHEN")]
    pub color: ColorChoice,
    /// Refuse netlists that flatten to more elements than this.
    #[arg(long, global = true, value_name = "N")]
    pub max_elements: Option<u64>,
    /// Let .include and .lib read files outside the folder tree of the netlist.
    #[arg(long, global = true)]
    pub allow_outside_includes: bool,
}

#[derive(Debug, Subcommand)]
pub enum Command {
    /// Check netlists and report each problem at its line.
    Check {
        /// Netlist files or folders (folders are searched for *.cir *.sp *.spice *.net *.ckt,
        /// honouring .gitignore).
        #[arg(value_name = "PATHS", default_value = ".")]
        paths: Vec<PathBuf>,
    },
    /// Print what kickback works out about a netlist: supplies, timers, switches, loads.
    Report {
        /// The netlist.
        #[arg(value_name = "FILE")]
        file: PathBuf,
    },
    /// List every rule with its default severity.
    Rules,
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
    /// Print a shell completion script.
    Completions {
        #[arg(value_enum, value_name = "SHELL")]
        shell: clap_complete::Shell,
    },
}

#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub enum Format {
    Human,
    Short,
    Json,
    Sarif,
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
