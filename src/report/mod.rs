//! Renderers: the only room that knows about terminals, colour, JSON and SARIF.
//!
//! Every renderer is a pure function from the checked files ([`FileReport`]s) and its options to
//! text. They share the order of findings ([`ordered`]), the counts ([`Summary`]) and the way a
//! number is written for a person ([`format_quantity`]).

mod card_parts;
pub mod cards;
pub mod facts;
mod facts_table;
pub mod json;
pub mod lines;
pub mod page;
pub mod sarif;
mod source_window;
mod wide_lines;

use crate::diagnostic::{Finding, Severity};
use crate::outcome::FileReport;
use crate::source::{Location, Span};

/// One finding with the file it came from and its resolved location.
#[derive(Debug)]
pub struct Entry<'a> {
    pub report: &'a FileReport,
    pub finding: &'a Finding,
    pub location: Location,
}

/// Resolves a span of `report`; a span outside its source map falls back to the netlist itself,
/// line 1, so that every finding can still be shown at some place.
pub fn locate(report: &FileReport, span: Span) -> Location {
    match report.sources.get(span.file) {
        Some(_) => report.sources.locate(span),
        None => Location {
            file: display_path(&report.path),
            line: 1,
            column: 1,
            end_line: 1,
            end_column: 1,
        },
    }
}

/// All findings of all files, sorted by file, line, column, then rule and message, so that the
/// output does not depend on the order in which files were checked.
pub fn ordered(reports: &[FileReport]) -> Vec<Entry<'_>> {
    let mut entries: Vec<Entry<'_>> = reports
        .iter()
        .flat_map(|report| {
            report.findings.iter().map(move |finding| Entry {
                report,
                finding,
                location: locate(report, finding.span),
            })
        })
        .collect();
    entries.sort_by(|a, b| {
        (
            &a.location,
            &a.finding.rule,
            &a.finding.message,
            &a.report.path,
        )
            .cmp(&(
                &b.location,
                &b.finding.rule,
                &b.finding.message,
                &b.report.path,
            ))
    });
    entries
}

/// The files that could not be checked, sorted by path: (path as shown, why).
pub fn failures(reports: &[FileReport]) -> Vec<(String, String)> {
    let mut out: Vec<(String, String)> = reports
        .iter()
        .filter_map(|r| {
            r.failure
                .as_ref()
                .map(|e| (display_path(&r.path), e.to_string()))
        })
        .collect();
    out.sort();
    out
}

pub fn display_path(path: &std::path::Path) -> String {
    path.display().to_string()
}

/// Counts over a whole run.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct Summary {
    pub errors: usize,
    pub warnings: usize,
    pub notes: usize,
    pub suppressed: usize,
    /// Netlists examined, including those that could not be checked.
    pub files: usize,
    /// Netlists that could not be checked, as shown to the user, sorted.
    pub failed: Vec<String>,
    /// Findings left out because the baseline lists them (`check --baseline`).
    pub known: usize,
    /// Findings of the rules that say kickback could not judge something
    /// ([`crate::rules::NOT_JUDGED`]), by rule.
    pub not_judged: std::collections::BTreeMap<String, usize>,
    /// Findings that rest on a rating kickback only assumed (a kind's default), reported as
    /// notes until the rating is stated: the deciding number carries the `assumed` provenance.
    pub assumed: usize,
}

impl Summary {
    pub fn of(reports: &[FileReport]) -> Summary {
        let mut summary = Summary {
            files: reports.len(),
            ..Summary::default()
        };
        for report in reports {
            summary.suppressed = summary.suppressed.saturating_add(report.suppressed);
            for finding in &report.findings {
                let count = match finding.severity {
                    Severity::Error => &mut summary.errors,
                    Severity::Warning => &mut summary.warnings,
                    Severity::Note => &mut summary.notes,
                };
                *count = count.saturating_add(1);
                if finding.severity == Severity::Note && finding.resting_on_assumption().is_some() {
                    summary.assumed = summary.assumed.saturating_add(1);
                }
                if crate::rules::NOT_JUDGED.contains(&finding.rule.as_str()) {
                    let n = summary.not_judged.entry(finding.rule.clone()).or_default();
                    *n = n.saturating_add(1);
                }
            }
        }
        summary.failed = failures(reports)
            .into_iter()
            .map(|(path, _)| path)
            .collect();
        summary
    }

    /// `3 errors, 2 warnings, 1 note in 2 files (1 suppressed)`, and the files that could not
    /// be checked.
    pub fn line(&self) -> String {
        let counts: Vec<String> = [
            (self.errors, "error", "errors"),
            (self.warnings, "warning", "warnings"),
            (self.notes, "note", "notes"),
        ]
        .iter()
        .filter(|(n, _, _)| *n > 0)
        .map(|&(n, one, many)| plural(n, one, many))
        .collect();
        // A file that could not be checked has no findings to speak of: it is named after the
        // semicolon, never counted as a clean one.
        let checked = self.files.saturating_sub(self.failed.len());
        let mut line = if checked == 0 && counts.is_empty() {
            "no netlist was checked".to_string()
        } else {
            let mut line = if counts.is_empty() {
                "no findings".to_string()
            } else {
                counts.join(", ")
            };
            line.push_str(" in ");
            line.push_str(&plural(checked, "file", "files"));
            line
        };
        let mut asides = Vec::new();
        if self.suppressed > 0 {
            asides.push(format!("{} suppressed", self.suppressed));
        }
        if self.known > 0 {
            asides.push(format!("{} known from the baseline", self.known));
        }
        if !asides.is_empty() {
            line.push_str(&format!(" ({})", asides.join(", ")));
        }
        let skipped: usize = self
            .not_judged
            .values()
            .sum::<usize>()
            .saturating_add(self.assumed);
        if skipped > 0 {
            let mut by_rule: Vec<String> = self
                .not_judged
                .iter()
                .map(|(rule, n)| format!("{rule} {n}"))
                .collect();
            if self.assumed > 0 {
                by_rule.push(format!("rating assumed {}", self.assumed));
            }
            line.push_str(&format!(
                "; kickback could not judge {} ({}): their findings say what it needs",
                plural(skipped, "place", "places"),
                by_rule.join(", ")
            ));
        }
        if !self.failed.is_empty() {
            line.push_str(&format!(
                "; {} could not be checked: {}",
                plural(self.failed.len(), "file", "files"),
                self.failed.join(", ")
            ));
        }
        line
    }
}

/// Findings counted by rule and by file over a run, for `check --counts` on big runs.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct Tally {
    /// Rule ID → errors, warnings, notes.
    pub rules: std::collections::BTreeMap<String, [usize; 3]>,
    /// File as shown → errors, warnings, notes.
    pub files: std::collections::BTreeMap<String, [usize; 3]>,
}

impl Tally {
    /// Adds the findings of `reports` (after baselines and suppressions).
    pub fn add(&mut self, reports: &[FileReport]) {
        for report in reports {
            for finding in &report.findings {
                let slot = match finding.severity {
                    Severity::Error => 0,
                    Severity::Warning => 1,
                    Severity::Note => 2,
                };
                for counts in [
                    self.rules.entry(finding.rule.clone()).or_default(),
                    self.files.entry(display_path(&report.path)).or_default(),
                ] {
                    counts[slot] = counts[slot].saturating_add(1);
                }
            }
        }
    }

    /// Two aligned tables: findings by rule, most first, then by file, most first.
    pub fn render(&self) -> String {
        let mut out = String::new();
        for (title, map) in [("RULE", &self.rules), ("FILE", &self.files)] {
            if map.is_empty() {
                continue;
            }
            let mut entries: Vec<(&String, &[usize; 3])> = map.iter().collect();
            entries.sort_by(|a, b| {
                let total = |c: &[usize; 3]| c.iter().sum::<usize>();
                (b.1[0], b.1[1], total(b.1))
                    .cmp(&(a.1[0], a.1[1], total(a.1)))
                    .then(a.0.cmp(b.0))
            });
            let header = [title, "ERRORS", "WARNINGS", "NOTES"];
            let rows: Vec<[String; 4]> = entries
                .iter()
                .map(|(name, c)| {
                    [
                        (*name).clone(),
                        c[0].to_string(),
                        c[1].to_string(),
                        c[2].to_string(),
                    ]
                })
                .collect();
            let [w0, w1, w2, w3] = column_widths(header, &rows);
            let mut line = |cells: [&str; 4]| {
                out.push_str(&format!(
                    "{:<w0$}  {:>w1$}  {:>w2$}  {:>w3$}\n",
                    cells[0], cells[1], cells[2], cells[3]
                ));
            };
            line(header);
            for r in &rows {
                line([&r[0], &r[1], &r[2], &r[3]]);
            }
            out.push('\n');
        }
        out
    }
}

fn plural(n: usize, one: &str, many: &str) -> String {
    format!("{n} {}", if n == 1 { one } else { many })
}

pub use crate::units::format_quantity;

/// The width in characters of each column of a table: its widest cell or its header.
pub fn column_widths<const N: usize>(header: [&str; N], rows: &[[String; N]]) -> [usize; N] {
    let mut widths = header.map(|h| h.chars().count());
    for row in rows {
        for (width, cell) in widths.iter_mut().zip(row) {
            *width = (*width).max(cell.chars().count());
        }
    }
    widths
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn plain_numbers_stay_plain() {
        assert_eq!(format_quantity(0.9, "", false), "0.9");
        assert_eq!(format_quantity(150.0, "", false), "150");
        assert_eq!(format_quantity(25.0, "°C", false), "25 °C");
        assert_eq!(format_quantity(f64::INFINITY, "V", false), "inf V");
        assert_eq!(format_quantity(f64::NAN, "", false), "NaN");
        assert_eq!(format_quantity(1e-9, "", false), "1.000e-9");
    }

    #[test]
    fn summary_line_counts_and_pluralises() {
        let summary = Summary {
            errors: 3,
            warnings: 2,
            notes: 1,
            suppressed: 1,
            files: 2,
            failed: vec![],
            known: 0,
            not_judged: Default::default(),
            assumed: 0,
        };
        assert_eq!(
            summary.line(),
            "3 errors, 2 warnings, 1 note in 2 files (1 suppressed)"
        );
        let clean = Summary {
            files: 1,
            ..Summary::default()
        };
        assert_eq!(clean.line(), "no findings in 1 file");
        let failed = Summary {
            errors: 1,
            files: 3,
            failed: vec!["bad.cir".into()],
            ..Summary::default()
        };
        assert_eq!(
            failed.line(),
            "1 error in 2 files; 1 file could not be checked: bad.cir"
        );
        let missing = Summary {
            files: 1,
            failed: vec!["gone.cir".into()],
            ..Summary::default()
        };
        assert_eq!(
            missing.line(),
            "no netlist was checked; 1 file could not be checked: gone.cir"
        );
        // Findings that say something could not be judged are named, so a run with nothing
        // judged never reads as a clean pass.
        let unjudged = Summary {
            notes: 3,
            files: 1,
            not_judged: [
                ("solve-failed".to_string(), 2),
                ("stage-unknown".to_string(), 1),
            ]
            .into_iter()
            .collect(),
            ..Summary::default()
        };
        assert_eq!(
            unjudged.line(),
            "3 notes in 1 file; kickback could not judge 3 places (solve-failed 2, stage-unknown 1): their findings say what it needs"
        );
    }
}
