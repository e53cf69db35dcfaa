//! `resistor-overpower`: a resistor or pot dissipates more than its power rating in its worst
//! state (pot wipers searched over their travel). See `rules/resistor-overpower.md`.

use super::eseries::{ohms, round_up, E12};
use super::switch_util::{
    dc_resistance, element, finding_at, is_ground, kind, label, name, next_rating, rated_or,
    NetIndex, RESISTOR_WATTS,
};
use super::units::format_si;
use super::Rule;
use super::RuleContext;
use crate::analysis::ResistorFacts;
use crate::circuit::defaults::RESISTOR_POWER_RATING_W;
use crate::circuit::{DeviceId, Kind};
use crate::diagnostic::{Finding, Severity};

/// This rule's identity: its ID, the severities it gives and its page.
pub const RULE: Rule = Rule {
    id: "resistor-overpower",
    default_severity: Severity::Error,
    grades: &[Severity::Error, Severity::Warning],
    summary: "A resistor dissipates more than its power rating in some state",
    page: include_str!("../../rules/resistor-overpower.md"),
    check: Some(check),
};
/// Share of the rating a resistor may run at continuously (common practice derating).
const DERATING: f64 = 0.6;
/// The largest rating a resistor or pot fitted without a stated one plausibly has (from memory:
/// general-purpose SMD and through-hole parts run from ⅒ W to ½ W).
const UNSTATED_RATING_MAX_W: f64 = 0.5;

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let index = NetIndex::new(cx);
    for facts in &cx.analysis.resistors {
        out.extend(finding(cx, &index, facts));
    }
}

/// Pots and timers that share a net with the resistor, or whose discharge chain holds it: the
/// parts that set its worst state.
fn involved(cx: &RuleContext<'_>, index: &NetIndex, id: DeviceId) -> Vec<(DeviceId, String)> {
    let mut found = Vec::new();
    for t in &cx.analysis.timers {
        if t.discharge_chain.contains(&id) {
            found.push((
                t.device,
                "its discharge pin sinks this current when on".to_string(),
            ));
            for &p in t.discharge_chain.iter().filter(|&&p| p != id) {
                if kind(cx, p) == Some(Kind::Potentiometer) {
                    found.push((p, "at its worst position".to_string()));
                }
            }
        }
    }
    let Some(d) = cx.circuit.devices.get(id) else {
        return found;
    };
    for pin in &d.pins {
        // A rail or ground is shared by every channel: the pots that set this resistor's
        // worst state sit on its signal nets, not on every net it shares with the board.
        let on_net = index.on(pin.net);
        let held = on_net
            .iter()
            .any(|&(o, _)| kind(cx, o) == Some(Kind::VoltageSource));
        if held || is_ground(cx, pin.net) {
            continue;
        }
        for &(other, _) in on_net {
            let pot = cx.circuit.devices.get(other).map(|o| o.kind) == Some(Kind::Potentiometer);
            if other != id && pot && !found.iter().any(|(f, _)| *f == other) {
                found.push((other, "at its worst position".to_string()));
            }
        }
    }
    found
}

/// True when the resistor is the copper of a winding model: in series with an inductor
/// through a net nothing else touches, either inside a subcircuit instance (with an inductive
/// part of the same instance: exported motor and coil models draw a winding that way) or at
/// top level beside a plain inductor (an R-L stand-in for a motor or coil, the L having no
/// resistance of its own). Its dissipation is the load's own copper loss, not a discrete
/// resistor's.
fn is_winding_copper(cx: &RuleContext<'_>, index: &NetIndex, id: DeviceId) -> bool {
    let (Some(device), Some(own)) = (cx.circuit.devices.get(id), element(cx, id)) else {
        return false;
    };
    let nested = !own.instances.is_empty();
    device.pins.iter().any(|pin| match index.on(pin.net) {
        [(a, _), (b, _)] => {
            let other = if *a == id { *b } else { *a };
            let other_kind = kind(cx, other);
            let same_instance = element(cx, other).is_some_and(|e| e.instances == own.instances);
            other != id
                && same_instance
                && if nested {
                    other_kind.is_some_and(Kind::is_inductive)
                } else {
                    other_kind == Some(Kind::Inductor)
                }
        }
        _ => false,
    })
}

fn finding(cx: &RuleContext<'_>, index: &NetIndex, facts: &ResistorFacts) -> Option<Finding> {
    let id = facts.device;
    if is_winding_copper(cx, index, id) {
        return None;
    }
    let p = facts.power_w.max;
    let rating = rated_or(
        cx,
        id,
        "power_rating",
        RESISTOR_POWER_RATING_W,
        "default power_rating (common practice)",
    );
    if rating.value <= 0.0 {
        return None;
    }
    let severity = if p > rating.value {
        Severity::Error
    } else if p > DERATING * rating.value {
        Severity::Warning
    } else {
        return None;
    };
    let r = name(cx, id);
    let consequence = if severity == Severity::Error {
        "it overheats, drifts and can burn open or scorch the board"
    } else {
        "above the 60 % a resistor should run at continuously"
    };
    // Thermal ratings hold for the average; the peak inside a pulse is reported beside it.
    let peak = facts.peak_power_w.max;
    // Worth a word only where the pulse makes a difference (more than 5 %).
    let averaged = peak > p * 1.05;
    let power_text = if averaged {
        format!(
            "{} on average ({}; {} peak while it conducts)",
            format_si(p, "W"),
            facts.power_w.max_state,
            format_si(peak, "W")
        )
    } else {
        format!("{} ({})", format_si(p, "W"), facts.power_w.max_state)
    };
    let message = format!(
        "{r} dissipates {power_text}: {} of its {} rating, {consequence}",
        super::units::percent(p / rating.value),
        format_si(rating.value, "W")
    );
    let mut f = finding_at(RULE, severity, cx, id, message)?;
    for (other, text) in involved(cx, index, id) {
        f = label(f, cx, other, &text);
    }
    let wanted = p / DERATING;
    let watts = next_rating(&RESISTOR_WATTS, wanted);
    let mut help = match watts {
        Some(w) => format!(
            "use a {} part ({} at 60 % derating)",
            format_si(w, "W"),
            format_si(wanted, "W")
        ),
        None => format!(
            "spread {} over several parts or a power resistor on a heatsink",
            format_si(p, "W")
        ),
    };
    let plain = kind(cx, id) == Some(Kind::Resistor);
    if !plain {
        help.push_str(
            ", or a fixed resistor in series that keeps the current down at the end of the travel",
        );
    }
    if let Some(ohm) = dc_resistance(cx, id).filter(|r| plain && *r > 0.0) {
        // With the same voltage across it, P = V²/R falls as R rises.
        // The voltage while it conducts; the average scales with the share of time it does.
        let volts = (peak.max(p) * ohm).sqrt();
        let share = if peak > 0.0 { (p / peak).min(1.0) } else { 1.0 };
        if let Some(bigger) = round_up(share * volts * volts / (DERATING * rating.value), &E12) {
            help.push_str(&format!(
                ", or, where the {} across it is fixed, at least {} keeps it within 60 % of its \
                 rating",
                format_si(volts, "V"),
                ohms(bigger)
            ));
        }
    }
    // Where the rating is only assumed, the verdict stands only if it would with the largest
    // rating an unstated part plausibly has.
    let holds_at = if p > UNSTATED_RATING_MAX_W {
        Some(Severity::Error)
    } else if p > DERATING * UNSTATED_RATING_MAX_W {
        Some(Severity::Warning)
    } else {
        None
    };
    Some(
        f.with_help(help)
            .with_value("power", p, "W", "computed")
            .with_value("peak_power", peak, "W", "computed")
            .with_deciding_value("power_rating", rating.value, "W", rating.source)
            .holding_at(holds_at),
    )
}
