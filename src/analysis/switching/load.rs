//! Loads: the on-state (peak) voltage across each load at each corner, its average `Vpk·D`
//! and effective voltage over the duty range, its current and stored energy.
//!
//! The effective voltage is the average when the PWM period is short against the branch's
//! τ = L/R (T < τ/3 at the lowest frequency: the current barely ripples, so the load sees the
//! mean); otherwise, or when τ or the frequency is unknown, the RMS value `Vpk·√D` (the
//! current follows each pulse and heating goes as RMS). RMS is never below the average, so the
//! unknown case errs toward flagging an overvoltage.

use super::drive::range_over;
use super::solves::ComponentSolves;
use crate::analysis::facts::{LoadFacts, Range};
use crate::analysis::stand_in;
use crate::analysis::states::{Context, Solved};
use crate::circuit::{DeviceId, Kind, PinRole, Rated};

/// The PWM period must be below τ divided by this for the average to stand for the load's
/// voltage (common practice).
pub const AVERAGE_TAU_RATIO: f64 = 3.0;

/// What a load's numbers are computed from.
pub struct LoadSetting<'a> {
    pub solves: &'a ComponentSolves,
    /// Per corner, the state in which the load is energised with the most current.
    pub conducting: &'a [usize],
    pub duty: Option<Range>,
    pub frequency_hz: Option<Range>,
    /// The series parts whose L and R set τ (the load itself at least).
    pub branch: &'a [DeviceId],
    pub switch: Option<DeviceId>,
    pub freewheel: Option<DeviceId>,
    pub driven_by: Option<DeviceId>,
}

/// Voltage across a load in a solve (magnitude).
pub fn across(cx: &Context<'_>, device: DeviceId, solved: &Solved) -> Option<f64> {
    Some(
        solved
            .pin_voltage(cx.circuit, device, PinRole::Pos, PinRole::Neg)?
            .abs(),
    )
}

/// Current through a load in a solve (magnitude); `None` when its resistance is a placeholder.
pub fn through(device: DeviceId, solved: &Solved) -> Option<f64> {
    let elements = solved.elements(device)?;
    if elements.assumed {
        return None;
    }
    Some(solved.current(elements.main?)?.abs())
}

pub fn load_facts(cx: &Context<'_>, device: DeviceId, setting: &LoadSetting<'_>) -> LoadFacts {
    let kind = cx
        .circuit
        .devices
        .get(device)
        .map_or(Kind::Unknown, |d| d.kind);
    let solves = setting.solves;
    let peak_v = range_over(solves, setting.conducting, &|_, s| across(cx, device, s));
    let current_a = range_over(solves, setting.conducting, &|_, s| through(device, s));
    let inductance_total = branch_inductance(cx, setting.branch);
    let time_constant_s = match (inductance_total, branch_resistance(cx, setting.branch)) {
        (Some(l), Some(r)) if r > 0.0 => Some(l / r),
        _ => None,
    };
    let duty = setting.duty.clone();
    let avg_v = match (&peak_v, &duty) {
        (Some(v), Some(d)) => Some(scaled(v, d, |d| d)),
        _ => None,
    };
    let period_short = match (time_constant_s, &setting.frequency_hz) {
        (Some(tau), Some(f)) if f.min > 0.0 => 1.0 / f.min < tau / AVERAGE_TAU_RATIO,
        _ => false,
    };
    let (effective_v, effective_is_average) = match (&peak_v, &duty) {
        (Some(v), Some(d)) if period_short => (Some(scaled(v, d, |d| d)), true),
        (Some(v), Some(d)) => (Some(scaled(v, d, f64::sqrt)), false),
        (Some(v), None) => (Some(v.clone()), false),
        _ => (None, false),
    };
    let stored_energy_j = match (inductance_total, &current_a) {
        (Some(l), Some(i)) => Some(0.5 * l * i.max * i.max),
        _ => None,
    };
    let data = cx.circuit.devices.get(device).map(|d| &d.data);
    LoadFacts {
        device,
        kind,
        rated_v: data.and_then(|d| d.get("rated_voltage")).cloned(),
        resistance: resistance_rated(cx, device),
        inductance: inductance_rated(cx, device),
        peak_v,
        avg_v,
        effective_v,
        effective_is_average,
        time_constant_s,
        current_a,
        duty,
        frequency_hz: setting.frequency_hz.clone(),
        stored_energy_j,
        switch: setting.switch,
        freewheel: setting.freewheel,
        driven_by: setting.driven_by,
    }
}

/// `v` scaled by `f(D)` over the duty range (both ends non-negative).
fn scaled(v: &Range, d: &Range, f: impl Fn(f64) -> f64) -> Range {
    let (lo, hi) = (d.min.clamp(0.0, 1.0), d.max.clamp(0.0, 1.0));
    Range {
        min: v.min * f(lo),
        max: v.max * f(hi),
        min_state: super::drive::with_duty(&v.min_state, d, false),
        max_state: super::drive::with_duty(&v.max_state, d, true),
    }
}

/// A part's inductance: `inductance` from its data, else an inductor's netlist value.
pub fn inductance_rated(cx: &Context<'_>, device: DeviceId) -> Option<Rated> {
    let d = cx.circuit.devices.get(device)?;
    if let Some(r) = d.data.get("inductance") {
        return Some(r.clone());
    }
    if d.kind != Kind::Inductor {
        return None;
    }
    let e = cx.netlist.elements.get(d.element)?;
    let value = e.value.and_then(|v| v.known()).filter(|v| *v > 0.0)?;
    Some(Rated {
        value,
        source: format!("the value of {} in the netlist", e.path),
    })
}

/// A load's winding resistance: stated, or derived from its rated voltage and current.
pub fn resistance_rated(cx: &Context<'_>, device: DeviceId) -> Option<Rated> {
    let d = cx.circuit.devices.get(device)?;
    if let Some(r) = d.data.get("resistance") {
        return Some(r.clone());
    }
    let value = stand_in::winding_resistance(cx, d)?;
    let rated = d.data.get("rated_voltage");
    let current = d
        .data
        .get("stall_current")
        .or_else(|| d.data.get("rated_current"));
    let source = match (rated, current) {
        (Some(v), Some(i)) => format!(
            "rated_voltage ({}) over {} ({})",
            v.source,
            if d.data.get("stall_current").is_some() {
                "stall_current"
            } else {
                "rated_current"
            },
            i.source
        ),
        _ => "the element's series resistance parameter".to_string(),
    };
    Some(Rated { value, source })
}

fn branch_inductance(cx: &Context<'_>, branch: &[DeviceId]) -> Option<f64> {
    let total: f64 = branch
        .iter()
        .filter_map(|&d| inductance_rated(cx, d))
        .map(|r| r.value)
        .sum();
    (total > 0.0).then_some(total)
}

/// Series resistance of the branch; `None` when a load part's winding resistance is unknown.
fn branch_resistance(cx: &Context<'_>, branch: &[DeviceId]) -> Option<f64> {
    let mut total = 0.0;
    for &id in branch {
        let d = cx.circuit.devices.get(id)?;
        total += match d.kind {
            Kind::Resistor => stand_in::resistance(cx, d)?,
            Kind::Inductor => stand_in::winding_resistance(cx, d).unwrap_or(0.0),
            k if k.is_load() => stand_in::winding_resistance(cx, d)?,
            _ => 0.0,
        };
    }
    Some(total)
}
