//! What checking one file produced: its findings and sources, or why it could not be checked.
//! The pipeline ([`crate::check`]) makes it; the renderers ([`crate::report`]) read it without
//! reaching back into the pipeline.

use crate::config::ConfigError;
use crate::diagnostic::Finding;
use crate::netlist::LoadError;
use crate::source::SourceMap;
use std::path::PathBuf;

/// Why a file could not be checked at all (exit code 2).
#[derive(Debug, thiserror::Error)]
pub enum CheckError {
    #[error(transparent)]
    Load(#[from] LoadError),
    #[error(transparent)]
    Config(#[from] ConfigError),
    /// A bug: some stage panicked on this file. The other files are still checked.
    #[error("internal error while checking {}: {message}; please report it with the netlist", path.display())]
    Internal { path: PathBuf, message: String },
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
    /// The configuration files read for it, outermost first.
    pub configs: Vec<std::path::PathBuf>,
    /// Set when the file could not be checked; `findings` may then be empty.
    pub failure: Option<CheckError>,
}
