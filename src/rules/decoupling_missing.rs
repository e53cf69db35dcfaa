//! `decoupling-missing`: an IC (a device with VCC and GND pins: a 555, a logic output with
//! supply pins) has no capacitor directly across those two nets. See
//! `rules/decoupling-missing.md`.
//!
//! A netlist carries no placement, so one capacitor across the pair counts for every IC on it.

use super::support::hygiene::{between, finding_at, net_name, wire_pins, NetIndex};
use super::Rule;
use super::RuleContext;
use crate::circuit::{Kind, NetId, PinRole};
use crate::diagnostic::{Finding, Severity};
use std::collections::HashMap;

/// This rule's identity: its ID, the severities it gives and its page.
pub const RULE: Rule = Rule {
    id: "decoupling-missing",
    default_severity: Severity::Warning,
    grades: &[Severity::Warning],
    summary: "An IC has no capacitor across its supply pins",
    page: include_str!("../../rules/decoupling-missing.md"),
    check: Some(check),
};
/// Common practice: a 100 nF ceramic at the supply pins.
const DECOUPLING_F: f64 = 100e-9;

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let is_ic = |k: Kind| k.is_timer() || k == Kind::LogicOutput;
    if !cx.circuit.devices().iter().any(|d| is_ic(d.kind)) {
        return;
    }
    let index = NetIndex::new(cx);
    // Many ICs share one rail pair; look each pair up once.
    let mut decoupled: HashMap<(NetId, NetId), bool> = HashMap::new();
    for device in cx.circuit.devices().iter().filter(|d| is_ic(d.kind)) {
        let (Some(vcc), Some(gnd)) = (device.pin(PinRole::Vcc), device.pin(PinRole::Gnd)) else {
            continue;
        };
        if vcc == gnd {
            continue;
        }
        let key = (vcc.min(gnd), vcc.max(gnd));
        let has_cap = *decoupled
            .entry(key)
            .or_insert_with(|| capacitor_across(cx, &index, vcc, gnd));
        if has_cap {
            continue;
        }
        let Some(element) = cx.netlist.elements.get(device.element) else {
            continue;
        };
        let v = net_name(cx, vcc);
        let g = net_name(cx, gnd);
        let why = if device.kind.is_timer() {
            "each output transition draws a short current spike from the supply, which dips \
             the rail at the pins and can retrigger or reset the timer"
        } else {
            "its switching current pulls the supply at its pins down and upsets its logic levels"
        };
        let extra = if device.kind == Kind::Timer555 {
            "; a bipolar 555 switching a load also wants about 10 µF nearby"
        } else {
            ""
        };
        out.push(
            finding_at(
                RULE,
                RULE.severity(),
                element,
                format!(
                    "{} ({}) has no capacitor across its supply pins VCC (net `{v}`) and GND \
                     (net `{g}`): {why}",
                    element.path, device.kind
                ),
            )
            .with_help(format!(
                "add `CDEC_{} {v} {g} 100n` right at the pins (100 nF ceramic is common \
                 practice{extra})",
                element.name
            ))
            .with_value("decoupling_suggested", DECOUPLING_F, "F", "common practice"),
        );
    }
}

/// A capacitor from the supply pin's node to the ground pin's node; 0 V sources (ammeters in
/// the supply lines) are wires.
fn capacitor_across(cx: &RuleContext<'_>, index: &NetIndex<'_>, vcc: NetId, gnd: NetId) -> bool {
    if !between(cx, index, vcc, gnd, |k| k == Kind::Capacitor).is_empty() {
        return true;
    }
    wire_pins(cx, index, vcc).iter().any(|&(id, _)| {
        cx.circuit.devices().get(id).is_some_and(|d| {
            d.kind == Kind::Capacitor
                && d.pins.len() == 2
                && d.pins.iter().any(|p| cx.circuit.same_wire(p.net, vcc))
                && d.pins.iter().any(|p| cx.circuit.same_wire(p.net, gnd))
        })
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::rules::support::hygiene::testkit::Deck;

    #[test]
    fn cap_across_supply_counts_in_either_order() {
        let mut d = Deck::fan();
        assert!(d.run(check).is_empty());
        let cdec = d
            .netlist
            .elements
            .iter()
            .position(|e| e.name == "CDEC")
            .unwrap();
        d.device_mut(cdec).pins.swap(0, 1);
        assert!(d.run(check).is_empty());
        let other = d.net("elsewhere");
        d.device_mut(cdec).pins[0].net = other;
        let found = d.run(check);
        assert_eq!(found.len(), 1);
        assert!(found[0]
            .help
            .as_deref()
            .unwrap_or("")
            .contains("`CDEC_XU1 v12 0 100n`"));
    }
}
