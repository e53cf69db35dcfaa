//! The pipeline for one file: netlist → circuit → analysis → rules, then severity overrides and
//! suppressions. Renderers receive the result; nothing here prints.

use crate::analysis::{self, Analysis};
use crate::circuit::{parts, Circuit};
use crate::config::{Config, ConfigError};
use crate::diagnostic::Finding;
use crate::netlist::{self, FlatNetlist, Limits, LoadError};
use crate::rules::{self, RuleContext};
use crate::source::SourceMap;
use std::path::{Path, PathBuf};

#[derive(Clone, Debug, Default)]
pub struct CheckOptions {
    pub limits: Limits,
    /// `--config PATH`; otherwise `kickback.toml` is looked for beside each netlist.
    pub config_path: Option<PathBuf>,
}

/// Why a file could not be checked at all (exit code 2).
#[derive(Debug, thiserror::Error)]
pub enum CheckError {
    #[error(transparent)]
    Load(#[from] LoadError),
    #[error(transparent)]
    Config(#[from] ConfigError),
}

/// The outcome for one file.
#[derive(Debug)]
pub struct FileReport {
    pub path: PathBuf,
    pub sources: SourceMap,
    /// Findings after severity overrides and suppressions, sorted by file, line, column, rule.
    pub findings: Vec<Finding>,
    /// Findings silenced by a suppression comment or `off` in `[rules]`.
    pub suppressed: usize,
    /// Set when the file could not be checked; `findings` may then be empty.
    pub failure: Option<CheckError>,
}

pub fn load_config(netlist: &Path, options: &CheckOptions) -> Result<Config, ConfigError> {
    let config = match &options.config_path {
        Some(path) => Config::load(path)?,
        None => Config::discover(netlist)?.unwrap_or_default(),
    };
    validate_rule_ids(&config)?;
    Ok(config)
}

/// `[rules]` may only name rules that exist: a typo there would silently keep a rule on.
pub fn validate_rule_ids(config: &Config) -> Result<(), ConfigError> {
    for id in config.rules.keys() {
        if rules::find(id).is_some() {
            continue;
        }
        let (line, column) = config.rule_spans.get(id).copied().unwrap_or((1, 1));
        let near = rules::suppress::closest_rules(id);
        let hint = if near.is_empty() {
            " (`kickback rules` lists them)".to_string()
        } else {
            format!("; did you mean {}?", near.join(" or "))
        };
        return Err(ConfigError {
            path: config.path.clone().unwrap_or_default(),
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
pub fn report_file(path: &Path, options: &CheckOptions) -> Result<FileFacts, CheckError> {
    let config = load_config(path, options)?;
    let mut sources = SourceMap::new();
    let keep = |name: &str| parts::keeps_whole(name, &config);
    let (netlist, mut findings) = netlist::load(path, &mut sources, &options.limits, &keep)?;
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

pub fn check_file(path: &Path, options: &CheckOptions) -> FileReport {
    let mut report = FileReport {
        path: path.to_path_buf(),
        sources: SourceMap::new(),
        findings: Vec::new(),
        suppressed: 0,
        failure: None,
    };
    let config = match load_config(path, options) {
        Ok(c) => c,
        Err(e) => {
            report.failure = Some(e.into());
            return report;
        }
    };
    let keep = |name: &str| parts::keeps_whole(name, &config);
    let (flat, mut findings) =
        match netlist::load(path, &mut report.sources, &options.limits, &keep) {
            Ok(x) => x,
            Err(e) => {
                report.failure = Some(e.into());
                return report;
            }
        };
    let (circuit, circuit_findings) = Circuit::build(&flat, &config);
    findings.extend(circuit_findings);
    let (facts, analysis_findings) = analysis::analyze(&flat, &circuit, &config);
    findings.extend(analysis_findings);
    let cx = RuleContext {
        netlist: &flat,
        circuit: &circuit,
        analysis: &facts,
        config: &config,
    };
    findings.extend(rules::run(&cx));
    let outcome = rules::suppress::apply(findings, &flat, &report.sources, &config);
    let sources = &report.sources;
    let mut findings = outcome.findings;
    findings.sort_by_cached_key(|f| (sources.locate(f.span), f.rule.clone(), f.message.clone()));
    findings.dedup();
    report.findings = findings;
    report.suppressed = outcome.suppressed;
    report
}
