//! A small builder for the switching and stress rules' tests: netlist lines, devices with pin
//! roles and part data, and hand-written analysis facts, so each rule can be checked against
//! the facts contract on its own.

#![allow(dead_code)]

use kickback::analysis::{
    Analysis, DriverFacts, EffectiveMethod, Freewheel, FreewheelKind, LoadFacts, Range, Side,
    Stage, SupplyFacts, SwitchFacts, TimerFacts, TimerMode,
};
use kickback::circuit::{
    Circuit, Device, DeviceId, Kind, Net, NetId, PartData, Pin, PinRole, Rated,
};
use kickback::config::Config;
use kickback::diagnostic::{Finding, InstanceStep};
use kickback::netlist::{FlatElement, FlatNetlist, SourceSpec, Waveform};
use kickback::rules::RuleContext;
use kickback::source::{FileId, Span};

pub struct Kit {
    pub text: String,
    pub netlist: FlatNetlist,
    pub circuit: Circuit,
    pub analysis: Analysis,
    pub config: Config,
}

impl Default for Kit {
    fn default() -> Self {
        Kit::new()
    }
}

impl Kit {
    pub fn new() -> Kit {
        let mut circuit = Circuit::default();
        circuit.nets.push(Net {
            name: "0".into(),
            is_ground: true,
        });
        Kit {
            text: "test deck\n".into(),
            netlist: FlatNetlist::default(),
            circuit,
            analysis: Analysis::default(),
            config: Config::default(),
        }
    }

    pub fn net(&mut self, name: &str) -> NetId {
        if name == "0" || name.eq_ignore_ascii_case("gnd") {
            return 0;
        }
        if let Some(i) = self.circuit.nets.iter().position(|n| n.name == name) {
            return i;
        }
        self.circuit.nets.push(Net {
            name: name.into(),
            is_ground: false,
        });
        self.circuit.nets.len() - 1
    }

    fn add_line(&mut self, line: &str) -> Span {
        let start = self.text.len();
        self.text.push_str(line);
        let span = Span::new(FileId(0), start, self.text.len());
        self.text.push('\n');
        span
    }

    /// Adds an element line and its device. `pins` pairs each node (in line order) with a role.
    pub fn part(
        &mut self,
        line: &str,
        kind: Kind,
        pins: &[(PinRole, &str)],
        data: &[(&str, f64)],
    ) -> DeviceId {
        let span = self.add_line(line);
        let name = line.split_whitespace().next().unwrap_or("?").to_string();
        let letter = name.chars().next().unwrap_or('?').to_ascii_uppercase();
        let mut part_data = PartData::default();
        for (k, v) in data {
            part_data.set_if_absent(k, *v, "from config [parts.TEST]");
        }
        let value = line
            .split_whitespace()
            .nth(pins.len() + 1)
            .and_then(|t| t.parse::<f64>().ok());
        let pin_list: Vec<Pin> = pins
            .iter()
            .map(|(role, net)| Pin {
                role: *role,
                net: self.net(net),
            })
            .collect();
        let element = FlatElement {
            path: name.clone(),
            name,
            letter,
            nodes: pins.iter().map(|(_, n)| n.to_string()).collect(),
            model: None,
            model_index: None,
            value: value.map(kickback::netlist::Num::Known),
            value_text: None,
            value_span: None,
            params: Vec::new(),
            source: None,
            refs: Vec::new(),
            subckt: None,
            span,
            instances: Vec::new(),
        };
        self.netlist.elements.push(element);
        self.circuit.devices.push(Device {
            element: self.netlist.elements.len() - 1,
            kind,
            pins: pin_list,
            data: part_data,
        });
        self.circuit.devices.len() - 1
    }

    pub fn two(&mut self, line: &str, kind: Kind, data: &[(&str, f64)]) -> DeviceId {
        let tokens: Vec<String> = line.split_whitespace().map(str::to_string).collect();
        let (a, b) = (tokens[1].clone(), tokens[2].clone());
        let roles = if kind.is_diode_like() {
            (PinRole::Anode, PinRole::Cathode)
        } else {
            (PinRole::Pos, PinRole::Neg)
        };
        self.part(line, kind, &[(roles.0, &a), (roles.1, &b)], data)
    }

    /// A voltage source line `V.. pos neg ...` with its spec.
    pub fn source(&mut self, line: &str, spec: SourceSpec) -> DeviceId {
        let id = self.two(line, Kind::VoltageSource, &[]);
        self.netlist.elements.last_mut().unwrap().source = Some(spec);
        id
    }

    pub fn dc(&mut self, line: &str, v: f64) -> DeviceId {
        self.source(
            line,
            SourceSpec {
                dc: Some(v),
                wave: Waveform::Dc,
            },
        )
    }

    /// Places a device inside an instance: its path becomes `INST.NAME`.
    pub fn inside(&mut self, id: DeviceId, instance_line: &str) {
        let span = self.add_line(instance_line);
        let inst = instance_line.split_whitespace().next().unwrap().to_string();
        let e = self
            .netlist
            .elements
            .get_mut(self.circuit.devices[id].element)
            .unwrap();
        e.path = format!("{inst}.{}", e.name);
        e.instances = vec![InstanceStep { name: inst, span }];
    }

    pub fn run(&self, check: fn(&RuleContext<'_>, &mut Vec<Finding>)) -> Vec<Finding> {
        let cx = RuleContext {
            netlist: &self.netlist,
            circuit: &self.circuit,
            analysis: &self.analysis,
            config: &self.config,
        };
        let mut out = Vec::new();
        check(&cx, &mut out);
        out
    }

    /// Runs a rule and, with `KICKBACK_SHOW` set, prints its findings for a reader.
    pub fn show(&self, check: fn(&RuleContext<'_>, &mut Vec<Finding>)) -> Vec<Finding> {
        let found = self.run(check);
        if std::env::var_os("KICKBACK_SHOW").is_some() {
            for f in &found {
                eprintln!(
                    "{} {} at {}: {}",
                    f.severity,
                    f.rule,
                    self.element_at(f.span),
                    f.message
                );
                for l in &f.labels {
                    eprintln!("    label {}: {}", self.element_at(l.span), l.message);
                }
                if let Some(h) = &f.help {
                    eprintln!("    help: {h}");
                }
                for v in &f.values {
                    eprintln!(
                        "    value {} = {} {} ({})",
                        v.name, v.value, v.unit, v.source
                    );
                }
            }
        }
        found
    }

    pub fn line_of(&self, span: Span) -> &str {
        let start = span.start as usize;
        let line_start = self.text[..start].rfind('\n').map_or(0, |i| i + 1);
        let line_end = self.text[start..]
            .find('\n')
            .map_or(self.text.len(), |i| start + i);
        &self.text[line_start..line_end]
    }

    /// The first word of the line a span points into.
    pub fn element_at(&self, span: Span) -> String {
        self.line_of(span)
            .split_whitespace()
            .next()
            .unwrap_or("")
            .to_string()
    }

    pub fn labelled(&self, f: &Finding) -> Vec<String> {
        f.labels.iter().map(|l| self.element_at(l.span)).collect()
    }
}

pub fn range(min: f64, max: f64, min_state: &str, max_state: &str) -> Range {
    Range {
        min,
        max,
        min_state: min_state.into(),
        max_state: max_state.into(),
    }
}

pub fn point(v: f64, state: &str) -> Range {
    Range::point(v, state)
}

pub fn value(f: &Finding, name: &str) -> f64 {
    f.values
        .iter()
        .find(|q| q.name == name)
        .unwrap_or_else(|| panic!("no value {name} in {:?}", f.values))
        .value
}

pub fn pulse(v1: f64, v2: f64, delay: f64, width: f64, period: f64) -> SourceSpec {
    SourceSpec {
        dc: Some(v1),
        wave: Waveform::Pulse {
            v1,
            v2,
            delay,
            rise: 10e-9,
            fall: 10e-9,
            width,
            period,
        },
    }
}

pub fn switch(device: DeviceId, kind: Kind, side: Side) -> SwitchFacts {
    SwitchFacts {
        device,
        kind,
        stage: Stage::Switch,
        stage_reason: "driven by a test pulse".to_string(),
        side,
        switched_net: None,
        anchor_net: None,
        rail_v: None,
        rail_net: None,
        rail_supply: None,
        load: None,
        parallel_loads: Vec::new(),
        branch: Vec::new(),
        inductive: false,
        driver: None,
        freewheel: Vec::new(),
        bridge_partner: None,
        vgs_on_v: None,
        vgs_off_v: None,
        base_current_a: None,
        vds_on_v: None,
        current_a: None,
        rds_on_ohm: None,
        dissipation_w: None,
        duty: None,
        frequency_hz: None,
        follower: false,
        linear_region: false,
        gain: None,
        saturated_current_a: None,
        gate_edges: None,
    }
}

pub fn load(device: DeviceId, kind: Kind) -> LoadFacts {
    LoadFacts {
        device,
        kind,
        rated_v: None,
        resistance: None,
        inductance: None,
        peak_v: None,
        full_on_v: None,
        avg_v: None,
        effective_v: None,
        effective_method: EffectiveMethod::RmsAssumed,
        ripple_a: None,
        duty_limit: None,
        time_constant_s: None,
        current_a: None,
        duty: None,
        frequency_hz: None,
        stored_energy_j: None,
        switch: None,
        freewheel: None,
        driven_by: None,
        drive: None,
    }
}

pub fn driver(device: DeviceId, network: Vec<DeviceId>) -> DriverFacts {
    DriverFacts {
        device,
        control: Some(device),
        on_when_high: None,
        network,
        shared_with: Default::default(),
        boosted: false,
        bootstrap: None,
        can_float: false,
    }
}

pub fn supply(kit: &mut Kit, line: &str, v: f64) -> DeviceId {
    let id = kit.dc(line, v);
    kit.analysis.supplies.push(SupplyFacts {
        device: id,
        nominal: v,
        min: v,
        max: v,
        source: "test".into(),
    });
    id
}

pub fn rated(v: f64, source: &str) -> Option<Rated> {
    Some(Rated {
        value: v,
        source: source.into(),
    })
}

pub fn timer(device: DeviceId, supply_v: f64) -> TimerFacts {
    TimerFacts {
        device,
        mode: TimerMode::Astable,
        supply_v: Some(point(supply_v, "supply")),
        high_s: None,
        low_s: None,
        period_s: None,
        frequency_hz: None,
        duty: None,
        discharge_current_a: None,
        discharge_chain: Vec::new(),
        discharge_dump: None,
        discharge_dump_state: None,
        timing_capacitor: None,
        pots: Vec::new(),
        stuck: None,
        trigger: None,
        divided_frequency_hz: None,
        divided_duty: None,
        output_current_a: None,
        upper_threshold_v: None,
        lower_threshold_v: None,
        discharge_source_ohms: None,
        discharge_open_v: None,
        charge_path: Vec::new(),
        discharge_path: Vec::new(),
    }
}

pub fn freewheel(device: DeviceId, kind: FreewheelKind, reversed: bool) -> Freewheel {
    Freewheel {
        device,
        kind,
        reversed,
        on_state_current_a: None,
        off_state_current_a: None,
        peak_current_a: None,
        avg_current_a: None,
        on_state_reverse_v: None,
    }
}
