//! `load-overvoltage`: a load's effective or peak voltage exceeds its rating. See
//! `rules/load-overvoltage.md`.

use super::switch_util::{
    dc_resistance, duty_text, finding_at, label, name, supply_facts, timer_facts, NetIndex,
    SwitchIndex,
};
use super::units::{format_si, percent};
use super::Rule;
use super::RuleContext;
use crate::analysis::{LoadFacts, SwitchFacts};
use crate::circuit::{PinRole, Rated};
use crate::diagnostic::{Finding, Severity};

/// This rule's identity: its ID, the severities it gives and its page.
pub const RULE: Rule = Rule {
    id: "load-overvoltage",
    default_severity: Severity::Error,
    grades: &[Severity::Error, Severity::Warning],
    summary: "A load's effective or peak voltage exceeds its rating",
    page: include_str!("../../rules/load-overvoltage.md"),
    check: Some(check),
};
/// Effective voltage over rating that fails the load (common practice).
const EFFECTIVE_ERROR: f64 = 2.0;
/// Peak voltage over rating that fails the load (common practice).
const PEAK_ERROR: f64 = 2.5;
/// Effective voltage over rating worth a warning (common practice: 10 % over is a stretch).
const EFFECTIVE_WARNING: f64 = 1.1;
/// Peak voltage over rating worth a warning (common practice).
const PEAK_WARNING: f64 = 2.0;

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let index = NetIndex::new(cx);
    let switches = SwitchIndex::new(cx);
    for load in &cx.analysis.loads {
        out.extend(finding(cx, &index, &switches, load));
    }
}

fn finding(
    cx: &RuleContext<'_>,
    index: &NetIndex,
    switches: &SwitchIndex<'_>,
    load: &LoadFacts,
) -> Option<Finding> {
    let rated = load.rated_v.as_ref().filter(|r| r.value > 0.0)?;
    let peak = load.peak_v.as_ref()?;
    let effective = load.effective_v.as_ref().unwrap_or(peak);
    let (mut pk, mut eff) = (peak.max.abs(), effective.max.abs());
    let r = rated.value;
    // A switch stuck in its linear region hides the rail from the load; once its drive is
    // fixed the load gets the rail. Judge the load on that.
    let own_switch = load.switch.and_then(|s| switches.get(s));
    let starved = full_on_peak(cx, own_switch, load).filter(|full| *full > pk);
    if let Some(full) = starved {
        let scale = if pk > 0.0 { eff / pk } else { 1.0 };
        eff = full * scale.clamp(0.0, 1.0);
        pk = full;
    }
    let severity = if eff > EFFECTIVE_ERROR * r || pk > PEAK_ERROR * r {
        Severity::Error
    } else if eff > EFFECTIVE_WARNING * r || pk > PEAK_WARNING * r {
        Severity::Warning
    } else {
        return None;
    };
    let l = name(cx, load.device);
    let measure = if load.effective_is_average {
        "average (its L/R smooths the PWM)"
    } else {
        "RMS (its current follows each pulse)"
    };
    let duty_part = load
        .duty
        .as_ref()
        .map_or_else(String::new, |d| format!(" at duty {}", duty_text(d)));
    let mut message = format!(
        "{l} is rated {} but sees {} peak and {} {measure}{duty_part} ({}",
        format_si(r, "V"),
        format_si(pk, "V"),
        format_si(eff, "V"),
        effective.max_state
    );
    if starved.is_some() {
        let sw = load
            .switch
            .map_or_else(|| "its switch".into(), |s| name(cx, s));
        let drop = own_switch
            .and_then(|s| s.vds_on_v.as_ref())
            .map_or_else(String::new, |v| {
                format!(" and drops {}", format_si(v.max.abs(), "V"))
            });
        message.push_str(&format!(
            "; with {sw} fully on: it now runs in its linear region{drop}"
        ));
    }
    message.push_str("): ");
    let ratio = |v: f64| super::units::sig3(v / r);
    let over = if severity == Severity::Error {
        if eff > EFFECTIVE_ERROR * r {
            format!("{}× its rating effective", ratio(eff))
        } else {
            format!("{}× its rating at the peak", ratio(pk))
        }
    } else if eff > EFFECTIVE_WARNING * r {
        format!("{}× its rating effective", ratio(eff))
    } else {
        format!("{}× its rating at the peak", ratio(pk))
    };
    message.push_str(&over);
    message.push_str(if severity == Severity::Error {
        ", which burns the winding"
    } else {
        ", a stretch that shortens its life"
    });
    let limit = duty_limit(load, rated, pk);
    if let Some(d) = limit {
        message.push_str(&format!(
            "; duty up to {} keeps it within its rating",
            percent(d)
        ));
    }

    let mut f = finding_at(RULE, severity, cx, load.device, message)?;
    if let Some(sw) = load.switch {
        f = label(f, cx, sw, &format!("switches {l}"));
    }
    let driver = own_switch
        .and_then(|s| s.driver.as_ref())
        .map(|d| d.control.unwrap_or(d.device))
        .or(load.driven_by);
    if let Some(d) = driver {
        f = label(f, cx, d, "sets the duty");
        if let Some(t) = timer_facts(cx, d) {
            for &pot in &t.pots {
                f = label(f, cx, pot, "sets the duty range");
            }
        }
    }
    if let Some(s) = supply_of(cx, index, own_switch, load) {
        let text = supply_facts(cx, s).map_or_else(
            || "the rail it runs from".to_string(),
            |v| format!("the {} rail it runs from", format_si(v.max, "V")),
        );
        f = label(f, cx, s, &text);
    }
    let help = match limit {
        Some(d) if pk <= PEAK_WARNING * r => format!(
            "limit the duty to at most {} (its effective voltage then equals its {} rating), or \
             run {l} from a rail near {}, or use a load rated for {}",
            percent(d),
            format_si(r, "V"),
            format_si(r, "V"),
            format_si(eff, "V")
        ),
        _ => format!(
            "run {l} from a rail near its {} rating (a regulator or a lower supply), or use a load \
             rated for at least {}",
            format_si(r, "V"),
            format_si(pk, "V")
        ),
    };
    f = f
        .with_help(help)
        .with_value("rated_voltage", r, "V", rated.source.clone())
        .with_value("peak_voltage", pk, "V", "computed")
        .with_value("effective_voltage", eff, "V", "computed");
    if let Some(d) = &load.duty {
        f = f
            .with_value("duty_min", d.min, "", "computed")
            .with_value("duty_max", d.max, "", "computed");
    }
    if let Some(d) = limit {
        f = f.with_value("duty_limit", d, "", "computed");
    }
    Some(f)
}

/// The largest duty that keeps the effective voltage at the rating: `V/Vpk` for an average,
/// `(V/Vpk)²` for RMS. `None` when the load is not PWM-driven.
fn duty_limit(load: &LoadFacts, rated: &Rated, peak: f64) -> Option<f64> {
    load.duty.as_ref()?;
    if peak <= 0.0 {
        return None;
    }
    let ratio = (rated.value / peak).min(1.0);
    Some(if load.effective_is_average {
        ratio
    } else {
        ratio * ratio
    })
}

/// The supply on either end of the load, when one end sits on a rail.
fn supply_of(
    cx: &RuleContext<'_>,
    index: &NetIndex,
    own_switch: Option<&SwitchFacts>,
    load: &LoadFacts,
) -> Option<usize> {
    let d = cx.circuit.devices.get(load.device)?;
    [PinRole::Pos, PinRole::Neg]
        .into_iter()
        .filter_map(|r| d.pin(r))
        .find_map(|n| index.supply_on(cx, n))
        .map(|s| s.device)
        .or_else(|| own_switch.and_then(|s| s.rail_supply))
}

/// The load's peak voltage with its switch fully on, when the switch now runs in its linear
/// region (a starved gate or base, a follower): the rail shared over the branch's resistances.
fn full_on_peak(cx: &RuleContext<'_>, sw: Option<&SwitchFacts>, load: &LoadFacts) -> Option<f64> {
    let sw = sw?;
    if !(sw.linear_region || sw.follower) {
        return None;
    }
    let rail = super::switch_util::rail(cx, sw)?.v.max;
    let own = dc_resistance(cx, load.device);
    let total: Option<f64> = sw.branch.iter().map(|&d| dc_resistance(cx, d)).sum();
    match (own, total) {
        (Some(r), Some(t)) if t > 0.0 => Some(rail * r / t),
        _ => Some(rail),
    }
}
