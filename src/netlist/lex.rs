//! Lines to statements: title, comment lines, trailing comments, `+` continuation, blocks that
//! are not circuit statements (`.control`…`.endc`, `.data`…`.enddata`), the end of the deck and
//! suppression comments. Each statement keeps its byte span and a run of tokens that point into
//! the file text, so nothing is copied.

use super::flat::Suppression;
use super::suppress::parse_waiver;
use super::text::is_ws;
use super::text::{first_word, space_len, word_len};
use crate::diagnostic::{Finding, Severity};
use crate::source::{FileId, Span};
use std::collections::HashMap;

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum TokKind {
    Word,
    Eq,
    LParen,
    RParen,
    Comma,
    /// `{expr}`, braces included.
    Brace,
    /// `'expr'`, quotes included.
    Quote,
    /// `"text"`, quotes included.
    Str,
}

#[derive(Clone, Copy, Debug)]
pub struct Tok {
    pub start: u32,
    pub end: u32,
    pub kind: TokKind,
}

/// Dot cards the front end acts on; every other card is skipped.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Dot {
    Subckt,
    Ends,
    Model,
    Param,
    Func,
    Global,
    Include,
    Lib,
    Endl,
    Title,
    /// `.step`: a swept parameter is defined by its first value.
    Step,
    If,
    Elseif,
    Else,
    Endif,
    Other,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Head {
    /// Upper-case element letter.
    Element(u8),
    Dot(Dot),
    /// Starts with something that is neither a letter nor a dot card.
    Invalid,
}

#[derive(Clone, Copy, Debug)]
pub struct Stmt {
    pub start: u32,
    pub end: u32,
    pub tok_start: u32,
    pub tok_end: u32,
    pub seg_start: u32,
    pub seg_end: u32,
    pub head: Head,
}

/// One file cut into statements.
#[derive(Debug)]
pub struct Lexed {
    pub file: FileId,
    /// Title text span (top file only).
    pub title: Option<(u32, u32)>,
    pub stmts: Vec<Stmt>,
    pub toks: Vec<Tok>,
    /// Code ranges of each line of a statement (comments and `+` removed).
    pub segs: Vec<(u32, u32)>,
    pub suppressions: Vec<Suppression>,
    pub findings: Vec<Finding>,
    /// `.lib NAME` … `.endl` sections: lower-case name → (header statement, `.endl` statement).
    pub sections: HashMap<String, (usize, usize)>,
    /// Header statement of a section → its `.endl` statement (for skipping sections).
    pub section_end: HashMap<usize, usize>,
}

impl Lexed {
    pub fn toks_of(&self, stmt: &Stmt) -> &[Tok] {
        self.toks
            .get(stmt.tok_start as usize..stmt.tok_end as usize)
            .unwrap_or(&[])
    }

    pub fn segs_of(&self, stmt: &Stmt) -> &[(u32, u32)] {
        self.segs
            .get(stmt.seg_start as usize..stmt.seg_end as usize)
            .unwrap_or(&[])
    }

    pub fn span(&self, start: u32, end: u32) -> Span {
        Span::new(self.file, start as usize, end as usize)
    }
}

fn dot_kind(word: &str) -> Dot {
    const CARDS: &[(&str, Dot)] = &[
        (".subckt", Dot::Subckt),
        (".ends", Dot::Ends),
        (".model", Dot::Model),
        (".param", Dot::Param),
        (".params", Dot::Param),
        (".func", Dot::Func),
        (".global", Dot::Global),
        (".include", Dot::Include),
        (".inc", Dot::Include),
        (".lib", Dot::Lib),
        (".endl", Dot::Endl),
        (".title", Dot::Title),
        (".step", Dot::Step),
        (".if", Dot::If),
        (".elseif", Dot::Elseif),
        (".else", Dot::Else),
        (".endif", Dot::Endif),
    ];
    CARDS
        .iter()
        .find(|(name, _)| word.eq_ignore_ascii_case(name))
        .map(|(_, d)| *d)
        .unwrap_or(Dot::Other)
}

fn head_of(word: &str) -> Head {
    match word.as_bytes().first() {
        Some(b'.') => Head::Dot(dot_kind(word)),
        Some(b) if b.is_ascii_alphabetic() => Head::Element(b.to_ascii_uppercase()),
        _ => Head::Invalid,
    }
}

/// Line mode of the lexer outside ordinary statements.
#[derive(Clone, Copy, PartialEq, Eq)]
enum Block {
    None,
    Control,
    Data,
    /// `.aliases` … `.endaliases`: a schematic tool's map of part and net names, no circuit.
    Aliases,
}

struct Lexer<'t> {
    text: &'t str,
    out: Lexed,
    /// Statement being collected: (start, tok_start, seg_start, head, end).
    open: Option<(u32, u32, u32, Head, u32)>,
    /// 1-based first line of the open statement.
    open_line: u32,
    /// Whole-line suppressions waiting for the next statement.
    pending: Vec<usize>,
    /// A `{`/`'` group still open at the end of a line: a `+` line may close it.
    unclosed: Option<Unclosed>,
}

/// A bracketed group that runs past the end of its line.
#[derive(Clone, Copy, Debug)]
struct Unclosed {
    /// Index of its token in [`Lexed::toks`].
    tok: usize,
    open: char,
    close: char,
    depth: usize,
    /// Where it opened and where its first line ends, for the finding when nothing closes it.
    at: usize,
    line_end: usize,
}

/// Cuts `text` into statements. `is_top` makes the first line the title.
pub fn lex(file: FileId, text: &str, is_top: bool) -> Lexed {
    let mut lx = Lexer {
        text,
        out: Lexed {
            file,
            title: None,
            // Sized for typical element lines (about 25 bytes, 4 to 5 tokens).
            stmts: Vec::with_capacity(text.len() / 24),
            toks: Vec::with_capacity(text.len() / 5),
            segs: Vec::with_capacity(text.len() / 24),
            suppressions: Vec::new(),
            findings: Vec::new(),
            sections: HashMap::new(),
            section_end: HashMap::new(),
        },
        open: None,
        open_line: 0,
        pending: Vec::new(),
        unclosed: None,
    };
    let mut block = Block::None;
    let mut line_no: u32 = 0;
    let mut pos = 0usize;
    while pos < text.len() || (pos == 0 && line_no == 0 && is_top) {
        let line_end = text[pos..].find('\n').map_or(text.len(), |i| pos + i);
        line_no += 1;
        let line = &text[pos..line_end];
        let start = pos;
        pos = line_end + 1;
        if is_top && line_no == 1 {
            lx.title_line(start, line);
            if pos > text.len() {
                break;
            }
            continue;
        }
        let indent = space_len(line);
        let content = &line[indent..];
        let cstart = start + indent;
        if block != Block::None {
            let end_word = match block {
                Block::Control => ".endc",
                Block::Aliases => ".endaliases",
                _ => ".enddata",
            };
            if first_word(content).eq_ignore_ascii_case(end_word) {
                block = Block::None;
            }
            continue;
        }
        match content.chars().next() {
            None => continue,
            // `*` in any column, and `;` or `//` as the first thing on a line, make the whole
            // line a comment (simulators of the SPICE family accept all three).
            Some('*') | Some(';') => {
                lx.suppression(cstart, content, None);
                continue;
            }
            Some('/') if content.starts_with("//") => {
                lx.suppression(cstart, content, None);
                continue;
            }
            // A `.model` card's closing parenthesis alone on its line, after `+` lines of
            // parameters: read as the card's last continuation, as simulators do.
            Some(')')
                if content.trim_end() == ")"
                    && lx.open.is_some_and(|open| open.3 == Head::Dot(Dot::Model)) =>
            {
                let consumed = lx.continue_group(cstart, content);
                if consumed == 0 || consumed < content.len() {
                    lx.segment(cstart + consumed, &content[consumed..]);
                }
                continue;
            }
            Some('+') => {
                if lx.open.is_none() {
                    if line_no > 2 || !is_top {
                        let span = Span::new(file, cstart, cstart + content.trim_end().len());
                        lx.out.findings.push(Finding::new(
                            "syntax",
                            Severity::Error,
                            span,
                            "a `+` continuation line with no statement before it to continue",
                        ));
                    }
                    continue;
                }
                let body = &content[1..];
                let consumed = lx.continue_group(cstart + 1, body);
                if consumed == 0 || consumed < body.len() {
                    lx.segment(cstart + 1 + consumed, &body[consumed..]);
                }
                continue;
            }
            Some(_) => {}
        }
        let word = first_word(content);
        if word.starts_with('.') {
            if word.eq_ignore_ascii_case(".end") {
                lx.close();
                break;
            }
            if word.eq_ignore_ascii_case(".control") {
                lx.close();
                block = Block::Control;
                continue;
            }
            if word.eq_ignore_ascii_case(".data") {
                lx.close();
                block = Block::Data;
                continue;
            }
            if word.eq_ignore_ascii_case(".aliases") {
                lx.close();
                block = Block::Aliases;
                continue;
            }
        }
        lx.close();
        let tok_start = lx.out.toks.len() as u32;
        let seg_start = lx.out.segs.len() as u32;
        lx.open = Some((
            cstart as u32,
            tok_start,
            seg_start,
            head_of(word),
            cstart as u32,
        ));
        lx.open_line = line_no;
        for i in lx.pending.drain(..) {
            if let Some(s) = lx.out.suppressions.get_mut(i) {
                s.target_line = line_no as usize;
            }
        }
        lx.segment(cstart, content);
    }
    lx.close();
    for i in lx.pending.drain(..) {
        if let Some(s) = lx.out.suppressions.get_mut(i) {
            s.target_line = line_no as usize + 1;
        }
    }
    lx.find_sections();
    lx.out
}

impl Lexer<'_> {
    fn title_line(&mut self, start: usize, line: &str) {
        let indent = line.len() - line.trim_start_matches(is_ws).len();
        let mut content = line[indent..].trim_end_matches(is_ws);
        let mut begin = start + indent;
        let word = first_word(content);
        if word.eq_ignore_ascii_case(".title") {
            let rest = &content[word.len()..];
            let skip = rest.len() - rest.trim_start_matches(is_ws).len();
            begin += word.len() + skip;
            content = &rest[skip..];
        }
        self.out.title = Some((begin as u32, (begin + content.len()) as u32));
    }

    fn close(&mut self) {
        if let Some(g) = self.unclosed.take() {
            self.out.findings.push(Finding::new(
                "syntax",
                Severity::Error,
                Span::new(self.out.file, g.at, g.line_end),
                format!(
                    "`{}` is never closed: expected `{}` before the end of the statement",
                    g.open, g.close
                ),
            ));
        }
        if let Some((start, tok_start, seg_start, head, end)) = self.open.take() {
            self.out.stmts.push(Stmt {
                start,
                end,
                tok_start,
                tok_end: self.out.toks.len() as u32,
                seg_start,
                seg_end: self.out.segs.len() as u32,
                head,
            });
        }
    }

    /// Tokenizes one line's code (from `base` on) and handles its trailing comment, which
    /// applies to the statement the line belongs to.
    fn segment(&mut self, base: usize, code: &str) {
        let mut rest = code;
        let mut after_ws = true;
        let mut code_end = base;
        let mut comment: Option<usize> = None;
        loop {
            let skipped = space_len(rest);
            rest = &rest[skipped..];
            after_ws |= skipped > 0;
            let at = base + (code.len() - rest.len());
            let Some(c) = rest.chars().next() else {
                break;
            };
            // `$` opens a comment only as a word of its own: `$N_0001` and `$G_DPWR` are
            // node names in exports.
            let dollar_comment =
                c == '$' && after_ws && rest[1..].chars().next().is_none_or(|n| n.is_whitespace());
            if c == ';' || rest.starts_with("//") || dollar_comment {
                comment = Some(at);
                break;
            }
            after_ws = false;
            let (kind, len) = match c {
                '=' => (TokKind::Eq, 1),
                '(' => (TokKind::LParen, 1),
                ')' => (TokKind::RParen, 1),
                ',' => (TokKind::Comma, 1),
                '{' => (TokKind::Brace, self.group(at, rest, '{', '}')),
                '\'' => (TokKind::Quote, self.group(at, rest, '\'', '\'')),
                '"' => (TokKind::Str, self.group(at, rest, '"', '"')),
                '}' => (TokKind::Word, 1),
                _ => {
                    let (len, slash) = word_len(rest);
                    let word = &rest[..len.max(c.len_utf8())];
                    let cut = if slash {
                        word.find("//").unwrap_or(word.len())
                    } else {
                        word.len()
                    };
                    if cut > 0 {
                        self.push_word(at, &word[..cut]);
                        code_end = at + cut;
                    }
                    if cut < word.len() {
                        comment = Some(at + cut);
                        break;
                    }
                    rest = &rest[cut..];
                    continue;
                }
            };
            self.out.toks.push(Tok {
                start: at as u32,
                end: (at + len) as u32,
                kind,
            });
            rest = &rest[len..];
            code_end = at + len;
        }
        if code_end > base || comment.is_none() {
            self.out.segs.push((base as u32, code_end as u32));
        }
        if let Some(open) = self.open.as_mut() {
            if code_end > open.4 as usize {
                open.4 = code_end as u32;
            }
        }
        if let Some(at) = comment {
            let text = &self.text[at..base + code.len()];
            self.suppression(at, text, Some(self.open_line));
        }
    }

    /// Splits `params:name` written without a space into two words.
    fn push_word(&mut self, at: usize, word: &str) {
        const KEY: &str = "params:";
        if word.len() > KEY.len()
            && word.is_char_boundary(KEY.len())
            && word[..KEY.len()].eq_ignore_ascii_case(KEY)
        {
            self.out.toks.push(Tok {
                start: at as u32,
                end: (at + KEY.len()) as u32,
                kind: TokKind::Word,
            });
            self.out.toks.push(Tok {
                start: (at + KEY.len()) as u32,
                end: (at + word.len()) as u32,
                kind: TokKind::Word,
            });
        } else {
            self.out.toks.push(Tok {
                start: at as u32,
                end: (at + word.len()) as u32,
                kind: TokKind::Word,
            });
        }
    }

    /// Length of a bracketed group starting at `rest` (nesting for braces); an unclosed group
    /// runs to the end of the line and is a syntax finding.
    fn group(&mut self, at: usize, rest: &str, open: char, close: char) -> usize {
        let mut depth = 0usize;
        for (i, c) in rest.char_indices() {
            if i > 0 && c == close {
                if depth == 0 {
                    return i + c.len_utf8();
                }
                depth -= 1;
            } else if i > 0 && c == open && open != close {
                depth += 1;
            }
        }
        // A `+` line may still close it (`{a*` / `+ b}`); the finding waits for the end of
        // the statement.
        let len = rest.trim_end_matches(is_ws).len().max(1);
        self.unclosed = Some(Unclosed {
            tok: self.out.toks.len(),
            open,
            close,
            depth,
            at,
            line_end: at + len,
        });
        rest.len()
    }

    /// Carries a group left open by the previous line into a `+` line at `base`: extends its
    /// token up to the closing bracket (or the end of this line) and returns the bytes taken.
    fn continue_group(&mut self, base: usize, code: &str) -> usize {
        let Some(mut g) = self.unclosed.take() else {
            return 0;
        };
        let mut closed_at = None;
        for (i, c) in code.char_indices() {
            if c == g.close {
                if g.depth == 0 {
                    closed_at = Some(i + c.len_utf8());
                    break;
                }
                g.depth -= 1;
            } else if c == g.open && g.open != g.close {
                g.depth += 1;
            }
        }
        let taken = closed_at.unwrap_or(code.len());
        let end = base + code[..taken].trim_end_matches(is_ws).len();
        if let Some(tok) = self.out.toks.get_mut(g.tok) {
            tok.end = end as u32;
        }
        if end > base {
            self.out.segs.push((base as u32, end as u32));
        }
        if let Some(open) = self.open.as_mut() {
            open.4 = open.4.max(end as u32);
        }
        if closed_at.is_none() {
            self.unclosed = Some(g);
        }
        taken
    }

    /// Records a `kickback waive ...` comment; `own_line` is set for trailing comments.
    fn suppression(&mut self, at: usize, comment: &str, own_line: Option<u32>) {
        let Some(waiver) = parse_waiver(comment) else {
            return;
        };
        let len = comment.trim_end_matches(is_ws).len();
        let suppression = Suppression {
            rules: waiver.rules,
            reason: waiver.reason,
            earlier_form: waiver.earlier_form,
            span: Span::new(self.out.file, at, at + len),
            target_line: own_line.unwrap_or(0) as usize,
            file: self.out.file,
        };
        if own_line.is_none() {
            self.pending.push(self.out.suppressions.len());
        }
        self.out.suppressions.push(suppression);
    }

    /// Pairs `.lib NAME` headers (one argument) with the next `.endl`.
    fn find_sections(&mut self) {
        let mut open: Vec<usize> = Vec::new();
        for (i, stmt) in self.out.stmts.iter().enumerate() {
            match stmt.head {
                Head::Dot(Dot::Lib) => {
                    let toks = self
                        .out
                        .toks
                        .get(stmt.tok_start as usize..stmt.tok_end as usize)
                        .unwrap_or(&[]);
                    if toks.len() == 2 && toks[1].kind == TokKind::Word {
                        open.push(i);
                    }
                }
                Head::Dot(Dot::Endl) => {
                    if let Some(header) = open.pop() {
                        let toks = &self.out.toks[self.out.stmts[header].tok_start as usize..];
                        if let Some(name_tok) = toks.get(1) {
                            let name = self
                                .text
                                .get(name_tok.start as usize..name_tok.end as usize)
                                .unwrap_or("")
                                .to_ascii_lowercase();
                            self.out.sections.entry(name).or_insert((header, i));
                            self.out.section_end.insert(header, i);
                        }
                    }
                }
                _ => {}
            }
        }
    }
}
