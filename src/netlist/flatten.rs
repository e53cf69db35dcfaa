//! Hierarchy to flat elements. First every definition's expansion size is counted (memoized,
//! nothing allocated per element) so a deck that would blow `max_elements` is refused at once,
//! and recursive or too-deep instantiation is found. Then instances are expanded depth-first
//! with their parameter scopes.

use super::deck::Deck;
use super::element::{self, Keep, Parsed, XLink};
use super::expr::Mode;
use super::flat::{FlatElement, KeptSubckt, Num};
use super::lex::{Head, TokKind};
use super::load::StmtRef;
use super::scope::{quiet, Scope};
use super::source_spec::source_spec;
use super::text::{lower, CaselessMap};
use super::{KeepWhole, Limits, LoadError};
use crate::diagnostic::{Finding, InstanceStep};
use crate::source::Span;
use std::cell::RefCell;
use std::collections::{HashMap, HashSet};

/// Node words an element statement holds before its extra ones count as more elements: a
/// MOSFET with its bulk and model, a 555's eight pins and its name, fit.
const WORDS_PER_ELEMENT: usize = 10;

/// Caches the caller's keep-whole decision per subcircuit name.
pub struct KeepCache<'k> {
    decide: KeepWhole<'k>,
    cache: RefCell<HashMap<String, bool>>,
}

impl<'k> KeepCache<'k> {
    pub fn new(decide: KeepWhole<'k>) -> Self {
        KeepCache {
            decide,
            cache: RefCell::new(HashMap::new()),
        }
    }
}

impl Keep for KeepCache<'_> {
    fn keep(&self, name: &str) -> bool {
        let key = name.to_ascii_lowercase();
        if let Some(&k) = self.cache.borrow().get(&key) {
            return k;
        }
        let k = (self.decide)(name);
        self.cache.borrow_mut().insert(key, k);
        k
    }
}

struct Inst<'s, 'a> {
    /// Instance path (`XDRV.XM1`), empty at the top level.
    path: String,
    ports: Vec<(&'a str, String)>,
    port_index: Option<CaselessMap<'a, usize>>,
    scope: Scope<'s, 'a>,
    steps: Vec<InstanceStep>,
}

pub struct Flattener<'d, 'a> {
    deck: &'d Deck<'a>,
    limits: &'d Limits,
    keep: KeepCache<'d>,
    blocked: HashSet<StmtRef>,
    memo: Vec<Option<(u64, usize)>>,
    on_stack: Vec<bool>,
    /// Definitions expanded at least once, by index.
    pub used: Vec<bool>,
    items: Vec<super::stmt::Item>,
    pub out: Vec<FlatElement>,
    /// Nets that element expressions read (`V(a)`, `V(a,b)` in a B source, a behavioural
    /// value or a code model's parameters), flattened: wired to nothing but still in use.
    pub sensed: Vec<String>,
}

impl<'d, 'a> Flattener<'d, 'a> {
    pub fn new(deck: &'d Deck<'a>, limits: &'d Limits, keep: KeepWhole<'d>) -> Self {
        let n = deck.defs.len();
        Flattener {
            deck,
            limits,
            keep: KeepCache::new(keep),
            blocked: HashSet::new(),
            memo: vec![None; n],
            on_stack: vec![false; n],
            used: vec![false; n],
            items: Vec::new(),
            out: Vec::new(),
            sensed: Vec::new(),
        }
    }

    fn x_lines(&self, def: usize) -> Vec<StmtRef> {
        let deck = self.deck;
        deck.defs[def]
            .elements
            .iter()
            .copied()
            .filter(|&at| {
                deck.files
                    .get(at.0 as usize)
                    .and_then(|f| f.stmts.get(at.1 as usize))
                    .is_some_and(|s| s.head == Head::Element(b'X'))
            })
            .collect()
    }

    fn link(&self, def: usize, at: StmtRef) -> Option<(XLink, Span, &'a str)> {
        let view = self.deck.view(at)?;
        let parsed = element::parse(self.deck, def, view, &self.keep).ok()?;
        Some((parsed.link, view.span(), parsed.name))
    }

    /// Elements one instance of `def` expands to, and the nesting height below it.
    fn count(&mut self, def: usize, depth: usize) -> (u64, usize) {
        if let Some(known) = self.memo[def] {
            return known;
        }
        self.on_stack[def] = true;
        let mut total = self.deck.defs[def]
            .elements
            .iter()
            .map(|&at| self.weight(at))
            .fold(0u64, u64::saturating_add);
        let mut height = 0usize;
        let xs = self.x_lines(def);
        for at in xs {
            let Some((XLink::Expand(child), span, name)) = self.link(def, at) else {
                continue;
            };
            // The instance line itself becomes its subcircuit's elements; its extra
            // connections still count.
            total = total.saturating_sub(1);
            let child_name = self.deck.defs[child].name;
            if self.on_stack[child] {
                self.block(at, span, format!("`{name}` places subcircuit `{child_name}` inside itself (recursive instantiation); it is not expanded"));
                continue;
            }
            if depth + 1 > self.limits.max_depth {
                self.block(at, span, self.too_deep(name));
                continue;
            }
            let (c, h) = self.count(child, depth + 1);
            if depth + 1 + h > self.limits.max_depth {
                self.block(at, span, self.too_deep(name));
                continue;
            }
            total = total.saturating_add(c);
            height = height.max(h + 1);
        }
        self.on_stack[def] = false;
        self.memo[def] = Some((total, height));
        (total, height)
    }

    /// What one element statement counts against `max_elements`: one, plus one for every node
    /// word past the tenth (the words before the first `=`, `{` or `(`), so that one line
    /// with millions of nodes meets the limit as millions of elements would.
    fn weight(&self, at: StmtRef) -> u64 {
        let Some(lexed) = self.deck.files.get(at.0 as usize) else {
            return 1;
        };
        let Some(stmt) = lexed.stmts.get(at.1 as usize) else {
            return 1;
        };
        let words = lexed
            .toks_of(stmt)
            .iter()
            .take_while(|tok| tok.kind == TokKind::Word)
            .count();
        1 + words.saturating_sub(WORDS_PER_ELEMENT) as u64
    }

    fn too_deep(&self, name: &str) -> String {
        format!(
            "`{name}` nests subcircuit instances more than {} levels deep (--max-depth); it is not expanded",
            self.limits.max_depth
        )
    }

    fn block(&mut self, at: StmtRef, span: Span, message: String) {
        self.blocked.insert(at);
        self.deck.sink.report(super::scope::syntax(span, message));
    }

    /// The instance chain that contributes most to the size (for the limit error).
    fn biggest_chain(&self) -> String {
        let mut names = Vec::new();
        let mut def = 0;
        for _ in 0..=self.limits.max_depth {
            let mut best: Option<(u64, usize, &str)> = None;
            for at in self.x_lines(def) {
                if self.blocked.contains(&at) {
                    continue;
                }
                if let Some((XLink::Expand(child), _, name)) = self.link(def, at) {
                    let size = self.memo[child].map_or(0, |m| m.0);
                    if best.is_none_or(|(b, _, _)| size > b) {
                        best = Some((size, child, name));
                    }
                }
            }
            match best {
                Some((_, child, name)) => {
                    names.push(name.to_string());
                    def = child;
                }
                None => break,
            }
        }
        if names.is_empty() {
            "(top level)".into()
        } else {
            names.join(".")
        }
    }

    /// Counts, checks the limit, then expands everything.
    pub fn run(&mut self) -> Result<(), LoadError> {
        if self.deck.defs.is_empty() {
            return Ok(());
        }
        let (total, _) = self.count(0, 0);
        if total > self.limits.max_elements {
            return Err(LoadError::TooManyElements {
                count: total,
                limit: self.limits.max_elements,
                chain: self.biggest_chain(),
            });
        }
        // The count follows the input: ask for the memory without aborting when it is not there.
        let wanted = usize::try_from(total).unwrap_or(usize::MAX);
        if self.out.try_reserve(wanted).is_err() {
            return Err(LoadError::OutOfMemory {
                what: format!("{total} flattened elements"),
            });
        }
        let top = Inst {
            path: String::new(),
            ports: Vec::new(),
            port_index: None,
            scope: Scope::new(&self.deck.defs, 0, None, Vec::new(), &self.deck.sink),
            steps: Vec::new(),
        };
        self.expand(0, &top);
        Ok(())
    }

    fn net(&self, inst: &Inst<'_, 'a>, local: &str) -> String {
        if inst.path.is_empty() {
            return local.to_string();
        }
        let port = match &inst.port_index {
            Some(index) => index.get(local).copied(),
            None => inst
                .ports
                .iter()
                .position(|(p, _)| p.eq_ignore_ascii_case(local)),
        };
        if let Some(i) = port {
            if let Some((_, outer)) = inst.ports.get(i) {
                return outer.clone();
            }
        }
        if self.deck.is_global_net(local) {
            return local.to_string();
        }
        format!("{}.{local}", inst.path)
    }

    fn scoped(&self, inst: &Inst<'_, 'a>, name: &str) -> String {
        if inst.path.is_empty() {
            name.to_string()
        } else {
            format!("{}.{name}", inst.path)
        }
    }

    fn decorate(&self, inst: &Inst<'_, 'a>, name: &str, f: Finding) -> Finding {
        let path = (!inst.path.is_empty()).then(|| self.scoped(inst, name));
        let mut f = f.with_element(name, path);
        f.instances = inst.steps.clone();
        f
    }

    fn expand(&mut self, def: usize, inst: &Inst<'_, 'a>) {
        let deck = self.deck;
        if !self.used[def] {
            self.used[def] = true;
            deck.sink.report_all(deck.defs[def].model_findings.clone());
        }
        inst.scope.check_all();
        for &at in &deck.defs[def].elements {
            let Some(view) = deck.view(at) else { continue };
            if view.stmt.head == Head::Element(b'X') && self.blocked.contains(&at) {
                continue;
            }
            let mut items = std::mem::take(&mut self.items);
            let parsed = element::parse_with(deck, def, view, &self.keep, &mut items);
            self.items = items;
            let parsed = match parsed {
                Ok(p) => p,
                Err(f) => {
                    let name = view.tok(0);
                    deck.sink.report(self.decorate(inst, name, *f));
                    continue;
                }
            };
            if let XLink::Expand(child) = parsed.link {
                self.expand_instance(inst, &parsed, child, view.span());
                continue;
            }
            let element = self.build(def, inst, &parsed, view.span());
            if let Some(last) = view.toks.len().checked_sub(1) {
                let text = view.text_between(0, last);
                for local in sensed_nets(&text) {
                    let net = self.net(inst, local);
                    self.sensed.push(net);
                }
            }
            self.out.push(element);
        }
    }

    fn eval_params(&self, inst: &Inst<'_, 'a>, parsed: &Parsed<'a>) -> Vec<(&'a str, Num)> {
        parsed
            .params
            .iter()
            // A quoted value (`mfg="…"`, `type="X7R"`) is an attribute schematic tools write for
            // the bill of materials; no electrical parameter is a string.
            .filter(|a| !a.text.trim_start().starts_with('"'))
            .map(|a| {
                let v = match inst.scope.eval(&a.text, Mode::Param) {
                    Ok(v) => v,
                    Err(e) => deck_fail(
                        self,
                        inst,
                        parsed.name,
                        e,
                        a.span,
                        &format!("parameter `{}` of `{}`", a.name, parsed.name),
                    ),
                };
                (a.name, v)
            })
            .collect()
    }

    fn expand_instance(
        &mut self,
        inst: &Inst<'_, 'a>,
        parsed: &Parsed<'a>,
        child: usize,
        span: Span,
    ) {
        let overrides = self.eval_params(inst, parsed);
        let ports_def = &self.deck.defs[child].ports;
        let ports: Vec<(&'a str, String)> = ports_def
            .iter()
            .zip(parsed.nodes.iter())
            .map(|(p, n)| (*p, self.net(inst, n)))
            .collect();
        let port_index = (ports.len() > 16).then(|| {
            let mut index = CaselessMap::default();
            for (i, (p, _)) in ports.iter().enumerate() {
                index.insert_first(p, i);
            }
            index
        });
        let mut steps = inst.steps.clone();
        steps.push(InstanceStep {
            name: parsed.name.to_string(),
            span,
        });
        let child_inst = Inst {
            path: self.scoped(inst, parsed.name),
            ports,
            port_index,
            scope: Scope::new(
                &self.deck.defs,
                child,
                Some(&inst.scope),
                overrides,
                &self.deck.sink,
            ),
            steps,
        };
        self.expand(child, &child_inst);
    }

    fn value(
        &self,
        inst: &Inst<'_, 'a>,
        parsed: &Parsed<'a>,
        text: &str,
        span: Span,
        behavioural: bool,
    ) -> Num {
        if behavioural {
            return quiet(inst.scope.eval(text, Mode::Behavioural));
        }
        match inst.scope.eval(text, Mode::Param) {
            Ok(v) => v,
            Err(e) => deck_fail(
                self,
                inst,
                parsed.name,
                e,
                span,
                &format!("value of `{}`", parsed.name),
            ),
        }
    }

    fn build(
        &self,
        def: usize,
        inst: &Inst<'_, 'a>,
        parsed: &Parsed<'a>,
        span: Span,
    ) -> FlatElement {
        let nodes = parsed.nodes.iter().map(|n| self.net(inst, n)).collect();
        let value = parsed.value.as_ref().map(|v| match v.number {
            Some(Ok(n)) => Num::Known(n),
            _ => self.value(inst, parsed, &v.text, v.span, parsed.behavioural),
        });
        let mut params: Vec<(String, Num)> = self
            .eval_params(inst, parsed)
            .into_iter()
            .map(|(k, v)| (lower(k).into_owned(), v))
            .collect();
        let mut subckt = None;
        if let XLink::Kept(definition) = parsed.link {
            subckt = Some(self.kept(inst, parsed, definition, &mut params));
        }
        let source = parsed
            .source
            .as_ref()
            .map(|form| source_spec(form, |v| self.value(inst, parsed, &v.text, v.span, false)));
        let value = match (&source, value) {
            (Some(spec), Some(Num::Known(_))) | (Some(spec), None) => {
                spec.dc.map(Num::Known).or(value)
            }
            (_, v) => v,
        };
        let value = scale_by_multiplier(parsed.letter, value, &params);
        let model_index = match parsed.link {
            XLink::None => parsed.model.and_then(|m| self.deck.find_model(def, m)),
            _ => None,
        };
        FlatElement {
            path: self.scoped(inst, parsed.name),
            name: parsed.name.to_string(),
            letter: parsed.letter,
            nodes,
            model: parsed.model.map(str::to_string),
            model_index,
            value,
            value_text: parsed.value.as_ref().map(|v| v.written.to_string()),
            value_span: parsed.value.as_ref().map(|v| v.span),
            params,
            source,
            refs: parsed.refs.iter().map(|r| self.scoped(inst, r)).collect(),
            subckt,
            span,
            instances: inst.steps.clone(),
        }
    }

    /// A kept subcircuit: its parameters are the instance's over the definition's defaults.
    fn kept(
        &self,
        inst: &Inst<'_, 'a>,
        parsed: &Parsed<'a>,
        definition: Option<usize>,
        params: &mut Vec<(String, Num)>,
    ) -> KeptSubckt {
        let name = parsed.model.unwrap_or("");
        let Some(id) = definition else {
            return KeptSubckt {
                name: name.to_string(),
                ports: Vec::new(),
                definition: None,
            };
        };
        let def = &self.deck.defs[id];
        let overrides: Vec<(&'a str, Num)> = params
            .iter()
            .zip(parsed.params.iter())
            .map(|((_, v), a)| (a.name, *v))
            .collect();
        let scope = Scope::new(
            &self.deck.defs,
            id,
            Some(&inst.scope),
            overrides,
            &self.deck.sink,
        );
        let mut merged: Vec<(String, Num)> = Vec::with_capacity(def.defaults.len() + params.len());
        for d in &def.defaults {
            let v = match scope.own(d) {
                Ok(v) => v,
                Err(_) => Num::Varies,
            };
            merged.push((lower(d.name).into_owned(), v));
        }
        for (k, v) in params.drain(..) {
            if !merged.iter().any(|(m, _)| *m == k) {
                merged.push((k, v));
            }
        }
        *params = merged;
        KeptSubckt {
            name: def.name.to_string(),
            ports: def.ports.iter().map(|p| p.to_string()).collect(),
            definition: def.header,
        }
    }
}

/// `m=` elements in parallel: R/m, C·m, L/m. Other letters keep their value (their multiplier
/// scales the device, which the analyses read from [`FlatElement::multiplier`]).
/// Node names an expression reads through `V(node)` or `V(node, node)`, in order of appearance.
/// Only element statements are scanned, so a `.plot V(x)` never counts.
fn sensed_nets(text: &str) -> Vec<&str> {
    let mut out = Vec::new();
    let bytes = text.as_bytes();
    let mut at = 0;
    while let Some(found) = text.get(at..).and_then(|rest| {
        rest.char_indices()
            .find(|&(i, c)| (c == 'v' || c == 'V') && rest[i + 1..].starts_with('('))
            .map(|(i, _)| at + i)
    }) {
        let open = found + 2;
        let word_before = found
            .checked_sub(1)
            .and_then(|b| bytes.get(b))
            .is_some_and(|b| b.is_ascii_alphanumeric() || *b == b'_');
        at = open;
        if word_before {
            continue;
        }
        let Some(close) = text.get(open..).and_then(|rest| rest.find(')')) else {
            break;
        };
        let inside = &text[open..open + close];
        if inside.contains('(') {
            continue;
        }
        out.extend(
            inside
                .split(',')
                .map(str::trim)
                .filter(|n| !n.is_empty() && !n.contains(char::is_whitespace)),
        );
        at = open + close;
    }
    out
}

fn scale_by_multiplier(letter: char, value: Option<Num>, params: &[(String, Num)]) -> Option<Num> {
    let m = params.iter().find(|(k, _)| k == "m").map(|(_, v)| *v);
    match (value, m) {
        (Some(Num::Known(v)), Some(Num::Known(m))) if m.is_finite() && m > 0.0 => {
            let scaled = match letter {
                'R' | 'L' => v / m,
                'C' => v * m,
                _ => v,
            };
            Some(Num::Known(scaled))
        }
        (Some(Num::Known(_)), Some(Num::Varies)) if matches!(letter, 'R' | 'C' | 'L') => {
            Some(Num::Varies)
        }
        (v, _) => v,
    }
}

fn deck_fail<'a>(
    fl: &Flattener<'_, 'a>,
    inst: &Inst<'_, 'a>,
    name: &str,
    err: super::expr::ExprError,
    span: Span,
    context: &str,
) -> Num {
    fl.deck
        .sink
        .fail(err, span, context, &|f| fl.decorate(inst, name, f))
}

#[cfg(test)]
mod tests {
    use super::sensed_nets;

    #[test]
    fn expressions_name_the_nets_they_read() {
        assert_eq!(sensed_nets("B1 out 0 V=V(a)*2+v(b, c)"), ["a", "b", "c"]);
        assert_eq!(sensed_nets("R2 4 6 R = 'res*(1+V(r2))'"), ["r2"]);
        assert!(
            sensed_nets("B1 out 0 V=dev(1)").is_empty(),
            "a word ending in v"
        );
        assert!(sensed_nets("V1 a 0 PULSE(0 5 0 1n 1n 1u 2u)").is_empty());
        assert!(sensed_nets("B1 o 0 V=V(").is_empty(), "unclosed");
    }
}
