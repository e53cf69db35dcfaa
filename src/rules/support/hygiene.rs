//! Shared pieces of the netlist-hygiene rules: a net → pins index, the finding skeleton for an
//! element, the drive trace behind `gate-floating`, `timer-reset-floating`, `pwm-audible` and
//! `supply-unreferenced`, and the 555 timing networks `value-suspicious` reads.
//!
//! Every rule builds what it needs once per call; each structure is linear in the number of pins.

use crate::circuit::{Circuit, Device, DeviceId, Kind, NetId, PinRole};
use crate::diagnostic::{Finding, Severity};
use crate::netlist::FlatElement;
use crate::rules::RuleContext;
use crate::source::Span;
use std::collections::HashSet;

/// Pins on each net, read from the circuit's index.
pub struct NetIndex<'c> {
    circuit: &'c Circuit,
}

impl<'c> NetIndex<'c> {
    pub fn new(cx: &RuleContext<'c>) -> NetIndex<'c> {
        NetIndex {
            circuit: cx.circuit,
        }
    }

    /// `(device, pin index)` of every pin on `net`.
    pub fn on(&self, net: NetId) -> &'c [(DeviceId, usize)] {
        self.circuit.devices_on(net)
    }

    pub fn degree(&self, net: NetId) -> usize {
        self.on(net).len()
    }
}

/// The flattened element behind a device.
pub fn element<'a>(cx: &RuleContext<'a>, device: &Device) -> Option<&'a FlatElement> {
    cx.netlist.elements.get(device.element)
}

/// Element and device by device id.
pub fn device_element<'a>(
    cx: &RuleContext<'a>,
    id: DeviceId,
) -> Option<(&'a Device, &'a FlatElement)> {
    let device = cx.circuit.devices().get(id)?;
    Some((device, element(cx, device)?))
}

/// The element's path as the user reads it (`XDRV.M1`, or `M1` at top level).
pub fn shown(cx: &RuleContext<'_>, id: DeviceId) -> String {
    device_element(cx, id).map_or_else(|| format!("device {id}"), |(_, e)| e.path.clone())
}

pub fn net_name<'a>(cx: &RuleContext<'a>, net: NetId) -> &'a str {
    cx.circuit.nets().get(net).map_or("?", |n| n.name.as_str())
}

pub fn is_ground(cx: &RuleContext<'_>, net: NetId) -> bool {
    cx.circuit.nets().get(net).is_some_and(|n| n.is_ground)
}

pub fn is_global(cx: &RuleContext<'_>, net: NetId) -> bool {
    let name = net_name(cx, net);
    cx.netlist
        .globals
        .iter()
        .any(|g| g.eq_ignore_ascii_case(name))
}

/// Every pin on the node `net` belongs to once 0 V sources are read as wires, the sources' own
/// pins left out (see `Circuit::wire_nets`).
pub fn wire_pins(cx: &RuleContext<'_>, index: &NetIndex<'_>, net: NetId) -> Vec<(DeviceId, usize)> {
    cx.circuit
        .wire_nets(net)
        .into_iter()
        .flat_map(|n| index.on(n).iter().copied())
        .filter(|&(device, _)| !cx.circuit.is_ammeter(device))
        .collect()
}

/// True when the node `net` belongs to (through 0 V sources) holds ground or a `.global` net.
pub fn wire_is_ground_or_global(cx: &RuleContext<'_>, net: NetId) -> bool {
    cx.circuit
        .wire_nets(net)
        .into_iter()
        .any(|n| is_ground(cx, n) || is_global(cx, n))
}

/// A finding on an element's line, with its instance path and the instance lines that placed it.
pub fn finding_at(
    rule: crate::rules::Rule,
    severity: Severity,
    element: &FlatElement,
    message: impl Into<String>,
) -> Finding {
    let mut finding = Finding::new(rule, severity, element.span, message)
        .with_element(element.name.clone(), element.instance_path());
    finding.instances = element.instances.clone();
    finding
}

/// Remembers which definition lines a rule has already reported, so an element inside a
/// subcircuit placed a hundred times gives one finding, not a hundred identical ones.
#[derive(Default)]
pub struct Once {
    seen: HashSet<(Span, String)>,
}

impl Once {
    /// True the first time `(span, key)` is seen.
    pub fn first(&mut self, span: Span, key: impl Into<String>) -> bool {
        self.seen.insert((span, key.into()))
    }
}

/// A net name that says "no connection" on purpose (`NC`, `nc_3`, `unconnected-(U1-Pad3)`).
pub fn is_no_connect_name(name: &str) -> bool {
    let local = name.rsplit('.').next().unwrap_or(name).to_ascii_lowercase();
    let nc_prefix = local
        .strip_prefix("nc")
        .is_some_and(|rest| rest.chars().next().is_none_or(|c| !c.is_ascii_alphabetic()));
    nc_prefix
        || local == "n/c"
        || local.contains("unconnected")
        || local.contains("no_connect")
        || local.contains("noconnect")
}

/// A device whose pins belong to a part with roles (a transistor or a subcircuit kept whole),
/// as opposed to a plain two-terminal element or source.
pub fn is_part(kind: Kind, element: &FlatElement) -> bool {
    element.subckt.is_some() || kind.is_switch_transistor() || kind == Kind::Jfet
}

/// A subcircuit of unknown kind whose name says it is a connector (its far side is off-board).
pub fn is_connector(element: &FlatElement) -> bool {
    let name = element
        .subckt
        .as_ref()
        .map(|s| s.name.as_str())
        .or(element.model.as_deref())
        .unwrap_or("")
        .to_ascii_uppercase();
    ["CONN", "HEADER", "JACK", "PLUG", "SOCKET", "TERMINAL"]
        .iter()
        .any(|w| name.contains(w))
}

/// The resistance of a resistor or pot, when known.
pub fn resistance(device: &Device, element: &FlatElement) -> Option<f64> {
    if let Some(r) = device.data.value("resistance") {
        return Some(r);
    }
    match element.letter {
        'R' => element.value.and_then(|v| v.known()),
        _ => ["r", "rtot", "rpot", "value"]
            .iter()
            .find_map(|k| element.param(k).and_then(|v| v.known())),
    }
}

pub fn capacitance(device: &Device, element: &FlatElement) -> Option<f64> {
    device
        .data
        .value("capacitance")
        .or_else(|| element.value.and_then(|v| v.known()))
}

/// What a pin does to a net, for tracing who sets the net's voltage.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum PinDrive {
    /// Carries the trace on to the device's other terminals (resistors, inductive parts).
    Passes,
    /// Sets the net's voltage whenever the circuit is powered.
    Drives,
    /// Sets it, but can let go: a logic output is high-impedance during reset and unpowered.
    MayFloat,
    /// Offers no DC drive in both directions: a capacitor, a diode, an open switch, a connector.
    Blocks,
    /// A high-impedance input that neither drives nor passes (a gate, a comparator input).
    Input,
}

pub fn pin_drive(kind: Kind, element: &FlatElement, role: PinRole) -> PinDrive {
    use PinDrive::*;
    match kind {
        Kind::Resistor | Kind::Potentiometer => Passes,
        k if k.is_inductive() => Passes,
        Kind::VoltageSource => Drives,
        Kind::ControlledSource => match (role, element.letter) {
            (PinRole::CtrlPos | PinRole::CtrlNeg, _) => Input,
            (_, 'F' | 'G') => Blocks,
            _ => Drives,
        },
        Kind::Timer555 | Kind::Timer555Cmos => match role {
            PinRole::Out | PinRole::Vcc | PinRole::Gnd => Drives,
            PinRole::Dis => Blocks,
            _ => Input,
        },
        Kind::LogicOutput => match role {
            PinRole::Vcc | PinRole::Gnd => Drives,
            _ => MayFloat,
        },
        Kind::Nmos | Kind::Pmos | Kind::Jfet => match role {
            PinRole::Gate => Input,
            _ => Drives,
        },
        Kind::Npn | Kind::Pnp => match role {
            PinRole::Base => Input,
            _ => Drives,
        },
        Kind::Switch => match role {
            PinRole::CtrlPos | PinRole::CtrlNeg => Input,
            _ => Blocks,
        },
        Kind::Unknown if is_connector(element) => Blocks,
        Kind::Unknown => Drives,
        Kind::Coupling | Kind::TransmissionLine => Input,
        _ => Blocks,
    }
}

/// What the resistive network around a net reaches.
#[derive(Debug, Default)]
pub struct Trace {
    /// Nets reached through resistors and inductive parts, the start first, in breadth-first
    /// order (at most 64).
    pub nets: Vec<NetId>,
    /// Fixed nets reached: ground or a voltage source's terminal, with the source.
    pub fixed: Vec<(NetId, Option<DeviceId>)>,
    /// Pins that drive a reached net.
    pub drivers: Vec<(DeviceId, PinRole)>,
    pub may_float: Vec<(DeviceId, PinRole)>,
    /// Devices that touch the network but give no DC drive (capacitors, diodes, switches).
    pub blocked: Vec<DeviceId>,
    /// Resistors and inductive parts crossed.
    pub through: Vec<DeviceId>,
}

impl Trace {
    /// Something sets the net's voltage at all times.
    pub fn is_driven(&self) -> bool {
        !self.fixed.is_empty() || !self.drivers.is_empty()
    }
}

/// Walks resistive paths from one net; stops at fixed nets (ground, voltage-source terminals)
/// and at `stop` nets, and after a bounded number of nets and pins so a huge rail costs little.
pub struct Tracer<'c, 'a> {
    cx: &'c RuleContext<'a>,
    pub index: NetIndex<'a>,
    /// The voltage source (or `None` for ground) that fixes each net.
    fixed_by: Vec<Option<Option<DeviceId>>>,
}

const MAX_NETS: usize = 64;
const MAX_PINS: usize = 4096;
/// Blocking devices kept per trace: enough to name them in a message.
const MAX_LISTED: usize = 32;

impl<'c, 'a> Tracer<'c, 'a> {
    pub fn new(cx: &'c RuleContext<'a>) -> Self {
        let index = NetIndex::new(cx);
        let mut fixed_by: Vec<Option<Option<DeviceId>>> = cx
            .circuit
            .nets()
            .iter()
            .map(|n| n.is_ground.then_some(None))
            .collect();
        for (id, device) in cx.circuit.devices().iter().enumerate() {
            if device.kind == Kind::VoltageSource {
                for pin in &device.pins {
                    if let Some(slot @ None) = fixed_by.get_mut(pin.net) {
                        *slot = Some(Some(id));
                    }
                }
            }
        }
        Tracer {
            cx,
            index,
            fixed_by,
        }
    }

    /// `Some(source)` when the net is fixed; the inner `None` is ground.
    pub fn fixed(&self, net: NetId) -> Option<Option<DeviceId>> {
        self.fixed_by.get(net).copied().flatten()
    }

    pub fn trace(&self, start: NetId, stop: &[NetId]) -> Trace {
        // Small bounded sets: linear scans beat hashing at these sizes.
        let mut out = Trace {
            nets: vec![start],
            ..Trace::default()
        };
        let mut next = 0;
        let mut pins_read = 0usize;
        while let Some(&net) = out.nets.get(next) {
            next += 1;
            if let Some(source) = self.fixed(net) {
                out.fixed.push((net, source));
                continue;
            }
            if stop.contains(&net) && net != start {
                continue;
            }
            for &(id, pin_index) in self.index.on(net) {
                pins_read += 1;
                if pins_read > MAX_PINS {
                    return out;
                }
                let Some((device, element)) = device_element(self.cx, id) else {
                    continue;
                };
                let Some(pin) = device.pins.get(pin_index) else {
                    continue;
                };
                match pin_drive(device.kind, element, pin.role) {
                    PinDrive::Passes => {
                        if out.through.len() < MAX_LISTED && !out.through.contains(&id) {
                            out.through.push(id);
                        }
                        for other in &device.pins {
                            if out.nets.len() < MAX_NETS && !out.nets.contains(&other.net) {
                                out.nets.push(other.net);
                            }
                        }
                    }
                    PinDrive::Drives => out.drivers.push((id, pin.role)),
                    PinDrive::MayFloat => out.may_float.push((id, pin.role)),
                    PinDrive::Blocks => {
                        if out.blocked.len() < MAX_LISTED && !out.blocked.contains(&id) {
                            out.blocked.push(id);
                        }
                    }
                    PinDrive::Input => {}
                }
            }
        }
        out
    }
}

/// The parts of a 555 astable in the datasheet's arrangement: RA from VCC to DIS, RB from DIS
/// to THR/TRIG, C from THR/TRIG to GND.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Astable {
    pub ra: DeviceId,
    pub rb: DeviceId,
    pub c: DeviceId,
}

/// The parts of a 555 monostable: R from VCC to THR/DIS, C from THR/DIS to GND.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Monostable {
    pub r: DeviceId,
    pub c: DeviceId,
}

/// Two-terminal devices of `kind` between nets `a` and `b` (either way round).
pub fn between(
    cx: &RuleContext<'_>,
    index: &NetIndex<'_>,
    a: NetId,
    b: NetId,
    want: impl Fn(Kind) -> bool,
) -> Vec<DeviceId> {
    let (near, far) = if index.degree(a) <= index.degree(b) {
        (a, b)
    } else {
        (b, a)
    };
    let mut found: Vec<DeviceId> = index
        .on(near)
        .iter()
        .map(|&(id, _)| id)
        .filter(|&id| {
            cx.circuit.devices().get(id).is_some_and(|d| {
                want(d.kind)
                    && d.pins.len() == 2
                    && d.pins.iter().any(|p| p.net == near)
                    && d.pins.iter().any(|p| p.net == far)
            })
        })
        .collect();
    found.dedup();
    found
}

pub fn astable(cx: &RuleContext<'_>, index: &NetIndex<'_>, timer: &Device) -> Option<Astable> {
    let (vcc, dis, thr, trig) = (
        timer.pin(PinRole::Vcc)?,
        timer.pin(PinRole::Dis)?,
        timer.pin(PinRole::Thr)?,
        timer.pin(PinRole::Trig)?,
    );
    if thr != trig || dis == thr || vcc == dis {
        return None;
    }
    let resistor = |k: Kind| k == Kind::Resistor;
    let [ra] = between(cx, index, vcc, dis, resistor)[..] else {
        return None;
    };
    let [rb] = between(cx, index, dis, thr, resistor)[..] else {
        return None;
    };
    let c = timing_capacitor(cx, index, timer, thr)?;
    Some(Astable { ra, rb, c })
}

pub fn monostable(
    cx: &RuleContext<'_>,
    index: &NetIndex<'_>,
    timer: &Device,
) -> Option<Monostable> {
    let (vcc, dis, thr, trig) = (
        timer.pin(PinRole::Vcc)?,
        timer.pin(PinRole::Dis)?,
        timer.pin(PinRole::Thr)?,
        timer.pin(PinRole::Trig)?,
    );
    if thr != dis || thr == trig {
        return None;
    }
    let [r] = between(cx, index, vcc, thr, |k| k == Kind::Resistor)[..] else {
        return None;
    };
    let c = timing_capacitor(cx, index, timer, thr)?;
    Some(Monostable { r, c })
}

fn timing_capacitor(
    cx: &RuleContext<'_>,
    index: &NetIndex<'_>,
    timer: &Device,
    thr: NetId,
) -> Option<DeviceId> {
    let gnd = timer.pin(PinRole::Gnd)?;
    let [c] = between(cx, index, thr, gnd, |k| k == Kind::Capacitor)[..] else {
        return None;
    };
    Some(c)
}

/// 555 datasheet astable frequency, f ≈ 1.44 / ((RA + 2·RB)·C).
pub fn astable_frequency(ra: f64, rb: f64, c: f64) -> Option<f64> {
    let f = 1.44 / ((ra + 2.0 * rb) * c);
    (f.is_finite() && f > 0.0).then_some(f)
}

/// 555 datasheet monostable pulse width, t ≈ 1.1·R·C.
pub fn monostable_width(r: f64, c: f64) -> Option<f64> {
    let t = 1.1 * r * c;
    (t.is_finite() && t > 0.0).then_some(t)
}

/// The pin's name for messages: its role (`TRIG`, `gate`), or the port name of a kept
/// subcircuit when the role is unknown.
pub fn pin_label(element: &FlatElement, device: &Device, pin_index: usize) -> String {
    let role = device
        .pins
        .get(pin_index)
        .map_or(PinRole::Other, |p| p.role);
    let port = element
        .subckt
        .as_ref()
        .and_then(|s| s.ports.get(pin_index))
        .cloned();
    match (role, port) {
        (PinRole::Other, Some(port)) => port,
        (PinRole::Other, None) => "pin".to_string(),
        (PinRole::Gate, _) => "gate".to_string(),
        (PinRole::Drain, _) => "drain".to_string(),
        (PinRole::Source, _) => "source".to_string(),
        (PinRole::Bulk, _) => "body".to_string(),
        (PinRole::Collector, _) => "collector".to_string(),
        (PinRole::Base, _) => "base".to_string(),
        (PinRole::Emitter, _) => "emitter".to_string(),
        (role, _) => role.as_str().to_ascii_uppercase(),
    }
}

/// A hand-built netlist and circuit for the rules' unit tests, independent of the parser.
#[cfg(test)]
pub mod testkit {
    use crate::analysis::Analysis;
    use crate::circuit::{
        CircuitBuilder, Device, DeviceId, Kind, Net, NetId, PartData, Pin, PinRole,
    };
    use crate::config::Config;
    use crate::diagnostic::Finding;
    use crate::netlist::{FlatElement, FlatNetlist, Num, SourceSpec, Waveform};
    use crate::rules::RuleContext;
    use crate::source::{FileId, Span};

    pub type Check = fn(&RuleContext<'_>, &mut Vec<Finding>);

    pub struct Deck {
        pub netlist: FlatNetlist,
        /// The circuit's nets and devices; `run` builds the circuit with its indexes.
        pub parts: CircuitBuilder,
        pub config: Config,
        pub analysis: Analysis,
        names: std::collections::HashMap<String, NetId>,
    }

    impl Default for Deck {
        fn default() -> Self {
            Deck::new()
        }
    }

    impl Deck {
        pub fn new() -> Deck {
            let mut parts = CircuitBuilder::new();
            parts.add_net(Net {
                name: "0".into(),
                is_ground: true,
            });
            Deck {
                netlist: FlatNetlist::default(),
                parts,
                config: Config::default(),
                analysis: Analysis::default(),
                names: std::collections::HashMap::new(),
            }
        }

        pub fn net(&mut self, name: &str) -> NetId {
            if name == "0" || name.eq_ignore_ascii_case("gnd") {
                return 0;
            }
            let key = name.to_ascii_lowercase();
            if let Some(&i) = self.names.get(&key) {
                return i;
            }
            let id = self.parts.add_net(Net {
                name: name.into(),
                is_ground: false,
            });
            self.names.insert(key, id);
            id
        }

        /// A device added earlier, to rewire or change before the next run.
        pub fn device_mut(&mut self, id: DeviceId) -> &mut Device {
            self.parts.device_mut(id).expect("a device of this deck")
        }

        /// Adds an element; the letter is the name's first character, the line its index + 2.
        pub fn add(
            &mut self,
            name: &str,
            kind: Kind,
            pins: &[(PinRole, &str)],
        ) -> &mut FlatElement {
            let index = self.netlist.elements.len();
            let pins: Vec<Pin> = pins
                .iter()
                .map(|(role, net)| Pin {
                    role: *role,
                    net: self.net(net),
                })
                .collect();
            self.parts.add_device(Device {
                element: index,
                kind,
                pins,
                data: PartData::default(),
            });
            let start = index * 100 + 100;
            self.netlist.elements.push(FlatElement {
                path: name.into(),
                name: name.rsplit('.').next().unwrap_or(name).into(),
                letter: name.chars().next().unwrap_or('?').to_ascii_uppercase(),
                nodes: Vec::new(),
                model: None,
                model_index: None,
                value: None,
                value_text: None,
                value_span: None,
                params: Vec::new(),
                source: None,
                refs: Vec::new(),
                subckt: None,
                span: Span::new(FileId(0), start, start + 20),
                instances: Vec::new(),
            });
            let element = self.netlist.elements.last_mut().expect("just pushed");
            element.nodes = self
                .parts
                .devices()
                .last()
                .map(|d| {
                    d.pins
                        .iter()
                        .map(|p| self.parts.nets()[p.net].name.clone())
                        .collect()
                })
                .unwrap_or_default();
            element
        }

        pub fn two(&mut self, name: &str, kind: Kind, a: &str, b: &str, value: f64, text: &str) {
            let e = self.add(name, kind, &[(PinRole::Pos, a), (PinRole::Neg, b)]);
            e.value = Some(Num::Known(value));
            e.value_text = Some(text.into());
        }

        pub fn r(&mut self, name: &str, a: &str, b: &str, text: &str, ohms: f64) {
            self.two(name, Kind::Resistor, a, b, ohms, text);
        }

        pub fn c(&mut self, name: &str, a: &str, b: &str, farads: f64) {
            self.two(name, Kind::Capacitor, a, b, farads, "c");
        }

        pub fn v(&mut self, name: &str, pos: &str, neg: &str, volts: f64) {
            self.two(name, Kind::VoltageSource, pos, neg, volts, "v");
            if let Some(e) = self.netlist.elements.last_mut() {
                e.source = Some(SourceSpec {
                    dc: Some(volts),
                    wave: Waveform::Dc,
                });
            }
        }

        pub fn pulse(&mut self, name: &str, pos: &str, neg: &str, high: f64, period: f64) {
            self.v(name, pos, neg, 0.0);
            if let Some(e) = self.netlist.elements.last_mut() {
                e.source = Some(SourceSpec {
                    dc: Some(0.0),
                    wave: Waveform::Pulse {
                        v1: 0.0,
                        v2: high,
                        delay: 0.0,
                        rise: 1e-8,
                        fall: 1e-8,
                        width: period / 2.0,
                        period,
                    },
                });
            }
        }

        /// A 555 in DIP-8 order: gnd trig out reset ctrl thr dis vcc.
        pub fn timer(&mut self, name: &str, nets: [&str; 8]) {
            use PinRole::*;
            let roles = [Gnd, Trig, Out, Reset, Ctrl, Thr, Dis, Vcc];
            let pins: Vec<(PinRole, &str)> = roles.into_iter().zip(nets).collect();
            let e = self.add(name, Kind::Timer555, &pins);
            e.model = Some("TIMER555".into());
            e.subckt = Some(crate::netlist::KeptSubckt {
                name: "TIMER555".into(),
                ports: Vec::new(),
                definition: None,
            });
        }

        pub fn mos(&mut self, name: &str, kind: Kind, d: &str, g: &str, s: &str) {
            use PinRole::*;
            self.add(name, kind, &[(Drain, d), (Gate, g), (Source, s), (Bulk, s)]);
        }

        /// A kept two-pin part (motor, solenoid) named by `model`.
        pub fn part(&mut self, name: &str, kind: Kind, model: &str, pins: &[(PinRole, &str)]) {
            let e = self.add(name, kind, pins);
            e.model = Some(model.into());
            e.subckt = Some(crate::netlist::KeptSubckt {
                name: model.into(),
                ports: Vec::new(),
                definition: None,
            });
        }

        pub fn run(&self, check: Check) -> Vec<Finding> {
            let circuit = self.parts.build(&self.netlist, &self.config);
            let cx = RuleContext {
                netlist: &self.netlist,
                circuit: &circuit,
                analysis: &self.analysis,
                config: &self.config,
            };
            let mut out = Vec::new();
            check(&cx, &mut out);
            out
        }

        /// A clean low-side fan drive: 555 astable at about 24 kHz on an N-channel switch.
        pub fn fan() -> Deck {
            use PinRole::*;
            let mut d = Deck::new();
            d.v("V12", "v12", "0", 12.0);
            d.timer("XU1", ["0", "tc", "out", "v12", "ctl", "tc", "dis", "v12"]);
            d.r("RA", "v12", "dis", "5.6k", 5.6e3);
            d.r("RB", "dis", "tc", "27k", 27e3);
            d.c("CT", "tc", "0", 1e-9);
            d.c("CCTL", "ctl", "0", 10e-9);
            d.c("CDEC", "v12", "0", 100e-9);
            d.r("RG", "out", "g", "100", 100.0);
            d.r("RPD", "g", "0", "10k", 10e3);
            d.mos("M1", Kind::Nmos, "d", "g", "0");
            d.part(
                "XFAN",
                Kind::DcMotor,
                "FANMOTOR",
                &[(Pos, "v12"), (Neg, "d")],
            );
            d.add("DFW", Kind::Schottky, &[(Anode, "d"), (Cathode, "v12")]);
            d
        }
    }
}

#[cfg(test)]
mod tests {
    use super::testkit::{Check, Deck};
    use crate::rules::*;

    /// The clean fan drive stays quiet under every hygiene rule.
    #[test]
    fn clean_board_is_quiet() {
        let checks: [Check; 13] = [
            model_missing::check,
            name_duplicate::check,
            element_shorted::check,
            net_dangling::check,
            pin_unconnected::check,
            supply_shorted::check,
            supply_unreferenced::check,
            gate_floating::check,
            timer_reset_floating::check,
            timer_control_unbypassed::check,
            decoupling_missing::check,
            pwm_audible::check,
            value_suspicious::check,
        ];
        let deck = Deck::fan();
        for check in checks {
            let found = deck.run(check);
            assert!(found.is_empty(), "{found:?}");
        }
    }

    #[test]
    fn no_connect_names() {
        for name in ["NC", "nc_3", "XU1.NC2", "unconnected-(U1-Pad3)", "N/C"] {
            assert!(super::is_no_connect_name(name), "{name}");
        }
        for name in ["ncount", "vcc", "sync"] {
            assert!(!super::is_no_connect_name(name), "{name}");
        }
    }
}
