//! `timer-control-unbypassed`: a 555's CTRL pin has no capacitor to ground. See
//! `rules/timer-control-unbypassed.md`.
//!
//! Quiet when CTRL is driven on purpose: anything on its net other than capacitors and other
//! timers' CTRL pins (a divider resistor, a source, a zener, a transistor) counts as a
//! deliberate drive.

use super::support::hygiene::{finding_at, is_ground, net_name, NetIndex};
use super::Rule;
use super::RuleContext;
use crate::circuit::{Kind, PinRole};
use crate::diagnostic::{Finding, Severity};

/// This rule's identity: its ID, the severities it gives and its page.
pub const RULE: Rule = Rule {
    id: "timer-control-unbypassed",
    default_severity: Severity::Note,
    grades: &[Severity::Note],
    summary: "A timer's control pin has no capacitor to ground",
    page: include_str!("../../rules/timer-control-unbypassed.md"),
    check: Some(check),
};
/// Common practice for the CTRL bypass capacitor.
const BYPASS_F: f64 = 10e-9;

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    if !cx.circuit.devices().iter().any(|d| d.kind.is_timer()) {
        return;
    }
    let index = NetIndex::new(cx);
    for (id, device) in cx.circuit.devices().iter().enumerate() {
        if !device.kind.is_timer() {
            continue;
        }
        let (Some(ctrl), Some(gnd)) = (device.pin(PinRole::Ctrl), device.pin(PinRole::Gnd)) else {
            continue;
        };
        if ctrl == gnd || is_ground(cx, ctrl) {
            continue;
        }
        let mut bypassed = false;
        let mut driven = false;
        for &(other, pin_index) in index.on(ctrl) {
            if other == id {
                continue;
            }
            let Some(d) = cx.circuit.devices().get(other) else {
                continue;
            };
            let role = d.pins.get(pin_index).map(|p| p.role);
            match d.kind {
                Kind::Capacitor => {
                    let far = d.pins.iter().map(|p| p.net).find(|&n| n != ctrl);
                    if far.is_some_and(|n| n == gnd || is_ground(cx, n)) {
                        bypassed = true;
                    }
                }
                k if k.is_timer() && role == Some(PinRole::Ctrl) => {}
                _ => driven = true,
            }
        }
        if bypassed || driven {
            continue;
        }
        let Some(element) = cx.netlist.elements.get(device.element) else {
            continue;
        };
        let c = net_name(cx, ctrl);
        let g = net_name(cx, gnd);
        out.push(
            finding_at(
                RULE,
                RULE.severity(),
                element,
                format!(
                    "CTRL of {} (net `{c}`) has no capacitor to ground: it is the tap of the \
                     internal divider that sets both thresholds, so supply ripple and switching \
                     noise on it move the thresholds and jitter the timing",
                    element.path
                ),
            )
            .with_help(format!(
                "add `CCTL_{} {c} {g} 10n` at the pin (10 nF is common practice)",
                element.name
            ))
            .with_value(
                "bypass_capacitance_suggested",
                BYPASS_F,
                "F",
                "common practice",
            ),
        );
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::rules::support::hygiene::testkit::Deck;

    #[test]
    fn bypassed_or_divided_is_quiet_open_fires() {
        let mut d = Deck::fan();
        assert!(d.run(check).is_empty());
        let cctl = d
            .netlist
            .elements
            .iter()
            .position(|e| e.name == "CCTL")
            .unwrap();
        let v12 = d.net("v12");
        d.device_mut(cctl).pins[1].net = v12;
        let found = d.run(check);
        assert_eq!(found.len(), 1);
        assert_eq!(found[0].severity, Severity::Note);
        d.r("RCTL", "ctl", "0", "10k", 10e3);
        assert!(d.run(check).is_empty());
    }
}
