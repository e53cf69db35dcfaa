//! `bulk-capacitance-missing`: a rail that feeds a PWM-switched inductive load or a bridge has
//! no bulk capacitor, or the energy a bridge returns at turn-off would pump it by more than
//! 10 %. See `rules/bulk-capacitance-missing.md`.

use super::support::switch::{
    cap_e6, finding_at, is_ground, is_pwm, is_switch, label, load_device, load_of, name,
    next_rating, rail, supply_facts, NetIndex, CAP_VOLTAGES,
};
use super::units::{format_si, percent};
use super::Rule;
use super::RuleContext;
use crate::analysis::{Side, SwitchFacts};
use crate::circuit::{DeviceId, Kind, NetId, PinRole};
use crate::diagnostic::{Finding, Severity};

/// This rule's identity: its ID, the severities it gives and its page.
pub const RULE: Rule = Rule {
    id: "bulk-capacitance-missing",
    default_severity: Severity::Warning,
    grades: &[Severity::Warning],
    summary: "A rail feeding switched inductive loads lacks bulk capacitance",
    page: include_str!("../../rules/bulk-capacitance-missing.md"),
    check: Some(check),
};
/// Total capacitance across a rail that counts as bulk (common practice: an electrolytic of
/// 10 µF or more; decoupling ceramics of 100 nF do not hold a rail up).
const BULK_F: f64 = 10e-6;
/// Rise of the rail from returned energy worth a warning (DESIGN: 10 %).
const PUMP_LIMIT: f64 = 0.1;

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let index = NetIndex::new(cx);
    let mut rails: Vec<(NetId, DeviceId, Vec<&SwitchFacts>)> = Vec::new();
    for sw in cx.analysis.switches.iter().filter(|s| is_switch(s)) {
        let wants_bulk = (sw.inductive && is_pwm(sw)) || sw.side == Side::Bridge;
        let Some(supply) = sw.rail_supply.filter(|_| wants_bulk) else {
            continue;
        };
        let Some(net) = cx
            .circuit
            .devices()
            .get(supply)
            .and_then(|d| d.pin(PinRole::Pos))
        else {
            continue;
        };
        match rails.iter_mut().find(|(n, _, _)| *n == net) {
            Some((_, _, list)) => list.push(sw),
            None => rails.push((net, supply, vec![sw])),
        }
    }
    let mut legs: Vec<NetId> = cx
        .analysis
        .switches
        .iter()
        .filter(|s| s.side == Side::Bridge)
        .filter_map(|s| s.switched_net)
        .collect();
    legs.sort_unstable();
    legs.dedup();
    for (net, supply, switches) in rails {
        out.extend(finding(cx, &index, &legs, net, supply, &switches));
    }
}

fn capacitance(cx: &RuleContext<'_>, id: DeviceId) -> Option<f64> {
    let d = cx.circuit.devices().get(id)?;
    d.data
        .value("capacitance")
        .or_else(|| cx.netlist.elements.get(d.element)?.value?.known())
        .filter(|c| c.is_finite() && *c > 0.0)
}

/// Capacitors from the rail to ground.
fn rail_capacitors(cx: &RuleContext<'_>, index: &NetIndex, net: NetId) -> Vec<(DeviceId, f64)> {
    let mut found: Vec<(DeviceId, f64)> = index
        .on(net)
        .iter()
        .filter_map(|&(d, _)| {
            let dev = cx.circuit.devices().get(d)?;
            let grounded = dev.pins.iter().any(|p| is_ground(cx, p.net));
            (dev.kind == Kind::Capacitor && grounded)
                .then(|| capacitance(cx, d).map(|c| (d, c)))
                .flatten()
        })
        .collect();
    found.sort_by_key(|(d, _)| *d);
    found.dedup_by_key(|(d, _)| *d);
    found
}

/// Capacitor stacks from the rail to ground through one middle net (two electrolytics in series
/// for voltage rating, with or without balancing resistors): each stack as its first top
/// capacitor and the series capacitance of its tops and bottoms.
fn series_stacks(cx: &RuleContext<'_>, index: &NetIndex, net: NetId) -> Vec<(DeviceId, f64)> {
    let other_end = |d: DeviceId, from: NetId| -> Option<NetId> {
        let dev = cx.circuit.devices().get(d)?;
        (dev.kind == Kind::Capacitor && dev.pins.len() == 2)
            .then(|| dev.pins.iter().map(|p| p.net).find(|&n| n != from))
            .flatten()
    };
    let mut middles: Vec<NetId> = index
        .on(net)
        .iter()
        .filter_map(|&(d, _)| other_end(d, net))
        .filter(|&m| !is_ground(cx, m))
        .collect();
    middles.sort_unstable();
    middles.dedup();
    let mut stacks = Vec::new();
    for middle in middles {
        let on_middle = index.on(middle);
        let passive = on_middle.iter().all(|&(d, _)| {
            cx.circuit
                .devices()
                .get(d)
                .is_some_and(|x| matches!(x.kind, Kind::Capacitor | Kind::Resistor))
        });
        if !passive {
            continue;
        }
        let (mut top, mut bottom, mut first) = (0.0, 0.0, None);
        for &(d, _) in on_middle {
            match (other_end(d, middle), capacitance(cx, d)) {
                (Some(end), Some(c)) if end == net => {
                    top += c;
                    first = Some(first.map_or(d, |f: DeviceId| f.min(d)));
                }
                (Some(end), Some(c)) if is_ground(cx, end) => bottom += c,
                _ => {}
            }
        }
        if let Some(d) = first.filter(|_| top > 0.0 && bottom > 0.0) {
            stacks.push((d, top * bottom / (top + bottom)));
        }
    }
    stacks
}

fn finding(
    cx: &RuleContext<'_>,
    index: &NetIndex,
    legs: &[NetId],
    net: NetId,
    supply: DeviceId,
    switches: &[&SwitchFacts],
) -> Option<Finding> {
    let v = supply_facts(cx, supply)
        .map(|s| s.max)
        .or_else(|| switches.iter().find_map(|s| rail(cx, s)).map(|r| r.v.max))
        .filter(|v| *v > 0.0)?;
    let mut caps = rail_capacitors(cx, index, net);
    caps.extend(series_stacks(cx, index, net));
    let total = caps.iter().fold(0.0, |sum, (_, c)| sum + c);
    let rail_name = super::support::switch::net_name(cx, net);
    // Energy a full bridge hands back to the rail at turn-off: the largest ½·L·I² behind it.
    let returned = switches
        .iter()
        .filter(|s| s.side == Side::Bridge)
        .filter_map(|s| {
            let l = load_of(cx, s).filter(|l| between_legs(cx, legs, l.device))?;
            let ind = l.inductance.as_ref()?.value;
            let i = l.current_a.as_ref()?.max.abs();
            Some((ind * i * i, s.device))
        })
        .max_by(|a, b| a.0.total_cmp(&b.0));
    let loads: Vec<String> = {
        let mut names: Vec<String> = switches
            .iter()
            .filter_map(|s| load_device(cx, s))
            .map(|l| name(cx, l))
            .collect();
        names.sort();
        names.dedup();
        names
    };
    // Switches with no load branch return no energy and draw no load current from the rail
    // (an unloaded output stage inside a part's transistor-level model).
    if loads.is_empty() {
        return None;
    }
    let what = if switches.iter().any(|s| s.side == Side::Bridge) {
        "a bridge"
    } else {
        "PWM-switched inductive loads"
    };
    let (message, pump) = if total < BULK_F {
        let have = if caps.is_empty() {
            "nothing".to_string()
        } else {
            format!("only {}", format_si(total, "F"))
        };
        (
            format!(
                "the {} rail {rail_name} feeds {what} ({}) but has {have} across it: no bulk \
                 capacitor of {} or more, so every switching edge draws its current pulse \
                 through the supply wiring and the rail dips and rings",
                format_si(v, "V"),
                loads.join(", "),
                format_si(BULK_F, "F")
            ),
            None,
        )
    } else {
        let (li2, _) = returned?;
        let dv = (v * v + li2 / total).sqrt() - v;
        if dv <= PUMP_LIMIT * v {
            return None;
        }
        (
            format!(
                "the {} rail {rail_name} has {} across it, but at turn-off the bridge returns \
                 ½·L·I² = {} from {} and pumps the rail up by about {} ({} of the rail, ΔV = \
                 √(V² + L·I²/C) − V), more than 10 %",
                format_si(v, "V"),
                format_si(total, "F"),
                format_si(0.5 * li2, "J"),
                loads.join(", "),
                format_si(dv, "V"),
                percent(dv / v)
            ),
            Some(dv),
        )
    };
    let mut f = finding_at(RULE, RULE.severity(), cx, supply, message)?;
    for s in switches {
        f = label(
            f,
            cx,
            s.device,
            &format!("switches its load from the {} rail", format_si(v, "V")),
        );
        if let Some(l) = load_device(cx, s) {
            f = label(f, cx, l, "an inductive load on this rail");
        }
    }
    for (c, value) in &caps {
        f = label(
            f,
            cx,
            *c,
            &format!("{} across the rail", format_si(*value, "F")),
        );
    }
    // Enough to hold the pump under 10 %: C ≥ L·I² / ((1.1·V)² − V²).
    let for_pump = returned.map_or(0.0, |(li2, _)| {
        li2 / (((1.0 + PUMP_LIMIT) * v).powi(2) - v * v)
    });
    let wanted = for_pump.max(BULK_F);
    let cap = cap_e6(wanted).unwrap_or(wanted);
    let volts = next_rating(&CAP_VOLTAGES, 1.5 * v);
    let rating = volts.map_or_else(String::new, |r| format!(" rated {}", format_si(r, "V")));
    let help = format!(
        "fit an electrolytic of at least {}{rating} from {rail_name} to ground, close to the \
         switches{}",
        format_si(cap, "F"),
        if for_pump > BULK_F {
            " (sized so the returned energy lifts the rail by less than 10 %)"
        } else {
            ""
        }
    );
    let mut f = f
        .with_help(help)
        .with_value("rail_voltage", v, "V", "computed")
        .with_value("rail_capacitance", total, "F", "computed")
        .with_value("bulk_threshold", BULK_F, "F", "common practice")
        .with_value("suggested_capacitance", cap, "F", "computed");
    if let Some(dv) = pump {
        f = f.with_value("rail_pump", dv, "V", "computed");
    }
    Some(f)
}

/// True when both ends of a load sit on bridge legs' switched nodes (a full bridge). Only then
/// does the winding's current at turn-off flow back through the opposite switches' body diodes
/// into the rail; across a half-bridge leg to a rail it circulates through one diode instead.
fn between_legs(cx: &RuleContext<'_>, legs: &[NetId], load: DeviceId) -> bool {
    cx.circuit
        .devices()
        .get(load)
        .is_some_and(|d| d.pins.len() == 2 && d.pins.iter().all(|p| legs.contains(&p.net)))
}
