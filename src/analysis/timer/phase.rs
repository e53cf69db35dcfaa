//! The time of one phase: the timing capacitor is taken out (it is open at DC anyway) and the
//! sub-network it sees is solved with the capacitor node held at voltages along the swing. The
//! current the network delivers at each held voltage is the capacitor's current there, with
//! steering diodes conducting or blocking and dropping what they drop at that current, the
//! comparator's bias current and the discharge pin's current limit included.
//!
//! - When the current falls on a straight line (a resistive network: a Thevenin source
//!   `V∞` behind `R`), `t = R·C·ln((V∞ − Vstart)/(V∞ − Vend))` (the 555 datasheet equation in
//!   its general form; ln 2 between 1/3 and 2/3 of VCC).
//! - When it hardly changes (the discharge pin's current limit governs, e.g. a diode dumping
//!   the capacitor straight into the pin), `t = C·ΔV/I`.
//! - Otherwise the quasi-static integral `t = C·∫ dV / I(V)` is taken numerically.
//!
//! A phase whose current reaches zero before its end voltage never finishes: it is stuck.

use super::config::{self, NetIndex, Setup};
use crate::analysis::dc::DcError;
use crate::analysis::partition::Component;
use crate::analysis::stand_in;
use crate::analysis::states::{Context, Solved, State};
use crate::circuit::{DeviceId, Kind, PinRole};

/// The comparator thresholds on the capacitor net, in volts against ground.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Thresholds {
    pub upper: f64,
    pub lower: f64,
    pub vcc: f64,
}

/// Thresholds in a state: 2/3 and 1/3 of VCC from the internal ladder when the control pin is
/// open or only bypassed; otherwise the DC-solved control voltage and half of it (the ladder is
/// part of the stand-in, so a resistor or source on CTRL pulls against it).
pub fn thresholds(
    cx: &Context<'_>,
    index: &NetIndex,
    setup: &Setup,
    state: &State,
) -> Result<Option<Thresholds>, DcError> {
    let Some(device) = cx.circuit.devices().get(setup.device) else {
        return Ok(None);
    };
    let Some(vcc) = stand_in::timer_supply(cx, device, state) else {
        return Ok(None);
    };
    let gnd = device
        .pin(PinRole::Gnd)
        .and_then(|n| cx.fixed_voltage(n, state))
        .unwrap_or(0.0);
    let ctrl_v = match setup.ctrl {
        None => None,
        Some(ctrl) if config::only_capacitors(cx, index, ctrl, setup.device) => None,
        Some(ctrl) => match cx.fixed_voltage(ctrl, state) {
            Some(v) => Some(v),
            None => {
                let Some(component) = cx
                    .partition
                    .net_component
                    .get(ctrl)
                    .copied()
                    .flatten()
                    .and_then(|c| cx.partition.components.get(c))
                else {
                    return Ok(None);
                };
                let solved = cx.solve(component, state)?;
                solved.voltage(ctrl)
            }
        },
    };
    let upper = ctrl_v.unwrap_or(gnd + vcc * 2.0 / 3.0);
    let lower = gnd + (upper - gnd) / 2.0;
    if !(upper.is_finite() && upper > lower) {
        return Ok(None);
    }
    Ok(Some(Thresholds { upper, lower, vcc }))
}

/// How a phase's time was found.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Method {
    /// A Thevenin source `v_inf` behind `ohms`.
    Exponential { v_inf: f64, ohms: f64 },
    /// A constant current (the discharge pin's limit).
    ConstantCurrent { amps: f64 },
    /// Numerical integration of `C/I(V)`.
    Integrated,
}

/// Why a phase never ends.
#[derive(Clone, Debug, PartialEq)]
pub struct Stuck {
    pub settles_v: f64,
    pub threshold_v: f64,
    pub reason: String,
    pub devices: Vec<DeviceId>,
    pub bias_a: Option<f64>,
    pub bias_ohms: Option<f64>,
    pub discharge_limited: bool,
}

#[derive(Clone, Debug, PartialEq)]
pub enum Outcome {
    Time { seconds: f64, method: Method },
    Stuck(Stuck),
}

impl Outcome {
    pub fn seconds(&self) -> Option<f64> {
        match self {
            Outcome::Time { seconds, .. } => Some(*seconds),
            Outcome::Stuck(_) => None,
        }
    }
}

/// One phase to time: the timer's level, where the capacitor starts and where it must get to.
pub struct Phase<'s> {
    pub setup: &'s Setup,
    /// The state with the timer's output high (charging) or low (discharging).
    pub state: &'s State,
    pub v_start: f64,
    pub v_end: f64,
    pub capacitance: f64,
}

/// Current the network delivers into the capacitor node held at `volts`.
pub fn held_current(
    cx: &Context<'_>,
    setup: &Setup,
    state: &State,
    volts: f64,
) -> Result<Option<f64>, DcError> {
    let (Some(net), Some(component)) = (
        setup.timing_net,
        setup.component.and_then(|c| cx.partition.components.get(c)),
    ) else {
        return Ok(None);
    };
    let mut built = cx.build(component, state);
    let Some(node) = built.node(net) else {
        return Ok(None);
    };
    let ground = built.network.ground();
    let hold = built.network.add_voltage_source(node, ground, volts);
    let op = cx.solve_network(&built.network)?;
    // A source's current is the current into its positive terminal: what the network pushes
    // into the node.
    Ok(op.current(hold))
}

/// Relative agreement under which a straight line or a constant is taken as exact.
const LINEAR_TOLERANCE: f64 = 2e-3;

/// Times one phase.
pub fn time(cx: &Context<'_>, phase: &Phase<'_>) -> Result<Option<Outcome>, DcError> {
    let (vs, ve, c) = (phase.v_start, phase.v_end, phase.capacitance);
    if !(vs.is_finite() && ve.is_finite() && c > 0.0) {
        return Ok(None);
    }
    let direction = if ve >= vs { 1.0 } else { -1.0 };
    if (ve - vs).abs() < 1e-12 {
        return Ok(Some(Outcome::Time {
            seconds: 0.0,
            method: Method::Integrated,
        }));
    }
    // Current in the direction of travel.
    let progress = |v: f64| -> Result<Option<f64>, DcError> {
        Ok(held_current(cx, phase.setup, phase.state, v)?.map(|i| direction * i))
    };
    let vm = 0.5 * (vs + ve);
    let (Some(is), Some(ie), Some(im)) = (progress(vs)?, progress(ve)?, progress(vm)?) else {
        return Ok(None);
    };
    if is <= 0.0 || ie <= 0.0 || im <= 0.0 {
        return stuck(cx, phase).map(|s| s.map(Outcome::Stuck));
    }
    let spread = (is - ie).abs() / is.max(ie);
    if spread < LINEAR_TOLERANCE && (im - 0.5 * (is + ie)).abs() <= LINEAR_TOLERANCE * im {
        let amps = (is + ie + 2.0 * im) / 4.0;
        return Ok(Some(Outcome::Time {
            seconds: c * (ve - vs).abs() / amps,
            method: Method::ConstantCurrent { amps },
        }));
    }
    // Straight line through the two ends: I = (V∞ − V)/R in the direction of travel.
    let ohms = (ve - vs).abs() / (is - ie);
    let on_line = (im - 0.5 * (is + ie)).abs() <= LINEAR_TOLERANCE * im;
    if ohms.is_finite() && ohms > 0.0 && on_line {
        let v_inf = vs + direction * is * ohms;
        let ratio = (v_inf - vs) / (v_inf - ve);
        if ratio.is_finite() && ratio > 1.0 {
            return Ok(Some(Outcome::Time {
                seconds: ohms * c * ratio.ln(),
                method: Method::Exponential { v_inf, ohms },
            }));
        }
    }
    integrate(cx, phase, direction).map(|t| {
        t.map(|seconds| Outcome::Time {
            seconds,
            method: Method::Integrated,
        })
    })
}

/// `t = C·∫ dV / I(V)` by three-point Gauss–Legendre on each of several sub-intervals.
fn integrate(cx: &Context<'_>, phase: &Phase<'_>, direction: f64) -> Result<Option<f64>, DcError> {
    const PIECES: usize = 6;
    const NODES: [(f64, f64); 3] = [
        (-0.774_596_669_241_483_4, 5.0 / 9.0),
        (0.0, 8.0 / 9.0),
        (0.774_596_669_241_483_4, 5.0 / 9.0),
    ];
    let (vs, ve) = (phase.v_start, phase.v_end);
    let width = (ve - vs) / PIECES as f64;
    let mut total = 0.0;
    for k in 0..PIECES {
        let centre = vs + width * (k as f64 + 0.5);
        for (x, w) in NODES {
            let v = centre + 0.5 * width * x;
            let Some(i) = held_current(cx, phase.setup, phase.state, v)? else {
                return Ok(None);
            };
            let i = direction * i;
            if i <= 0.0 {
                return Ok(None);
            }
            total += w * 0.5 * width.abs() / i;
        }
    }
    Ok(Some(phase.capacitance * total))
}

/// Where the capacitor settles in a phase that cannot finish, and what holds it there.
fn stuck(cx: &Context<'_>, phase: &Phase<'_>) -> Result<Option<Stuck>, DcError> {
    let setup = phase.setup;
    let (Some(net), Some(component)) = (
        setup.timing_net,
        setup.component.and_then(|c| cx.partition.components.get(c)),
    ) else {
        return Ok(None);
    };
    let built = cx.build(component, phase.state);
    let Some(node) = built.node(net) else {
        return Ok(None);
    };
    let th = cx.thevenin(&built.network, node)?;
    let solved = built.solve_in(cx)?;
    let charging = phase.v_end >= phase.v_start;
    let data = &cx.circuit.devices()[setup.device].data;
    // The bias current that acts in this phase, and what the network would reach without it.
    let bias = if charging {
        stand_in::threshold_bias(data)
    } else {
        stand_in::trigger_bias(data)
    };
    let unbiased = if charging {
        th.v_open + bias * th.r_th
    } else {
        th.v_open - bias * th.r_th
    };
    // Past this Thevenin resistance only kickback's own leaks (1 TΩ per net) reach the
    // capacitor: nothing on the board charges or discharges it, whatever the bias does.
    let unreached = th.r_th > 1e11;
    let reaches_without_bias = !unreached
        && if charging {
            unbiased > phase.v_end
        } else {
            unbiased < phase.v_end
        };
    // Conducting parts that carry the current the capacitor would need, biggest resistance
    // first (the one to change).
    let mut carriers: Vec<(DeviceId, f64)> = Vec::new();
    let floor = if reaches_without_bias {
        0.3 * bias
    } else {
        1e-9
    };
    for &d in &component.devices {
        let device = &cx.circuit.devices()[d];
        let is_path = matches!(device.kind, Kind::Resistor | Kind::Potentiometer)
            || device.kind.is_diode_like();
        if !is_path {
            continue;
        }
        let Some(el) = solved.elements(d) else {
            continue;
        };
        let current = [el.main, el.wiper_b]
            .into_iter()
            .flatten()
            .filter_map(|e| solved.current(e))
            .fold(0.0f64, |m, i| m.max(i.abs()));
        if current >= floor {
            let ohms = stand_in::resistance(cx, device).unwrap_or(0.0);
            carriers.push((d, ohms));
        }
    }
    carriers.sort_by(|a, b| b.1.total_cmp(&a.1).then(a.0.cmp(&b.0)));
    // A diode that blocks in this phase is the usual cause (fitted the wrong way round): it
    // comes first, the part to change. With nothing else reaching the capacitor, any diode
    // that blocks; otherwise, while discharging, a diode whose anode is on the discharge pin
    // (the pin only sinks current, so such a diode can never carry the capacitor's).
    let blocking = if unreached {
        blocking_diodes(cx, component, &solved, floor)
    } else if !charging {
        setup
            .dis
            .map(|dis| anodes_on(cx, component, dis))
            .unwrap_or_default()
    } else {
        Vec::new()
    };
    if !blocking.is_empty() {
        carriers.retain(|c| !blocking.contains(&c.0));
        carriers.splice(0..0, blocking.into_iter().map(|d| (d, f64::INFINITY)));
    }
    // With nothing to move it, the capacitor keeps the charge it started the phase with.
    let settles_v = if unreached {
        phase.v_start
    } else {
        solved.voltage(net).unwrap_or(th.v_open)
    };
    let limited = !charging && !reaches_without_bias && at_current_limit(&solved, setup);
    let reason = if reaches_without_bias {
        if charging {
            "the threshold input's bias current, drawn through the timing resistance, holds the capacitor below the threshold".to_string()
        } else {
            "the trigger input's bias current, pushed through the discharge resistance, holds the capacitor above the trigger threshold".to_string()
        }
    } else if unreached {
        if charging {
            "nothing charges the timing capacitor".to_string()
        } else {
            "nothing discharges the timing capacitor".to_string()
        }
    } else if charging {
        "the charging network settles below the threshold".to_string()
    } else if limited {
        "the discharge pin cannot pull its own net down against the supply".to_string()
    } else {
        "the discharging network settles above the trigger threshold".to_string()
    };
    Ok(Some(Stuck {
        settles_v,
        threshold_v: phase.v_end,
        reason,
        devices: carriers.into_iter().map(|c| c.0).collect(),
        bias_a: reaches_without_bias.then_some(bias),
        bias_ohms: reaches_without_bias.then_some(th.r_th),
        discharge_limited: limited,
    }))
}

/// Diodes of the component that carry no current and sit reverse-biased in a solved state,
/// in device order.
fn blocking_diodes(
    cx: &Context<'_>,
    component: &Component,
    solved: &Solved,
    floor: f64,
) -> Vec<DeviceId> {
    component
        .devices
        .iter()
        .copied()
        .filter(|&d| {
            let device = &cx.circuit.devices()[d];
            if !device.kind.is_diode_like() {
                return false;
            }
            let current = solved
                .elements(d)
                .and_then(|e| e.main)
                .and_then(|e| solved.current(e))
                .map_or(0.0, f64::abs);
            let reverse = solved
                .pin_voltage(cx.circuit, d, PinRole::Anode, PinRole::Cathode)
                .is_some_and(|v| v < 0.0);
            current < floor && reverse
        })
        .collect()
}

/// Diodes of the component whose anode sits on `net`.
fn anodes_on(cx: &Context<'_>, component: &Component, net: crate::circuit::NetId) -> Vec<DeviceId> {
    component
        .devices
        .iter()
        .copied()
        .filter(|&d| {
            let device = &cx.circuit.devices()[d];
            device.kind.is_diode_like()
                && device.pin(PinRole::Anode) == Some(net)
                && device.pin(PinRole::Cathode) != Some(net)
        })
        .collect()
}

/// True when the discharge pin runs at its own current limit (the supply reaches DIS through
/// almost nothing, so the pin cannot pull its net down).
fn at_current_limit(solved: &crate::analysis::states::Solved, setup: &Setup) -> bool {
    solved
        .elements(setup.device)
        .and_then(|e| e.discharge)
        .and_then(|e| solved.current(e))
        .is_some_and(|i| i >= 0.9 * stand_in::DISCHARGE_LIMIT_A)
}
