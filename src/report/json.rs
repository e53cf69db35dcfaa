//! `--format json` for `check`: findings for a program. The shape is documented in
//! `docs/json.md`; `version` changes only when a field changes meaning or goes away.

use super::{failures, locate, ordered, Summary};
use crate::outcome::FileReport;
use crate::source::Location;
use serde::Serialize;
use std::collections::BTreeMap;

pub const VERSION: u32 = 1;

#[derive(Debug, Serialize)]
pub struct CheckOutput {
    pub version: u32,
    pub diagnostics: Vec<Diagnostic>,
    pub summary: JsonSummary,
    pub failures: Vec<Failure>,
}

#[derive(Debug, Serialize)]
pub struct Diagnostic {
    pub rule: String,
    pub severity: &'static str,
    pub message: String,
    pub file: String,
    pub line: usize,
    pub column: usize,
    pub end_line: usize,
    pub end_column: usize,
    pub element: Option<String>,
    pub instance_path: Option<String>,
    /// The instance lines that placed the element, outermost first.
    pub instances: Vec<Instance>,
    pub labels: Vec<Label>,
    pub help: Option<String>,
    pub values: BTreeMap<String, Value>,
}

#[derive(Debug, Serialize)]
pub struct Label {
    pub message: String,
    pub file: String,
    pub line: usize,
    pub column: usize,
    pub end_line: usize,
    pub end_column: usize,
}

#[derive(Debug, Serialize)]
pub struct Instance {
    pub name: String,
    pub file: String,
    pub line: usize,
    pub column: usize,
    pub end_line: usize,
    pub end_column: usize,
}

#[derive(Debug, Serialize)]
pub struct Value {
    /// In SI base units; `null` when not a finite number.
    pub value: Option<f64>,
    pub unit: String,
    pub source: String,
    /// `config`, `instance`, `model`, `library`, `assumed` or `computed`.
    pub provenance: &'static str,
}

#[derive(Debug, Serialize)]
pub struct JsonSummary {
    pub errors: usize,
    pub warnings: usize,
    pub notes: usize,
    pub suppressed: usize,
    pub files: usize,
    /// Findings left out because the baseline lists them; present only with `--baseline`.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub baseline: Option<usize>,
}

#[derive(Debug, Serialize)]
pub struct Failure {
    pub file: String,
    pub message: String,
}

pub fn output(reports: &[FileReport]) -> CheckOutput {
    let diagnostics = ordered(reports)
        .into_iter()
        .map(|entry| {
            let finding = entry.finding;
            let report = entry.report;
            let Location {
                file,
                line,
                column,
                end_line,
                end_column,
            } = entry.location;
            Diagnostic {
                rule: finding.rule.clone(),
                severity: finding.severity.as_str(),
                message: finding.message.clone(),
                file,
                line,
                column,
                end_line,
                end_column,
                element: finding.element.clone(),
                instance_path: finding.instance_path.clone(),
                instances: finding
                    .instances
                    .iter()
                    .map(|step| {
                        let at = locate(report, step.span);
                        Instance {
                            name: step.name.clone(),
                            file: at.file,
                            line: at.line,
                            column: at.column,
                            end_line: at.end_line,
                            end_column: at.end_column,
                        }
                    })
                    .collect(),
                labels: finding
                    .labels
                    .iter()
                    .map(|label| {
                        let at = locate(report, label.span);
                        Label {
                            message: label.message.clone(),
                            file: at.file,
                            line: at.line,
                            column: at.column,
                            end_line: at.end_line,
                            end_column: at.end_column,
                        }
                    })
                    .collect(),
                help: finding.help.clone(),
                values: finding
                    .values
                    .iter()
                    .map(|q| {
                        let value = Value {
                            value: q.value.is_finite().then_some(q.value),
                            unit: q.unit.clone(),
                            source: q.source.clone(),
                            provenance: q.provenance.as_str(),
                        };
                        (q.name.clone(), value)
                    })
                    .collect(),
            }
        })
        .collect();
    let summary = Summary::of(reports);
    CheckOutput {
        version: VERSION,
        diagnostics,
        summary: JsonSummary {
            errors: summary.errors,
            warnings: summary.warnings,
            notes: summary.notes,
            suppressed: summary.suppressed,
            files: summary.files,
            baseline: None,
        },
        failures: failures(reports)
            .into_iter()
            .map(|(file, message)| Failure { file, message })
            .collect(),
    }
}

/// Pretty-printed, ending with a newline.
pub fn render(reports: &[FileReport]) -> String {
    render_with_baseline(reports, None)
}

/// As [`render`], with the number of findings a baseline left out (`check --baseline`) in the
/// summary as `baseline`.
pub fn render_with_baseline(reports: &[FileReport], baseline: Option<usize>) -> String {
    let mut document = output(reports);
    document.summary.baseline = baseline;
    // Plain structs with string keys and no non-finite floats: serialising cannot fail, but a
    // failure would still be reported as JSON rather than as a panic.
    let mut text = serde_json::to_string_pretty(&document).unwrap_or_else(|e| {
        serde_json::json!({ "version": VERSION, "error": e.to_string() }).to_string()
    });
    text.push('\n');
    text
}
