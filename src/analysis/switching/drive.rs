//! Gate drive and switching: which solved states are the switch's on and off states, its
//! on-state V_GS / V_BE and base current, off-state V_GS, V_DS on, current, region, duty and
//! frequency of its drive, and conduction loss.
//!
//! The on state is *found*, not assumed: the switch's control input (the pulse source, timer
//! or logic output its gate network leads back to) is solved at both levels, and the level
//! that enhances the switch more (V_GS or V_BE toward conduction, averaged over the other
//! inputs and corners) is its on level. That covers N- and P-channel parts and inverting
//! pre-drivers alike. When the switch has a bridge partner with a drive of its own, on states
//! also hold the partner off (the states with both on belong to shoot-through, not to the
//! switch's normal on state). Within a corner, the on state with the most current stands for
//! that corner (in an H-bridge the other leg decides whether current flows at all).

use super::gate_network::GateDrive;
use super::solves::{ComponentSolves, SolvedState};
use super::topology::SwitchTopology;
use crate::analysis::dc::{BjtRegion, MosRegion};
use crate::analysis::facts::Range;
use crate::analysis::stand_in;
use crate::analysis::states::{Context, Corner, Solved};
use crate::circuit::{DeviceId, PinRole};

/// Hot-die factor on Rds(on) for conduction loss (common practice).
pub const HOT_DIE_FACTOR: f64 = 1.5;
/// Forward drop of a bootstrap diode when estimating a bootstrapped gate (common practice).
pub const BOOTSTRAP_DIODE_DROP_V: f64 = 0.7;
/// Base-emitter voltage of a conducting silicon junction (common practice).
const BJT_VBE_ON_V: f64 = 0.7;
/// Below this on-state current a region is not worth reporting (the switch carries nothing).
const REGION_CURRENT_A: f64 = 1e-3;

/// Which solved states are on and off for one switch.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct OnOff {
    /// Indices into [`ComponentSolves::states`] of solved on states.
    pub on: Vec<usize>,
    pub off: Vec<usize>,
    /// Per corner, the on state with the most current.
    pub conducting: Vec<usize>,
    /// The control level that turns the switch on (`None`: no control input in the component).
    pub on_high: Option<bool>,
}

/// +1 for N-type parts, −1 for P-type: multiplies voltages and currents into the sense of
/// normal conduction.
pub fn polarity(t: &SwitchTopology) -> f64 {
    if t.n_type {
        1.0
    } else {
        -1.0
    }
}

fn control_and_common(cx: &Context<'_>, device: DeviceId) -> Option<(PinRole, PinRole)> {
    let d = cx.circuit.devices().get(device)?;
    Some(if d.kind.is_mos() {
        (PinRole::Gate, PinRole::Source)
    } else {
        (PinRole::Base, PinRole::Emitter)
    })
}

/// Physical V_GS (MOS) or V_BE (BJT) in a solve.
pub fn drive_voltage(cx: &Context<'_>, device: DeviceId, solved: &Solved) -> Option<f64> {
    let (ctrl, common) = control_and_common(cx, device)?;
    solved.pin_voltage(cx.circuit, device, ctrl, common)
}

/// Physical V_DS (MOS) or V_CE (BJT) in a solve.
pub fn channel_voltage(cx: &Context<'_>, device: DeviceId, solved: &Solved) -> Option<f64> {
    let d = cx.circuit.devices().get(device)?;
    let (hi, lo) = if d.kind.is_mos() {
        (PinRole::Drain, PinRole::Source)
    } else {
        (PinRole::Collector, PinRole::Emitter)
    };
    solved.pin_voltage(cx.circuit, device, hi, lo)
}

/// Main current in the sense of normal conduction.
pub fn conduction(t: &SwitchTopology, solved: &Solved) -> Option<f64> {
    let main = solved.elements(t.device)?.main?;
    Some(polarity(t) * solved.current(main)?)
}

fn enhancement(cx: &Context<'_>, t: &SwitchTopology, solved: &Solved) -> Option<f64> {
    Some(polarity(t) * drive_voltage(cx, t.device, solved)?)
}

/// The control level of `control` that enhances the switch more, when it is an input here.
pub fn on_level(
    cx: &Context<'_>,
    t: &SwitchTopology,
    control: Option<DeviceId>,
    solves: &ComponentSolves,
) -> Option<bool> {
    let control = control.filter(|c| solves.inputs.contains(c))?;
    let (mut high, mut low) = ((0.0, 0usize), (0.0, 0usize));
    for (s, solved) in solves.ok() {
        if let Some(e) = enhancement(cx, t, solved) {
            let acc = if s.state.is_high(control) {
                &mut high
            } else {
                &mut low
            };
            acc.0 += e;
            acc.1 += 1;
        }
    }
    if high.1 == 0 || low.1 == 0 {
        return None;
    }
    Some(high.0 / high.1 as f64 >= low.0 / low.1 as f64)
}

/// On and off states of a switch. `partner` is the bridge partner's control input and the
/// level that turns the partner on.
pub fn on_off(
    t: &SwitchTopology,
    control: Option<DeviceId>,
    on_high: Option<bool>,
    partner: Option<(DeviceId, bool)>,
    solves: &ComponentSolves,
) -> OnOff {
    let mut out = OnOff {
        on_high,
        ..OnOff::default()
    };
    let partner = partner.filter(|(p, _)| Some(*p) != control && solves.inputs.contains(p));
    // A switching input whose level could not be told apart because the states of one level
    // have no trustworthy solve: which states are on is not known, so none is published.
    let undecided = on_high.is_none()
        && control.is_some_and(|c| solves.inputs.contains(&c))
        && solves.states.iter().any(|s| s.solved.is_none());
    if undecided {
        return out;
    }
    for (i, s) in solves.states.iter().enumerate() {
        if s.solved.is_none() {
            continue;
        }
        match (control, on_high) {
            (Some(c), Some(level)) => {
                if s.state.is_high(c) == level {
                    out.on.push(i);
                } else {
                    out.off.push(i);
                }
            }
            _ => out.on.push(i),
        }
    }
    if let Some((p, partner_on_high)) = partner {
        let held_off: Vec<usize> = out
            .on
            .iter()
            .copied()
            .filter(|&i| solves.states[i].state.is_high(p) != partner_on_high)
            .collect();
        if !held_off.is_empty() {
            out.on = held_off;
        }
    }
    for corner in Corner::ALL {
        let best = out
            .on
            .iter()
            .copied()
            .filter(|&i| solves.states[i].state.corner == corner)
            .filter_map(|i| {
                let solved = solves.states[i].solved.as_ref()?;
                Some((i, conduction(t, solved)?))
            })
            .fold(None, |best: Option<(usize, f64)>, (i, c)| match best {
                Some((_, b)) if b >= c => best,
                _ => Some((i, c)),
            });
        if let Some((i, _)) = best {
            out.conducting.push(i);
        }
    }
    out
}

/// A range of `f` over the given states.
pub fn range_over(
    solves: &ComponentSolves,
    states: &[usize],
    f: &dyn Fn(&SolvedState, &Solved) -> Option<f64>,
) -> Option<Range> {
    let samples: Vec<(f64, &str)> = states
        .iter()
        .filter_map(|&i| {
            let s = solves.states.get(i)?;
            let solved = s.solved.as_ref()?;
            Some((f(s, solved)?, s.label.as_str()))
        })
        .collect();
    Range::from_samples(samples)
}

/// The drive numbers of a switch.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct DriveNumbers {
    pub vgs_on_v: Option<Range>,
    pub vgs_off_v: Option<Range>,
    pub base_current_a: Option<Range>,
    pub vds_on_v: Option<Range>,
    pub current_a: Option<Range>,
    pub rds_on_ohm: Option<Range>,
    /// On-state conduction loss before the duty factor.
    pub on_loss_w: Option<Range>,
    pub linear_region: bool,
    /// The gate sits above the upper rail by at least the threshold in every on state.
    pub drive_above_rail: bool,
}

pub fn numbers(
    cx: &Context<'_>,
    t: &SwitchTopology,
    drive: &GateDrive,
    states: &OnOff,
    solves: &ComponentSolves,
    current_known: bool,
) -> DriveNumbers {
    let device = t.device;
    let Some(d) = cx.circuit.devices().get(device) else {
        return DriveNumbers::default();
    };
    let is_mos = d.kind.is_mos();
    let sign = polarity(t);
    let vt = stand_in::mos_threshold(&d.data);
    let k = stand_in::mos_gain(&d.data);
    let mut out = DriveNumbers {
        vgs_on_v: range_over(solves, &states.on, &|_, s| drive_voltage(cx, device, s)),
        vgs_off_v: range_over(solves, &states.off, &|_, s| drive_voltage(cx, device, s)),
        ..DriveNumbers::default()
    };
    if let Some(boot) = drive.bootstrap {
        // The DC solve cannot see a pump; the gate rides the bootstrap capacitor, charged from
        // its feed through the diode.
        let estimate = |s: &SolvedState, solved: &Solved| -> Option<f64> {
            let feed = solved
                .voltage(boot.feed)
                .or_else(|| cx.fixed_voltage(boot.feed, &s.state))?;
            let solved_vgs = drive_voltage(cx, device, solved)?;
            Some(solved_vgs.max(sign * (feed - BOOTSTRAP_DIODE_DROP_V)))
        };
        out.vgs_on_v = range_over(solves, &states.on, &estimate);
    }
    if !is_mos {
        // Read in the same states as V_CE and the current: an on state in which something
        // else (a second input, the other leg) holds the transistor off has no base current
        // and no collector current, and mixing it with another state's V_CE contradicts.
        out.base_current_a = range_over(solves, &states.conducting, &|_, s| {
            let main = s.elements(device)?.main?;
            Some(sign * s.op.control_current(main)?)
        });
    }
    out.vds_on_v = range_over(solves, &states.conducting, &|_, s| {
        Some(sign * channel_voltage(cx, device, s)?)
    });
    if current_known {
        out.current_a = range_over(solves, &states.conducting, &|_, s| conduction(t, s));
    }
    if is_mos {
        out.rds_on_ohm = range_over(solves, &states.conducting, &|_, s| {
            let main = s.elements(device)?.main?;
            (s.op.mos_region(main)? == MosRegion::Triode)
                .then(|| triode_resistance(k, vt, sign * drive_voltage(cx, device, s)?))
                .flatten()
        });
    }
    if current_known {
        out.on_loss_w = range_over(solves, &states.conducting, &|_, s| {
            let main = s.elements(device)?.main?;
            let i = conduction(t, s)?;
            let v = sign * channel_voltage(cx, device, s)?;
            if is_mos {
                match s.op.mos_region(main)? {
                    MosRegion::Triode => {
                        let r = triode_resistance(k, vt, sign * drive_voltage(cx, device, s)?)?;
                        Some(i * i * r * HOT_DIE_FACTOR)
                    }
                    MosRegion::Saturation => Some((v * i).abs()),
                    MosRegion::Cutoff => Some(0.0),
                }
            } else {
                Some((v * i).abs())
            }
        });
    }
    out.linear_region = states.conducting.iter().any(|&i| {
        let Some(s) = solves.states.get(i).and_then(|s| s.solved.as_ref()) else {
            return false;
        };
        let Some(main) = s.elements(device).and_then(|e| e.main) else {
            return false;
        };
        let carries = conduction(t, s).is_some_and(|c| c > REGION_CURRENT_A);
        let linear = if is_mos {
            s.op.mos_region(main) == Some(MosRegion::Saturation)
        } else {
            s.op.bjt_region(main) == Some(BjtRegion::Active)
        };
        carries && linear
    });
    out.drive_above_rail = !states.on.is_empty()
        && states.on.iter().all(|&i| {
            let Some(s) = solves.states.get(i).and_then(|s| s.solved.as_ref()) else {
                return false;
            };
            let upper = if t.n_type {
                if is_mos {
                    PinRole::Drain
                } else {
                    PinRole::Collector
                }
            } else if is_mos {
                PinRole::Source
            } else {
                PinRole::Emitter
            };
            let ctrl = if is_mos { PinRole::Gate } else { PinRole::Base };
            let needed = if is_mos { vt } else { BJT_VBE_ON_V };
            s.pin_voltage(cx.circuit, device, ctrl, upper)
                .is_some_and(|v| sign * v >= needed)
        });
    out
}

/// Channel resistance of the square law in the triode region at small V_DS: 1/(k·(V_GS − V_T)).
pub fn triode_resistance(k: f64, vt: f64, vgs: f64) -> Option<f64> {
    let overdrive = vgs - vt;
    (k > 0.0 && overdrive > 0.0).then(|| 1.0 / (k * overdrive))
}

/// Duty (fraction of the period at the higher level) and frequency of a switching input.
pub fn input_timing(
    cx: &Context<'_>,
    timers: &super::Timers<'_>,
    input: DeviceId,
) -> (Option<Range>, Option<Range>) {
    let name = cx.name(input).to_string();
    if cx.is_pulse_source(input) {
        let spec = cx
            .circuit
            .devices()
            .get(input)
            .and_then(|d| cx.netlist.elements.get(d.element))
            .and_then(|e| e.source.as_ref());
        let from = format!("the PULSE of {name}");
        let duty = spec
            .and_then(|s| s.duty_high())
            .map(|d| Range::point(d, from.clone()));
        let freq = spec
            .and_then(|s| s.frequency())
            .map(|f| Range::point(f, from.clone()));
        return (duty, freq);
    }
    match timers.get(&input) {
        Some(timer) => {
            let divided = format!("{name} divides its trigger frequency");
            let duty = match timer.divided_duty {
                Some(d) => Some(Range::point(d, divided.clone())),
                None => timer.duty.clone(),
            };
            let freq = match timer.divided_frequency_hz {
                Some(f) => Some(Range::point(f, divided)),
                None => timer.frequency_hz.clone(),
            };
            (duty, freq)
        }
        None => (None, None),
    }
}

/// The fraction of time a switch is on, from its control input's duty and on level.
pub fn switch_duty(input_duty: Option<Range>, on_high: bool) -> Option<Range> {
    let d = input_duty?;
    if on_high {
        return Some(d);
    }
    Some(Range {
        min: 1.0 - d.max,
        max: 1.0 - d.min,
        min_state: d.max_state,
        max_state: d.min_state,
    })
}

/// `range` scaled by the duty range: min × D.min, max × D.max (both non-negative).
pub fn times_duty(range: &Range, duty: &Range) -> Range {
    Range {
        min: range.min * duty.min,
        max: range.max * duty.max,
        min_state: with_duty(&range.min_state, duty, false),
        max_state: with_duty(&range.max_state, duty, true),
    }
}

/// A state label with the duty extreme it was taken at, when the duty varies.
pub fn with_duty(state: &str, duty: &Range, highest: bool) -> String {
    if duty.min == duty.max {
        return state.to_string();
    }
    if highest {
        format!("{state}; at the highest duty ({})", duty.max_state)
    } else {
        format!("{state}; at the lowest duty ({})", duty.min_state)
    }
}
