//! Recognising decks of other netlist families, so they get one clear finding instead of a
//! syntax error per line.

use super::lex::{Dot, Head, Lexed, TokKind};
use crate::diagnostic::{Finding, Severity};

/// First words of statements in keyword-style netlists (no leading dot).
const KEYWORD_CARDS: &[&str] = &[
    "simulator",
    "parameters",
    "subckt",
    "ends",
    "model",
    "include",
    "ahdl_include",
    "global",
    "simulatoroptions",
    "library",
    "endlibrary",
    "section",
    "endsection",
    "statistics",
];

const VERILOG_WORDS: &[&str] = &["module", "endmodule", "`include", "analog", "`define"];
const VHDL_WORDS: &[&str] = &["entity", "architecture"];

fn is_one_of(word: &str, list: &[&str]) -> bool {
    list.iter().any(|w| word.eq_ignore_ascii_case(w))
}

/// One finding when `lexed` is not a SPICE deck; `None` when it is (or might be).
pub fn detect(lexed: &Lexed, text: &str) -> Option<Finding> {
    let mut spice = 0usize;
    let mut keyword = 0usize;
    let mut verilog = 0usize;
    let mut vhdl = 0usize;
    let mut first_foreign = None;
    for stmt in &lexed.stmts {
        let toks = lexed.toks_of(stmt);
        let Some(first) = toks.first() else {
            continue;
        };
        let word = text
            .get(first.start as usize..first.end as usize)
            .unwrap_or("");
        let second_is_paren = toks.get(1).is_some_and(|t| t.kind == TokKind::LParen);
        // Every foreign first word starts with one of these; element names mostly do not.
        let maybe_keyword = matches!(
            word.as_bytes().first().map(u8::to_ascii_lowercase),
            Some(b's' | b'p' | b'e' | b'm' | b'i' | b'a' | b'g' | b'l' | b'`')
        );
        let foreign = if !maybe_keyword && !second_is_paren {
            if matches!(
                stmt.head,
                Head::Element(_) | Head::Dot(Dot::Subckt) | Head::Dot(Dot::Model)
            ) {
                spice += 1;
            }
            false
        } else if is_one_of(word, VERILOG_WORDS) {
            verilog += 1;
            true
        } else if is_one_of(word, VHDL_WORDS) {
            vhdl += 1;
            true
        } else if is_one_of(word, KEYWORD_CARDS)
            || (second_is_paren && !matches!(stmt.head, Head::Dot(_)))
        {
            keyword += 1;
            true
        } else {
            if matches!(
                stmt.head,
                Head::Element(_) | Head::Dot(Dot::Subckt) | Head::Dot(Dot::Model)
            ) {
                spice += 1;
            }
            false
        };
        if foreign && first_foreign.is_none() {
            first_foreign = Some(lexed.span(stmt.start, stmt.end));
        }
    }
    let span = first_foreign?;
    let total = spice + keyword + verilog + vhdl;
    let strong = |n: usize| n >= 2 || (n == 1 && spice == 0);
    let (family, hint) = if strong(verilog) && verilog >= vhdl {
        (
            "a Verilog-A/AMS behavioural model (`module` … `endmodule` blocks)",
            "kickback reads SPICE netlists; give it the SPICE deck that instantiates this model, or keep the model as a subcircuit",
        )
    } else if strong(vhdl) {
        (
            "a VHDL-AMS behavioural model (`entity` … `architecture` blocks)",
            "kickback reads SPICE netlists; give it the SPICE deck that instantiates this model",
        )
    } else if keyword >= 2 && keyword > spice {
        (
            "a keyword-style netlist (element lines such as `R1 (a b) resistor r=1k`, cards without a leading dot)",
            "export the netlist in SPICE format: element letter first, nodes without parentheses, dot cards",
        )
    } else {
        return None;
    };
    Some(
        Finding::new(
            "dialect-foreign",
            Severity::Error,
            span,
            format!(
                "this file looks like {family}, not a SPICE netlist ({} of {total} statements are in that form); it is not checked",
                keyword + verilog + vhdl
            ),
        )
        .with_help(hint),
    )
}
