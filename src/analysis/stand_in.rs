//! Behavioural stand-ins: how each device enters a DC solve.
//!
//! Passive parts are what they are (capacitors open, inductors their winding resistance, a pot
//! two resistors split at the wiper). A 555's output is a Thevenin source (`vcc −
//! out_high_drop` high, about 0.1 V low, a few ohms); its discharge pin an on-resistance with a
//! current limit while the output is low; its threshold and trigger inputs their bias currents;
//! its control pin the internal ladder. A motor is its winding resistance (stalled).

use super::dc::{
    BjtParams, BjtPolarity, DiodeParams, ElementId, MosParams, MosPolarity, Network, Node,
};
use super::facts::MosGain;
use super::states::{Context, State};
use crate::circuit::{Device, DeviceId, Kind, NetId, PartData, PinRole};

/// Output resistance of a 555 output stage, both levels (from memory: a few ohms).
pub const TIMER_OUTPUT_OHMS: f64 = 10.0;
/// Low-level output voltage of a 555 at light load (from memory: about 0.1 V).
pub const TIMER_OUTPUT_LOW_V: f64 = 0.1;
/// On-resistance of a 555's discharge transistor (from memory: about 10 Ω in saturation).
pub const DISCHARGE_ON_OHMS: f64 = 10.0;
/// Current at which a bipolar 555's discharge transistor stops saturating (from memory: a few
/// hundred mA; the rule threshold `discharge_current_max` sits well below it).
pub const DISCHARGE_LIMIT_A: f64 = 0.25;
/// Output resistance of a logic pin (from memory: tens of ohms for a 3.3 V CMOS pin).
pub const LOGIC_OUTPUT_OHMS: f64 = 25.0;
/// Winding resistance assumed when a load states none; its currents are then unknown.
pub const UNKNOWN_LOAD_OHMS: f64 = 1e3;
/// Smallest resistance stamped, so a zero-ohm part or a pot at its end stays solvable.
pub const MIN_OHMS: f64 = 1e-3;

/// The engine elements that stand for one device.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct DeviceElements {
    /// The element carrying the device's main current: a resistor's body, a pot's a–w half,
    /// a diode, a transistor's channel, a load's winding, a source; a timer's output stage.
    pub main: Option<ElementId>,
    /// A pot's w–b half.
    pub wiper_b: Option<ElementId>,
    /// A MOSFET's body diode.
    pub body_diode: Option<ElementId>,
    /// A timer's discharge transistor (present only while the output is low).
    pub discharge: Option<ElementId>,
    /// The device's resistance is not known; a placeholder was used.
    pub assumed: bool,
}

pub fn stamp(
    cx: &Context<'_>,
    id: DeviceId,
    state: &State,
    network: &mut Network,
    node_of: &mut dyn FnMut(NetId, &mut Network) -> Node,
) -> DeviceElements {
    let mut out = DeviceElements::default();
    let Some(device) = cx.circuit.devices().get(id) else {
        return out;
    };
    let data = &device.data;
    let mut pin =
        |role: PinRole, network: &mut Network| device.pin(role).map(|n| node_of(n, network));
    match device.kind {
        Kind::Resistor => {
            if let (Some(a), Some(b), Some(r)) = (
                pin(PinRole::Pos, network),
                pin(PinRole::Neg, network),
                resistance(cx, device),
            ) {
                out.main = Some(network.add_resistor(a, b, r.max(MIN_OHMS)));
            }
        }
        Kind::Potentiometer => {
            if let (Some(a), Some(w), Some(b)) = (
                pin(PinRole::A, network),
                pin(PinRole::Wiper, network),
                pin(PinRole::B, network),
            ) {
                let r = resistance(cx, device).unwrap_or(10e3);
                let x = state.wiper(id).clamp(0.0, 1.0);
                out.main = Some(network.add_resistor(a, w, (x * r).max(MIN_OHMS)));
                out.wiper_b = Some(network.add_resistor(w, b, ((1.0 - x) * r).max(MIN_OHMS)));
            }
        }
        Kind::Inductor | Kind::DcMotor | Kind::RelayCoil | Kind::Solenoid => {
            if let (Some(a), Some(b)) = (pin(PinRole::Pos, network), pin(PinRole::Neg, network)) {
                let r = winding_resistance(cx, device);
                out.assumed = r.is_none() && device.kind.is_load();
                let r = r.unwrap_or(if device.kind.is_load() {
                    UNKNOWN_LOAD_OHMS
                } else {
                    MIN_OHMS
                });
                out.main = Some(network.add_resistor(a, b, r.max(MIN_OHMS)));
            }
        }
        Kind::Diode | Kind::Schottky | Kind::Zener | Kind::Tvs => {
            if let (Some(a), Some(k)) =
                (pin(PinRole::Anode, network), pin(PinRole::Cathode, network))
            {
                out.main = Some(network.add_diode(a, k, diode_params(device.kind, data)));
            }
        }
        Kind::Nmos | Kind::Pmos => {
            if let (Some(d), Some(g), Some(s)) = (
                pin(PinRole::Drain, network),
                pin(PinRole::Gate, network),
                pin(PinRole::Source, network),
            ) {
                let params = mos_params(device.kind, data);
                out.main = Some(network.add_mosfet(d, g, s, params));
                let body = DiodeParams {
                    is: 1e-12,
                    ..DiodeParams::default()
                };
                out.body_diode = Some(match params.polarity {
                    MosPolarity::N => network.add_diode(s, d, body),
                    MosPolarity::P => network.add_diode(d, s, body),
                });
            }
        }
        Kind::Npn | Kind::Pnp => {
            if let (Some(c), Some(b), Some(e)) = (
                pin(PinRole::Collector, network),
                pin(PinRole::Base, network),
                pin(PinRole::Emitter, network),
            ) {
                out.main = Some(network.add_bjt(c, b, e, bjt_params(device.kind, data)));
            }
        }
        Kind::VoltageSource => {
            if let (Some(p), Some(n), Some(v)) = (
                pin(PinRole::Pos, network),
                pin(PinRole::Neg, network),
                cx.source_voltage(id, state),
            ) {
                out.main = Some(network.add_voltage_source(p, n, v));
            }
        }
        Kind::CurrentSource => {
            let value = cx
                .netlist
                .elements
                .get(device.element)
                .and_then(|e| e.source.as_ref())
                .and_then(|s| s.dc);
            if let (Some(p), Some(n), Some(i)) = (
                pin(PinRole::Pos, network),
                pin(PinRole::Neg, network),
                value,
            ) {
                out.main = Some(network.add_current_source(p, n, i));
            }
        }
        Kind::ControlledSource => stamp_controlled(cx, device, network, &mut pin, &mut out),
        Kind::Timer555 | Kind::Timer555Cmos => {
            stamp_timer(cx, id, device, state, network, node_of, &mut out)
        }
        Kind::LogicOutput => {
            let gnd = device.pin(PinRole::Gnd).map(|n| node_of(n, network));
            let gnd = gnd.unwrap_or_else(|| network.ground());
            if let Some(o) = device.pin(PinRole::Out).map(|n| node_of(n, network)) {
                let v = if state.is_high(id) {
                    data.value("voh").unwrap_or(3.3)
                } else {
                    data.value("vol").unwrap_or(0.0)
                };
                let internal = network.add_named_node("(logic output stage)");
                network.add_voltage_source(internal, gnd, v);
                out.main = Some(network.add_resistor(internal, o, LOGIC_OUTPUT_OHMS));
            }
        }
        // Open at DC, or not modelled: capacitors, switches of unknown state, couplings,
        // transmission lines, JFETs, code models.
        _ => {}
    }
    out
}

fn stamp_controlled(
    cx: &Context<'_>,
    device: &Device,
    network: &mut Network,
    pin: &mut dyn FnMut(PinRole, &mut Network) -> Option<Node>,
    out: &mut DeviceElements,
) {
    let Some(element) = cx.netlist.elements.get(device.element) else {
        return;
    };
    let Some(gain) = element.value.and_then(|v| v.known()) else {
        return;
    };
    let nodes = (
        pin(PinRole::Pos, network),
        pin(PinRole::Neg, network),
        pin(PinRole::CtrlPos, network),
        pin(PinRole::CtrlNeg, network),
    );
    if let (Some(p), Some(n), Some(cp), Some(cn)) = nodes {
        out.main = match element.letter {
            'E' => Some(network.add_vcvs(p, n, cp, cn, gain)),
            'G' => Some(network.add_vccs(p, n, cp, cn, gain)),
            _ => None,
        };
    }
}

fn stamp_timer(
    cx: &Context<'_>,
    id: DeviceId,
    device: &Device,
    state: &State,
    network: &mut Network,
    node_of: &mut dyn FnMut(NetId, &mut Network) -> Node,
    out: &mut DeviceElements,
) {
    let data = &device.data;
    let gnd = match device.pin(PinRole::Gnd) {
        Some(n) => node_of(n, network),
        None => network.ground(),
    };
    let vcc = timer_supply(cx, device, state);
    let high = state.is_high(id);
    if let (Some(o), Some(vcc)) = (device.pin(PinRole::Out), vcc) {
        let o = node_of(o, network);
        let v = if high {
            (vcc - data.value("out_high_drop").unwrap_or(1.7)).max(0.0)
        } else {
            TIMER_OUTPUT_LOW_V
        };
        // One internal node per timer: two timers in one sub-network never share their
        // output stages (the name only labels error messages).
        let internal = network.add_named_node("(timer output stage)");
        network.add_voltage_source(internal, gnd, v);
        out.main = Some(network.add_resistor(internal, o, TIMER_OUTPUT_OHMS));
    }
    if let Some(dis) = device.pin(PinRole::Dis) {
        if !high {
            let dis = node_of(dis, network);
            out.discharge = Some(network.add_current_limited_resistor(
                dis,
                gnd,
                DISCHARGE_ON_OHMS,
                DISCHARGE_LIMIT_A,
            ));
        }
    }
    // Each comparator input draws its bias current only while its comparator is the one about
    // to switch: the threshold input (current into the pin) while the output is high and the
    // capacitor charges toward it, the trigger input (current out of the pin) while the output
    // is low. Stamping both at once would let them cancel where THR and TRIG share a net.
    //
    // Each is a current that saturates at the bias (a current-limited resistor), not an ideal
    // source: an input stage can push its pin no further than its own rails, so a pin that
    // nothing else holds settles at the rail instead of at the megavolts an ideal source
    // would drive through a 1 TΩ leak. Well inside the rails it is the bias current exactly.
    if let (Some(thr), true) = (device.pin(PinRole::Thr), high) {
        let thr = node_of(thr, network);
        let bias = threshold_bias(data);
        if bias > 0.0 {
            network.add_current_limited_resistor(thr, gnd, BIAS_KNEE_V / bias, bias);
        }
    }
    if let (Some(trig), false) = (device.pin(PinRole::Trig), high) {
        let trig = node_of(trig, network);
        let bias = trigger_bias(data);
        match device.pin(PinRole::Vcc) {
            Some(vcc_net) if bias > 0.0 => {
                let vcc_node = node_of(vcc_net, network);
                network.add_current_limited_resistor(vcc_node, trig, BIAS_KNEE_V / bias, bias);
            }
            _ => {
                network.add_current_source(gnd, trig, bias);
            }
        }
    }
    if let (Some(ctrl), Some(vcc_net)) = (device.pin(PinRole::Ctrl), device.pin(PinRole::Vcc)) {
        let ctrl = node_of(ctrl, network);
        let vcc_node = node_of(vcc_net, network);
        let r = data.value("ladder_resistance").unwrap_or(5e3);
        network.add_resistor(vcc_node, ctrl, r);
        network.add_resistor(ctrl, gnd, 2.0 * r);
    }
}

/// How far from its rail a comparator input's bias current reaches its full value: the
/// current-limited resistor that stands in for it has `R = BIAS_KNEE_V / I_bias`, so it carries
/// the full bias within 0.05 % once the pin is twice this far from the rail.
const BIAS_KNEE_V: f64 = 0.05;

/// Current into a timer's threshold pin (bipolar about 0.25 µA, from memory).
pub fn threshold_bias(data: &PartData) -> f64 {
    data.value("threshold_bias_current")
        .or_else(|| data.value("threshold_bias"))
        .filter(|v| v.is_finite() && *v >= 0.0)
        .unwrap_or(0.25e-6)
}

/// Current out of a timer's trigger pin (bipolar about 0.5 µA, from memory).
pub fn trigger_bias(data: &PartData) -> f64 {
    data.value("trigger_bias_current")
        .or_else(|| data.value("trigger_bias"))
        .filter(|v| v.is_finite() && *v >= 0.0)
        .unwrap_or(0.5e-6)
}

/// The voltage on a timer's supply pin in a state: its fixed potential, or the highest supply.
pub fn timer_supply(cx: &Context<'_>, device: &Device, state: &State) -> Option<f64> {
    let vcc = device.pin(PinRole::Vcc)?;
    let gnd = device
        .pin(PinRole::Gnd)
        .and_then(|n| cx.fixed_voltage(n, state))
        .unwrap_or(0.0);
    match cx.fixed_voltage(vcc, state) {
        Some(v) => Some(v - gnd),
        None => cx
            .supplies
            .iter()
            .map(|s| s.at(state.corner))
            .fold(None, |m: Option<f64>, v| Some(m.map_or(v, |m| m.max(v)))),
    }
}

/// A resistor's or pot's resistance: its part data, else the element's value.
pub fn resistance(cx: &Context<'_>, device: &Device) -> Option<f64> {
    super::part_values::resistance(cx.netlist, device)
}

/// A winding's DC resistance: `resistance`, else rated voltage over rated (or stall) current,
/// else an inductor's series resistance parameter.
pub fn winding_resistance(cx: &Context<'_>, device: &Device) -> Option<f64> {
    let d = &device.data;
    if let Some(r) = d.value("resistance") {
        return Some(r);
    }
    if let (Some(v), Some(i)) = (d.value("rated_voltage"), d.value("stall_current")) {
        if i > 0.0 {
            return Some(v / i);
        }
    }
    if let (Some(v), Some(i)) = (d.value("rated_voltage"), d.value("rated_current")) {
        if i > 0.0 && device.kind != Kind::DcMotor {
            return Some(v / i);
        }
    }
    let e = cx.netlist.elements.get(device.element)?;
    e.param("rser").and_then(|v| v.known())
}

pub fn diode_params(kind: Kind, data: &PartData) -> DiodeParams {
    let default_is = if kind == Kind::Schottky { 1e-6 } else { 1e-14 };
    let bv = match kind {
        Kind::Zener => data.value("vz").or_else(|| data.value("bv")),
        Kind::Tvs => data
            .value("vclamp")
            .or_else(|| data.value("vz"))
            .or_else(|| data.value("bv")),
        _ => data.value("bv").or_else(|| data.value("vrrm")),
    };
    DiodeParams {
        is: data.value("is").filter(|v| *v > 0.0).unwrap_or(default_is),
        n: data.value("n").filter(|v| *v > 0.0).unwrap_or(1.0),
        rs: data.value("rs").filter(|v| *v >= 0.0).unwrap_or(0.0),
        bv: bv.filter(|v| *v > 0.0),
        ibv: data.value("ibv").filter(|v| *v > 0.0).unwrap_or(1e-3),
    }
}

/// Threshold magnitude used by the engine: the model's VTO, else the datasheet's worst case.
pub fn mos_threshold(data: &PartData) -> f64 {
    data.value("vto")
        .map(f64::abs)
        .or_else(|| data.value("vgs_th_max"))
        .unwrap_or(4.0)
}

/// True when a number was stated on purpose for this part: in `kickback.toml` or as an
/// instance parameter (not a model card's fit, not the built-in library or a default).
fn deliberate(source: &str) -> bool {
    source.starts_with("from config") || source.starts_with("from instance parameter")
}

/// Square-law gain of a MOSFET and the threshold it goes with, computed once for the engine,
/// the facts and the rules. The more deliberate input wins: an `rds_on` stated in the config
/// or on the instance, else the model card's `KP·W/L`, else an `rds_on` from the library, else
/// 100 mΩ at `vgs_rated` (a placeholder). From `rds_on` at `vgs_rated`:
/// k = 1/(rds_on·(vgs_rated − V_T)), the triode region at small V_DS.
pub fn mos_gain_fact(data: &PartData) -> MosGain {
    let vt = mos_threshold(data);
    let from_rds = |rds: f64, source: String, placeholder: bool| {
        let vgs = data.value("vgs_rated").unwrap_or(10.0);
        MosGain {
            k: 1.0 / (rds * (vgs - vt).max(0.5)),
            threshold_v: vt,
            how: format!(
                "from rds_on {} Ω at vgs_rated {} V, k = 1/(rds_on·(vgs_rated − V_T))",
                plain(rds),
                plain(vgs)
            ),
            source,
            placeholder,
        }
    };
    let rds = data.get("rds_on").filter(|r| r.value > 0.0);
    if let Some(r) = rds.filter(|r| deliberate(&r.source)) {
        return from_rds(r.value, r.source.clone(), false);
    }
    if let Some(kp) = data.get("kp").filter(|r| r.value > 0.0) {
        let w = data.value("w").filter(|v| *v > 0.0).unwrap_or(1.0);
        let l = data.value("l").filter(|v| *v > 0.0).unwrap_or(1.0);
        return MosGain {
            k: kp.value * w / l,
            threshold_v: vt,
            how: "from KP·W/L".into(),
            source: kp.source.clone(),
            placeholder: false,
        };
    }
    match rds {
        Some(r) => from_rds(r.value, r.source.clone(), false),
        None => from_rds(0.1, "placeholder: no KP and no rds_on given".into(), true),
    }
}

/// A number in plain decimals for a provenance text (`0.05`, `10`).
fn plain(v: f64) -> String {
    let text = format!("{v:.4}");
    text.trim_end_matches('0').trim_end_matches('.').to_string()
}

/// The gain alone (see [`mos_gain_fact`]).
pub fn mos_gain(data: &PartData) -> f64 {
    mos_gain_fact(data).k
}

pub fn mos_params(kind: Kind, data: &PartData) -> MosParams {
    MosParams {
        polarity: if kind == Kind::Pmos {
            MosPolarity::P
        } else {
            MosPolarity::N
        },
        vto: mos_threshold(data),
        k: mos_gain(data),
        lambda: data.value("lambda").filter(|v| *v >= 0.0).unwrap_or(0.0),
    }
}

pub fn bjt_params(kind: Kind, data: &PartData) -> BjtParams {
    BjtParams {
        polarity: if kind == Kind::Pnp {
            BjtPolarity::Pnp
        } else {
            BjtPolarity::Npn
        },
        is: data.value("is").filter(|v| *v > 0.0).unwrap_or(1e-14),
        beta_f: data
            .value("bf")
            .or_else(|| data.value("hfe_min"))
            .filter(|v| *v > 0.0)
            .unwrap_or(100.0),
        beta_r: data.value("br").filter(|v| *v > 0.0).unwrap_or(1.0),
        n: data.value("nf").filter(|v| *v > 0.0).unwrap_or(1.0),
    }
}
