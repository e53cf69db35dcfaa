//! Checks made before any matrix is built: element values the models can use, nodes with no
//! DC path to ground, and loops of ideal voltage sources. Both structural faults make the
//! matrix singular; finding them on the graph lets the error name the nets exactly.

use super::network::{Element, ElementId, Network, Node, SHORT_OHMS};
use super::options::DcError;

/// Disjoint sets over node indices.
struct Components {
    parent: Vec<usize>,
}

impl Components {
    fn new(size: usize) -> Self {
        Self {
            parent: (0..size).collect(),
        }
    }

    fn find(&mut self, mut k: usize) -> usize {
        while let Some(&up) = self.parent.get(k) {
            if up == k {
                break;
            }
            let grand = self.parent.get(up).copied().unwrap_or(up);
            if let Some(slot) = self.parent.get_mut(k) {
                *slot = grand;
            }
            k = up;
        }
        k
    }

    /// Joins the sets of `a` and `b`; false when they were already one set.
    fn union(&mut self, a: usize, b: usize) -> bool {
        let (ra, rb) = (self.find(a), self.find(b));
        if ra == rb {
            return false;
        }
        let (low, high) = if ra < rb { (ra, rb) } else { (rb, ra) };
        if let Some(slot) = self.parent.get_mut(high) {
            *slot = low;
        }
        true
    }
}

fn invalid(index: usize, reason: impl Into<String>) -> DcError {
    DcError::InvalidElement {
        element: ElementId(index),
        reason: reason.into(),
    }
}

fn positive(value: f64) -> bool {
    value.is_finite() && value > 0.0
}

/// Rejects values the device equations cannot use and nodes foreign to the network.
pub(crate) fn validate(net: &Network) -> Result<(), DcError> {
    for (index, element) in net.elements.iter().enumerate() {
        if element.terminals().iter().any(|n| n.0 >= net.node_count()) {
            return Err(invalid(index, "terminal node is not part of this network"));
        }
        let problem = match *element {
            Element::Resistor { ohms, .. } => {
                (!(ohms.is_finite() && ohms >= 0.0)).then_some("resistance must be finite and ≥ 0")
            }
            Element::VoltageSource { volts: v, .. } | Element::CurrentSource { amps: v, .. } => {
                (!v.is_finite()).then_some("source value must be finite")
            }
            Element::Vcvs { gain: v, .. } | Element::Vccs { gm: v, .. } => {
                (!v.is_finite()).then_some("gain must be finite")
            }
            Element::Diode { params: p, .. } => {
                if !positive(p.is) || !positive(p.n) {
                    Some("IS and N must be positive")
                } else if !(p.rs.is_finite() && p.rs >= 0.0) {
                    Some("RS must be finite and ≥ 0")
                } else if p.bv.is_some_and(|bv| !positive(bv))
                    || (p.bv.is_some() && !positive(p.ibv))
                {
                    Some("BV and IBV must be positive")
                } else {
                    None
                }
            }
            Element::Mosfet { params: p, .. } => {
                let usable =
                    p.vto.is_finite() && positive(p.k) && p.lambda.is_finite() && p.lambda >= 0.0;
                (!usable).then_some("VTO must be finite, k positive and λ ≥ 0")
            }
            Element::Bjt { params: p, .. } => {
                (![p.is, p.beta_f, p.beta_r, p.n].into_iter().all(positive))
                    .then_some("IS, βF, βR and N must be positive")
            }
            Element::CurrentLimited { ohms, i_limit, .. } => (!(positive(ohms)
                && positive(i_limit)))
            .then_some("resistance and current limit must be positive"),
        };
        if let Some(reason) = problem {
            return Err(invalid(index, reason));
        }
    }
    Ok(())
}

/// Pairs of nodes an element joins with a DC path (a conductance or a fixed voltage).
fn dc_paths(element: &Element) -> Vec<(Node, Node)> {
    match *element {
        Element::Resistor { a, b, .. } | Element::CurrentLimited { a, b, .. } => vec![(a, b)],
        Element::VoltageSource { p, n, .. } | Element::Vcvs { p, n, .. } => vec![(p, n)],
        Element::Diode { anode, cathode, .. } => vec![(anode, cathode)],
        Element::Mosfet { d, s, .. } => vec![(d, s)],
        Element::Bjt { c, b, e, .. } => vec![(b, e), (b, c)],
        Element::CurrentSource { .. } | Element::Vccs { .. } => Vec::new(),
    }
}

/// Names every node that has no DC path to ground, or every node of a loop of ideal voltage
/// sources (including shorts), as a [`DcError::Singular`].
pub(crate) fn check_structure(net: &Network) -> Result<(), DcError> {
    let mut grounded = Components::new(net.node_count());
    for element in &net.elements {
        for (a, b) in dc_paths(element) {
            grounded.union(a.0, b.0);
        }
    }
    let floating: Vec<String> = (1..net.node_count())
        .filter(|&k| grounded.find(k) != grounded.find(0))
        .map(|k| net.node_name(Node(k)).to_string())
        .collect();
    if !floating.is_empty() {
        return Err(singular(floating));
    }

    let mut fixed = Components::new(net.node_count());
    let mut fixed_edges: Vec<(usize, usize)> = Vec::new();
    for element in &net.elements {
        let ends = match *element {
            Element::VoltageSource { p, n, .. } => Some((p, n)),
            Element::Resistor { a, b, ohms } if ohms < SHORT_OHMS => Some((a, b)),
            _ => None,
        };
        if let Some((p, n)) = ends {
            if !fixed.union(p.0, n.0) {
                let looped: Vec<String> = loop_path(&fixed_edges, p.0, n.0)
                    .into_iter()
                    .filter(|&k| k != 0)
                    .map(|k| net.node_name(Node(k)).to_string())
                    .collect();
                let looped = if looped.is_empty() {
                    vec![net.node_name(Node(0)).to_string()]
                } else {
                    looped
                };
                return Err(singular(looped));
            }
            fixed_edges.push((p.0, n.0));
        }
    }
    Ok(())
}

/// Nodes on a path from `from` to `to` over `edges` (breadth first), both ends included.
fn loop_path(edges: &[(usize, usize)], from: usize, to: usize) -> Vec<usize> {
    let mut previous: std::collections::BTreeMap<usize, usize> = std::collections::BTreeMap::new();
    let mut queue = std::collections::VecDeque::from([from]);
    previous.insert(from, from);
    while let Some(k) = queue.pop_front() {
        if k == to {
            break;
        }
        for &(a, b) in edges {
            let next = if a == k {
                b
            } else if b == k {
                a
            } else {
                continue;
            };
            if let std::collections::btree_map::Entry::Vacant(slot) = previous.entry(next) {
                slot.insert(k);
                queue.push_back(next);
            }
        }
    }
    let mut path = vec![to];
    let mut k = to;
    while k != from {
        match previous.get(&k) {
            Some(&up) if up != k => {
                path.push(up);
                k = up;
            }
            _ => break,
        }
    }
    if !path.contains(&from) {
        path.push(from);
    }
    path
}

/// A singular error with sorted, de-duplicated names.
pub(crate) fn singular(mut nodes: Vec<String>) -> DcError {
    nodes.sort();
    nodes.dedup();
    DcError::Singular { nodes }
}
