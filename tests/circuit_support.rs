//! Builds flattened netlists by hand for the circuit tests: `el("XCH2.M1", "d g s s")` gives an
//! element named `M1` at path `XCH2.M1`, letter `M`, with those nodes.
#![allow(dead_code)]

use kickback::circuit::Circuit;
use kickback::config::Config;
use kickback::diagnostic::{Finding, InstanceStep};
use kickback::netlist::{FlatElement, FlatNetlist, KeptSubckt, Model, Num};
use kickback::source::{FileId, Span};
use std::path::Path;

pub struct El(pub FlatElement);

pub fn el(path: &str, nodes: &str) -> El {
    let segments: Vec<&str> = path.split('.').collect();
    let name = segments.last().copied().unwrap_or(path).to_string();
    let instances = segments
        .iter()
        .take(segments.len().saturating_sub(1))
        .map(|s| InstanceStep {
            name: s.to_string(),
            span: Span::default(),
        })
        .collect();
    El(FlatElement {
        path: path.to_string(),
        letter: name.chars().next().map_or('?', |c| c.to_ascii_uppercase()),
        name,
        nodes: nodes.split_whitespace().map(str::to_string).collect(),
        model: None,
        model_index: None,
        value: None,
        value_text: None,
        value_span: None,
        params: Vec::new(),
        source: None,
        refs: Vec::new(),
        subckt: None,
        span: Span::default(),
        instances,
    })
}

impl El {
    pub fn model(mut self, name: &str) -> El {
        self.0.model = Some(name.to_string());
        self
    }

    pub fn value(mut self, value: f64) -> El {
        self.0.value = Some(Num::Known(value));
        self.0.value_text = Some(value.to_string());
        self
    }

    pub fn param(mut self, key: &str, value: f64) -> El {
        self.0.params.push((key.to_string(), Num::Known(value)));
        self
    }

    /// An instance of a subcircuit kept whole, with its definition's ports (may be empty).
    pub fn kept(mut self, subckt: &str, ports: &str) -> El {
        self.0.model = Some(subckt.to_string());
        self.0.subckt = Some(KeptSubckt {
            name: subckt.to_string(),
            ports: ports.split_whitespace().map(str::to_string).collect(),
            definition: (!ports.is_empty()).then(|| Span::new(FileId(0), 5000, 5040)),
        });
        self
    }
}

#[derive(Default)]
pub struct Deck {
    pub netlist: FlatNetlist,
}

impl Deck {
    pub fn new() -> Deck {
        Deck::default()
    }

    pub fn with(mut self, element: El) -> Deck {
        let mut element = element.0;
        let line = self.netlist.elements.len();
        // One line of 40 bytes per element, so that spans tell elements apart.
        element.span = Span::new(FileId(0), line * 40, line * 40 + 30);
        self.netlist.elements.push(element);
        self
    }

    pub fn model(mut self, name: &str, kind: &str, params: &[(&str, f64)]) -> Deck {
        self.netlist.models.push(Model {
            name: name.to_string(),
            kind: kind.to_ascii_uppercase(),
            params: params
                .iter()
                .map(|(k, v)| (k.to_ascii_lowercase(), Num::Known(*v)))
                .collect(),
            span: Span::default(),
        });
        self
    }

    /// Resolves model names to cards, as the front end does.
    pub fn finish(mut self) -> FlatNetlist {
        let models = &self.netlist.models;
        for element in &mut self.netlist.elements {
            if let Some(name) = &element.model {
                element.model_index = models
                    .iter()
                    .position(|m| m.name.eq_ignore_ascii_case(name));
            }
        }
        self.netlist
    }

    pub fn build(self, config: &Config) -> (Circuit, Vec<Finding>, FlatNetlist) {
        let netlist = self.finish();
        let (circuit, findings) = Circuit::build(&netlist, config);
        (circuit, findings, netlist)
    }
}

pub fn config(text: &str) -> Config {
    match Config::parse(text, Path::new("kickback.toml")) {
        Ok(config) => config,
        Err(e) => panic!("test config does not parse: {e}"),
    }
}

/// The device with this path; panics with the path when there is none.
pub fn device<'c>(circuit: &'c Circuit, path: &str) -> &'c kickback::circuit::Device {
    circuit
        .device_named(path)
        .and_then(|id| circuit.device(id))
        .unwrap_or_else(|| panic!("no device {path}"))
}

pub fn id(circuit: &Circuit, path: &str) -> usize {
    circuit
        .device_named(path)
        .unwrap_or_else(|| panic!("no device {path}"))
}

pub fn net(circuit: &Circuit, name: &str) -> usize {
    circuit
        .net_named(name)
        .unwrap_or_else(|| panic!("no net {name}"))
}
