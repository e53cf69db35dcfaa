//! `gate-floating`: a MOSFET gate or BJT base whose drive can let go, with no resistor holding it
//! at a defined level. See `rules/gate-floating.md` for the exact definition.
//!
//! The gate network is everything reached from the gate through resistors and inductive parts.
//! It is held when it reaches ground, a voltage source's terminal (a rail, a pulse source), the
//! switch's own source/emitter, an independent current source, or an output that is always
//! driven (a 555's OUT, another transistor, a controlled source, a part of unknown kind). It can float when the only drive
//! is a logic output (high-impedance during reset and while unpowered), or when the gate is
//! reached only through capacitors, diodes, switches or connectors, or by nothing at all.

use super::support::hygiene::{finding_at, net_name, shown, Trace, Tracer};
use super::Rule;
use super::RuleContext;
use crate::circuit::{Device, DeviceId, Kind, PinRole};
use crate::diagnostic::{Finding, Severity};

/// This rule's identity: its ID, the severities it gives and its page.
pub const RULE: Rule = Rule {
    id: "gate-floating",
    default_severity: Severity::Warning,
    grades: &[Severity::Warning],
    summary: "A gate or base whose driver can float has no pull resistor",
    page: include_str!("../../rules/gate-floating.md"),
    check: Some(check),
};
const SHOWN: usize = 4;

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    if !cx
        .circuit
        .devices()
        .iter()
        .any(|d| d.kind.is_switch_transistor())
    {
        return;
    }
    let tracer = Tracer::new(cx);
    for (id, device) in cx.circuit.devices().iter().enumerate() {
        if !device.kind.is_switch_transistor() {
            continue;
        }
        let (gate_role, source_role) = if device.kind.is_mos() {
            (PinRole::Gate, PinRole::Source)
        } else {
            (PinRole::Base, PinRole::Emitter)
        };
        let (Some(gate), Some(source)) = (device.pin(gate_role), device.pin(source_role)) else {
            continue;
        };
        // A gate alone on its net is `pin-unconnected`'s; a gate on its source is not floating.
        if gate == source || tracer.index.degree(gate) <= 1 {
            continue;
        }
        let trace = tracer.trace(gate, &[source]);
        // A current source (bias, or a current-output controlled source) sets the base current
        // at every instant: the base is driven, however odd that is for a gate.
        let fed = trace.blocked.iter().any(|&d| {
            cx.circuit
                .devices()
                .get(d)
                .is_some_and(|d| d.kind == Kind::CurrentSource)
        });
        let held = trace.is_driven() || trace.nets.contains(&source) || fed;
        let facts = cx.analysis.switches.iter().find(|s| s.device == id);
        // A stage biased into its active region, or one that follows another transistor that
        // is not switched (an output pair behind a driver stage), is not a switch whose drive
        // can let go: its base or gate network is a bias network.
        let linear = facts.is_some_and(|s| {
            s.stage == crate::analysis::Stage::Amplifier
                || (s.stage == crate::analysis::Stage::Unknown
                    && s.driver.as_ref().is_some_and(|d| {
                        d.control.is_none()
                            && cx
                                .circuit
                                .devices()
                                .get(d.device)
                                .is_some_and(|x| x.kind.is_switch_transistor())
                    }))
        });
        if linear {
            continue;
        }
        let analysis_says_float = facts
            .and_then(|s| s.driver.as_ref())
            .is_some_and(|d| d.can_float);
        let pulled = has_pull(&trace, source);
        if held && (pulled || !analysis_says_float) {
            continue;
        }
        // A part defined nowhere, or a gate network that reaches a net an expression reads or
        // a skipped line wires: what drives it is not known, so nothing is said.
        let unknown_driver = cx.circuit.unknown_part(id).is_some()
            || trace.nets.iter().any(|&n| {
                cx.circuit
                    .nets()
                    .get(n)
                    .is_some_and(|net| cx.netlist.is_sensed(&net.name))
            });
        if unknown_driver {
            continue;
        }
        if let Some(f) = report(cx, device, &trace, gate, source, analysis_says_float) {
            out.push(f);
        }
    }
}

/// A resistive path from the gate network to the switch's source or a fixed net.
fn has_pull(trace: &Trace, source: crate::circuit::NetId) -> bool {
    !trace.fixed.is_empty() || trace.nets.contains(&source)
}

fn report(
    cx: &RuleContext<'_>,
    device: &Device,
    trace: &Trace,
    gate: crate::circuit::NetId,
    source: crate::circuit::NetId,
    analysis_says_float: bool,
) -> Option<Finding> {
    let element = cx.netlist.elements.get(device.element)?;
    let mos = device.kind.is_mos();
    let (gate_word, source_word) = if mos {
        ("gate", "source")
    } else {
        ("base", "emitter")
    };
    let floaters: Vec<DeviceId> = trace.may_float.iter().map(|&(d, _)| d).collect();
    let why = if !floaters.is_empty() {
        format!(
            "is driven only by {} (a logic output: high-impedance during reset, while \
             unpowered or when tri-stated)",
            names(cx, &floaters)
        )
    } else if analysis_says_float {
        "is driven by an output that can let go (reset, tri-state or unpowered)".to_string()
    } else if !trace.blocked.is_empty() {
        format!(
            "is reached only through {} ({})",
            names(cx, &trace.blocked),
            blocked_reason(cx, &trace.blocked)
        )
    } else {
        "is driven by nothing".to_string()
    };
    let effect = if mos {
        "the gate can float: its charge drifts and the switch can sit half-on, dissipating in \
         its linear region"
    } else {
        "the base can float: leakage can bias the transistor partly on"
    };
    let g = net_name(cx, gate);
    let s = net_name(cx, source);
    let resistor = format!("RPD_{}", element.name);
    let pull = match device.kind {
        Kind::Pmos | Kind::Pnp => "pull-up",
        _ => "pull-down",
    };
    let mut finding = finding_at(
        RULE,
        RULE.severity(),
        element,
        format!(
            "the {gate_word} of {} (net `{g}`) {why}, and no resistor ties it to its \
             {source_word} (net `{s}`), so {effect}",
            element.path
        ),
    )
    .with_help(format!(
        "add a {pull} from {gate_word} to {source_word}, e.g. `{resistor} {g} {s} 10k` \
         (10 kΩ–100 kΩ is common practice)"
    ))
    .with_value("pull_resistance_suggested", 10e3, "Ω", "common practice");
    for &id in floaters.iter().chain(trace.blocked.iter()).take(SHOWN) {
        if let Some(e) = cx
            .circuit
            .devices()
            .get(id)
            .and_then(|d| cx.netlist.elements.get(d.element))
        {
            finding = finding.with_label(
                e.span,
                format!("{} is all that reaches the {gate_word}", e.path),
            );
        }
    }
    Some(finding)
}

fn names(cx: &RuleContext<'_>, ids: &[DeviceId]) -> String {
    let mut list: Vec<String> = ids.iter().take(SHOWN).map(|&d| shown(cx, d)).collect();
    list.dedup();
    list.join(", ")
}

fn blocked_reason(cx: &RuleContext<'_>, ids: &[DeviceId]) -> &'static str {
    let kind = |d: &DeviceId| cx.circuit.devices().get(*d).map(|x| x.kind);
    if ids.iter().all(|d| kind(d) == Some(Kind::Capacitor)) {
        "a capacitor passes no DC, so the level drifts"
    } else if ids.iter().any(|d| kind(d) == Some(Kind::Switch)) {
        "an open switch leaves the gate connected to nothing"
    } else if ids.iter().any(|d| kind(d).is_some_and(Kind::is_diode_like)) {
        "a diode conducts one way, so the gate can charge but not discharge"
    } else {
        "none of these holds a DC level"
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::rules::support::hygiene::testkit::Deck;

    fn mcu_drive(pull: bool) -> Deck {
        let mut d = Deck::new();
        d.v("V12", "v12", "0", 12.0);
        d.part(
            "XMCU",
            Kind::LogicOutput,
            "MCU_PIN",
            &[(PinRole::Out, "pin"), (PinRole::Gnd, "0")],
        );
        d.r("RG", "pin", "g", "100", 100.0);
        if pull {
            d.r("RPD", "g", "0", "100k", 100e3);
        }
        d.mos("M1", Kind::Nmos, "d", "g", "0");
        d.part(
            "XM",
            Kind::DcMotor,
            "MOTOR",
            &[(PinRole::Pos, "v12"), (PinRole::Neg, "d")],
        );
        d
    }

    #[test]
    fn logic_output_without_pull_down_fires() {
        let found = mcu_drive(false).run(check);
        assert_eq!(found.len(), 1, "{found:?}");
        assert!(found[0].message.contains("XMCU"), "{}", found[0].message);
        assert!(found[0]
            .help
            .as_deref()
            .unwrap_or("")
            .contains("`RPD_M1 g 0 10k`"));
    }

    #[test]
    fn pull_down_or_timer_drive_is_quiet() {
        assert!(mcu_drive(true).run(check).is_empty());
        let mut fan = Deck::fan();
        // Without its pull-down the 555's totem-pole output still holds the gate.
        let rpd = fan
            .netlist
            .elements
            .iter()
            .position(|e| e.name == "RPD")
            .unwrap();
        let g = fan.net("g");
        fan.device_mut(rpd).pins[1].net = g;
        assert!(fan.run(check).is_empty());
    }

    #[test]
    fn capacitor_coupled_gate_fires() {
        let mut d = Deck::new();
        d.pulse("VP", "p", "0", 5.0, 1e-4);
        d.c("CC", "p", "g", 1e-7);
        d.mos("M1", Kind::Nmos, "d", "g", "0");
        d.r("RL", "d", "0", "10", 10.0);
        let found = d.run(check);
        assert_eq!(found.len(), 1);
        assert!(found[0].message.contains("only through CC"));
    }
}
