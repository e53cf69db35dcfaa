//! What the server answers from one checked buffer: diagnostics, hovers, definitions, the
//! outline and code actions. Everything here reads the findings and facts the pipeline made;
//! the hover text is `kickback report`'s own table for the element.

use super::convert::{self, range, uri_of};
use crate::check::{BufferCheck, BufferFacts};
use crate::circuit::DeviceId;
use crate::diagnostic::{Finding, Severity};
use crate::netlist::FlatElement;
use crate::report;
use crate::source::{FileId, SourceMap, Span};
use lsp_types::{
    CodeAction, CodeActionKind, CodeDescription, Diagnostic, DiagnosticRelatedInformation,
    DiagnosticSeverity, DocumentSymbol, Location, NumberOrString, Position, SymbolKind, TextEdit,
    Uri, WorkspaceEdit,
};
use std::collections::{BTreeMap, HashMap};

/// The buffer is always the first file of its check.
const BUFFER: FileId = FileId(0);

/// Instances of one subcircuit line shown in a hover, at most (a line placed a thousand times
/// would otherwise make a hover of a thousand tables).
const MAX_HOVER_INSTANCES: usize = 4;

/// The `file:` URI of a file of the check; the buffer keeps the URI the editor gave it.
fn uri_of_file(sources: &SourceMap, file: FileId, buffer: &Uri) -> Option<Uri> {
    if file == BUFFER {
        return Some(buffer.clone());
    }
    uri_of(&sources.get(file)?.path)
}

/// Where the rule's page can be read: a link the editor shows beside the rule ID.
pub type PageLink<'a> = &'a dyn Fn(&str) -> Option<Uri>;

/// The diagnostics of a check, by the URI of the file they sit in (the buffer's URI always
/// present, with an empty list when the buffer is clean).
pub fn diagnostics(
    checked: &BufferCheck,
    buffer: &Uri,
    page: PageLink<'_>,
) -> BTreeMap<String, (Uri, Vec<Diagnostic>)> {
    let sources = &checked.report.sources;
    let mut out: BTreeMap<String, (Uri, Vec<Diagnostic>)> = BTreeMap::new();
    out.insert(buffer.as_str().to_string(), (buffer.clone(), Vec::new()));
    if let Some(failure) = &checked.report.failure {
        if let Some((_, list)) = out.get_mut(buffer.as_str()) {
            list.push(Diagnostic {
                range: lsp_types::Range::default(),
                severity: Some(DiagnosticSeverity::ERROR),
                source: Some("kickback".into()),
                message: format!("cannot check this netlist: {failure}"),
                ..Diagnostic::default()
            });
        }
    }
    for finding in &checked.report.findings {
        let Some(uri) = uri_of_file(sources, finding.span.file, buffer) else {
            continue;
        };
        let diagnostic = diagnostic(finding, sources, buffer, page);
        out.entry(uri.as_str().to_string())
            .or_insert_with(|| (uri.clone(), Vec::new()))
            .1
            .push(diagnostic);
    }
    out
}

fn diagnostic(
    finding: &Finding,
    sources: &SourceMap,
    buffer: &Uri,
    page: PageLink<'_>,
) -> Diagnostic {
    let severity = match finding.severity {
        Severity::Error => DiagnosticSeverity::ERROR,
        Severity::Warning => DiagnosticSeverity::WARNING,
        Severity::Note => DiagnosticSeverity::INFORMATION,
    };
    let mut message = finding.message.clone();
    if let Some(help) = &finding.help {
        message.push_str("\nfix: ");
        message.push_str(help);
    }
    let related: Vec<DiagnosticRelatedInformation> = finding
        .involved_lines()
        .into_iter()
        .filter_map(|(span, text)| {
            Some(DiagnosticRelatedInformation {
                location: Location {
                    uri: uri_of_file(sources, span.file, buffer)?,
                    range: range(sources, span),
                },
                message: text,
            })
        })
        .collect();
    Diagnostic {
        range: range(sources, first_line(sources, finding.span)),
        severity: Some(severity),
        code: Some(NumberOrString::String(finding.rule.clone())),
        code_description: page(&finding.rule).map(|href| CodeDescription { href }),
        source: Some("kickback".into()),
        message,
        related_information: (!related.is_empty()).then_some(related),
        ..Diagnostic::default()
    }
}

/// A statement continued over `+` lines is marked on its first line, as the other formats
/// point at it.
fn first_line(sources: &SourceMap, span: Span) -> Span {
    let Some(file) = sources.get(span.file) else {
        return span;
    };
    let (line, _) = file.line_col(span.start);
    match file.line_span(line) {
        Some((_, end)) if (end as u32) < span.end && end as u32 > span.start => Span {
            end: end as u32,
            ..span
        },
        _ => span,
    }
}

/// The word under the cursor (a name, a node, a value) and its span in the buffer.
fn word_at(sources: &SourceMap, at: Position) -> Option<(String, Span)> {
    let file = sources.get(BUFFER)?;
    let offset = convert::offset(file, at);
    let text = file.text.as_str();
    let is_word = |c: char| !c.is_whitespace() && !"()=,{}'\"".contains(c);
    let start = text[..offset]
        .char_indices()
        .rev()
        .take_while(|(_, c)| is_word(*c))
        .last()
        .map_or(offset, |(i, _)| i);
    let end = text[offset..]
        .char_indices()
        .find(|(_, c)| !is_word(*c))
        .map_or(text.len(), |(i, _)| offset + i);
    (start < end).then(|| (text[start..end].to_string(), Span::new(BUFFER, start, end)))
}

/// The byte offset of a position in the buffer.
fn buffer_offset(sources: &SourceMap, at: Position) -> Option<u32> {
    let file = sources.get(BUFFER)?;
    Some(convert::offset(file, at) as u32)
}

/// The definition of a model or subcircuit name: its `.model` card or `.subckt` line.
fn definition_of(facts: &BufferFacts, name: &str) -> Option<Span> {
    let model = facts
        .netlist
        .models
        .iter()
        .find(|m| m.name.eq_ignore_ascii_case(name))
        .map(|m| m.span);
    model.or_else(|| {
        facts
            .netlist
            .subckt_definitions
            .iter()
            .find(|(n, _)| n.eq_ignore_ascii_case(name))
            .map(|(_, span)| *span)
    })
}

/// The elements whose statement holds the offset in the buffer (several when the statement
/// sits in a subcircuit placed more than once), with their index.
fn elements_at(facts: &BufferFacts, offset: u32) -> Vec<(usize, &FlatElement)> {
    facts
        .netlist
        .elements
        .iter()
        .enumerate()
        .filter(|(_, e)| e.span.file == BUFFER && e.span.start <= offset && offset <= e.span.end)
        .collect()
}

fn device_of(facts: &BufferFacts, element: usize) -> Option<DeviceId> {
    facts
        .circuit
        .devices()
        .iter()
        .position(|d| d.element == element)
}

/// Hover text: a model's or subcircuit's definition under a name that refers to one, else
/// the facts `kickback report` prints for the element on the line.
pub fn hover(checked: &BufferCheck, at: Position) -> Option<(String, lsp_types::Range)> {
    let facts = checked.facts.as_ref()?;
    let sources = &checked.report.sources;
    let offset = buffer_offset(sources, at)?;
    let elements = elements_at(facts, offset);
    let (word, word_span) = word_at(sources, at).unzip();
    let names_definition = elements.first().is_some_and(|(_, e)| {
        word.as_deref().is_some_and(|w| {
            e.model
                .as_deref()
                .is_some_and(|m| m.eq_ignore_ascii_case(w))
        })
    }) || (elements.is_empty() && word.is_some());
    if names_definition {
        if let Some(span) = word.as_deref().and_then(|w| definition_of(facts, w)) {
            let location = sources.locate(span);
            let text = format!(
                "```spice\n{}\n```\ndefined at {}:{}",
                definition_text(sources, span),
                location.file,
                location.line
            );
            return Some((text, range(sources, word_span?)));
        }
    }
    let (_, first) = elements.first()?;
    let mut tables = Vec::new();
    for (index, element) in elements.iter().take(MAX_HOVER_INSTANCES) {
        let Some(device) = device_of(facts, *index) else {
            continue;
        };
        if let Some(table) =
            report::facts::render_device(&facts.analysis, &facts.netlist, &facts.circuit, device)
        {
            tables.push(table);
        } else if elements.len() > 1 {
            tables.push(format!("{}: nothing computed\n", element.path));
        }
    }
    if tables.is_empty() {
        return None;
    }
    let mut text = format!("```text\n{}```", tables.join(""));
    if elements.len() > MAX_HOVER_INSTANCES {
        text.push_str(&format!(
            "\n{} more instances of this line",
            elements.len() - MAX_HOVER_INSTANCES
        ));
    }
    Some((text, range(sources, first_line(sources, first.span))))
}

/// A definition's text, at most its first lines.
fn definition_text(sources: &SourceMap, span: Span) -> String {
    const MAX_LINES: usize = 12;
    let text = sources.snippet(span);
    let mut lines: Vec<&str> = text.lines().take(MAX_LINES + 1).collect();
    if lines.len() > MAX_LINES {
        lines.truncate(MAX_LINES);
        lines.push("…");
    }
    lines.join("\n")
}

/// Where the model or subcircuit named under the cursor is defined, in the buffer or in an
/// included file.
pub fn definition(checked: &BufferCheck, at: Position, buffer: &Uri) -> Option<Location> {
    let facts = checked.facts.as_ref()?;
    let sources = &checked.report.sources;
    let (word, _) = word_at(sources, at)?;
    let span = definition_of(facts, &word)?;
    let start = Span {
        end: span.start,
        ..span
    };
    Some(Location {
        uri: uri_of_file(sources, span.file, buffer)?,
        range: range(sources, first_line(sources, span)).clone_with_start(range(sources, start)),
    })
}

trait WithStart {
    fn clone_with_start(self, start: lsp_types::Range) -> lsp_types::Range;
}

impl WithStart for lsp_types::Range {
    fn clone_with_start(self, start: lsp_types::Range) -> lsp_types::Range {
        lsp_types::Range {
            start: start.start,
            end: self.end,
        }
    }
}

/// The outline: the buffer's subcircuit definitions, then its timers, switches and loads in
/// line order (a line inside a subcircuit once, however many instances place it).
#[allow(deprecated)] // `DocumentSymbol::deprecated` must still be written.
pub fn symbols(checked: &BufferCheck) -> Vec<DocumentSymbol> {
    let Some(facts) = checked.facts.as_ref() else {
        return Vec::new();
    };
    let sources = &checked.report.sources;
    let mut found: Vec<(Span, String, String, SymbolKind)> = Vec::new();
    for (name, span) in &facts.netlist.subckt_definitions {
        if span.file == BUFFER {
            found.push((*span, name.clone(), "subcircuit".into(), SymbolKind::MODULE));
        }
    }
    let analysis = &facts.analysis;
    let roles = analysis
        .timers
        .iter()
        .map(|t| (t.device, "timer", SymbolKind::EVENT))
        .chain(
            analysis
                .switches
                .iter()
                .map(|s| (s.device, "switch", SymbolKind::OPERATOR)),
        )
        .chain(
            analysis
                .loads
                .iter()
                .map(|l| (l.device, "load", SymbolKind::OBJECT)),
        );
    for (device, role, kind) in roles {
        let Some(d) = facts.circuit.devices().get(device) else {
            continue;
        };
        let Some(element) = facts.netlist.elements.get(d.element) else {
            continue;
        };
        if element.span.file != BUFFER || found.iter().any(|(s, ..)| *s == element.span) {
            continue;
        }
        found.push((
            element.span,
            element.name.clone(),
            format!("{role}, {}", d.kind),
            kind,
        ));
    }
    found.sort_by_key(|(span, ..)| span.start);
    found
        .into_iter()
        .map(|(span, name, detail, kind)| {
            let whole = range(sources, first_line(sources, span));
            DocumentSymbol {
                name,
                detail: Some(detail),
                kind,
                tags: None,
                deprecated: None,
                range: whole,
                selection_range: whole,
                children: None,
            }
        })
        .collect()
}

/// The code actions for the findings on the lines of `lines` (0-based, inclusive): each fix
/// the rule computed, and a waiver comment for the finding's rule.
// `WorkspaceEdit` keys its changes by `Uri`, whose parsed form clippy takes for mutable; the
// keys are never changed once inserted.
#[allow(clippy::mutable_key_type)]
pub fn code_actions(
    checked: &BufferCheck,
    lines: (u32, u32),
    buffer: &Uri,
    page: PageLink<'_>,
) -> Vec<CodeAction> {
    let sources = &checked.report.sources;
    let mut actions = Vec::new();
    for finding in &checked.report.findings {
        if finding.span.file != BUFFER {
            continue;
        }
        let r = range(sources, finding.span);
        if r.end.line < lines.0 || r.start.line > lines.1 {
            continue;
        }
        let diagnostic = diagnostic(finding, sources, buffer, page);
        for fix in &finding.fixes {
            let mut changes: HashMap<Uri, Vec<TextEdit>> = HashMap::new();
            for edit in &fix.edits {
                let Some(uri) = uri_of_file(sources, edit.span.file, buffer) else {
                    continue;
                };
                changes.entry(uri).or_default().push(TextEdit {
                    range: range(sources, edit.span),
                    new_text: edit.text.clone(),
                });
            }
            actions.push(CodeAction {
                title: format!("{}: {}", finding.rule, fix.title),
                kind: Some(CodeActionKind::QUICKFIX),
                diagnostics: Some(vec![diagnostic.clone()]),
                edit: Some(WorkspaceEdit {
                    changes: Some(changes),
                    ..WorkspaceEdit::default()
                }),
                is_preferred: Some(true),
                ..CodeAction::default()
            });
        }
        if let Some(waiver) = waiver(finding, sources) {
            let mut changes = HashMap::new();
            changes.insert(buffer.clone(), vec![waiver]);
            actions.push(CodeAction {
                title: format!("{}: waive it on this line, with a reason", finding.rule),
                kind: Some(CodeActionKind::QUICKFIX),
                diagnostics: Some(vec![diagnostic]),
                edit: Some(WorkspaceEdit {
                    changes: Some(changes),
                    ..WorkspaceEdit::default()
                }),
                ..CodeAction::default()
            });
        }
    }
    actions
}

/// The waiver comment line for a finding's rule, put before the statement it is on; the reason
/// is a placeholder for the user to replace.
fn waiver(finding: &Finding, sources: &SourceMap) -> Option<TextEdit> {
    crate::rules::find(&finding.rule)?;
    let file = sources.get(finding.span.file)?;
    let (line, _) = file.line_col(finding.span.start);
    let (start, _) = file.line_span(line)?;
    let at = convert::position(file, start as u32);
    Some(TextEdit {
        range: lsp_types::Range { start: at, end: at },
        new_text: format!(
            "* kickback waive {} because <say why it is safe here>\n",
            finding.rule
        ),
    })
}
