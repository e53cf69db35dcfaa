//! `resistor-overpower`: a resistor or pot dissipates more than its power rating in its worst
//! state (pot wipers searched over their travel). See `rules/resistor-overpower.md`.

use super::eseries::{ohms, round_up, E12};
use super::support::switch::{
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
use std::collections::BTreeMap;

/// This rule's identity: its ID, the severities it gives and its page.
pub const RULE: Rule = Rule {
    id: "resistor-overpower",
    default_severity: Severity::Error,
    grades: &[Severity::Error, Severity::Warning, Severity::Note],
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
    // Resistors whose current a linear stage's bias sets, by that stage: one note each.
    let mut unjudged: BTreeMap<DeviceId, Vec<(DeviceId, f64)>> = BTreeMap::new();
    for facts in &cx.analysis.resistors {
        let Some(f) = finding(cx, &index, facts) else {
            continue;
        };
        match facts.set_by_linear_stage {
            Some(stage) => unjudged
                .entry(stage)
                .or_default()
                .push((facts.device, facts.power_w.max)),
            None => out.push(f),
        }
    }
    for (stage, resistors) in unjudged {
        out.extend(linear_stage_note(cx, stage, &resistors));
    }
}

/// One note for the resistors whose dissipation follows a linear stage's bias: the DC solve
/// says they run hot, but that number rests on an operating point kickback does not judge.
fn linear_stage_note(
    cx: &RuleContext<'_>,
    stage: DeviceId,
    resistors: &[(DeviceId, f64)],
) -> Option<Finding> {
    let &(first, _) = resistors.first()?;
    let &(hottest, watts) = resistors.iter().max_by(|a, b| a.1.total_cmp(&b.1))?;
    let facts = cx.analysis.switches.iter().find(|s| s.device == stage)?;
    let names: Vec<String> = resistors.iter().map(|&(r, _)| name(cx, r)).collect();
    let message = format!(
        "{} would run above {} rating{} in the DC solve (up to {} in {}), but {} currents \
         are set by the bias of {}, taken for {} ({}); a DC solve with simplified models \
         does not settle a feedback-set operating point, so this dissipation is not judged: \
         check it at a simulator's operating point",
        super::units::list(&names),
        if names.len() == 1 { "its" } else { "their" },
        if names.len() == 1 { "" } else { "s" },
        format_si(watts, "W"),
        name(cx, hottest),
        if names.len() == 1 { "its" } else { "their" },
        name(cx, stage),
        if facts.stage == crate::analysis::Stage::Amplifier {
            "an amplifier stage"
        } else {
            "a stage kickback could not place"
        },
        facts.stage_reason
    );
    let mut f = finding_at(RULE, RULE.grade(Severity::Note), cx, first, message)?;
    for &(other, _) in &resistors[1..] {
        f = label(f, cx, other, "also in this stage's bias");
    }
    Some(label(
        f,
        cx,
        stage,
        "the stage whose bias sets the currents",
    ))
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
    let Some(d) = cx.circuit.devices().get(id) else {
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
            let pot = cx.circuit.devices().get(other).map(|o| o.kind) == Some(Kind::Potentiometer);
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
    let (Some(device), Some(own)) = (cx.circuit.devices().get(id), element(cx, id)) else {
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

/// True when the resistor is a converter's output load: across a capacitor on a net that an
/// inductor, or a diode from a winding, feeds (a buck's L–C filter, a boost's or flyback's
/// rectifier into its reservoir). A simulation deck writes the load it drives that way; the
/// DC states take the filter's inductor as a wire and the rectifier as always on, so they
/// see the pulses, not the filtered output the resistor really dissipates in.
fn is_filtered_output_load(cx: &RuleContext<'_>, index: &NetIndex, id: DeviceId) -> bool {
    let Some(device) = cx.circuit.devices().get(id) else {
        return false;
    };
    let [first, second] = device.pins.as_slice() else {
        return false;
    };
    let inductive = |part: DeviceId| kind(cx, part).is_some_and(Kind::is_inductive);
    [(first.net, second.net), (second.net, first.net)]
        .into_iter()
        .any(|(out, back)| {
            let parts = index.on(out);
            let held = parts
                .iter()
                .any(|&(o, _)| kind(cx, o) == Some(Kind::VoltageSource));
            let reservoir = parts.iter().any(|&(o, _)| {
                kind(cx, o) == Some(Kind::Capacitor) && cx.circuit.other_end(o, out) == Some(back)
            });
            let fed = parts.iter().any(|&(o, _)| {
                let Some(far) = cx
                    .circuit
                    .other_end(o, out)
                    .filter(|&f| f != out && f != back)
                else {
                    return false;
                };
                inductive(o)
                    || (kind(cx, o).is_some_and(Kind::is_diode_like)
                        && index.on(far).iter().any(|&(w, _)| w != o && inductive(w)))
            });
            !held && reservoir && fed
        })
}

fn finding(cx: &RuleContext<'_>, index: &NetIndex, facts: &ResistorFacts) -> Option<Finding> {
    let id = facts.device;
    if is_winding_copper(cx, index, id) || is_filtered_output_load(cx, index, id) {
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
        RULE.grade(Severity::Error)
    } else if p > DERATING * rating.value {
        RULE.grade(Severity::Warning)
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
        Some(RULE.grade(Severity::Error))
    } else if p > DERATING * UNSTATED_RATING_MAX_W {
        Some(RULE.grade(Severity::Warning))
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
