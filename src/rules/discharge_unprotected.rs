//! `discharge-unprotected`: a 555's discharge pin can sink more current than it survives. See
//! `rules/discharge-unprotected.md`.

use super::eseries::{self, ohms};
use super::support::timer::{
    at_state, element, finding_at, is_pot, is_resistor, label, name, ohms_of, rated_or,
};
use super::units::format_si;
use super::Rule;
use super::RuleContext;
use crate::analysis::TimerFacts;
use crate::circuit::{DeviceId, Kind, PinRole};
use crate::diagnostic::{Finding, Severity};

/// This rule's identity: its ID, the severities it gives and its page.
pub const RULE: Rule = Rule {
    id: "discharge-unprotected",
    default_severity: Severity::Error,
    grades: &[Severity::Error, Severity::Warning, Severity::Note],
    summary: "A 555's discharge pin can sink more current than it survives",
    page: include_str!("../../rules/discharge-unprotected.md"),
    check: Some(check),
};

/// Below this the pin meets the supply "with no resistance at all" (a pot's end, a wire).
const DEAD_SHORT_OHMS: f64 = 1.0;

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    for t in &cx.analysis.timers {
        out.extend(overcurrent(cx, t));
        out.extend(dump(cx, t));
    }
}

/// The supply a chain of parts reaches (a voltage source from one of their nets to ground), or
/// with no chain the one on the discharge pin's own net.
fn supply_of(cx: &RuleContext<'_>, t: &TimerFacts) -> Option<DeviceId> {
    let nets: Vec<usize> = if t.discharge_chain.is_empty() {
        let dis = cx.circuit.devices().get(t.device)?.pin(PinRole::Dis)?;
        vec![dis]
    } else {
        t.discharge_chain
            .iter()
            .filter_map(|&d| cx.circuit.devices().get(d))
            .flat_map(|d| d.pins.iter().map(|p| p.net))
            .collect()
    };
    let grounded = |n: usize| cx.circuit.nets().get(n).is_some_and(|n| n.is_ground);
    cx.circuit.devices().iter().enumerate().find_map(|(id, d)| {
        if d.kind != Kind::VoltageSource {
            return None;
        }
        let (p, n) = (d.pin(PinRole::Pos)?, d.pin(PinRole::Neg)?);
        (nets.contains(&p) && grounded(n)).then_some(id)
    })
}

fn overcurrent(cx: &RuleContext<'_>, t: &TimerFacts) -> Option<Finding> {
    let current = t.discharge_current_a.as_ref()?;
    let max = rated_or(cx, t.device, "discharge_current_max", 0.1, 0.05);
    let rated = rated_or(cx, t.device, "discharge_current_rated", 0.015, 0.01);
    let source_ohms = t.discharge_source_ohms.as_ref();
    let open_v = t.discharge_open_v.as_ref();
    let dead_short = match (source_ohms, open_v) {
        (Some(r), Some(v)) => r.min < DEAD_SHORT_OHMS && v.max > 1.0,
        _ => false,
    };
    let severity = if dead_short || current.max > max.value {
        RULE.grade(Severity::Error)
    } else if current.max > rated.value {
        RULE.grade(Severity::Warning)
    } else {
        return None;
    };
    let timer = name(cx, t.device);
    let pot = t
        .discharge_chain
        .iter()
        .copied()
        .find(|&d| is_pot(cx, d))
        .or_else(|| t.pots.first().copied());
    let smallest_fixed = t
        .discharge_chain
        .iter()
        .copied()
        .filter(|&d| is_resistor(cx, d))
        .filter_map(|d| Some((d, ohms_of(cx, d)?)))
        .min_by(|a, b| a.1.total_cmp(&b.1));
    // The part to change: the pot that reaches zero, else the smallest fixed resistor in the
    // pin's path, else whatever the path holds.
    let (target, target_fixed) = match (dead_short, pot, smallest_fixed) {
        (true, Some(p), _) | (false, Some(p), None) => (p, None),
        (_, _, Some((r, value))) => (r, Some(value)),
        (_, None, None) => (t.discharge_chain.first().copied().unwrap_or(t.device), None),
    };
    let supply = supply_of(cx, t);
    let supply_v = open_v
        .map(|v| v.max)
        .or_else(|| t.supply_v.as_ref().map(|s| s.max));
    let supply_text = match (supply, supply_v) {
        (Some(s), Some(v)) => format!("{} ({})", name(cx, s), format_si(v, "V")),
        (None, Some(v)) => format!("the {} supply", format_si(v, "V")),
        (_, None) => "the supply".to_string(),
    };

    let message = if dead_short {
        let state = current.max_state.as_str();
        let through = pot
            .map(|p| format!(" through {}", name(cx, p)))
            .unwrap_or_default();
        format!(
            "{timer}'s discharge pin meets {supply_text}{through} with no resistance{}: a dead short every time the pin turns on, and it would sink {} or more, above its {} maximum",
            at_state(state),
            format_si(current.max, "A"),
            format_si(max.value, "A"),
        )
    } else if severity == Severity::Error {
        format!(
            "{timer}'s discharge pin sinks up to {} from {supply_text} when on{}, above its {} maximum",
            format_si(current.max, "A"),
            at_state(&current.max_state),
            format_si(max.value, "A"),
        )
    } else {
        format!(
            "{timer}'s discharge pin sinks up to {} from {supply_text} when on{}, above the {} it is rated for",
            format_si(current.max, "A"),
            at_state(&current.max_state),
            format_si(rated.value, "A"),
        )
    };

    // The series resistance that keeps the pin within its rated current: V / I_rated.
    let needed = supply_v.map(|v| v / rated.value);
    let present = source_ohms.map(|r| r.min.max(0.0)).unwrap_or(0.0);
    let help = needed.and_then(|needed| {
        let v = supply_v?;
        let base = format!(
            "{} / {} = {}",
            format_si(v, "V"),
            format_si(rated.value, "A"),
            ohms(needed)
        );
        match target_fixed {
            Some(value) => {
                let new = eseries::round_up(value + (needed - present).max(0.0), &eseries::E12)?;
                Some(format!(
                    "raise {} to at least {} (E12) so the pin stays within its rated {} ({base} between DIS and the supply)",
                    name(cx, target),
                    ohms(new),
                    format_si(rated.value, "A"),
                ))
            }
            None if target == t.device => {
                let series = eseries::round_up(needed.max(1.0), &eseries::E12)?;
                Some(format!(
                    "DIS must not sit on the supply: connect it to the timing network, with at least {} (E12) between it and the supply ({base})",
                    ohms(series),
                ))
            }
            None => {
                let series = eseries::round_up((needed - present).max(1.0), &eseries::E12)?;
                Some(format!(
                    "put {} (E12) in series with {} so the pin stays within its rated {} at every position ({base} between DIS and the supply)",
                    ohms(series),
                    name(cx, target),
                    format_si(rated.value, "A"),
                ))
            }
        }
    });

    let mut f = finding_at(RULE, severity, cx, target, message)?;
    f = label(
        f,
        cx,
        t.device,
        &format!("{timer}: its discharge pin (DIS) sinks this current while its output is low"),
    );
    for &d in &t.discharge_chain {
        f = label(f, cx, d, "between the discharge pin and the supply");
    }
    if let Some(s) = supply {
        f = label(f, cx, s, "the supply behind the discharge pin");
    }
    if let Some(h) = help {
        f = f.with_help(h);
    }
    let current_source = if target == t.device && dead_short {
        "the pin's own current limit (behavioural stand-in, from memory)".to_string()
    } else {
        format!(
            "computed: DC solve with the pin on{}",
            at_state(&current.max_state)
        )
    };
    f = f.with_value("discharge_current", current.max, "A", current_source);
    f = f.with_value("discharge_current_max", max.value, "A", max.source.clone());
    f = f.with_value(
        "discharge_current_rated",
        rated.value,
        "A",
        rated.source.clone(),
    );
    if let Some(r) = source_ohms {
        f = f.with_value(
            "series_resistance_min",
            r.min,
            "Ω",
            format!(
                "computed: Thevenin resistance at DIS with the pin off{}",
                at_state(&r.min_state)
            ),
        );
    }
    if let Some(v) = supply_v {
        f = f.with_value(
            "supply_voltage",
            v,
            "V",
            "computed: open-circuit voltage at DIS",
        );
    }
    Some(f)
}

fn dump(cx: &RuleContext<'_>, t: &TimerFacts) -> Option<Finding> {
    let (diode, peak) = t.discharge_dump?;
    let timer = name(cx, t.device);
    let cap = t.timing_capacitor;
    let cap_name = cap.map_or_else(|| "the timing capacitor".to_string(), |c| name(cx, c));
    let upper = t.upper_threshold_v.as_ref().map(|r| r.max);
    let message = format!(
        "{cap_name} is dumped straight into {timer}'s discharge pin through {} with no series resistor{}: the pin sees a peak of about {} at every discharge",
        name(cx, diode),
        at_state(t.discharge_dump_state.as_deref().unwrap_or("")),
        format_si(peak, "A"),
    );
    let mut f = finding_at(RULE, RULE.grade(Severity::Note), cx, diode, message)?;
    f = label(
        f,
        cx,
        t.device,
        &format!("{timer}: its discharge pin takes the peak"),
    );
    if let Some(c) = cap {
        f = label(
            f,
            cx,
            c,
            "the timing capacitor, charged to the upper threshold",
        );
    }
    let limited = upper.map(|v| {
        let r = 150.0;
        format!(
            " (about {} with 150 Ω from {})",
            format_si((v - 0.7).max(0.0) / r, "A"),
            format_si(v, "V")
        )
    });
    f = f.with_help(format!(
        "a 100–220 Ω resistor in series with {} limits it{}; the low time grows only to about 0.7·R·C",
        name(cx, diode),
        limited.unwrap_or_default()
    ));
    f = f.with_value(
        "peak_current",
        peak,
        "A",
        "computed: discharge pin current with the capacitor at the upper threshold, through the diode",
    );
    if let Some(v) = upper {
        f = f.with_value(
            "upper_threshold",
            v,
            "V",
            "computed: 2/3 VCC or the control voltage",
        );
    }
    let _ = element(cx, diode);
    Some(f)
}
