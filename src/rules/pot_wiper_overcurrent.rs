//! `pot-wiper-overcurrent`: a pot's wiper carries more current than it is rated for at the
//! worst position of its travel. See `rules/pot-wiper-overcurrent.md`.

use super::eseries::{ohms, round_up, E12};
use super::support::switch::{dc_resistance, finding_at, label, name, timer_facts, NetIndex};
use super::units::format_si;
use super::Rule;
use super::RuleContext;
use crate::analysis::ResistorFacts;
use crate::circuit::{DeviceId, Kind, Rated};
use crate::diagnostic::{Finding, Severity};

/// This rule's identity: its ID, the severities it gives and its page.
pub const RULE: Rule = Rule {
    id: "pot-wiper-overcurrent",
    default_severity: Severity::Warning,
    grades: &[Severity::Warning],
    summary: "A pot's wiper carries more current than it is rated for",
    page: include_str!("../../rules/pot-wiper-overcurrent.md"),
    check: Some(check),
};

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let index = NetIndex::new(cx);
    for facts in &cx.analysis.resistors {
        out.extend(finding(cx, &index, facts));
    }
}

/// `wiper_current_max`, else √(power_rating/R) (common practice: the track's full power
/// through the wiper's contact).
fn wiper_limit(cx: &RuleContext<'_>, id: DeviceId) -> Option<Rated> {
    let d = cx.circuit.devices().get(id)?;
    if let Some(r) = d.data.get("wiper_current_max") {
        return Some(r.clone());
    }
    let power = d
        .data
        .value("power_rating")
        .unwrap_or(crate::circuit::defaults::RESISTOR_POWER_RATING_W);
    let r = dc_resistance(cx, id).filter(|r| *r > 0.0)?;
    Some(Rated {
        value: (power / r).sqrt(),
        source: "√(power_rating/R), common practice".into(),
    })
}

/// The timer whose timing network holds the pot, and the highest rail at the pot's ends.
fn context(
    cx: &RuleContext<'_>,
    index: &NetIndex,
    id: DeviceId,
) -> (Option<DeviceId>, Option<f64>) {
    let timer = cx
        .analysis
        .timers
        .iter()
        .find(|t| t.pots.contains(&id) || t.discharge_chain.contains(&id));
    let from_timer = timer.and_then(|t| t.supply_v.as_ref()).map(|r| r.max);
    let from_pins = cx.circuit.devices().get(id).and_then(|d| {
        d.pins
            .iter()
            .filter_map(|p| index.supply_on(cx, p.net))
            .map(|s| s.max)
            .reduce(f64::max)
    });
    (timer.map(|t| t.device), from_pins.or(from_timer))
}

fn finding(cx: &RuleContext<'_>, index: &NetIndex, facts: &ResistorFacts) -> Option<Finding> {
    let id = facts.device;
    if cx.circuit.devices().get(id)?.kind != Kind::Potentiometer {
        return None;
    }
    let wiper = facts.wiper_current_a.as_ref()?;
    let (amps, state) = if wiper.max.abs() >= wiper.min.abs() {
        (wiper.max.abs(), &wiper.max_state)
    } else {
        (wiper.min.abs(), &wiper.min_state)
    };
    let limit = wiper_limit(cx, id)?;
    if amps <= limit.value {
        return None;
    }
    let pot = name(cx, id);
    let message = format!(
        "{pot}'s wiper carries {} ({state}): above the {} its wiper contact is rated for; the \
         contact burns a spot on the track and the pot turns noisy or opens",
        format_si(amps, "A"),
        format_si(limit.value, "A")
    );
    let mut f = finding_at(RULE, RULE.severity(), cx, id, message)?;
    let (timer, rail) = context(cx, index, id);
    if let Some(t) = timer {
        f = label(f, cx, t, "its timing network runs through the wiper");
        if let Some(tf) = timer_facts(cx, t) {
            for &r in tf.discharge_chain.iter().filter(|&&r| r != id) {
                f = label(f, cx, r, "in series with the wiper");
            }
        }
    }
    let help = match rail.and_then(|v| round_up(v / limit.value, &E12).map(|r| (v, r))) {
        Some((v, r)) => format!(
            "put at least {} in series with the wiper (from the {} rail, {} / {} rounded up to \
             E12), or use a pot whose wiper is rated for {}",
            ohms(r),
            format_si(v, "V"),
            format_si(v, "V"),
            format_si(limit.value, "A"),
            format_si(amps, "A")
        ),
        None => format!(
            "limit the wiper current with a series resistor, or use a pot whose wiper is rated \
             for {}",
            format_si(amps, "A")
        ),
    };
    Some(
        f.with_help(help)
            .with_value("wiper_current", amps, "A", "computed")
            .with_value("wiper_current_max", limit.value, "A", limit.source),
    )
}
