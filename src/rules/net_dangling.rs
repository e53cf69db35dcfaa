//! `net-dangling`: a net with a single connection, usually a mistyped node name. See
//! `rules/net-dangling.md`.
//!
//! Ground, `.global` nets and nets named as no-connects are left alone; so are nets whose one
//! connection is a part's pin (a timer, a transistor, a kept subcircuit), which
//! `pin-unconnected` reports with what that pin does.

use super::hygiene_util::{
    finding_at, is_global, is_ground, is_no_connect_name, is_part, net_name,
};
use super::hygiene_util::{NetIndex, Once};
use super::RuleContext;
use crate::circuit::NetId;
use crate::diagnostic::{Finding, Severity};
use crate::source::Span;
use std::collections::{HashMap, HashSet};

const RULE: &str = "net-dangling";
/// Name comparisons allowed per check, so a deck with thousands of stray nets stays linear.
const COMPARISON_BUDGET: usize = 2_000_000;

struct Dangling {
    net: NetId,
    device: usize,
    pin: usize,
    /// The element's instance prefix (`XDRV.`), lower-case.
    scope: String,
}

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let index = NetIndex::new(cx);
    let mut dangling = Vec::new();
    for net in 0..cx.circuit.nets.len() {
        let [(device_id, pin)] = index.on(net) else {
            continue;
        };
        if is_ground(cx, net) || is_global(cx, net) || is_no_connect_name(net_name(cx, net)) {
            continue;
        }
        let Some(device) = cx.circuit.devices.get(*device_id) else {
            continue;
        };
        let Some(element) = cx.netlist.elements.get(device.element) else {
            continue;
        };
        if is_part(device.kind, element) {
            continue;
        }
        dangling.push(Dangling {
            net,
            device: *device_id,
            pin: *pin,
            scope: scope_of(&element.path, &element.name),
        });
    }
    if dangling.is_empty() {
        return;
    }
    let candidates = candidates(cx, &index, &dangling);
    let mut budget = COMPARISON_BUDGET;
    let mut once = Once::default();
    let repeats = repeats(cx, &dangling);
    for d in &dangling {
        let Some(device) = cx.circuit.devices.get(d.device) else {
            continue;
        };
        let Some(element) = cx.netlist.elements.get(device.element) else {
            continue;
        };
        let name = net_name(cx, d.net);
        let local = strip_scope(name, &d.scope);
        if !once.first(element.span, local.to_ascii_lowercase()) {
            continue;
        }
        let near = candidates
            .get(&d.scope)
            .and_then(|list| closest(cx, &index, local, &d.scope, list, &mut budget));
        let others = repeats
            .get(&(element.span, local.to_ascii_lowercase()))
            .map_or(0, |n| n.saturating_sub(1));
        let elsewhere = match others {
            0 => String::new(),
            1 => " (and in 1 other instance)".to_string(),
            n => format!(" (and in {n} other instances)"),
        };
        let mut finding = finding_at(
            RULE,
            Severity::Warning,
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
                let other_local = strip_scope(other, &d.scope);
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

/// How many instances share each dangling definition line and net.
fn repeats(cx: &RuleContext<'_>, dangling: &[Dangling]) -> HashMap<(Span, String), usize> {
    let mut counts = HashMap::new();
    for d in dangling {
        let Some(element) = cx
            .circuit
            .devices
            .get(d.device)
            .and_then(|x| cx.netlist.elements.get(x.element))
        else {
            continue;
        };
        let local = strip_scope(net_name(cx, d.net), &d.scope).to_ascii_lowercase();
        *counts.entry((element.span, local)).or_insert(0) += 1;
    }
    counts
}

fn scope_of(path: &str, name: &str) -> String {
    let len = path.len().saturating_sub(name.len());
    path.get(..len).unwrap_or("").to_ascii_lowercase()
}

fn strip_scope<'n>(net: &'n str, scope: &str) -> &'n str {
    match net.get(..scope.len()) {
        Some(head) if !scope.is_empty() && head.eq_ignore_ascii_case(scope) => {
            net.get(scope.len()..).unwrap_or(net)
        }
        _ => net,
    }
}

/// Nets with at least two connections, by the scope (instance prefix) of the elements on them,
/// for the scopes that have a dangling net.
fn candidates(
    cx: &RuleContext<'_>,
    index: &NetIndex,
    dangling: &[Dangling],
) -> HashMap<String, Vec<NetId>> {
    let wanted: HashSet<&str> = dangling.iter().map(|d| d.scope.as_str()).collect();
    let mut out: HashMap<String, Vec<NetId>> = HashMap::new();
    let mut seen: HashSet<(usize, NetId)> = HashSet::new();
    let mut scope_ids: HashMap<String, usize> = HashMap::new();
    for device in &cx.circuit.devices {
        let Some(element) = cx.netlist.elements.get(device.element) else {
            continue;
        };
        let scope = scope_of(&element.path, &element.name);
        if !wanted.contains(scope.as_str()) {
            continue;
        }
        let next = scope_ids.len();
        let id = *scope_ids.entry(scope.clone()).or_insert(next);
        for pin in &device.pins {
            if index.degree(pin.net) >= 2 && seen.insert((id, pin.net)) {
                out.entry(scope.clone()).or_default().push(pin.net);
            }
        }
    }
    out
}

/// The candidate net whose local name is nearest to `local`, within a small edit distance.
fn closest(
    cx: &RuleContext<'_>,
    index: &NetIndex,
    local: &str,
    scope: &str,
    list: &[NetId],
    budget: &mut usize,
) -> Option<(NetId, usize)> {
    let lower = local.to_ascii_lowercase();
    let length = lower.chars().count();
    if length < 2 {
        return None;
    }
    let limit = if length <= 4 { 1 } else { 2 };
    let mut best: Option<(usize, std::cmp::Reverse<usize>, String, NetId)> = None;
    for &net in list {
        if *budget == 0 {
            break;
        }
        *budget -= 1;
        let other = strip_scope(net_name(cx, net), scope).to_ascii_lowercase();
        if other.chars().count().abs_diff(length) > limit {
            continue;
        }
        let distance = strsim::osa_distance(&lower, &other);
        if distance == 0 || distance > limit {
            continue;
        }
        let key = (distance, std::cmp::Reverse(index.degree(net)), other, net);
        if best.as_ref().is_none_or(|b| key < *b) {
            best = Some(key);
        }
    }
    best.map(|(distance, _, _, net)| (net, distance))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::rules::hygiene_util::testkit::Deck;

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
