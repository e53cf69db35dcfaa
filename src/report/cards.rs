//! `--format cards`: one card per finding — a heading with the element, its place, the
//! severity and the rule; the message; the netlist lines with labels (drawn by miette in a frame
//! of our own, `card_parts::theme`); the numbers as a table with their sources; the fix — and
//! a summary line.

use super::card_parts::{self as card, paint, Look, GREEN_BOLD, RED_BOLD, YELLOW_BOLD};
use super::source_window::{has_lone_cr, NetlistSource};
use super::wide_lines::{touches_wide_line, ClippedSource, SnippetSource};
use super::{ordered, Entry, Summary};
use crate::diagnostic::{Finding, Severity};
use crate::outcome::FileReport;
use crate::source::{FileId, SourceMap, Span};
use miette::{Diagnostic, GraphicalReportHandler, LabeledSpan, SourceCode, SourceSpan};
use std::collections::{BTreeMap, HashMap};
use std::fmt;

#[derive(Clone, Debug, PartialEq, Eq)]
pub struct CardsOptions {
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

impl Default for CardsOptions {
    fn default() -> Self {
        CardsOptions {
            color: false,
            unicode: true,
            width: 100,
            min_severity: Severity::Note,
            summary: true,
        }
    }
}

/// Every finding of every file in order, then the summary line.
pub fn render(reports: &[FileReport], options: &CardsOptions) -> String {
    let mut out = String::new();
    let lone_cr: HashMap<*const FileReport, Vec<bool>> = reports
        .iter()
        .map(|r| (r as *const FileReport, lone_cr_files(&r.sources)))
        .collect();
    for entry in ordered(reports) {
        if entry.finding.severity < options.min_severity {
            continue;
        }
        let flags = lone_cr
            .get(&(entry.report as *const FileReport))
            .map_or(&[][..], Vec::as_slice);
        out.push_str(&render_entry(&entry, options, flags));
        out.push('\n');
    }
    if options.summary {
        out.push_str(&summary_line(&Summary::of(reports), options));
        out.push('\n');
    }
    out
}

/// `--compact`: every finding as a short block — the heading (element, place, severity, rule),
/// the message and the fix — with no netlist lines and no numbers table, for runs over many
/// boards; then the summary line as in [`render`].
pub fn render_compact(reports: &[FileReport], options: &CardsOptions) -> String {
    let look = look(options);
    let mut out = String::new();
    for entry in ordered(reports) {
        let finding = entry.finding;
        if finding.severity < options.min_severity {
            continue;
        }
        let at = &entry.location;
        let place = format!("{}:{}:{}", at.file, at.line, at.column);
        out.push_str(&card::heading(finding, &place, look));
        out.push_str(&card::message(&finding.message, look));
        if let Some(help) = &finding.help {
            out.push_str(&card::fix(help, look));
        }
    }
    if options.summary {
        if !out.is_empty() {
            out.push('\n');
        }
        out.push_str(&summary_line(&Summary::of(reports), options));
        out.push('\n');
    }
    out
}

/// One finding drawn, or, should the drawing fail, one line that still says what and where:
/// a fault in drawing one finding costs only that finding's snippet, never the other findings,
/// the summary or the exit code.
fn render_entry(entry: &Entry<'_>, options: &CardsOptions, lone_cr: &[bool]) -> String {
    let drawn = std::panic::catch_unwind(std::panic::AssertUnwindSafe(|| {
        render_finding_with(entry.finding, &entry.report.sources, options, lone_cr)
    }));
    drawn.unwrap_or_else(|payload| {
        let why = payload
            .downcast_ref::<&str>()
            .map(|s| s.to_string())
            .or_else(|| payload.downcast_ref::<String>().cloned())
            .unwrap_or_else(|| "unknown fault".to_string());
        let at = &entry.location;
        let finding = entry.finding;
        format!(
            "{}:{}:{}: {} {} — {} (the snippet could not be drawn: {why})\n",
            at.file, at.line, at.column, finding.severity, finding.rule, finding.message
        )
    })
}

pub fn summary_line(summary: &Summary, options: &CardsOptions) -> String {
    let line = summary.line();
    let code = if summary.errors > 0 || !summary.failed.is_empty() {
        RED_BOLD
    } else if summary.warnings > 0 {
        YELLOW_BOLD
    } else {
        GREEN_BOLD
    };
    paint(look(options), code, &line)
}

fn look(options: &CardsOptions) -> Look {
    Look {
        color: options.color,
        unicode: options.unicode,
        width: options.width,
    }
}

/// One finding: the snippet of the file that holds its primary span (with every label and
/// instance line in that file), the fix, the numbers, then the lines it involves in other files.
pub fn render_finding(finding: &Finding, sources: &SourceMap, options: &CardsOptions) -> String {
    render_finding_with(finding, sources, options, &lone_cr_files(sources))
}

/// Per file of `sources`: whether it must be read whole (see [`NetlistSource`]).
fn lone_cr_files(sources: &SourceMap) -> Vec<bool> {
    sources
        .files()
        .map(|(_, file)| has_lone_cr(&file.text))
        .collect()
}

/// [`render_finding`] with the files' line-break flags worked out once per run.
fn render_finding_with(
    finding: &Finding,
    sources: &SourceMap,
    options: &CardsOptions,
    lone_cr: &[bool],
) -> String {
    let lone = |file: FileId| lone_cr.get(file.0 as usize).copied().unwrap_or(true);
    let look = look(options);
    let handler = GraphicalReportHandler::new_themed(card::theme(look)).with_width(options.width);
    let primary_file = finding.span.file;
    let mut groups: BTreeMap<FileId, Vec<LabeledSpan>> = BTreeMap::new();
    for (span, text) in finding.involved_lines() {
        if let Some(source) = sources.get(span.file) {
            let label = LabeledSpan::new_with_span(Some(text), clamp(&source.text, span));
            groups.entry(span.file).or_default().push(label);
        }
    }
    let mut primary_labels = groups.remove(&primary_file).unwrap_or_default();
    let mut place = String::new();
    let primary_source = sources.get(primary_file).map(|file| {
        primary_labels.push(LabeledSpan::new_primary_with_span(
            None,
            clamp(&file.text, finding.span),
        ));
        let (line, column) = file.line_col(finding.span.start.min(file.text.len() as u32));
        place = format!("{}:{line}:{column}", file.name);
        snippet_source(&file.name, file, lone(primary_file), &mut primary_labels)
    });
    let mut out = card::heading(finding, &place, look);
    out.push_str(&card::message(&finding.message, look));
    if let Some(chain) = instance_chain(finding, sources, options.unicode) {
        out.push_str(&card::message(&chain, look));
    }
    let main = Snippet {
        source: primary_source,
        labels: primary_labels,
    };
    out.push_str(&frame(&handler, &main));
    for (file, mut labels) in groups {
        let Some(source) = sources.get(file) else {
            continue;
        };
        out.push_str(&format!("  also in {}:\n", source.name));
        let related = Snippet {
            source: Some(snippet_source(
                &source.name,
                source,
                lone(file),
                &mut labels,
            )),
            labels,
        };
        out.push_str(&frame(&handler, &related));
    }
    let table = card::numbers(&finding.values, look);
    if !table.is_empty() {
        out.push('\n');
        out.push_str(&table);
    }
    if let Some(help) = &finding.help {
        out.push('\n');
        out.push_str(&card::fix(help, look));
    }
    out
}

/// The netlist lines of a snippet in the card's frame; nothing when it has no lines to show.
fn frame(handler: &GraphicalReportHandler, snippet: &Snippet<'_>) -> String {
    if snippet.source.is_none() || snippet.labels.is_empty() {
        return String::new();
    }
    let mut rendered = String::new();
    // Writing into a String cannot fail.
    let _ = handler.render_report(&mut rendered, snippet);
    let framed = card::frame_only(&rendered);
    if framed.trim().is_empty() {
        String::new()
    } else {
        format!("\n{framed}")
    }
}

/// The text a snippet of `file` reads: the file itself, or, when a label lies on a very wide
/// line, windows around the labels with the labels moved into them (a label outside its
/// window is left out).
fn snippet_source<'a>(
    name: &'a str,
    file: &'a crate::source::SourceFile,
    lone_cr: bool,
    labels: &mut Vec<LabeledSpan>,
) -> SnippetSource<'a> {
    let spans: Vec<SourceSpan> = labels.iter().map(|label| *label.inner()).collect();
    if !touches_wide_line(file, &spans) {
        return SnippetSource::Lines(NetlistSource::new(name, file, lone_cr));
    }
    let primary = labels.iter().position(LabeledSpan::primary);
    let (clipped, moved) = ClippedSource::new(name, file, &spans, primary);
    let kept = std::mem::take(labels)
        .into_iter()
        .zip(moved)
        .filter_map(|(label, span)| {
            let span = span?;
            Some(if label.primary() {
                LabeledSpan::new_primary_with_span(label.label().map(str::to_string), span)
            } else {
                LabeledSpan::new_with_span(label.label().map(str::to_string), span)
            })
        })
        .collect();
    *labels = kept;
    SnippetSource::Clipped(clipped)
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

/// The netlist lines of one file that a card shows, for miette to draw. It has no message,
/// code or help of its own: the card draws those.
#[derive(Debug)]
struct Snippet<'a> {
    source: Option<SnippetSource<'a>>,
    labels: Vec<LabeledSpan>,
}

impl fmt::Display for Snippet<'_> {
    fn fmt(&self, _: &mut fmt::Formatter<'_>) -> fmt::Result {
        Ok(())
    }
}

impl std::error::Error for Snippet<'_> {}

impl Diagnostic for Snippet<'_> {
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
