//! The SPICE front end: text → statements with spans → values and parameters → includes →
//! flattened elements ([`FlatNetlist`]). Nothing here knows what a part *is*; the caller says
//! which subcircuits to keep whole.
//!
//! Stages, each in its own module: `text` (decoding, caseless names), `lex` (lines, comments,
//! continuation, tokens) with `suppress` (waiver comments) and `dialect` (other netlist
//! families), `load` (files, includes, definitions), `deck` (names, headers, models), `scope`,
//! `expr` and `functions` (parameters and expressions), [`value`] (numbers), `stmt` and
//! `element*` (per-letter grammar into `parsed` parts), `flatten` and `source_spec` (hierarchy
//! to [`FlatElement`]s), `write` (flat deck back to text).

mod conditional;
mod deck;
mod dialect;
mod element;
mod element_ports;
mod element_sources;
mod expr;
pub mod flat;
mod flatten;
mod functions;
mod include_path;
mod lex;
mod library;
mod load;
mod parsed;
mod scope;
mod source_spec;
mod stmt;
mod suppress;
mod text;
pub mod value;
mod write;

pub use flat::*;
pub use text::{caseless_hash, decode};
pub use write::write_flat;

use crate::diagnostic::Finding;
use crate::source::{FileId, SourceMap};
use std::path::{Path, PathBuf};

/// Resource limits for loading one netlist.
#[derive(Clone, Debug)]
pub struct Limits {
    /// Flattened elements at most (`--max-elements`).
    pub max_elements: u64,
    /// Subcircuit and include nesting depth at most (`--max-depth`).
    pub max_depth: usize,
    /// Bytes per file at most (`--max-file-size`).
    pub max_file_bytes: u64,
    /// Bytes of code in one logical statement (continuation lines joined, comments left out)
    /// at most (`--max-statement-bytes`).
    pub max_statement_bytes: u64,
    /// Allow `.include`/`.lib` to read outside the top netlist's folder tree.
    pub allow_outside_includes: bool,
}

impl Default for Limits {
    fn default() -> Self {
        Limits {
            max_elements: 1_000_000,
            max_depth: 64,
            max_file_bytes: 256 * 1024 * 1024,
            max_statement_bytes: 1024 * 1024,
            allow_outside_includes: false,
        }
    }
}

/// The tool could not read the netlist at all (exit code 2).
#[derive(Debug, thiserror::Error)]
pub enum LoadError {
    #[error("cannot read {path}: {reason}")]
    Unreadable { path: PathBuf, reason: String },
    #[error(
        "{path} is {size} bytes, above the file size limit of {limit} bytes (--max-file-size)"
    )]
    TooLarge {
        path: PathBuf,
        size: u64,
        limit: u64,
    },
    #[error("flattening would create {count} elements, above the limit of {limit} (--max-elements); the instance chain {chain} expands past it")]
    TooManyElements {
        count: u64,
        limit: u64,
        chain: String,
    },
    #[error("cannot reserve memory for {what}; lower --max-elements or check the netlist")]
    OutOfMemory { what: String },
    #[error("the includes would hold {count} statements or more (a file included over and over counts each time), above the element limit of {limit} (--max-elements)")]
    TooManyStatements { count: u64, limit: u64 },
}

/// Reads a regular file of at most `limit` bytes (`None` when it is longer), so that a file
/// that grows or is swapped after its size was looked at still cannot take more memory.
fn read_limited(path: &Path, limit: u64) -> std::io::Result<Option<Vec<u8>>> {
    use std::io::Read;
    let file = std::fs::File::open(path)?;
    let meta = file.metadata()?;
    if !meta.is_file() {
        return Err(std::io::Error::other("not a file"));
    }
    let mut bytes = Vec::with_capacity(meta.len().min(limit) as usize);
    file.take(limit.saturating_add(1)).read_to_end(&mut bytes)?;
    Ok((bytes.len() as u64 <= limit).then_some(bytes))
}

/// Decides whether a subcircuit (by name) is one device and must not be expanded.
pub type KeepWhole<'a> = &'a (dyn Fn(&str) -> bool + Sync);

/// Reads `path` and everything it includes into `sources`, parses and flattens it.
/// Syntax problems, include trouble and parameter errors come back as findings; only a netlist
/// that cannot be read at all (or blows a limit) is an error.
pub fn load(
    path: &Path,
    sources: &mut SourceMap,
    limits: &Limits,
    keep_whole: KeepWhole<'_>,
) -> Result<(FlatNetlist, Vec<Finding>), LoadError> {
    let unreadable = |e: std::io::Error| LoadError::Unreadable {
        path: path.to_path_buf(),
        reason: e.to_string(),
    };
    let meta = std::fs::metadata(path).map_err(unreadable)?;
    if !meta.is_file() {
        return Err(LoadError::Unreadable {
            path: path.to_path_buf(),
            reason: format!(
                "it is {}, not a regular file",
                crate::source::file_kind(&meta)
            ),
        });
    }
    if meta.len() > limits.max_file_bytes {
        return Err(LoadError::TooLarge {
            path: path.to_path_buf(),
            size: meta.len(),
            limit: limits.max_file_bytes,
        });
    }
    let bytes = read_limited(path, limits.max_file_bytes)
        .map_err(unreadable)?
        .ok_or_else(|| LoadError::TooLarge {
            path: path.to_path_buf(),
            size: meta.len().max(limits.max_file_bytes.saturating_add(1)),
            limit: limits.max_file_bytes,
        })?;
    let canonical = std::fs::canonicalize(path).map_err(unreadable)?;
    run_top(
        sources,
        path,
        canonical,
        text::decode(bytes),
        limits,
        keep_whole,
    )
}

/// As [`load`], with the top file's text given (an editor's unsaved buffer) rather than read:
/// includes are resolved from `path`'s folder and read from disk, under the same limits.
pub fn load_text(
    path: &Path,
    text: &str,
    sources: &mut SourceMap,
    limits: &Limits,
    keep_whole: KeepWhole<'_>,
) -> Result<(FlatNetlist, Vec<Finding>), LoadError> {
    if text.len() as u64 > limits.max_file_bytes {
        return Err(LoadError::TooLarge {
            path: path.to_path_buf(),
            size: text.len() as u64,
            limit: limits.max_file_bytes,
        });
    }
    // A buffer never saved has no file yet: its folder still decides what it may include.
    let canonical = std::fs::canonicalize(path).unwrap_or_else(|_| {
        let folder = path
            .parent()
            .filter(|p| !p.as_os_str().is_empty())
            .unwrap_or(Path::new("."));
        let folder = std::fs::canonicalize(folder).unwrap_or_else(|_| folder.to_path_buf());
        folder.join(path.file_name().unwrap_or_default())
    });
    run_top(
        sources,
        path,
        canonical,
        text.to_string(),
        limits,
        keep_whole,
    )
}

/// Registers the top file's text and loads from it; includes resolve from its folder.
fn run_top(
    sources: &mut SourceMap,
    path: &Path,
    canonical: std::path::PathBuf,
    text: String,
    limits: &Limits,
    keep_whole: KeepWhole<'_>,
) -> Result<(FlatNetlist, Vec<Finding>), LoadError> {
    let root = canonical
        .parent()
        .map(Path::to_path_buf)
        .unwrap_or_else(|| canonical.clone());
    let id = sources.add(path.to_path_buf(), path.display().to_string(), text);
    let origin = load::Origin { canonical, root };
    run(sources, id, Some(origin), limits, keep_whole)
}

/// Parses netlist text without reading any file (includes are recorded as missing), with the
/// caller's limits and part knowledge; a blown limit is an error as in [`load`].
pub fn parse_text(
    name: &str,
    text: &str,
    sources: &mut SourceMap,
    limits: &Limits,
    keep_whole: KeepWhole<'_>,
) -> Result<(FlatNetlist, Vec<Finding>), LoadError> {
    let id = sources.add(PathBuf::from(name), name.to_string(), text.to_string());
    run(sources, id, None, limits, keep_whole)
}

/// Evaluates one value as it may stand on an element line or in `.param` — a number with its
/// scale suffix or an expression, braces optional — with no parameters or `.func`s defined.
/// Errors come back as the message a `parameter-invalid` or `syntax` finding would carry.
pub fn evaluate_value(text: &str) -> Result<Num, String> {
    struct NoParams;
    impl expr::Env for NoParams {
        fn param(&self, _: &str, _: usize) -> Option<Result<Num, expr::ExprError>> {
            None
        }
        fn function(&self, _: &str) -> Option<expr::UserFunc<'_>> {
            None
        }
    }
    let inner = text
        .trim()
        .strip_prefix('{')
        .and_then(|t| t.strip_suffix('}'))
        .unwrap_or(text);
    let result = match value::parse_number(inner.trim()) {
        Some(Ok(v)) => Ok(Num::Known(v)),
        Some(Err(value::Overflow)) => return Err(format!("`{inner}` is too large to represent")),
        None => expr::eval(inner, &NoParams, expr::Mode::Param, 0),
    };
    result.map_err(|e| match e {
        expr::ExprError::Syntax(m) | expr::ExprError::Invalid(m) => m,
        expr::ExprError::Reported => "a value it depends on failed".to_string(),
    })
}

/// Parses netlist text without reading any file (includes are recorded as missing).
/// Convenient for tests of later stages.
pub fn parse_str(name: &str, text: &str) -> (FlatNetlist, Vec<Finding>, SourceMap) {
    let mut sources = SourceMap::new();
    let id = sources.add(PathBuf::from(name), name.to_string(), text.to_string());
    let limits = Limits::default();
    let keep = |_: &str| false;
    let result = run(&mut sources, id, None, &limits, &keep);
    let (flat, findings) = match result {
        Ok(r) => r,
        Err(e) => {
            let span = crate::source::Span::new(id, 0, 0);
            let finding = Finding::new(
                "syntax",
                crate::diagnostic::Severity::Error,
                span,
                e.to_string(),
            );
            (FlatNetlist::default(), vec![finding])
        }
    };
    (flat, findings, sources)
}

/// Words of one skipped line taken as possible nets, at most (a bound on a hostile line).
const MAX_SKIPPED_LINE_WORDS: usize = 64;

fn run(
    sources: &mut SourceMap,
    top: FileId,
    origin: Option<load::Origin>,
    limits: &Limits,
    keep_whole: KeepWhole<'_>,
) -> Result<(FlatNetlist, Vec<Finding>), LoadError> {
    let loaded = load::Loader::new(sources, limits, origin).run(top);
    if let Some(count) = loaded.statements_over_limit {
        return Err(LoadError::TooManyStatements {
            count,
            limit: limits.max_elements,
        });
    }
    let sources: &SourceMap = sources;
    let mut findings = loaded.findings.clone();
    let mut suppressions: Vec<Suppression> = loaded
        .files
        .iter()
        .flat_map(|f| f.suppressions.iter().cloned())
        .collect();
    suppressions.sort_by_key(|s| (s.file, s.span.start));
    if loaded.foreign {
        let title = loaded
            .files
            .first()
            .and_then(|f| f.title)
            .and_then(|(s, e)| {
                sources
                    .get(top)
                    .and_then(|f| f.text.get(s as usize..e as usize))
            })
            .unwrap_or("")
            .to_string();
        let flat = FlatNetlist {
            title,
            ..FlatNetlist::default()
        };
        return Ok((flat, findings));
    }
    let mut deck = deck::build(&loaded, sources);
    let (elements, mut sensed_nets) = {
        let mut flattener = flatten::Flattener::new(&deck, limits, keep_whole);
        flattener.run()?;
        if loaded.library {
            findings.extend(library::check_definitions(&deck, &flattener.used));
        }
        (
            std::mem::take(&mut flattener.out),
            std::mem::take(&mut flattener.sensed),
        )
    };
    findings.extend(deck.sink.take());
    // The words of a skipped line (an element letter kickback does not read) may be nets the
    // skipped part wires: they count as in use, so its neighbours are not called dangling.
    for f in findings.iter().filter(|f| f.rule == "element-unknown") {
        let text = sources
            .get(f.span.file)
            .and_then(|file| file.text.get(f.span.start as usize..f.span.end as usize))
            .unwrap_or("");
        sensed_nets.extend(
            text.split_whitespace()
                .skip(1)
                .take(MAX_SKIPPED_LINE_WORDS)
                .map(str::to_string),
        );
    }
    sensed_nets.sort_unstable_by_key(|n| n.to_ascii_lowercase());
    sensed_nets.dedup_by(|a, b| a.eq_ignore_ascii_case(b));
    if loaded.library {
        if let Some(file) = sources.get(top) {
            library::explain_first_line(&mut findings, top, &file.text);
        }
    }
    findings.sort_by_key(|f| (f.span.file, f.span.start, f.span.end));
    let findings = unknown_letters_once(findings);
    // A library checked on its own is checked for its definitions only: statements outside
    // them are read for syntax above, but they are no circuit of their own.
    let elements = if loaded.library { Vec::new() } else { elements };
    let flat = FlatNetlist {
        title: std::mem::take(&mut deck.title),
        elements,
        models: std::mem::take(&mut deck.models),
        globals: deck.globals.iter().map(|g| g.to_string()).collect(),
        suppressions,
        missing_includes: loaded.missing.clone(),
        is_library: loaded.library,
        sensed_nets,
        subckt_names: deck
            .defs
            .iter()
            .skip(1)
            .map(|d| d.name.to_string())
            .filter(|n| !n.is_empty())
            .collect(),
        subckt_definitions: deck
            .defs
            .iter()
            .skip(1)
            .filter(|d| !d.name.is_empty())
            .filter_map(|d| Some((d.name.to_string(), d.header?)))
            .collect(),
    };
    Ok((flat, findings))
}

/// Lines of one unknown element letter are one finding per file, not one per line: a deck
/// written for another tool (pseudo-parts such as plot probes and ports) says what it is once.
/// The first line carries the finding; the others are labelled on it (at most
/// [`MAX_UNKNOWN_LABELS`]) and counted in its message.
fn unknown_letters_once(findings: Vec<Finding>) -> Vec<Finding> {
    const MAX_UNKNOWN_LABELS: usize = 8;
    let mut out: Vec<Finding> = Vec::with_capacity(findings.len());
    // Schematic markers (notes) fold apart from parts kickback does not read (warnings).
    type Key = (crate::source::FileId, char, bool);
    let mut first_of: std::collections::HashMap<Key, (usize, usize)> =
        std::collections::HashMap::new();
    for f in findings {
        let letter = f
            .element
            .as_deref()
            .and_then(|n| n.chars().next())
            .map(|c| c.to_ascii_uppercase());
        let key = match (f.rule.as_str(), letter) {
            ("element-unknown", Some(l)) => (
                f.span.file,
                l,
                f.severity == crate::diagnostic::Severity::Note,
            ),
            _ => {
                out.push(f);
                continue;
            }
        };
        match first_of.get_mut(&key) {
            Some((at, more)) => {
                *more += 1;
                if let Some(first) = out.get_mut(*at) {
                    if first.labels.len() < MAX_UNKNOWN_LABELS {
                        let name = f.element.clone().unwrap_or_default();
                        first.labels.push(crate::diagnostic::Label {
                            span: f.span,
                            message: format!("`{name}` is skipped too"),
                        });
                    }
                }
            }
            None => {
                first_of.insert(key, (out.len(), 0));
                out.push(f);
            }
        }
    }
    for ((_, letter, _), (at, more)) in first_of {
        if more == 0 {
            continue;
        }
        if let Some(first) = out.get_mut(at) {
            if first.severity == crate::diagnostic::Severity::Note {
                first.message = if more == 1 {
                    format!("{}; so is 1 more such line", first.message)
                } else {
                    format!("{}; so are {more} more such lines", first.message)
                };
                continue;
            }
            first.message = format!(
                "{}; so are {more} more `{letter}` lines in this file (a part another tool \
                 draws, such as a probe or a port, or an element kickback does not model)",
                first.message
            );
        }
    }
    out
}
