//! Rules whose findings come from the stages before the rules (the parser, the include loader,
//! the part knowledge, the DC engine, the suppression pass). Their identity lives here, beside
//! each other; the code that raises them names the same ID.

use super::Rule;
use crate::diagnostic::Severity;

pub const SYNTAX: Rule = Rule {
    id: "syntax",
    default_severity: Severity::Error,
    grades: &[Severity::Error],
    summary: "The parser cannot read a statement",
    page: include_str!("../../rules/syntax.md"),
    check: None,
};

pub const ELEMENT_UNKNOWN: Rule = Rule {
    id: "element-unknown",
    default_severity: Severity::Warning,
    grades: &[Severity::Warning, Severity::Note],
    summary: "An element letter that SPICE does not define",
    page: include_str!("../../rules/element-unknown.md"),
    check: None,
};

pub const PARAMETER_INVALID: Rule = Rule {
    id: "parameter-invalid",
    default_severity: Severity::Error,
    grades: &[Severity::Error],
    summary: "A parameter or expression cannot be evaluated",
    page: include_str!("../../rules/parameter-invalid.md"),
    check: None,
};

pub const INCLUDE_CYCLE: Rule = Rule {
    id: "include-cycle",
    default_severity: Severity::Error,
    grades: &[Severity::Error],
    summary: "Included files include each other",
    page: include_str!("../../rules/include-cycle.md"),
    check: None,
};

pub const INCLUDE_REFUSED: Rule = Rule {
    id: "include-refused",
    default_severity: Severity::Error,
    grades: &[Severity::Error],
    summary: "An include points outside the netlist's folder tree",
    page: include_str!("../../rules/include-refused.md"),
    check: None,
};

pub const DIALECT_FOREIGN: Rule = Rule {
    id: "dialect-foreign",
    default_severity: Severity::Error,
    grades: &[Severity::Error, Severity::Note],
    summary: "The deck is written in another netlist family",
    page: include_str!("../../rules/dialect-foreign.md"),
    check: None,
};

pub const PART_PINS: Rule = Rule {
    id: "part-pins",
    default_severity: Severity::Note,
    grades: &[Severity::Warning, Severity::Note],
    summary: "A part's ports cannot be matched to its pins; say which is which in the config",
    page: include_str!("../../rules/part-pins.md"),
    check: None,
};

pub const SUPPRESSION_UNUSED: Rule = Rule {
    id: "suppression-unused",
    default_severity: Severity::Warning,
    grades: &[Severity::Warning],
    summary: "A suppression comment that suppressed nothing",
    page: include_str!("../../rules/suppression-unused.md"),
    check: None,
};

pub const SUPPRESSION_INVALID: Rule = Rule {
    id: "suppression-invalid",
    default_severity: Severity::Warning,
    grades: &[Severity::Warning, Severity::Note],
    summary: "A suppression comment without a reason or naming an unknown rule (a note for the earlier form)",
    page: include_str!("../../rules/suppression-invalid.md"),
    check: None,
};

pub const SOLVE_FAILED: Rule = Rule {
    id: "solve-failed",
    default_severity: Severity::Note,
    grades: &[Severity::Note],
    summary: "The DC engine found no operating point for a sub-network",
    page: include_str!("../../rules/solve-failed.md"),
    check: None,
};
