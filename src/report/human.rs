//! `--format human`: miette's graphical report for each finding — the netlist lines with labels,
//! the rule and severity, the fix, the numbers behind the finding — and a summary line.

use super::{format_quantity, ordered, Summary};
use crate::check::FileReport;
use crate::diagnostic::{Finding, Severity};
use crate::source::{FileId, SourceMap, Span};
use miette::{
    Diagnostic, GraphicalReportHandler, GraphicalTheme, LabeledSpan, MietteError,
    MietteSpanContents, SourceCode, SourceSpan, SpanContents,
};
use std::collections::BTreeMap;
use std::fmt;

#[derive(Clone, Debug, PartialEq, Eq)]
pub struct HumanOptions {
    /// ANSI colour. The caller decides (terminal, `--color`, `NO_COLOR`); the renderer obeys.
    pub color: bool,
    /// Box-drawing characters and `→`; plain ASCII otherwise.
    pub unicode: bool,
    /// Columns to wrap text at.
    pub width: usize,
    /// Findings below this severity are left out (`--quiet`); the summary still counts them.
    pub min_severity: Severity,
    /// End with the summary line.
    pub summary: bool,
}

impl Default for HumanOptions {
    fn default() -> Self {
        HumanOptions {
            color: false,
            unicode: true,
            width: 100,
            min_severity: Severity::Note,
            summary: true,
        }
    }
}

/// Every finding of every file in order, then the summary line.
pub fn render(reports: &[FileReport], options: &HumanOptions) -> String {
    let mut out = String::new();
    for entry in ordered(reports) {
        if entry.finding.severity < options.min_severity {
            continue;
        }
        out.push_str(&render_finding(
            entry.finding,
            &entry.report.sources,
            options,
        ));
        out.push('\n');
    }
    if options.summary {
        out.push_str(&summary_line(&Summary::of(reports), options));
        out.push('\n');
    }
    out
}

pub fn summary_line(summary: &Summary, options: &HumanOptions) -> String {
    let line = summary.line();
    if !options.color {
        return line;
    }
    let code = if summary.errors > 0 || !summary.failed.is_empty() {
        RED_BOLD
    } else if summary.warnings > 0 {
        YELLOW_BOLD
    } else {
        GREEN_BOLD
    };
    paint(code, &line)
}

const RED_BOLD: &str = "1;31";
const YELLOW_BOLD: &str = "1;33";
const GREEN_BOLD: &str = "1;32";
const CYAN: &str = "36";

fn paint(code: &str, text: &str) -> String {
    format!("\u{1b}[{code}m{text}\u{1b}[0m")
}

/// One finding: the snippet of the file that holds its primary span (with every label and
/// instance line in that file), the fix, the numbers, then the lines it involves in other files.
pub fn render_finding(finding: &Finding, sources: &SourceMap, options: &HumanOptions) -> String {
    let handler = GraphicalReportHandler::new_themed(theme(options)).with_width(options.width);
    let primary_file = finding.span.file;
    let mut groups: BTreeMap<FileId, Vec<LabeledSpan>> = BTreeMap::new();
    for (span, text) in involved_lines(finding) {
        if let Some(source) = sources.get(span.file) {
            let label = LabeledSpan::new_with_span(Some(text), clamp(&source.text, span));
            groups.entry(span.file).or_default().push(label);
        }
    }
    let mut primary_labels = groups.remove(&primary_file).unwrap_or_default();
    let primary_source = sources.get(primary_file).map(|file| {
        primary_labels.push(LabeledSpan::new_primary_with_span(
            None,
            clamp(&file.text, finding.span),
        ));
        NetlistSource {
            name: &file.name,
            text: &file.text,
        }
    });
    let mut message = finding.message.clone();
    if let Some(chain) = instance_chain(finding, sources, options.unicode) {
        message.push('\n');
        message.push_str(&chain);
    }
    let main = Snippet {
        code: Some(format!("{}[{}]", finding.severity, finding.rule)),
        severity: miette_severity(finding.severity),
        message,
        help: finding.help.as_deref(),
        source: primary_source,
        labels: primary_labels,
    };
    let mut out = String::new();
    // Writing into a String cannot fail.
    let _ = handler.render_report(&mut out, &main);
    for quantity in &finding.values {
        let mut line = format!(
            "{}: {}",
            quantity.name,
            format_quantity(quantity.value, &quantity.unit, !options.unicode)
        );
        if !quantity.source.is_empty() {
            line.push_str(&format!(" ({})", quantity.source));
        }
        let equals = if options.color {
            paint(CYAN, "=")
        } else {
            "=".to_string()
        };
        out.push_str(&format!("  {equals} {line}\n"));
    }
    for (file, labels) in groups {
        let Some(source) = sources.get(file) else {
            continue;
        };
        let related = Snippet {
            code: None,
            severity: miette::Severity::Advice,
            message: format!("related lines in {}", source.name),
            help: None,
            source: Some(NetlistSource {
                name: &source.name,
                text: &source.text,
            }),
            labels,
        };
        out.push('\n');
        let _ = handler.render_report(&mut out, &related);
    }
    out
}

/// The other lines of a finding: its labels and the instance lines that placed its element.
fn involved_lines(finding: &Finding) -> Vec<(Span, String)> {
    let labels = finding
        .labels
        .iter()
        .map(|label| (label.span, label.message.clone()));
    let instances = finding
        .instances
        .iter()
        .map(|step| (step.span, format!("instance {}", step.name)));
    labels.chain(instances).collect()
}

/// `in XDRV (line 12) → M1`: how the flagged element was placed, outermost instance first.
fn instance_chain(finding: &Finding, sources: &SourceMap, unicode: bool) -> Option<String> {
    if finding.instances.is_empty() {
        return finding
            .instance_path
            .as_ref()
            .map(|path| format!("in {path}"));
    }
    let arrow = if unicode { " → " } else { " -> " };
    let mut parts: Vec<String> = finding
        .instances
        .iter()
        .map(|step| match sources.get(step.span.file) {
            Some(file) => {
                let (line, _) = file.line_col(step.span.start);
                if step.span.file == finding.span.file {
                    format!("{} (line {line})", step.name)
                } else {
                    format!("{} ({}:{line})", step.name, file.name)
                }
            }
            None => step.name.clone(),
        })
        .collect();
    let leaf = finding.element.clone().or_else(|| {
        finding
            .instance_path
            .as_ref()
            .and_then(|path| path.rsplit('.').next().map(str::to_string))
    });
    if let Some(leaf) = leaf {
        parts.push(leaf);
    }
    Some(format!("in {}", parts.join(arrow)))
}

fn theme(options: &HumanOptions) -> GraphicalTheme {
    match (options.color, options.unicode) {
        (true, true) => GraphicalTheme::unicode(),
        (true, false) => GraphicalTheme::ascii(),
        (false, true) => GraphicalTheme::unicode_nocolor(),
        (false, false) => GraphicalTheme::none(),
    }
}

fn miette_severity(severity: Severity) -> miette::Severity {
    match severity {
        Severity::Error => miette::Severity::Error,
        Severity::Warning => miette::Severity::Warning,
        Severity::Note => miette::Severity::Advice,
    }
}

/// A span that fits the text and starts and ends on character boundaries, so miette can always
/// read it.
fn clamp(text: &str, span: Span) -> SourceSpan {
    let floor = |offset: u32| {
        let mut at = (offset as usize).min(text.len());
        while at > 0 && !text.is_char_boundary(at) {
            at -= 1;
        }
        at
    };
    let start = floor(span.start);
    let end = floor(span.end).max(start);
    (start, end - start).into()
}

/// A netlist's text under its display name, borrowed from the [`SourceMap`].
#[derive(Debug)]
struct NetlistSource<'a> {
    name: &'a str,
    text: &'a str,
}

impl SourceCode for NetlistSource<'_> {
    fn read_span<'b>(
        &'b self,
        span: &SourceSpan,
        context_lines_before: usize,
        context_lines_after: usize,
    ) -> Result<Box<dyn SpanContents<'b> + 'b>, MietteError> {
        let inner = self
            .text
            .read_span(span, context_lines_before, context_lines_after)?;
        Ok(Box::new(MietteSpanContents::new_named(
            self.name.to_string(),
            inner.data(),
            *inner.span(),
            inner.line(),
            inner.column(),
            inner.line_count(),
        )))
    }
}

#[derive(Debug)]
struct Snippet<'a> {
    code: Option<String>,
    severity: miette::Severity,
    message: String,
    help: Option<&'a str>,
    source: Option<NetlistSource<'a>>,
    labels: Vec<LabeledSpan>,
}

impl fmt::Display for Snippet<'_> {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.message)
    }
}

impl std::error::Error for Snippet<'_> {}

impl Diagnostic for Snippet<'_> {
    fn code<'b>(&'b self) -> Option<Box<dyn fmt::Display + 'b>> {
        self.code
            .as_ref()
            .map(|code| Box::new(code) as Box<dyn fmt::Display>)
    }

    fn severity(&self) -> Option<miette::Severity> {
        Some(self.severity)
    }

    fn help<'b>(&'b self) -> Option<Box<dyn fmt::Display + 'b>> {
        self.help
            .map(|help| Box::new(help) as Box<dyn fmt::Display>)
    }

    fn source_code(&self) -> Option<&dyn SourceCode> {
        self.source.as_ref().map(|s| s as &dyn SourceCode)
    }

    fn labels(&self) -> Option<Box<dyn Iterator<Item = LabeledSpan> + '_>> {
        if self.labels.is_empty() || self.source.is_none() {
            return None;
        }
        Some(Box::new(self.labels.iter().cloned()))
    }
}
