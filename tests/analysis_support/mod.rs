//! Hand-built boards for analysis tests: flattened netlists written the way the front end
//! produces them (element letters, model cards, kept subcircuits, instance parameters), turned
//! into a circuit by the real part knowledge (`Circuit::build`).
#![allow(dead_code)]

use kickback::analysis::{self, Analysis};
use kickback::circuit::{Circuit, DeviceId, Kind};
use kickback::config::{Config, SupplyConfig};
use kickback::diagnostic::Finding;
use kickback::netlist::{FlatElement, FlatNetlist, KeptSubckt, Model, Num, SourceSpec, Waveform};
use kickback::source::{FileId, Span};

#[derive(Default)]
pub struct Board {
    pub netlist: FlatNetlist,
    pub config: Config,
}

impl Board {
    pub fn new() -> Board {
        Board::default()
    }

    /// Adds an element; its device id is its position (one device per element).
    fn element(&mut self, name: &str, nodes: &[&str]) -> DeviceId {
        let line = self.netlist.elements.len();
        self.netlist.elements.push(FlatElement {
            path: name.into(),
            name: name.into(),
            letter: name.chars().next().unwrap_or('X').to_ascii_uppercase(),
            nodes: nodes.iter().map(|n| n.to_string()).collect(),
            model: None,
            model_index: None,
            value: None,
            value_text: None,
            value_span: None,
            params: Vec::new(),
            source: None,
            refs: Vec::new(),
            subckt: None,
            // One line of 40 bytes per element, so that spans tell elements apart.
            span: Span::new(FileId(0), line * 40, line * 40 + 30),
            instances: Vec::new(),
        });
        line
    }

    fn value(&mut self, device: DeviceId, value: f64) {
        self.netlist.elements[device].value = Some(Num::Known(value));
        self.netlist.elements[device].value_text = Some(value.to_string());
    }

    /// An instance parameter (`rated_voltage=3`), as the netlist would carry it.
    pub fn param(&mut self, device: DeviceId, key: &str, value: f64) -> &mut Self {
        self.netlist.elements[device]
            .params
            .push((key.to_ascii_lowercase(), Num::Known(value)));
        self
    }

    fn model(&mut self, device: DeviceId, name: &str, kind: &str, params: &[(&str, f64)]) {
        self.netlist.models.push(Model {
            name: name.into(),
            kind: kind.into(),
            params: params
                .iter()
                .map(|(k, v)| (k.to_ascii_lowercase(), Num::Known(*v)))
                .collect(),
            span: Span::default(),
        });
        let e = &mut self.netlist.elements[device];
        e.model = Some(name.into());
        e.model_index = Some(self.netlist.models.len() - 1);
    }

    fn kept(&mut self, device: DeviceId, subckt: &str) {
        let e = &mut self.netlist.elements[device];
        e.model = Some(subckt.into());
        e.subckt = Some(KeptSubckt {
            name: subckt.into(),
            ports: Vec::new(),
            definition: None,
        });
    }

    pub fn id(&self, name: &str) -> DeviceId {
        self.netlist
            .elements
            .iter()
            .position(|e| e.path == name)
            .unwrap_or_else(|| panic!("no element {name}"))
    }

    pub fn r(&mut self, name: &str, a: &str, b: &str, ohms: f64) -> DeviceId {
        let d = self.element(name, &[a, b]);
        self.value(d, ohms);
        d
    }

    pub fn c(&mut self, name: &str, a: &str, b: &str, farads: f64) -> DeviceId {
        let d = self.element(name, &[a, b]);
        self.value(d, farads);
        d
    }

    pub fn l(&mut self, name: &str, a: &str, b: &str, henries: f64) -> DeviceId {
        let d = self.element(name, &[a, b]);
        self.value(d, henries);
        d
    }

    pub fn dc(&mut self, name: &str, p: &str, n: &str, volts: f64) -> DeviceId {
        let d = self.element(name, &[p, n]);
        self.netlist.elements[d].source = Some(SourceSpec {
            dc: Some(volts),
            wave: Waveform::Dc,
        });
        d
    }

    /// A PULSE source with 1 ns edges.
    #[allow(clippy::too_many_arguments)]
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
        let d = self.element(name, &[p, n]);
        self.netlist.elements[d].source = Some(SourceSpec {
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

    /// Supply corners as `[supply.NAME]` gives them.
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

    /// An N-channel MOSFET with its own `.model NMOS (VTO KP)`; W = L = 1.
    pub fn nmos(&mut self, name: &str, d: &str, g: &str, s: &str, vto: f64, kp: f64) -> DeviceId {
        let m = self.element(name, &[d, g, s, s]);
        self.model(m, &format!("N_{name}"), "NMOS", &[("vto", vto), ("kp", kp)]);
        m
    }

    /// A P-channel MOSFET; `vto` as the model card writes it (negative).
    pub fn pmos(&mut self, name: &str, d: &str, g: &str, s: &str, vto: f64, kp: f64) -> DeviceId {
        let m = self.element(name, &[d, g, s, s]);
        self.model(m, &format!("P_{name}"), "PMOS", &[("vto", vto), ("kp", kp)]);
        m
    }

    pub fn npn(&mut self, name: &str, c: &str, b: &str, e: &str, bf: f64) -> DeviceId {
        let q = self.element(name, &[c, b, e]);
        self.model(q, &format!("Q_{name}"), "NPN", &[("bf", bf), ("is", 1e-14)]);
        q
    }

    /// A diode whose model name says its kind (`DSCHOTTKY`, `DZENER`, `DTVS`).
    pub fn diode(&mut self, name: &str, kind: Kind, a: &str, k: &str) -> DeviceId {
        let d = self.element(name, &[a, k]);
        let model = match kind {
            Kind::Schottky => "DSCHOTTKY",
            Kind::Zener => "DZENER",
            Kind::Tvs => "DTVS",
            _ => "DGEN",
        };
        self.model(d, &format!("{model}_{name}"), "D", &[]);
        d
    }

    /// A load part as a kept subcircuit whose name says its kind, ratings as parameters.
    pub fn load(
        &mut self,
        name: &str,
        kind: Kind,
        pos: &str,
        neg: &str,
        data: &[(&str, f64)],
    ) -> DeviceId {
        let d = self.element(name, &[pos, neg]);
        let subckt = match kind {
            Kind::RelayCoil => "RELAY",
            Kind::Solenoid => "SOLENOID",
            _ => "MOTOR",
        };
        self.kept(d, subckt);
        for (k, v) in data {
            self.param(d, k, *v);
        }
        d
    }

    pub fn pot(&mut self, name: &str, a: &str, w: &str, b: &str, ohms: f64) -> DeviceId {
        let d = self.element(name, &[a, w, b]);
        self.kept(d, "POT");
        self.param(d, "r", ohms);
        d
    }

    /// A bipolar 555 with its ports in DIP-8 order: gnd trig out reset ctrl thr dis vcc.
    pub fn timer(&mut self, name: &str, pins: [&str; 8]) -> DeviceId {
        let t = self.element(name, &pins);
        self.kept(t, "NE555");
        t
    }

    pub fn circuit(&self) -> Circuit {
        let (circuit, findings) = Circuit::build(&self.netlist, &self.config);
        assert!(findings.is_empty(), "circuit findings: {findings:?}");
        circuit
    }

    pub fn analyze(&self) -> (Analysis, Vec<Finding>) {
        analysis::analyze(&self.netlist, &self.circuit(), &self.config)
    }
}

pub fn assert_close(got: f64, want: f64, rel: f64, what: &str) {
    let tol = rel * want.abs().max(1e-12);
    assert!(
        (got - want).abs() <= tol,
        "{what}: got {got}, want {want} (±{tol})"
    );
}
