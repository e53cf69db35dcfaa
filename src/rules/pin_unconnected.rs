//! `pin-unconnected`: a part's pin (a transistor terminal, a pin of a kept subcircuit such as a
//! 555) sits on a net that nothing else touches. See `rules/pin-unconnected.md`.
//!
//! Some pins may be left open by design and are not reported: a 555's CTRL (the
//! `timer-control-unbypassed` note covers it) and DIS (unused when the timer is a Schmitt
//! trigger), a BJT's substrate; its RESET is `timer-reset-floating`'s. A pin of a part of
//! unknown kind on a net named as a no-connect is taken at its word.

use super::support::hygiene::{
    finding_at, is_no_connect_name, is_part, net_name, pin_label, wire_is_ground_or_global,
    wire_pins, NetIndex,
};
use super::Rule;
use super::RuleContext;
use crate::circuit::{Kind, PinRole};
use crate::diagnostic::{Finding, Severity};

/// This rule's identity: its ID, the severities it gives and its page.
pub const RULE: Rule = Rule {
    id: "pin-unconnected",
    default_severity: Severity::Warning,
    grades: &[Severity::Warning],
    summary: "A part pin sits on a net of its own",
    page: include_str!("../../rules/pin-unconnected.md"),
    check: Some(check),
};

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let index = NetIndex::new(cx);
    for (id, device) in cx.circuit.devices().iter().enumerate() {
        let Some(element) = cx.netlist.elements.get(device.element) else {
            continue;
        };
        // A part whose pins are not known (undefined, or ports that could not be mapped) is
        // left alone: which of its pins may stay open is what kickback does not know.
        if !is_part(device.kind, element) || cx.circuit.unknown_part(id).is_some() {
            continue;
        }
        let open: Vec<usize> = device
            .pins
            .iter()
            .enumerate()
            .filter(|(i, pin)| {
                // 0 V sources (ammeters) are wires: a pin that meets only an ammeter is open.
                let open = index.degree(pin.net) <= 2
                    && wire_pins(cx, &index, pin.net).len() == 1
                    && !wire_is_ground_or_global(cx, pin.net);
                // A vertical MOSFET's thermal nodes (after drain, gate, source and body) are
                // the junction and case temperatures: a probe point, often left alone.
                let thermal = matches!(device.kind, Kind::Nmos | Kind::Pmos) && *i >= 4;
                let excused = may_stay_open(device.kind, pin.role)
                    || thermal
                    || (device.kind == Kind::Unknown && is_no_connect_name(net_name(cx, pin.net)));
                open && !excused
            })
            .map(|(i, _)| i)
            .collect();
        let Some(&first) = open.first() else {
            continue;
        };
        let role = device.pins.get(first).map_or(PinRole::Other, |p| p.role);
        let pins: Vec<String> = open
            .iter()
            .map(|&i| {
                let net = device.pins.get(i).map_or("?", |p| net_name(cx, p.net));
                format!(
                    "{} (node {}, net `{net}`)",
                    pin_label(element, device, i),
                    i + 1
                )
            })
            .collect();
        let message = if pins.len() == 1 {
            format!(
                "{}'s {} is alone on its net: {}",
                element.path,
                pins.join(""),
                consequence(device.kind, role)
            )
        } else {
            format!(
                "{}'s {} are each alone on their nets: {}",
                element.path,
                pins.join(", "),
                consequence(device.kind, role)
            )
        };
        out.push(
            finding_at(RULE, RULE.severity(), element, message)
                .with_value(
                    "open_pins",
                    open.len() as f64,
                    "",
                    "counted from the netlist",
                )
                .with_help(
                    "wire the pin to the net it belongs on; an open node is usually a node name \
                     mistyped on this line",
                ),
        );
    }
}

fn may_stay_open(kind: Kind, role: PinRole) -> bool {
    match kind {
        Kind::Timer555 | Kind::Timer555Cmos => {
            matches!(role, PinRole::Reset | PinRole::Ctrl | PinRole::Dis)
        }
        Kind::Npn | Kind::Pnp => role == PinRole::Substrate,
        _ => false,
    }
}

/// What an open pin of this role does to the circuit (for the first open pin).
fn consequence(kind: Kind, role: PinRole) -> &'static str {
    match role {
        PinRole::Gnd | PinRole::Vcc => "the part has no supply and does nothing",
        PinRole::Trig | PinRole::Thr => {
            "the comparator input floats, so the timer fires or stalls at random"
        }
        PinRole::Out => "the output drives nothing",
        PinRole::Gate => "the gate floats, so the switch turns on or off at random",
        PinRole::Base => "the base floats, so the transistor never switches on reliably",
        PinRole::Drain | PinRole::Source | PinRole::Collector | PinRole::Emitter => {
            "the switch's current path is open, so its load never runs"
        }
        PinRole::Bulk => "the body floats; tie it to the source",
        _ if kind.is_load() => "the load's circuit is open, so it never runs",
        _ => "whatever the pin is for, it is not wired",
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::rules::support::hygiene::testkit::Deck;

    #[test]
    fn open_trigger_fires_open_control_does_not() {
        let mut d = Deck::fan();
        assert!(d.run(check).is_empty(), "{:?}", d.run(check));
        d = Deck::new();
        d.v("V12", "v12", "0", 12.0);
        d.timer(
            "XU1",
            ["0", "trg", "out", "v12", "ctl", "thr", "dis", "v12"],
        );
        d.r("RL", "out", "0", "1k", 1e3);
        d.c("CT", "thr", "0", 1e-9);
        let found = d.run(check);
        assert_eq!(found.len(), 1, "{found:?}");
        assert!(found[0]
            .message
            .contains("XU1's TRIG (node 2, net `trg`) is alone"));
    }
}
