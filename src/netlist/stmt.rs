//! A statement seen through its tokens: text of a token, spans, and the split into positional
//! items, parenthesised groups and `name=value` assignments that every card shares.

use super::lex::{Lexed, Stmt, Tok, TokKind};
use crate::source::Span;
use std::borrow::Cow;

#[derive(Clone, Copy)]
pub struct StmtView<'a> {
    pub lexed: &'a Lexed,
    pub text: &'a str,
    pub stmt: Stmt,
    pub toks: &'a [Tok],
}

/// One piece of a statement.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Item {
    /// A word, `{expr}`, `'expr'` or `"string"`.
    Tok(usize),
    /// `(` … `)`: indices of the two parentheses (the last token when unclosed).
    Group(usize, usize),
    /// `name = value`: name token, first and last token of the value's first entry, last
    /// token of the whole value list (`tc=1e-3,2e-6`).
    Assign {
        name: usize,
        first: usize,
        last: usize,
        end: usize,
    },
    /// A token that belongs nowhere (`=` without a name, `)` without `(`).
    Stray(usize),
}

impl<'a> StmtView<'a> {
    pub fn new(lexed: &'a Lexed, text: &'a str, index: usize) -> Option<StmtView<'a>> {
        let stmt = *lexed.stmts.get(index)?;
        Some(StmtView {
            lexed,
            text,
            stmt,
            toks: lexed.toks_of(&lexed.stmts[index]),
        })
    }

    pub fn tok(&self, i: usize) -> &'a str {
        self.toks
            .get(i)
            .and_then(|t| self.text.get(t.start as usize..t.end as usize))
            .unwrap_or("")
    }

    pub fn kind(&self, i: usize) -> Option<TokKind> {
        self.toks.get(i).map(|t| t.kind)
    }

    pub fn span(&self) -> Span {
        self.lexed.span(self.stmt.start, self.stmt.end)
    }

    pub fn tok_span(&self, i: usize) -> Span {
        match self.toks.get(i) {
            Some(t) => self.lexed.span(t.start, t.end),
            None => self.span(),
        }
    }

    pub fn range_span(&self, first: usize, last: usize) -> Span {
        self.tok_span(first).to(self.tok_span(last))
    }

    /// Source text from the start of token `first` to the end of token `last`, with the
    /// line breaks, `+` markers and comments of continuation lines replaced by a space.
    pub fn text_between(&self, first: usize, last: usize) -> Cow<'a, str> {
        let (Some(a), Some(b)) = (self.toks.get(first), self.toks.get(last)) else {
            return Cow::Borrowed("");
        };
        let (start, end) = (a.start as usize, b.end.max(a.start) as usize);
        let raw = self.text.get(start..end).unwrap_or("");
        if !raw.contains('\n') {
            return Cow::Borrowed(raw);
        }
        let mut out = String::new();
        let segs = self.lexed.segs_of(&self.stmt);
        let first_seg = segs.partition_point(|&(_, e)| (e as usize) <= start);
        for &(s, e) in segs.iter().skip(first_seg) {
            if s as usize >= end {
                break;
            }
            let (s, e) = ((s as usize).max(start), (e as usize).min(end));
            if s < e {
                if !out.is_empty() {
                    out.push(' ');
                }
                out.push_str(self.text.get(s..e).unwrap_or(""));
            }
        }
        Cow::Owned(out)
    }

    /// A value's text for evaluation: `{expr}` and `'expr'` lose their delimiters.
    pub fn value_text(&self, first: usize, last: usize) -> Cow<'a, str> {
        if first == last {
            let t = self.tok(first);
            if matches!(self.kind(first), Some(TokKind::Brace | TokKind::Quote)) && t.len() >= 2 {
                if !t.contains('\n') {
                    let inner = t.get(1..t.len() - 1).unwrap_or("");
                    return Cow::Borrowed(inner);
                }
                // Continued over `+` lines: the pieces without line breaks and markers.
                let joined = self.text_between(first, last);
                let inner = joined.get(1..).unwrap_or("");
                // A group never closed (already a finding) keeps its last character.
                let closer = if t.starts_with('{') { '}' } else { '\'' };
                let inner = inner.strip_suffix(closer).unwrap_or(inner);
                return Cow::Owned(inner.to_string());
            }
        }
        self.text_between(first, last)
    }

    fn closing_paren(&self, open: usize) -> usize {
        let mut depth = 0usize;
        for (i, t) in self.toks.iter().enumerate().skip(open) {
            match t.kind {
                TokKind::LParen => depth += 1,
                TokKind::RParen => {
                    depth = depth.saturating_sub(1);
                    if depth == 0 {
                        return i;
                    }
                }
                _ => {}
            }
        }
        self.toks.len().saturating_sub(1)
    }

    fn adjacent(&self, a: usize, b: usize) -> bool {
        match (self.toks.get(a), self.toks.get(b)) {
            (Some(x), Some(y)) => x.end == y.start,
            _ => false,
        }
    }

    fn starts_assignment(&self, i: usize) -> bool {
        self.kind(i) == Some(TokKind::Word) && self.kind(i + 1) == Some(TokKind::Eq)
    }

    /// Last token of the value that starts at `first`: one token, or tokens written together
    /// without spaces (`2*max(a, b)+1`), parentheses taken whole.
    fn value_unit_end(&self, first: usize, limit: usize) -> usize {
        let mut i = first;
        loop {
            if self.kind(i) == Some(TokKind::LParen) {
                i = self.closing_paren(i);
            }
            let next = i + 1;
            if next >= limit || !self.adjacent(i, next) {
                return i;
            }
            match self.kind(next) {
                Some(TokKind::Word | TokKind::LParen | TokKind::Brace | TokKind::Quote) => i = next,
                _ => return i,
            }
        }
    }

    /// Splits tokens `from..to` into items. With `greedy`, a value runs up to the next
    /// `name=` (`.param a = b + 1 c = 2`).
    pub fn items(&self, from: usize, to: usize, greedy: bool) -> Vec<Item> {
        let mut out = Vec::new();
        self.items_into(from, to, greedy, &mut out);
        out
    }

    /// [`StmtView::items`] into a buffer the caller reuses.
    pub fn items_into(&self, from: usize, to: usize, greedy: bool, out: &mut Vec<Item>) {
        out.clear();
        let to = to.min(self.toks.len());
        let mut i = from;
        while i < to {
            let Some(kind) = self.kind(i) else { break };
            if self.starts_assignment(i) {
                let first = i + 2;
                if first >= to
                    || matches!(
                        self.kind(first),
                        Some(TokKind::RParen | TokKind::Comma | TokKind::Eq)
                    )
                {
                    out.push(Item::Stray(i + 1));
                    i += 2;
                    continue;
                }
                let mut last = self.value_unit_end(first, to);
                let mut end = last;
                if greedy {
                    let mut j = last + 1;
                    while j < to
                        && !self.starts_assignment(j)
                        && self.kind(j) != Some(TokKind::Comma)
                    {
                        last = if self.kind(j) == Some(TokKind::LParen) {
                            self.closing_paren(j).min(to - 1)
                        } else {
                            j
                        };
                        j = last + 1;
                    }
                    end = last;
                }
                while end + 2 < to
                    && self.kind(end + 1) == Some(TokKind::Comma)
                    && !self.starts_assignment(end + 2)
                    && matches!(
                        self.kind(end + 2),
                        Some(TokKind::Word | TokKind::Brace | TokKind::Quote)
                    )
                {
                    end = self.value_unit_end(end + 2, to);
                }
                out.push(Item::Assign {
                    name: i,
                    first,
                    last,
                    end,
                });
                i = end + 1;
                continue;
            }
            match kind {
                TokKind::LParen => {
                    let close = self.closing_paren(i).min(to - 1);
                    out.push(Item::Group(i, close));
                    i = close + 1;
                }
                TokKind::Comma => i += 1,
                TokKind::RParen | TokKind::Eq => {
                    out.push(Item::Stray(i));
                    i += 1;
                }
                _ => {
                    out.push(Item::Tok(i));
                    i += 1;
                }
            }
        }
    }
}
