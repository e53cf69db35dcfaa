//! `capacitor-overvoltage`: a capacitor's worst-state voltage is above its rating, or above
//! 1/1.5 of it. A capacitor with no `voltage_rating` is not guessed at. See
//! `rules/capacitor-overvoltage.md`.

use super::support::switch::{finding_at, label, name, next_rating, NetIndex, CAP_VOLTAGES};
use super::units::format_si;
use super::Rule;
use super::RuleContext;
use crate::analysis::CapacitorFacts;
use crate::diagnostic::{Finding, Severity};

/// This rule's identity: its ID, the severities it gives and its page.
pub const RULE: Rule = Rule {
    id: "capacitor-overvoltage",
    default_severity: Severity::Error,
    grades: &[Severity::Error, Severity::Warning],
    summary: "A capacitor sees more voltage than its rating allows",
    page: include_str!("../../rules/capacitor-overvoltage.md"),
    check: Some(check),
};
/// Rating wanted over the working voltage (common practice derating).
const DERATING: f64 = 1.5;

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let index = NetIndex::new(cx);
    for facts in &cx.analysis.capacitors {
        out.extend(finding(cx, &index, facts));
    }
}

fn finding(cx: &RuleContext<'_>, index: &NetIndex, facts: &CapacitorFacts) -> Option<Finding> {
    let id = facts.device;
    let rating = cx
        .circuit
        .devices()
        .get(id)?
        .data
        .get("voltage_rating")?
        .clone();
    if rating.value <= 0.0 {
        return None;
    }
    let r = &facts.voltage_v;
    let (v, state) = if r.max.abs() >= r.min.abs() {
        (r.max.abs(), &r.max_state)
    } else {
        (r.min.abs(), &r.min_state)
    };
    let severity = if v > rating.value {
        RULE.grade(Severity::Error)
    } else if v > rating.value / DERATING {
        RULE.grade(Severity::Warning)
    } else {
        return None;
    };
    let c = name(cx, id);
    let message = if severity == Severity::Error {
        format!(
            "{c} sees {} ({state}), above its {} rating: the dielectric breaks down, and an \
             electrolytic vents or bursts",
            format_si(v, "V"),
            format_si(rating.value, "V")
        )
    } else {
        format!(
            "{c} sees {} ({state}), above two thirds of its {} rating: an electrolytic ages fast \
             and has no room left for spikes",
            format_si(v, "V"),
            format_si(rating.value, "V")
        )
    };
    let mut f = finding_at(RULE, severity, cx, id, message)?;
    if let Some(d) = cx.circuit.devices().get(id) {
        for pin in &d.pins {
            if let Some(s) = index.supply_on(cx, pin.net) {
                f = label(
                    f,
                    cx,
                    s.device,
                    &format!("puts up to {} across it", format_si(s.max, "V")),
                );
            }
        }
    }
    let wanted = DERATING * v;
    let help = match next_rating(&CAP_VOLTAGES, wanted) {
        Some(n) => format!(
            "use a {} part (at least 1.5 × {} = {})",
            format_si(n, "V"),
            format_si(v, "V"),
            format_si(wanted, "V")
        ),
        None => format!(
            "use parts rated for at least {} in series, with balancing resistors",
            format_si(wanted, "V")
        ),
    };
    Some(
        f.with_help(help)
            .with_value("voltage", v, "V", "computed")
            .with_value("voltage_rating", rating.value, "V", rating.source),
    )
}
