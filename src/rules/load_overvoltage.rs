//! `load-overvoltage`: a load's effective or peak voltage exceeds its rating. See
//! `rules/load-overvoltage.md`.

use super::support::switch::{
    duty_text, finding_at, label, name, supply_facts, timer_facts, NetIndex, SwitchIndex,
};
use super::units::{format_si, percent};
use super::Rule;
use super::RuleContext;
use crate::analysis::{EffectiveMethod, LoadFacts, SwitchFacts};
use crate::circuit::PinRole;
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
    // A switch stuck in its linear region hides the rail from the load; once its drive is
    // fixed the load gets the rail. The analysis judges the load on that (`full_on_v`).
    let basis = load.full_on_v.as_ref().or(load.peak_v.as_ref())?;
    let effective = load.effective_v.as_ref().unwrap_or(basis);
    let (pk, eff) = (basis.max.abs(), effective.max.abs());
    let r = rated.value;
    let own_switch = load.switch.and_then(|s| switches.get(s));
    let starved = load.full_on_v.is_some();
    let severity = if eff > EFFECTIVE_ERROR * r || pk > PEAK_ERROR * r {
        RULE.grade(Severity::Error)
    } else if eff > EFFECTIVE_WARNING * r || pk > PEAK_WARNING * r {
        RULE.grade(Severity::Warning)
    } else {
        return None;
    };
    let l = name(cx, load.device);
    let measure = match load.effective_method {
        EffectiveMethod::ClosedForm => {
            let tau = load
                .time_constant_s
                .map_or_else(String::new, |t| format!(", τ = L/R {}", format_si(t, "s")));
            format!("effective (I_rms·R of its R-L current over the PWM period{tau})")
        }
        EffectiveMethod::RmsAssumed => {
            "effective (RMS Vpk·√D: its L/R or the PWM frequency is unknown, so its current is \
             taken to follow each pulse)"
                .to_string()
        }
        EffectiveMethod::Peak if load.duty.is_some() => {
            "effective (on all the time: the peak)".to_string()
        }
        EffectiveMethod::Peak => "effective (no duty known: the peak)".to_string(),
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
    if starved {
        let drop = own_switch
            .and_then(|s| s.vds_on_v.as_ref())
            .map_or_else(String::new, |v| {
                format!(" and drops {}", format_si(v.max.abs(), "V"))
            });
        message.push_str(&format!(
            "; judged with its switch saturated: it now runs in its linear region{drop}"
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
    let limit = load.duty_limit.filter(|d| *d < 1.0);
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

/// The supply on either end of the load, when one end sits on a rail.
fn supply_of(
    cx: &RuleContext<'_>,
    index: &NetIndex,
    own_switch: Option<&SwitchFacts>,
    load: &LoadFacts,
) -> Option<usize> {
    let d = cx.circuit.devices().get(load.device)?;
    [PinRole::Pos, PinRole::Neg]
        .into_iter()
        .filter_map(|r| d.pin(r))
        .find_map(|n| index.supply_on(cx, n))
        .map(|s| s.device)
        .or_else(|| own_switch.and_then(|s| s.rail_supply))
}
