//! The command-line program: reads the arguments, runs the commands, picks the renderer and
//! turns the outcome into an exit code. `src/main.rs` only calls [`main`].
//!
//! Exit codes: [`EXIT_CLEAN`] no error-level findings, [`EXIT_FINDINGS`] error-level findings
//! (warnings too with `--fail-on warning`), [`EXIT_FAILURE`] the tool could not do its job.

pub mod baseline;
pub mod catalogue;
pub mod cli;
pub mod discover;
pub mod init;
pub mod parts;
pub mod terminal;
mod watch;

use crate::check::{check_file, CheckError, CheckOptions, FileReport};
use crate::config::{Config, RuleLevel};
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
    let stderr = io::stderr();
    // Streams are locked per write, not for the whole run: `kickback lsp` writes to stdout
    // from the protocol's own writer thread.
    let outcome = std::panic::catch_unwind(|| {
        run(
            std::env::args_os(),
            &env,
            &mut io::stdout(),
            &mut io::stderr(),
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
        Command::Check {
            paths,
            baseline,
            name,
            counts,
            compact,
            watch,
        } => {
            let run = CheckRun {
                baseline: baseline.as_deref(),
                stdin_name: name,
                write_baseline: None,
                counts: *counts,
                compact: *compact,
            };
            if *watch {
                watch::run(paths, &run, &cli.global, env, &mut console)
            } else {
                check(paths, &run, &cli.global, env, &mut console)
            }
        }
        Command::Baseline { paths, out } => {
            let run = CheckRun {
                baseline: None,
                stdin_name: Path::new("stdin.cir"),
                write_baseline: Some(out),
                counts: false,
                compact: false,
            };
            check(paths, &run, &cli.global, env, &mut console)
        }
        Command::Lsp { debounce_ms } => lsp(*debounce_ms, &cli.global, &mut console),
        Command::Report { file } => report_command(file, &cli.global, &mut console),
        Command::Rules => rules_command(&cli.global, &mut console),
        Command::Parts => parts_command(cli.global.format, &mut console),
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

/// What a `check` or `baseline` run does besides checking.
struct CheckRun<'a> {
    /// `check --baseline FILE`.
    baseline: Option<&'a Path>,
    /// `check --name PATH`, for `check -`.
    stdin_name: &'a Path,
    /// `baseline --out FILE`: write the findings there instead of printing them.
    write_baseline: Option<&'a Path>,
    /// `check --counts`: findings by rule and by file before the summary.
    counts: bool,
    /// `check --compact`: a short block per finding in the cards format.
    compact: bool,
}

fn check(
    paths: &[PathBuf],
    run: &CheckRun<'_>,
    global: &GlobalArgs,
    env: &Environment,
    console: &mut Console<'_>,
) -> u8 {
    let options = match check_options_checked(global) {
        Ok(options) => options,
        Err(message) => {
            console.error(&message);
            return EXIT_FAILURE;
        }
    };
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
    let mut baseline = match run.baseline.map(baseline::Baseline::load).transpose() {
        Ok(b) => b,
        Err(message) => {
            console.error(&message);
            return EXIT_FAILURE;
        }
    };
    let stdin = paths.iter().any(|p| p.as_os_str() == "-");
    if stdin && paths.len() > 1 {
        console.error("`-` (a netlist on stdin) cannot be checked together with other paths");
        return EXIT_FAILURE;
    }
    let found = if stdin {
        discover::Discovery::default()
    } else {
        discover::discover_with(paths, global.allow_outside_includes)
    };
    // A folder with no netlist in it is a mistyped path more often than not: a CI gate that
    // checked nothing must not pass.
    let mut code = EXIT_CLEAN;
    for folder in &found.empty_folders {
        console.error(&format!(
            "no netlists (*.{}) in {}; name the files, or check the path",
            discover::EXTENSIONS.join(" *."),
            folder.display()
        ));
        code = EXIT_FAILURE;
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
    let streamed = streamed && run.write_baseline.is_none();
    // A library named on the command line (a hook passes the files a commit changed) stands
    // for the netlists under the current folder that include it.
    let found_libraries: Vec<String> = found
        .libraries
        .iter()
        .map(|l| l.display().to_string())
        .collect();
    let libraries: Vec<PathBuf> = found
        .libraries
        .iter()
        .map(|l| l.canonicalize().unwrap_or_else(|_| l.clone()))
        .collect();
    let mut dependents = Vec::new();
    if !libraries.is_empty() {
        let named: std::collections::BTreeSet<&PathBuf> = found.files.iter().collect();
        let around = discover::discover_with(&[PathBuf::from(".")], global.allow_outside_includes);
        dependents.extend(around.files.into_iter().filter(|f| !named.contains(f)));
    }
    let mut jobs: Vec<Job> = found.files.into_iter().map(Job::Check).collect();
    // The library itself is checked too, as a library: its definitions' own problems.
    jobs.extend(found.libraries.iter().cloned().map(Job::Check));
    jobs.extend(dependents.into_iter().map(Job::IfIncludes));
    jobs.extend(found.failures.into_iter().map(Job::Unreadable));
    if stdin {
        jobs.push(Job::Stdin(run.stdin_name.to_path_buf()));
    }
    jobs.sort_by(|a, b| a.path().cmp(b.path()));
    let batch = rayon::current_num_threads().max(1) * 2;
    let mut kept: Vec<FileReport> = Vec::new();
    let mut totals = report::Summary::default();
    let mut included = 0usize;
    let mut tally = report::Tally::default();
    // A run that takes more than a second says how far it got, on a terminal only: never on a
    // pipe, never in JSON or SARIF, and wiped before anything else is printed.
    let total = jobs.len();
    let started = std::time::Instant::now();
    let progress = env.stderr_is_terminal && streamed;
    let mut progress_shown = false;
    let mut done = 0usize;
    let mut configs: std::collections::BTreeSet<PathBuf> = std::collections::BTreeSet::new();
    for chunk in jobs.chunks(batch) {
        let mut reports: Vec<FileReport> = chunk
            .par_iter()
            .filter_map(|job| match job {
                Job::Check(path) => Some(check_file(path, &options)),
                Job::Unreadable(failure) => Some(unreadable(failure.clone())),
                Job::Stdin(name) => Some(check_stdin(name, &options)),
                Job::IfIncludes(path) => {
                    let report = check_file(path, &options);
                    includes_any(&report, &libraries).then_some(report)
                }
            })
            .collect();
        if progress_shown {
            console.write_err("\r\x1b[K");
            progress_shown = false;
        }
        let named = chunk
            .iter()
            .filter(|job| !matches!(job, Job::IfIncludes(_)))
            .count();
        included = included.saturating_add(reports.len().saturating_sub(named));
        let mut known = 0usize;
        if let Some(baseline) = baseline.as_mut() {
            for report in &mut reports {
                known = known.saturating_add(baseline.absorb(report));
            }
        }
        totals.known = totals.known.saturating_add(known);
        for path in reports.iter().flat_map(|r| r.configs.iter()) {
            if configs.insert(path.clone()) {
                config_warnings(path, console);
            }
        }
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
        done = done.saturating_add(chunk.len());
        if run.counts {
            tally.add(&reports);
        }
        if streamed {
            add_counts(&mut totals, &report::Summary::of(&reports));
            let text = match global.format {
                Format::Cards | Format::Human if run.compact => {
                    report::cards::render_compact(&reports, &cards)
                }
                Format::Cards | Format::Human => report::cards::render(&reports, &cards),
                _ => report::lines::render(&reports, shown),
            };
            console.print(&text);
        } else {
            kept.extend(reports);
        }
        if progress && done < total && started.elapsed() >= std::time::Duration::from_secs(1) {
            console.write_err(&format!("\rchecked {done} of {total} netlists"));
            progress_shown = true;
        }
    }
    if progress_shown {
        console.write_err("\r\x1b[K");
    }
    if !libraries.is_empty() && included == 0 {
        console.note(&format!(
            "no netlist under the current folder includes {}",
            found_libraries.join(", ")
        ));
    }
    if let Some(baseline) = &baseline {
        for stale in baseline.stale() {
            console.note(&format!(
                "{stale}; `kickback baseline` rewrites the file without it"
            ));
        }
    }
    if let Some(out) = run.write_baseline {
        // Findings are what a baseline is for: only a file that could not be checked fails.
        let code = if code == EXIT_FAILURE {
            EXIT_FAILURE
        } else {
            EXIT_CLEAN
        };
        return code.max(write_baseline(&kept, out, console));
    }
    let text = match global.format {
        Format::Cards | Format::Human => {
            totals.failed.sort();
            let mut text = if run.counts {
                tally.render()
            } else {
                String::new()
            };
            if !configs.is_empty() {
                let here = std::env::current_dir().and_then(|d| d.canonicalize()).ok();
                let shown: Vec<String> = configs
                    .iter()
                    .map(|path| {
                        here.as_ref()
                            .and_then(|h| path.strip_prefix(h).ok())
                            .unwrap_or(path)
                            .display()
                            .to_string()
                    })
                    .collect();
                text.push_str(&format!("configuration: {}\n", shown.join(", ")));
            }
            text.push_str(&report::cards::summary_line(&totals, &cards));
            text.push('\n');
            text
        }
        Format::Lines | Format::Short => String::new(),
        Format::Json => {
            report::json::render_with_baseline(&kept, baseline.as_ref().map(|_| totals.known))
        }
        Format::Sarif => report::sarif::render(&kept),
        Format::Html | Format::Markdown => String::new(),
    };
    console.print(&text);
    code
}

/// A path to check, or one that could not be read or walked, with why, or the netlist on
/// stdin under the name it is given.
enum Job {
    Check(PathBuf),
    Unreadable((PathBuf, String)),
    Stdin(PathBuf),
    /// A netlist checked only for what it makes of the libraries named: kept when it includes
    /// one of them.
    IfIncludes(PathBuf),
}

impl Job {
    fn path(&self) -> &Path {
        match self {
            Job::Check(path)
            | Job::Unreadable((path, _))
            | Job::Stdin(path)
            | Job::IfIncludes(path) => path,
        }
    }
}

/// True when `report` read one of `libraries` (canonical paths) through its includes.
fn includes_any(report: &FileReport, libraries: &[PathBuf]) -> bool {
    report.sources.files().any(|(_, file)| {
        let path = file
            .path
            .canonicalize()
            .unwrap_or_else(|_| file.path.clone());
        libraries.contains(&path)
    })
}

/// Checks the netlist on stdin as if it were the file `name` (its configuration is looked for
/// from there); it is read up to the file size limit.
fn check_stdin(name: &Path, options: &CheckOptions) -> FileReport {
    use std::io::Read;
    let limit = options.limits.max_file_bytes;
    let mut bytes = Vec::new();
    let read = io::stdin()
        .lock()
        .take(limit.saturating_add(1))
        .read_to_end(&mut bytes);
    let failed = |reason: String| unreadable((name.to_path_buf(), reason));
    if let Err(e) = read {
        return failed(format!("cannot read stdin: {e}"));
    }
    if bytes.len() as u64 > limit {
        return failed(format!(
            "stdin holds more than the file size limit of {limit} bytes (--max-file-size)"
        ));
    }
    let text = String::from_utf8_lossy(&bytes);
    let config = match crate::check::load_config(name, options) {
        Ok(config) => config,
        Err(e) => {
            let mut report = unreadable((name.to_path_buf(), String::new()));
            report.failure = Some(CheckError::Config(e));
            return report;
        }
    };
    crate::check::check_str(&name.to_string_lossy(), &text, &config, options)
}

/// Writes a baseline of `reports` to `out`; files that could not be checked have no entries,
/// and the run fails (exit 2) so that a baseline is never written short without a word.
fn write_baseline(reports: &[FileReport], out: &Path, console: &mut Console<'_>) -> u8 {
    let text = baseline::write(reports, out);
    let entries: usize = reports
        .iter()
        .flat_map(|r| &r.findings)
        .filter(|f| f.severity >= Severity::Warning)
        .count();
    let written = std::fs::write(out, text);
    match written {
        Ok(()) => {
            console.print(&format!(
                "wrote {} with {entries} finding{} from {} netlist{}\n",
                out.display(),
                if entries == 1 { "" } else { "s" },
                reports.len(),
                if reports.len() == 1 { "" } else { "s" },
            ));
            EXIT_CLEAN
        }
        Err(e) => {
            console.error(&format!("cannot write {}: {e}", out.display()));
            EXIT_FAILURE
        }
    }
}

/// Adds one batch's counts to the run's.
fn add_counts(totals: &mut report::Summary, batch: &report::Summary) {
    totals.errors = totals.errors.saturating_add(batch.errors);
    totals.warnings = totals.warnings.saturating_add(batch.warnings);
    totals.notes = totals.notes.saturating_add(batch.notes);
    totals.suppressed = totals.suppressed.saturating_add(batch.suppressed);
    totals.known = totals.known.saturating_add(batch.known);
    totals.files = totals.files.saturating_add(batch.files);
    for (rule, n) in &batch.not_judged {
        let total = totals.not_judged.entry(rule.clone()).or_default();
        *total = total.saturating_add(*n);
    }
    totals.assumed = totals.assumed.saturating_add(batch.assumed);
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
        configs: Vec::new(),
        failure: Some(CheckError::Load(LoadError::Unreadable { path, reason })),
    }
}

/// The warnings of one configuration file the run read (`"6M"` for a resistance), on stderr:
/// shown once, whatever the number of netlists it applies to, and never failing the run.
fn config_warnings(path: &Path, console: &mut Console<'_>) {
    // The file was read moments ago for a netlist; a reading that fails now was reported there.
    if let Ok(config) = Config::load(path) {
        for warning in &config.warnings {
            console.warning(&warning.to_string());
        }
    }
}

/// A `--config` file that cannot be read or used stops the run before any netlist is read,
/// with one message instead of one per netlist.
fn preflight_config(path: &Path) -> Result<(), String> {
    std::fs::metadata(path).map_err(|e| format!("cannot read config {}: {e}", path.display()))?;
    Config::load(path).map(|_| ()).map_err(|e| e.to_string())
}

/// `--only` and `--skip` as `[rules]` levels laid over the configuration, or why they cannot be.
fn rule_selection(global: &GlobalArgs) -> Result<Vec<(String, RuleLevel)>, String> {
    let named = |list: &[String]| -> Result<Vec<&'static str>, String> {
        let mut ids = Vec::new();
        for id in list.iter().map(|s| s.trim()).filter(|s| !s.is_empty()) {
            match crate::rules::find(id) {
                Some(rule) => ids.push(rule.id),
                None => {
                    let near = crate::rules::suppress::closest_rules(id);
                    let hint = if near.is_empty() {
                        " (`kickback rules` lists them)".to_string()
                    } else {
                        format!("; did you mean {}?", near.join(" or "))
                    };
                    return Err(format!("`{id}` is not a kickback rule{hint}"));
                }
            }
        }
        Ok(ids)
    };
    let only = named(&global.only)?;
    let skip = named(&global.skip)?;
    let mut levels = Vec::new();
    if !global.only.is_empty() {
        for rule in crate::rules::REGISTRY {
            // What the reading stages report (no check of its own) stays unless skipped.
            if rule.check.is_some() && !only.contains(&rule.id) {
                levels.push((rule.id.to_string(), RuleLevel::Off));
            }
        }
    }
    levels.extend(skip.iter().map(|id| (id.to_string(), RuleLevel::Off)));
    Ok(levels)
}

/// [`check_options`], with `--only` and `--skip` checked against the registry.
fn check_options_checked(global: &GlobalArgs) -> Result<CheckOptions, String> {
    let mut options = check_options(global);
    options.rule_levels = rule_selection(global)?;
    Ok(options)
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
        rule_levels: Vec::new(),
    }
}

/// `kickback rules`: the registry, with what the configuration in effect (`--config`, or the
/// `kickback.toml` found from the current folder up) makes of each rule.
fn rules_command(global: &GlobalArgs, console: &mut Console<'_>) -> u8 {
    if !matches!(global.format, Format::Cards | Format::Json) {
        console.error("rules prints --format cards (a table for a person) or --format json");
        return EXIT_FAILURE;
    }
    let options = match check_options_checked(global) {
        Ok(options) => options,
        Err(message) => {
            console.error(&message);
            return EXIT_FAILURE;
        }
    };
    // The configuration a netlist in the current folder would be checked under: the files
    // found from here up, `--config`, `--only` and `--skip`.
    let config = match crate::check::load_config(Path::new("."), &options) {
        Ok(config) => Some(config),
        Err(e) => {
            console.error(&e.to_string());
            return EXIT_FAILURE;
        }
    };
    let text = match global.format {
        Format::Json => catalogue::json(crate::rules::REGISTRY, config.as_ref()),
        _ => catalogue::table(crate::rules::REGISTRY, config.as_ref()),
    };
    console.print(&text);
    EXIT_CLEAN
}

/// `kickback parts`: the reference of part kinds, keys, units and defaults.
fn parts_command(format: Format, console: &mut Console<'_>) -> u8 {
    let text = match format {
        Format::Json => parts::json(),
        Format::Cards => parts::text(),
        _ => {
            console.error("parts prints --format cards (tables for a person) or --format json");
            return EXIT_FAILURE;
        }
    };
    console.print(&text);
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
    if file.is_dir() {
        console.error(&format!(
            "report takes one netlist file, and {} is a folder (`kickback check {}` checks \
             every netlist in it)",
            file.display(),
            file.display()
        ));
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
            // A line the parser could not read is missing from every table above: say so, and
            // fail, so a report is never taken for the whole deck.
            let unread: Vec<String> = facts
                .findings
                .iter()
                .filter(|f| f.rule == crate::rules::front_end::SYNTAX.id)
                .map(|f| {
                    let at = facts.sources.locate(f.span);
                    format!("{}:{}: {}", at.file, at.line, f.message)
                })
                .collect();
            if unread.is_empty() {
                EXIT_CLEAN
            } else {
                console.error(&format!(
                    "{} of {} could not be read, and this report leaves out what {} \
                     (`kickback check` shows each):",
                    if unread.len() == 1 {
                        "1 statement".to_string()
                    } else {
                        format!("{} statements", unread.len())
                    },
                    file.display(),
                    if unread.len() == 1 {
                        "it says"
                    } else {
                        "they say"
                    },
                ));
                for line in unread {
                    console.write_err(&format!("  {line}\n"));
                }
                EXIT_FINDINGS
            }
        }
        Err(e) => {
            console.error(&format!("cannot report on {}: {e}", file.display()));
            EXIT_FAILURE
        }
    }
}

fn lsp(debounce_ms: u64, global: &GlobalArgs, console: &mut Console<'_>) -> u8 {
    let options = crate::lsp::ServerOptions {
        check: check_options(global),
        debounce: std::time::Duration::from_millis(debounce_ms.min(10_000)),
    };
    match crate::lsp::serve_stdio(options) {
        Ok(()) => EXIT_CLEAN,
        Err(message) => {
            console.error(&message);
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

    fn warning(&mut self, message: &str) {
        self.write_err(&format!("warning: {message}\n"));
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
