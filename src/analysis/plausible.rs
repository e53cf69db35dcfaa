//! Whether a solved state means anything: its numbers must stay inside what its sources can
//! drive, and must not rest on a transistor gain that is only assumed.
//!
//! A network of resistors, diodes and transistors is passive: no node can leave the interval
//! of its independent voltage sources (ground included) except by what its current sources
//! push through its resistors. A solve outside that interval, widened by a margin, says the
//! model is incomplete, not that the board is: a linear controlled source with no limit, an
//! ideal inductor taken as a short across a stiff rail. Such a state becomes
//! [`DcError::Implausible`]: its numbers never reach a fact, and the sub-network gets one
//! note that names the cause.
//!
//! Two refinements keep real circuits solvable:
//! - An inductor with no series resistance, switched across a rail by a pulse drive, is a
//!   current ramp, not a short: over the on-time `t_on` its current rises by `V·t_on/L`
//!   (V = L·di/dt). Where the DC short would carry more than that, the inductor is solved as a
//!   short whose current is limited to the ramp's peak, and the state's label says so. An
//!   inductor with a resistor in series of its own (a winding written as R plus L) keeps its
//!   DC current: repeated pulses settle there whatever the first pulse reached.
//! - A BJT whose current gain is only a built-in default (no `hfe_min`, no `BF`) is solved
//!   again at the ends of the plausible range [`BETA_LOW`]–[`BETA_HIGH`]; a state that changes
//!   across that range is not used.

use super::dc::{DcError, SourceHull};
use super::partition::{Component, Fixed};
use super::stand_in;
use super::states::{Context, Solved, State};
use crate::circuit::{DeviceId, Kind};
use crate::netlist::Waveform;
use std::collections::BTreeMap;

/// Lowest current gain of a small-signal NPN or PNP whose gain is not stated (from memory:
/// the minimum hFE of general-purpose parts lies between about 40 and 100 at their test
/// current, and falls near saturation).
pub const BETA_LOW: f64 = 50.0;
/// Highest current gain of such a part (from memory: high-gain grades reach 400–800).
pub const BETA_HIGH: f64 = 400.0;
/// Margin beyond the sources' interval allowed for numerics, in volts, plus
/// [`MARGIN_FRACTION`] of the interval.
const MARGIN_V: f64 = 0.5;
const MARGIN_FRACTION: f64 = 0.05;
/// Controlled sources may multiply the sources' reach by their gain, up to this factor;
/// beyond it a solve is taken as an unbounded source running away.
const MAX_GAIN_REACH: f64 = 10.0;
/// Loop resistance below which an ideal inductor's DC current is taken as a short: less than
/// the winding of any motor, relay or solenoid in a small drive (common practice: windings
/// and wiring are tenths of an ohm and more).
const SHORT_LOOP_OHMS: f64 = 0.1;
/// Two solves at the ends of the gain range agree when every node moves less than this many
/// volts plus [`AGREE_FRACTION`] of the sources' interval, and every BJT's collector current
/// less than [`AGREE_CURRENT_FRACTION`] of itself plus [`AGREE_CURRENT_A`].
const AGREE_V: f64 = 0.25;
const AGREE_FRACTION: f64 = 0.03;
const AGREE_CURRENT_FRACTION: f64 = 0.1;
const AGREE_CURRENT_A: f64 = 1e-4;

/// How a component is stamped apart from its stand-ins' defaults.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Variant {
    /// Current gain for every BJT whose gain is only assumed.
    pub beta: Option<f64>,
    /// Ideal inductors solved as shorts limited to their ramp's peak current, in amperes.
    pub ramps: BTreeMap<DeviceId, f64>,
}

/// Solves a component in a state and checks the result (see the module notes).
pub fn solve(cx: &Context<'_>, component: &Component, state: &State) -> Result<Solved, DcError> {
    let built = cx.build(component, state);
    let hull = built.network.source_hull();
    let mut solved = built.solve_in(cx)?;
    let mut variant = Variant::default();
    let span = hull.hi - hull.lo;
    let ideal = ideal_inductor_currents(cx, component, &solved);
    if !ideal.is_empty() {
        match on_time(cx, component, state) {
            // Switched: over the on-time the current ramps by V·t_on/L from where it started
            // (zero at the first pulse); a DC current beyond that ramp is never reached.
            Some((t_on, drive)) => {
                let mut notes = Vec::new();
                for &(device, current) in &ideal {
                    let Some(l) = inductance(cx, device) else {
                        continue;
                    };
                    let peak = span * t_on / l;
                    // A winding written as a resistor in series with the inductor settles to
                    // its DC current over repeated pulses: the ramp of the first pulse is only
                    // a bound where nothing but the inductor's missing resistance limits.
                    if current.abs() <= peak || series_ohms(cx, device) >= SHORT_LOOP_OHMS {
                        continue;
                    }
                    variant.ramps.insert(device, peak);
                    notes.push(format!(
                        "{} (no series resistance) taken as a current ramp to {} over {}'s {} \
                         on-time (I = V·t/L at {}), not a DC short",
                        cx.name(device),
                        si(peak, "A"),
                        cx.name(drive),
                        si(t_on, "s"),
                        si(span, "V")
                    ));
                }
                if !variant.ramps.is_empty() {
                    solved = cx.build_variant(component, state, &variant).solve_in(cx)?;
                    solved.notes = notes;
                }
            }
            // Not switched: a DC short is what it is, unless nothing but the inductor's
            // missing resistance limits the current.
            None => {
                let limit = span / SHORT_LOOP_OHMS;
                let shorts: Vec<(DeviceId, f64)> = ideal
                    .into_iter()
                    .filter(|(_, i)| limit > 0.0 && i.abs() > limit)
                    .collect();
                if !shorts.is_empty() {
                    return Err(short_error(cx, component, state, &shorts));
                }
            }
        }
    }
    check_hull(cx, component, state, &variant, &hull, &solved)?;
    check_gain(cx, component, state, &hull, &solved)?;
    Ok(solved)
}

/// Stamps a device the way `variant` asks, when it asks for anything about this device.
pub fn stamp(
    cx: &Context<'_>,
    device: DeviceId,
    variant: &Variant,
    network: &mut super::dc::Network,
    node_of: &mut dyn FnMut(crate::circuit::NetId, &mut super::dc::Network) -> super::dc::Node,
) -> Option<stand_in::DeviceElements> {
    let d = cx.circuit.devices.get(device)?;
    use crate::circuit::PinRole;
    if let Some(&limit) = variant.ramps.get(&device) {
        let a = node_of(d.pin(PinRole::Pos)?, network);
        let b = node_of(d.pin(PinRole::Neg)?, network);
        let main = network.add_current_limited_resistor(a, b, stand_in::MIN_OHMS, limit);
        return Some(stand_in::DeviceElements {
            main: Some(main),
            ..Default::default()
        });
    }
    let beta = variant.beta.filter(|_| gain_assumed(cx, device))?;
    let c = node_of(d.pin(PinRole::Collector)?, network);
    let b = node_of(d.pin(PinRole::Base)?, network);
    let e = node_of(d.pin(PinRole::Emitter)?, network);
    let mut params = stand_in::bjt_params(d.kind, &d.data);
    params.beta_f = beta;
    let main = network.add_bjt(c, b, e, params);
    Some(stand_in::DeviceElements {
        main: Some(main),
        ..Default::default()
    })
}

/// True for a BJT whose forward gain is only a built-in default.
pub fn gain_assumed(cx: &Context<'_>, device: DeviceId) -> bool {
    let Some(d) = cx.circuit.devices.get(device) else {
        return false;
    };
    d.kind.is_bjt()
        && d.data.get("hfe_min").is_none()
        && d.data.get("bf").is_none_or(|r| {
            crate::diagnostic::Provenance::of_source(&r.source)
                == crate::diagnostic::Provenance::Assumed
        })
}

/// Inductors with no series resistance that carry current, with that current.
fn ideal_inductor_currents(
    cx: &Context<'_>,
    component: &Component,
    solved: &Solved,
) -> Vec<(DeviceId, f64)> {
    component
        .devices
        .iter()
        .copied()
        .filter(|&d| {
            cx.circuit.devices.get(d).is_some_and(|x| {
                x.kind == Kind::Inductor && stand_in::winding_resistance(cx, x).is_none()
            })
        })
        .filter_map(|d| {
            let i = solved.current(solved.elements(d)?.main?)?;
            (i.is_finite() && i != 0.0).then_some((d, i))
        })
        .collect()
}

/// Resistance of the resistors wired in series with an inductor through nets that join only
/// the two of them: the winding resistance a deck writes as a resistor of its own.
fn series_ohms(cx: &Context<'_>, inductor: DeviceId) -> f64 {
    let Some(d) = cx.circuit.devices.get(inductor) else {
        return 0.0;
    };
    let mut seen = vec![inductor];
    let mut ohms = 0.0;
    for pin in &d.pins {
        let Some(chain) = cx.circuit.series_chain(pin.net, inductor) else {
            continue;
        };
        for &part in &chain.devices {
            if seen.contains(&part) {
                continue;
            }
            seen.push(part);
            let Some(p) = cx.circuit.devices.get(part) else {
                continue;
            };
            if p.kind == Kind::Resistor {
                ohms += stand_in::resistance(cx, p)
                    .filter(|r| r.is_finite())
                    .unwrap_or(0.0);
            }
        }
    }
    ohms
}

fn inductance(cx: &Context<'_>, device: DeviceId) -> Option<f64> {
    let d = cx.circuit.devices.get(device)?;
    d.data
        .value("inductance")
        .or_else(|| cx.netlist.elements.get(d.element)?.value?.known())
        .filter(|l| l.is_finite() && *l > 0.0)
}

/// The longest time a pulse input of the component holds the level it has in `state`, with
/// that input: the conservative on-time of whatever it switches.
fn on_time(cx: &Context<'_>, component: &Component, state: &State) -> Option<(f64, DeviceId)> {
    cx.inputs(component)
        .into_iter()
        .filter_map(|input| {
            let d = cx.circuit.devices.get(input)?;
            let spec = cx.netlist.elements.get(d.element)?.source.as_ref()?;
            let Waveform::Pulse {
                rise,
                fall,
                width,
                period,
                ..
            } = spec.wave
            else {
                return None;
            };
            let high = width + 0.5 * (rise + fall);
            let t = if state.is_high(input) {
                high
            } else {
                period - high
            };
            (t.is_finite() && t > 0.0 && period > 0.0).then_some((t, input))
        })
        .fold(None, |best: Option<(f64, DeviceId)>, x| match best {
            Some(b) if b.0 >= x.0 => Some(b),
            _ => Some(x),
        })
}

/// The supply of the component's highest fixed net in a state, by name.
fn stiffest_rail(cx: &Context<'_>, component: &Component, state: &State) -> Option<String> {
    let mut best: Option<(f64, DeviceId)> = None;
    for &device in &component.devices {
        for pin in &cx.circuit.devices[device].pins {
            let Some(Some(Fixed::Source { device: src, .. })) = cx.partition.fixed.get(pin.net)
            else {
                continue;
            };
            let v = cx.fixed_voltage(pin.net, state).unwrap_or(0.0).abs();
            if best.is_none_or(|(b, _)| v > b) {
                best = Some((v, *src));
            }
        }
    }
    best.map(|(_, d)| cx.name(d).to_string())
}

fn short_error(
    cx: &Context<'_>,
    component: &Component,
    state: &State,
    shorts: &[(DeviceId, f64)],
) -> DcError {
    let rail = stiffest_rail(cx, component, state).unwrap_or_else(|| "its supply".into());
    let (device, current) = shorts[0];
    DcError::Implausible {
        cause: format!(
            "{} has no series resistance and no switching drive with a known on-time, so the DC \
             solve takes it as a short across {rail} ({} flows); its numbers are not used: state \
             its winding resistance (`Rser=` on its line, or `resistance = …` in [parts])",
            cx.name(device),
            si(current.abs(), "A")
        ),
    }
}

/// Every node inside the sources' reach (see the module notes).
fn check_hull(
    cx: &Context<'_>,
    component: &Component,
    state: &State,
    variant: &Variant,
    hull: &SourceHull,
    solved: &Solved,
) -> Result<(), DcError> {
    let span = hull.hi - hull.lo;
    let pushed = hull.current * hull.largest_ohms;
    let margin = MARGIN_V + MARGIN_FRACTION * span;
    let reach = hull.lo.abs().max(hull.hi.abs()) * hull.gain.min(MAX_GAIN_REACH);
    let (lo, hi) = if hull.controlled {
        (-reach - margin, reach + margin)
    } else {
        (hull.lo - margin, hull.hi + margin)
    };
    let outside = |voltage: &dyn Fn(crate::circuit::NetId) -> Option<f64>, extra: f64| {
        solved
            .nodes
            .keys()
            .filter_map(|&net| Some((net, voltage(net)?)))
            .filter(|(_, v)| !v.is_finite() || *v < lo - extra || *v > hi + extra)
            .max_by(|a, b| a.1.abs().total_cmp(&b.1.abs()))
    };
    let Some((net, v)) = outside(&|net| solved.voltage(net), pushed) else {
        return Ok(());
    };
    if hull.current > 0.0 {
        // A stand-in's current source (a timer pin's bias current) can push a net held by
        // nothing else anywhere: that is the stand-in, not the board. What the netlist's own
        // sources drive without it must still stay inside their reach.
        let built = cx.build_variant(component, state, variant);
        let own: Vec<_> = component
            .devices
            .iter()
            .filter(|&&d| cx.circuit.devices[d].kind == Kind::CurrentSource)
            .filter_map(|d| built.devices.get(d)?.main)
            .collect();
        let quiet = built.network.without_current_sources(&own);
        if let Ok(op) = cx.solve_network(&quiet) {
            let voltage = |net| op.voltage(*solved.nodes.get(&net)?);
            if outside(&voltage, 0.0).is_none() {
                return Ok(());
            }
        }
    }
    let node = &cx.circuit.nets[net].name;
    let sources = format!("{} … {}", si(hull.lo, "V"), si(hull.hi, "V"));
    let cause = match largest_gain_source(cx, component) {
        Some((name, gain)) => format!(
            "net {node} solves to {} while the sources reach only {sources}: {name} (gain {}) \
             is a linear controlled source with no output limit, so this state's numbers are \
             not used; give it its supply limits (a behavioural source clamped to the rails, or \
             the part's own model)",
            si(v, "V"),
            si(gain, "")
        ),
        None => format!(
            "net {node} solves to {} while the sources reach only {sources}, which resistors, \
             diodes and transistors cannot do; the model is incomplete here (a net held only by \
             a current source or a pin's bias current, a part or rail from a missing library), \
             so this state's numbers are not used",
            si(v, "V")
        ),
    };
    Err(DcError::Implausible { cause })
}

/// The controlled source of the component with the largest gain, by name.
fn largest_gain_source(cx: &Context<'_>, component: &Component) -> Option<(String, f64)> {
    component
        .devices
        .iter()
        .filter(|&&d| cx.circuit.devices[d].kind == Kind::ControlledSource)
        .filter_map(|&d| {
            // Only sources with a constant gain enter a DC solve.
            let e = cx.netlist.elements.get(cx.circuit.devices[d].element)?;
            let gain = e.value?.known().filter(|g| g.is_finite())?;
            Some((cx.name(d).to_string(), gain))
        })
        .max_by(|a, b| a.1.abs().total_cmp(&b.1.abs()))
}

/// The state must not change across the plausible gain of a BJT whose gain is only assumed.
fn check_gain(
    cx: &Context<'_>,
    component: &Component,
    state: &State,
    hull: &SourceHull,
    solved: &Solved,
) -> Result<(), DcError> {
    let assumed: Vec<DeviceId> = component
        .devices
        .iter()
        .copied()
        .filter(|&d| gain_assumed(cx, d))
        .collect();
    if assumed.is_empty() {
        return Ok(());
    }
    let at = |beta: f64| {
        let variant = Variant {
            beta: Some(beta),
            ramps: BTreeMap::new(),
        };
        cx.build_variant(component, state, &variant).solve_in(cx)
    };
    // Where either end does not solve, the nominal solve stands on its own.
    let (Ok(low), Ok(high)) = (at(BETA_LOW), at(BETA_HIGH)) else {
        return Ok(());
    };
    let span = hull.hi - hull.lo;
    let tolerance = AGREE_V + AGREE_FRACTION * span;
    let moved = solved
        .nodes
        .keys()
        .filter_map(|&net| Some((net, low.voltage(net)?, high.voltage(net)?)))
        .filter(|(_, a, b)| (a - b).abs() > tolerance)
        .max_by(|x, y| (x.1 - x.2).abs().total_cmp(&(y.1 - y.2).abs()));
    let current_moved = assumed.iter().find_map(|&d| {
        let a = low.current(low.elements(d)?.main?)?;
        let b = high.current(high.elements(d)?.main?)?;
        let scale = a.abs().max(b.abs());
        ((a - b).abs() > AGREE_CURRENT_FRACTION * scale + AGREE_CURRENT_A).then_some((d, a, b))
    });
    if moved.is_none() && current_moved.is_none() {
        return Ok(());
    }
    let names: Vec<&str> = assumed.iter().map(|&d| cx.name(d)).collect();
    let what = match (moved, current_moved) {
        (Some((net, a, b)), _) => format!(
            "net {} sits at {} with β = {BETA_LOW} and at {} with β = {BETA_HIGH}",
            cx.circuit.nets[net].name,
            si(a, "V"),
            si(b, "V")
        ),
        (None, Some((d, a, b))) => format!(
            "{}'s collector carries {} with β = {BETA_LOW} and {} with β = {BETA_HIGH}",
            cx.name(d),
            si(a.abs(), "A"),
            si(b.abs(), "A")
        ),
        (None, None) => String::new(),
    };
    Err(DcError::Implausible {
        cause: format!(
            "the current gain of {} is not stated (a built-in default), and this state depends \
             on it: {what}; its numbers are not used: add `hfe_min = …` for the part (or `BF=` \
             on its .model) to check it",
            names.join(", ")
        ),
    })
}

/// `0.0123` A → `12.3 mA` (three significant figures; the analyses' messages).
fn si(value: f64, unit: &str) -> String {
    if !value.is_finite() || value == 0.0 {
        return format!("{value} {unit}").trim_end().to_string();
    }
    const PREFIXES: [(f64, &str); 9] = [
        (1e9, "G"),
        (1e6, "M"),
        (1e3, "k"),
        (1.0, ""),
        (1e-3, "m"),
        (1e-6, "µ"),
        (1e-9, "n"),
        (1e-12, "p"),
        (1e-15, "f"),
    ];
    let magnitude = value.abs();
    let (scale, prefix) = PREFIXES
        .iter()
        .copied()
        .find(|(s, _)| magnitude >= *s * 0.9995)
        .unwrap_or((1e-15, "f"));
    let v = value / scale;
    let digits = (2 - v.abs().log10().floor() as i32).clamp(0, 6) as usize;
    let mut text = format!("{v:.digits$}");
    if text.contains('.') {
        text = text.trim_end_matches('0').trim_end_matches('.').to_string();
    }
    format!("{text} {prefix}{unit}").trim_end().to_string()
}
