//! `gate-overvoltage`: the gate-source voltage exceeds the MOSFET's rating. See
//! `rules/gate-overvoltage.md`.

use super::eseries::{ohms, round_down, round_up, E12};
use super::support::switch::{finding_at, is_switch, kind, label, name, polarity, rated_or};
use super::units::format_si;
use super::Rule;
use super::RuleContext;
use crate::analysis::{Range, SwitchFacts};
use crate::diagnostic::{Finding, Severity};

/// This rule's identity: its ID, the severities it gives and its page.
pub const RULE: Rule = Rule {
    id: "gate-overvoltage",
    default_severity: Severity::Error,
    grades: &[Severity::Error],
    summary: "The on-state gate-source voltage exceeds the switch's rating",
    page: include_str!("../../rules/gate-overvoltage.md"),
    check: Some(check),
};
/// Gate-source resistor of the suggested divider (common practice).
const PULL_OHMS: f64 = 10e3;
/// Zener voltages commonly stocked (IEC 60063 E24 steps that zener ranges use).
const ZENERS: [f64; 13] = [
    4.7, 5.1, 5.6, 6.2, 6.8, 7.5, 8.2, 9.1, 10.0, 12.0, 15.0, 18.0, 20.0,
];

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    for sw in &cx.analysis.switches {
        if is_switch(sw) && kind(cx, sw.device).is_some_and(|k| k.is_mos()) {
            out.extend(finding(cx, sw));
        }
    }
}

/// The largest gate-source magnitude over the on and off states, and the state giving it.
fn worst(sw: &SwitchFacts) -> Option<(f64, String, &'static str)> {
    let mut best: Option<(f64, String, &'static str)> = None;
    let mut take = |r: &Option<Range>, which: &'static str| {
        if let Some(r) = r {
            for (v, s) in [(r.min, &r.min_state), (r.max, &r.max_state)] {
                if best.as_ref().is_none_or(|b| v.abs() > b.0) {
                    best = Some((v.abs(), s.clone(), which));
                }
            }
        }
    };
    take(&sw.vgs_on_v, "on");
    take(&sw.vgs_off_v, "off");
    best
}

fn finding(cx: &RuleContext<'_>, sw: &SwitchFacts) -> Option<Finding> {
    let (vgs, state, which) = worst(sw)?;
    let max = rated_or(
        cx,
        sw.device,
        "vgs_max",
        20.0,
        "default vgs_max for a standard MOSFET (DESIGN default)",
    );
    if vgs <= max.value {
        return None;
    }
    let s = name(cx, sw.device);
    let message = format!(
        "{s}'s gate sees {} from gate to source in its {which} state ({state}): above its {} \
         gate-source rating; the gate oxide punches through and the MOSFET fails shorted",
        format_si(vgs, "V"),
        format_si(max.value, "V")
    );
    let mut f = finding_at(RULE, RULE.severity(), cx, sw.device, message)?;
    if let Some(d) = &sw.driver {
        f = label(
            f,
            cx,
            d.device,
            &format!("drives {s}'s gate with the full swing"),
        );
        for &n in &d.network {
            f = label(f, cx, n, "in the gate path");
        }
    }
    let rated = rated_or(cx, sw.device, "vgs_rated", 10.0, "standard default");
    let target = if rated.value < max.value {
        rated.value.max(0.5 * max.value).min(0.75 * max.value)
    } else {
        0.75 * max.value
    };
    let f = f.with_help(help(cx, sw, &s, vgs, target, max.value));
    Some(
        f.with_value("vgs", vgs, "V", "computed")
            .with_value("vgs_max", max.value, "V", max.source)
            .with_value("target_vgs", target, "V", "computed"),
    )
}

fn help(
    cx: &RuleContext<'_>,
    sw: &SwitchFacts,
    s: &str,
    vgs: f64,
    target: f64,
    max: f64,
) -> String {
    let series = PULL_OHMS * (vgs / target - 1.0);
    let divided = |r: f64| vgs * PULL_OHMS / (PULL_OHMS + r);
    // Of the two nearest E12 values that keep the gate below 90 % of its rating, prefer one
    // that still reaches the target (full enhancement), then the nearer.
    let pick = [round_down(series, &E12), round_up(series, &E12)]
        .into_iter()
        .flatten()
        .filter(|&r| divided(r) <= 0.9 * max)
        .min_by(|a, b| {
            let key = |r: f64| (divided(r) < target, (divided(r) - target).abs());
            let (ka, kb) = (key(*a), key(*b));
            ka.0.cmp(&kb.0).then(ka.1.total_cmp(&kb.1))
        });
    let zener = ZENERS.iter().copied().rfind(|&z| z <= 0.8 * max);
    let cathode = if kind(cx, sw.device).map(polarity).unwrap_or(1.0) > 0.0 {
        "cathode to the gate"
    } else {
        "cathode to the source"
    };
    let mut text = match pick {
        Some(r) => format!(
            "divide the drive: {} from {s}'s gate to its source and {} in series with the gate \
             give about {} gate-source",
            ohms(PULL_OHMS),
            ohms(r),
            format_si(divided(r), "V")
        ),
        None => format!(
            "limit {s}'s gate-source voltage to {}",
            format_si(target, "V")
        ),
    };
    if let Some(z) = zener {
        text.push_str(&format!(
            "; or clamp it with a {} zener from gate to source ({cathode}) behind a gate resistor",
            format_si(z, "V")
        ));
    }
    text
}
