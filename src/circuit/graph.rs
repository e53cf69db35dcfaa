//! The petgraph graph of nets and devices, and its indexes. Queries live in `query.rs`.

use super::data::{toml_key, PartSources};
use super::names::NameIndex;
use super::pins::PinProblem;
use super::unknown::KnownNames;
use super::wires::Wires;
use super::{Device, DeviceId, Kind, Net, NetId, Pin, PinRole, UnknownPart};
use crate::config::Config;
use crate::diagnostic::{Finding, Severity};
use crate::netlist::{FlatElement, FlatNetlist};
use petgraph::graph::{NodeIndex, UnGraph};
use petgraph::unionfind::UnionFind;
use std::collections::{BTreeMap, HashMap};
use std::sync::OnceLock;

/// A node of the bipartite graph: nets on one side, devices on the other. Edges are pins and
/// carry the pin's index on its device.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum GraphNode {
    Net(NetId),
    Device(DeviceId),
}

#[derive(Clone, Debug, Default)]
pub struct Circuit {
    /// Made only by [`Circuit::build`] and [`CircuitBuilder::build`], so every index below
    /// exists whenever a circuit does.
    pub(super) nets: Vec<Net>,
    pub(super) devices: Vec<Device>,
    /// Net name → net, case-insensitive.
    pub(super) net_names: NameIndex,
    /// Names that mean the ground net (`0`, `[analysis] ground`, its own name), once it exists.
    pub(super) ground_aliases: Vec<String>,
    pub(super) ground: Option<NetId>,
    /// Pins on each net: `pins_on[pin_offsets[n]..pin_offsets[n + 1]]`.
    pub(super) pin_offsets: Vec<usize>,
    pub(super) pins_on: Vec<(DeviceId, usize)>,
    pub(super) by_kind: BTreeMap<Kind, Vec<DeviceId>>,
    /// Lower-case flattened path → device (the first, when a name repeats). Built on first
    /// use, from the element paths kept in `paths`.
    pub(super) by_path: OnceLock<HashMap<String, DeviceId>>,
    pub(super) paths: PathTable,
    /// Net `n` is node `n`; device `d` is node `nets.len() + d`. Built on first use: most
    /// checks never walk paths, and the indexes answer everything else.
    pub(super) graph: OnceLock<UnGraph<GraphNode, usize>>,
    /// Connected component of each net (through any device pin), and its nets.
    pub(super) component: Vec<usize>,
    pub(super) component_offsets: Vec<usize>,
    pub(super) component_nets: Vec<NetId>,
    /// Component of each net through DC-conducting paths only (capacitors, current sources,
    /// gates and control inputs do not conduct).
    pub(super) dc_component: Vec<usize>,
    /// Parts whose model is defined nowhere or whose ports could not be given roles, in device
    /// order (see `unknown.rs`).
    pub(super) unknown_parts: Vec<(DeviceId, UnknownPart)>,
    /// Nets joined through 0 V sources (see `wires.rs`).
    pub(super) wires: Wires,
}

impl Circuit {
    /// Builds the graph: part kinds and pin roles from part knowledge, part data with provenance.
    /// Findings: `part-pins` where a part's ports cannot be given their roles.
    pub fn build(netlist: &FlatNetlist, config: &Config) -> (Circuit, Vec<Finding>) {
        let mut circuit = Circuit::default();
        let mut findings = Vec::new();
        let mut sources = PartSources::new(config, !netlist.missing_includes.is_empty());
        let known = KnownNames::new(netlist, config);
        circuit.devices.reserve(netlist.elements.len());
        circuit.paths.reserve(netlist.elements.len());
        // Most elements bring at most one new net; reserving avoids rehashing as the map grows.
        circuit.net_names = NameIndex::with_capacity(netlist.elements.len() + 8);
        for (index, element) in netlist.elements.iter().enumerate() {
            let resolved = sources.resolve(element, &netlist.models);
            if let Some(problem) = &resolved.pin_problem {
                findings.push(pin_finding(element, resolved.unknown, problem));
            }
            let unknown = if known.is_undefined(element) {
                Some(UnknownPart::Undefined)
            } else if element.letter == 'A' && resolved.unknown.is_none() {
                Some(UnknownPart::CodeModel)
            } else {
                resolved.unknown
            };
            if let Some(why) = unknown {
                circuit.unknown_parts.push((circuit.devices.len(), why));
            }
            let pins = element
                .nodes
                .iter()
                .enumerate()
                .map(|(i, node)| Pin {
                    role: resolved.roles.get(i).copied().unwrap_or(PinRole::Other),
                    net: circuit.intern_net(node, config),
                })
                .collect();
            let id = circuit.devices.len();
            circuit.paths.push(&element.path);
            circuit.by_kind.entry(resolved.kind).or_default().push(id);
            circuit.devices.push(Device {
                element: index,
                kind: resolved.kind,
                pins,
                data: resolved.data.clone(),
            });
        }
        circuit.index(netlist, config);
        (circuit, findings)
    }

    /// Every net, in order of first appearance: `NetId` indexes it.
    pub fn nets(&self) -> &[Net] {
        &self.nets
    }

    /// Every device, in netlist order: `DeviceId` indexes it.
    pub fn devices(&self) -> &[Device] {
        &self.devices
    }

    /// The indexes that follow from the nets and devices: pins on each net, connected and
    /// DC-connected components, nets joined through ammeters.
    pub(super) fn index(&mut self, netlist: &FlatNetlist, config: &Config) {
        self.index_pins();
        self.build_components(netlist);
        self.wires = Wires::build(self, netlist, config);
    }

    fn intern_net(&mut self, name: &str, config: &Config) -> NetId {
        if config.is_ground_name(name) {
            if let Some(ground) = self.ground {
                return ground;
            }
            let id = self.push_net(name, true);
            self.set_ground(id, name, config);
            return id;
        }
        if let Some(id) = self.net_names.get(&self.nets, name) {
            return id;
        }
        let id = self.push_net(name, false);
        self.net_names.insert(id, name);
        id
    }

    /// Makes net `id`, named `name`, the reference net that every ground alias names.
    pub(super) fn set_ground(&mut self, id: NetId, name: &str, config: &Config) {
        self.ground = Some(id);
        self.ground_aliases = config
            .analysis
            .ground
            .iter()
            .map(String::as_str)
            .chain(["0", name])
            .map(str::to_ascii_lowercase)
            .collect();
    }

    fn push_net(&mut self, name: &str, is_ground: bool) -> NetId {
        self.nets.push(Net {
            name: name.to_string(),
            is_ground,
        });
        self.nets.len() - 1
    }

    fn index_pins(&mut self) {
        let mut counts = vec![0usize; self.nets.len() + 1];
        for device in &self.devices {
            for pin in &device.pins {
                if let Some(c) = counts.get_mut(pin.net + 1) {
                    *c += 1;
                }
            }
        }
        for i in 1..counts.len() {
            counts[i] += counts[i - 1];
        }
        let mut fill = counts.clone();
        let mut pins_on = vec![(0usize, 0usize); counts.last().copied().unwrap_or(0)];
        for (id, device) in self.devices.iter().enumerate() {
            for (pin_index, pin) in device.pins.iter().enumerate() {
                if let Some(slot) = fill.get_mut(pin.net) {
                    if let Some(entry) = pins_on.get_mut(*slot) {
                        *entry = (id, pin_index);
                    }
                    *slot += 1;
                }
            }
        }
        self.pin_offsets = counts;
        self.pins_on = pins_on;
    }

    pub(super) fn path_index(&self) -> &HashMap<String, DeviceId> {
        self.by_path.get_or_init(|| {
            let mut index = HashMap::with_capacity(self.paths.len());
            for (id, path) in self.paths.iter().enumerate() {
                index.entry(path.to_ascii_lowercase()).or_insert(id);
            }
            index
        })
    }

    /// The bipartite petgraph graph: nets are nodes `0..nets.len()`, device `d` is node
    /// `nets.len() + d`, and each edge is a pin carrying its index on the device.
    pub fn graph(&self) -> &UnGraph<GraphNode, usize> {
        self.graph.get_or_init(|| self.build_graph())
    }

    fn build_graph(&self) -> UnGraph<GraphNode, usize> {
        let pin_count: usize = self.devices.iter().map(|d| d.pins.len()).sum();
        let mut graph = UnGraph::with_capacity(self.nets.len() + self.devices.len(), pin_count);
        for id in 0..self.nets.len() {
            graph.add_node(GraphNode::Net(id));
        }
        for id in 0..self.devices.len() {
            graph.add_node(GraphNode::Device(id));
        }
        // petgraph lists a node's neighbours newest edge first; adding the pins last to first
        // makes walks meet devices in netlist order and pins in port order.
        let first_device = self.nets.len();
        for (id, device) in self.devices.iter().enumerate().rev() {
            let node = NodeIndex::new(first_device + id);
            for (pin_index, pin) in device.pins.iter().enumerate().rev() {
                if pin.net < first_device {
                    graph.add_edge(node, NodeIndex::new(pin.net), pin_index);
                }
            }
        }
        graph
    }

    fn build_components(&mut self, netlist: &FlatNetlist) {
        let count = self.nets.len();
        let mut any = UnionFind::<usize>::new(count);
        let mut dc = UnionFind::<usize>::new(count);
        for device in &self.devices {
            let letter = netlist
                .elements
                .get(device.element)
                .map_or('?', |e| e.letter);
            let conducts: Vec<bool> = device
                .pins
                .iter()
                .map(|p| conducts_dc(device.kind, letter, p.role))
                .collect();
            let mut first_any = None;
            let mut first_dc = None;
            for (pin, dc_pin) in device.pins.iter().zip(conducts) {
                if pin.net >= count {
                    continue;
                }
                match first_any {
                    None => first_any = Some(pin.net),
                    Some(f) => {
                        any.union(f, pin.net);
                    }
                }
                if dc_pin {
                    match first_dc {
                        None => first_dc = Some(pin.net),
                        Some(f) => {
                            dc.union(f, pin.net);
                        }
                    }
                }
            }
        }
        let (component, groups) = labels(&any, count);
        let (dc_component, _) = labels(&dc, count);
        let mut offsets = vec![0usize; groups + 1];
        for &c in &component {
            if let Some(o) = offsets.get_mut(c + 1) {
                *o += 1;
            }
        }
        for i in 1..offsets.len() {
            offsets[i] += offsets[i - 1];
        }
        let mut fill = offsets.clone();
        let mut nets = vec![0usize; count];
        for (net, &c) in component.iter().enumerate() {
            if let Some(slot) = fill.get_mut(c) {
                if let Some(entry) = nets.get_mut(*slot) {
                    *entry = net;
                }
                *slot += 1;
            }
        }
        self.component = component;
        self.component_offsets = offsets;
        self.component_nets = nets;
        self.dc_component = dc_component;
    }
}

/// Every device's flattened path in one string, so the circuit keeps no string per device.
#[derive(Clone, Debug, Default)]
pub(super) struct PathTable {
    text: String,
    ends: Vec<usize>,
}

impl PathTable {
    pub(super) fn reserve(&mut self, n: usize) {
        self.ends.reserve(n);
        self.text.reserve(n.saturating_mul(8));
    }

    pub(super) fn push(&mut self, path: &str) {
        self.text.push_str(path);
        self.ends.push(self.text.len());
    }

    fn len(&self) -> usize {
        self.ends.len()
    }

    fn iter(&self) -> impl Iterator<Item = &str> + '_ {
        let starts = std::iter::once(0).chain(self.ends.iter().copied());
        starts
            .zip(self.ends.iter().copied())
            .map(|(a, b)| self.text.get(a..b).unwrap_or(""))
    }
}

/// Dense labels `0..groups` for the sets of a union-find, in order of first net.
fn labels(sets: &UnionFind<usize>, count: usize) -> (Vec<usize>, usize) {
    let mut label_of_root = vec![usize::MAX; count];
    let mut groups = 0;
    let labels = (0..count)
        .map(|net| {
            let root = sets.find(net);
            match label_of_root.get_mut(root) {
                Some(label) if *label == usize::MAX => {
                    *label = groups;
                    groups += 1;
                    *label
                }
                Some(label) => *label,
                None => 0,
            }
        })
        .collect();
    (labels, groups)
}

/// Whether a pin joins the device's DC-conducting group. Capacitors, current sources (and the
/// outputs of F and G sources), MOSFET gates and the control inputs of controlled sources and
/// switches carry no DC current; every other pin is taken to conduct to the device's other pins.
fn conducts_dc(kind: Kind, letter: char, role: PinRole) -> bool {
    match kind {
        Kind::Capacitor | Kind::CurrentSource | Kind::Coupling => false,
        Kind::Nmos | Kind::Pmos => role != PinRole::Gate,
        Kind::ControlledSource if matches!(letter, 'F' | 'G') => false,
        Kind::ControlledSource | Kind::Switch => {
            !matches!(role, PinRole::CtrlPos | PinRole::CtrlNeg)
        }
        _ => true,
    }
}

fn pin_finding(
    element: &FlatElement,
    unknown: Option<UnknownPart>,
    problem: &PinProblem,
) -> Finding {
    let part = element
        .subckt
        .as_ref()
        .map(|s| s.name.as_str())
        .or(element.model.as_deref())
        .unwrap_or(&element.name);
    let table = if element.subckt.is_some() || element.model.is_some() {
        format!("[parts.{}]", toml_key(part))
    } else {
        format!("[elements.{}]", toml_key(&element.path))
    };
    // A deck that does not say is a gap to fill (a note); a wrong `pins` list is a mistake.
    let severity = if problem.in_config {
        Severity::Warning
    } else {
        Severity::Note
    };
    let skipped = match unknown {
        Some(UnknownPart::Pins(kind)) => format!("; its {kind} checks are skipped until then"),
        _ => String::new(),
    };
    let list = problem
        .suggestion
        .iter()
        .map(|r| format!("\"{r}\""))
        .collect::<Vec<_>>()
        .join(", ");
    let blanks = if problem.suggestion.iter().any(|r| r == "?") {
        " and replace each \"?\" with that port's role from the model's pin list"
    } else {
        ""
    };
    let mut finding = Finding::new(
        "part-pins",
        severity,
        element.span,
        format!("{} ({part}): {}", element.path, problem.message),
    )
    .with_element(element.name.clone(), element.instance_path())
    .with_help(format!(
        "give the roles in port order in kickback.toml: {table} pins = [{list}]{blanks}{skipped}"
    ));
    finding.instances = element.instances.clone();
    if let Some(definition) = element.subckt.as_ref().and_then(|s| s.definition) {
        finding = finding.with_label(definition, format!("{part} is defined here"));
    }
    finding
}
