//! `name-duplicate`: two elements share one flattened name (case-insensitive). See
//! `rules/name-duplicate.md`.
//!
//! The finding points at the later line; the earlier one is labelled. When the two come from
//! different instance lines (two `X` lines with one name), those lines are the ones shown.

use super::support::hygiene::Once;
use super::Rule;
use super::RuleContext;
use crate::diagnostic::{Finding, Severity};
use crate::netlist::caseless_hash;
use crate::netlist::FlatElement;
use crate::source::Span;
use std::collections::HashSet;

/// This rule's identity: its ID, the severities it gives and its page.
pub const RULE: Rule = Rule {
    id: "name-duplicate",
    default_severity: Severity::Error,
    grades: &[Severity::Error],
    summary: "Two elements share one name",
    page: include_str!("../../rules/name-duplicate.md"),
    check: Some(check),
};

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let elements = &cx.netlist.elements;
    let pairs = duplicate_pairs(elements);
    let mut once = Once::default();
    let mut taken: Option<HashSet<String>> = None;
    for (first, later) in pairs {
        let Some(element) = elements.get(later) else {
            continue;
        };
        let Some(earlier) = elements.get(first) else {
            continue;
        };
        let (here, there, name, first_name) = clashing_lines(earlier, element);
        if !once.first(
            here,
            format!("{}:{}", there.start, name.to_ascii_lowercase()),
        ) {
            continue;
        }
        let names = taken.get_or_insert_with(|| {
            elements
                .iter()
                .map(|e| e.path.to_ascii_lowercase())
                .collect()
        });
        let prefix = element.path.len().saturating_sub(element.name.len());
        let scope = element.path.get(..prefix).unwrap_or("");
        let free = free_name(&name, scope, names);
        let mut finding = Finding::new(
            RULE,
            RULE.severity(),
            here,
            format!(
                "`{name}` is defined twice (SPICE names are case-insensitive): a simulator \
                 rejects the deck or keeps only one of them, and the other's connections are lost"
            ),
        )
        .with_label(there, format!("`{first_name}` is first defined here"))
        .with_help(format!("rename this one, e.g. to `{free}`"));
        if here == element.span {
            finding = finding.with_element(element.name.clone(), element.instance_path());
            finding.instances = element.instances.clone();
        }
        out.push(finding);
    }
}

/// `(first, later)` element indices for every element whose name an earlier one already has,
/// in element order. Sorting hashed names keeps this fast on very large decks.
fn duplicate_pairs(elements: &[FlatElement]) -> Vec<(usize, usize)> {
    let mut keys: Vec<(u64, usize)> = elements
        .iter()
        .enumerate()
        .map(|(i, e)| (caseless_hash(&e.path), i))
        .collect();
    keys.sort_unstable();
    let mut pairs = Vec::new();
    for run in keys.chunk_by(|a, b| a.0 == b.0).filter(|run| run.len() > 1) {
        // A run shares a key; names within it may still differ (a collision).
        for (n, &(_, later)) in run.iter().enumerate().skip(1) {
            let Some(name) = elements.get(later).map(|e| e.path.as_str()) else {
                continue;
            };
            let first = run.get(..n).unwrap_or(&[]).iter().find(|&&(_, i)| {
                elements
                    .get(i)
                    .is_some_and(|e| e.path.eq_ignore_ascii_case(name))
            });
            if let Some(&(_, first)) = first {
                pairs.push((first, later));
            }
        }
    }
    pairs.sort_unstable_by_key(|&(_, later)| later);
    pairs
}

/// The two lines that clash and the name they share: the element lines themselves when both
/// sit in the same instance chain, else the first pair of instance lines that differ.
fn clashing_lines(earlier: &FlatElement, later: &FlatElement) -> (Span, Span, String, String) {
    let depth = earlier.instances.len().min(later.instances.len());
    for level in 0..depth {
        let (Some(a), Some(b)) = (earlier.instances.get(level), later.instances.get(level)) else {
            break;
        };
        if a.span != b.span {
            return (b.span, a.span, b.name.clone(), a.name.clone());
        }
    }
    (
        later.span,
        earlier.span,
        later.name.clone(),
        earlier.name.clone(),
    )
}

/// `R1` → `R1A`, `R1B`... (`rg` → `rga`) the first that no element in the same scope uses.
fn free_name(name: &str, scope: &str, taken: &HashSet<String>) -> String {
    let lower = name.chars().any(|c| c.is_ascii_lowercase())
        && !name.chars().any(|c| c.is_ascii_uppercase());
    for suffix in 'A'..='Z' {
        let suffix = if lower {
            suffix.to_ascii_lowercase()
        } else {
            suffix
        };
        let candidate = format!("{name}{suffix}");
        if !taken.contains(&format!("{scope}{candidate}").to_ascii_lowercase()) {
            return candidate;
        }
    }
    format!("{name}_2")
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::diagnostic::InstanceStep;
    use crate::rules::support::hygiene::testkit::Deck;
    use crate::source::FileId;

    #[test]
    fn second_definition_is_flagged_with_a_free_name() {
        let mut d = Deck::new();
        d.r("R1", "a", "0", "1k", 1e3);
        d.r("R1A", "a", "b", "1k", 1e3);
        d.r("r1", "b", "0", "1k", 1e3);
        let found = d.run(check);
        assert_eq!(found.len(), 1);
        assert_eq!(found[0].span, d.netlist.elements[2].span);
        assert_eq!(found[0].labels[0].span, d.netlist.elements[0].span);
        assert!(found[0].help.as_deref().unwrap_or("").contains("`r1b`"));
    }

    #[test]
    fn duplicate_instances_point_at_the_instance_lines() {
        let mut d = Deck::new();
        let step = |start| InstanceStep {
            name: "XA".into(),
            span: Span::new(FileId(0), start, start + 5),
        };
        for (i, start) in [(0, 1000), (1, 2000)] {
            d.r(&format!("XA.R{i}"), "a", "0", "1k", 1e3);
            let e = d.netlist.elements.last_mut().unwrap();
            e.path = "XA.R1".into();
            e.name = "R1".into();
            e.span = Span::new(FileId(0), 500, 520);
            e.instances = vec![step(start)];
        }
        let found = d.run(check);
        assert_eq!(found.len(), 1);
        assert_eq!(found[0].span.start, 2000);
        assert!(found[0].message.contains("`XA`"));
    }
}
