//! Shared pieces of the timer rules: the finding skeleton for a device, labels, names, ratings
//! with their provenance, and the wording of states and ranges.

use crate::analysis::{part_values, Range, TimerFacts};
use crate::circuit::{DeviceId, Kind, Rated};
use crate::netlist::FlatElement;
use crate::rules::units::{format_si, sig3};
use crate::rules::RuleContext;

pub fn element<'a>(cx: &RuleContext<'a>, id: DeviceId) -> Option<&'a FlatElement> {
    cx.netlist
        .elements
        .get(cx.circuit.devices().get(id)?.element)
}

pub fn kind(cx: &RuleContext<'_>, id: DeviceId) -> Option<Kind> {
    cx.circuit.devices().get(id).map(|d| d.kind)
}

/// The element's path as the user reads it (`XDRV.U1`, or `U1` at top level).
pub fn name(cx: &RuleContext<'_>, id: DeviceId) -> String {
    element(cx, id).map_or_else(|| format!("device {id}"), |e| e.path.clone())
}

/// Findings and labels on device lines are built the same way for every rule family.
pub use super::switch::{finding_at, label};

/// A timer rating with its provenance, or the kind's documented default.
pub fn rated_or(cx: &RuleContext<'_>, id: DeviceId, key: &str, bipolar: f64, cmos: f64) -> Rated {
    let device = cx.circuit.devices().get(id);
    if let Some(r) = device.and_then(|d| d.data.get(key)) {
        return r.clone();
    }
    let kind = device.map_or(Kind::Timer555, |d| d.kind);
    Rated {
        value: if kind == Kind::Timer555Cmos {
            cmos
        } else {
            bipolar
        },
        source: format!("built-in default for {kind} (from memory)"),
    }
}

/// ` (XRV1 wiper at 0 %)`, or nothing for a circuit with a single state.
pub fn at_state(state: &str) -> String {
    if state.is_empty() || state == "the steady state" {
        String::new()
    } else {
        format!(" ({state})")
    }
}

/// `4.2 V` or `4.2–5.1 V`.
pub fn range_text(range: &Range, unit: &str) -> String {
    let (lo, hi) = (format_si(range.min, unit), format_si(range.max, unit));
    if lo == hi {
        hi
    } else {
        format!("{lo} to {hi}")
    }
}

/// `90 %`.
pub fn percent(fraction: f64) -> String {
    format!("{} %", sig3(fraction * 100.0))
}

/// A device's resistance as the analysis reads it (resistor value or pot track).
pub fn ohms_of(cx: &RuleContext<'_>, id: DeviceId) -> Option<f64> {
    part_values::resistance(cx.netlist, cx.circuit.devices().get(id)?)
}

/// A capacitor's value as the analysis reads it.
pub fn farads_of(cx: &RuleContext<'_>, id: DeviceId) -> Option<f64> {
    part_values::capacitance(cx.netlist, cx.circuit.devices().get(id)?)
}

pub fn is_pot(cx: &RuleContext<'_>, id: DeviceId) -> bool {
    kind(cx, id) == Some(Kind::Potentiometer)
}

pub fn is_resistor(cx: &RuleContext<'_>, id: DeviceId) -> bool {
    kind(cx, id) == Some(Kind::Resistor)
}

pub fn is_diode(cx: &RuleContext<'_>, id: DeviceId) -> bool {
    kind(cx, id).is_some_and(Kind::is_diode_like)
}

/// Share of the trigger period a one-shot's pulse may fill before its capacitor has too little
/// time to reset (common practice): `duty-overrun`'s threshold, which `trigger-overlap`'s fix
/// also keeps to.
pub const ONE_SHOT_MAX_SHARE: f64 = 0.9;

/// The part that sets a one-shot's pulse: a pot in its charge path, else its largest resistor.
pub fn timing_part(cx: &RuleContext<'_>, t: &TimerFacts) -> Option<DeviceId> {
    t.charge_path
        .iter()
        .copied()
        .find(|&p| is_pot(cx, p))
        .or_else(|| {
            t.charge_path
                .iter()
                .copied()
                .filter(|&p| is_resistor(cx, p))
                .max_by(|a, b| {
                    ohms_of(cx, *a)
                        .unwrap_or(0.0)
                        .total_cmp(&ohms_of(cx, *b).unwrap_or(0.0))
                })
        })
}
