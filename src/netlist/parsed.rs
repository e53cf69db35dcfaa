//! An element line split into its parts: nodes, model, value, parameters, references,
//! source description and, for `X` lines, what the instance places.

use super::deck::Assign;
use super::value::{parse_number, Overflow};
use crate::source::Span;
use std::borrow::Cow;

/// A value as written and as it will be evaluated.
#[derive(Clone, Debug)]
pub struct Val<'a> {
    pub text: Cow<'a, str>,
    pub written: Cow<'a, str>,
    pub span: Span,
    /// Set when the value is a plain number (read once here, not again per use).
    pub number: Option<Result<f64, Overflow>>,
}

impl<'a> Val<'a> {
    pub fn from_assign(a: Assign<'a>) -> Val<'a> {
        Val {
            number: parse_number(&a.text),
            text: a.text,
            written: a.written,
            span: a.span,
        }
    }
}

/// Node names of one element: up to four without a heap allocation (most elements).
#[derive(Clone, Debug, Default)]
pub struct Nodes<'a> {
    inline: [&'a str; 4],
    len: usize,
    heap: Vec<&'a str>,
}

impl<'a> Nodes<'a> {
    pub fn push(&mut self, node: &'a str) {
        if self.heap.is_empty() && self.len < self.inline.len() {
            self.inline[self.len] = node;
            self.len += 1;
            return;
        }
        if self.heap.is_empty() {
            self.heap.extend_from_slice(&self.inline[..self.len]);
        }
        self.heap.push(node);
    }
}

impl<'a> std::ops::Deref for Nodes<'a> {
    type Target = [&'a str];

    fn deref(&self) -> &[&'a str] {
        if self.heap.is_empty() {
            &self.inline[..self.len]
        } else {
            &self.heap
        }
    }
}

impl<'a> Extend<&'a str> for Nodes<'a> {
    fn extend<I: IntoIterator<Item = &'a str>>(&mut self, iter: I) {
        for node in iter {
            self.push(node);
        }
    }
}

impl<'a> FromIterator<&'a str> for Nodes<'a> {
    fn from_iter<I: IntoIterator<Item = &'a str>>(iter: I) -> Self {
        let mut nodes = Nodes::default();
        nodes.extend(iter);
        nodes
    }
}

/// What an `X` line places.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum XLink {
    /// Not an `X` line.
    None,
    /// Flatten this definition.
    Expand(usize),
    /// One device; its definition when the deck has one.
    Kept(Option<usize>),
    /// No such subcircuit in scope.
    Unresolved,
}

#[derive(Clone, Debug)]
pub struct Wave<'a> {
    pub kind: &'a str,
    pub args: Vec<Val<'a>>,
}

#[derive(Clone, Debug, Default)]
pub struct SourceForm<'a> {
    pub dc: Option<Val<'a>>,
    pub wave: Option<Wave<'a>>,
    /// The line ends in a bare `DC`: a value left blank (schematic tools write the keyword and
    /// fill the value in later), not SPICE's 0 V of a source written with no value at all.
    pub blank_dc: bool,
}

#[derive(Clone, Debug)]
pub struct Parsed<'a> {
    pub letter: char,
    pub name: &'a str,
    pub nodes: Nodes<'a>,
    pub model: Option<&'a str>,
    pub value: Option<Val<'a>>,
    /// The value is a behavioural expression (no findings, `Varies` when not constant).
    pub behavioural: bool,
    pub params: Vec<Assign<'a>>,
    pub refs: Vec<&'a str>,
    pub source: Option<SourceForm<'a>>,
    pub link: XLink,
}
