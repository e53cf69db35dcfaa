//! `net-dangling`: a net with a single connection, usually a mistyped node name. See
//! `rules/net-dangling.md`.
//!
//! Ground, `.global` nets and nets named as no-connects are left alone; so are nets whose one
//! connection is a part's pin (a timer, a transistor, a kept subcircuit), which
//! `pin-unconnected` reports with what that pin does.

use super::support::hygiene::{
    finding_at, is_no_connect_name, is_part, net_name, wire_is_ground_or_global, wire_pins,
};
use super::support::hygiene::{NetIndex, Once};
use super::Rule;
use super::RuleContext;
use crate::circuit::NetId;
use crate::diagnostic::{Finding, Severity};
use crate::source::Span;
use std::collections::{HashMap, HashSet};

/// This rule's identity: its ID, the severities it gives and its page.
pub const RULE: Rule = Rule {
    id: "net-dangling",
    default_severity: Severity::Warning,
    grades: &[Severity::Warning],
    summary: "A net with a single connection, usually a typo",
    page: include_str!("../../rules/net-dangling.md"),
    check: Some(check),
};
/// Elements either side of a dangling net's element whose nets are candidates for the name it
/// was meant to have.
const WINDOW: usize = 256;
/// Candidate pins looked at, and edit distances computed, per check: a deck with thousands of
/// stray nets stays fast, and suggestions are given while the budget lasts.
const SCAN_BUDGET: usize = 500_000;
const DISTANCE_BUDGET: usize = 200_000;
/// More dangling nets than this on one line are one finding for the line: a wide code-model
/// or subcircuit line with thousands of stray nodes says so once, not once per node.
const GROUP_ABOVE: usize = 3;
/// Net names quoted in a grouped finding.
const GROUP_NAMED: usize = 3;

struct Dangling<'a> {
    net: NetId,
    device: usize,
    pin: usize,
    /// The element's instance prefix (`XDRV.`), as written.
    scope: &'a str,
    /// The element's line (a definition line, for an element inside a subcircuit).
    line: Span,
    /// The net's name inside the element's scope, as written.
    local: &'a str,
}

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let index = NetIndex::new(cx);
    let mut dangling = Vec::new();
    for net in 0..cx.circuit.nets().len() {
        let Some((device_id, pin)) = single_connection(cx, &index, net) else {
            continue;
        };
        if wire_is_ground_or_global(cx, net) || is_no_connect_name(net_name(cx, net)) {
            continue;
        }
        // An unknown part may wire the net inside a definition kickback cannot read.
        if cx.circuit.unknown_part(device_id).is_some() {
            continue;
        }
        // A net an expression reads (`V(ctl)` in a behavioural source) is in use.
        if cx.netlist.is_sensed(net_name(cx, net)) {
            continue;
        }
        let Some(device) = cx.circuit.devices().get(device_id) else {
            continue;
        };
        let Some(element) = cx.netlist.elements.get(device.element) else {
            continue;
        };
        if is_part(device.kind, element) {
            continue;
        }
        // A behavioural or controlled source's output that nothing else reads is a quantity
        // computed for a plot (a speed from a current, a power from a product), not a typo.
        if pin < 2 && matches!(element.letter, 'B' | 'E' | 'F' | 'G' | 'H') {
            continue;
        }
        let scope = scope_of(&element.path, &element.name);
        dangling.push(Dangling {
            net,
            device: device_id,
            pin,
            scope,
            line: element.span,
            local: strip_scope(net_name(cx, net), scope),
        });
    }
    if dangling.is_empty() {
        return;
    }
    let mut budget = Budget {
        scans: SCAN_BUDGET,
        distances: DISTANCE_BUDGET,
    };
    let mut once = Once::default();
    let repeats = repeats(&dangling);
    let per_line = per_line(&dangling);
    let mut grouped_lines: HashSet<Span> = HashSet::new();
    for d in &dangling {
        let Some(device) = cx.circuit.devices().get(d.device) else {
            continue;
        };
        let Some(element) = cx.netlist.elements.get(device.element) else {
            continue;
        };
        let name = net_name(cx, d.net);
        let local = d.local;
        if let Some(line) = per_line.get(&d.line).filter(|l| l.nets > GROUP_ABOVE) {
            if grouped_lines.insert(d.line) {
                out.push(grouped(element, line));
            }
            continue;
        }
        if !once.first(d.line, local.to_ascii_lowercase()) {
            continue;
        }
        let near = closest(cx, &index, d.device, local, d.scope, &mut budget);
        let others = repeats
            .get(&(d.line, local.to_ascii_lowercase()))
            .map_or(0, |n| n.saturating_sub(1));
        let elsewhere = match others {
            0 => String::new(),
            1 => " (and in 1 other instance)".to_string(),
            n => format!(" (and in {n} other instances)"),
        };
        let mut finding = finding_at(
            RULE,
            RULE.severity(),
            element,
            format!(
                "net `{name}`{elsewhere} has a single connection ({} node {}): nothing else is \
                 wired to it",
                element.path,
                d.pin + 1
            ),
        )
        .with_value("connections", 1.0, "", "counted from the netlist");
        finding = match near {
            Some((net, _)) => {
                let other = net_name(cx, net);
                let other_local = strip_scope(other, d.scope);
                finding.with_help(format!(
                    "did you mean `{other_local}` ({} connections)? Change node {} on this line",
                    index.degree(net),
                    d.pin + 1
                ))
            }
            None => finding.with_help(
                "connect the net where it belongs, or correct the node name on this line",
            ),
        };
        out.push(finding);
    }
}

/// The one pin on `net`'s node, 0 V sources read as wires; reported at the net that pin is on,
/// so a node is reported once. A node of nothing but 0 V sources is read net by net.
fn single_connection(
    cx: &RuleContext<'_>,
    index: &NetIndex<'_>,
    net: NetId,
) -> Option<(usize, usize)> {
    let raw = index.on(net);
    if raw.is_empty() || raw.len() > 2 {
        return None;
    }
    if !raw.iter().any(|&(d, _)| cx.circuit.is_ammeter(d)) {
        return match raw {
            [one] => Some(*one),
            _ => None,
        };
    }
    match wire_pins(cx, index, net)[..] {
        [] => match raw {
            [one] => Some(*one),
            _ => None,
        },
        [(device, pin)] => {
            let on_this_net = cx
                .circuit
                .devices()
                .get(device)
                .and_then(|d| d.pins.get(pin))
                .is_some_and(|p| p.net == net);
            on_this_net.then_some((device, pin))
        }
        _ => None,
    }
}

/// The dangling nets of one element line: how many distinct local names, the first few with
/// their node numbers.
#[derive(Default)]
struct LineDangling {
    nets: usize,
    named: Vec<(String, usize)>,
    seen: HashSet<String>,
}

fn per_line(dangling: &[Dangling<'_>]) -> HashMap<Span, LineDangling> {
    let mut lines: HashMap<Span, LineDangling> = HashMap::new();
    for d in dangling {
        let line = lines.entry(d.line).or_default();
        if line.seen.insert(d.local.to_ascii_lowercase()) {
            line.nets += 1;
            if line.named.len() < GROUP_NAMED {
                line.named.push((d.local.to_string(), d.pin + 1));
            }
        }
    }
    lines
}

/// One finding for a line that leaves many nets with a single connection.
fn grouped(element: &crate::netlist::FlatElement, line: &LineDangling) -> Finding {
    let named: Vec<String> = line
        .named
        .iter()
        .map(|(net, node)| format!("`{net}` (node {node})"))
        .collect();
    let rest = line.nets.saturating_sub(named.len());
    finding_at(
        RULE,
        RULE.severity(),
        element,
        format!(
            "{} nets on {}'s line have a single connection: {} and {rest} more; nothing else is \
             wired to them",
            line.nets,
            element.path,
            named.join(", ")
        ),
    )
    .with_value("nets", line.nets as f64, "", "counted from the netlist")
    .with_help(
        "connect these nets where they belong, or correct the node names on this line; if \
         the part reads them inside a model kickback cannot see, give its definition",
    )
}

/// How many instances share each dangling definition line and net.
fn repeats(dangling: &[Dangling<'_>]) -> HashMap<(Span, String), usize> {
    let mut counts = HashMap::new();
    for d in dangling {
        *counts
            .entry((d.line, d.local.to_ascii_lowercase()))
            .or_insert(0) += 1;
    }
    counts
}

fn scope_of<'a>(path: &'a str, name: &str) -> &'a str {
    let len = path.len().saturating_sub(name.len());
    path.get(..len).unwrap_or("")
}

fn strip_scope<'n>(net: &'n str, scope: &str) -> &'n str {
    match net.get(..scope.len()) {
        Some(head) if !scope.is_empty() && head.eq_ignore_ascii_case(scope) => {
            net.get(scope.len()..).unwrap_or(net)
        }
        _ => net,
    }
}

struct Budget {
    scans: usize,
    distances: usize,
}

/// The net near `device` in the deck (the elements up to [`WINDOW`] places either side, in the
/// same subcircuit scope, with at least two connections) whose local name is nearest to `local`,
/// within a small edit distance.
fn closest(
    cx: &RuleContext<'_>,
    index: &NetIndex<'_>,
    device: usize,
    local: &str,
    scope: &str,
    budget: &mut Budget,
) -> Option<(NetId, usize)> {
    let lower = local.to_ascii_lowercase();
    let length = lower.chars().count();
    if length < 2 {
        return None;
    }
    let limit = if length <= 4 { 1 } else { 2 };
    let mut best: Option<(usize, std::cmp::Reverse<usize>, String, NetId)> = None;
    let first = device.saturating_sub(WINDOW);
    let last = device
        .saturating_add(WINDOW)
        .min(cx.circuit.devices().len());
    for near in cx.circuit.devices().get(first..last).unwrap_or(&[]) {
        let Some(element) = cx.netlist.elements.get(near.element) else {
            continue;
        };
        if !scope_of(&element.path, &element.name).eq_ignore_ascii_case(scope) {
            continue;
        }
        for pin in &near.pins {
            if budget.scans == 0 || budget.distances == 0 {
                return best.map(|(distance, _, _, net)| (net, distance));
            }
            budget.scans -= 1;
            let degree = index.degree(pin.net);
            if degree < 2 {
                continue;
            }
            let other = strip_scope(net_name(cx, pin.net), scope);
            if other.len().abs_diff(lower.len()) > limit * 4
                || other.chars().count().abs_diff(length) > limit
            {
                continue;
            }
            budget.distances -= 1;
            let other = other.to_ascii_lowercase();
            let distance = strsim::osa_distance(&lower, &other);
            if distance == 0 || distance > limit {
                continue;
            }
            let key = (distance, std::cmp::Reverse(degree), other, pin.net);
            if best.as_ref().is_none_or(|b| key < *b) {
                best = Some(key);
            }
        }
    }
    best.map(|(distance, _, _, net)| (net, distance))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::rules::support::hygiene::testkit::Deck;

    #[test]
    fn typo_net_suggests_the_real_one() {
        let mut d = Deck::new();
        d.v("V1", "vcc", "0", 5.0);
        d.r("R1", "vcc", "0", "1k", 1e3);
        d.r("R2", "vc", "0", "1k", 1e3);
        let found = d.run(check);
        assert_eq!(found.len(), 1);
        assert!(found[0].message.contains("`vc`"));
        assert!(found[0].help.as_deref().unwrap_or("").contains("`vcc`"));
    }

    #[test]
    fn globals_no_connects_and_part_pins_are_left_alone() {
        let mut d = Deck::new();
        d.netlist.globals.push("VDD".into());
        d.r("R1", "vdd", "0", "1k", 1e3);
        d.r("R2", "nc_1", "0", "1k", 1e3);
        d.mos("M1", crate::circuit::Kind::Nmos, "d", "g", "0");
        d.r("R3", "d", "g", "1k", 1e3);
        assert!(d.run(check).is_empty());
    }
}
