//! Recognising decks of other netlist families, so they get one clear finding instead of a
//! syntax error per line.

use super::lex::{Dot, Head, Lexed, TokKind};
use super::value::is_number;
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

const VERILOG_WORDS: &[&str] = &[
    "module",
    "endmodule",
    "`include",
    "`define",
    "`timescale",
    "analog",
    "electrical",
    "inout",
    "input",
    "output",
    "parameter",
    "branch",
];
const VHDL_WORDS: &[&str] = &["entity", "architecture"];

/// Second words of analysis statements in keyword-style netlists (`tran1 tran stop=1m`).
const KEYWORD_ANALYSES: &[&str] = &[
    "tran",
    "dc",
    "ac",
    "noise",
    "info",
    "options",
    "sweep",
    "montecarlo",
    "pss",
    "pac",
    "sp",
];

fn is_one_of(word: &str, list: &[&str]) -> bool {
    list.iter().any(|w| word.eq_ignore_ascii_case(w))
}

/// Which family one statement's form belongs to.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Form {
    Spice,
    Keyword,
    /// `Type:Name` element lines (the type before the name).
    TypeFirst,
    Verilog,
    Vhdl,
    /// `(export (version D) …`: a nested-parentheses netlist of a layout tool.
    Parenthesised,
    /// `"V1" "5" ""`, `4`: rows of quoted fields or bare numbers, a layout tool's tables.
    Table,
    /// Could be either (`D1 (a k) dmod`, comments, cards both share).
    Neutral,
}

/// The form of the statement whose tokens are `toks`.
fn form(lexed: &Lexed, stmt: &super::lex::Stmt, text: &str) -> Form {
    let toks = lexed.toks_of(stmt);
    let word_at = |i: usize| {
        toks.get(i)
            .filter(|t| t.kind == TokKind::Word)
            .and_then(|t| text.get(t.start as usize..t.end as usize))
    };
    let kind_at = |i: usize| toks.get(i).map(|t| t.kind);
    // No SPICE statement starts with a parenthesis, a quoted field or a number.
    match kind_at(0) {
        Some(TokKind::LParen) => return Form::Parenthesised,
        Some(TokKind::Str) => return Form::Table,
        _ => {}
    }
    let Some(first) = word_at(0) else {
        return Form::Neutral;
    };
    if is_number(first) {
        return Form::Table;
    }
    if is_one_of(first, VERILOG_WORDS) {
        return Form::Verilog;
    }
    if is_one_of(first, VHDL_WORDS) {
        return Form::Vhdl;
    }
    if is_one_of(first, KEYWORD_CARDS) {
        return Form::Keyword;
    }
    // `R:R1`, `.DC:DC1`: a type, a colon, a name.
    if let Some((kind, name)) = first.trim_start_matches('.').split_once(':') {
        let alnum = |s: &str| !s.is_empty() && s.chars().all(|c| c.is_alphanumeric() || c == '_');
        if alnum(kind) && alnum(name) && !first.eq_ignore_ascii_case("params:") {
            return Form::TypeFirst;
        }
    }
    if matches!(stmt.head, Head::Dot(_)) {
        return match stmt.head {
            Head::Dot(Dot::Subckt | Dot::Model) => Form::Spice,
            _ => Form::Neutral,
        };
    }
    // `name (nodes) master k=v ...`: nodes in parentheses, then a master name followed by
    // parameters or nothing. SPICE writes node pairs so only before a value or a second pair
    // (`E1 (out 0) (in 0) 10`, `F1 (a 0) VSNS 2`).
    if kind_at(1) == Some(TokKind::LParen) {
        let close = (2..toks.len()).find(|&i| kind_at(i) == Some(TokKind::RParen));
        let Some(close) = close else {
            return Form::Neutral;
        };
        let master = word_at(close + 1).filter(|w| !is_number(w));
        let then_params_or_end = match kind_at(close + 2) {
            None => true,
            Some(TokKind::Word) => kind_at(close + 3) == Some(TokKind::Eq),
            _ => false,
        };
        return if master.is_some() && then_params_or_end {
            Form::Keyword
        } else {
            Form::Neutral
        };
    }
    // `tran1 tran stop=1m`: an analysis statement.
    if word_at(1).is_some_and(|w| is_one_of(w, KEYWORD_ANALYSES))
        && word_at(2).is_some()
        && kind_at(3) == Some(TokKind::Eq)
    {
        return Form::Keyword;
    }
    match stmt.head {
        Head::Element(_) => Form::Spice,
        _ => Form::Neutral,
    }
}

/// One finding when `lexed` is not a SPICE deck; `None` when it is (or might be).
pub fn detect(lexed: &Lexed, text: &str) -> Option<Finding> {
    let mut spice = 0usize;
    let mut keyword = 0usize;
    let mut type_first = 0usize;
    let mut verilog = 0usize;
    let mut vhdl = 0usize;
    let mut parenthesised = 0usize;
    let mut table = 0usize;
    let mut first_foreign = None;
    for stmt in &lexed.stmts {
        let foreign = match form(lexed, stmt, text) {
            Form::Spice => {
                spice += 1;
                false
            }
            Form::Neutral => false,
            Form::Keyword => {
                keyword += 1;
                true
            }
            Form::TypeFirst => {
                type_first += 1;
                true
            }
            Form::Verilog => {
                verilog += 1;
                true
            }
            Form::Vhdl => {
                vhdl += 1;
                true
            }
            Form::Parenthesised => {
                parenthesised += 1;
                true
            }
            Form::Table => {
                table += 1;
                true
            }
        };
        if foreign && first_foreign.is_none() {
            first_foreign = Some(lexed.span(stmt.start, stmt.end));
        }
    }
    let span = first_foreign?;
    let foreign = keyword + type_first + verilog + vhdl + parenthesised + table;
    let total = spice + foreign;
    let strong = |n: usize| n >= 2 || (n == 1 && spice == 0);
    // A layout tool's netlist was never meant for a simulator: it sits beside the schematic and
    // a folder scan finds it. Saying it is not checked is enough; it fails nothing.
    let mut severity = Severity::Error;
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
    } else if type_first >= 2 && type_first > spice {
        (
            "a type-first netlist (element lines such as `R:R1 a b R=\"1 kOhm\"`, the type before the name)",
            "export the netlist in SPICE format: element letter first, nodes, then the value or model",
        )
    } else if parenthesised >= 2 && parenthesised > spice {
        severity = Severity::Note;
        (
            "a layout tool's parenthesised netlist (nested lists such as `(comp (ref R1) (value 1k))`)",
            "export a SPICE netlist from the schematic (a simulation export), or leave this file out of the checked paths",
        )
    } else if table >= 2 && table > spice {
        severity = Severity::Note;
        (
            "a layout tool's table netlist (rows of quoted fields and numbers)",
            "export a SPICE netlist from the schematic (a simulation export), or leave this file out of the checked paths",
        )
    } else {
        return None;
    };
    Some(
        Finding::new(
            "dialect-foreign",
            severity,
            span,
            format!(
                "this file looks like {family}, not a SPICE netlist ({} of {total} statements are in that form); it is not checked",
                foreign
            ),
        )
        .with_help(hint),
    )
}
