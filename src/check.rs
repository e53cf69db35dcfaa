//! The pipeline for one file: netlist → circuit → analysis → rules, then severity overrides and
//! suppressions. Renderers receive the result; nothing here prints.

use crate::analysis::{self, Analysis};
use crate::circuit::{parts, Circuit};
use crate::config::{Config, ConfigError, RuleLevel};
use crate::diagnostic::Finding;
use crate::netlist::{self, FlatNetlist, Limits};
use crate::rules::{self, RuleContext};
use crate::source::SourceMap;

pub use crate::outcome::{CheckError, FileReport};
use std::panic::{self, AssertUnwindSafe};
use std::path::{Path, PathBuf};

#[derive(Clone, Debug, Default)]
pub struct CheckOptions {
    pub limits: Limits,
    /// `--config PATH`; otherwise `kickback.toml` is looked for beside each netlist.
    pub config_path: Option<PathBuf>,
    /// Rule levels for this run alone (`--only`, `--skip`), laid over the configuration's
    /// `[rules]`; the IDs are registry IDs.
    pub rule_levels: Vec<(String, RuleLevel)>,
}

pub fn load_config(netlist: &Path, options: &CheckOptions) -> Result<Config, ConfigError> {
    let given = options
        .config_path
        .as_deref()
        .map(Config::load)
        .transpose()?;
    // `--config` is laid over the files found from the netlist up, or stands alone when it
    // says `root = true`.
    let mut config = match given {
        Some(given) if given.root => given,
        given => {
            let found = Config::discover_with(netlist, options.limits.allow_outside_includes)?;
            match (found, given) {
                (Some(found), Some(given)) => found.overlay(given),
                (found, given) => given.or(found).unwrap_or_default(),
            }
        }
    };
    validate_rule_ids(&config)?;
    overlay_rule_levels(&mut config, &options.rule_levels);
    Ok(config)
}

/// Lays rule levels given for one run over a configuration's `[rules]`.
pub fn overlay_rule_levels(config: &mut Config, levels: &[(String, RuleLevel)]) {
    for (id, level) in levels {
        let id = id.to_ascii_lowercase();
        if *level == RuleLevel::Off {
            config.run_off.insert(id.clone());
        }
        config.rules.insert(id, *level);
    }
}

/// `[rules]` may only name rules that exist: a typo there would silently keep a rule on.
pub fn validate_rule_ids(config: &Config) -> Result<(), ConfigError> {
    for id in config.rules.keys() {
        if rules::find(id).is_some() {
            continue;
        }
        let (line, column) = config.rule_spans.get(id).copied().unwrap_or((1, 1));
        let path = config
            .rule_files
            .get(id)
            .or(config.path.as_ref())
            .cloned()
            .unwrap_or_default();
        let near = rules::suppress::closest_rules(id);
        let hint = if near.is_empty() {
            " (`kickback rules` lists them)".to_string()
        } else {
            format!("; did you mean {}?", near.join(" or "))
        };
        return Err(ConfigError {
            path,
            line,
            column,
            key: Some(format!("rules.{id}")),
            message: format!("rules.{id}: `{id}` is not a kickback rule{hint}"),
        });
    }
    Ok(())
}

/// What `kickback report` shows for one netlist: the electrical facts and what they refer to.
#[derive(Debug)]
pub struct FileFacts {
    pub sources: SourceMap,
    pub netlist: FlatNetlist,
    pub circuit: Circuit,
    pub analysis: Analysis,
    /// Findings from loading, building and analysing (before rules run and before
    /// suppressions), for a renderer that wants to say why a fact is missing.
    pub findings: Vec<Finding>,
}

/// Loads, builds and analyses one netlist without running the rules (`kickback report`).
/// A panic becomes [`CheckError::Internal`], as in [`check_file`].
pub fn report_file(path: &Path, options: &CheckOptions) -> Result<FileFacts, CheckError> {
    panic::catch_unwind(AssertUnwindSafe(|| report_file_unguarded(path, options))).unwrap_or_else(
        |payload| {
            Err(CheckError::Internal {
                path: path.to_path_buf(),
                message: panic_message(payload.as_ref()),
            })
        },
    )
}

fn report_file_unguarded(path: &Path, options: &CheckOptions) -> Result<FileFacts, CheckError> {
    let config = load_config(path, options)?;
    let mut sources = SourceMap::new();
    let keep = |name: &str| parts::keeps_whole(name, &config);
    let (netlist, mut findings) = netlist::load(path, &mut sources, &options.limits, &keep)?;
    fault::inject(path);
    let (circuit, circuit_findings) = Circuit::build(&netlist, &config);
    findings.extend(circuit_findings);
    let (analysis, analysis_findings) = analysis::analyze(&netlist, &circuit, &config);
    findings.extend(analysis_findings);
    Ok(FileFacts {
        sources,
        netlist,
        circuit,
        analysis,
        findings,
    })
}

/// Checks one netlist file. A panic anywhere in its pipeline becomes an internal-error
/// failure of this file alone, so a bug met on one netlist never hides the other files' findings.
pub fn check_file(path: &Path, options: &CheckOptions) -> FileReport {
    guarded(path, || check_file_unguarded(path, options))
}

/// Checks netlist text that is not in a file (includes are not read, and are reported as
/// missing), with `config` as its configuration. For tools and fuzzing; guarded like
/// [`check_file`].
pub fn check_str(name: &str, text: &str, config: &Config, options: &CheckOptions) -> FileReport {
    let path = Path::new(name);
    guarded(path, || {
        let mut report = empty_report(path);
        report.configs = config.files.clone();
        let keep = |part: &str| parts::keeps_whole(part, config);
        match netlist::parse_text(name, text, &mut report.sources, &options.limits, &keep) {
            Ok((flat, findings)) => finish(report, &flat, findings, config),
            Err(e) => {
                report.failure = Some(e.into());
                report
            }
        }
    })
}

fn empty_report(path: &Path) -> FileReport {
    FileReport {
        path: path.to_path_buf(),
        sources: SourceMap::new(),
        findings: Vec::new(),
        suppressed: 0,
        configs: Vec::new(),
        failure: None,
    }
}

fn check_file_unguarded(path: &Path, options: &CheckOptions) -> FileReport {
    let mut report = empty_report(path);
    let config = match load_config(path, options) {
        Ok(c) => c,
        Err(e) => {
            report.failure = Some(e.into());
            return report;
        }
    };
    report.configs = config.files.clone();
    let keep = |name: &str| parts::keeps_whole(name, &config);
    let (flat, findings) = match netlist::load(path, &mut report.sources, &options.limits, &keep) {
        Ok(x) => x,
        Err(e) => {
            report.failure = Some(e.into());
            return report;
        }
    };
    finish(report, &flat, findings, &config)
}

/// What an editor needs of one checked buffer: the findings, and the facts behind them
/// (`None` when the buffer could not be loaded or its configuration not read).
#[derive(Debug)]
pub struct BufferCheck {
    pub report: FileReport,
    pub facts: Option<BufferFacts>,
}

/// The netlist, graph and analysis the findings of a [`BufferCheck`] came from.
#[derive(Debug)]
pub struct BufferFacts {
    pub netlist: FlatNetlist,
    pub circuit: Circuit,
    pub analysis: Analysis,
}

/// Checks a netlist whose text is given (an editor's unsaved buffer) as if it were the file at
/// `path`: its `kickback.toml` is looked for beside `path` and its includes are read from disk.
/// Keeps the facts for hovers; guarded like [`check_file`].
pub fn check_buffer(path: &Path, text: &str, options: &CheckOptions) -> BufferCheck {
    panic::catch_unwind(AssertUnwindSafe(|| {
        check_buffer_unguarded(path, text, options)
    }))
    .unwrap_or_else(|payload| {
        let mut report = empty_report(path);
        report.failure = Some(CheckError::Internal {
            path: path.to_path_buf(),
            message: panic_message(payload.as_ref()),
        });
        BufferCheck {
            report,
            facts: None,
        }
    })
}

fn check_buffer_unguarded(path: &Path, text: &str, options: &CheckOptions) -> BufferCheck {
    let mut report = empty_report(path);
    let config = match load_config(path, options) {
        Ok(c) => c,
        Err(e) => {
            report.failure = Some(e.into());
            return BufferCheck {
                report,
                facts: None,
            };
        }
    };
    let keep = |name: &str| parts::keeps_whole(name, &config);
    let loaded = netlist::load_text(path, text, &mut report.sources, &options.limits, &keep);
    let (flat, findings) = match loaded {
        Ok(x) => x,
        Err(e) => {
            report.failure = Some(e.into());
            return BufferCheck {
                report,
                facts: None,
            };
        }
    };
    let (report, circuit, analysis) = finish_with_facts(report, &flat, findings, &config);
    BufferCheck {
        report,
        facts: Some(BufferFacts {
            netlist: flat,
            circuit,
            analysis,
        }),
    }
}

/// Everything a review page shows of one netlist: the checked file (findings after
/// suppressions), the graph, the facts and the waveforms sampled from them.
#[derive(Debug)]
pub struct Reviewed {
    pub report: FileReport,
    pub netlist: FlatNetlist,
    pub circuit: Circuit,
    pub analysis: Analysis,
    pub waveforms: analysis::Waveforms,
}

/// Checks one netlist and keeps its graph and facts, with the waveforms for a review page
/// (`kickback report --format html|markdown`). A netlist or configuration that cannot be read
/// is an error; a panic becomes [`CheckError::Internal`], as in [`check_file`].
pub fn review_file(path: &Path, options: &CheckOptions) -> Result<Reviewed, CheckError> {
    panic::catch_unwind(AssertUnwindSafe(|| {
        let config = load_config(path, options)?;
        let mut report = empty_report(path);
        let keep = |name: &str| parts::keeps_whole(name, &config);
        let (flat, findings) = netlist::load(path, &mut report.sources, &options.limits, &keep)?;
        let (report, circuit, facts) = finish_with_facts(report, &flat, findings, &config);
        let waveforms = analysis::waveform::sample(&flat, &circuit, &config, &facts);
        Ok(Reviewed {
            report,
            netlist: flat,
            circuit,
            analysis: facts,
            waveforms,
        })
    }))
    .unwrap_or_else(|payload| {
        Err(CheckError::Internal {
            path: path.to_path_buf(),
            message: panic_message(payload.as_ref()),
        })
    })
}

/// Circuit, analysis, rules and suppressions on a loaded netlist.
fn finish(
    report: FileReport,
    flat: &FlatNetlist,
    findings: Vec<Finding>,
    config: &Config,
) -> FileReport {
    finish_with_facts(report, flat, findings, config).0
}

/// As [`finish`], keeping the graph and the facts.
fn finish_with_facts(
    mut report: FileReport,
    flat: &FlatNetlist,
    mut findings: Vec<Finding>,
    config: &Config,
) -> (FileReport, Circuit, Analysis) {
    fault::inject(&report.path);
    let (circuit, circuit_findings) = Circuit::build(flat, config);
    findings.extend(circuit_findings);
    let (facts, analysis_findings) = analysis::analyze(flat, &circuit, config);
    findings.extend(analysis_findings);
    let cx = RuleContext {
        netlist: flat,
        circuit: &circuit,
        analysis: &facts,
        config,
    };
    findings.extend(rules::run(&cx));
    // Rules left out for this run (`--only`, `--skip`) are a choice of what to see, not a
    // silenced finding: they are not counted as suppressed.
    let left_out = findings
        .iter()
        .filter(|f| config.run_off.contains(&f.rule))
        .count();
    let outcome = rules::suppress::apply(findings, flat, &report.sources, config);
    let sources = &report.sources;
    let mut findings = outcome.findings;
    findings.sort_by_cached_key(|f| (sources.locate(f.span), f.rule.clone(), f.message.clone()));
    findings.dedup();
    report.findings = findings;
    report.suppressed = outcome.suppressed.saturating_sub(left_out);
    (report, circuit, facts)
}

/// Runs `work` for the file at `path`; a panic becomes [`CheckError::Internal`].
fn guarded(path: &Path, work: impl FnOnce() -> FileReport) -> FileReport {
    match panic::catch_unwind(AssertUnwindSafe(work)) {
        Ok(report) => report,
        Err(payload) => {
            let mut report = empty_report(path);
            report.failure = Some(CheckError::Internal {
                path: path.to_path_buf(),
                message: panic_message(payload.as_ref()),
            });
            report
        }
    }
}

/// The text a panic carried, with where it happened when the panic hook recorded it.
pub fn panic_message(payload: &(dyn std::any::Any + Send)) -> String {
    let text = payload
        .downcast_ref::<&str>()
        .map(|s| s.to_string())
        .or_else(|| payload.downcast_ref::<String>().cloned())
        .unwrap_or_else(|| "a panic with no message".to_string());
    match last_panic_location() {
        Some(place) => format!("{text} (at {place})"),
        None => text,
    }
}

thread_local! {
    static PANIC_LOCATION: std::cell::RefCell<Option<String>> = const { std::cell::RefCell::new(None) };
}

/// For a panic hook: remembers where the current thread's panic happened, so that the
/// internal-error message can say it without the hook printing anything.
pub fn record_panic_location(info: &panic::PanicHookInfo<'_>) {
    let place = info
        .location()
        .map(|l| format!("{}:{}:{}", l.file(), l.line(), l.column()));
    PANIC_LOCATION.with(|cell| *cell.borrow_mut() = place);
}

fn last_panic_location() -> Option<String> {
    PANIC_LOCATION.with(|cell| cell.borrow_mut().take())
}

/// A fault that only a program embedding the library can set (the shipped binary never
/// does), so tests can prove that a panic in the pipeline is contained. Netlist content,
/// configuration, arguments and the environment cannot reach it.
#[doc(hidden)]
pub mod fault {
    use std::path::Path;
    use std::sync::OnceLock;

    static PANIC_ON: OnceLock<fn(&Path) -> bool> = OnceLock::new();

    /// Makes the pipeline panic for every file for which `select` is true. Can be set once.
    pub fn panic_when(select: fn(&Path) -> bool) {
        let _ = PANIC_ON.set(select);
    }

    pub(crate) fn inject(path: &Path) {
        if PANIC_ON.get().is_some_and(|select| select(path)) {
            panic!("fault injected for {}", path.display());
        }
    }
}
