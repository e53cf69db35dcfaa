//! Library files checked on their own. A file of definitions only (`.subckt`, `.model`,
//! `.param`, `.func`, `.lib` sections, comments) is what `.include` and `.lib` read, and those
//! read no title line: when such a file is checked by itself, its first line is a statement
//! like any other, and the subcircuits it defines are checked as definitions (their lines for
//! syntax), not as a circuit that nothing drives.

use super::deck::Deck;
use super::element::{self, Keep};
use super::lex::{Dot, Head, Lexed};
use crate::diagnostic::Finding;
use crate::source::FileId;

/// File name endings that hold libraries by convention.
const LIBRARY_EXTENSIONS: &[&str] = &["lib", "sub", "inc", "mod", "lb"];

/// Cards that only define something for the decks that read the file.
const DEFINITION_CARDS: &[&str] = &[
    ".subckt", ".model", ".param", ".params", ".func", ".lib", ".include", ".inc",
];

/// How the top file is to be read.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Shape {
    /// A deck: the first line is its title.
    Deck,
    /// A library whose first line is a statement (or a comment): read it with no title.
    Library,
}

/// Decides from the top file, lexed with a title line, whether it is a library.
///
/// A file named as a library (`.lib .inc .mod .sub .lb`) is one whatever it holds, and its
/// first line is a statement, as for the decks that include it. Another file is a library when
/// its first line is a definition, or when it holds definitions only and its first line is a
/// comment or blank.
pub fn shape(file_name: &str, lexed: &Lexed, text: &str) -> Shape {
    let extension = std::path::Path::new(file_name)
        .extension()
        .and_then(|e| e.to_str())
        .unwrap_or("");
    if LIBRARY_EXTENSIONS
        .iter()
        .any(|e| extension.eq_ignore_ascii_case(e))
    {
        return Shape::Library;
    }
    let title = lexed
        .title
        .and_then(|(s, e)| text.get(s as usize..e as usize))
        .unwrap_or("")
        .trim();
    let first_word = title.split_whitespace().next().unwrap_or("");
    if DEFINITION_CARDS
        .iter()
        .any(|c| first_word.eq_ignore_ascii_case(c))
    {
        return Shape::Library;
    }
    if !only_definitions(lexed) {
        return Shape::Deck;
    }
    let comment_or_blank = title.is_empty()
        || title.starts_with('*')
        || title.starts_with(';')
        || title.starts_with("//");
    if comment_or_blank {
        Shape::Library
    } else {
        // A titled file of includes and definitions is a deck whose circuit comes from its
        // includes.
        Shape::Deck
    }
}

/// True when every statement outside `.subckt` bodies and `.lib` sections defines something,
/// and there is at least one.
fn only_definitions(lexed: &Lexed) -> bool {
    let mut depth = 0usize;
    let mut any = false;
    let mut i = 0;
    while let Some(stmt) = lexed.stmts.get(i) {
        if let Some(&end) = lexed.section_end.get(&i) {
            any = true;
            i = end + 1;
            continue;
        }
        match stmt.head {
            Head::Dot(Dot::Subckt) => depth += 1,
            Head::Dot(Dot::Ends) => depth = depth.saturating_sub(1),
            _ if depth > 0 => {}
            Head::Dot(
                Dot::Model
                | Dot::Param
                | Dot::Func
                | Dot::Lib
                | Dot::Endl
                | Dot::Include
                | Dot::Global
                | Dot::If
                | Dot::Elseif
                | Dot::Else
                | Dot::Endif,
            ) => {}
            _ => return false,
        }
        any = true;
        i += 1;
    }
    any
}

struct KeepNone;

impl Keep for KeepNone {
    fn keep(&self, _: &str) -> bool {
        false
    }
}

/// Syntax findings in the element lines of subcircuits nothing in the file instantiates.
pub fn check_definitions(deck: &Deck<'_>, used: &[bool]) -> Vec<Finding> {
    let mut out = Vec::new();
    for (id, def) in deck.defs.iter().enumerate().skip(1) {
        if used.get(id).copied().unwrap_or(false) {
            continue;
        }
        for &at in &def.elements {
            let Some(view) = deck.view(at) else { continue };
            if let Err(finding) = element::parse(deck, id, view, &KeepNone) {
                out.push(finding.with_element(view.tok(0), None));
            }
        }
    }
    out
}

/// A library's first line is a statement to every deck that includes it, never a title: when
/// it is plain text and cannot be read as one, its finding says so.
pub fn explain_first_line(findings: &mut [Finding], top: FileId, text: &str) {
    let first = text.lines().next().unwrap_or("");
    let plain = first
        .trim_start_matches('\u{feff}')
        .trim_start()
        .starts_with(|c: char| c.is_alphabetic());
    if !plain {
        return;
    }
    let end = first.len() as u32;
    for finding in findings
        .iter_mut()
        .filter(|f| f.span.file == top && f.span.start <= end && f.rule == "syntax")
    {
        finding.message.push_str(
            "; this file is a library, and the decks that include it read its first line as a \
             statement, not as a title: make a title a comment (`* ...`)",
        );
    }
}
