//! The circuit around one element: its nets and the parts on them (two hops in the graph of
//! parts and nets), laid out in layers by rust-sugiyama, the element on top and highlighted.

use super::escape;
use crate::circuit::{Circuit, DeviceId, NetId};
use crate::netlist::FlatNetlist;
use crate::report::facts::name;
use std::collections::BTreeMap;

/// Parts shown on one net at most; a net with more (ground, a rail) gets a `+N more` node.
const PER_NET: usize = 8;
/// Nets of the element shown at most.
const NETS: usize = 8;

#[derive(Clone, PartialEq)]
enum Node {
    Element(DeviceId),
    Net(NetId),
    Part(DeviceId),
    More(usize),
}

/// The neighbourhood of `device` as an SVG drawing; empty when there is nothing around it.
pub fn draw(circuit: &Circuit, netlist: &FlatNetlist, device: DeviceId) -> String {
    let Some(d) = circuit.devices().get(device) else {
        return String::new();
    };
    let mut nodes = vec![Node::Element(device)];
    let mut edges: Vec<(u32, u32)> = Vec::new();
    let mut parts: BTreeMap<DeviceId, u32> = BTreeMap::new();
    let mut nets: Vec<NetId> = d.pins.iter().map(|p| p.net).collect();
    nets.sort_unstable();
    nets.dedup();
    nets.truncate(NETS);
    for net in nets {
        let net_index = nodes.len() as u32;
        nodes.push(Node::Net(net));
        edges.push((0, net_index));
        let mut others: Vec<DeviceId> = circuit
            .devices_on(net)
            .iter()
            .map(|&(other, _)| other)
            .filter(|&other| other != device)
            .collect();
        others.sort_unstable();
        others.dedup();
        let hidden = others.len().saturating_sub(PER_NET);
        for other in others.into_iter().take(PER_NET) {
            let index = *parts.entry(other).or_insert_with(|| {
                nodes.push(Node::Part(other));
                (nodes.len() - 1) as u32
            });
            edges.push((net_index, index));
        }
        if hidden > 0 {
            nodes.push(Node::More(hidden));
            edges.push((net_index, (nodes.len() - 1) as u32));
        }
    }
    if edges.is_empty() {
        return String::new();
    }
    let config = rust_sugiyama::configure::Config {
        vertex_spacing: 1.0,
        ..Default::default()
    };
    let layouts =
        std::panic::catch_unwind(|| rust_sugiyama::from_edges(&edges, &config)).unwrap_or_default();
    let mut at: BTreeMap<usize, (f64, f64)> = BTreeMap::new();
    for (layout, _, _) in &layouts {
        for &(v, (x, y)) in layout {
            at.insert(v, (x, y));
        }
    }
    if at.len() != nodes.len() {
        // Fall back to rows by hop: the element, its nets, the parts.
        at.clear();
        let mut rows: BTreeMap<u32, usize> = BTreeMap::new();
        for (i, node) in nodes.iter().enumerate() {
            let row = match node {
                Node::Element(_) => 0,
                Node::Net(_) => 1,
                _ => 2,
            };
            let column = rows.entry(row).or_insert(0);
            at.insert(i, (*column as f64, f64::from(row)));
            *column += 1;
        }
    }
    let label = |node: &Node| -> (String, &'static str) {
        match node {
            Node::Element(d) | Node::Part(d) => {
                let kind = circuit
                    .devices()
                    .get(*d)
                    .map(|x| x.kind.to_string())
                    .unwrap_or_default();
                (format!("{} ({kind})", name(netlist, circuit, *d)), "part")
            }
            Node::Net(n) => (
                circuit
                    .nets()
                    .get(*n)
                    .map_or_else(|| format!("net {n}"), |x| x.name.clone()),
                "net",
            ),
            Node::More(k) => (format!("+{k} more"), "more"),
        }
    };
    // Layer coordinates to pixels: columns spread to fit the widest layer, rows 90 px apart.
    let (min_x, max_x) = at
        .values()
        .fold((f64::MAX, f64::MIN), |(a, b), p| (a.min(p.0), b.max(p.0)));
    let (min_y, max_y) = at
        .values()
        .fold((f64::MAX, f64::MIN), |(a, b), p| (a.min(p.1), b.max(p.1)));
    let mut ys: Vec<f64> = at.values().map(|p| p.1).collect();
    ys.sort_by(f64::total_cmp);
    ys.dedup();
    let column_width = 150.0;
    let width = ((max_x - min_x).abs().max(0.0) * column_width + 2.0 * column_width).min(4000.0);
    let height = ys.len() as f64 * 90.0 + 20.0;
    let x_of = |x: f64| {
        if max_x > min_x {
            column_width + (x - min_x) * column_width
        } else {
            width / 2.0
        }
    };
    let y_of = |y: f64| {
        let row = ys.iter().position(|v| *v == y).unwrap_or(0);
        let _ = (min_y, max_y);
        40.0 + row as f64 * 90.0
    };
    let mut svg = format!(
        "<svg class=\"net\" role=\"img\" aria-label=\"{}\" viewBox=\"0 0 {width:.0} {height:.0}\" width=\"{width:.0}\" height=\"{height:.0}\" xmlns=\"http://www.w3.org/2000/svg\">\n",
        escape(&format!("The circuit around {}", name(netlist, circuit, device)))
    );
    for &(a, b) in &edges {
        let (Some(&pa), Some(&pb)) = (at.get(&(a as usize)), at.get(&(b as usize))) else {
            continue;
        };
        svg.push_str(&format!(
            "<line x1=\"{:.1}\" y1=\"{:.1}\" x2=\"{:.1}\" y2=\"{:.1}\" stroke=\"#777\" stroke-width=\"1.2\"/>\n",
            x_of(pa.0),
            y_of(pa.1),
            x_of(pb.0),
            y_of(pb.1)
        ));
    }
    for (i, node) in nodes.iter().enumerate() {
        let Some(&(x, y)) = at.get(&i) else { continue };
        let (text, class) = label(node);
        let (cx, cy) = (x_of(x), y_of(y));
        let shown: String = text.chars().take(24).collect();
        let w = (shown.chars().count() as f64 * 7.0 + 16.0).max(40.0);
        let element = matches!(node, Node::Element(_));
        let class = if element { "part element" } else { class };
        let shape = match node {
            Node::Net(_) => format!(
                "<rect x=\"{:.1}\" y=\"{:.1}\" width=\"{w:.1}\" height=\"24\" rx=\"12\" class=\"{class}\"/>",
                cx - w / 2.0,
                cy - 12.0
            ),
            _ => format!(
                "<rect x=\"{:.1}\" y=\"{:.1}\" width=\"{w:.1}\" height=\"24\" class=\"{class}\"{}/>",
                cx - w / 2.0,
                cy - 12.0,
                if element { " stroke-width=\"3\"" } else { "" }
            ),
        };
        svg.push_str(&format!(
            "<g><title>{}</title>{shape}<text x=\"{cx:.1}\" y=\"{:.1}\" text-anchor=\"middle\"{}>{}</text></g>\n",
            escape(&text),
            cy + 4.5,
            if element { " font-weight=\"bold\"" } else { "" },
            escape(&shown)
        ));
    }
    svg.push_str("</svg>");
    svg
}
