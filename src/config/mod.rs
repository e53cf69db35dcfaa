//! `kickback.toml`: discovery beside the netlist and in its parent folders, layering, schema
//! and validation.
//!
//! Every `kickback.toml` from the netlist's folder up to the filesystem root is read, and each
//! nearer one is laid over those above it, key by key; a file with `root = true` ends the
//! search upwards (a project's top). `--config FILE` is laid over them all (alone, when it says
//! `root = true` itself).
//!
//! The schema: `[analysis] ground`, `[rules]` severities, `[supply.NAME]` corners,
//! `[parts.NAME]` (a model or subcircuit name or a glob) and `[elements."PATH"]` (one flattened
//! instance), the last two with `kind`, `pins` and rating names. Every problem is a
//! [`ConfigError`] naming the file, the 1-based line and column, and the key.

mod schema;
mod tree;
mod value;

use crate::diagnostic::Severity;
use crate::vocabulary::Kind;
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
    /// Reference nets, compared case-insensitively. SPICE node `0` is always a reference too.
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
    /// Pin roles in port order (`["d", "g", "s"]`), as written; each is a known role name.
    pub pins: Option<Vec<String>>,
    /// Rating name (lower-case) → value in SI base units; `polarized` and `logic_level` are
    /// stored as 1.0 / 0.0.
    pub ratings: BTreeMap<String, f64>,
}

#[derive(Clone, Debug, Default, PartialEq)]
pub struct Config {
    /// Where it was read from (the nearest file, or `--config`); `None` for the built-in
    /// defaults.
    pub path: Option<PathBuf>,
    /// Every file laid together to make this configuration, outermost first.
    pub files: Vec<PathBuf>,
    /// `root = true`: no file above this one is read.
    pub root: bool,
    /// True when `[analysis] ground` was written (else `analysis.ground` is the default).
    pub ground_given: bool,
    pub analysis: AnalysisConfig,
    /// Rule ID as written → level. IDs are not checked against the rule registry here.
    pub rules: BTreeMap<String, RuleLevel>,
    /// Rule ID as written → 1-based (line, column) of its key, so that an unknown ID can be
    /// reported at its line.
    pub rule_spans: BTreeMap<String, (usize, usize)>,
    /// Rule ID → the file whose `[rules]` names it, when that is not `path` (a layer above).
    pub rule_files: BTreeMap<String, PathBuf>,
    /// Source element name as written → corners.
    pub supplies: BTreeMap<String, SupplyConfig>,
    /// In file order: the pattern (name or glob, as written) and its data.
    pub parts: Vec<(String, PartConfig)>,
    /// Flattened instance path as written → data. Matched case-insensitively.
    pub elements: BTreeMap<String, PartConfig>,
    /// Rule IDs (lower-case) turned off for one run by the command line (`--only`, `--skip`),
    /// not by a file: their findings are left out without counting as suppressed.
    pub run_off: std::collections::BTreeSet<String>,
    /// Values that are valid but most likely not what was meant (`"6M"` for a resistance is
    /// 6 mΩ), in the order of the files and their lines; a check shows them and goes on.
    pub warnings: Vec<ConfigWarning>,
}

/// A value the configuration accepts but that was most likely meant otherwise. Names the file,
/// line and key, like [`ConfigError`], and never stops a check.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
#[error("{path}:{line}:{column}: {message}")]
pub struct ConfigWarning {
    pub path: PathBuf,
    pub line: usize,
    pub column: usize,
    /// Dotted key path (`parts.TIMER.ladder_resistance`).
    pub key: String,
    pub message: String,
}

/// A configuration that cannot be used (exit code 2). Names the file, line and key.
#[derive(Debug, thiserror::Error)]
#[error("{path}:{line}:{column}: {message}")]
pub struct ConfigError {
    pub path: PathBuf,
    pub line: usize,
    pub column: usize,
    /// Dotted key path (`parts.PUMP12.stall_current`), when the problem is at a key.
    pub key: Option<String>,
    pub message: String,
}

/// The largest configuration file read; real ones are a few kilobytes.
pub const MAX_CONFIG_BYTES: u64 = 1024 * 1024;

fn read_bounded(path: &Path) -> Result<String, String> {
    use std::io::Read;
    let meta = std::fs::metadata(path).map_err(|e| e.to_string())?;
    if !meta.is_file() {
        return Err(format!(
            "it is {}, not a regular file",
            crate::source::file_kind(&meta)
        ));
    }
    let file = std::fs::File::open(path).map_err(|e| e.to_string())?;
    let mut bytes = Vec::new();
    file.take(MAX_CONFIG_BYTES + 1)
        .read_to_end(&mut bytes)
        .map_err(|e| e.to_string())?;
    if bytes.len() as u64 > MAX_CONFIG_BYTES {
        return Err(format!(
            "it is larger than the limit of {MAX_CONFIG_BYTES} bytes for a configuration file"
        ));
    }
    String::from_utf8(bytes).map_err(|_| "it is not UTF-8 text".to_string())
}

impl Config {
    /// Reads and validates a config file.
    /// Only a regular file of at most [`MAX_CONFIG_BYTES`] is read: a `kickback.toml` committed
    /// as a link to a device or a FIFO must not hang or fill memory.
    pub fn load(path: &Path) -> Result<Config, ConfigError> {
        let text = read_bounded(path).map_err(|message| ConfigError {
            path: path.to_path_buf(),
            line: 1,
            column: 1,
            key: None,
            message: format!("cannot read the configuration: {message}"),
        })?;
        Config::parse(&text, path)
    }

    /// Validates config text; `path` is only used to name the file in errors and in `path`.
    pub fn parse(text: &str, path: &Path) -> Result<Config, ConfigError> {
        let mut config = schema::read(text, path)?;
        config.path = Some(path.to_path_buf());
        config.files = vec![path.to_path_buf()];
        Ok(config)
    }

    /// Lays `nearer` (a file nearer the netlist, or `--config`) over this configuration: its
    /// values win key by key, its part entries are matched before these.
    pub fn overlay(mut self, nearer: Config) -> Config {
        let nearer_path = nearer.path.clone();
        if nearer.ground_given {
            self.analysis = nearer.analysis;
            self.ground_given = true;
        }
        if let Some(here) = &self.path {
            for id in self.rules.keys() {
                self.rule_files
                    .entry(id.clone())
                    .or_insert_with(|| here.clone());
            }
        }
        for (id, level) in nearer.rules {
            self.rule_files.remove(&id);
            self.rules.insert(id, level);
        }
        self.rule_files.extend(nearer.rule_files);
        self.rule_spans.extend(nearer.rule_spans);
        for (name, supply) in nearer.supplies {
            self.supplies
                .retain(|written, _| !written.eq_ignore_ascii_case(&name));
            self.supplies.insert(name, supply);
        }
        let mut parts = nearer.parts;
        parts.append(&mut self.parts);
        self.parts = parts;
        for (path, element) in nearer.elements {
            self.elements
                .retain(|written, _| !written.eq_ignore_ascii_case(&path));
            self.elements.insert(path, element);
        }
        self.files.extend(nearer.files);
        self.warnings.extend(nearer.warnings);
        self.root |= nearer.root;
        self.path = nearer_path.or(self.path);
        self
    }

    /// Finds every `kickback.toml` beside `netlist` and in its parent folders, up to the
    /// filesystem root or the first with `root = true`, and lays them together.
    pub fn discover(netlist: &Path) -> Result<Option<Config>, ConfigError> {
        Config::discover_with(netlist, false)
    }

    /// The `kickback.toml` files beside `netlist` and above it, laid together (see
    /// [`Config::overlay`]). The same containment as for includes: a `kickback.toml` that links out of the folder it
    /// stands in is refused before it is opened (unless `allow_outside`), and one that is not a
    /// regular file (a FIFO, a folder, a device, a broken link) is an error rather than passed
    /// over for a parent's.
    pub fn discover_with(
        netlist: &Path,
        allow_outside: bool,
    ) -> Result<Option<Config>, ConfigError> {
        let absolute = netlist
            .canonicalize()
            .or_else(|_| std::path::absolute(netlist))
            .unwrap_or_else(|_| netlist.to_path_buf());
        let start = if absolute.is_dir() {
            absolute.as_path()
        } else {
            absolute.parent().unwrap_or(absolute.as_path())
        };
        let mut layers = Vec::new();
        for folder in start.ancestors() {
            let candidate = folder.join(FILE_NAME);
            if std::fs::symlink_metadata(&candidate).is_err() {
                continue;
            }
            let refused = |message: String| ConfigError {
                path: candidate.clone(),
                line: 1,
                column: 1,
                key: None,
                message,
            };
            let target = std::fs::canonicalize(&candidate)
                .map_err(|e| refused(format!("cannot read the configuration: {e}")))?;
            let home = std::fs::canonicalize(folder).unwrap_or_else(|_| folder.to_path_buf());
            if !allow_outside && !target.starts_with(&home) {
                return Err(refused(
                    "it links to a file outside its folder and is not read \
                     (--allow-outside-includes reads it, or name a configuration that says \
                     `root = true` with --config)"
                        .into(),
                ));
            }
            let layer = Config::load(&candidate)?;
            let stop = layer.root;
            layers.push(layer);
            if stop {
                break;
            }
        }
        let mut layers = layers.into_iter().rev();
        let Some(outermost) = layers.next() else {
            return Ok(None);
        };
        Ok(Some(layers.fold(outermost, Config::overlay)))
    }

    pub fn supply(&self, element: &str) -> Option<&SupplyConfig> {
        self.supplies
            .iter()
            .find(|(name, _)| name.eq_ignore_ascii_case(element))
            .map(|(_, s)| s)
    }

    /// The `[rules]` level for a rule ID, case-insensitive.
    pub fn rule_level(&self, rule: &str) -> Option<RuleLevel> {
        self.rules
            .iter()
            .find(|(name, _)| name.eq_ignore_ascii_case(rule))
            .map(|(_, level)| *level)
    }

    /// True when `net` is one of the reference nets (`0` always is).
    pub fn is_ground_name(&self, net: &str) -> bool {
        net == "0"
            || self
                .analysis
                .ground
                .iter()
                .any(|g| g.eq_ignore_ascii_case(net))
    }
}

/// A commented starter `kickback.toml`, as written by `kickback init`. It parses cleanly, and so
/// does every example in it once uncommented.
pub fn starter_toml() -> &'static str {
    include_str!("starter.toml")
}
