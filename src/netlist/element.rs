//! Element lines: which tokens are nodes, model, value, parameters and references, per
//! element letter. Values stay text here; the flattener evaluates them in each instance.

use super::deck::{assign, Deck};
use super::lex::TokKind;
use super::scope::syntax;
use super::stmt::{Item, StmtView};
use super::value::{is_number, parse_number};
use crate::diagnostic::{Finding, Severity};
use crate::source::Span;
use std::borrow::Cow;

pub use super::parsed::{Nodes, Parsed, SourceForm, Val, Wave, XLink};

/// Decides whether a subcircuit is kept whole (cached by the caller).
pub trait Keep {
    fn keep(&self, name: &str) -> bool;
}

pub(super) struct Ctx<'d, 'a> {
    pub(super) deck: &'d Deck<'a>,
    pub(super) def: usize,
    pub(super) view: StmtView<'a>,
    pub(super) name: &'a str,
}

pub(super) type Parse<'a> = Result<Parsed<'a>, Box<Finding>>;

/// A syntax finding, boxed for the error side of a parse.
pub(super) fn bad(span: Span, message: impl Into<String>) -> Box<Finding> {
    Box::new(syntax(span, message))
}

pub(super) fn plural(n: usize) -> &'static str {
    if n == 1 {
        ""
    } else {
        "s"
    }
}

/// Words that may follow a model name: initial-condition flags, and `thermal` or `tnodeout`
/// (the thermal nodes of a vertical power MOS model are in use).
const FLAGS: &[&str] = &["off", "on", "thermal", "tnodeout"];
const THERMAL_FLAGS: &[&str] = &["thermal", "tnodeout"];

/// Splits an element line. `Err` is a finding and the statement is skipped.
pub fn parse<'a>(deck: &Deck<'a>, def: usize, view: StmtView<'a>, keep: &dyn Keep) -> Parse<'a> {
    let mut items = Vec::new();
    parse_with(deck, def, view, keep, &mut items)
}

/// [`parse`] with a buffer for the statement's items that the caller reuses.
pub fn parse_with<'a>(
    deck: &Deck<'a>,
    def: usize,
    view: StmtView<'a>,
    keep: &dyn Keep,
    items: &mut Vec<Item>,
) -> Parse<'a> {
    let name = view.tok(0);
    let cx = Ctx {
        deck,
        def,
        view,
        name,
    };
    if view.kind(0) != Some(TokKind::Word) || !name.starts_with(|c: char| c.is_ascii_alphabetic()) {
        return Err(bad(
            view.span(),
            format!("expected an element name or a dot card, found `{name}`"),
        ));
    }
    let letter = name.chars().next().map_or('?', |c| c.to_ascii_uppercase());
    view.items_into(1, view.toks.len(), false, items);
    let items: &[Item] = items;
    // `A` ports, `B` expressions and `E`/`G` tables may hold `=` and `)` of their own.
    if !matches!(letter, 'A' | 'B' | 'E' | 'G') {
        cx.no_strays(items)?;
    }
    let mut out = Parsed {
        letter,
        name,
        nodes: Nodes::default(),
        model: None,
        value: None,
        behavioural: false,
        params: Vec::new(),
        refs: Vec::new(),
        source: None,
        link: XLink::None,
    };
    let is_assign = |i: &Item| matches!(i, Item::Assign { .. });
    let filtered: Vec<Item>;
    let pos: &[Item] = if items.iter().any(is_assign) {
        out.params = items
            .iter()
            .filter(|i| is_assign(i))
            .filter_map(|&i| assign(&view, i))
            .collect();
        filtered = items.iter().filter(|i| !is_assign(i)).copied().collect();
        &filtered
    } else {
        items
    };
    match letter {
        'R' | 'C' | 'L' => cx.passive(pos, out),
        'D' => cx.with_model(pos, 2, out),
        'J' => cx.with_model(pos, 3, out),
        'S' => cx.with_model(pos, 4, out),
        'Q' => cx.bjt(pos, out),
        'M' => cx.mos(pos, out),
        'W' => cx.current_switch(pos, out),
        'T' => cx.line(pos, out),
        'V' | 'I' => cx.source(pos, out),
        'E' | 'G' => cx.voltage_controlled(pos, out),
        'F' | 'H' => cx.current_controlled(pos, out),
        'B' => cx.behavioural(items, out),
        'K' => cx.coupling(pos, out),
        'X' => cx.instance(pos, out, keep),
        'A' => cx.code_model(items, out),
        _ if is_schematic_marker(items, |i| cx.word(Some(i))) => Err(Box::new(
            Finding::new(
                "element-unknown",
                Severity::Note,
                view.span(),
                format!(
                    "`{name}` is a schematic marker (a plot probe or an initial-condition \
                     mark) that a netlist converter removes before simulation; the line is \
                     skipped"
                ),
            )
            .with_element(name, None),
        )),
        _ => Err(Box::new(
            Finding::new(
                "element-unknown",
                Severity::Warning,
                view.span(),
                format!(
                "`{name}`: `{letter}` is not an element letter kickback reads; the line is skipped"
            ),
            )
            .with_element(name, None),
        )),
    }
}

/// A line of one or two nodes and a marker word (`plot_v1`, `plot_db`, `IC`): schematic
/// front ends write probes and initial-condition marks this way and convert them before the
/// simulator sees the deck.
fn is_schematic_marker<'i>(items: &'i [Item], word: impl Fn(&'i Item) -> Option<&'i str>) -> bool {
    let words: Vec<&str> = items.iter().filter_map(word).collect();
    match words.as_slice() {
        [_, marker] | [_, _, marker] => {
            let m = marker.to_ascii_lowercase();
            m.starts_with("plot_") || m == "ic"
        }
        _ => false,
    }
}

impl<'a> Ctx<'_, 'a> {
    pub(super) fn no_strays(&self, items: &[Item]) -> Result<(), Box<Finding>> {
        match items.iter().find(|i| matches!(i, Item::Stray(_))) {
            Some(Item::Stray(i)) => Err(bad(
                self.view.tok_span(*i),
                format!("unexpected `{}` in `{}`", self.view.tok(*i), self.name),
            )),
            _ => Ok(()),
        }
    }

    pub(super) fn word(&self, item: Option<&Item>) -> Option<&'a str> {
        match item {
            Some(Item::Tok(i)) if self.view.kind(*i) == Some(TokKind::Word) => {
                Some(self.view.tok(*i))
            }
            _ => None,
        }
    }

    pub(super) fn item_text(&self, item: &Item) -> &'a str {
        match *item {
            Item::Tok(i) | Item::Stray(i) | Item::Group(i, _) | Item::Assign { name: i, .. } => {
                self.view.tok(i)
            }
        }
    }

    pub(super) fn item_span(&self, item: &Item) -> Span {
        match *item {
            Item::Tok(i) | Item::Stray(i) => self.view.tok_span(i),
            Item::Group(a, b)
            | Item::Assign {
                name: a, end: b, ..
            } => self.view.range_span(a, b),
        }
    }

    pub(super) fn val(&self, i: usize) -> Val<'a> {
        let written = self.view.tok(i);
        let number = match self.view.kind(i) {
            Some(TokKind::Word) => parse_number(written),
            _ => None,
        };
        Val {
            text: self.view.value_text(i, i),
            written: Cow::Borrowed(written),
            span: self.view.tok_span(i),
            number,
        }
    }

    /// A positional item that can be a value: a number, `{expr}`, `'expr'`, or a parameter.
    pub(super) fn value_item(&self, item: Option<&Item>) -> Option<Val<'a>> {
        let Some(Item::Tok(i)) = item else {
            return None;
        };
        match self.view.kind(*i)? {
            TokKind::Brace | TokKind::Quote => Some(self.val(*i)),
            TokKind::Word => {
                let v = self.val(*i);
                (v.number.is_some() || self.deck.is_param(self.def, self.view.tok(*i))).then_some(v)
            }
            _ => None,
        }
    }

    pub(super) fn unexpected(&self, item: &Item, after: &str) -> Box<Finding> {
        bad(
            self.item_span(item),
            format!(
                "unexpected `{}` {after} of `{}`",
                self.item_text(item),
                self.name
            ),
        )
    }

    pub(super) fn count_words(&self, pos: &[Item]) -> usize {
        pos.iter()
            .take_while(|i| self.word(Some(i)).is_some())
            .count()
    }

    /// The first `n` positional items as nodes.
    pub(super) fn nodes(
        &self,
        pos: &[Item],
        n: usize,
        what: &str,
    ) -> Result<Nodes<'a>, Box<Finding>> {
        let found = self.count_words(pos);
        if found < n {
            return Err(bad(
                self.view.span(),
                format!(
                    "expected {what} after `{}`, {}",
                    self.name,
                    self.found(pos, found)
                ),
            ));
        }
        Ok(pos
            .iter()
            .take(n)
            .filter_map(|i| self.word(Some(i)))
            .collect())
    }

    fn passive(&self, pos: &[Item], mut out: Parsed<'a>) -> Parse<'a> {
        out.nodes = self.nodes(pos, 2, "2 nodes")?;
        for item in &pos[2..] {
            let word = self.word(Some(item));
            if out.value.is_none() {
                if let Some(v) = self.value_item(Some(item)) {
                    if v.number.is_some()
                        || word.is_none_or(|w| self.deck.find_model(self.def, w).is_none())
                    {
                        out.value = Some(v);
                        continue;
                    }
                }
            }
            match word {
                Some(w) if out.model.is_none() => out.model = Some(w),
                _ => return Err(self.unexpected(item, "after the value")),
            }
        }
        let keys: &[&str] = match out.letter {
            'R' => &["r", "resistance", "value"],
            'C' => &["c", "capacitance", "value"],
            _ => &["l", "inductance", "value"],
        };
        if out.value.is_none() {
            if let Some(pos) = out
                .params
                .iter()
                .position(|p| keys.iter().any(|k| p.name.eq_ignore_ascii_case(k)))
            {
                let a = out.params.remove(pos);
                // `R=V(a)/1m`: a behavioural resistor (or C, L); connected, not constant.
                out.behavioural = depends_on_circuit(&a.text);
                out.value = Some(Val::from_assign(a));
            }
        }
        if out.value.is_none() && out.model.is_none() {
            return Err(bad(
                self.view.span(),
                format!(
                    "expected a value (or a model name) after the 2 nodes of `{}`",
                    self.name
                ),
            ));
        }
        Ok(out)
    }

    /// Checks what follows a model name: an area number or `off`/`on`.
    pub(super) fn extras(&self, rest: &[Item]) -> Result<(), Box<Finding>> {
        for item in rest {
            match self.word(Some(item)) {
                Some(w) if is_number(w) || FLAGS.iter().any(|f| w.eq_ignore_ascii_case(f)) => {}
                _ if self.value_item(Some(item)).is_some() => {}
                _ => return Err(self.unexpected(item, "after the model name")),
            }
        }
        Ok(())
    }

    pub(super) fn found(&self, pos: &[Item], found: usize) -> String {
        let words: Vec<&str> = pos
            .iter()
            .take(found)
            .filter_map(|i| self.word(Some(i)))
            .collect();
        if words.is_empty() {
            "found none".into()
        } else {
            format!(
                "found {found} token{}: `{}`",
                plural(found),
                words.join(" ")
            )
        }
    }

    fn expected_model(&self, pos: &[Item], nodes: usize) -> Box<Finding> {
        let found = self.count_words(pos);
        bad(
            self.view.span(),
            format!(
                "expected {nodes} nodes and a model name after `{}`, {}",
                self.name,
                self.found(pos, found)
            ),
        )
    }

    fn with_model(&self, pos: &[Item], n: usize, mut out: Parsed<'a>) -> Parse<'a> {
        let found = self.count_words(pos);
        if found < n + 1 {
            return Err(self.expected_model(pos, n));
        }
        out.nodes = self.nodes(pos, n, "nodes")?;
        out.model = self.word(pos.get(n));
        self.extras(&pos[n + 1..])?;
        Ok(out)
    }

    fn is_model(&self, item: Option<&Item>) -> bool {
        self.word(item)
            .is_some_and(|w| self.deck.find_model(self.def, w).is_some())
    }

    /// `Q c b e [s] model`: the substrate node is told from the model name by the known models.
    fn bjt(&self, pos: &[Item], out: Parsed<'a>) -> Parse<'a> {
        let found = self.count_words(pos);
        if found < 4 {
            return Err(self.expected_model(pos, 3));
        }
        let four = if self.is_model(pos.get(3)) {
            false
        } else if found >= 5 && self.is_model(pos.get(4)) {
            true
        } else if found == 4 {
            false
        } else {
            let w3 = self.word(pos.get(3)).unwrap_or("");
            let w4 = self.word(pos.get(4)).unwrap_or("");
            !is_number(w4) || is_number(w3)
        };
        self.with_model(pos, if four { 4 } else { 3 }, out)
    }

    /// `M d g s b model`; three nodes only for a vertical power MOS model (`VDMOS` type),
    /// which has its body tied inside. A vertical model with thermal nodes is written
    /// `M d g s tj [tc] model [thermal]`: the model is found by name (or stands before
    /// `thermal`), never taken from a node position, and the body is the source.
    fn mos(&self, pos: &[Item], mut out: Parsed<'a>) -> Parse<'a> {
        let found = self.count_words(pos);
        let is_vertical = |at: usize| {
            self.word(pos.get(at))
                .and_then(|w| self.deck.find_model(self.def, w))
                .and_then(|i| self.deck.model_kinds.get(i))
                .is_some_and(|k| k.eq_ignore_ascii_case("VDMOS"))
        };
        if found == 4 && is_vertical(3) {
            return self.with_model(pos, 3, out);
        }
        if found < 5 {
            return Err(self.expected_model(pos, 4));
        }
        let thermal_flag = self
            .word(pos.get(found - 1))
            .is_some_and(|w| THERMAL_FLAGS.iter().any(|f| w.eq_ignore_ascii_case(f)));
        let model_at = (3..found)
            .find(|&k| self.is_model(pos.get(k)))
            .or_else(|| thermal_flag.then(|| found - 2));
        match model_at {
            Some(3) if is_vertical(3) => self.with_model(pos, 3, out),
            Some(at) if at >= 5 || (at == 4 && is_vertical(4)) => {
                let words: Vec<&'a str> = pos[..at]
                    .iter()
                    .filter_map(|i| self.word(Some(i)))
                    .collect();
                out.model = self.word(pos.get(at));
                self.extras(&pos[at + 1..])?;
                // Vertical parts have no body terminal: the body is the source, tied inside,
                // and the thermal nodes follow it.
                let vertical = is_vertical(at) || (thermal_flag && at == 5);
                if vertical && at <= 5 {
                    out.nodes.extend(words[..3].iter().copied());
                    out.nodes.push(words[2]);
                    out.nodes.extend(words[3..].iter().copied());
                } else {
                    out.nodes.extend(words);
                }
                Ok(out)
            }
            _ => self.with_model(pos, 4, out),
        }
    }

    fn current_switch(&self, pos: &[Item], mut out: Parsed<'a>) -> Parse<'a> {
        let found = self.count_words(pos);
        if found < 4 {
            return Err(bad(
                self.view.span(),
                format!(
                    "expected 2 nodes, a controlling source and a model name after `{}`, {}",
                    self.name,
                    self.found(pos, found)
                ),
            ));
        }
        out.nodes = self.nodes(pos, 2, "2 nodes")?;
        out.refs = self.word(pos.get(2)).into_iter().collect();
        out.model = self.word(pos.get(3));
        self.extras(&pos[4..])?;
        Ok(out)
    }

    fn line(&self, pos: &[Item], mut out: Parsed<'a>) -> Parse<'a> {
        out.nodes = self.nodes(pos, 4, "4 nodes")?;
        for item in &pos[4..] {
            match self.word(Some(item)) {
                Some(w) if out.model.is_none() && !is_number(w) => out.model = Some(w),
                _ => return Err(self.unexpected(item, "after the nodes")),
            }
        }
        Ok(out)
    }

    fn coupling(&self, pos: &[Item], mut out: Parsed<'a>) -> Parse<'a> {
        let k_param = out
            .params
            .iter()
            .position(|p| p.name.eq_ignore_ascii_case("k"));
        let mut refs: Vec<&'a str> = Vec::new();
        let mut value = None;
        for (n, item) in pos.iter().enumerate() {
            let last = n + 1 == pos.len();
            if last && k_param.is_none() {
                value = self.value_item(Some(item));
                if value.is_some() {
                    break;
                }
            }
            match self.word(Some(item)) {
                Some(w) => refs.push(w),
                None => return Err(self.unexpected(item, "among the inductors")),
            }
        }
        if let Some(p) = k_param {
            let a = out.params.remove(p);
            value = Some(Val::from_assign(a));
        }
        if refs.len() < 2 || value.is_none() {
            return Err(bad(
                self.view.span(),
                format!(
                    "expected two or more inductor names and a coupling factor after `{}`",
                    self.name
                ),
            ));
        }
        out.refs = refs;
        out.value = value;
        Ok(out)
    }
}

/// True when an expression reads the running circuit: a node voltage or branch current
/// (`V(a)`, `I(V1)`, `vd(a,b)`...) or the simulation variables `time`, `temp`, `hertz`.
fn depends_on_circuit(text: &str) -> bool {
    const PROBES: &[&str] = &[
        "v", "i", "vr", "vi", "vm", "vp", "vdb", "vd", "ir", "ii", "im", "ip", "idb",
    ];
    const VARIABLES: &[&str] = &["time", "temp", "hertz"];
    let bytes = text.as_bytes();
    let mut i = 0;
    while i < bytes.len() {
        if !(bytes[i].is_ascii_alphabetic() || bytes[i] == b'_') {
            i += 1;
            continue;
        }
        let start = i;
        while i < bytes.len() && (bytes[i].is_ascii_alphanumeric() || bytes[i] == b'_') {
            i += 1;
        }
        let word = &text[start..i];
        let called = text[i..].trim_start().starts_with('(');
        let list = if called { PROBES } else { VARIABLES };
        if list.iter().any(|w| word.eq_ignore_ascii_case(w)) {
            return true;
        }
    }
    false
}
