//! Shared pieces of the switching and stress rules: the finding skeleton for an element, names
//! and ratings with their provenance, indexes of nets and switches, and (in the submodules) a
//! switch's rail and load branch, drive levels read in a switch's conduction sense, MOSFET gain,
//! and the standard ratings a fix names.
//!
//! Every structure here is built once per rule call and is linear in the number of pins.

mod branch;
mod drive;
mod leg;
mod ratings;
pub mod reference;

pub use branch::*;
pub use drive::*;
pub use leg::*;
pub use ratings::*;

use crate::analysis::{LoadFacts, Range, Stage, SupplyFacts, SwitchFacts, TimerFacts};
use crate::circuit::{Circuit, Device, DeviceId, Kind, NetId, PinRole, Rated};
use crate::diagnostic::{Finding, Severity};
use crate::netlist::FlatElement;
use crate::rules::eseries;
use crate::rules::units::{format_si, sig3};
use crate::rules::RuleContext;
use std::collections::HashMap;

/// The flattened element behind a device.
pub fn element<'a>(cx: &RuleContext<'a>, id: DeviceId) -> Option<&'a FlatElement> {
    cx.netlist
        .elements
        .get(cx.circuit.devices().get(id)?.element)
}
pub fn device<'a>(cx: &RuleContext<'a>, id: DeviceId) -> Option<&'a Device> {
    cx.circuit.devices().get(id)
}
pub fn kind(cx: &RuleContext<'_>, id: DeviceId) -> Option<Kind> {
    device(cx, id).map(|d| d.kind)
}
/// The element's path as the user reads it (`XDRV.M1`, or `M1` at top level).
pub fn name(cx: &RuleContext<'_>, id: DeviceId) -> String {
    element(cx, id).map_or_else(|| format!("device {id}"), |e| e.path.clone())
}
pub fn net_name<'a>(cx: &RuleContext<'a>, net: NetId) -> &'a str {
    cx.circuit.nets().get(net).map_or("?", |n| n.name.as_str())
}
pub fn is_ground(cx: &RuleContext<'_>, net: NetId) -> bool {
    cx.circuit.nets().get(net).is_some_and(|n| n.is_ground)
}
/// A finding on a device's line, with its instance path and the instance lines that placed it.
pub fn finding_at(
    rule: crate::rules::Rule,
    severity: Severity,
    cx: &RuleContext<'_>,
    id: DeviceId,
    message: impl Into<String>,
) -> Option<Finding> {
    let element = element(cx, id)?;
    let mut finding = Finding::new(rule, severity, element.span, message)
        .with_element(element.name.clone(), element.instance_path());
    finding.instances = element.instances.clone();
    Some(finding)
}
/// Adds a label on a device's line, unless the device is unknown or is the finding's own line.
pub fn label(finding: Finding, cx: &RuleContext<'_>, id: DeviceId, message: &str) -> Finding {
    match element(cx, id) {
        Some(e) if e.span != finding.span && !finding.labels.iter().any(|l| l.span == e.span) => {
            finding.with_label(e.span, message)
        }
        _ => finding,
    }
}
/// A rating with its provenance.
pub fn rated(cx: &RuleContext<'_>, id: DeviceId, key: &str) -> Option<Rated> {
    device(cx, id)?.data.get(key).cloned()
}
/// A rating, or the kind's documented default when part knowledge gave none.
pub fn rated_or(cx: &RuleContext<'_>, id: DeviceId, key: &str, default: f64, why: &str) -> Rated {
    rated(cx, id, key).unwrap_or_else(|| Rated {
        value: default,
        source: why.to_string(),
    })
}
/// `4.2 V` or `4.2–5.1 V`.
pub fn range_text(min: f64, max: f64, unit: &str) -> String {
    if (max - min).abs() <= 1e-9 * max.abs().max(min.abs()).max(1e-30) {
        format_si(max, unit)
    } else {
        format!("{}–{}", sig3_scaled(min, max, unit), format_si(max, unit))
    }
}
/// The lower end of a range in the upper end's prefix, so `0.45–1.2 A` reads as one scale.
fn sig3_scaled(min: f64, max: f64, unit: &str) -> String {
    let upper = format_si(max, unit);
    let prefix_and_unit = upper.split_once(' ').map_or("", |(_, rest)| rest);
    let prefix = prefix_and_unit.strip_suffix(unit).unwrap_or("");
    let scale = match prefix {
        "G" => 1e9,
        "M" => 1e6,
        "k" => 1e3,
        "m" => 1e-3,
        "µ" => 1e-6,
        "n" => 1e-9,
        "p" => 1e-12,
        "f" => 1e-15,
        _ => 1.0,
    };
    sig3(min / scale)
}
/// `90 %` or `10–90 %`.
pub fn duty_text(range: &Range) -> String {
    let lo = sig3(range.min * 100.0);
    let hi = sig3(range.max * 100.0);
    if lo == hi {
        format!("{hi} %")
    } else {
        format!("{lo}–{hi} %")
    }
}
pub fn supply_facts<'a>(cx: &RuleContext<'a>, supply: DeviceId) -> Option<&'a SupplyFacts> {
    by_device(&cx.analysis.supplies, supply, |s| s.device)
}
/// A supply's corners as a range whose states name the corner (`V12 at min`).
pub fn supply_range(cx: &RuleContext<'_>, s: &SupplyFacts) -> Range {
    let name = name(cx, s.device);
    if s.min == s.max {
        Range::point(
            s.nominal,
            format!("{name} at {}", format_si(s.nominal, "V")),
        )
    } else {
        Range {
            min: s.min,
            max: s.max,
            min_state: format!("{name} at min"),
            max_state: format!("{name} at max"),
        }
    }
}
/// Pins on each net (the circuit's index) and the supply source on each rail, found once per
/// rule call so that no rule walks a rail's pins for every switch on it.
pub struct NetIndex<'a> {
    circuit: &'a Circuit,
    /// Rail net → the first grounded voltage source (in device order) holding it, with facts.
    supplies: HashMap<NetId, &'a SupplyFacts>,
}
impl<'a> NetIndex<'a> {
    pub fn new(cx: &RuleContext<'a>) -> NetIndex<'a> {
        let mut supplies: HashMap<NetId, &'a SupplyFacts> = HashMap::new();
        for s in &cx.analysis.supplies {
            let Some(dev) = device(cx, s.device) else {
                continue;
            };
            let grounded = dev.pin(PinRole::Neg).is_some_and(|n| is_ground(cx, n));
            let Some(pos) = dev.pin(PinRole::Pos) else {
                continue;
            };
            if dev.kind != Kind::VoltageSource || !grounded {
                continue;
            }
            // The first source in device order, and its first facts, as a walk of the pins finds.
            let slot = supplies.entry(pos).or_insert(s);
            if s.device < slot.device {
                *slot = s;
            }
        }
        NetIndex {
            circuit: cx.circuit,
            supplies,
        }
    }

    /// `(device, pin index)` of every pin on `net`.
    pub fn on(&self, net: NetId) -> &'a [(DeviceId, usize)] {
        self.circuit.devices_on(net)
    }

    /// Two-terminal devices with one pin on `a` and the other on `b`, either way round.
    pub fn between(&self, cx: &RuleContext<'_>, a: NetId, b: NetId) -> Vec<DeviceId> {
        let (near, far) = if self.on(a).len() <= self.on(b).len() {
            (a, b)
        } else {
            (b, a)
        };
        let mut found: Vec<DeviceId> = self
            .on(near)
            .iter()
            .map(|&(d, _)| d)
            .filter(|&d| {
                device(cx, d).is_some_and(|dev| {
                    dev.pins.len() == 2 && {
                        let (x, y) = (dev.pins[0].net, dev.pins[1].net);
                        (x == near && y == far) || (x == far && y == near)
                    }
                })
            })
            .collect();
        found.sort_unstable();
        found.dedup();
        found
    }

    /// The supply source holding `net` against ground, when there is one.
    pub fn supply_on(&self, _cx: &RuleContext<'a>, net: NetId) -> Option<&'a SupplyFacts> {
        self.supplies.get(&net).copied()
    }
}
/// The timer facts of a device.
pub fn timer_facts<'a>(cx: &RuleContext<'a>, id: DeviceId) -> Option<&'a TimerFacts> {
    by_device(&cx.analysis.timers, id, |t| t.device)
}
/// The first entry of `list` for `device`. The analyses list facts in device order, so a
/// binary search finds it (rules ask for thousands of devices on a large board).
/// Short lists (facts put together by hand) are searched from the front whatever their order.
fn by_device<T>(list: &[T], device: DeviceId, key: impl Fn(&T) -> DeviceId) -> Option<&T> {
    if list.len() <= 64 {
        return list.iter().find(|x| key(x) == device);
    }
    let at = list.partition_point(|x| key(x) < device);
    list.get(at).filter(|x| key(x) == device)
}
/// The analysis's switches by device, built once per rule call.
pub struct SwitchIndex<'a> {
    by_device: std::collections::BTreeMap<DeviceId, &'a SwitchFacts>,
}
impl<'a> SwitchIndex<'a> {
    pub fn new(cx: &RuleContext<'a>) -> SwitchIndex<'a> {
        SwitchIndex {
            by_device: cx.analysis.switches.iter().map(|s| (s.device, s)).collect(),
        }
    }

    pub fn get(&self, device: DeviceId) -> Option<&'a SwitchFacts> {
        self.by_device.get(&device).copied()
    }
}
