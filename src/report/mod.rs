//! Renderers: the only room that knows about terminals, colour, JSON and SARIF.
//!
//! Every renderer is a pure function from the checked files ([`FileReport`]s) and its options to
//! text. They share the order of findings ([`ordered`]), the counts ([`Summary`]) and the way a
//! number is written for a person ([`format_quantity`]).

pub mod facts;
mod facts_table;
pub mod human;
pub mod json;
pub mod sarif;
pub mod short;
mod source_window;

use crate::check::FileReport;
use crate::diagnostic::{Finding, Severity};
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
        let mut line = if counts.is_empty() {
            "no findings".to_string()
        } else {
            counts.join(", ")
        };
        line.push_str(" in ");
        line.push_str(&plural(self.files, "file", "files"));
        if self.suppressed > 0 {
            line.push_str(&format!(" ({} suppressed)", self.suppressed));
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

fn plural(n: usize, one: &str, many: &str) -> String {
    format!("{n} {}", if n == 1 { one } else { many })
}

/// Units that take an SI prefix when written for a person.
const PREFIXED_UNITS: &[&str] = &["V", "A", "W", "Ω", "ohm", "F", "H", "Hz", "s", "J", "C"];

/// Writes a number in SI base units the way an engineer reads it: `2.2 mH`, `1.8 A`,
/// `4.7 kΩ`, four significant digits at most. Unitless numbers are written plainly.
/// With `ascii`, `µ` becomes `u` and `Ω` becomes `ohm`.
pub fn format_quantity(value: f64, unit: &str, ascii: bool) -> String {
    let unit = if ascii && unit == "Ω" { "ohm" } else { unit };
    let number = if !value.is_finite() {
        format!("{value}")
    } else if PREFIXED_UNITS.contains(&unit) && value != 0.0 {
        let (scaled, prefix) = engineering(value);
        let prefix = if ascii && prefix == "µ" { "u" } else { prefix };
        return format!("{} {prefix}{unit}", significant(scaled));
    } else {
        significant(value)
    };
    if unit.is_empty() {
        number
    } else {
        format!("{number} {unit}")
    }
}

/// Scales a non-zero finite value into 1 ≤ |x| < 1000 with its SI prefix.
fn engineering(value: f64) -> (f64, &'static str) {
    const PREFIXES: [(i32, &str); 9] = [
        (12, "T"),
        (9, "G"),
        (6, "M"),
        (3, "k"),
        (0, ""),
        (-3, "m"),
        (-6, "µ"),
        (-9, "n"),
        (-12, "p"),
    ];
    let magnitude = value.abs();
    for &(exponent, prefix) in &PREFIXES {
        let scale = 10f64.powi(exponent);
        // Compare after rounding so that 999.96 m is shown as 1 (not 1000 m).
        if round_significant(magnitude / scale) >= 1.0 {
            return (value / scale, prefix);
        }
    }
    (value / 1e-15, "f")
}

fn round_significant(value: f64) -> f64 {
    if value == 0.0 || !value.is_finite() {
        return value;
    }
    let digits = 4 - 1 - value.abs().log10().floor() as i32;
    let factor = 10f64.powi(digits.clamp(-300, 300));
    (value * factor).round() / factor
}

/// Four significant digits, trailing zeros trimmed, no exponent for everyday magnitudes.
fn significant(value: f64) -> String {
    if value == 0.0 {
        return "0".to_string();
    }
    let magnitude = value.abs();
    if !(1e-4..1e9).contains(&magnitude) {
        return format!("{value:.3e}");
    }
    let rounded = round_significant(value);
    let decimals = (3 - rounded.abs().log10().floor() as i32).clamp(0, 12) as usize;
    let text = format!("{rounded:.decimals$}");
    let text = if text.contains('.') {
        text.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        text
    };
    if text == "-0" {
        "0".to_string()
    } else {
        text
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn quantities_take_si_prefixes() {
        assert_eq!(format_quantity(3.3, "V", false), "3.3 V");
        assert_eq!(format_quantity(0.0022, "H", false), "2.2 mH");
        assert_eq!(format_quantity(4700.0, "Ω", false), "4.7 kΩ");
        assert_eq!(format_quantity(4700.0, "Ω", true), "4.7 kohm");
        assert_eq!(format_quantity(1e-5, "F", false), "10 µF");
        assert_eq!(format_quantity(1e-5, "F", true), "10 uF");
        assert_eq!(format_quantity(0.99996, "V", false), "1 V");
        assert_eq!(format_quantity(-0.012, "A", false), "-12 mA");
        assert_eq!(format_quantity(1234.5678, "Hz", false), "1.235 kHz");
        assert_eq!(format_quantity(0.0, "W", false), "0 W");
    }

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
            "1 error in 3 files; 1 file could not be checked: bad.cir"
        );
    }
}
