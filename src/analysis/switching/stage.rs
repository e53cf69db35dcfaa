//! What each transistor's stage is: a switch, an amplifier, or a stage kickback cannot place.
//!
//! A switch is driven between two levels — by a pulse source, a timer's output, a logic
//! output, a controlled source following one, or a pre-driver transistor that is itself
//! switched — and puts its load across a rail. An amplifier is biased into its active region
//! on purpose: a resistor from its collector or drain back to its base or gate, an amplifier
//! (controlled source) whose input senses its own terminals, a sine source at its base, a
//! divider at its base, emitter or source degeneration, or a follower whose base is held at a
//! level. Anything else is unknown. The switch rules judge switches only: an amplifier sits
//! in its active region by design, and for an unknown stage kickback says what it needs.
//!
//! A switching drive wins over every sign of biasing: a pulsed current sink (a pulse into a
//! base with an emitter resistor) still interrupts its load.

use super::gate_network::{self, GateDrive};
use super::nets::{self, NetMap};
use super::topology::{self, SwitchTopology};
use crate::analysis::facts::Stage;
use crate::analysis::stand_in;
use crate::analysis::states::Context;
use crate::circuit::{DeviceId, Kind, NetId, PinRole, UnknownPart};
use crate::netlist::Waveform;
use std::collections::VecDeque;

/// Parts walked from a base or gate toward a sine source at most (a coupling capacitor and
/// a resistor or two).
const MAX_SIGNAL_PARTS: usize = 4;

/// Takes a transistor for a switch, an amplifier or an unknown stage, with the reason in
/// words for `kickback report` and the notes.
pub fn classify(
    cx: &Context<'_>,
    nets: &NetMap,
    t: &SwitchTopology,
    drive: &GateDrive,
) -> (Stage, String) {
    let Some(d) = cx.circuit.devices().get(t.device) else {
        return (Stage::Unknown, "not found in the circuit".into());
    };
    let bjt = d.kind.is_bjt();
    let (base, emitter, collector) = if bjt {
        ("base", "emitter", "collector")
    } else {
        ("gate", "source", "drain")
    };
    if let (Some(driver), Some(control)) = (drive.driver, drive.control) {
        if let Some((upper, lower, n_type)) = topology::main_terminals(cx, t.device) {
            let output = if n_type { upper } else { lower };
            if drives_only_charge(cx, output, t.device) {
                return (
                    Stage::Unknown,
                    format!(
                        "its {collector} drives only capacitance and transistor terminals: a \
                         logic stage, not a switch that runs a load"
                    ),
                );
            }
        }
        return (Stage::Switch, switch_reason(cx, driver, control, base));
    }
    let Some(pin) = gate_network::control_pin(cx, t.device) else {
        return (Stage::Unknown, format!("its {base} is not connected"));
    };
    let Some((upper, lower, n_type)) = topology::main_terminals(cx, t.device) else {
        return (Stage::Unknown, "not a transistor kickback reads".into());
    };
    let (common, output) = if n_type {
        (lower, upper)
    } else {
        (upper, lower)
    };
    if pin == common {
        // An unused switch of a bridge, held off on purpose: the leg is still a switch.
        return (
            Stage::Switch,
            format!("its {base} is tied to its {emitter}: a switch held off"),
        );
    }
    // A resistor from a collector on the rail is a bias resistor (a follower), not feedback.
    let feedback = (nets::rail(cx, output).is_none())
        .then(|| two_terminal_between(cx, nets, pin, output, Kind::Resistor))
        .flatten();
    if let Some(r) = feedback {
        return (
            Stage::Amplifier,
            format!(
                "{collector}-to-{base} feedback through {}: biased into its active region",
                cx.name(r)
            ),
        );
    }
    if let Some(amp) = drive
        .driver
        .filter(|&a| gate_network::is_controlled_source(cx, a))
    {
        if senses(cx, nets, amp, &[upper, lower]) {
            return (
                Stage::Amplifier,
                format!(
                    "the output stage of {}, an amplifier whose input senses this \
                     transistor's own terminals (feedback)",
                    cx.name(amp)
                ),
            );
        }
    }
    if let Some((src, via)) = signal_source(cx, nets, pin) {
        let through = if via.is_empty() {
            String::new()
        } else {
            format!(
                " through {}",
                via.iter()
                    .map(|&v| cx.name(v))
                    .collect::<Vec<_>>()
                    .join(", ")
            )
        };
        return (
            Stage::Amplifier,
            format!(
                "a sine source, {}, drives its {base}{through}: a signal, not a switching drive",
                cx.name(src)
            ),
        );
    }
    if let Some((up, down)) = divider(cx, nets, pin) {
        return (
            Stage::Amplifier,
            format!(
                "its {base} is biased from the divider {}/{}",
                cx.name(up),
                cx.name(down)
            ),
        );
    }
    if nets::rail(cx, common).is_none() && !t.switched_is_source {
        if let Some(r) = degeneration(cx, nets, common) {
            return (
                Stage::Amplifier,
                format!("{emitter} degeneration through {}", cx.name(r)),
            );
        }
    }
    if let Some(amp) = drive
        .driver
        .filter(|&a| gate_network::is_controlled_source(cx, a))
    {
        return (
            Stage::Unknown,
            format!(
                "driven by {}, a controlled source whose output levels kickback cannot tell",
                cx.name(amp)
            ),
        );
    }
    if let Some(rail) = nets::rail(cx, pin) {
        let what = rail.supply.map_or_else(
            || "ground".to_string(),
            |s| format!("the DC source {}", cx.name(s)),
        );
        return (
            Stage::Unknown,
            format!("its {base} sits on {what}: a fixed level, not a switching drive"),
        );
    }
    if let Some(pre) = drive.driver {
        return (
            Stage::Unknown,
            format!(
                "driven by {}, which follows no pulse source, timer or logic output",
                cx.name(pre)
            ),
        );
    }
    if let Some((part, why)) = unknown_driver(cx, pin, t.device) {
        let what = match why {
            UnknownPart::Undefined => "whose model is defined nowhere kickback can see",
            UnknownPart::Pins(_) => "whose pins kickback cannot map",
            UnknownPart::CodeModel => "a mixed-signal code model whose output is not modelled",
        };
        return (
            Stage::Unknown,
            format!(
                "its {base} is driven by {}, {what}: its output levels are unknown",
                cx.name(part)
            ),
        );
    }
    if let Some((r, supply)) = fed_from_supply(cx, nets, pin) {
        return (
            Stage::Unknown,
            format!(
                "its {base} is fed from the DC source {} through {}: a fixed level, not a \
                 switching drive",
                cx.name(supply),
                cx.name(r)
            ),
        );
    }
    (
        Stage::Unknown,
        format!("no pulse source, timer, logic output or driver found at its {base}"),
    )
}

/// An unknown part (model missing, pins not mapped, a code model) on the gate's net or one
/// resistor away from it: the driver kickback would need, named so the note says what to add.
fn unknown_driver(cx: &Context<'_>, pin: NetId, own: DeviceId) -> Option<(DeviceId, UnknownPart)> {
    let direct = |net: NetId| {
        cx.circuit
            .devices_on(net)
            .iter()
            .filter(|&&(d, _)| d != own)
            .find_map(|&(d, _)| cx.circuit.unknown_part(d).map(|why| (d, why)))
    };
    direct(pin).or_else(|| {
        cx.circuit.devices_on(pin).iter().find_map(|&(r, _)| {
            let resistor = cx.circuit.devices().get(r)?.kind == Kind::Resistor;
            let far = cx.circuit.other_end(r, pin).filter(|_| resistor)?;
            direct(far)
        })
    })
}

/// True when nothing on the transistor's output net draws current from it: only capacitors
/// and other transistors' terminals (the complementary half of a logic inverter, the gates of
/// the next stage). A power switch always has a load there: a motor, coil, inductor or
/// resistor.
fn drives_only_charge(cx: &Context<'_>, output: NetId, own: DeviceId) -> bool {
    if nets::rail(cx, output).is_some() {
        return false;
    }
    let mut others = 0;
    for &(id, _) in cx.circuit.devices_on(output) {
        if id == own {
            continue;
        }
        match cx.circuit.devices().get(id).map(|d| d.kind) {
            Some(Kind::Capacitor) => {}
            Some(k) if k.is_switch_transistor() => {}
            _ => return false,
        }
        others += 1;
    }
    others > 0
}

fn switch_reason(cx: &Context<'_>, driver: DeviceId, control: DeviceId, base: &str) -> String {
    let what = |d: DeviceId| -> &'static str {
        match cx.circuit.devices().get(d).map(|x| x.kind) {
            Some(k) if k.is_timer() => "a timer's output",
            Some(Kind::LogicOutput) => "a logic output",
            Some(Kind::VoltageSource) => "a pulse source",
            Some(Kind::ControlledSource) => "a controlled source",
            Some(k) if k.is_switch_transistor() => "a pre-driver",
            _ => "a driver",
        }
    };
    if driver == control {
        format!(
            "its {base} is driven between two levels by {}, {}",
            cx.name(control),
            what(control)
        )
    } else {
        format!(
            "its {base} is driven by {}, {} that follows {}, {}",
            cx.name(driver),
            what(driver),
            cx.name(control),
            what(control)
        )
    }
}

/// A two-terminal part of `kind` with one end on `a` and the other on `b`.
fn two_terminal_between(
    cx: &Context<'_>,
    nets: &NetMap,
    a: NetId,
    b: NetId,
    kind: Kind,
) -> Option<DeviceId> {
    if a == b {
        return None;
    }
    nets.on(a).iter().find_map(|&(d, _)| {
        let dev = cx.circuit.devices().get(d)?;
        (dev.kind == kind && nets::other_end(cx, d, a) == Some(b)).then_some(d)
    })
}

/// True when a controlled source's control pins sit on one of `terminals`, or one resistor
/// away from one (the feedback of an amplifier wrapped around its output transistor).
fn senses(cx: &Context<'_>, nets: &NetMap, amp: DeviceId, terminals: &[NetId]) -> bool {
    let Some(d) = cx.circuit.devices().get(amp) else {
        return false;
    };
    [PinRole::CtrlPos, PinRole::CtrlNeg]
        .iter()
        .filter_map(|&r| d.pin(r))
        .filter(|&n| nets::rail(cx, n).is_none())
        .any(|n| {
            terminals.contains(&n)
                || nets.on(n).iter().any(|&(r, _)| {
                    cx.circuit
                        .devices()
                        .get(r)
                        .is_some_and(|x| x.kind == Kind::Resistor)
                        && nets::other_end(cx, r, n).is_some_and(|o| terminals.contains(&o))
                })
        })
}

/// A sine source reached from `pin` through capacitors, resistors and inductors (not across
/// rails), with the parts between.
fn signal_source(cx: &Context<'_>, nets: &NetMap, pin: NetId) -> Option<(DeviceId, Vec<DeviceId>)> {
    let mut seen: Vec<(NetId, usize, Option<DeviceId>)> = vec![(pin, 0, None)];
    let mut queue = VecDeque::from([(0usize, 0usize)]);
    while let Some((at, depth)) = queue.pop_front() {
        let net = seen.get(at)?.0;
        for &(device, _) in nets.on(net) {
            let Some(d) = cx.circuit.devices().get(device) else {
                continue;
            };
            if matches!(d.kind, Kind::VoltageSource | Kind::CurrentSource) && is_sine(cx, device) {
                let mut via = Vec::new();
                let mut i = at;
                while let Some(&(_, parent, Some(p))) = seen.get(i) {
                    via.push(p);
                    i = parent;
                }
                via.reverse();
                return Some((device, via));
            }
            if depth >= MAX_SIGNAL_PARTS || nets::rail(cx, net).is_some() {
                continue;
            }
            if !matches!(d.kind, Kind::Capacitor | Kind::Resistor | Kind::Inductor) {
                continue;
            }
            let Some(next) = nets::other_end(cx, device, net) else {
                continue;
            };
            // A sine source holds its net like a supply: step onto the rail it holds (never
            // onto ground or a supply, which every part touches), and never past it.
            let sine_rail = nets::rail(cx, next).map(|r| r.supply.is_some_and(|s| is_sine(cx, s)));
            if sine_rail == Some(false) || seen.iter().any(|&(n, _, _)| n == next) {
                continue;
            }
            seen.push((next, at, Some(device)));
            queue.push_back((seen.len() - 1, depth + 1));
        }
    }
    None
}

fn is_sine(cx: &Context<'_>, device: DeviceId) -> bool {
    cx.circuit
        .devices()
        .get(device)
        .and_then(|d| cx.netlist.elements.get(d.element))
        .and_then(|e| e.source.as_ref())
        .is_some_and(|s| matches!(s.wave, Waveform::Sin { .. }))
}

/// Two resistors from `pin` to two different rails: a bias divider (upper, lower).
fn divider(cx: &Context<'_>, nets: &NetMap, pin: NetId) -> Option<(DeviceId, DeviceId)> {
    let mut to_rails: Vec<(DeviceId, f64, NetId)> = nets
        .on(pin)
        .iter()
        .filter_map(|&(d, _)| {
            if cx.circuit.devices().get(d)?.kind != Kind::Resistor {
                return None;
            }
            let far = nets::other_end(cx, d, pin)?;
            let rail = nets::rail(cx, far)?;
            Some((d, rail.nominal, far))
        })
        .collect();
    to_rails.sort_by(|a, b| b.1.total_cmp(&a.1).then(a.0.cmp(&b.0)));
    let (first, last) = (to_rails.first()?, to_rails.last()?);
    (first.2 != last.2 && first.1 > last.1).then_some((first.0, last.0))
}

/// A resistor larger than a sense resistor from the emitter or source straight to a rail.
fn degeneration(cx: &Context<'_>, nets: &NetMap, common: NetId) -> Option<DeviceId> {
    nets.on(common).iter().find_map(|&(d, _)| {
        let dev = cx.circuit.devices().get(d)?;
        if dev.kind != Kind::Resistor {
            return None;
        }
        let r = stand_in::resistance(cx, dev)?;
        let far = nets::other_end(cx, d, common)?;
        (r > topology::SENSE_OHMS && nets::rail(cx, far).is_some()).then_some(d)
    })
}

/// A resistor from `pin` to a net a DC supply holds (not ground), and that supply.
fn fed_from_supply(cx: &Context<'_>, nets: &NetMap, pin: NetId) -> Option<(DeviceId, DeviceId)> {
    nets.on(pin).iter().find_map(|&(d, _)| {
        if cx.circuit.devices().get(d)?.kind != Kind::Resistor {
            return None;
        }
        let supply = nets::rail(cx, nets::other_end(cx, d, pin)?)?.supply?;
        (!is_sine(cx, supply)).then_some((d, supply))
    })
}
