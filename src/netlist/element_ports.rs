//! Lines whose node count comes from elsewhere: `X` (the subcircuit's ports) and `A` code-model
//! devices (vector ports in `[ ]`, `~` inversion, `%v`/`%vd`/`%id`… modifiers).

use super::element::{bad, Ctx, Keep, Parse, Parsed, XLink};
use super::lex::TokKind;
use super::stmt::Item;

impl<'a> Ctx<'_, 'a> {
    /// `X n1 n2 … NAME [params:] [k=v …]`: the last plain word names the subcircuit.
    pub(super) fn instance(&self, pos: &[Item], mut out: Parsed<'a>, keep: &dyn Keep) -> Parse<'a> {
        let mut words: Vec<&'a str> = Vec::with_capacity(pos.len());
        for item in pos {
            match self.word(Some(item)) {
                Some(w) if w.eq_ignore_ascii_case("params:") => {}
                Some(w) => words.push(w),
                None => return Err(self.unexpected(item, "among the nodes")),
            }
        }
        let Some(sub) = words.pop() else {
            return Err(bad(
                self.view.span(),
                format!("expected nodes and a subcircuit name after `{}`", self.name),
            ));
        };
        out.model = Some(sub);
        out.link = match self.deck.find_subckt(self.def, sub) {
            Some(id) => {
                let ports = &self.deck.defs[id].ports;
                if ports.len() != words.len() {
                    return Err(bad(
                        self.view.span(),
                        format!(
                            "`{}` connects {} node{} but subcircuit `{}` has {} port{} ({})",
                            self.name,
                            words.len(),
                            if words.len() == 1 { "" } else { "s" },
                            self.deck.defs[id].name,
                            ports.len(),
                            if ports.len() == 1 { "" } else { "s" },
                            ports.join(" ")
                        ),
                    ));
                }
                if keep.keep(sub) {
                    XLink::Kept(Some(id))
                } else {
                    XLink::Expand(id)
                }
            }
            None if keep.keep(sub) => XLink::Kept(None),
            None => XLink::Unresolved,
        };
        out.nodes = words.into_iter().collect();
        Ok(out)
    }

    /// `A [in1 ~in2] %vd(a b) out model`: every node name, the last plain word is the model.
    pub(super) fn code_model(&self, items: &[Item], mut out: Parsed<'a>) -> Parse<'a> {
        let end = items
            .iter()
            .find_map(|i| match i {
                Item::Assign { name, .. } => Some(*name),
                _ => None,
            })
            .unwrap_or(self.view.toks.len());
        let mut words: Vec<&'a str> = Vec::new();
        let mut current_ref = false;
        for i in 1..end {
            if self.view.kind(i) != Some(TokKind::Word) {
                continue;
            }
            let word = self.view.tok(i).trim_matches(|c| c == '[' || c == ']');
            let word = word.trim_start_matches('~');
            if word.is_empty() {
                continue;
            }
            if let Some(modifier) = word.strip_prefix('%') {
                current_ref = modifier.eq_ignore_ascii_case("vnam");
                continue;
            }
            if current_ref {
                out.refs.push(word);
                current_ref = false;
                continue;
            }
            if word.eq_ignore_ascii_case("null") {
                continue;
            }
            words.push(word);
        }
        let model = words.pop();
        if model.is_none() || words.is_empty() {
            return Err(bad(
                self.view.span(),
                format!("expected ports and a model name after `{}`", self.name),
            ));
        }
        out.model = model;
        out.nodes = words.into_iter().collect();
        Ok(out)
    }
}
