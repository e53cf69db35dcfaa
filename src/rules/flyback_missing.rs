//! `flyback-missing`: an inductive load is switched with no freewheeling path. See
//! `rules/flyback-missing.md`.

use super::edits;
use super::support::switch::{
    branch_ends, diode_choice, diode_hint, element, finding_at, is_pwm, is_switch, kind, label,
    load_device, load_of, main_terminals, name, net_name, rail, saturated_current, NetIndex,
};
use super::units::format_si;
use super::Rule;
use super::RuleContext;
use crate::analysis::{Range, Side, SwitchFacts};
use crate::circuit::{DeviceId, Kind};
use crate::diagnostic::{Finding, Severity};

/// This rule's identity: its ID, the severities it gives and its page.
pub const RULE: Rule = Rule {
    id: "flyback-missing",
    default_severity: Severity::Error,
    grades: &[Severity::Error],
    summary: "An inductive load is switched with no freewheeling path",
    page: include_str!("../../rules/flyback-missing.md"),
    check: Some(check),
};
/// Below this a plain inductor is a parasitic (a lead, a trace, a model's package): its
/// turn-off spike is part of every switching edge, not a missing diode (common practice: real
/// chokes and windings start in the microhenries).
const PARASITIC_H: f64 = 1e-6;
/// Stored energy below which no junction is hurt by the spike (from memory: small-signal
/// transistors absorb microjoules in avalanche; a nanojoule is far below that).
const HARMLESS_J: f64 = 1e-9;

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let index = NetIndex::new(cx);
    let mut reported: Vec<DeviceId> = Vec::new();
    for sw in cx.analysis.switches.iter().filter(|s| is_switch(s)) {
        if !sw.inductive || !sw.freewheel.is_empty() {
            continue;
        }
        let Some(load) = load_device(cx, sw) else {
            continue;
        };
        // Every switch of a bridge interrupts the same load: one finding for the load.
        if reported.contains(&load) {
            continue;
        }
        reported.push(load);
        let others: Vec<DeviceId> = cx
            .analysis
            .switches
            .iter()
            .filter(|o| o.device != sw.device && o.inductive && o.freewheel.is_empty())
            .filter(|o| load_device(cx, o) == Some(load))
            .map(|o| o.device)
            .collect();
        out.extend(finding(cx, &index, sw, load, &others));
    }
}

fn finding(
    cx: &RuleContext<'_>,
    index: &NetIndex,
    sw: &SwitchFacts,
    load: DeviceId,
    others: &[DeviceId],
) -> Option<Finding> {
    let facts = load_of(cx, sw);
    let switch = name(cx, sw.device);
    let load_name = name(cx, load);
    let load_kind = kind(cx, load).unwrap_or(Kind::Inductor);
    let inductance = facts
        .and_then(|l| l.inductance.clone())
        .or_else(|| super::support::switch::rated(cx, load, "inductance"));
    let solved = facts
        .and_then(|l| l.current_a.as_ref())
        .or(sw.current_a.as_ref())
        .filter(|r| r.max > 0.0);
    // A starved switch carries less than the load draws once it saturates: rate for that.
    let current = match (solved, saturated_current(sw)) {
        (Some(r), Some(full)) if full.max > r.max => Some(full.clone()),
        (Some(r), _) => Some(r.clone()),
        (None, Some(full)) => Some(full.clone()),
        (None, None) => None,
    };
    let current = current.as_ref();
    let energy_fact = facts
        .and_then(|l| l.stored_energy_j)
        .filter(|_| current.map(|c| c.max) == solved.map(|s| s.max));
    let energy = energy_fact.or_else(|| {
        let l = inductance.as_ref()?.value;
        let i = current?.max;
        Some(0.5 * l * i * i)
    });
    let parasitic =
        load_kind == Kind::Inductor && inductance.as_ref().is_some_and(|l| l.value < PARASITIC_H);
    if parasitic || energy.is_some_and(|e| e < HARMLESS_J) {
        return None;
    }
    let rail = rail(cx, sw);
    let ends = branch_ends(cx, sw);

    let mut message = format!("{load_name} ({load_kind}");
    if let Some(l) = &inductance {
        message.push_str(&format!(", {}", format_si(l.value, "H")));
    }
    message.push_str(&format!(
        ") is switched by {switch} with no freewheeling path: when {switch} turns off, "
    ));
    match current {
        Some(i) => message.push_str(&format!(
            "the {} in the winding ({}) has nowhere to go",
            format_si(i.max, "A"),
            i.max_state
        )),
        None => message.push_str("the winding's current has nowhere to go"),
    }
    let node = ends.map_or_else(
        || format!("{switch}'s terminals"),
        |e| net_name(cx, e.switched).to_string(),
    );
    let direction = match sw.side {
        Side::Low => "up",
        Side::High => "below ground",
        Side::Bridge => "past the rails",
    };
    match energy {
        Some(e) => message.push_str(&format!(
            ", and the {} it stores (½·L·I²) drives {node} {direction} until {switch} breaks down",
            format_si(e, "J")
        )),
        None => message.push_str(&format!(
            ": its stored energy drives {node} {direction} until {switch} breaks down"
        )),
    }

    let across_switch = diodes_across(cx, index, sw);
    if let Some(&d) = across_switch.first() {
        message.push_str(&format!(
            " ({} sits across the switch, not the load, and cannot carry the winding's current)",
            name(cx, d)
        ));
    }

    let mut f = finding_at(RULE, RULE.severity(), cx, load, message)?;
    f = label(
        f,
        cx,
        sw.device,
        &format!("interrupts {load_name}'s current"),
    );
    for &o in others {
        f = label(f, cx, o, &format!("also interrupts {load_name}'s current"));
    }
    for &d in &across_switch {
        f = label(
            f,
            cx,
            d,
            &format!("across {switch}, not across {load_name}: it does not freewheel the load"),
        );
    }
    if let Some(supply) = rail.as_ref().and_then(|r| r.supply) {
        let v = rail.as_ref().map_or(0.0, |r| r.v.max);
        f = label(
            f,
            cx,
            supply,
            &format!("the {} rail that drives the winding", format_si(v, "V")),
        );
    }

    f = f.with_help(help(
        cx,
        sw,
        &load_name,
        ends,
        rail.as_ref(),
        current,
        &across_switch,
    ));
    f = f.with_fix(diode_fix(cx, sw, load, ends, rail.as_ref(), current));
    if let Some(l) = &inductance {
        f = f.with_value("inductance", l.value, "H", l.source.clone());
    }
    if let Some(i) = current {
        f = f.with_value("load_current", i.max, "A", "computed");
    }
    if let Some(e) = energy {
        f = f.with_value("stored_energy", e, "J", "computed");
    }
    if let Some(r) = &rail {
        f = f.with_value("rail_voltage", r.v.max, "V", "computed");
    }
    Some(f)
}

/// The diode the help names, as a line added before the load's: across the load with the
/// orientation the help states, of the part the help names. Only for a load at top level
/// with one switch side and a part that fits.
fn diode_fix(
    cx: &RuleContext<'_>,
    sw: &SwitchFacts,
    load: DeviceId,
    ends: Option<super::support::switch::BranchEnds>,
    rail: Option<&super::support::switch::Rail>,
    current: Option<&Range>,
) -> Option<crate::diagnostic::Fix> {
    let ends = ends?;
    let rail_v = rail.map(|r| r.v.max).filter(|v| *v > 0.0)?;
    let amps = current.map(|i| i.max).filter(|a| *a > 0.0)?;
    let (part, _, _) = diode_choice(2.0 * rail_v, amps, is_pwm(sw))?;
    let (anode, cathode) = match sw.side {
        Side::Low => (ends.switched, ends.far),
        Side::High => (ends.far, ends.switched),
        Side::Bridge => return None,
    };
    let load_element = element(cx, load)?;
    let diode = edits::unused_name(cx, &format!("DFW_{}", load_element.name));
    let line = format!(
        "{diode} {} {} {part}",
        net_name(cx, anode),
        net_name(cx, cathode)
    );
    let title = format!("add {diode} ({part}) across {}", load_element.name);
    edits::add_line_before(load_element, line, title)
}

fn help(
    cx: &RuleContext<'_>,
    sw: &SwitchFacts,
    load_name: &str,
    ends: Option<super::support::switch::BranchEnds>,
    rail: Option<&super::support::switch::Rail>,
    current: Option<&Range>,
    across_switch: &[DeviceId],
) -> String {
    let rail_v = rail.map_or(0.0, |r| r.v.max);
    let amps = current.map_or(0.0, |i| i.max);
    let pwm = is_pwm(sw);
    let part = if rail_v > 0.0 && amps > 0.0 {
        format!(
            "; use {}{}",
            diode_hint(2.0 * rail_v, amps, pwm),
            if pwm {
                " (fast: the load is PWM-switched)"
            } else {
                ""
            }
        )
    } else {
        String::from("; rate it for twice the rail voltage and the load current")
    };
    let mut text = match (sw.side, ends) {
        (Side::Bridge, _) => format!(
            "fit a diode across each switch of the bridge, cathode toward the positive rail, so \
             {load_name}'s current has a path back to the supply at turn-off"
        ),
        (Side::Low, Some(e)) => format!(
            "fit a diode across {load_name} from the switched node to the rail: anode to {}, \
             cathode to {}",
            net_name(cx, e.switched),
            net_name(cx, e.far)
        ),
        (Side::High, Some(e)) => format!(
            "fit a diode across {load_name}: cathode to the switched node {}, anode to {}",
            net_name(cx, e.switched),
            net_name(cx, e.far)
        ),
        (_, None) => format!(
            "fit a diode across {load_name}, cathode to its positive end (the end nearer the rail \
             in the on state)"
        ),
    };
    text.push_str(&part);
    if let Some(&d) = across_switch.first() {
        text.push_str(&format!(
            "; {} across the switch does not replace it",
            name(cx, d)
        ));
    }
    text
}

/// Plain diodes with their pins on the switch's drain and source: they do not freewheel the
/// load (a TVS or zener there is a clamp, which the analysis counts as a freewheel path).
fn diodes_across(cx: &RuleContext<'_>, index: &NetIndex, sw: &SwitchFacts) -> Vec<DeviceId> {
    let Some((a, b)) = super::support::switch::device(cx, sw.device).and_then(main_terminals)
    else {
        return Vec::new();
    };
    index
        .between(cx, a, b)
        .into_iter()
        .filter(|&d| d != sw.device && kind(cx, d).is_some_and(|k| k.is_diode_like()))
        .collect()
}
