//! Baselines: a file of the errors and warnings a design had when kickback was adopted
//! (`kickback baseline`), which `check --baseline FILE` leaves out so that only new findings
//! fail. An entry is keyed by netlist file, rule and element (its instance path when it sits
//! in subcircuits), never by line, so it survives lines moving and unrelated edits; `count`
//! says how many findings it stands for.

use crate::diagnostic::{Finding, Severity};
use crate::outcome::FileReport;
use serde::{Deserialize, Serialize};
use std::collections::{BTreeMap, BTreeSet};
use std::path::{Component, Path, PathBuf};

/// The format this release writes and reads.
pub const VERSION: u32 = 1;

/// The largest baseline read; one entry is about a hundred bytes.
const MAX_BASELINE_BYTES: u64 = 16 * 1024 * 1024;

const HEADER: &str = "\
# kickback baseline: the errors and warnings these netlists had when it was written.
# `kickback check --baseline FILE` leaves them out and fails only on new findings.
# Each entry is keyed by netlist (relative to this file), rule and element, not by line.
# Rewrite it with `kickback baseline`; shrink it by fixing what it lists.
";

#[derive(Debug, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
struct File {
    version: u32,
    #[serde(default)]
    known: Vec<Entry>,
}

#[derive(Debug, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
struct Entry {
    file: String,
    rule: String,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    element: Option<String>,
    #[serde(default = "one")]
    count: usize,
}

fn one() -> usize {
    1
}

/// What one finding is known by: (netlist relative to the baseline, rule, element), the last
/// two in lower case as SPICE names are case-blind.
type Key = (String, String, String);

/// A loaded baseline and what this run has matched of it.
#[derive(Debug)]
pub struct Baseline {
    /// The folder the baseline's paths are relative to.
    home: PathBuf,
    /// Key → (findings it stands for, findings matched so far).
    entries: BTreeMap<Key, (usize, usize)>,
    /// Netlists (relative, as keyed) checked in this run without failing.
    checked: BTreeSet<String>,
}

/// Only errors and warnings go into a baseline: notes never fail a check.
fn counts(finding: &Finding) -> bool {
    finding.severity >= Severity::Warning
}

fn key(file: &str, finding: &Finding) -> Key {
    let element = finding
        .instance_path
        .as_ref()
        .or(finding.element.as_ref())
        .map(|e| e.to_ascii_lowercase())
        .unwrap_or_default();
    (file.to_string(), finding.rule.to_ascii_lowercase(), element)
}

/// The folder a baseline file's paths are relative to.
fn home_of(baseline: &Path) -> PathBuf {
    let parent = match baseline.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    };
    absolute(&parent)
}

fn absolute(path: &Path) -> PathBuf {
    path.canonicalize()
        .or_else(|_| std::path::absolute(path))
        .unwrap_or_else(|_| path.to_path_buf())
}

/// A netlist's path relative to `home`, with `/` between folders whatever the platform, so a
/// baseline written on one machine reads the same on another.
fn relative(home: &Path, netlist: &Path) -> String {
    let full = absolute(netlist);
    let shown = full.strip_prefix(home).unwrap_or(&full);
    let words: Vec<String> = shown
        .components()
        .filter_map(|c| match c {
            Component::Normal(word) => Some(word.to_string_lossy().into_owned()),
            Component::ParentDir => Some("..".to_string()),
            _ => None,
        })
        .collect();
    if shown.is_absolute() {
        format!("/{}", words.join("/"))
    } else {
        words.join("/")
    }
}

/// The text of a baseline for `reports`, to be written at `path`.
pub fn write(reports: &[FileReport], path: &Path) -> String {
    let home = home_of(path);
    let mut tally: BTreeMap<Key, (String, String, Option<String>, usize)> = BTreeMap::new();
    for report in reports.iter().filter(|r| r.failure.is_none()) {
        let file = relative(&home, &report.path);
        for finding in report.findings.iter().filter(|f| counts(f)) {
            let element = finding
                .instance_path
                .clone()
                .or_else(|| finding.element.clone());
            let entry = tally.entry(key(&file, finding)).or_insert((
                file.clone(),
                finding.rule.clone(),
                element,
                0,
            ));
            entry.3 = entry.3.saturating_add(1);
        }
    }
    let known = tally
        .into_values()
        .map(|(file, rule, element, count)| Entry {
            file,
            rule,
            element,
            count,
        })
        .collect();
    let body = toml::to_string(&File {
        version: VERSION,
        known,
    })
    .unwrap_or_else(|e| format!("# the baseline could not be written: {e}\n"));
    format!("{HEADER}\n{body}")
}

impl Baseline {
    /// Reads a baseline file; the message names the file and what is wrong.
    pub fn load(path: &Path) -> Result<Baseline, String> {
        use std::io::Read;
        let named = |why: String| format!("cannot use the baseline {}: {why}", path.display());
        let meta = std::fs::metadata(path).map_err(|e| named(e.to_string()))?;
        if !meta.is_file() {
            return Err(named(format!(
                "it is {}, not a regular file",
                crate::source::file_kind(&meta)
            )));
        }
        let mut bytes = Vec::new();
        std::fs::File::open(path)
            .and_then(|f| f.take(MAX_BASELINE_BYTES + 1).read_to_end(&mut bytes))
            .map_err(|e| named(e.to_string()))?;
        if bytes.len() as u64 > MAX_BASELINE_BYTES {
            return Err(named(format!(
                "it is larger than the limit of {MAX_BASELINE_BYTES} bytes"
            )));
        }
        let text = String::from_utf8(bytes).map_err(|_| named("it is not UTF-8 text".into()))?;
        let file: File = toml::from_str(&text).map_err(|e| {
            let line = e
                .span()
                .map(|s| text[..s.start.min(text.len())].matches('\n').count() + 1);
            let message = e.message().trim().to_string();
            match line {
                Some(line) => named(format!("line {line}: {message}")),
                None => named(message),
            }
        })?;
        if file.version != VERSION {
            return Err(named(format!(
                "it is version {}, and this kickback reads version {VERSION}; rewrite it with \
                 `kickback baseline`",
                file.version
            )));
        }
        let mut entries: BTreeMap<Key, (usize, usize)> = BTreeMap::new();
        for entry in file.known {
            let key = (
                entry.file,
                entry.rule.to_ascii_lowercase(),
                entry
                    .element
                    .map(|e| e.to_ascii_lowercase())
                    .unwrap_or_default(),
            );
            let slot = entries.entry(key).or_insert((0, 0));
            slot.0 = slot.0.saturating_add(entry.count);
        }
        Ok(Baseline {
            home: home_of(path),
            entries,
            checked: BTreeSet::new(),
        })
    }

    /// Removes from `report` the findings the baseline lists; returns how many.
    pub fn absorb(&mut self, report: &mut FileReport) -> usize {
        if report.failure.is_some() {
            return 0;
        }
        let file = relative(&self.home, &report.path);
        self.checked.insert(file.clone());
        let before = report.findings.len();
        let entries = &mut self.entries;
        report.findings.retain(|finding| {
            if !counts(finding) {
                return true;
            }
            match entries.get_mut(&key(&file, finding)) {
                Some((allowed, used)) if *used < *allowed => {
                    *used += 1;
                    false
                }
                _ => true,
            }
        });
        before - report.findings.len()
    }

    /// Entries of netlists checked in this run that matched fewer findings than they stand
    /// for, as sentences. Netlists not checked in this run (a hook that passes only the
    /// changed files) are never called stale.
    pub fn stale(&self) -> Vec<String> {
        self.entries
            .iter()
            .filter(|((file, _, _), (allowed, used))| self.checked.contains(file) && used < allowed)
            .map(|((file, rule, element), (allowed, used))| {
                let gone = allowed - used;
                let what = if gone == 1 {
                    format!("1 {rule} finding")
                } else {
                    format!("{gone} {rule} findings")
                };
                let on = if element.is_empty() {
                    String::new()
                } else {
                    format!(" on {element}")
                };
                format!(
                    "the baseline lists {what}{on} in {file} that no longer occur{}",
                    if gone == 1 { "s" } else { "" }
                )
            })
            .collect()
    }
}
