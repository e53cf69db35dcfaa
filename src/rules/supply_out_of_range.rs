//! `supply-out-of-range`: a part's supply is outside its operating or absolute range at some
//! supply corner (battery end of life included). See `rules/supply-out-of-range.md`.

use super::support::switch::{
    finding_at, is_ground, label, name, supply_range, timer_facts, NetIndex,
};
use super::units::format_si;
use super::Rule;
use super::RuleContext;
use crate::analysis::Range;
use crate::circuit::{DeviceId, Kind, PinRole, Rated};
use crate::diagnostic::{Finding, Severity};

/// This rule's identity: its ID, the severities it gives and its page.
pub const RULE: Rule = Rule {
    id: "supply-out-of-range",
    default_severity: Severity::Error,
    grades: &[Severity::Error, Severity::Warning],
    summary: "A part's supply is outside its operating or absolute range at some corner",
    page: include_str!("../../rules/supply-out-of-range.md"),
    check: Some(check),
};

/// Operating minimum, maximum and absolute maximum when part knowledge gave none
/// (DESIGN §6: bipolar 555 4.5–16 V, abs max 18 V; CMOS 555 2–15 V; from memory).
fn defaults(kind: Kind) -> Option<(f64, f64, f64)> {
    match kind {
        Kind::Timer555 => Some((4.5, 16.0, 18.0)),
        Kind::Timer555Cmos => Some((2.0, 15.0, 16.0)),
        _ => None,
    }
}

struct Limits {
    min: Option<Rated>,
    max: Option<Rated>,
    abs_max: Option<Rated>,
}

fn limits(cx: &RuleContext<'_>, id: DeviceId) -> Option<Limits> {
    let d = cx.circuit.devices().get(id)?;
    let fallback = defaults(d.kind);
    let get = |key: &str, pick: fn((f64, f64, f64)) -> f64| {
        d.data.get(key).cloned().or_else(|| {
            fallback.map(|f| Rated {
                value: pick(f),
                source: format!("default for {} (from memory)", d.kind),
            })
        })
    };
    let l = Limits {
        min: get("supply_min", |f| f.0),
        max: get("supply_max", |f| f.1),
        abs_max: get("supply_abs_max", |f| f.2),
    };
    (l.min.is_some() || l.max.is_some() || l.abs_max.is_some()).then_some(l)
}

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let index = NetIndex::new(cx);
    for (id, d) in cx.circuit.devices().iter().enumerate() {
        let Some(vcc) = d.pin(PinRole::Vcc) else {
            continue;
        };
        let Some(limits) = limits(cx, id) else {
            continue;
        };
        let (range, supply) = match timer_facts(cx, id).and_then(|t| t.supply_v.clone()) {
            Some(r) => (r, index.supply_on(cx, vcc).map(|s| s.device)),
            None => {
                let grounded = d.pin(PinRole::Gnd).is_none_or(|g| is_ground(cx, g));
                let Some(s) = index.supply_on(cx, vcc).filter(|_| grounded) else {
                    continue;
                };
                (supply_range(cx, s), Some(s.device))
            }
        };
        out.extend(high(cx, id, &range, &limits, supply));
        out.extend(low(cx, id, &range, &limits, supply));
    }
}

fn finish(
    cx: &RuleContext<'_>,
    f: Finding,
    part: &str,
    supply: Option<DeviceId>,
    range: &Range,
) -> Finding {
    match supply {
        Some(s) => label(
            f,
            cx,
            s,
            &format!(
                "sets {part}'s supply: {}",
                super::support::switch::range_text(range.min, range.max, "V")
            ),
        ),
        None => f,
    }
}

fn high(
    cx: &RuleContext<'_>,
    id: DeviceId,
    range: &Range,
    limits: &Limits,
    supply: Option<DeviceId>,
) -> Option<Finding> {
    let v = range.max;
    let (severity, limit, what) = match (&limits.abs_max, &limits.max) {
        (Some(a), _) if v > a.value => (RULE.grade(Severity::Error), a, "absolute maximum"),
        (_, Some(m)) if v > m.value => (RULE.grade(Severity::Warning), m, "operating maximum"),
        _ => return None,
    };
    let part = name(cx, id);
    let kind = cx
        .circuit
        .devices()
        .get(id)
        .map_or(Kind::Unknown, |d| d.kind);
    let consequence = if severity == Severity::Error {
        "it can fail at once"
    } else {
        "its timing and levels are no longer specified and it runs hot"
    };
    let message = format!(
        "{part} ({kind}) runs from {} ({}): above its {} {what}; {consequence}",
        format_si(v, "V"),
        range.max_state,
        format_si(limit.value, "V")
    );
    let f = finding_at(RULE, severity, cx, id, message)?;
    let ceiling = limits.max.as_ref().unwrap_or(limit).value;
    let f = finish(cx, f, &part, supply, range).with_help(format!(
        "feed {part}'s supply pin from a regulated rail of at most {} (a linear regulator, or a \
         zener shunt with a series resistor), or use a part rated for {}",
        format_si(ceiling, "V"),
        format_si(v, "V")
    ));
    Some(
        f.with_value("supply_voltage", v, "V", "computed")
            .with_value(
                if severity == Severity::Error {
                    "supply_abs_max"
                } else {
                    "supply_max"
                },
                limit.value,
                "V",
                limit.source.clone(),
            ),
    )
}

fn low(
    cx: &RuleContext<'_>,
    id: DeviceId,
    range: &Range,
    limits: &Limits,
    supply: Option<DeviceId>,
) -> Option<Finding> {
    let min = limits.min.as_ref()?;
    let v = range.min;
    if v >= min.value {
        return None;
    }
    let part = name(cx, id);
    let kind = cx
        .circuit
        .devices()
        .get(id)
        .map_or(Kind::Unknown, |d| d.kind);
    let message = format!(
        "{part} ({kind}) gets only {} ({}): below its {} minimum supply, where its thresholds and \
         output level are no longer specified",
        format_si(v, "V"),
        range.min_state,
        format_si(min.value, "V")
    );
    let f = finding_at(RULE, RULE.grade(Severity::Warning), cx, id, message)?;
    let help = if kind == Kind::Timer555 && v >= 2.0 {
        format!(
            "use a CMOS 555 (2–15 V), or a supply that stays above {} at the battery's end of life",
            format_si(min.value, "V")
        )
    } else {
        format!(
            "use a supply that stays above {} at every corner, the battery's end of life included",
            format_si(min.value, "V")
        )
    };
    let f = finish(cx, f, &part, supply, range).with_help(help);
    Some(
        f.with_value("supply_voltage", v, "V", "computed")
            .with_value("supply_min", min.value, "V", min.source.clone()),
    )
}
