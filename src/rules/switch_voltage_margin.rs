//! `switch-voltage-margin`: a switch's voltage rating leaves too little margin over the voltage
//! it sees at turn-off (the rail plus whatever clamps the winding). See
//! `rules/switch-voltage-margin.md`.

use super::support::switch::{
    finding_at, is_switch, kind, label, name, next_rating, rail, rated, VDS_CLASSES,
};
use super::units::format_si;
use super::Rule;
use super::RuleContext;
use crate::analysis::{FreewheelKind, SwitchFacts};
use crate::circuit::{DeviceId, Kind, Rated};
use crate::diagnostic::{Finding, Severity};

/// This rule's identity: its ID, the severities it gives and its page.
pub const RULE: Rule = Rule {
    id: "switch-voltage-margin",
    default_severity: Severity::Error,
    grades: &[Severity::Error, Severity::Warning],
    summary: "A switch's voltage rating leaves too little margin over rail and clamp",
    page: include_str!("../../rules/switch-voltage-margin.md"),
    check: Some(check),
};
/// Rating wanted over the turn-off voltage (common practice derating).
const DERATING: f64 = 1.25;
/// Forward drop of a freewheel diode at the load current when its data gives none
/// (from memory: a silicon rectifier near 1 A; conservative for Schottkys).
const DIODE_DROP_V: f64 = 1.0;

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    for sw in cx.analysis.switches.iter().filter(|s| is_switch(s)) {
        out.extend(finding(cx, sw));
    }
}

/// What limits the switch's voltage at turn-off.
struct Stress {
    volts: f64,
    /// The clamp part, when one sets it.
    by: Option<DeviceId>,
    how: String,
    /// The limit is a clamp across the switch itself (its `vclamp` is what the switch sees).
    across_switch: bool,
    clamp_rating: Option<Rated>,
}

fn stress(cx: &RuleContext<'_>, sw: &SwitchFacts, rail_v: f64) -> Option<Stress> {
    let mut best: Option<Stress> = None;
    for fw in sw.freewheel.iter().filter(|f| !f.reversed) {
        let k = kind(cx, fw.device).unwrap_or(Kind::Diode);
        let d = name(cx, fw.device);
        let candidate = match fw.kind {
            FreewheelKind::Clamp => {
                let r = rated(cx, fw.device, "vclamp").or_else(|| rated(cx, fw.device, "vz"))?;
                Stress {
                    volts: r.value,
                    by: Some(fw.device),
                    how: format!("{d} clamps the switch at {}", format_si(r.value, "V")),
                    across_switch: true,
                    clamp_rating: Some(r),
                }
            }
            FreewheelKind::OppositeBodyDiode => Stress {
                volts: rail_v + DIODE_DROP_V,
                by: Some(fw.device),
                how: format!(
                    "the rail plus {}'s body diode, about {}",
                    d,
                    format_si(DIODE_DROP_V, "V")
                ),
                across_switch: false,
                clamp_rating: None,
            },
            // The switch then sees the converter's output or the reflected secondary voltage,
            // which a DC solve does not give: no margin is judged.
            FreewheelKind::ThroughCapacitor | FreewheelKind::CoupledWinding => return None,
            FreewheelKind::AcrossLoad | FreewheelKind::ToRail => {
                let clamp = matches!(k, Kind::Zener | Kind::Tvs);
                let r = if clamp {
                    rated(cx, fw.device, "vclamp").or_else(|| rated(cx, fw.device, "vz"))
                } else {
                    rated(cx, fw.device, "vf")
                };
                let extra = r.as_ref().map_or(DIODE_DROP_V, |r| r.value);
                Stress {
                    volts: rail_v + extra,
                    by: Some(fw.device),
                    how: format!(
                        "the rail plus {d}'s {} {}",
                        if clamp { "clamp" } else { "forward drop" },
                        format_si(extra, "V")
                    ),
                    across_switch: false,
                    clamp_rating: r.filter(|_| clamp),
                }
            }
        };
        // Parallel paths: the winding's current takes the one that clamps lowest.
        if best.as_ref().is_none_or(|b| candidate.volts < b.volts) {
            best = Some(candidate);
        }
    }
    if best.is_none() && !sw.inductive {
        best = Some(Stress {
            volts: rail_v,
            by: None,
            how: "the rail".into(),
            across_switch: false,
            clamp_rating: None,
        });
    }
    best
}

fn finding(cx: &RuleContext<'_>, sw: &SwitchFacts) -> Option<Finding> {
    let k = kind(cx, sw.device)?;
    let key = if k.is_bjt() { "vce_max" } else { "vds_max" };
    let rating = rated(cx, sw.device, key)?;
    let rail = rail(cx, sw)?;
    let rail_v = rail.v.max;
    let st = stress(cx, sw, rail_v)?;
    let wanted = DERATING * st.volts;
    if rating.value >= wanted {
        return None;
    }
    let s = name(cx, sw.device);
    let label_v = if k.is_bjt() { "V_CE" } else { "V_DS" };
    let severity = if rating.value < st.volts {
        RULE.grade(Severity::Error)
    } else {
        RULE.grade(Severity::Warning)
    };
    let message = if st.across_switch && severity == Severity::Error {
        format!(
            "{s} is rated {} {label_v} but its clamp only starts to hold the drain at {}: {s} \
             avalanches before the clamp conducts",
            format_si(rating.value, "V"),
            format_si(st.volts, "V")
        )
    } else {
        format!(
            "{s} is rated {} {label_v} and sees about {} at turn-off ({}, {} rail at {}): {}",
            format_si(rating.value, "V"),
            format_si(st.volts, "V"),
            st.how,
            format_si(rail_v, "V"),
            rail.v.max_state,
            if severity == Severity::Error {
                "above its rating, so it breaks down on every turn-off".to_string()
            } else {
                format!(
                    "less than the 25 % margin that covers ringing and supply transients ({} \
                     wanted)",
                    format_si(wanted, "V")
                )
            }
        )
    };
    let mut f = finding_at(RULE, severity, cx, sw.device, message)?;
    if let Some(by) = st.by {
        f = label(f, cx, by, "sets the turn-off voltage");
    }
    if let Some(sup) = rail.supply {
        f = label(f, cx, sup, &format!("the {} rail", format_si(rail_v, "V")));
    }
    let class = next_rating(&VDS_CLASSES, wanted);
    let part = class.map_or_else(
        || format!("a switch rated at least {}", format_si(wanted, "V")),
        |c| format!("a {} part", format_si(c, "V")),
    );
    let help = if st.across_switch {
        format!(
            "use a clamp whose clamping voltage at the load current sits below {} with margin, or \
             {part} (rated at least {} {label_v})",
            format_si(rating.value / DERATING, "V"),
            format_si(wanted, "V")
        )
    } else {
        format!(
            "use {part} for {s} (at least {} {label_v}, 1.25 × the turn-off voltage)",
            format_si(wanted, "V")
        )
    };
    f = f
        .with_help(help)
        .with_value(key, rating.value, "V", rating.source)
        .with_value("turn_off_voltage", st.volts, "V", "computed")
        .with_value("rail_voltage", rail_v, "V", "computed")
        .with_value("wanted_rating", wanted, "V", "computed");
    if let Some(c) = st.clamp_rating {
        f = f.with_value("clamp_voltage", c.value, "V", c.source);
    }
    Some(f)
}
