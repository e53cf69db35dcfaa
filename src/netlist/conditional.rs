//! `.if` / `.elseif` / `.else` / `.endif` blocks: only one branch of a block is read, as a
//! simulator reads it. The branch taken is the first whose condition is a constant true (else
//! the `.else` branch); a condition kickback cannot evaluate to a constant (it depends on a
//! parameter of a subcircuit instance, or on something unknown) takes the first branch, so a
//! deck is never read as if every branch were present.

use super::expr::{self, Env, ExprError, Mode, UserFunc};
use super::flat::Num;
use super::lex::Dot;
use std::collections::HashMap;

/// Look-ups a condition may make through parameters that refer to other parameters.
const MAX_LOOKUP_DEPTH: usize = 64;

/// One open `.if` block.
#[derive(Clone, Copy, Debug)]
struct Block {
    /// The enclosing block is reading its statements.
    outer_active: bool,
    /// A branch of this block was taken already.
    taken: bool,
    /// The current branch is read.
    active: bool,
}

/// The stack of open `.if` blocks while one file's statements are walked.
#[derive(Debug, Default)]
pub struct Branches {
    open: Vec<Block>,
}

impl Branches {
    /// True when the statements at this point are read.
    pub fn active(&self) -> bool {
        self.open.last().is_none_or(|b| b.active)
    }

    /// Moves past one `.if`-family card; `condition` is asked only when its value matters.
    /// `None` from it means "not constant". A stray `.elseif`, `.else` or `.endif` is ignored.
    pub fn step(&mut self, card: Dot, condition: impl FnOnce() -> Option<bool>) {
        match card {
            Dot::If => {
                let outer_active = self.active();
                let active = outer_active && condition().unwrap_or(true);
                self.open.push(Block {
                    outer_active,
                    taken: active,
                    active,
                });
            }
            Dot::Elseif => {
                if let Some(b) = self.open.last_mut() {
                    b.active = b.outer_active && !b.taken && condition().unwrap_or(true);
                    b.taken |= b.active;
                }
            }
            Dot::Else => {
                if let Some(b) = self.open.last_mut() {
                    b.active = b.outer_active && !b.taken;
                    b.taken = true;
                }
            }
            Dot::Endif => {
                self.open.pop();
            }
            _ => {}
        }
    }
}

/// Top-level `.param` values by lower-case name, as written, for evaluating conditions.
#[derive(Debug, Default)]
pub struct ConditionParams {
    texts: HashMap<String, String>,
}

impl ConditionParams {
    pub fn define(&mut self, name: &str, text: &str) {
        self.texts
            .insert(name.to_ascii_lowercase(), text.to_string());
    }

    /// The value of a condition when it is a constant: `Some(true)` for a non-zero value.
    pub fn evaluate(&self, condition: &str) -> Option<bool> {
        let text = condition.trim();
        let text = text
            .strip_prefix('{')
            .and_then(|t| t.strip_suffix('}'))
            .unwrap_or(text);
        match expr::eval(text, self, Mode::Param, 0) {
            Ok(Num::Known(v)) => Some(v != 0.0),
            _ => None,
        }
    }
}

impl Env for ConditionParams {
    fn param(&self, name: &str, depth: usize) -> Option<Result<Num, ExprError>> {
        let text = self.texts.get(&name.to_ascii_lowercase())?;
        if depth > MAX_LOOKUP_DEPTH {
            return Some(Err(ExprError::Invalid("parameters nested too deep".into())));
        }
        let text = text
            .strip_prefix('{')
            .and_then(|t| t.strip_suffix('}'))
            .unwrap_or(text);
        Some(expr::eval(text, self, Mode::Param, depth + 1))
    }

    fn function(&self, _: &str) -> Option<UserFunc<'_>> {
        None
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn walk(cards: &[(Dot, Option<bool>)]) -> Vec<bool> {
        let mut b = Branches::default();
        cards
            .iter()
            .map(|&(card, cond)| {
                b.step(card, || cond);
                b.active()
            })
            .collect()
    }

    #[test]
    fn the_first_true_branch_is_read() {
        let got = walk(&[
            (Dot::If, Some(false)),
            (Dot::Elseif, Some(true)),
            (Dot::Elseif, Some(true)),
            (Dot::Else, None),
            (Dot::Endif, None),
        ]);
        assert_eq!(got, [false, true, false, false, true]);
    }

    #[test]
    fn else_when_nothing_holds_and_first_when_unknown() {
        let got = walk(&[
            (Dot::If, Some(false)),
            (Dot::Else, None),
            (Dot::Endif, None),
        ]);
        assert_eq!(got, [false, true, true]);
        let got = walk(&[(Dot::If, None), (Dot::Else, None), (Dot::Endif, None)]);
        assert_eq!(got, [true, false, true]);
    }

    #[test]
    fn nested_blocks_inside_a_skipped_branch_stay_skipped() {
        let got = walk(&[
            (Dot::If, Some(false)),
            (Dot::If, Some(true)),
            (Dot::Endif, None),
            (Dot::Endif, None),
        ]);
        assert_eq!(got, [false, false, false, true]);
    }

    #[test]
    fn conditions_read_parameters() {
        let mut p = ConditionParams::default();
        p.define("sel", "{base+1}");
        p.define("base", "1");
        assert_eq!(p.evaluate("(sel == 2)"), Some(true));
        assert_eq!(p.evaluate("sel == 1"), Some(false));
        assert_eq!(p.evaluate("unknown > 1"), None);
        p.define("loop", "loop+1");
        assert_eq!(p.evaluate("loop"), None);
    }
}
