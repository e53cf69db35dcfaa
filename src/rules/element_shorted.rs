//! `element-shorted`: every terminal of an element sits on one net, so it carries no current and
//! does nothing. See `rules/element-shorted.md`.
//!
//! Voltage sources are left to `supply-shorted`, where a shorted source is an error.

use super::support::hygiene::{finding_at, net_name, Once};
use super::Rule;
use super::RuleContext;
use crate::circuit::Kind;
use crate::diagnostic::{Finding, Severity};
use crate::netlist::FlatElement;

/// This rule's identity: its ID, the severities it gives and its page.
pub const RULE: Rule = Rule {
    id: "element-shorted",
    default_severity: Severity::Warning,
    grades: &[Severity::Warning],
    summary: "Both terminals of an element sit on one net",
    page: include_str!("../../rules/element-shorted.md"),
    check: Some(check),
};

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let mut once = Once::default();
    for device in cx.circuit.devices() {
        if matches!(device.kind, Kind::VoltageSource | Kind::Coupling) || device.pins.len() < 2 {
            continue;
        }
        let Some(net) = device.pins.first().map(|p| p.net) else {
            continue;
        };
        if device.pins.iter().any(|p| p.net != net) {
            continue;
        }
        let Some(element) = cx.netlist.elements.get(device.element) else {
            continue;
        };
        let name = net_name(cx, net);
        let local = local_nets(cx, element);
        let mut finding = if local || element.instances.is_empty() {
            if !once.first(element.span, "") {
                continue;
            }
            finding_at(
                RULE,
                RULE.severity(),
                element,
                format!(
                    "{} has all {} terminals on net `{name}`: it carries no current and does \
                     nothing in the circuit",
                    element.path,
                    device.pins.len()
                ),
            )
            .with_help(
                "a node name on this line is probably a typo: connect each terminal to the net \
                 it belongs on, or delete the element",
            )
        } else {
            // The element's nodes come in through ports: the instance line joins them.
            let Some(step) = element.instances.last() else {
                continue;
            };
            let mut f = Finding::new(
                RULE,
                RULE.severity(),
                step.span,
                format!(
                    "instance {} connects both ends of {} to net `{name}`: inside this instance \
                     it carries no current and does nothing",
                    step.name, element.path
                ),
            )
            .with_element(element.name.clone(), element.instance_path())
            .with_label(
                element.span,
                format!("{} sits between two ports", element.name),
            )
            .with_help("give the two ports different nets on the instance line");
            f.instances = element.instances.clone();
            f
        };
        finding = finding.with_value(
            "terminals",
            device.pins.len() as f64,
            "",
            "from the element's nodes",
        );
        out.push(finding);
    }
}

/// True when the element's nets are written on its own line: nets of its own instance (prefixed
/// by the instance path), ground or `.global` nets. Otherwise they come in through ports and the
/// instance line joins them.
fn local_nets(cx: &RuleContext<'_>, element: &FlatElement) -> bool {
    let prefix_len = element.path.len().saturating_sub(element.name.len());
    let Some(prefix) = element.path.get(..prefix_len) else {
        return true;
    };
    let named_here = |node: &String| {
        node.get(..prefix.len())
            .is_some_and(|head| node.len() > prefix.len() && head.eq_ignore_ascii_case(prefix))
            || cx
                .config
                .analysis
                .ground
                .iter()
                .any(|g| g.eq_ignore_ascii_case(node))
            || node == "0"
            || cx
                .netlist
                .globals
                .iter()
                .any(|g| g.eq_ignore_ascii_case(node))
    };
    prefix.is_empty() || element.nodes.iter().all(named_here)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::rules::support::hygiene::testkit::Deck;

    #[test]
    fn resistor_on_one_net_fires_but_not_a_source() {
        let mut d = Deck::new();
        d.v("V1", "a", "a", 5.0);
        d.r("R1", "b", "b", "1k", 1e3);
        d.r("R2", "a", "b", "1k", 1e3);
        let found = d.run(check);
        assert_eq!(found.len(), 1);
        assert!(found[0]
            .message
            .starts_with("R1 has all 2 terminals on net `b`"));
    }
}
