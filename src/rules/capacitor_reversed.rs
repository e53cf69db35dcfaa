//! `capacitor-reversed`: a polarized capacitor whose positive terminal (its first node) sits
//! below its negative one in some state. See `rules/capacitor-reversed.md`.

use super::support::switch::{finding_at, label, name, net_name, NetIndex};
use super::units::format_si;
use super::Rule;
use super::RuleContext;
use crate::analysis::CapacitorFacts;
use crate::circuit::PinRole;
use crate::diagnostic::{Finding, Severity};

/// This rule's identity: its ID, the severities it gives and its page.
pub const RULE: Rule = Rule {
    id: "capacitor-reversed",
    default_severity: Severity::Error,
    grades: &[Severity::Error],
    summary: "A polarized capacitor is reverse-biased in some state",
    page: include_str!("../../rules/capacitor-reversed.md"),
    check: Some(check),
};
/// Reverse bias tolerated before it counts (from memory: aluminium electrolytics stand a
/// fraction of a volt of reverse bias; below this is solver and diode-drop noise).
const TOLERATED_V: f64 = 0.5;

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let index = NetIndex::new(cx);
    for facts in &cx.analysis.capacitors {
        out.extend(finding(cx, &index, facts));
    }
}

fn finding(cx: &RuleContext<'_>, index: &NetIndex, facts: &CapacitorFacts) -> Option<Finding> {
    let id = facts.device;
    let d = cx.circuit.devices().get(id)?;
    let polarized = d.data.get("polarized").filter(|p| p.value != 0.0)?.clone();
    let v = facts.voltage_v.min;
    if v >= -TOLERATED_V {
        return None;
    }
    let c = name(cx, id);
    let pos = d
        .pin(PinRole::Pos)
        .or_else(|| d.pins.first().map(|p| p.net))?;
    let neg = d
        .pin(PinRole::Neg)
        .or_else(|| d.pins.get(1).map(|p| p.net))?;
    let message = format!(
        "{c} is polarized, and its positive terminal on {} sits {} below its negative terminal \
         on {} ({}): reverse-biased, an electrolytic heats, leaks and can vent or burst",
        net_name(cx, pos),
        format_si(-v, "V"),
        net_name(cx, neg),
        facts.voltage_v.min_state
    );
    let mut f = finding_at(RULE, RULE.severity(), cx, id, message)?;
    for net in [pos, neg] {
        if let Some(s) = index.supply_on(cx, net) {
            f = label(
                f,
                cx,
                s.device,
                &format!("holds {} at {}", net_name(cx, net), format_si(s.max, "V")),
            );
        }
    }
    let help = if facts.voltage_v.max > TOLERATED_V {
        format!(
            "the voltage across {c} changes sign between states ({} to {}): use a non-polarized              capacitor",
            format_si(v, "V"),
            format_si(facts.voltage_v.max, "V")
        )
    } else {
        format!(
            "turn {c} round: its positive terminal (the first node) to {}, its negative to {}",
            net_name(cx, neg),
            net_name(cx, pos)
        )
    };
    Some(
        f.with_help(help)
            .with_value("voltage", v, "V", "computed")
            .with_value("polarized", polarized.value, "", polarized.source),
    )
}
