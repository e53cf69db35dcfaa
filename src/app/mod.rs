//! The command-line program: reads the arguments, runs the commands, picks the renderer and
//! turns the outcome into an exit code. `src/main.rs` only calls [`main`].
//!
//! Exit codes: [`EXIT_CLEAN`] no error-level findings, [`EXIT_FINDINGS`] error-level findings
//! (warnings too with `--fail-on warning`), [`EXIT_FAILURE`] the tool could not do its job.

pub mod catalogue;
pub mod cli;
pub mod discover;
pub mod init;
pub mod terminal;

use crate::check::{check_file, CheckError, CheckOptions, FileReport};
use crate::config::Config;
use crate::diagnostic::Severity;
use crate::netlist::{Limits, LoadError};
use crate::report::{self, cards::CardsOptions};
use crate::source::SourceMap;
use clap::{CommandFactory, Parser};
use cli::{Cli, Command, Deny, FailOn, Format, GlobalArgs};
use rayon::prelude::*;
use std::ffi::OsString;
use std::io::{self, Write};
use std::path::{Path, PathBuf};
pub use terminal::Environment;

pub const EXIT_CLEAN: u8 = 0;
pub const EXIT_FINDINGS: u8 = 1;
pub const EXIT_FAILURE: u8 = 2;

/// The program, on the process's own arguments, streams and environment.
pub fn main() -> u8 {
    install_quiet_panic_hook();
    let env = Environment::from_process();
    let stdout = io::stdout();
    let stderr = io::stderr();
    let outcome = std::panic::catch_unwind(|| {
        run(
            std::env::args_os(),
            &env,
            &mut stdout.lock(),
            &mut stderr.lock(),
        )
    });
    outcome.unwrap_or_else(|payload| {
        // Per-file work has its own guard; this catches a fault outside it (a renderer).
        let message = crate::check::panic_message(payload.as_ref());
        let _ = writeln!(
            stderr.lock(),
            "error: internal error: {message}; please report it with the netlist"
        );
        EXIT_FAILURE
    })
}

/// Replaces Rust's panic report (message and backtrace on stderr) with nothing: every panic is
/// caught and reported as an internal error by the code that catches it, which names the file.
/// The hook only remembers where the panic happened, for that message.
pub fn install_quiet_panic_hook() {
    std::panic::set_hook(Box::new(crate::check::record_panic_location));
}

/// The program on given arguments (the first is the program name), environment and streams.
pub fn run<I, T>(args: I, env: &Environment, out: &mut dyn Write, err: &mut dyn Write) -> u8
where
    I: IntoIterator<Item = T>,
    T: Into<OsString> + Clone,
{
    let mut cli = match Cli::try_parse_from(args) {
        Ok(cli) => cli,
        Err(e) => return usage(&e, env, out, err),
    };
    let mut console = Console {
        out,
        err,
        failed: false,
    };
    for notice in settle_old_spellings(&mut cli.global) {
        console.notice(notice);
    }
    let code = match &cli.command {
        Command::Check { paths } => check(paths, &cli.global, env, &mut console),
        Command::Report { file } => report_command(file, &cli.global, &mut console),
        Command::Rules => rules_command(&cli.global, &mut console),
        Command::Explain { rule } => explain(rule, &mut console),
        Command::Init { path } => init(path.as_deref(), &mut console),
        Command::Completions { shell } => {
            let mut script = Vec::new();
            clap_complete::generate(*shell, &mut Cli::command(), "kickback", &mut script);
            console.print(&String::from_utf8_lossy(&script));
            EXIT_CLEAN
        }
    };
    code.max(console.trouble())
}

/// Maps the spellings of the previous release (`--format human|short`, `--deny warnings`) to
/// the current ones, and returns one notice for each that was used.
fn settle_old_spellings(global: &mut GlobalArgs) -> Vec<&'static str> {
    let mut notices = Vec::new();
    let (format, notice) = global.format.current();
    global.format = format;
    notices.extend(notice);
    if global.deny == Some(Deny::Warnings) {
        notices.push(
            "`--deny warnings` is now `--fail-on warning`; the old spelling is read until the next release",
        );
        global.fail_on.get_or_insert(FailOn::Warning);
    }
    notices
}

/// The severity at which findings fail a check.
fn failing_severity(global: &GlobalArgs) -> Severity {
    match global.fail_on {
        Some(FailOn::Warning) => Severity::Warning,
        Some(FailOn::Error) | None => Severity::Error,
    }
}

/// clap's own messages: help and version go to stdout with exit 0, usage errors to stderr
/// with exit 2.
fn usage(e: &clap::Error, env: &Environment, out: &mut dyn Write, err: &mut dyn Write) -> u8 {
    let styled = e.render();
    if e.use_stderr() {
        let _ = write!(err, "{styled}");
        EXIT_FAILURE
    } else {
        let text = if env.color(cli::ColorChoice::Auto) {
            styled.ansi().to_string()
        } else {
            styled.to_string()
        };
        let _ = write!(out, "{text}");
        EXIT_CLEAN
    }
}

fn check(
    paths: &[PathBuf],
    global: &GlobalArgs,
    env: &Environment,
    console: &mut Console<'_>,
) -> u8 {
    let options = check_options(global);
    if matches!(global.format, Format::Html | Format::Markdown) {
        console.error(
            "check prints --format cards, lines, json or sarif; html and markdown pages come from `kickback report FILE`",
        );
        return EXIT_FAILURE;
    }
    if let Some(config) = &global.config {
        if let Err(message) = preflight_config(config) {
            console.error(&message);
            return EXIT_FAILURE;
        }
    }
    let found = discover::discover_with(paths, global.allow_outside_includes);
    if !global.quiet {
        for folder in &found.empty_folders {
            console.note(&format!(
                "no netlists (*.{}) found in {}",
                discover::EXTENSIONS.join(" *."),
                folder.display()
            ));
        }
    }
    let failing = failing_severity(global);
    let shown = if global.quiet {
        failing
    } else {
        Severity::Note
    };
    let cards = CardsOptions {
        color: env.color(global.color),
        unicode: env.unicode(),
        width: env.width(),
        min_severity: shown,
        summary: false,
    };
    // Files are checked a batch at a time, in path order; the cards and lines formats print
    // each batch as soon as it is done and keep only the counts, so a run over many boards
    // neither waits for the last one to say anything nor holds every report until the end.
    // JSON and SARIF are one document each: their reports are kept and written at the end.
    let streamed = matches!(
        global.format,
        Format::Cards | Format::Lines | Format::Human | Format::Short
    );
    let mut jobs: Vec<Job> = found.files.into_iter().map(Job::Check).collect();
    jobs.extend(found.failures.into_iter().map(Job::Unreadable));
    jobs.sort_by(|a, b| a.path().cmp(b.path()));
    let batch = rayon::current_num_threads().max(1) * 2;
    let mut kept: Vec<FileReport> = Vec::new();
    let mut totals = report::Summary::default();
    let mut code = EXIT_CLEAN;
    for chunk in jobs.chunks(batch) {
        let reports: Vec<FileReport> = chunk
            .par_iter()
            .map(|job| match job {
                Job::Check(path) => check_file(path, &options),
                Job::Unreadable(failure) => unreadable(failure.clone()),
            })
            .collect();
        for (file, message) in report::failures(&reports) {
            // Most reasons already name the netlist ("cannot read a.cir: ..."); others name
            // only their own file (a config line), so the netlist is added.
            if message.contains(&file) {
                console.error(&message);
            } else {
                console.error(&format!("cannot check {file}: {message}"));
            }
        }
        code = code.max(outcome(&reports, failing));
        if streamed {
            add_counts(&mut totals, &report::Summary::of(&reports));
            let text = match global.format {
                Format::Cards | Format::Human => report::cards::render(&reports, &cards),
                _ => report::lines::render(&reports, shown),
            };
            console.print(&text);
        } else {
            kept.extend(reports);
        }
    }
    let text = match global.format {
        Format::Cards | Format::Human => {
            totals.failed.sort();
            let mut line = report::cards::summary_line(&totals, &cards);
            line.push('\n');
            line
        }
        Format::Lines | Format::Short => String::new(),
        Format::Json => report::json::render(&kept),
        Format::Sarif => report::sarif::render(&kept),
        Format::Html | Format::Markdown => String::new(),
    };
    console.print(&text);
    code
}

/// A path to check, or one that could not be read or walked, with why.
enum Job {
    Check(PathBuf),
    Unreadable((PathBuf, String)),
}

impl Job {
    fn path(&self) -> &Path {
        match self {
            Job::Check(path) | Job::Unreadable((path, _)) => path,
        }
    }
}

/// Adds one batch's counts to the run's.
fn add_counts(totals: &mut report::Summary, batch: &report::Summary) {
    totals.errors = totals.errors.saturating_add(batch.errors);
    totals.warnings = totals.warnings.saturating_add(batch.warnings);
    totals.notes = totals.notes.saturating_add(batch.notes);
    totals.suppressed = totals.suppressed.saturating_add(batch.suppressed);
    totals.files = totals.files.saturating_add(batch.files);
    totals.failed.extend(batch.failed.iter().cloned());
}

/// The exit code of a check: 2 when any file could not be checked, 1 when a finding is at the
/// failing severity or above, else 0.
pub fn outcome(reports: &[FileReport], failing: Severity) -> u8 {
    if reports.iter().any(|r| r.failure.is_some()) {
        EXIT_FAILURE
    } else if reports
        .iter()
        .flat_map(|r| &r.findings)
        .any(|f| f.severity >= failing)
    {
        EXIT_FINDINGS
    } else {
        EXIT_CLEAN
    }
}

/// A path that could not be read or walked, as a report that failed.
fn unreadable((path, reason): (PathBuf, String)) -> FileReport {
    FileReport {
        path: path.clone(),
        sources: SourceMap::new(),
        findings: Vec::new(),
        suppressed: 0,
        failure: Some(CheckError::Load(LoadError::Unreadable { path, reason })),
    }
}

/// A `--config` file that cannot be read or used stops the run before any netlist is read,
/// with one message instead of one per netlist.
fn preflight_config(path: &Path) -> Result<(), String> {
    std::fs::metadata(path).map_err(|e| format!("cannot read config {}: {e}", path.display()))?;
    Config::load(path).map(|_| ()).map_err(|e| e.to_string())
}

fn check_options(global: &GlobalArgs) -> CheckOptions {
    let defaults = Limits::default();
    CheckOptions {
        limits: Limits {
            max_elements: global.max_elements.unwrap_or(defaults.max_elements),
            max_depth: global
                .max_depth
                .and_then(|d| usize::try_from(d).ok())
                .unwrap_or(defaults.max_depth),
            max_file_bytes: global.max_file_size.unwrap_or(defaults.max_file_bytes),
            max_statement_bytes: global
                .max_statement_bytes
                .unwrap_or(defaults.max_statement_bytes),
            allow_outside_includes: global.allow_outside_includes,
        },
        config_path: global.config.clone(),
    }
}

/// `kickback rules`: the registry, with what the configuration in effect (`--config`, or the
/// `kickback.toml` found from the current folder up) makes of each rule.
fn rules_command(global: &GlobalArgs, console: &mut Console<'_>) -> u8 {
    let options = check_options(global);
    let config = match &options.config_path {
        Some(path) => Config::load(path).map(Some),
        None => Config::discover(Path::new(".")),
    };
    let config = match config.and_then(|c| {
        if let Some(c) = &c {
            crate::check::validate_rule_ids(c)?;
        }
        Ok(c)
    }) {
        Ok(config) => config,
        Err(e) => {
            console.error(&e.to_string());
            return EXIT_FAILURE;
        }
    };
    console.print(&catalogue::table(crate::rules::REGISTRY, config.as_ref()));
    EXIT_CLEAN
}

fn report_command(file: &Path, global: &GlobalArgs, console: &mut Console<'_>) -> u8 {
    if !matches!(
        global.format,
        Format::Cards | Format::Json | Format::Html | Format::Markdown
    ) {
        console.error(
            "report prints --format cards (tables for a person), json, html (a page to look at) or markdown",
        );
        return EXIT_FAILURE;
    }
    if !file.is_file() {
        console.error(&format!("cannot read {}: no such file", file.display()));
        return EXIT_FAILURE;
    }
    if matches!(global.format, Format::Html | Format::Markdown) {
        return review_command(file, global, console);
    }
    match crate::check::report_file(file, &check_options(global)) {
        Ok(facts) => {
            let text = match global.format {
                Format::Json => {
                    report::facts::render_json(&facts.analysis, &facts.netlist, &facts.circuit)
                }
                _ => report::facts::render_human(&facts.analysis, &facts.netlist, &facts.circuit),
            };
            console.print(&text);
            EXIT_CLEAN
        }
        Err(e) => {
            console.error(&format!("cannot report on {}: {e}", file.display()));
            EXIT_FAILURE
        }
    }
}

/// `kickback report FILE --format html|markdown`: the review page, with the rules' findings.
fn review_command(file: &Path, global: &GlobalArgs, console: &mut Console<'_>) -> u8 {
    match crate::check::review_file(file, &check_options(global)) {
        Ok(reviewed) => {
            let review = report::page::Review {
                report: &reviewed.report,
                netlist: &reviewed.netlist,
                circuit: &reviewed.circuit,
                analysis: &reviewed.analysis,
                waveforms: &reviewed.waveforms,
            };
            let text = match global.format {
                Format::Markdown => report::page::markdown::render_markdown(&review),
                _ => report::page::render_html(&review),
            };
            console.print(&text);
            EXIT_CLEAN
        }
        Err(e) => {
            console.error(&format!("cannot report on {}: {e}", file.display()));
            EXIT_FAILURE
        }
    }
}

fn explain(rule: &str, console: &mut Console<'_>) -> u8 {
    match catalogue::explain(rule) {
        Ok(page) => {
            console.print(&page);
            EXIT_CLEAN
        }
        Err(suggestions) => {
            let mut message = format!("unknown rule `{rule}`");
            if !suggestions.is_empty() {
                message.push_str(&format!("; did you mean {}?", suggestions.join(", ")));
            }
            message.push_str(" (`kickback rules` lists every rule)");
            console.error(&message);
            EXIT_FAILURE
        }
    }
}

fn init(dir: Option<&Path>, console: &mut Console<'_>) -> u8 {
    match init::write_starter(dir.unwrap_or(Path::new("."))) {
        Ok(path) => {
            console.print(&format!("wrote {}\n", path.display()));
            EXIT_CLEAN
        }
        Err(e) => {
            console.error(&e.to_string());
            EXIT_FAILURE
        }
    }
}

/// stdout and stderr. A reader that went away (`kickback check | head`) is not an error; any
/// other failure to write is, and makes the exit code 2.
struct Console<'a> {
    out: &'a mut dyn Write,
    err: &'a mut dyn Write,
    failed: bool,
}

impl Console<'_> {
    fn print(&mut self, text: &str) {
        if let Err(e) = self
            .out
            .write_all(text.as_bytes())
            .and_then(|()| self.out.flush())
        {
            if e.kind() != io::ErrorKind::BrokenPipe {
                let _ = writeln!(self.err, "error: cannot write the output: {e}");
                self.failed = true;
            }
        }
    }

    fn error(&mut self, message: &str) {
        self.write_err(&format!("error: {message}\n"));
    }

    fn note(&mut self, message: &str) {
        self.write_err(&format!("note: {message}\n"));
    }

    /// A change of spelling the user should know about; never affects the exit code.
    fn notice(&mut self, message: &str) {
        self.write_err(&format!("notice: {message}\n"));
    }

    fn write_err(&mut self, text: &str) {
        let _ = self.err.write_all(text.as_bytes());
    }

    fn trouble(&self) -> u8 {
        if self.failed {
            EXIT_FAILURE
        } else {
            EXIT_CLEAN
        }
    }
}
