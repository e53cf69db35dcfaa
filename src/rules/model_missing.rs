//! `model-missing`: an element names a model or subcircuit that is defined nowhere and that part
//! knowledge does not know. See `rules/model-missing.md`.
//!
//! When an include could not be read, the names left undefined are blamed on it: one warning
//! per missing file, listing what it would have defined, instead of an error per element.

use super::support::hygiene::{finding_at, Once};
use super::Rule;
use super::RuleContext;
use crate::circuit::UnknownPart;
use crate::diagnostic::{Finding, Severity};
use crate::netlist::FlatElement;
use std::collections::BTreeMap;

/// This rule's identity: its ID, the severities it gives and its page.
pub const RULE: Rule = Rule {
    id: "model-missing",
    default_severity: Severity::Error,
    grades: &[Severity::Error, Severity::Warning, Severity::Note],
    summary: "An element names a model or subcircuit that is defined nowhere",
    page: include_str!("../../rules/model-missing.md"),
    check: Some(check),
};
/// Uses labelled per missing include; the message lists every name.
const MAX_LABELS: usize = 8;
/// Missing include paths quoted in the one finding that names them.
const MAX_PATHS: usize = 4;

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    // Lower-case name → (name as first written, elements that use it). The circuit's fact of
    // unknown parts says which elements name something nothing defines.
    let mut undefined: BTreeMap<String, (String, Vec<&FlatElement>)> = BTreeMap::new();
    for &(device, why) in cx.circuit.unknown_parts() {
        if why != UnknownPart::Undefined {
            continue;
        }
        let Some(element) = cx
            .circuit
            .device(device)
            .and_then(|d| cx.netlist.elements.get(d.element))
        else {
            continue;
        };
        let Some(name) = element
            .model
            .as_deref()
            .or(element.subckt.as_ref().map(|s| s.name.as_str()))
        else {
            continue;
        };
        undefined
            .entry(name.to_ascii_lowercase())
            .or_insert_with(|| (name.to_string(), Vec::new()))
            .1
            .push(element);
    }
    if !cx.netlist.missing_includes.is_empty() {
        blame_missing_includes(cx, &undefined, out);
        return;
    }
    let mut once = Once::default();
    for (key, (name, users)) in &undefined {
        for element in users {
            if once.first(element.span, key.as_str()) {
                out.push(missing(cx, element, name, users.len()));
            }
        }
    }
}

fn what_it_names(element: &FlatElement) -> &'static str {
    match element.letter {
        'X' => "subcircuit",
        _ => "model",
    }
}

fn missing(cx: &RuleContext<'_>, element: &FlatElement, name: &str, uses: usize) -> Finding {
    let what = what_it_names(element);
    let elsewhere = cx
        .netlist
        .models
        .iter()
        .find(|m| m.name.eq_ignore_ascii_case(name));
    let mut message = match elsewhere {
        Some(_) => format!(
            "{} names {what} `{name}`, which is defined only inside another subcircuit and is \
             not visible here",
            element.path
        ),
        None => format!(
            "{} names {what} `{name}`, which no `.model` card or `.subckt` in the deck defines \
             and kickback does not know",
            element.path
        ),
    };
    if uses > 1 {
        message.push_str(&format!(" ({uses} elements use it)"));
    }
    message.push_str(": a simulator stops here, and kickback cannot tell what the part is");
    let mut finding = finding_at(RULE, RULE.grade(Severity::Error), element, message);
    if let Some(model) = elsewhere {
        finding = finding.with_label(model.span, format!("`{}` is defined here", model.name));
    }
    let near = similar_names(cx, name);
    let help = match (near.first(), element.letter) {
        (Some(near), _) => format!("did you mean `{near}`? Otherwise define `{name}`"),
        (None, 'X') => format!(
            "add `.subckt {name} ...`, include the file that defines it, or describe it in \
             kickback.toml as [parts.{name}] with its kind (e.g. kind = \"dc-motor\")"
        ),
        (None, _) => format!(
            "add `.model {name} <type> (...)`, include the library that defines it, or describe \
             it in kickback.toml as [parts.{name}] with its kind and ratings"
        ),
    };
    finding.with_help(help)
}

/// Defined names (models, subcircuits, configured parts) within a small edit distance.
fn similar_names(cx: &RuleContext<'_>, name: &str) -> Vec<String> {
    let lower = name.to_ascii_lowercase();
    let limit = if lower.len() <= 4 { 1 } else { 2 };
    let mut scored: Vec<(usize, String)> = cx
        .netlist
        .models
        .iter()
        .map(|m| m.name.clone())
        .chain(cx.netlist.subckt_names.iter().cloned())
        .chain(cx.config.parts.iter().map(|(p, _)| p.clone()))
        .filter(|candidate| !candidate.contains(['*', '?', '[']))
        .map(|candidate| {
            let distance = strsim::osa_distance(&lower, &candidate.to_ascii_lowercase());
            (distance, candidate)
        })
        .filter(|(d, _)| *d > 0 && *d <= limit)
        .collect();
    scored.sort();
    scored.dedup();
    scored.into_iter().map(|(_, n)| n).take(2).collect()
}

/// One finding for all of a deck's missing includes, at the first: which files, and which
/// parts the deck uses that they would have defined. A library nothing in the deck needs, or
/// one at an absolute path (a simulator's own installed library, which no project can put
/// beside its netlist), is a note: it says what the check lacks, it is not a fault of the
/// design. A missing file of the project's own (a relative path) that leaves parts undefined
/// is a warning.
fn blame_missing_includes(
    cx: &RuleContext<'_>,
    undefined: &BTreeMap<String, (String, Vec<&FlatElement>)>,
    out: &mut Vec<Finding>,
) {
    let missing = &cx.netlist.missing_includes;
    let Some(first) = missing.first() else {
        return;
    };
    let names: Vec<&str> = undefined.values().map(|(n, _)| n.as_str()).collect();
    let paths: Vec<&str> = missing.iter().map(|m| m.path.as_str()).collect();
    let files = if let [one] = paths.as_slice() {
        format!("`{one}` could not be read")
    } else {
        let shown: Vec<&str> = paths.iter().copied().take(MAX_PATHS).collect();
        let rest = paths.len() - shown.len();
        let more = if rest > 0 {
            format!(" and {rest} more")
        } else {
            String::new()
        };
        format!(
            "{} included files could not be read ({}{more})",
            paths.len(),
            quoted_list(&shown)
        )
    };
    let them = if paths.len() == 1 { "it" } else { "they" };
    let message = if names.is_empty() {
        let (by, sets) = if paths.len() == 1 {
            ("it", "it sets")
        } else {
            ("them", "they set")
        };
        format!(
            "{files}; nothing this deck uses is left undefined by {by}, but whatever {sets} up \
             is missing from the check"
        )
    } else {
        format!("{files}; {them} would have defined {}", quoted_list(&names))
    };
    let project_file = missing.iter().any(|m| !is_absolute(&m.path));
    let severity = if names.is_empty() || !project_file {
        RULE.grade(Severity::Note)
    } else {
        RULE.grade(Severity::Warning)
    };
    let place = if paths.len() == 1 {
        "put the file where the path points (relative to this netlist) or correct the path"
    } else {
        "put the files where the paths point (relative to this netlist) or correct the paths"
    };
    let help = if names.is_empty() {
        place.to_string()
    } else {
        format!(
            "{place}; for a simulator's own library, describe the parts in kickback.toml \
             (`[parts.NAME]` with `kind` and ratings); checks that need these parts are skipped \
             until then"
        )
    };
    let mut finding = Finding::new(RULE, severity, first.span, message).with_help(help);
    for other in missing.iter().skip(1).take(MAX_LABELS) {
        finding = finding.with_label(other.span, "also not read");
    }
    for (name, users) in undefined.values().take(MAX_LABELS) {
        if let Some(user) = users.first() {
            finding = finding.with_label(user.span, format!("{} uses `{name}`", user.path));
        }
    }
    out.push(finding);
}

/// `C:\lib\x.lib`, `/usr/lib/x.lib`, `\\server\x.lib`.
fn is_absolute(path: &str) -> bool {
    let bytes = path.as_bytes();
    path.starts_with(['/', '\\'])
        || (bytes.len() > 2 && bytes[0].is_ascii_alphabetic() && bytes[1] == b':')
}

fn quoted_list(names: &[&str]) -> String {
    names
        .iter()
        .map(|n| format!("`{n}`"))
        .collect::<Vec<_>>()
        .join(", ")
}

#[cfg(test)]
mod tests {
    use crate::check::{check_str, CheckOptions};
    use crate::config::Config;
    use crate::diagnostic::{Finding, Severity};

    const DECK: &str = "diode\nV1 a 0 5\nR1 a b 1k\nD1 b 0 DFAST\n.end\n";

    fn run(config: &Config) -> Vec<Finding> {
        check_str("t.cir", DECK, config, &CheckOptions::default())
            .findings
            .into_iter()
            .filter(|f| f.rule == "model-missing")
            .collect()
    }

    #[test]
    fn undefined_model_is_an_error() {
        let found = run(&Config::default());
        assert_eq!(found.len(), 1);
        assert_eq!(found[0].severity, Severity::Error);
        assert!(found[0].message.contains("`DFAST`"), "{}", found[0].message);
    }

    #[test]
    fn configured_part_is_known() {
        let mut config = Config::default();
        config
            .parts
            .push(("dfa*".into(), crate::config::PartConfig::default()));
        assert!(run(&config).is_empty());
    }
}
