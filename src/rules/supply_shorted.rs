//! `supply-shorted`: a voltage source across a zero-resistance path (its own two terminals on
//! one net, a 0 Ω resistor, an inductor with no series resistance), or two sources with
//! different values in parallel. See `rules/supply-shorted.md`.
//!
//! Zero-resistance elements (0 Ω resistors, ideal inductors, 0 V sources used as ammeters) join
//! nets into one node first, so sources "in parallel" through such links count as parallel.
//! Equal sources in parallel are not reported: no current flows between them.

use super::support::hygiene::{device_element, finding_at, net_name, shown};
use super::Rule;
use super::RuleContext;
use crate::circuit::{Device, DeviceId, Kind, NetId};
use crate::diagnostic::{Finding, Severity};
use crate::netlist::{FlatElement, SourceSpec, Waveform};
use crate::rules::units::format_si;
use petgraph::unionfind::UnionFind;
use std::collections::{HashMap, HashSet, VecDeque};

/// This rule's identity: its ID, the severities it gives and its page.
pub const RULE: Rule = Rule {
    id: "supply-shorted",
    default_severity: Severity::Error,
    grades: &[Severity::Error],
    summary: "Voltage sources in parallel or a source across a short",
    page: include_str!("../../rules/supply-shorted.md"),
    check: Some(check),
};
const MAX_PATH_LABELS: usize = 6;

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let nets = cx.circuit.nets().len();
    if nets == 0 {
        return;
    }
    let mut joined = UnionFind::<usize>::new(nets);
    let mut links: HashMap<NetId, Vec<(DeviceId, NetId)>> = HashMap::new();
    let mut sources = Vec::new();
    for (id, device) in cx.circuit.devices().iter().enumerate() {
        let Some(element) = cx.netlist.elements.get(device.element) else {
            continue;
        };
        let [a, b] = device.pins[..] else {
            continue;
        };
        if is_zero_resistance(device, element) {
            joined.union(a.net, b.net);
            links.entry(a.net).or_default().push((id, b.net));
            links.entry(b.net).or_default().push((id, a.net));
        } else if device.kind == Kind::VoltageSource {
            sources.push((id, a.net, b.net));
        }
    }
    let mut parallel: HashMap<(usize, usize), (DeviceId, f64)> = HashMap::new();
    for &(id, pos, neg) in &sources {
        let Some((device, element)) = device_element(cx, id) else {
            continue;
        };
        let (p, n) = (joined.find(pos), joined.find(neg));
        if p == n {
            out.push(across_short(cx, element, device, pos, neg, &links));
            continue;
        }
        let (key, sign) = if p < n { ((p, n), 1.0) } else { ((n, p), -1.0) };
        match parallel.get(&key) {
            None => {
                parallel.insert(key, (id, sign));
            }
            Some(&(first, first_sign)) => {
                if let Some(f) = fighting(cx, first, first_sign, id, sign) {
                    out.push(f);
                }
            }
        }
    }
}

/// An element that joins its two nets with no resistance at all.
fn is_zero_resistance(device: &Device, element: &FlatElement) -> bool {
    let value = element.value.and_then(|v| v.known());
    let series = ["rser", "r"]
        .iter()
        .find_map(|k| element.param(k).and_then(|v| v.known()))
        .unwrap_or(0.0);
    match device.kind {
        Kind::Resistor => value == Some(0.0),
        Kind::Inductor => series == 0.0,
        Kind::VoltageSource => {
            series == 0.0
                && element
                    .source
                    .as_ref()
                    .is_some_and(|s| s.wave == Waveform::Dc && s.dc.unwrap_or(0.0) == 0.0)
        }
        _ => false,
    }
}

fn series_resistance(element: &FlatElement) -> Option<f64> {
    element
        .param("rser")
        .and_then(|v| v.known())
        .filter(|r| *r > 0.0)
}

fn describe(spec: Option<&SourceSpec>) -> String {
    match spec {
        Some(s) if s.wave != Waveform::Dc => match s.levels() {
            Some((lo, hi)) => format!("switching {}–{}", format_si(lo, "V"), format_si(hi, "V")),
            None => "a waveform".to_string(),
        },
        Some(s) => format_si(s.dc.unwrap_or(0.0), "V"),
        None => "unknown value".to_string(),
    }
}

fn across_short(
    cx: &RuleContext<'_>,
    element: &FlatElement,
    device: &Device,
    pos: NetId,
    neg: NetId,
    links: &HashMap<NetId, Vec<(DeviceId, NetId)>>,
) -> Finding {
    let spec = element.source.as_ref();
    let volts = describe(spec);
    let path = zero_path(links, pos, neg);
    let message = if pos == neg {
        format!(
            "{} ({volts}) has both terminals on net `{}`, so the source is shorted",
            element.path,
            net_name(cx, pos)
        )
    } else {
        let names: Vec<String> = path.iter().map(|&id| shown(cx, id)).collect();
        format!(
            "{} ({volts}) is shorted by a path with no resistance ({}) from `{}` to `{}`",
            element.path,
            names.join(", "),
            net_name(cx, pos),
            net_name(cx, neg)
        )
    };
    let mut finding = finding_at(RULE, RULE.severity(), element, message);
    let dc = spec
        .and_then(|s| s.dc)
        .or(element.value.and_then(|v| v.known()));
    if let Some(v) = dc {
        finding = finding.with_value("source_voltage", v, "V", "the source's DC value");
        if let Some(r) = series_resistance(element) {
            let i = v.abs() / r;
            finding.message.push_str(&format!(
                ": only its series resistance of {} limits the current, {}",
                format_si(r, "Ω"),
                format_si(i, "A")
            ));
            finding = finding.with_value("short_current", i, "A", "V / rser");
        } else {
            finding.message.push_str(
                ": an ideal source drives unlimited current, a real one its fault current",
            );
        }
    }
    for &id in path.iter().take(MAX_PATH_LABELS) {
        if let Some((_, e)) = device_element(cx, id) {
            finding = finding.with_label(e.span, format!("{} has no resistance", e.path));
        }
    }
    let _ = device;
    if pos == neg {
        return finding.with_help(
            "a node name on this line is probably mistyped: connect each terminal to the net it \
             belongs on",
        );
    }
    finding.with_help(
        "a 0 Ω resistor or an ideal inductor straight across a source is a dead short: give \
         the path its real resistance (a motor's winding resistance, the inductor's Rser=) or \
         reconnect it",
    )
}

/// The zero-resistance elements from `a` to `b` (breadth first, so the shortest path).
fn zero_path(links: &HashMap<NetId, Vec<(DeviceId, NetId)>>, a: NetId, b: NetId) -> Vec<DeviceId> {
    if a == b {
        return Vec::new();
    }
    let mut came: HashMap<NetId, (DeviceId, NetId)> = HashMap::new();
    let mut seen = HashSet::from([a]);
    let mut queue = VecDeque::from([a]);
    while let Some(net) = queue.pop_front() {
        if net == b {
            break;
        }
        for &(id, next) in links.get(&net).map(Vec::as_slice).unwrap_or(&[]) {
            if seen.insert(next) {
                came.insert(next, (id, net));
                queue.push_back(next);
            }
        }
    }
    let mut path = Vec::new();
    let mut at = b;
    while let Some(&(id, prev)) = came.get(&at) {
        path.push(id);
        at = prev;
        if at == a {
            break;
        }
    }
    path.reverse();
    path
}

/// Two sources across one node pair: a finding when their values differ.
fn fighting(
    cx: &RuleContext<'_>,
    first: DeviceId,
    first_sign: f64,
    later: DeviceId,
    later_sign: f64,
) -> Option<Finding> {
    let (_, a) = device_element(cx, first)?;
    let (_, b) = device_element(cx, later)?;
    let (sa, sb) = (a.source.as_ref(), b.source.as_ref());
    let dc = |s: Option<&SourceSpec>, e: &FlatElement| {
        s.and_then(|s| s.dc).or(e.value.and_then(|v| v.known()))
    };
    let both_dc = [sa, sb]
        .iter()
        .all(|s| s.is_none_or(|s| s.wave == Waveform::Dc));
    let (va, vb) = (dc(sa, a), dc(sb, b));
    if both_dc {
        let (va, vb) = (va? * first_sign, vb? * later_sign);
        if (va - vb).abs() <= 1e-9 * va.abs().max(vb.abs()).max(1.0) {
            return None;
        }
    } else if first_sign == later_sign && sa == sb {
        return None;
    }
    let mut finding = finding_at(
        RULE,
        RULE.severity(),
        b,
        format!(
            "{} ({}) is in parallel with {} ({}){}: two voltage sources with different values \
             fight with nothing but wire between them",
            b.path,
            describe(sb),
            a.path,
            describe(sa),
            if first_sign == later_sign {
                ""
            } else {
                ", connected the other way round"
            }
        ),
    )
    .with_label(a.span, format!("{} is across the same nodes", a.path));
    if let (true, Some(va), Some(vb)) = (both_dc, va, vb) {
        let difference = (va * first_sign - vb * later_sign).abs();
        finding = finding
            .with_value("source_voltage", vb, "V", "the source's DC value")
            .with_value(
                "other_source_voltage",
                va,
                "V",
                "the other source's DC value",
            )
            .with_value("difference", difference, "V", "computed");
        if let (Some(ra), Some(rb)) = (series_resistance(a), series_resistance(b)) {
            let i = difference / (ra + rb);
            finding.message.push_str(&format!(
                "; through their series resistances {} flows from one into the other",
                format_si(i, "A")
            ));
            finding = finding.with_value("circulating_current", i, "A", "ΔV / (rser + rser)");
        }
    }
    Some(finding.with_help(
        "remove one of the sources, or put the element that belongs between them (an OR-ing \
         diode, a regulator, a resistor); on the bench one supply would drive the other",
    ))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::rules::support::hygiene::testkit::Deck;

    #[test]
    fn source_across_ideal_inductor() {
        let mut d = Deck::new();
        d.v("V1", "a", "0", 12.0);
        d.two("L1", Kind::Inductor, "a", "0", 1e-3, "1m");
        let found = d.run(check);
        assert_eq!(found.len(), 1);
        assert!(found[0].message.contains("L1"), "{}", found[0].message);
        assert_eq!(found[0].labels.len(), 1);
    }

    #[test]
    fn parallel_sources_through_an_ammeter() {
        let mut d = Deck::new();
        d.v("V1", "a", "0", 12.0);
        d.v("VSENSE", "a", "b", 0.0);
        d.v("V2", "b", "0", 9.0);
        d.v("V3", "0", "b", -12.0);
        let found = d.run(check);
        assert_eq!(found.len(), 1, "{found:?}");
        assert!(found[0]
            .message
            .starts_with("V2 (9 V) is in parallel with V1 (12 V)"));
    }
}
