//! `gate-cannot-turn-off`: the off-state gate-source voltage is too close to the threshold.
//! See `rules/gate-cannot-turn-off.md`.

use super::support::switch::{
    drive_level, finding_at, in_conduction_sense, is_switch, kind, label, load_device, name, rail,
    rated_or, SwitchIndex,
};
use super::units::format_si;
use super::Rule;
use super::RuleContext;
use crate::analysis::SwitchFacts;
use crate::circuit::Kind;
use crate::diagnostic::{Finding, Severity};

/// This rule's identity: its ID, the severities it gives and its page.
pub const RULE: Rule = Rule {
    id: "gate-cannot-turn-off",
    default_severity: Severity::Error,
    grades: &[Severity::Error, Severity::Warning],
    summary: "The off-state gate-source voltage is too close to the threshold",
    page: include_str!("../../rules/gate-cannot-turn-off.md"),
    check: Some(check),
};
/// The highest `vgs_th_min` a MOSFET with no stated threshold plausibly has (from memory:
/// datasheet minimum thresholds run from about 1 V for logic-level parts to 3 V for standard
/// ones).
const UNSTATED_TH_MIN_HIGH_V: f64 = 3.0;

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let index = SwitchIndex::new(cx);
    for sw in &cx.analysis.switches {
        let Some(k) = kind(cx, sw.device).filter(|k| k.is_mos() && is_switch(sw)) else {
            continue;
        };
        out.extend(finding(cx, &index, sw, k));
    }
}

/// True when `shoot-through` already reports this switch conducting beside its bridge partner.
fn reported_as_shoot_through(
    cx: &RuleContext<'_>,
    index: &SwitchIndex<'_>,
    sw: &SwitchFacts,
) -> bool {
    sw.bridge_partner
        .and_then(|p| index.get(p))
        .is_some_and(|partner| {
            super::support::switch::conducts_with_partner(cx, sw, partner).is_some()
        })
}

fn finding(
    cx: &RuleContext<'_>,
    index: &SwitchIndex<'_>,
    sw: &SwitchFacts,
    k: Kind,
) -> Option<Finding> {
    let off = in_conduction_sense(sw.vgs_off_v.as_ref()?, k);
    let th = rated_or(
        cx,
        sw.device,
        "vgs_th_min",
        2.0,
        "default vgs_th_min (DESIGN default)",
    );
    let v = off.strongest;
    let state = &off.strongest_state;
    let severity = if v >= th.value {
        if reported_as_shoot_through(cx, index, sw) {
            return None;
        }
        RULE.grade(Severity::Error)
    } else if v > 0.5 * th.value {
        RULE.grade(Severity::Warning)
    } else {
        return None;
    };
    let s = name(cx, sw.device);
    let load = load_device(cx, sw).map_or_else(|| "its load".to_string(), |l| name(cx, l));
    let sense = if k == Kind::Pmos {
        "below its source"
    } else {
        "above its source"
    };
    let consequence = if severity == Severity::Error {
        format!(
            "at or above its lowest threshold of {}: it never turns fully off and {load} stays on",
            format_si(th.value, "V")
        )
    } else {
        format!(
            "above half its lowest threshold of {}: the threshold falls as the die heats, and a \
             hot switch creeps back on",
            format_si(th.value, "V")
        )
    };
    let message = format!(
        "when {s} should be off its gate still sits {} {sense} ({state}), {consequence}",
        format_si(v, "V")
    );
    let mut f = finding_at(RULE, severity, cx, sw.device, message)?;
    if let Some(d) = &sw.driver {
        let level = drive_level(cx, d.device);
        let text = match (&level, k) {
            (Some(l), Kind::Pmos) => format!("its high level is only {}", format_si(l.high, "V")),
            (Some(l), _) => format!("its low level is {}", format_si(l.low, "V")),
            (None, _) => format!("drives {s}'s gate"),
        };
        f = label(f, cx, d.device, &text);
        for &n in &d.network {
            f = label(f, cx, n, "sets the off-state gate voltage");
        }
    }
    if let Some(l) = load_device(cx, sw) {
        f = label(f, cx, l, "stays powered");
    }
    let help = if k == Kind::Pmos {
        let rail = rail(cx, sw).map(|r| r.v.max);
        let rail_text = rail.map_or_else(
            || "the rail".into(),
            |v| format!("the {} rail", format_si(v, "V")),
        );
        format!(
            "a P-channel switch on {rail_text} turns off only when its gate reaches its source: \
             pull the gate up to the source with 10 kΩ and drive it down through an NPN or \
             N-channel level shifter, so the logic level never has to reach the rail"
        )
    } else {
        format!(
            "pull {s}'s gate down to its source with 10 kΩ and drive it from an output whose low \
             level reaches the source (below {}); a pull-up or divider on the gate must not hold \
             it up",
            format_si(0.5 * th.value, "V")
        )
    };
    // Where the threshold is only assumed, the verdict stands only if it would with the highest
    // lowest-threshold an unstated switch plausibly has.
    let holds = match severity {
        Severity::Error => v >= UNSTATED_TH_MIN_HIGH_V,
        _ => v > 0.5 * UNSTATED_TH_MIN_HIGH_V,
    };
    Some(
        f.with_help(help)
            .with_value("off_state_vgs", v, "V", "computed")
            .with_deciding_value("vgs_th_min", th.value, "V", th.source)
            .holding_over_range(holds),
    )
}
