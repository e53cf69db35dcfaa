//! Which findings describe the insides of a part's simulation model rather than the board.
//!
//! Op-amps, drivers and regulators come as behavioural macro-models: subcircuits built from
//! controlled sources (`E F G H B`), code models (`A`) and the transistors, diodes and tiny
//! parasitic inductors around them. Their internal nodes sit wherever the model's author put
//! them; a "starved gate" or an "unclamped 4 nH inductor" in there says nothing about the board.
//! Electrical rules therefore skip elements inside any instance whose subcircuit body holds a
//! controlled source or a code model; rules about the deck itself (undefined models, duplicate
//! names, ports that do not fit) still report there.

use crate::diagnostic::Finding;
use crate::netlist::FlatNetlist;
use std::collections::HashSet;

/// Rules that speak about the deck's text, which the model's author must fix too.
const DECK_RULES: &[&str] = &["model-missing", "name-duplicate", "part-pins"];

/// Instance paths (`XU1.XOPAMP`, lower-case) whose subcircuit body holds a controlled source
/// or a code model.
pub fn model_instances(netlist: &FlatNetlist) -> HashSet<String> {
    netlist
        .elements
        .iter()
        .filter(|e| {
            !e.instances.is_empty() && matches!(e.letter, 'E' | 'F' | 'G' | 'H' | 'B' | 'A')
        })
        .filter_map(|e| {
            e.path
                .rsplit_once('.')
                .map(|(parent, _)| parent.to_ascii_lowercase())
        })
        .collect()
}

/// True when the finding is about an element inside a behavioural part model.
pub fn inside_model(finding: &Finding, models: &HashSet<String>) -> bool {
    if models.is_empty() || DECK_RULES.contains(&finding.rule.as_str()) {
        return false;
    }
    let Some(path) = &finding.instance_path else {
        return false;
    };
    let path = path.to_ascii_lowercase();
    path.match_indices('.')
        .any(|(at, _)| models.contains(&path[..at]))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::diagnostic::Severity;
    use crate::source::Span;

    fn finding(rule: &str, path: Option<&str>) -> Finding {
        let mut f = Finding::new(rule, Severity::Error, Span::default(), "m");
        f.instance_path = path.map(str::to_string);
        f
    }

    #[test]
    fn findings_below_a_model_instance_are_inside() {
        let models: HashSet<String> = ["xu1.xopamp".to_string()].into_iter().collect();
        assert!(inside_model(
            &finding("gate-underdrive", Some("XU1.XOPAMP.M1")),
            &models
        ));
        assert!(inside_model(
            &finding("flyback-missing", Some("XU1.XOPAMP.XS.L1")),
            &models
        ));
        assert!(!inside_model(
            &finding("gate-underdrive", Some("XU1.M1")),
            &models
        ));
        assert!(!inside_model(
            &finding("gate-underdrive", Some("XU10.XOPAMP2.M1")),
            &models
        ));
        assert!(!inside_model(
            &finding("model-missing", Some("XU1.XOPAMP.M1")),
            &models
        ));
        assert!(!inside_model(&finding("gate-underdrive", None), &models));
    }
}
