//! `supply-unreferenced`: a section of the circuit with no DC path to the reference, or a switch
//! whose gate driver and source sit in different DC sections (two supplies whose negatives were
//! never joined). See `rules/supply-unreferenced.md`.
//!
//! Sections are the nets joined by DC-conducting pins (see [`joins_reference`]). A section that is only a
//! gate or a 555 RESET behind capacitors is left to `gate-floating` and `timer-reset-floating`;
//! a lone net with one pin to `net-dangling` and `pin-unconnected`.

use super::support::hygiene::{device_element, finding_at, net_name, shown};
use super::support::switch::reference::{unreferenced_drives, Unreferenced};
use super::Rule;
use super::RuleContext;
use crate::circuit::sections::joins_reference;
use crate::circuit::{DeviceId, Kind, NetId, PinRole};
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
    let count = cx.circuit.nets().len();
    if count == 0 {
        return;
    }
    let Some(ground) = cx.circuit.nets().iter().position(|n| n.is_ground) else {
        no_reference(cx, out);
        return;
    };
    let (sets, apart) = cx.circuit.dc_sections(cx.netlist);
    let mut referenced = vec![false; count];
    for (i, _) in cx
        .circuit
        .nets()
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
            RULE.severity(),
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
    for net in 0..cx.circuit.nets().len() {
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
    for (id, device) in cx.circuit.devices().iter().enumerate() {
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
            let conducts = joins_reference(device.kind, letter, pin.role);
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
            RULE.severity(),
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
            RULE.severity(),
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

fn mismatched_references(
    cx: &RuleContext<'_>,
    sets: &UnionFind<usize>,
    apart: &UnionFind<usize>,
    explained: &mut HashSet<usize>,
    out: &mut Vec<Finding>,
) {
    if cx.circuit.supplied_sections(apart) <= 1 {
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
        let Some(device) = cx.circuit.devices().get(id) else {
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
                RULE.severity(),
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
    use crate::rules::support::hygiene::testkit::Deck;

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
            .parts
            .devices()
            .iter()
            .position(|x| x.kind == Kind::Nmos)
            .unwrap();
        let gnd2 = d.net("gnd2");
        let v24 = d.net("v24");
        for pin in &mut d.device_mut(m1).pins {
            if matches!(pin.role, PinRole::Source | PinRole::Bulk) {
                pin.net = gnd2;
            }
        }
        let fan = d
            .parts
            .devices()
            .iter()
            .position(|x| x.kind == Kind::DcMotor)
            .unwrap();
        d.device_mut(fan).pins[0].net = v24;
        let diode = d
            .parts
            .devices()
            .iter()
            .position(|x| x.kind == Kind::Schottky)
            .unwrap();
        d.device_mut(diode).pins[1].net = v24;
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
