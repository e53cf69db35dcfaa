//! The sub-network a caller builds: named nodes and primitive elements.

use std::sync::Arc;

/// Resistances below this many ohms are solved as ideal shorts (a 0 V branch), which keeps
/// the matrix well scaled.
pub(crate) const SHORT_OHMS: f64 = 1e-9;

/// A node of a [`Network`]. Node 0 is ground; every other node comes from
/// [`Network::add_node`].
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub struct Node(pub(crate) usize);

impl Node {
    /// Position of the node in its network (ground is 0).
    pub fn index(self) -> usize {
        self.0
    }
}

/// An element of a [`Network`], returned by every `add_*` method.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub struct ElementId(pub(crate) usize);

impl ElementId {
    /// Position of the element in its network, in the order elements were added.
    pub fn index(self) -> usize {
        self.0
    }
}

/// Diode model: the Shockley equation `I = IS·(exp(V/(N·Vt)) − 1)` behind a series resistance,
/// with an optional exponential reverse-breakdown branch.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct DiodeParams {
    /// Saturation current IS in amperes.
    pub is: f64,
    /// Emission coefficient N (1 for an ideal junction, ~1.5–2 for many rectifiers and LEDs).
    pub n: f64,
    /// Series resistance RS in ohms (0 for none).
    pub rs: f64,
    /// Reverse breakdown voltage BV in volts (a positive number), or `None` for no breakdown.
    pub bv: Option<f64>,
    /// Reverse current at `V = −BV`, in amperes.
    pub ibv: f64,
}

impl Default for DiodeParams {
    /// A small-signal silicon junction: IS = 10 fA, N = 1, no series resistance, no breakdown;
    /// IBV = 1 mA is used only when a breakdown voltage is set.
    fn default() -> Self {
        Self {
            is: 1e-14,
            n: 1.0,
            rs: 0.0,
            bv: None,
            ibv: 1e-3,
        }
    }
}

/// Channel type of a MOSFET.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum MosPolarity {
    /// N-channel: conducts when the gate is above the source by more than VTO.
    N,
    /// P-channel: conducts when the gate is below the source by more than |VTO|.
    P,
}

/// Square-law (Shichman–Hodges) MOSFET model without body effect.
///
/// `vto` is written as a positive number for an enhancement device of either polarity (the
/// sign is applied from `polarity`), the way datasheets quote |VGS(th)|.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct MosParams {
    /// N- or P-channel.
    pub polarity: MosPolarity,
    /// Threshold voltage magnitude in volts.
    pub vto: f64,
    /// Transconductance parameter k = KP·W/L in A/V².
    pub k: f64,
    /// Channel-length modulation λ in 1/V.
    pub lambda: f64,
}

/// Junction type of a bipolar transistor.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum BjtPolarity {
    /// NPN: conducts collector to emitter when the base is above the emitter.
    Npn,
    /// PNP: conducts emitter to collector when the base is below the emitter.
    Pnp,
}

/// Ebers–Moll (transport form) bipolar transistor model.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct BjtParams {
    /// NPN or PNP.
    pub polarity: BjtPolarity,
    /// Transport saturation current IS in amperes.
    pub is: f64,
    /// Forward current gain βF.
    pub beta_f: f64,
    /// Reverse current gain βR.
    pub beta_r: f64,
    /// Emission coefficient of both junctions.
    pub n: f64,
}

/// One primitive element. Terminal order follows the `add_*` methods.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) enum Element {
    Resistor {
        a: Node,
        b: Node,
        ohms: f64,
    },
    VoltageSource {
        p: Node,
        n: Node,
        volts: f64,
    },
    CurrentSource {
        p: Node,
        n: Node,
        amps: f64,
    },
    Vcvs {
        p: Node,
        n: Node,
        cp: Node,
        cn: Node,
        gain: f64,
    },
    Vccs {
        p: Node,
        n: Node,
        cp: Node,
        cn: Node,
        gm: f64,
    },
    Diode {
        anode: Node,
        cathode: Node,
        params: DiodeParams,
    },
    Mosfet {
        d: Node,
        g: Node,
        s: Node,
        params: MosParams,
    },
    Bjt {
        c: Node,
        b: Node,
        e: Node,
        params: BjtParams,
    },
    CurrentLimited {
        a: Node,
        b: Node,
        ohms: f64,
        i_limit: f64,
    },
}

impl Element {
    /// The nodes the element touches, in terminal order.
    pub(crate) fn terminals(&self) -> Vec<Node> {
        match *self {
            Element::Resistor { a, b, .. } | Element::CurrentLimited { a, b, .. } => vec![a, b],
            Element::VoltageSource { p, n, .. } | Element::CurrentSource { p, n, .. } => {
                vec![p, n]
            }
            Element::Vcvs { p, n, cp, cn, .. } | Element::Vccs { p, n, cp, cn, .. } => {
                vec![p, n, cp, cn]
            }
            Element::Diode { anode, cathode, .. } => vec![anode, cathode],
            Element::Mosfet { d, g, s, .. } => vec![d, g, s],
            Element::Bjt { c, b, e, .. } => vec![c, b, e],
        }
    }
}

/// Resistances at or above this many ohms are taken as leaks that keep a node solvable, not
/// as parts of the circuit (the analyses tie every net to ground through 1 TΩ).
pub const LEAK_OHMS: f64 = 1e11;

/// The reach of a network's independent sources. A network of resistors, diodes and
/// transistors is passive: none of its node voltages can leave the interval `[lo, hi]` of its
/// voltage sources (ground included; a source with neither terminal on ground widens both
/// ends by its value, since it can stack on any other) except by what its current sources
/// push through its resistors. Linear controlled sources can multiply that by their gain.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct SourceHull {
    /// Lowest voltage-source value, or 0 (ground).
    pub lo: f64,
    /// Highest voltage-source value, or 0 (ground).
    pub hi: f64,
    /// Sum of the independent current sources' magnitudes, in amperes.
    pub current: f64,
    /// Largest resistance below [`LEAK_OHMS`].
    pub largest_ohms: f64,
    /// Largest gain of a controlled source (a VCVS's gain, a VCCS's transconductance times
    /// the largest resistance), at least 1.
    pub gain: f64,
    /// The network holds a controlled source.
    pub controlled: bool,
}

/// The name of a node, kept for error messages only: a fixed label or a name shared with the
/// caller's own table (a net's name), so adding a node never copies a string.
#[derive(Clone, Debug)]
pub enum NodeName {
    Fixed(&'static str),
    Shared(Arc<str>),
}

impl NodeName {
    pub fn as_str(&self) -> &str {
        match self {
            NodeName::Fixed(s) => s,
            NodeName::Shared(s) => s,
        }
    }
}

impl From<&'static str> for NodeName {
    fn from(s: &'static str) -> Self {
        NodeName::Fixed(s)
    }
}

impl From<Arc<str>> for NodeName {
    fn from(s: Arc<str>) -> Self {
        NodeName::Shared(s)
    }
}

/// A small circuit to solve: nodes with names (kept for error messages) and primitive
/// elements between them. Capacitors are left out (open at DC) and inductors are added as
/// 0 V sources or low resistances by the caller.
#[derive(Clone, Debug)]
pub struct Network {
    names: Vec<NodeName>,
    pub(crate) elements: Vec<Element>,
}

impl Default for Network {
    fn default() -> Self {
        Self::new()
    }
}

impl Network {
    /// An empty network holding only ground, named `"0"`.
    pub fn new() -> Self {
        Self {
            names: vec![NodeName::Fixed("0")],
            elements: Vec::new(),
        }
    }

    /// The reference node, 0 V.
    pub fn ground(&self) -> Node {
        Node(0)
    }

    /// Adds a node, or returns the existing node of that name (`"0"` is ground). Looks the
    /// name up among the nodes so far: for hand-built networks; a caller that builds many
    /// networks from a table of unique names uses [`Network::add_named_node`].
    pub fn add_node(&mut self, name: &str) -> Node {
        if let Some(node) = self.node(name) {
            return node;
        }
        self.add_named_node(NodeName::Shared(Arc::from(name)))
    }

    /// Adds a new node under a name the caller keeps unique (names only label error
    /// messages); costs no string copy.
    pub fn add_named_node(&mut self, name: impl Into<NodeName>) -> Node {
        let node = Node(self.names.len());
        self.names.push(name.into());
        node
    }

    /// Looks a node up by name (the first node of that name).
    pub fn node(&self, name: &str) -> Option<Node> {
        self.names.iter().position(|n| n.as_str() == name).map(Node)
    }

    /// The name a node was added with; `"?"` for a node of another network.
    pub fn node_name(&self, node: Node) -> &str {
        self.names.get(node.0).map_or("?", NodeName::as_str)
    }

    /// Number of nodes including ground.
    pub fn node_count(&self) -> usize {
        self.names.len()
    }

    /// Number of elements added so far.
    pub fn element_count(&self) -> usize {
        self.elements.len()
    }

    fn push(&mut self, element: Element) -> ElementId {
        self.elements.push(element);
        ElementId(self.elements.len() - 1)
    }

    /// The same network with its independent current sources set to zero, all but those in
    /// `keep` (elements keep their positions), to tell what the other sources alone drive.
    pub fn without_current_sources(&self, keep: &[ElementId]) -> Network {
        let mut quiet = self.clone();
        for (index, element) in quiet.elements.iter_mut().enumerate() {
            if let Element::CurrentSource { amps, .. } = element {
                if !keep.contains(&ElementId(index)) {
                    *amps = 0.0;
                }
            }
        }
        quiet
    }

    /// What the independent sources allow the solution to reach (see [`SourceHull`]).
    pub fn source_hull(&self) -> SourceHull {
        let mut hull = SourceHull {
            lo: 0.0,
            hi: 0.0,
            current: 0.0,
            largest_ohms: 0.0,
            gain: 1.0,
            controlled: false,
        };
        let mut floating = 0.0;
        for element in &self.elements {
            match *element {
                // A source from ground bounds its node; a floating one (a pack whose negative
                // is not ground) can stack on any other, so it widens both ends.
                Element::VoltageSource { p, n, volts } if volts.is_finite() => {
                    if n == Node(0) || p == Node(0) {
                        let v = if n == Node(0) { volts } else { -volts };
                        hull.lo = hull.lo.min(v);
                        hull.hi = hull.hi.max(v);
                    } else {
                        floating += volts.abs();
                    }
                }
                Element::CurrentSource { amps, .. } if amps.is_finite() => {
                    hull.current += amps.abs();
                }
                Element::Resistor { ohms, .. } if ohms.is_finite() && ohms < LEAK_OHMS => {
                    hull.largest_ohms = hull.largest_ohms.max(ohms);
                }
                _ => {}
            }
        }
        hull.lo -= floating;
        hull.hi += floating;
        for element in &self.elements {
            match *element {
                Element::Vcvs { gain, .. } => {
                    hull.controlled = true;
                    hull.gain = hull.gain.max(gain.abs());
                }
                Element::Vccs { gm, .. } => {
                    hull.controlled = true;
                    hull.gain = hull.gain.max(gm.abs() * hull.largest_ohms);
                }
                _ => {}
            }
        }
        hull
    }

    /// A resistor of `ohms` between `a` and `b`. Zero (anything below 1 nΩ) is allowed and acts
    /// as an ideal short.
    pub fn add_resistor(&mut self, a: Node, b: Node, ohms: f64) -> ElementId {
        self.push(Element::Resistor { a, b, ohms })
    }

    /// An ideal voltage source holding `V(p) − V(n) = volts`.
    pub fn add_voltage_source(&mut self, p: Node, n: Node, volts: f64) -> ElementId {
        self.push(Element::VoltageSource { p, n, volts })
    }

    /// An ideal current source: `amps` flow from `p` through the source to `n`, so a positive
    /// value pulls current out of node `p` and pushes it into node `n`.
    pub fn add_current_source(&mut self, p: Node, n: Node, amps: f64) -> ElementId {
        self.push(Element::CurrentSource { p, n, amps })
    }

    /// A voltage-controlled voltage source: `V(p) − V(n) = gain·(V(cp) − V(cn))`.
    pub fn add_vcvs(&mut self, p: Node, n: Node, cp: Node, cn: Node, gain: f64) -> ElementId {
        self.push(Element::Vcvs { p, n, cp, cn, gain })
    }

    /// A voltage-controlled current source: `gm·(V(cp) − V(cn))` amperes flow from `p` through
    /// the source to `n` (same direction as [`Network::add_current_source`]).
    pub fn add_vccs(&mut self, p: Node, n: Node, cp: Node, cn: Node, gm: f64) -> ElementId {
        self.push(Element::Vccs { p, n, cp, cn, gm })
    }

    /// A diode from `anode` to `cathode`.
    pub fn add_diode(&mut self, anode: Node, cathode: Node, params: DiodeParams) -> ElementId {
        self.push(Element::Diode {
            anode,
            cathode,
            params,
        })
    }

    /// A MOSFET with drain `d`, gate `g` and source `s` (body tied to source).
    pub fn add_mosfet(&mut self, d: Node, g: Node, s: Node, params: MosParams) -> ElementId {
        self.push(Element::Mosfet { d, g, s, params })
    }

    /// A bipolar transistor with collector `c`, base `b` and emitter `e`.
    pub fn add_bjt(&mut self, c: Node, b: Node, e: Node, params: BjtParams) -> ElementId {
        self.push(Element::Bjt { c, b, e, params })
    }

    /// A resistor whose current saturates smoothly at `i_limit` (either direction): `V/R` well
    /// below the limit, `±i_limit` well above it. Models a timer's discharge transistor or an
    /// output stage with short-circuit limiting. The curve is
    /// `I = (V/R) / (1 + |V/(R·i_limit)|⁸)^(1/8)`: within 0.05 % of `V/R` at half the limit and
    /// of `i_limit` at twice it.
    pub fn add_current_limited_resistor(
        &mut self,
        a: Node,
        b: Node,
        ohms: f64,
        i_limit: f64,
    ) -> ElementId {
        self.push(Element::CurrentLimited {
            a,
            b,
            ohms,
            i_limit,
        })
    }

    /// A switch in a fixed state: `r_on` ohms when `closed`, `r_off` ohms when open. It is
    /// stored as a resistor, so [`crate::analysis::dc::OperatingPoint::current`] reads it
    /// the same way.
    pub fn add_switch(
        &mut self,
        a: Node,
        b: Node,
        closed: bool,
        r_on: f64,
        r_off: f64,
    ) -> ElementId {
        let ohms = if closed { r_on } else { r_off };
        self.push(Element::Resistor { a, b, ohms })
    }
}
