//! How fast a MOSFET's gate moves, and the switching loss that follows.
//!
//! The drive is a source resistance (the driver's output resistance plus the resistors between
//! it and the gate) charging the gate's input capacitance: a first-order RC edge, 10–90 % in
//! `2.2·R·C` (common practice). The capacitance is the model's `CISS`, else `CGS + CGD`, else
//! the gate charge over the drive swing (`Qg/V_drive`) when `qg` is given. This ignores the
//! Miller plateau, so the times are a lower bound: a finding built on them is never an
//! overstatement. The loss is the hard-switching estimate `½·V·I·(t_r + t_f)·f` (a standard
//! estimate for a switch that carries the full current while the full voltage is across it).

use super::gate_network::GateDrive;
use crate::analysis::facts::{GateEdges, Range};
use crate::analysis::stand_in;
use crate::analysis::states::Context;
use crate::circuit::{DeviceId, Kind};

/// 10–90 % time of a first-order RC edge, in units of R·C: ln(0.9/0.1) ≈ 2.2.
pub const RC_EDGE_FACTOR: f64 = 2.197_224_577_336_219;

/// What the edges are computed from.
pub struct EdgeSetting<'a> {
    pub drive: &'a GateDrive,
    /// On-state V_GS toward conduction (the swing the drive makes).
    pub vgs_on_v: Option<f64>,
    pub rail_v: Option<&'a Range>,
    pub current_a: Option<f64>,
    pub frequency_hz: Option<&'a Range>,
}

/// Output resistance of a driver and how it was found.
fn driver_ohms(cx: &Context<'_>, driver: DeviceId) -> Option<(f64, String)> {
    let d = cx.circuit.devices().get(driver)?;
    let name = cx.name(driver);
    match d.kind {
        Kind::VoltageSource => Some(match d.data.value("rser").filter(|r| *r >= 0.0) {
            Some(r) => (r, format!("{name}'s Rser")),
            None => (0.0, format!("{name} (an ideal source, 0 Ω)")),
        }),
        Kind::Timer555 | Kind::Timer555Cmos => Some((
            stand_in::TIMER_OUTPUT_OHMS,
            format!(
                "{name}'s output about {} Ω (from memory)",
                stand_in::TIMER_OUTPUT_OHMS
            ),
        )),
        Kind::LogicOutput => Some((
            stand_in::LOGIC_OUTPUT_OHMS,
            format!(
                "{name}'s pin about {} Ω (from memory)",
                stand_in::LOGIC_OUTPUT_OHMS
            ),
        )),
        _ => None,
    }
}

/// The gate's input capacitance and how it was found.
fn input_capacitance(
    cx: &Context<'_>,
    switch: DeviceId,
    swing: Option<f64>,
) -> Option<(f64, String)> {
    let data = &cx.circuit.devices().get(switch)?.data;
    if let Some(c) = data.get("ciss").filter(|c| c.value > 0.0) {
        return Some((c.value, format!("CISS ({})", c.source)));
    }
    let cgs = data.get("cgs").filter(|c| c.value > 0.0);
    let cgd = data.value("cgd").filter(|c| *c > 0.0).unwrap_or(0.0);
    if let Some(c) = cgs {
        return Some((c.value + cgd, format!("CGS + CGD ({})", c.source)));
    }
    let qg = data.get("qg").filter(|q| q.value > 0.0)?;
    let v = swing.filter(|v| *v > 0.5)?;
    Some((qg.value / v, format!("Qg/V_drive ({})", qg.source)))
}

pub fn gate_edges(cx: &Context<'_>, switch: DeviceId, s: &EdgeSetting<'_>) -> Option<GateEdges> {
    let d = cx.circuit.devices().get(switch)?;
    if !d.kind.is_mos() {
        return None;
    }
    let driver = s.drive.driver?;
    let (mut ohms, driver_how) = driver_ohms(cx, driver)?;
    let mut series = Vec::new();
    for &part in &s.drive.network {
        let p = cx.circuit.devices().get(part)?;
        if p.kind != Kind::Resistor {
            // A diode or ferrite in the path: its resistance is not a fixed number.
            return None;
        }
        ohms += stand_in::resistance(cx, p)?;
        series.push(cx.name(part).to_string());
    }
    let (c, c_how) = input_capacitance(cx, switch, s.vgs_on_v)?;
    let edge = RC_EDGE_FACTOR * ohms * c;
    let loss = match (s.rail_v, s.current_a, s.frequency_hz) {
        (Some(v), Some(i), Some(f)) => Some(0.5 * v.max * i * (edge + edge) * f.max),
        _ => None,
    };
    let resistors = if series.is_empty() {
        String::new()
    } else {
        format!(" + {}", series.join(" + "))
    };
    Some(GateEdges {
        rise_s: edge,
        fall_s: edge,
        drive_ohms: ohms,
        input_capacitance_f: c,
        how: format!("R = {driver_how}{resistors}; C = {c_how}"),
        switching_loss_w: loss,
    })
}
