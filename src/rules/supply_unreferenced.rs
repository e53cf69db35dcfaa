//! `supply-unreferenced`: a section of the circuit with no DC path to the reference, or a switch
//! whose gate driver and source sit in different DC sections (two supplies whose negatives were
//! never joined). See `rules/supply-unreferenced.md`.
//!
//! Sections are the nets joined by DC-conducting pins (see [`joins`]). A section that is only a
//! gate or a 555 RESET behind capacitors is left to `gate-floating` and `timer-reset-floating`;
//! a lone net with one pin to `net-dangling` and `pin-unconnected`.

use super::hygiene_util::{device_element, finding_at, net_name, shown, Tracer};
use super::Rule;
use super::RuleContext;
use crate::circuit::{Device, DeviceId, Kind, NetId, PinRole};
use crate::diagnostic::{Finding, Severity};
use crate::rules::units::format_si;
use petgraph::unionfind::UnionFind;
use std::collections::{BTreeMap, HashSet};

/// This rule's identity: its ID, the severities it gives and its page.
pub const RULE: Rule = Rule {
    id: "supply-unreferenced",
    default_severity: Severity::Error,
    grades: &[Severity::Error],
    summary:
        "A section with no DC path to the reference, or a switch and driver on different references",
    page: include_str!("../../rules/supply-unreferenced.md"),
    check: Some(check),
};
const SHOWN_NETS: usize = 3;
const SHOWN_BLOCKERS: usize = 4;

/// Whether a pin conducts DC to the device's other conducting pins.
fn joins(kind: Kind, letter: char, role: PinRole) -> bool {
    match kind {
        Kind::Capacitor | Kind::CurrentSource | Kind::Coupling => false,
        Kind::Nmos | Kind::Pmos => role != PinRole::Gate,
        Kind::ControlledSource if matches!(letter, 'F' | 'G') => false,
        Kind::ControlledSource | Kind::Switch => {
            !matches!(role, PinRole::CtrlPos | PinRole::CtrlNeg)
        }
        // Outputs and the control ladder are tied to the supply pins; TRIG, THR and RESET are
        // comparator inputs.
        Kind::Timer555 | Kind::Timer555Cmos => matches!(
            role,
            PinRole::Gnd | PinRole::Vcc | PinRole::Out | PinRole::Dis | PinRole::Ctrl
        ),
        _ => true,
    }
}

/// Nets joined by DC-conducting pins: `(all, apart)`, where `apart` leaves out the passive parts
/// on a gate or base net (a pull-down from the gate to a switch's source is not a shared ground).
/// `apart` is `None` when the circuit has no transistor switch.
fn sections(cx: &RuleContext<'_>) -> (UnionFind<usize>, Option<UnionFind<usize>>) {
    let nets = cx.circuit.nets.len();
    let mut gate_net = vec![false; nets];
    let mut any_switch = false;
    for device in cx
        .circuit
        .devices
        .iter()
        .filter(|d| d.kind.is_switch_transistor())
    {
        any_switch = true;
        for pin in device
            .pins
            .iter()
            .filter(|p| matches!(p.role, PinRole::Gate | PinRole::Base))
        {
            if let Some(flag) = gate_net.get_mut(pin.net) {
                *flag = true;
            }
        }
    }
    let mut sets = UnionFind::<usize>::new(nets);
    let mut held_back = Vec::new();
    for device in &cx.circuit.devices {
        let passive = matches!(
            device.kind,
            Kind::Resistor | Kind::Potentiometer | Kind::Inductor
        ) || device.kind.is_diode_like();
        if any_switch
            && passive
            && device
                .pins
                .iter()
                .any(|p| gate_net.get(p.net).copied().unwrap_or(false))
        {
            held_back.push(device);
            continue;
        }
        join(cx, device, &mut sets);
    }
    if !any_switch {
        return (sets, None);
    }
    let apart = sets.clone();
    for device in held_back {
        join(cx, device, &mut sets);
    }
    (sets, Some(apart))
}

fn join(cx: &RuleContext<'_>, device: &Device, sets: &mut UnionFind<usize>) {
    let letter = cx
        .netlist
        .elements
        .get(device.element)
        .map_or('?', |e| e.letter);
    let mut first = None;
    for pin in device
        .pins
        .iter()
        .filter(|p| joins(device.kind, letter, p.role))
    {
        match first {
            None => first = Some(pin.net),
            Some(f) => {
                sets.union(f, pin.net);
            }
        }
    }
}

#[derive(Default)]
struct Section {
    nets: Vec<NetId>,
    net_count: usize,
    pins: usize,
    conducting_pins: usize,
    covered_input: bool,
    sources: Vec<DeviceId>,
    first_conducting: Option<DeviceId>,
    blockers: Vec<DeviceId>,
    /// An unknown part (undefined model, unmapped ports) touches the section: its definition
    /// may tie the section to ground, so the deck alone cannot say the section floats.
    unknown_part: bool,
}

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let count = cx.circuit.nets.len();
    if count == 0 {
        return;
    }
    let Some(ground) = cx.circuit.nets.iter().position(|n| n.is_ground) else {
        no_reference(cx, out);
        return;
    };
    let (sets, apart) = sections(cx);
    let mut referenced = vec![false; count];
    for (i, _) in cx
        .circuit
        .nets
        .iter()
        .enumerate()
        .filter(|(_, n)| n.is_ground)
    {
        if let Some(flag) = referenced.get_mut(sets.find(i)) {
            *flag = true;
        }
    }
    let mut explained = HashSet::new();
    if let Some(apart) = &apart {
        mismatched_references(cx, &sets, apart, &mut explained, out);
    }
    let sections = floating_sections(cx, &sets, &referenced);
    for (root, section) in &sections {
        if explained.contains(root) || section.pins <= 1 || section.unknown_part {
            continue;
        }
        if section.conducting_pins == 0 && section.covered_input {
            continue;
        }
        if let Some(f) = floating(cx, section, net_name(cx, ground)) {
            out.push(f);
        }
    }
}

fn no_reference(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let Some(element) = cx.netlist.elements.first() else {
        return;
    };
    let names = cx.config.analysis.ground.join("`, `");
    out.push(
        finding_at(
            RULE,
            Severity::Error,
            element,
            format!(
                "no net of the deck is the reference (`{names}`): every voltage is undefined and \
                 nothing can be checked against ground"
            ),
        )
        .with_help(
            "name the reference node `0`, or list its name under [analysis] ground in \
             kickback.toml",
        ),
    );
}

/// Sections without a ground net, keyed by their root (ordered, so output is stable).
fn floating_sections(
    cx: &RuleContext<'_>,
    sets: &UnionFind<usize>,
    referenced: &[bool],
) -> BTreeMap<usize, Section> {
    let mut sections: BTreeMap<usize, Section> = BTreeMap::new();
    for net in 0..cx.circuit.nets.len() {
        let root = sets.find(net);
        if referenced.get(root).copied().unwrap_or(true) {
            continue;
        }
        let s = sections.entry(root).or_default();
        s.net_count += 1;
        if s.nets.len() < SHOWN_NETS {
            s.nets.push(net);
        }
    }
    if sections.is_empty() {
        return sections;
    }
    for (id, device) in cx.circuit.devices.iter().enumerate() {
        let letter = cx
            .netlist
            .elements
            .get(device.element)
            .map_or('?', |e| e.letter);
        for pin in &device.pins {
            let root = sets.find(pin.net);
            let Some(s) = sections.get_mut(&root) else {
                continue;
            };
            // A 0 V source (an ammeter) is a wire: a section of one pin and ammeters is an
            // open pin, `pin-unconnected`'s to report.
            if !cx.circuit.is_ammeter(id) {
                s.pins += 1;
            }
            s.unknown_part |= cx.circuit.unknown_part(id).is_some();
            let conducts = joins(device.kind, letter, pin.role);
            if conducts {
                s.conducting_pins += 1;
                s.first_conducting.get_or_insert(id);
            } else {
                s.covered_input |= pin.role == PinRole::Gate
                    || (device.kind.is_timer() && pin.role == PinRole::Reset);
                let elsewhere = device.pins.iter().any(|p| sets.find(p.net) != root);
                if elsewhere && s.blockers.len() < SHOWN_BLOCKERS && !s.blockers.contains(&id) {
                    s.blockers.push(id);
                }
            }
            if device.kind == Kind::VoltageSource && !s.sources.contains(&id) {
                s.sources.push(id);
            }
        }
    }
    sections
}

fn net_list(cx: &RuleContext<'_>, section: &Section) -> String {
    let names: Vec<String> = section
        .nets
        .iter()
        .map(|&n| format!("`{}`", net_name(cx, n)))
        .collect();
    let more = section.net_count.saturating_sub(section.nets.len());
    if more > 0 {
        format!("{} and {more} more", names.join(", "))
    } else {
        names.join(", ")
    }
}

fn floating(cx: &RuleContext<'_>, section: &Section, ground: &str) -> Option<Finding> {
    let nets = net_list(cx, section);
    let blockers: Vec<String> = section.blockers.iter().map(|&b| shown(cx, b)).collect();
    let through = if blockers.is_empty() {
        "nothing else connects to it".to_string()
    } else {
        format!(
            "{} the rest only through {}, which pass{} no DC",
            if section.net_count == 1 {
                "it reaches"
            } else {
                "they reach"
            },
            blockers.join(", "),
            if blockers.len() == 1 { "es" } else { "" }
        )
    };
    let anchor = section
        .sources
        .first()
        .or(section.first_conducting.as_ref())
        .or(section.blockers.first())
        .copied()?;
    let (device, element) = device_element(cx, anchor)?;
    let mut finding = if device.kind == Kind::VoltageSource {
        let volts = element
            .source
            .as_ref()
            .and_then(|s| s.dc)
            .map_or_else(String::new, |v| format!(" ({})", format_si(v, "V")));
        let ret = device.pin(PinRole::Neg).map_or("?", |n| net_name(cx, n));
        finding_at(
            RULE,
            Severity::Error,
            element,
            format!(
                "{}{volts} and the nets it feeds ({nets}) have no DC path to the reference \
                 `{ground}`; {through}: their voltages are undefined, a simulator stops with a \
                 singular matrix, and on the board this section floats against the rest",
                element.path
            ),
        )
        .with_help(format!(
            "join this supply's return `{ret}` to `{ground}`; if the isolation is deliberate, \
             tie it to `{ground}` through a high-value resistor (e.g. 10MEG) so its voltages \
             are defined"
        ))
    } else {
        finding_at(
            RULE,
            Severity::Error,
            element,
            format!(
                "{nets} {} no DC path to the reference `{ground}`; {through}: the DC voltage \
                 there is undefined",
                if section.net_count == 1 {
                    "has"
                } else {
                    "have"
                }
            ),
        )
        .with_help(format!(
            "give the section a DC path: a resistor to `{ground}` or to a defined node (a \
             1MEG bleeder does for capacitors in series)"
        ))
    };
    for &b in section.blockers.iter().filter(|&&b| b != anchor) {
        if let Some((_, e)) = device_element(cx, b) {
            finding = finding.with_label(e.span, format!("{} passes no DC", e.path));
        }
    }
    Some(finding.with_value(
        "nets",
        section.net_count as f64,
        "",
        "counted from the netlist",
    ))
}

/// How many sections hold the reference or a voltage source (counting stops at two).
fn supplied_sections(cx: &RuleContext<'_>, sets: &UnionFind<usize>) -> usize {
    let mut first = None;
    let grounds = cx
        .circuit
        .nets
        .iter()
        .enumerate()
        .filter(|(_, n)| n.is_ground)
        .map(|(i, _)| i);
    let sources = cx
        .circuit
        .devices
        .iter()
        .filter(|d| d.kind == Kind::VoltageSource)
        .flat_map(|d| d.pins.iter().map(|p| p.net));
    for net in grounds.chain(sources) {
        let root = sets.find(net);
        match first {
            None => first = Some(root),
            Some(r) if r != root => return 2,
            Some(_) => {}
        }
    }
    usize::from(first.is_some())
}

/// The net a driver's output is referenced to.
fn driver_reference(cx: &RuleContext<'_>, id: DeviceId, driven: NetId) -> Option<NetId> {
    let device = cx.circuit.devices.get(id)?;
    match device.kind {
        k if k.is_timer() => device.pin(PinRole::Gnd),
        Kind::LogicOutput => device
            .pin(PinRole::Gnd)
            .or_else(|| cx.circuit.nets.iter().position(|n| n.is_ground)),
        Kind::VoltageSource => device.pins.iter().map(|p| p.net).find(|&n| n != driven),
        Kind::ControlledSource => device.pin(PinRole::Neg),
        Kind::Nmos | Kind::Pmos => device.pin(PinRole::Source),
        Kind::Npn | Kind::Pnp => device.pin(PinRole::Emitter),
        _ => None,
    }
}

/// The driver of a switch's gate or base: from the switch analysis when it ran, else the first
/// active output (or pulse source) the gate network reaches.
fn gate_driver(
    cx: &RuleContext<'_>,
    tracer: &Tracer<'_, '_>,
    id: DeviceId,
    device: &Device,
) -> Option<(DeviceId, NetId)> {
    let gate = device.pin(PinRole::Gate).or(device.pin(PinRole::Base))?;
    let source = device
        .pin(PinRole::Source)
        .or(device.pin(PinRole::Emitter))?;
    if let Some(facts) = cx.analysis.switches.iter().find(|s| s.device == id) {
        let driver = facts.driver.as_ref()?.device;
        let net = cx
            .circuit
            .devices
            .get(driver)?
            .pins
            .first()
            .map(|p| p.net)?;
        return Some((driver, net));
    }
    let trace = tracer.trace(gate, &[source]);
    let active = trace
        .drivers
        .iter()
        .chain(trace.may_float.iter())
        .find(|(d, role)| {
            *d != id
                && !matches!(role, PinRole::Vcc | PinRole::Gnd)
                && cx
                    .circuit
                    .devices
                    .get(*d)
                    .is_some_and(|x| x.kind != Kind::Unknown)
        });
    if let Some(&(driver, _)) = active {
        let net = trace.nets.first().copied().unwrap_or(gate);
        return Some((driver, net));
    }
    trace
        .fixed
        .iter()
        .find_map(|&(net, source_dev)| source_dev.map(|s| (s, net)))
        .filter(|(_, net)| *net != source)
}

/// A switch whose gate driver is referenced to a net its own source never meets at DC.
struct Unreferenced {
    switch: DeviceId,
    driver: DeviceId,
    source: NetId,
    reference: NetId,
}

fn unreferenced_drives(cx: &RuleContext<'_>, apart: &UnionFind<usize>) -> Vec<Unreferenced> {
    let tracer = Tracer::new(cx);
    let mut found = Vec::new();
    for (id, device) in cx.circuit.devices.iter().enumerate() {
        if !device.kind.is_switch_transistor() {
            continue;
        }
        let Some(source) = device.pin(PinRole::Source).or(device.pin(PinRole::Emitter)) else {
            continue;
        };
        let Some((driver, driven)) = gate_driver(cx, &tracer, id, device) else {
            continue;
        };
        let Some(reference) = driver_reference(cx, driver, driven) else {
            continue;
        };
        if apart.find(source) != apart.find(reference) {
            found.push(Unreferenced {
                switch: id,
                driver,
                source,
                reference,
            });
        }
    }
    found
}

/// Switches whose drive has no return path to their own source (this rule's finding): the
/// gate voltage the DC engine finds for them means nothing, so the drive-strength rules leave
/// them to this one.
pub fn switches_without_reference(cx: &RuleContext<'_>) -> Vec<DeviceId> {
    let (_, Some(apart)) = sections(cx) else {
        return Vec::new();
    };
    if supplied_sections(cx, &apart) <= 1 {
        return Vec::new();
    }
    let mut ids: Vec<DeviceId> = unreferenced_drives(cx, &apart)
        .into_iter()
        .map(|u| u.switch)
        .collect();
    ids.sort_unstable();
    ids
}

fn mismatched_references(
    cx: &RuleContext<'_>,
    sets: &UnionFind<usize>,
    apart: &UnionFind<usize>,
    explained: &mut HashSet<usize>,
    out: &mut Vec<Finding>,
) {
    if supplied_sections(cx, apart) <= 1 {
        // Every supply and the reference share one section: every driver does too.
        return;
    }
    for Unreferenced {
        switch: id,
        driver,
        source,
        reference,
    } in unreferenced_drives(cx, apart)
    {
        let Some(device) = cx.circuit.devices.get(id) else {
            continue;
        };
        explained.insert(sets.find(source));
        explained.insert(sets.find(reference));
        let (Some((_, element)), Some((_, driver_element))) =
            (device_element(cx, id), device_element(cx, driver))
        else {
            continue;
        };
        let terminal = if device.kind.is_mos() {
            "source"
        } else {
            "emitter"
        };
        let drive = if device.kind.is_mos() { "gate" } else { "base" };
        let (s_name, r_name) = (net_name(cx, source), net_name(cx, reference));
        out.push(
            finding_at(
                RULE,
                Severity::Error,
                element,
                format!(
                    "{}'s {terminal} is on `{s_name}`, but its {drive} driver {} is referenced \
                     to `{r_name}`, and nothing outside the {drive} network joins the two: the \
                     supplies' negatives were never connected, so the drive has no return path \
                     and the switch may never turn on, or turn on at random",
                    element.path, driver_element.path
                ),
            )
            .with_label(
                driver_element.span,
                format!(
                    "{} drives the {drive}, referenced to `{r_name}`",
                    driver_element.path
                ),
            )
            .with_help(format!(
                "join `{s_name}` and `{r_name}` with one wire close to the switch's {terminal}, \
                 or drive the {drive} through an isolated driver referenced to `{s_name}`"
            )),
        );
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::rules::hygiene_util::testkit::Deck;

    #[test]
    fn clean_fan_is_quiet() {
        assert!(Deck::fan().run(check).is_empty());
    }

    #[test]
    fn second_pack_never_joined() {
        let mut d = Deck::fan();
        // The fan moves onto its own 24 V pack whose negative is `gnd2`.
        d.v("VB2", "v24", "gnd2", 24.0);
        let m1 = d
            .circuit
            .devices
            .iter()
            .position(|x| x.kind == Kind::Nmos)
            .unwrap();
        let gnd2 = d.net("gnd2");
        let v24 = d.net("v24");
        for pin in &mut d.circuit.devices[m1].pins {
            if matches!(pin.role, PinRole::Source | PinRole::Bulk) {
                pin.net = gnd2;
            }
        }
        let fan = d
            .circuit
            .devices
            .iter()
            .position(|x| x.kind == Kind::DcMotor)
            .unwrap();
        d.circuit.devices[fan].pins[0].net = v24;
        let diode = d
            .circuit
            .devices
            .iter()
            .position(|x| x.kind == Kind::Schottky)
            .unwrap();
        d.circuit.devices[diode].pins[1].net = v24;
        let found = d.run(check);
        assert_eq!(found.len(), 1, "{found:?}");
        assert!(found[0].message.contains("`gnd2`") && found[0].message.contains("XU1"));
    }

    #[test]
    fn series_capacitors_leave_the_middle_floating() {
        let mut d = Deck::new();
        d.v("V1", "a", "0", 5.0);
        d.c("C1", "a", "mid", 1e-6);
        d.c("C2", "mid", "0", 1e-6);
        let found = d.run(check);
        assert_eq!(found.len(), 1, "{found:?}");
        assert!(found[0].message.starts_with("`mid` has no DC path"));
    }
}
