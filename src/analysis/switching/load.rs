//! Loads: the on-state (peak) voltage across each load at each corner, its average and
//! effective voltage over the duty range, the ripple of its current, the duty that keeps it
//! within its rating, its current and stored energy.
//!
//! The average and effective voltages come from the closed-form periodic steady state of the
//! R-L branch ([`super::winding`]): `I_avg·R` and `I_rms·R`. Only when L/R or the PWM frequency
//! is unknown is the effective voltage taken as `Vpk·√D` (the current following each pulse,
//! never below the true value), and the facts say so.

use super::drive::range_over;
use super::solves::ComponentSolves;
use super::winding::{self, Winding};
use crate::analysis::facts::{EffectiveMethod, LoadFacts, Range, WindingDrive};
use crate::analysis::stand_in;
use crate::analysis::states::{Context, Solved};
use crate::circuit::{DeviceId, Kind, PinRole, Rated};

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
    /// Forward drop of the freewheel path at the load's current; `None` when there is no
    /// freewheel path (the current collapses at turn-off).
    pub freewheel_drop_v: Option<f64>,
    /// The on-state voltage with the switch saturated, when the switch now runs linear.
    pub full_on_v: Option<Range>,
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

/// The load's PWM numbers over the duty and frequency ranges.
struct Pwm {
    avg_v: Option<Range>,
    effective_v: Option<Range>,
    method: EffectiveMethod,
    ripple_a: Option<Range>,
    duty_limit: Option<f64>,
    drive: Option<WindingDrive>,
}

pub fn load_facts(cx: &Context<'_>, device: DeviceId, setting: &LoadSetting<'_>) -> LoadFacts {
    let kind = cx
        .circuit
        .devices()
        .get(device)
        .map_or(Kind::Unknown, |d| d.kind);
    let solves = setting.solves;
    let peak_v = range_over(solves, setting.conducting, &|_, s| across(cx, device, s));
    let current_a = range_over(solves, setting.conducting, &|_, s| through(device, s));
    let inductance_total = branch_inductance(cx, setting.branch);
    let branch_ohms = branch_resistance(cx, setting.branch);
    let time_constant_s = match (inductance_total, branch_ohms) {
        (Some(l), Some(r)) if r > 0.0 => Some(l / r),
        _ => None,
    };
    let data = cx.circuit.devices().get(device).map(|d| &d.data);
    let rated_v = data.and_then(|d| d.get("rated_voltage")).cloned();
    let resistance = resistance_rated(cx, device);
    // Ratings are judged on the load with its switch saturated when the switch now runs
    // linear: what it gets once the drive is fixed.
    let judged = setting.full_on_v.as_ref().or(peak_v.as_ref());
    let pwm = judged.map(|v| {
        pwm_numbers(
            v,
            setting,
            time_constant_s,
            resistance.as_ref().map(|r| r.value),
            branch_ohms,
            rated_v.as_ref().map(|r| r.value),
        )
    });
    let stored_energy_j = match (inductance_total, &current_a) {
        (Some(l), Some(i)) => Some(0.5 * l * i.max * i.max),
        _ => None,
    };
    let (avg_v, effective_v, effective_method, ripple_a, duty_limit, drive) = match pwm {
        Some(p) => (
            p.avg_v,
            p.effective_v,
            p.method,
            p.ripple_a,
            p.duty_limit,
            p.drive,
        ),
        None => (None, None, EffectiveMethod::Peak, None, None, None),
    };
    LoadFacts {
        device,
        kind,
        rated_v,
        resistance,
        inductance: inductance_rated(cx, device),
        peak_v,
        full_on_v: setting.full_on_v.clone(),
        avg_v,
        effective_v,
        effective_method,
        ripple_a,
        duty_limit,
        time_constant_s,
        current_a,
        duty: setting.duty.clone(),
        frequency_hz: setting.frequency_hz.clone(),
        stored_energy_j,
        switch: setting.switch,
        freewheel: setting.freewheel,
        driven_by: setting.driven_by,
        drive,
    }
}

/// Average, effective voltage, ripple and duty limit of a load whose on-state voltage is `v`.
fn pwm_numbers(
    v: &Range,
    setting: &LoadSetting<'_>,
    tau: Option<f64>,
    load_ohms: Option<f64>,
    branch_ohms: Option<f64>,
    rated: Option<f64>,
) -> Pwm {
    let Some(d) = setting.duty.as_ref() else {
        return Pwm {
            avg_v: None,
            effective_v: Some(v.clone()),
            method: EffectiveMethod::Peak,
            ripple_a: None,
            duty_limit: None,
            drive: None,
        };
    };
    let (d_lo, d_hi) = (d.min.clamp(0.0, 1.0), d.max.clamp(0.0, 1.0));
    let pwm = d_lo < 1.0 || d_hi < 1.0;
    let windings = match (tau, &setting.frequency_hz, load_ohms, branch_ohms) {
        (Some(tau), Some(f), Some(r), Some(total)) if f.min > 0.0 && r > 0.0 && total > 0.0 => {
            // The freewheel drop in volts across the load's own share of the branch.
            let off = setting.freewheel_drop_v.map_or(0.0, |vf| -vf * r / total);
            let at = |on: f64| Winding {
                on_v: on,
                off_v: off,
                tau_s: tau,
                freewheel: setting.freewheel_drop_v.is_some(),
            };
            Some((at(v.min), at(v.max), 1.0 / f.max, 1.0 / f.min, r))
        }
        _ => None,
    };
    let closed = windings.and_then(|(lo, hi, t_short, t_long, r)| {
        // The least effective voltage: lowest peak, lowest duty, shortest period; the most:
        // the other ends (the RMS rises with the duty and with the period).
        let least = winding::steady_state(&lo, d_lo, t_short)?;
        let most = winding::steady_state(&hi, d_hi, t_long)?;
        let least_mean = winding::steady_state(&lo, d_lo, t_long)?.mean_v;
        let most_mean = winding::steady_state(&hi, d_hi, t_short)?.mean_v;
        // Ripple peaks at D = ½ for a continuous current; take it at the duty ends and at ½
        // when the range holds it, at the longest period.
        let mut ripple: Option<Range> = None;
        let middle = (d_lo..=d_hi).contains(&0.5).then_some(0.5);
        for duty in [Some(d_lo), Some(d_hi), middle].into_iter().flatten() {
            let p = winding::steady_state(&hi, duty, t_long)?;
            let label = format!("at duty {:.0} %", duty * 100.0);
            match &mut ripple {
                Some(x) => x.include(p.ripple_v() / r, &label),
                None => ripple = Some(Range::point(p.ripple_v() / r, label)),
            }
        }
        let limit = rated.and_then(|rated| winding::duty_for_effective(&hi, t_long, rated));
        let drive = WindingDrive {
            winding: hi,
            duty: d_hi,
            period_s: t_long,
            load_ohms: r,
            state: super::drive::with_duty(&v.max_state, d, true),
        };
        Some((least, most, least_mean, most_mean, ripple, limit, drive))
    });
    let states = |value_min: f64, value_max: f64| Range {
        min: value_min,
        max: value_max,
        min_state: super::drive::with_duty(&v.min_state, d, false),
        max_state: super::drive::with_duty(&v.max_state, d, true),
    };
    match closed {
        Some((least, most, least_mean, most_mean, ripple, limit, drive)) if pwm => Pwm {
            avg_v: Some(states(least_mean.min(most_mean), least_mean.max(most_mean))),
            effective_v: Some(states(least.rms_v, most.rms_v)),
            method: EffectiveMethod::ClosedForm,
            ripple_a: ripple,
            duty_limit: limit,
            drive: Some(drive),
        },
        _ => {
            let method = if pwm {
                EffectiveMethod::RmsAssumed
            } else {
                EffectiveMethod::Peak
            };
            let limit = rated
                .filter(|_| pwm && v.max > 0.0)
                .map(|r| (r / v.max).min(1.0).powi(2));
            Pwm {
                avg_v: Some(states(v.min * d_lo, v.max * d_hi)),
                effective_v: Some(states(v.min * d_lo.sqrt(), v.max * d_hi.sqrt())),
                method,
                ripple_a: None,
                duty_limit: limit,
                drive: None,
            }
        }
    }
}

/// The branch current with the switch saturated, over the rail's corners: the rail less
/// `drop_v` (or less the drop across `switch_ohms`) over the branch's resistance. `None` when
/// a part of the branch has no fixed resistance (a diode, an unknown winding).
pub fn saturated_current(
    cx: &Context<'_>,
    branch: &[DeviceId],
    rail: &Range,
    drop_v: f64,
    switch_ohms: f64,
    who: &str,
) -> Option<Range> {
    for &id in branch {
        let k = cx.circuit.devices().get(id)?.kind;
        if !(k == Kind::Resistor || k.is_inductive() || k.is_load()) {
            return None;
        }
    }
    // A branch with no resistance of its own (a bridge leg across its partner) has no load
    // current to speak of.
    let own = branch_resistance(cx, branch)?;
    if own <= 0.0 {
        return None;
    }
    let r = own + switch_ohms.max(0.0);
    let at = |v: f64| ((v - drop_v) / r).max(0.0);
    Some(Range {
        min: at(rail.min),
        max: at(rail.max),
        min_state: format!("{}, {who} saturated", rail.min_state),
        max_state: format!("{}, {who} saturated", rail.max_state),
    })
}

/// A part's inductance: `inductance` from its data, else an inductor's netlist value.
pub fn inductance_rated(cx: &Context<'_>, device: DeviceId) -> Option<Rated> {
    let d = cx.circuit.devices().get(device)?;
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
    let d = cx.circuit.devices().get(device)?;
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
pub fn branch_resistance(cx: &Context<'_>, branch: &[DeviceId]) -> Option<f64> {
    let mut total = 0.0;
    for &id in branch {
        let d = cx.circuit.devices().get(id)?;
        total += match d.kind {
            Kind::Resistor => stand_in::resistance(cx, d)?,
            Kind::Inductor => stand_in::winding_resistance(cx, d).unwrap_or(0.0),
            k if k.is_load() => stand_in::winding_resistance(cx, d)?,
            _ => 0.0,
        };
    }
    Some(total)
}
