//! `base-underdrive`: a BJT switch gets too little base current to saturate at its load
//! current and runs in its active region. See `rules/base-underdrive.md`.

use super::edits;
use super::eseries::{ohms, round_down, E12};
use super::support::switch::{
    drive_level, element, finding_at, held_off, is_switch, kind, label, load_device, load_of, name,
    rated, saturated_current, shorted_through, weakest_magnitude,
};
use super::units::format_si;
use super::Rule;
use super::RuleContext;
use crate::analysis::{Side, SwitchFacts, SATURATED_BJT_DROP_V};
use crate::circuit::{DeviceId, Kind};
use crate::diagnostic::{Finding, Severity};

/// This rule's identity: its ID, the severities it gives and its page.
pub const RULE: Rule = Rule {
    id: "base-underdrive",
    default_severity: Severity::Error,
    grades: &[Severity::Error, Severity::Warning, Severity::Note],
    summary: "A BJT switch gets too little base current and runs in its active region",
    page: include_str!("../../rules/base-underdrive.md"),
    check: Some(check),
};
/// Largest current gain any silicon BJT plausibly has (from memory: small-signal parts stay
/// well under 1000; super-β parts are the rare exception).
const MAX_PLAUSIBLE_BETA: f64 = 1000.0;
/// Forced β for a saturated switch (common practice).
const FORCED_BETA: f64 = 10.0;
/// V_BE of a silicon switch driven hard (from memory).
const VBE_ON_V: f64 = 0.8;

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    if cx.analysis.switches.is_empty() {
        return;
    }
    let unreferenced = super::support::switch::reference::switches_without_reference(cx);
    for sw in &cx.analysis.switches {
        let bjt = kind(cx, sw.device).is_some_and(Kind::is_bjt);
        let referenced = unreferenced.binary_search(&sw.device).is_err();
        if bjt && !held_off(cx, sw) && is_switch(sw) && referenced && !is_follower(cx, sw) {
            out.extend(finding(cx, sw));
        }
    }
}

/// An NPN with its collector on the upper rail and the load at its emitter, or a PNP the
/// other way up, is an emitter follower: its emitter follows the base a junction drop below,
/// and no base current saturates it, so a forced-β test says nothing about it (its drop and
/// dissipation are the switch's facts).
fn is_follower(cx: &RuleContext<'_>, sw: &SwitchFacts) -> bool {
    // The analysis marks the upper N-type device of a high side or of a bridge leg.
    sw.follower
        || match kind(cx, sw.device) {
            Some(Kind::Npn) => sw.side == Side::High,
            Some(Kind::Pnp) => sw.side == Side::Low,
            _ => false,
        }
}

/// The collector current the load needs and the state it is taken in: the branch with the
/// switch saturated (the analysis's), or what the DC engine finds through the switch and the
/// load, whichever is larger.
fn collector_current(cx: &RuleContext<'_>, sw: &SwitchFacts) -> Option<(f64, String)> {
    let saturated = saturated_current(sw).map(|r| (r.max, r.max_state.clone()));
    let through_switch = sw
        .current_a
        .as_ref()
        .filter(|_| !shorted_through(cx, sw))
        .map(|r| (r.max.abs(), r.max_state.clone()));
    let through_load = load_of(cx, sw)
        .and_then(|l| l.current_a.as_ref())
        .map(|r| (r.max.abs(), r.max_state.clone()));
    [saturated, through_switch, through_load]
        .into_iter()
        .flatten()
        .reduce(|a, b| if b.0 > a.0 { b } else { a })
        .filter(|(i, _)| *i > 0.0)
}

/// The single resistor between driver and base, when that is the whole base network.
fn base_resistor(cx: &RuleContext<'_>, sw: &SwitchFacts) -> Option<DeviceId> {
    match sw.driver.as_ref()?.network.as_slice() {
        [r] if kind(cx, *r) == Some(Kind::Resistor) => Some(*r),
        _ => None,
    }
}

fn finding(cx: &RuleContext<'_>, sw: &SwitchFacts) -> Option<Finding> {
    let (ib, state) = weakest_magnitude(sw.base_current_a.as_ref()?);
    let (ic, ic_state) = collector_current(cx, sw)?;
    let need = ic / FORCED_BETA;
    if ib >= need {
        return None;
    }
    let q = name(cx, sw.device);
    let load = load_device(cx, sw);
    let load_name = load.map_or_else(|| "its load".to_string(), |l| name(cx, l));
    let mut message = format!(
        "{q} gets {} of base current ({state}); to saturate at {load_name}'s {} ({ic_state}) it \
         needs {} (I_C/10, a forced β of 10)",
        format_si(ib, "A"),
        format_si(ic, "A"),
        format_si(need, "A")
    );
    let vce = sw.vds_on_v.as_ref().map(|r| r.max.abs());
    let power = sw.dissipation_w.as_ref().map(|r| r.max);
    let active = sw.linear_region || vce.is_some_and(|v| v > 2.0 * SATURATED_BJT_DROP_V);
    // A saturated V_CE with a base current no transistor's gain could turn into the load's
    // current: the numbers do not describe one state, and a finding built on them would
    // contradict itself.
    if !active && ib * MAX_PLAUSIBLE_BETA < ic {
        return None;
    }
    // Saturated in the solve, the question is margin: the forced β it runs at against the
    // part's minimum gain. Half of hfe_min is ample (common practice); with no hfe_min given
    // kickback cannot judge the margin and says what it needs.
    let hfe_min = rated(cx, sw.device, "hfe_min").map(|h| h.value);
    let forced = ic / ib.max(f64::MIN_POSITIVE);
    let severity = if active {
        RULE.grade(Severity::Error)
    } else {
        match hfe_min {
            Some(h) if forced <= h / 2.0 => return None,
            Some(_) => RULE.grade(Severity::Warning),
            None => RULE.grade(Severity::Note),
        }
    };
    if active {
        message.push_str(": it runs in its active region");
    } else {
        message.push_str(&format!(
            ": it saturates in the DC solve at a forced β of {}, only while its gain holds, and \
             gain falls at high current and when cold",
            super::units::sig3(forced)
        ));
        match hfe_min {
            Some(h) => message.push_str(&format!(" (hfe_min {})", super::units::sig3(h))),
            None => message.push_str(
                "; the part's minimum gain (hfe_min) is not given, so the margin is not judged",
            ),
        }
    }
    match (vce, power) {
        (Some(v), Some(p)) => message.push_str(&format!(
            ", with V_CE = {} and {} dissipated",
            format_si(v, "V"),
            format_si(p, "W")
        )),
        (Some(v), None) => message.push_str(&format!(", with V_CE = {}", format_si(v, "V"))),
        (None, Some(p)) => message.push_str(&format!(", dissipating {}", format_si(p, "W"))),
        (None, None) => {}
    }

    let resistor = base_resistor(cx, sw);
    let primary = resistor.unwrap_or(sw.device);
    let mut f = finding_at(RULE, severity, cx, primary, message)?;
    f = label(
        f,
        cx,
        sw.device,
        &format!("needs {} of base current to saturate", format_si(need, "A")),
    );
    if let Some(d) = &sw.driver {
        f = label(f, cx, d.device, &format!("drives {q}'s base"));
    }
    if let Some(l) = load {
        f = label(
            f,
            cx,
            l,
            &format!("draws {} when {q} is saturated", format_si(ic, "A")),
        );
    }
    let (text, value) = help(cx, sw, &q, resistor, need);
    f = f.with_help(text);
    if let (Some(r), Some(v)) = (resistor, value) {
        let title = format!("set {} to {} (E12)", name(cx, r), ohms(v));
        f = f.with_fix(element(cx, r).and_then(|e| edits::set_value(e, v, title)));
    }
    f = f
        .with_value("base_current", ib, "A", "computed")
        .with_value("collector_current", ic, "A", "computed")
        .with_value("required_base_current", need, "A", "computed");
    if let Some(v) = vce {
        f = f.with_value("vce_on", v, "V", "computed");
    }
    if let Some(p) = power {
        f = f.with_value("dissipation", p, "W", "computed");
    }
    Some(f)
}

fn help(
    cx: &RuleContext<'_>,
    sw: &SwitchFacts,
    q: &str,
    resistor: Option<DeviceId>,
    need: f64,
) -> (String, Option<f64>) {
    let driver = sw.driver.as_ref().map(|d| d.device);
    let level = driver.and_then(|d| drive_level(cx, d));
    let vbe = sw
        .vgs_on_v
        .as_ref()
        .map(|r| r.max.abs())
        .filter(|v| *v > 0.3 && *v < 1.5)
        .unwrap_or(VBE_ON_V);
    let limit = driver.and_then(|d| rated(cx, d, "out_current_max"));
    let mut value = None;
    let mut text = match level.as_ref().filter(|l| l.high > vbe) {
        Some(l) => {
            let r = (l.high - vbe) / need;
            match round_down(r, &E12) {
                Some(e12) => {
                    value = Some(e12);
                    let what = resistor.map_or_else(
                        || format!("put a base resistor of {}", ohms(e12)),
                        |r| format!("set {} to {}", name(cx, r), ohms(e12)),
                    );
                    format!(
                        "{what} in front of {q}'s base: from {} ({}) it gives {}; that is \
                         ({} − V_BE {}) / (I_C/10) = {}, rounded down to E12",
                        format_si(l.high, "V"),
                        l.how,
                        format_si((l.high - vbe) / e12, "A"),
                        format_si(l.high, "V"),
                        format_si(vbe, "V"),
                        ohms(r)
                    )
                }
                None => format!("drive {q}'s base with {}", format_si(need, "A")),
            }
        }
        None => format!("drive {q}'s base with at least {}", format_si(need, "A")),
    };
    if let Some(max) = limit.filter(|m| m.value < need) {
        text.push_str(&format!(
            "; that is more than the driver's {} output rating, so use a logic-level N-channel \
             MOSFET instead, or a Darlington",
            format_si(max.value, "A")
        ));
        value = None;
    }
    (text, value)
}
