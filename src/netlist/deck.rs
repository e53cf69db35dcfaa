//! Definitions with their names resolved: subcircuit headers (ports, default parameters),
//! local `.param`s and `.func`s, `.model` cards (evaluated into [`Model`]s), scoping maps for
//! subcircuits and models, `.global` nets and the title.

use super::expr::Mode;
use super::flat::{Model, Num};
use super::lex::{Lexed, TokKind};
use super::load::{Loaded, StmtRef};
use super::scope::{syntax, Scope, Sink};
use super::stmt::{Item, StmtView};
use super::text::{lower, CaselessMap};
use super::value::is_number;
use crate::diagnostic::Finding;
use crate::source::{SourceMap, Span};
use std::borrow::Cow;

/// Enclosing definitions searched at most for a name.
pub const MAX_SCOPE_WALK: usize = 1024;

/// `name = value` with the value's text ready for evaluation.
#[derive(Clone, Debug)]
pub struct Assign<'a> {
    pub name: &'a str,
    pub text: Cow<'a, str>,
    /// The value as written, delimiters included.
    pub written: Cow<'a, str>,
    pub span: Span,
}

#[derive(Debug)]
pub struct Func<'a> {
    pub args: Vec<&'a str>,
    pub body: Cow<'a, str>,
}

/// The top level (index 0) or one `.subckt`.
#[derive(Debug, Default)]
pub struct Def<'a> {
    pub name: &'a str,
    pub parent: Option<usize>,
    pub header: Option<Span>,
    pub ports: Vec<&'a str>,
    pub defaults: Vec<Assign<'a>>,
    /// Position of each default in `defaults`, by name.
    pub default_index: CaselessMap<'a, usize>,
    pub locals: CaselessMap<'a, Assign<'a>>,
    pub funcs: CaselessMap<'a, Func<'a>>,
    pub models: CaselessMap<'a, usize>,
    pub children: CaselessMap<'a, usize>,
    pub elements: Vec<StmtRef>,
    /// Problems in this definition's `.model` cards, reported when it is used.
    pub model_findings: Vec<Finding>,
}

pub struct Deck<'a> {
    pub files: &'a [Lexed],
    texts: Vec<&'a str>,
    pub defs: Vec<Def<'a>>,
    pub models: Vec<Model>,
    /// Upper-case type of each model, by index (known before parameters are evaluated).
    pub model_kinds: Vec<String>,
    pub globals: Vec<&'a str>,
    global_set: CaselessMap<'a, ()>,
    pub title: String,
    pub sink: Sink<'a>,
}

impl<'a> Deck<'a> {
    pub fn view(&self, at: StmtRef) -> Option<StmtView<'a>> {
        let lexed = self.files.get(at.0 as usize)?;
        let text = self.texts.get(at.0 as usize)?;
        StmtView::new(lexed, text, at.1 as usize)
    }

    /// `def` and the definitions around it, innermost first. Definitions nested absurdly deep
    /// (already a finding) are not searched past [`MAX_SCOPE_WALK`] levels, which keeps every
    /// name lookup bounded.
    pub fn lexical(&self, def: usize) -> impl Iterator<Item = &Def<'a>> + '_ {
        let mut at = Some(def);
        std::iter::from_fn(move || {
            let entry = self.defs.get(at?)?;
            at = entry.parent;
            Some(entry)
        })
        .take(MAX_SCOPE_WALK)
    }

    /// A subcircuit visible from `def`: its own children first, then its parents'.
    pub fn find_subckt(&self, def: usize, name: &str) -> Option<usize> {
        self.lexical(def)
            .find_map(|d| d.children.get(name).copied())
    }

    /// A `.model` visible from `def`: subcircuit-local first, then enclosing, then global.
    pub fn find_model(&self, def: usize, name: &str) -> Option<usize> {
        self.lexical(def).find_map(|d| d.models.get(name).copied())
    }

    /// Nets that keep their name inside instances: `0`, `gnd` and `.global` names.
    pub fn is_global_net(&self, name: &str) -> bool {
        name == "0" || name.eq_ignore_ascii_case("gnd") || self.global_set.contains(name)
    }

    /// True when `name` is a parameter visible in `def` (for bare-name values).
    pub fn is_param(&self, def: usize, name: &str) -> bool {
        self.lexical(def)
            .any(|d| d.locals.contains(name) || d.default_index.contains(name))
    }
}

/// Reads an assignment item into an [`Assign`].
pub fn assign<'a>(view: &StmtView<'a>, item: Item) -> Option<Assign<'a>> {
    let Item::Assign {
        name, first, last, ..
    } = item
    else {
        return None;
    };
    Some(Assign {
        name: view.tok(name),
        text: view.value_text(first, last),
        written: view.text_between(first, last),
        span: view.range_span(name, last),
    })
}

pub fn build<'a>(loaded: &'a Loaded, sources: &'a SourceMap) -> Deck<'a> {
    let texts: Vec<&'a str> = loaded
        .files
        .iter()
        .map(|l| sources.get(l.file).map(|f| f.text.as_str()).unwrap_or(""))
        .collect();
    let mut deck = Deck {
        files: &loaded.files,
        texts,
        defs: Vec::with_capacity(loaded.defs.len()),
        models: Vec::new(),
        model_kinds: Vec::new(),
        globals: Vec::new(),
        global_set: CaselessMap::default(),
        title: String::new(),
        sink: Sink::default(),
    };
    for build in &loaded.defs {
        let mut def = Def {
            parent: build.parent,
            elements: build.elements.clone(),
            ..Def::default()
        };
        if let Some(view) = build.header.and_then(|h| deck.view(h)) {
            header(&view, &mut def, &deck.sink);
        }
        for &p in &build.params {
            if let Some(view) = deck.view(p) {
                params(&view, &mut def, &deck.sink);
            }
        }
        for &st in &build.steps {
            if let Some(view) = deck.view(st) {
                step(&view, &mut def);
            }
        }
        for &f in &build.funcs {
            if let Some(view) = deck.view(f) {
                func(&view, &mut def, &deck.sink);
            }
        }
        deck.defs.push(def);
    }
    for (id, build) in loaded.defs.iter().enumerate() {
        for &child in &build.children {
            let name = deck.defs.get(child).map(|d| d.name).unwrap_or("");
            if !name.is_empty() {
                deck.defs[id].children.insert_first(name, child);
            }
        }
    }
    globals_and_title(&mut deck, loaded);
    models(&mut deck, loaded);
    deck
}

fn header<'a>(view: &StmtView<'a>, def: &mut Def<'a>, sink: &Sink<'a>) {
    def.header = Some(view.span());
    let items = view.items(1, view.toks.len(), false);
    let mut in_params = false;
    for (n, item) in items.iter().enumerate() {
        match *item {
            Item::Tok(i) if n == 0 && view.kind(i) == Some(TokKind::Word) => def.name = view.tok(i),
            Item::Tok(i) if view.tok(i).eq_ignore_ascii_case("params:") || view.tok(i).eq_ignore_ascii_case("optional:") => {
                in_params = true
            }
            Item::Tok(i) if !in_params && view.kind(i) == Some(TokKind::Word) => def.ports.push(view.tok(i)),
            Item::Assign { .. } => {
                in_params = true;
                if let Some(a) = assign(view, *item) {
                    def.default_index.insert(a.name, def.defaults.len());
                    def.defaults.push(a);
                }
            }
            Item::Tok(i) | Item::Stray(i) | Item::Group(i, _) => sink.report(syntax(
                view.tok_span(i),
                format!("unexpected `{}` in the `.subckt` line: expected port names, then `name=value` parameters", view.tok(i)),
            )),
        }
    }
    if def.name.is_empty() {
        sink.report(syntax(
            view.span(),
            "expected a subcircuit name after `.subckt`",
        ));
    }
}

fn params<'a>(view: &StmtView<'a>, def: &mut Def<'a>, sink: &Sink<'a>) {
    let items = view.items(1, view.toks.len(), true);
    if items.is_empty() {
        sink.report(syntax(view.span(), "expected `name=value` after `.param`"));
    }
    for item in items {
        match assign(view, item) {
            Some(a) => {
                def.locals.insert(a.name, a);
            }
            None => {
                let i = match item {
                    Item::Tok(i) | Item::Stray(i) | Item::Group(i, _) => i,
                    Item::Assign { name, .. } => name,
                };
                sink.report(syntax(
                    view.tok_span(i),
                    format!("expected `name=value` in `.param`, found `{}`", view.tok(i)),
                ));
            }
        }
    }
}

/// `.step [lin|oct|dec] param NAME (list v1 v2 ... | start stop step)`: NAME is defined by its
/// first value, unless a `.param` card defines it. Other sweeps (a source, the temperature) define
/// nothing.
fn step<'a>(view: &StmtView<'a>, def: &mut Def<'a>) {
    let Some(key) = (1..view.toks.len()).find(|&i| view.tok(i).eq_ignore_ascii_case("param"))
    else {
        return;
    };
    let name_at = key + 1;
    let mut value_at = name_at + 1;
    if view.tok(value_at).eq_ignore_ascii_case("list") {
        value_at += 1;
    }
    let (Some(TokKind::Word), Some(kind)) = (view.kind(name_at), view.kind(value_at)) else {
        return;
    };
    if !matches!(kind, TokKind::Word | TokKind::Brace | TokKind::Quote) {
        return;
    }
    let name = view.tok(name_at);
    if def.locals.contains(name) {
        return;
    }
    def.locals.insert(
        name,
        Assign {
            name,
            text: view.value_text(value_at, value_at),
            written: view.text_between(value_at, value_at),
            span: view.range_span(name_at, value_at),
        },
    );
}

fn func<'a>(view: &StmtView<'a>, def: &mut Def<'a>, sink: &Sink<'a>) {
    let bad = || syntax(view.span(), "expected `.func name(arguments) expression`");
    if view.kind(1) != Some(TokKind::Word) || view.kind(2) != Some(TokKind::LParen) {
        sink.report(bad());
        return;
    }
    let name = view.tok(1);
    let mut args = Vec::new();
    let mut i = 3;
    while i < view.toks.len() && view.kind(i) != Some(TokKind::RParen) {
        if view.kind(i) == Some(TokKind::Word) {
            args.push(view.tok(i));
        }
        i += 1;
    }
    let mut body = i + 1;
    if view.kind(body) == Some(TokKind::Eq) {
        body += 1;
    }
    if body >= view.toks.len() {
        sink.report(bad());
        return;
    }
    let text = view.value_text(body, view.toks.len() - 1);
    def.funcs.insert(name, Func { args, body: text });
}

fn globals_and_title<'a>(deck: &mut Deck<'a>, loaded: &'a Loaded) {
    for &g in &loaded.globals {
        let Some(view) = deck.view(g) else { continue };
        for i in 1..view.toks.len() {
            let name = view.tok(i);
            if view.kind(i) == Some(TokKind::Word) && !deck.global_set.contains(name) {
                deck.global_set.insert(name, ());
                deck.globals.push(name);
            }
        }
    }
    if let (Some(top), Some(text)) = (deck.files.first(), deck.texts.first()) {
        if let Some((s, e)) = top.title {
            deck.title = text.get(s as usize..e as usize).unwrap_or("").to_string();
        }
    }
    for &t in &loaded.titles {
        if let Some(view) = deck.view(t) {
            if view.toks.len() > 1 {
                deck.title = view.text_between(1, view.toks.len() - 1).into_owned();
            }
        }
    }
}

/// Names first (so indices are known), then parameter values in each definition's scope.
fn models<'a>(deck: &mut Deck<'a>, loaded: &'a Loaded) {
    let mut cards: Vec<(usize, StmtView<'a>, &'a str, String, Vec<Item>)> = Vec::new();
    for (def, build) in loaded.defs.iter().enumerate() {
        for &m in &build.models {
            let Some(view) = deck.view(m) else { continue };
            let items = view.items(1, view.toks.len(), false);
            let (Some(Item::Tok(n)), Some(Item::Tok(k))) = (items.first(), items.get(1)) else {
                deck.sink.report(syntax(
                    view.span(),
                    "expected a model name and a type after `.model` (`.model NAME TYPE (k=v ...)`)",
                ));
                continue;
            };
            let name = view.tok(*n);
            let index = cards.len();
            deck.defs[def].models.insert_first(name, index);
            let kind = view.tok(*k).to_ascii_uppercase();
            cards.push((def, view, name, kind, items));
        }
    }
    deck.model_kinds = cards.iter().map(|c| c.3.clone()).collect();
    let defs = &deck.defs;
    let global_sink = &deck.sink;
    let top = Scope::new(defs, 0, None, Vec::new(), global_sink);
    let mut out = Vec::with_capacity(cards.len());
    let mut pending: Vec<(usize, Vec<Finding>)> = Vec::new();
    for (def, view, name, kind, items) in &cards {
        let local_sink = Sink::default();
        let sink = if *def == 0 { global_sink } else { &local_sink };
        let scope_here;
        let scope = if *def == 0 {
            &top
        } else {
            scope_here = Scope::new(defs, *def, Some(&top), Vec::new(), sink);
            &scope_here
        };
        let mut params: Vec<(String, Num)> = Vec::new();
        // Items with their parenthesis depth; cards use one level, deeper ones are not read.
        let mut stack: Vec<(Item, u8)> = items.iter().skip(2).rev().map(|i| (*i, 0)).collect();
        // Inside an array value (`in=[0 1 2]`) of a mixed-signal code model.
        let mut in_array = false;
        while let Some((item, level)) = stack.pop() {
            if in_array {
                if let Item::Tok(i) = item {
                    in_array = !view.tok(i).ends_with(']');
                    continue;
                }
                in_array = false;
            }
            match item {
                Item::Group(open, close) if level < 2 => {
                    let inner = view.items(open + 1, close, false);
                    stack.extend(inner.into_iter().rev().map(|i| (i, level + 1)));
                }
                Item::Group(..) => {}
                Item::Assign { .. } => {
                    let Some(a) = assign(view, item) else {
                        continue;
                    };
                    let value = match item {
                        // Arrays and quoted strings (`in=[0 1 2]`, `input_file="x.txt"`) are
                        // parameters of code models; kickback reads no number from them.
                        Item::Assign { last, .. } if a.text.starts_with('[') => {
                            in_array = !view.tok(last).ends_with(']');
                            Num::Varies
                        }
                        Item::Assign { first, .. } if view.kind(first) == Some(TokKind::Str) => {
                            Num::Varies
                        }
                        _ => model_value(scope, &a, name),
                    };
                    params.push((lower(a.name).into_owned(), value));
                }
                Item::Tok(_) | Item::Stray(_) => {}
            }
        }
        if *def != 0 {
            pending.push((*def, local_sink.take()));
        }
        out.push(Model {
            name: name.to_string(),
            kind: kind.clone(),
            params,
            span: view.span(),
        });
    }
    drop(top);
    deck.models = out;
    for (def, findings) in pending {
        deck.defs[def].model_findings.extend(findings);
    }
}

/// Model parameters may hold words (`mfg=...`, `type=...`) and release numbers
/// (`version=3.3.0`, as transistor models of the BSIM family carry): a bare name that is no
/// parameter, or a dotted number, is kept as "not a number" without a finding.
fn model_value<'a>(scope: &Scope<'_, 'a>, a: &Assign<'a>, model: &str) -> Num {
    let bare_word = a.text.chars().next().is_some_and(|c| c.is_alphabetic())
        && a.text.chars().all(|c| c.is_alphanumeric() || c == '_')
        && !is_number(&a.text);
    let release_number =
        a.text.matches('.').count() >= 2 && a.text.chars().all(|c| c.is_ascii_digit() || c == '.');
    if release_number {
        return Num::Varies;
    }
    match scope.eval(&a.text, Mode::Param) {
        Ok(v) => v,
        Err(_) if bare_word => Num::Varies,
        Err(e) => scope.sink().fail(
            e,
            a.span,
            &format!("parameter `{}` of model `{model}`", a.name),
            &|f| f,
        ),
    }
}
