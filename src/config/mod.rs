//! `kickback.toml`: discovery beside the netlist or in a parent folder, schema and validation.

use crate::circuit::Kind;
use crate::diagnostic::Severity;
use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

pub const FILE_NAME: &str = "kickback.toml";

/// Severity override for one rule.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum RuleLevel {
    Set(Severity),
    Off,
}

#[derive(Clone, Debug, PartialEq)]
pub struct AnalysisConfig {
    /// Reference nets, compared case-insensitively.
    pub ground: Vec<String>,
}

impl Default for AnalysisConfig {
    fn default() -> Self {
        AnalysisConfig {
            ground: vec!["0".into(), "gnd".into()],
        }
    }
}

/// `[supply.NAME]`: corners of an independent source.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct SupplyConfig {
    pub min: Option<f64>,
    pub nominal: Option<f64>,
    pub max: Option<f64>,
}

/// `[parts.NAME]` or `[elements."PATH"]`.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct PartConfig {
    pub kind: Option<Kind>,
    /// Pin roles in port order (`["d", "g", "s"]`).
    pub pins: Option<Vec<String>>,
    /// Rating name → value in SI base units.
    pub ratings: BTreeMap<String, f64>,
}

#[derive(Clone, Debug, Default, PartialEq)]
pub struct Config {
    /// Where it was read from; `None` for the built-in defaults.
    pub path: Option<PathBuf>,
    pub analysis: AnalysisConfig,
    pub rules: BTreeMap<String, RuleLevel>,
    pub supplies: BTreeMap<String, SupplyConfig>,
    /// In file order: the pattern (name or glob) and its data.
    pub parts: Vec<(String, PartConfig)>,
    pub elements: BTreeMap<String, PartConfig>,
}

/// A configuration that cannot be used (exit code 2). Names the file, line and key.
#[derive(Debug, thiserror::Error)]
#[error("{path}:{line}:{column}: {message}")]
pub struct ConfigError {
    pub path: PathBuf,
    pub line: usize,
    pub column: usize,
    pub key: Option<String>,
    pub message: String,
}

impl Config {
    /// Reads and validates a config file.
    pub fn load(path: &Path) -> Result<Config, ConfigError> {
        Ok(Config {
            path: Some(path.to_path_buf()),
            ..Config::default()
        })
    }

    /// Finds `kickback.toml` beside `netlist` or in a parent folder.
    pub fn discover(netlist: &Path) -> Result<Option<Config>, ConfigError> {
        let _ = netlist;
        Ok(None)
    }
}
