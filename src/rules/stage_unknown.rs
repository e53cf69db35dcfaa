//! `stage-unknown`: a transistor runs an inductive load, but kickback could not tell whether
//! it switches it. See `rules/stage-unknown.md`.
//!
//! The switch rules judge switches only (see `analysis::switching::stage`). A transistor with
//! a winding in its collector or drain and no switching drive found could be a relay driver
//! whose controller is not in the netlist, or a linear coil driver: rather than guess, one note
//! says what kickback needs to judge it.

use super::support::switch::{device, finding_at, kind, label, load_device, name, NetIndex};
use super::Rule;
use super::RuleContext;
use crate::analysis::Stage;
use crate::circuit::{DeviceId, Kind, PinRole};
use crate::diagnostic::{Finding, Severity};

/// This rule's identity: its ID, the severities it gives and its page.
pub const RULE: Rule = Rule {
    id: "stage-unknown",
    default_severity: Severity::Note,
    grades: &[Severity::Note],
    summary: "A transistor runs an inductive load but its stage could not be told",
    page: include_str!("../../rules/stage-unknown.md"),
    check: Some(check),
};

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    for sw in &cx.analysis.switches {
        if sw.stage != Stage::Unknown || !sw.inductive {
            continue;
        }
        let Some(k) = kind(cx, sw.device) else {
            continue;
        };
        if gate_undriven(cx, sw.device) {
            continue;
        }
        let (base, emitter) = if k.is_bjt() {
            ("base", "emitter")
        } else {
            ("gate", "source")
        };
        let s = name(cx, sw.device);
        let load = load_device(cx, sw);
        let load_text = load.map_or_else(|| "an inductive load".to_string(), |l| name(cx, l));
        let message = format!(
            "{s} runs {load_text}, but kickback cannot tell whether it switches it: {}; \
             the switch checks (freewheel path, {base} drive, dissipation) were not run on it",
            sw.stage_reason
        );
        let Some(mut f) = finding_at(RULE, RULE.severity(), cx, sw.device, message) else {
            continue;
        };
        if let Some(l) = load {
            f = label(f, cx, l, "inductive load");
        }
        out.push(f.with_help(format!(
            "if {s} is a switch, put what drives it in the netlist: a PULSE source between its \
             {base} network and its {emitter} rail stands in for a controller pin, a timer's or \
             a driver's output; if it is a linear stage, nothing needs to change"
        )));
    }
}

/// True when nothing but capacitors (or nothing at all) meets the gate or base: the gate
/// floats, which is a finding of its own (`gate-floating`, `pin-unconnected`), and a note on
/// top would say the same twice.
fn gate_undriven(cx: &RuleContext<'_>, id: DeviceId) -> bool {
    let Some(d) = device(cx, id) else {
        return false;
    };
    let role = if d.kind.is_bjt() {
        PinRole::Base
    } else {
        PinRole::Gate
    };
    let Some(gate) = d.pin(role) else {
        return false;
    };
    let index = NetIndex::new(cx);
    index
        .on(gate)
        .iter()
        .filter(|&&(other, _)| other != id)
        .all(|&(other, _)| device(cx, other).is_some_and(|o| o.kind == Kind::Capacitor))
}
