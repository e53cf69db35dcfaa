//! Hand-built boards for analysis tests: a flattened netlist and its circuit graph, written
//! the way the front end and part knowledge would produce them, without parsing text.
#![allow(dead_code)]

use kickback::analysis::{self, Analysis};
use kickback::circuit::{Circuit, Device, DeviceId, Kind, Net, NetId, PartData, Pin, PinRole};
use kickback::config::{Config, SupplyConfig};
use kickback::diagnostic::Finding;
use kickback::netlist::{FlatElement, FlatNetlist, Num, SourceSpec, Waveform};
use kickback::source::Span;

#[derive(Default)]
pub struct Board {
    pub netlist: FlatNetlist,
    pub circuit: Circuit,
    pub config: Config,
}

impl Board {
    pub fn new() -> Board {
        let mut b = Board::default();
        b.circuit.nets.push(Net {
            name: "0".into(),
            is_ground: true,
        });
        b
    }

    pub fn net(&mut self, name: &str) -> NetId {
        if name == "0" {
            return 0;
        }
        if let Some(i) = self
            .circuit
            .nets
            .iter()
            .position(|n| n.name.eq_ignore_ascii_case(name))
        {
            return i;
        }
        self.circuit.nets.push(Net {
            name: name.into(),
            is_ground: false,
        });
        self.circuit.nets.len() - 1
    }

    pub fn element(
        &mut self,
        name: &str,
        nodes: &[&str],
        kind: Kind,
        roles: &[PinRole],
    ) -> DeviceId {
        let pins = nodes
            .iter()
            .zip(roles)
            .map(|(n, &role)| Pin {
                role,
                net: self.net(n),
            })
            .collect();
        self.netlist.elements.push(FlatElement {
            path: name.into(),
            name: name.into(),
            letter: name.chars().next().unwrap_or('X').to_ascii_uppercase(),
            nodes: nodes.iter().map(|n| n.to_string()).collect(),
            model: None,
            model_index: None,
            value: None,
            value_text: None,
            params: Vec::new(),
            source: None,
            refs: Vec::new(),
            subckt: None,
            span: Span::default(),
            instances: Vec::new(),
        });
        self.circuit.devices.push(Device {
            element: self.netlist.elements.len() - 1,
            kind,
            pins,
            data: PartData::default(),
        });
        self.circuit.devices.len() - 1
    }

    /// Sets a part-data number with a provenance naming the test.
    pub fn set(&mut self, device: DeviceId, key: &str, value: f64) -> &mut Self {
        self.circuit.devices[device]
            .data
            .set_if_absent(key, value, format!("test value {key}"));
        self
    }

    fn value(&mut self, device: DeviceId, value: f64) {
        let e = self.circuit.devices[device].element;
        self.netlist.elements[e].value = Some(Num::Known(value));
    }

    pub fn id(&self, name: &str) -> DeviceId {
        self.circuit
            .devices
            .iter()
            .position(|d| self.netlist.elements[d.element].path == name)
            .unwrap_or_else(|| panic!("no device {name}"))
    }

    pub fn r(&mut self, name: &str, a: &str, b: &str, ohms: f64) -> DeviceId {
        let d = self.element(name, &[a, b], Kind::Resistor, &[PinRole::Pos, PinRole::Neg]);
        self.value(d, ohms);
        self.set(d, "resistance", ohms);
        d
    }

    pub fn c(&mut self, name: &str, a: &str, b: &str, farads: f64) -> DeviceId {
        let d = self.element(
            name,
            &[a, b],
            Kind::Capacitor,
            &[PinRole::Pos, PinRole::Neg],
        );
        self.value(d, farads);
        self.set(d, "capacitance", farads);
        d
    }

    pub fn l(&mut self, name: &str, a: &str, b: &str, henries: f64) -> DeviceId {
        let d = self.element(name, &[a, b], Kind::Inductor, &[PinRole::Pos, PinRole::Neg]);
        self.value(d, henries);
        self.set(d, "inductance", henries);
        d
    }

    pub fn dc(&mut self, name: &str, p: &str, n: &str, volts: f64) -> DeviceId {
        let d = self.element(
            name,
            &[p, n],
            Kind::VoltageSource,
            &[PinRole::Pos, PinRole::Neg],
        );
        let e = self.circuit.devices[d].element;
        self.netlist.elements[e].source = Some(SourceSpec {
            dc: Some(volts),
            wave: Waveform::Dc,
        });
        d
    }

    /// A PULSE source with 1 ns edges.
    pub fn pulse(
        &mut self,
        name: &str,
        p: &str,
        n: &str,
        v1: f64,
        v2: f64,
        width: f64,
        period: f64,
    ) -> DeviceId {
        let d = self.element(
            name,
            &[p, n],
            Kind::VoltageSource,
            &[PinRole::Pos, PinRole::Neg],
        );
        let e = self.circuit.devices[d].element;
        self.netlist.elements[e].source = Some(SourceSpec {
            dc: Some(v1),
            wave: Waveform::Pulse {
                v1,
                v2,
                delay: 0.0,
                rise: 1e-9,
                fall: 1e-9,
                width,
                period,
            },
        });
        d
    }

    /// Supply corners as `[supply.NAME]` would give them.
    pub fn corners(&mut self, name: &str, min: f64, max: f64) {
        self.config.supplies.insert(
            name.into(),
            SupplyConfig {
                min: Some(min),
                nominal: None,
                max: Some(max),
            },
        );
    }

    pub fn nmos(&mut self, name: &str, d: &str, g: &str, s: &str, vto: f64, kp: f64) -> DeviceId {
        let m = self.element(
            name,
            &[d, g, s, s],
            Kind::Nmos,
            &[
                PinRole::Drain,
                PinRole::Gate,
                PinRole::Source,
                PinRole::Bulk,
            ],
        );
        self.set(m, "vto", vto).set(m, "kp", kp);
        m
    }

    pub fn pmos(&mut self, name: &str, d: &str, g: &str, s: &str, vto: f64, kp: f64) -> DeviceId {
        let m = self.element(
            name,
            &[d, g, s, s],
            Kind::Pmos,
            &[
                PinRole::Drain,
                PinRole::Gate,
                PinRole::Source,
                PinRole::Bulk,
            ],
        );
        self.set(m, "vto", vto).set(m, "kp", kp);
        m
    }

    pub fn npn(&mut self, name: &str, c: &str, b: &str, e: &str, bf: f64) -> DeviceId {
        let q = self.element(
            name,
            &[c, b, e],
            Kind::Npn,
            &[PinRole::Collector, PinRole::Base, PinRole::Emitter],
        );
        self.set(q, "bf", bf).set(q, "is", 1e-14);
        q
    }

    pub fn diode(&mut self, name: &str, kind: Kind, a: &str, k: &str) -> DeviceId {
        self.element(name, &[a, k], kind, &[PinRole::Anode, PinRole::Cathode])
    }

    pub fn load(
        &mut self,
        name: &str,
        kind: Kind,
        pos: &str,
        neg: &str,
        data: &[(&str, f64)],
    ) -> DeviceId {
        let d = self.element(name, &[pos, neg], kind, &[PinRole::Pos, PinRole::Neg]);
        for (k, v) in data {
            self.set(d, k, *v);
        }
        d
    }

    pub fn pot(&mut self, name: &str, a: &str, w: &str, b: &str, ohms: f64) -> DeviceId {
        let d = self.element(
            name,
            &[a, w, b],
            Kind::Potentiometer,
            &[PinRole::A, PinRole::Wiper, PinRole::B],
        );
        self.set(d, "resistance", ohms);
        d
    }

    /// A bipolar 555 with its pins in DIP-8 order: gnd trig out reset ctrl thr dis vcc.
    pub fn timer(&mut self, name: &str, pins: [&str; 8]) -> DeviceId {
        use PinRole::*;
        let t = self.element(
            name,
            &pins,
            Kind::Timer555,
            &[Gnd, Trig, Out, Reset, Ctrl, Thr, Dis, Vcc],
        );
        self.set(t, "out_high_drop", 1.7);
        t
    }

    pub fn analyze(&self) -> (Analysis, Vec<Finding>) {
        analysis::analyze(&self.netlist, &self.circuit, &self.config)
    }
}

pub fn assert_close(got: f64, want: f64, rel: f64, what: &str) {
    let tol = rel * want.abs().max(1e-12);
    assert!(
        (got - want).abs() <= tol,
        "{what}: got {got}, want {want} (±{tol})"
    );
}
