//! States and corners, and the DC solve of one sub-network in one state.
//!
//! A state fixes each supply at a corner (min / nominal / max), each pulse source, timer output
//! and logic output high or low, and each pot's wiper. The parts become behavioural stand-ins
//! (see [`super::stand_in`]) and the DC engine solves the sub-network.

use super::dc::{self, DcError, Network, Node, OperatingPoint, SolveCache, SolveOptions};
use super::partition::{Component, Fixed, Partition};
use super::plausible::Variant;
pub use super::solved::{Built, Solved};
use super::stand_in;
use crate::circuit::{Circuit, DeviceId, Kind, NetId};
use crate::config::Config;
use crate::netlist::{FlatNetlist, Waveform};
use std::collections::BTreeMap;
use std::sync::Arc;

#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum Corner {
    Min,
    Nominal,
    Max,
}

impl Corner {
    pub const ALL: [Corner; 3] = [Corner::Min, Corner::Nominal, Corner::Max];

    pub fn as_str(self) -> &'static str {
        match self {
            Corner::Min => "min",
            Corner::Nominal => "nominal",
            Corner::Max => "max",
        }
    }
}

/// Supply corners of an independent DC source.
#[derive(Clone, Debug, PartialEq)]
pub struct SupplyCorners {
    pub device: DeviceId,
    pub min: f64,
    pub nominal: f64,
    pub max: f64,
    pub source: String,
}

impl SupplyCorners {
    pub fn at(&self, corner: Corner) -> f64 {
        match corner {
            Corner::Min => self.min,
            Corner::Nominal => self.nominal,
            Corner::Max => self.max,
        }
    }
}

/// One state of the circuit (or of the part of it a sub-network sees).
#[derive(Clone, Debug, PartialEq)]
pub struct State {
    pub corner: Corner,
    /// Switching inputs (pulse sources, timers, logic outputs) that are high; others are low.
    pub high: Vec<DeviceId>,
    /// Wiper position of each pot, 0 at its `a` end, 1 at its `b` end.
    pub wipers: BTreeMap<DeviceId, f64>,
}

impl State {
    pub fn is_high(&self, device: DeviceId) -> bool {
        self.high.binary_search(&device).is_ok()
    }

    pub fn wiper(&self, device: DeviceId) -> f64 {
        self.wipers.get(&device).copied().unwrap_or(0.5)
    }

    /// `V12 at max, VSTIR high, U2 low, RV1 wiper at 0 %`.
    pub fn describe(&self, cx: &Context<'_>, inputs: &[DeviceId]) -> String {
        let mut parts = Vec::new();
        for supply in &cx.supplies {
            if supply.min != supply.max {
                parts.push(format!(
                    "{} at {}",
                    cx.name(supply.device),
                    self.corner.as_str()
                ));
            }
        }
        for &input in inputs {
            let level = if self.is_high(input) { "high" } else { "low" };
            parts.push(format!("{} {}", cx.name(input), level));
        }
        for (&pot, &x) in &self.wipers {
            parts.push(format!("{} wiper at {:.0} %", cx.name(pot), x * 100.0));
        }
        if parts.is_empty() {
            "the steady state".to_string()
        } else {
            parts.join(", ")
        }
    }
}

/// What every solve needs: the circuit, its netlist, supplies and the partition.
pub struct Context<'a> {
    pub netlist: &'a FlatNetlist,
    pub circuit: &'a Circuit,
    pub config: &'a Config,
    pub partition: Partition,
    pub supplies: Vec<SupplyCorners>,
    pub options: SolveOptions,
    /// Every DC solve of the analyses goes through this memo (see [`dc::solve_cached`]):
    /// analyses that solve the same sub-network in the same state, and channels built alike,
    /// share one Newton run.
    pub cache: SolveCache,
    /// Work bound of one timer's analysis, in solves ([`super::budget::TIMER_SOLVES`]).
    pub timer_solves: usize,
    /// Each net's name, shared with every network built here (a node's name costs no copy).
    net_names: Vec<Arc<str>>,
}

impl<'a> Context<'a> {
    pub fn new(netlist: &'a FlatNetlist, circuit: &'a Circuit, config: &'a Config) -> Self {
        let partition = super::partition::partition(circuit, netlist);
        let supplies = supply_corners(netlist, circuit, config);
        Context {
            netlist,
            circuit,
            config,
            partition,
            supplies,
            options: SolveOptions::default(),
            cache: SolveCache::new(),
            timer_solves: super::budget::TIMER_SOLVES,
            net_names: circuit
                .nets()
                .iter()
                .map(|n| Arc::from(n.name.as_str()))
                .collect(),
        }
    }

    /// The device's flattened name (`XCH1.M1`).
    pub fn name(&self, device: DeviceId) -> &str {
        self.circuit
            .devices()
            .get(device)
            .and_then(|d| self.netlist.elements.get(d.element))
            .map(|e| e.path.as_str())
            .unwrap_or("?")
    }

    fn net_name(&self, net: NetId) -> Arc<str> {
        self.net_names
            .get(net)
            .cloned()
            .unwrap_or_else(|| Arc::from("?"))
    }

    pub fn supply(&self, device: DeviceId) -> Option<&SupplyCorners> {
        self.supplies.iter().find(|s| s.device == device)
    }

    /// Potential of a fixed net in a state (`None` for free nets).
    pub fn fixed_voltage(&self, net: NetId, state: &State) -> Option<f64> {
        match self.partition.fixed.get(net).copied().flatten()? {
            Fixed::Ground => Some(0.0),
            Fixed::Source { device, sign } => Some(sign * self.source_voltage(device, state)?),
        }
    }

    /// Voltage of an independent source in a state: its corner for supplies, its level for
    /// pulse sources.
    pub fn source_voltage(&self, device: DeviceId, state: &State) -> Option<f64> {
        if let Some(s) = self.supply(device) {
            return Some(s.at(state.corner));
        }
        let element = self
            .netlist
            .elements
            .get(self.circuit.devices().get(device)?.element)?;
        let spec = element.source.as_ref()?;
        match spec.levels() {
            // "High" is the higher of the two levels, whatever the order the PULSE lists them
            // in: `PULSE(12 0 …)` is high at 12 V.
            Some((lo, hi)) if is_switching(&spec.wave) => {
                Some(if state.is_high(device) { hi } else { lo })
            }
            _ => spec.dc.or_else(|| spec.levels().map(|l| l.0)),
        }
    }

    /// The switching inputs a component sees: pulse sources on its boundary or floating inside
    /// it, timers and logic outputs whose pins sit in it.
    pub fn inputs(&self, component: &Component) -> Vec<DeviceId> {
        let mut inputs = Vec::new();
        for &device in &component.devices {
            let d = &self.circuit.devices()[device];
            if matches!(
                d.kind,
                Kind::Timer555 | Kind::Timer555Cmos | Kind::LogicOutput
            ) {
                inputs.push(device);
            }
            // A pulse source floating inside the component (gate to source, say).
            if self.is_pulse_source(device) {
                inputs.push(device);
            }
            for pin in &d.pins {
                if let Some(Some(Fixed::Source { device: src, .. })) =
                    self.partition.fixed.get(pin.net)
                {
                    if self.is_pulse_source(*src) {
                        inputs.push(*src);
                    }
                }
            }
        }
        inputs.sort_unstable();
        inputs.dedup();
        inputs
    }

    pub fn is_pulse_source(&self, device: DeviceId) -> bool {
        self.circuit
            .devices()
            .get(device)
            .and_then(|d| self.netlist.elements.get(d.element))
            .and_then(|e| e.source.as_ref())
            .is_some_and(|s| is_switching(&s.wave))
    }

    /// Pots in a component.
    pub fn pots(&self, component: &Component) -> Vec<DeviceId> {
        component
            .devices
            .iter()
            .copied()
            .filter(|&d| self.circuit.devices()[d].kind == Kind::Potentiometer)
            .collect()
    }

    /// Every state worth solving for a component: each corner × each combination of its
    /// inputs (all of them up to 2⁶; beyond that all-low, all-high and each one alone) ×
    /// wipers at the given positions (each pot on its own grid, the others at mid travel).
    pub fn states(&self, component: &Component, wiper_grid: &[f64]) -> Vec<State> {
        let inputs = self.inputs(component);
        let pots = self.pots(component);
        let mut levels: Vec<Vec<DeviceId>> = Vec::new();
        if inputs.len() <= 6 {
            for mask in 0u32..(1 << inputs.len()) {
                levels.push(
                    inputs
                        .iter()
                        .enumerate()
                        .filter(|(i, _)| mask & (1 << i) != 0)
                        .map(|(_, &d)| d)
                        .collect(),
                );
            }
        } else {
            levels.push(Vec::new());
            levels.push(inputs.clone());
            for &d in &inputs {
                levels.push(vec![d]);
            }
        }
        let mut wiper_sets: Vec<BTreeMap<DeviceId, f64>> = Vec::new();
        if pots.is_empty() {
            wiper_sets.push(BTreeMap::new());
        } else {
            for &pot in &pots {
                for &x in wiper_grid {
                    let mut set: BTreeMap<DeviceId, f64> = pots.iter().map(|&p| (p, 0.5)).collect();
                    set.insert(pot, x);
                    if !wiper_sets.contains(&set) {
                        wiper_sets.push(set);
                    }
                }
            }
        }
        let corners: &[Corner] = if self.supplies.iter().any(|s| s.min != s.max) {
            &Corner::ALL
        } else {
            &[Corner::Nominal]
        };
        let mut states = Vec::new();
        for &corner in corners {
            for high in &levels {
                for wipers in &wiper_sets {
                    states.push(State {
                        corner,
                        high: high.clone(),
                        wipers: wipers.clone(),
                    });
                }
            }
        }
        states
    }

    /// Solves one component in one state, and checks that the answer means something: inside
    /// what its sources can drive, and not resting on an assumed transistor gain (see
    /// [`super::plausible`]); a state that fails the check is [`DcError::Implausible`].
    pub fn solve(&self, component: &Component, state: &State) -> Result<Solved, DcError> {
        if let Some(e) = self.oversized(component) {
            return Err(e);
        }
        super::plausible::solve(self, component, state)
    }

    /// Solves a network built from a component (with elements of the caller's own), through
    /// the memo, charged to the open work budget ([`super::budget`]).
    pub fn solve_network(&self, network: &Network) -> Result<OperatingPoint, DcError> {
        super::budget::charge()?;
        dc::solve_cached(network, &self.options, &self.cache)
    }

    /// The Thevenin equivalent of a built network at `node`, through the memo and charged to
    /// the open work budget.
    pub fn thevenin(&self, network: &Network, node: Node) -> Result<dc::Thevenin, DcError> {
        super::budget::charge()?;
        dc::thevenin_cached(network, node, &self.options, &self.cache)
    }

    /// Why a component cannot be solved at all: more free nets than the DC engine's dense
    /// limit. Checked before a network is built, so a huge sub-network costs nothing per
    /// state.
    pub fn oversized(&self, component: &Component) -> Option<DcError> {
        (component.nets.len() > dc::DENSE_LIMIT).then_some(DcError::TooLarge {
            unknowns: component.nets.len(),
            limit: dc::DENSE_LIMIT,
        })
    }

    /// The network of one component in one state, before it is solved, so that a caller can
    /// add elements of its own (a source holding a node, a probe) and solve it, or take a
    /// Thevenin equivalent.
    ///
    /// An [oversized](Context::oversized) component builds an empty network that refuses to
    /// solve.
    pub fn build(&self, component: &Component, state: &State) -> Built {
        self.build_variant(component, state, &Variant::default())
    }

    /// As [`Context::build`], with some devices stamped another way (an assumed gain at one
    /// end of its range, an ideal inductor as a current ramp; see [`super::plausible`]).
    pub fn build_variant(&self, component: &Component, state: &State, variant: &Variant) -> Built {
        if let Some(e) = self.oversized(component) {
            return Built {
                network: Network::new(),
                nodes: BTreeMap::new(),
                devices: BTreeMap::new(),
                refused: Some(e),
            };
        }
        let mut network = Network::new();
        let mut nodes: BTreeMap<NetId, Node> = BTreeMap::new();
        let ground = network.ground();
        for &net in &component.nets {
            let node = network.add_named_node(self.net_name(net));
            // A leak far below any real part keeps capacitor-only nets solvable.
            network.add_resistor(node, ground, 1e12);
            nodes.insert(net, node);
        }
        let mut devices = BTreeMap::new();
        for &device in &component.devices {
            let mut node_of = |net: NetId, network: &mut Network| -> Node {
                if let Some(&n) = nodes.get(&net) {
                    return n;
                }
                let n = match self.fixed_voltage(net, state) {
                    Some(v) if v == 0.0 && self.partition.fixed[net] == Some(Fixed::Ground) => {
                        ground
                    }
                    Some(v) => {
                        let n = network.add_named_node(self.net_name(net));
                        network.add_voltage_source(n, ground, v);
                        n
                    }
                    None => {
                        let n = network.add_named_node(self.net_name(net));
                        network.add_resistor(n, ground, 1e12);
                        n
                    }
                };
                nodes.insert(net, n);
                n
            };
            let special = if *variant == Variant::default() {
                None
            } else {
                super::plausible::stamp(self, device, variant, &mut network, &mut node_of)
            };
            let elements = special.unwrap_or_else(|| {
                stand_in::stamp(self, device, state, &mut network, &mut node_of)
            });
            devices.insert(device, elements);
        }
        Built {
            network,
            nodes,
            devices,
            refused: None,
        }
    }
}

fn is_switching(wave: &Waveform) -> bool {
    matches!(wave, Waveform::Pulse { .. })
}

/// Independent DC sources are supplies; their corners come from `[supply.NAME]` when given.
fn supply_corners(netlist: &FlatNetlist, circuit: &Circuit, config: &Config) -> Vec<SupplyCorners> {
    let mut out = Vec::new();
    for (id, device) in circuit.devices().iter().enumerate() {
        if device.kind != Kind::VoltageSource {
            continue;
        }
        let Some(element) = netlist.elements.get(device.element) else {
            continue;
        };
        let Some(spec) = &element.source else {
            continue;
        };
        if is_switching(&spec.wave) {
            continue;
        }
        let Some(dc) = spec.dc else { continue };
        let configured = config
            .supplies
            .iter()
            .find(|(name, _)| name.eq_ignore_ascii_case(&element.path));
        let (min, nominal, max, source) = match configured {
            Some((name, s)) => {
                let nominal = s.nominal.unwrap_or(dc);
                (
                    s.min.unwrap_or(nominal),
                    nominal,
                    s.max.unwrap_or(nominal),
                    format!("from config [supply.{name}]"),
                )
            }
            None => (dc, dc, dc, format!("DC value of {}", element.path)),
        };
        out.push(SupplyCorners {
            device: id,
            min: min.min(max),
            nominal,
            max: max.max(min),
            source,
        });
    }
    out
}
