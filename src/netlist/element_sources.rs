//! Sources: independent V/I (DC, AC, PULSE/SIN/PWL...), controlled E/F/G/H in their linear,
//! `value=`, `table` and `poly(n)` forms, and behavioural B sources.

use super::element::{bad, Ctx, Parse, Parsed, SourceForm, Val, Wave};
use super::lex::TokKind;
use super::stmt::Item;
use super::value::is_number;

const WAVEFORMS: &[&str] = &[
    "pulse", "sin", "sine", "pwl", "exp", "sffm", "am", "trnoise", "trrandom", "pat",
];

fn is_one_of(word: &str, list: &[&str]) -> bool {
    list.iter().any(|w| word.eq_ignore_ascii_case(w))
}

impl<'a> Ctx<'_, 'a> {
    fn is_value_like(&self, item: Option<&Item>) -> bool {
        match item {
            Some(Item::Tok(i)) => match self.view.kind(*i) {
                Some(TokKind::Brace | TokKind::Quote) => true,
                Some(TokKind::Word) => is_number(self.view.tok(*i)),
                _ => false,
            },
            _ => false,
        }
    }

    /// Values inside a waveform's parentheses (commas and stray words skipped).
    fn group_values(&self, open: usize, close: usize) -> Vec<Val<'a>> {
        self.view
            .items(open + 1, close, false)
            .iter()
            .filter_map(|item| match item {
                Item::Tok(i) => Some(self.val(*i)),
                _ => None,
            })
            .collect()
    }

    pub(super) fn source(&self, pos: &[Item], mut out: Parsed<'a>) -> Parse<'a> {
        out.nodes = self.nodes(pos, 2, "2 nodes")?;
        let mut form = SourceForm::default();
        let mut j = 2;
        while j < pos.len() {
            let item = &pos[j];
            let next = pos.get(j + 1);
            let word = self.word(Some(item));
            match word {
                // A bare `DC` before `AC` or a waveform (or at the end) gives no value; some
                // schematic exports write it so (`DC ac=1 AC 1`).
                Some(w) if w.eq_ignore_ascii_case("dc") && self.no_value_follows(next) => {
                    form.blank_dc = next.is_none();
                    j += 1;
                }
                Some(w) if w.eq_ignore_ascii_case("dc") => {
                    let value = self
                        .value_item(next)
                        .or_else(|| self.any_value(next))
                        .or_else(|| self.single_in_parens(next));
                    match value {
                        Some(v) => form.dc = Some(v),
                        None => {
                            return Err(bad(
                                self.item_span(item),
                                format!("expected a value after `DC` in `{}`", self.name),
                            ))
                        }
                    }
                    j += 2;
                }
                Some(w) if is_one_of(w, &["ac", "distof1", "distof2"]) => {
                    j += 1;
                    for _ in 0..2 {
                        if self.is_value_like(pos.get(j)) {
                            j += 1;
                        }
                    }
                }
                Some(w) if is_one_of(w, WAVEFORMS) || matches!(next, Some(Item::Group(..))) => {
                    if form.wave.is_some() {
                        return Err(self.unexpected(item, "after the waveform"));
                    }
                    let mut args = Vec::new();
                    j += 1;
                    if let Some(Item::Group(open, close)) = next {
                        args = self.group_values(*open, *close);
                        j += 1;
                    } else {
                        while self.is_value_like(pos.get(j)) {
                            if let Some(Item::Tok(i)) = pos.get(j) {
                                args.push(self.val(*i));
                            }
                            j += 1;
                        }
                    }
                    form.wave = Some(Wave { kind: w, args });
                }
                _ => {
                    let value = self
                        .value_item(Some(item))
                        .or_else(|| self.any_value(Some(item)));
                    match value {
                        Some(v) if form.dc.is_none() && form.wave.is_none() => form.dc = Some(v),
                        _ => return Err(self.unexpected(item, "in the source description")),
                    }
                    j += 1;
                }
            }
        }
        if let Some(p) = out
            .params
            .iter()
            .position(|p| p.name.eq_ignore_ascii_case("dc"))
        {
            let a = out.params.remove(p);
            form.dc = Some(Val::from_assign(a));
        }
        out.value = form.dc.clone();
        out.source = Some(form);
        Ok(out)
    }

    /// True at the end of the line or before `AC` or a waveform keyword.
    fn no_value_follows(&self, next: Option<&Item>) -> bool {
        match next {
            None => true,
            Some(_) => self.word(next).is_some_and(|n| {
                is_one_of(n, &["ac", "distof1", "distof2"]) || is_one_of(n, WAVEFORMS)
            }),
        }
    }

    /// `DC(5)`: one value written in parentheses.
    fn single_in_parens(&self, item: Option<&Item>) -> Option<Val<'a>> {
        let Some(&Item::Group(open, close)) = item else {
            return None;
        };
        if close != open + 2 {
            return None;
        }
        match self.view.kind(open + 1)? {
            TokKind::Word | TokKind::Brace | TokKind::Quote => Some(self.val(open + 1)),
            _ => None,
        }
    }

    /// A bare name used as a value (a parameter the scope may or may not define).
    fn any_value(&self, item: Option<&Item>) -> Option<Val<'a>> {
        match item {
            Some(Item::Tok(i)) if self.view.kind(*i) == Some(TokKind::Word) => Some(self.val(*i)),
            _ => self.value_item(item),
        }
    }

    /// `poly(n)` at `pos[at]`: the dimension.
    fn poly(&self, pos: &[Item], at: usize) -> Option<usize> {
        let w = self.word(pos.get(at))?;
        if !w.eq_ignore_ascii_case("poly") {
            return None;
        }
        let Some(Item::Group(open, close)) = pos.get(at + 1) else {
            return None;
        };
        if *close != open + 2 {
            return None;
        }
        let n: usize = self.view.tok(open + 1).parse().ok()?;
        (1..=64).contains(&n).then_some(n)
    }

    fn expression_param(&self, out: &mut Parsed<'a>, keys: &[&str]) -> bool {
        let Some(p) = out.params.iter().position(|p| is_one_of(p.name, keys)) else {
            return false;
        };
        let a = out.params.remove(p);
        out.value = Some(Val::from_assign(a));
        out.behavioural = true;
        true
    }

    /// Node pairs written in parentheses, `E1 (out 0) (in 0) 10`, as plain nodes: simulators
    /// take the parentheses as separators there. Only leading groups of exactly two names are
    /// opened, so `POLY(2)` and value expressions keep theirs.
    fn open_node_pairs(&self, pos: &[Item], pairs: usize) -> Vec<Item> {
        let mut opened = Vec::with_capacity(pos.len() + 2 * pairs);
        let mut rest = pos.iter();
        for _ in 0..pairs {
            let Some(&Item::Group(open, close)) = rest.clone().next() else {
                break;
            };
            let names = (open + 1..close).all(|i| self.view.kind(i) == Some(TokKind::Word));
            if close != open + 3 || !names {
                break;
            }
            rest.next();
            opened.extend([Item::Tok(open + 1), Item::Tok(open + 2)]);
        }
        opened.extend(rest.copied());
        opened
    }

    pub(super) fn voltage_controlled(&self, pos: &[Item], mut out: Parsed<'a>) -> Parse<'a> {
        let opened = self.open_node_pairs(pos, 2);
        let pos = opened.as_slice();
        out.nodes = self.nodes(pos, 2, "2 output nodes")?;
        if let Some(n) = self.poly(pos, 2) {
            let controls = self.count_words(&pos[4..]);
            if controls < 2 * n {
                return Err(bad(
                    self.view.span(),
                    format!(
                        "`{}`: `poly({n})` needs {} controlling nodes, found {controls}",
                        self.name,
                        2 * n
                    ),
                ));
            }
            out.nodes
                .extend(pos[4..4 + 2 * n].iter().filter_map(|i| self.word(Some(i))));
            return Ok(out);
        }
        if self.expression_param(
            &mut out,
            &["value", "vol", "cur", "table", "laplace", "freq"],
        ) {
            return Ok(out);
        }
        if let Some(w) = self.word(pos.get(2)) {
            if is_one_of(w, &["value", "table", "laplace", "freq", "chebyshev"]) {
                out.behavioural = true;
                if w.eq_ignore_ascii_case("value") {
                    out.value = self.value_item(pos.get(3));
                }
                return Ok(out);
            }
        }
        self.no_strays(pos)?;
        let found = self.count_words(pos);
        if found < 4 {
            return Err(bad(
                self.view.span(),
                format!(
                    "expected 4 nodes and a gain after `{}`, {}",
                    self.name,
                    self.found(pos, found)
                ),
            ));
        }
        out.nodes = self.nodes(pos, 4, "4 nodes")?;
        out.value = self
            .value_item(pos.get(4))
            .or_else(|| self.any_value(pos.get(4)));
        if out.value.is_none() {
            return Err(bad(
                self.view.span(),
                format!("expected a gain after the 4 nodes of `{}`", self.name),
            ));
        }
        for item in pos.iter().skip(5) {
            if !self.is_value_like(Some(item)) {
                return Err(self.unexpected(item, "after the gain"));
            }
        }
        Ok(out)
    }

    pub(super) fn current_controlled(&self, pos: &[Item], mut out: Parsed<'a>) -> Parse<'a> {
        let opened = self.open_node_pairs(pos, 1);
        let pos = opened.as_slice();
        out.nodes = self.nodes(pos, 2, "2 output nodes")?;
        if let Some(n) = self.poly(pos, 2) {
            let refs: Vec<&'a str> = pos
                .iter()
                .skip(4)
                .take(n)
                .filter_map(|i| self.word(Some(i)))
                .collect();
            if refs.len() < n {
                return Err(bad(
                    self.view.span(),
                    format!(
                        "`{}`: `poly({n})` needs {n} controlling sources, found {}",
                        self.name,
                        refs.len()
                    ),
                ));
            }
            out.refs = refs;
            return Ok(out);
        }
        if self.expression_param(&mut out, &["value"]) {
            return Ok(out);
        }
        let (Some(control), Some(gain)) = (
            self.word(pos.get(2)),
            self.value_item(pos.get(3))
                .or_else(|| self.any_value(pos.get(3))),
        ) else {
            return Err(bad(
                self.view.span(),
                format!(
                    "expected 2 nodes, a controlling source and a gain after `{}`",
                    self.name
                ),
            ));
        };
        out.refs = vec![control];
        out.value = Some(gain);
        for item in pos.iter().skip(4) {
            if !self.is_value_like(Some(item)) {
                return Err(self.unexpected(item, "after the gain"));
            }
        }
        Ok(out)
    }

    /// `B n+ n- V=expr` / `I=expr`: the expression runs to the next `name=` or the end.
    pub(super) fn behavioural(&self, items: &[Item], mut out: Parsed<'a>) -> Parse<'a> {
        let pos: Vec<Item> = items
            .iter()
            .take_while(|i| !matches!(i, Item::Assign { .. }))
            .copied()
            .collect();
        out.nodes = self.nodes(&pos, 2, "2 nodes")?;
        let at = items.iter().position(|i| {
            matches!(i, Item::Assign { name, .. } if is_one_of(self.view.tok(*name), &["v", "i"]))
        });
        let Some(Item::Assign { name, first, .. }) = at.and_then(|a| items.get(a)).copied() else {
            return Err(bad(
                self.view.span(),
                format!(
                    "expected `V=` or `I=` and an expression after the 2 nodes of `{}`",
                    self.name
                ),
            ));
        };
        let after = at.map_or(items.len(), |a| a + 1);
        let last = items
            .iter()
            .skip(after)
            .find(|i| matches!(i, Item::Assign { .. }))
            .map_or(self.view.toks.len() - 1, |i| match i {
                Item::Assign { name, .. } => name.saturating_sub(1),
                _ => self.view.toks.len() - 1,
            });
        let last = last.max(first);
        out.value = Some(Val {
            text: self.view.value_text(first, last),
            written: self.view.text_between(first, last),
            span: self.view.range_span(name, last),
            number: None,
        });
        out.behavioural = true;
        out.params.retain(|p| !is_one_of(p.name, &["v", "i"]));
        Ok(out)
    }
}
