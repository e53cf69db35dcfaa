//! `gate-underdrive`: the gate is driven too weakly to enhance the switch at the load current.
//! See `rules/gate-underdrive.md`.
//!
//! The square law: in the triode region `I_D = k·((V_GS − V_th)·V_DS − V_DS²/2)`, which stops
//! growing at `V_DS = V_GS − V_th`, where `I_D = k/2·(V_GS − V_th)²`. A switch carrying `I`
//! therefore needs `V_GS > V_th + √(2·I/k)` just to stay out of saturation; one more volt keeps
//! its on-resistance low.

use super::support::switch::{
    drive_level, finding_at, held_off, in_conduction_sense, is_switch, kind, label, load_device,
    load_of, name, rated_or, saturated_current, shorted_through,
};
use super::units::format_si;
use super::Rule;
use super::RuleContext;
use crate::analysis::SwitchFacts;
use crate::circuit::{Kind, Rated};
use crate::diagnostic::{Finding, Severity};

/// This rule's identity: its ID, the severities it gives and its page.
pub const RULE: Rule = Rule {
    id: "gate-underdrive",
    default_severity: Severity::Error,
    grades: &[Severity::Error, Severity::Note],
    summary: "The gate is driven too weakly to enhance the switch at the load current",
    page: include_str!("../../rules/gate-underdrive.md"),
    check: Some(check),
};
/// Margin above the edge of the triode region (DESIGN: 1 V).
const MARGIN_V: f64 = 1.0;
/// A drive within this share of `vgs_rated` counts as the rated drive: the on-resistance rises
/// by well under 20 % (square law), not worth a note.
const RATED_SHARE: f64 = 0.9;

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    if cx.analysis.switches.is_empty() {
        return;
    }
    let unreferenced = super::support::switch::reference::switches_without_reference(cx);
    for sw in &cx.analysis.switches {
        let Some(k) = kind(cx, sw.device).filter(|k| k.is_mos()) else {
            continue;
        };
        if held_off(cx, sw) || !is_switch(sw) || unreferenced.binary_search(&sw.device).is_ok() {
            continue;
        }
        let boosted = sw.driver.as_ref().is_some_and(|d| d.boosted);
        if sw.follower && !boosted {
            out.extend(follower(cx, sw, k));
        } else {
            out.extend(weak_drive(cx, sw, k));
        }
    }
}

fn thresholds(cx: &RuleContext<'_>, sw: &SwitchFacts) -> (Rated, Rated) {
    let th = rated_or(
        cx,
        sw.device,
        "vgs_th_max",
        4.0,
        "standard-threshold default (common practice)",
    );
    let rated = rated_or(
        cx,
        sw.device,
        "vgs_rated",
        10.0,
        "standard-threshold default (common practice)",
    );
    (th, rated)
}

/// The current the switch must carry and the state it is taken in: the largest of what the DC
/// engine finds through the switch and through its load, and what the load draws with the
/// switch saturated (the analysis's).
fn load_current(cx: &RuleContext<'_>, sw: &SwitchFacts) -> Option<(f64, String)> {
    let through_switch = sw
        .current_a
        .as_ref()
        .filter(|_| !shorted_through(cx, sw))
        .map(|r| (r.max, r.max_state.clone()));
    let through_load = load_of(cx, sw)
        .and_then(|l| l.current_a.as_ref())
        .map(|r| (r.max, r.max_state.clone()));
    // A starved switch limits its own current; the load wants what it draws with the switch
    // saturated.
    let full_on = saturated_current(sw).map(|r| (r.max, r.max_state.clone()));
    [through_switch, through_load, full_on]
        .into_iter()
        .flatten()
        .reduce(|a, b| if b.0 > a.0 { b } else { a })
        .filter(|(i, _)| *i > 0.0)
}

fn follower(cx: &RuleContext<'_>, sw: &SwitchFacts, k: Kind) -> Option<Finding> {
    let s = name(cx, sw.device);
    let (channel, place, source_follows) = if k == Kind::Pmos {
        (
            "a P-channel",
            "on the low side",
            "its source sits on the load, not on the rail",
        )
    } else {
        (
            "an N-channel",
            "on the high side",
            "its source sits on the load, not on ground",
        )
    };
    let mut message = format!(
        "{s} is {channel} MOSFET {place} with no bootstrap or charge pump: {source_follows}, so \
         the source follows the gate and the switch runs as a source follower"
    );
    let vgs = sw.vgs_on_v.as_ref().map(|r| in_conduction_sense(r, k));
    if let Some(d) = &vgs {
        message.push_str(&format!(
            " with only {} between gate and source ({})",
            format_si(d.weakest, "V"),
            d.weakest_state
        ));
    }
    let vds = sw.vds_on_v.as_ref().map(|r| r.max.abs());
    let power = sw.dissipation_w.as_ref().map(|r| r.max);
    match (vds, power) {
        (Some(v), Some(p)) => message.push_str(&format!(
            ": it drops {} and dissipates {} instead of switching",
            format_si(v, "V"),
            format_si(p, "W")
        )),
        (Some(v), None) => message.push_str(&format!(
            ": it drops {} instead of switching",
            format_si(v, "V")
        )),
        (None, Some(p)) => message.push_str(&format!(
            ": it dissipates {} instead of switching",
            format_si(p, "W")
        )),
        (None, None) => message.push_str(", in its linear region instead of switching"),
    }
    let mut f = finding_at(RULE, RULE.grade(Severity::Error), cx, sw.device, message)?;
    if let Some(d) = &sw.driver {
        f = label(
            f,
            cx,
            d.device,
            &format!("drives {s}'s gate, referred to ground, not to {s}'s source"),
        );
    }
    if let Some(l) = load_device(cx, sw) {
        f = label(
            f,
            cx,
            l,
            "the load between the switch's source and the return rail",
        );
    }
    let help = if k == Kind::Pmos {
        format!(
            "put {s} on the high side (source to the rail) or use an N-channel MOSFET on the low \
             side; a low-side P-channel needs its gate driven below ground"
        )
    } else {
        format!(
            "move {s} to the low side (source to ground, the load between the rail and its \
             drain), or use a P-channel MOSFET with its source on the rail and its gate pulled \
             down by an NPN or N-channel level shifter (10 kΩ gate-source pull-up), or a \
             high-side gate driver with a bootstrap"
        )
    };
    f = f.with_help(help);
    if let Some(d) = vgs {
        f = f.with_value("vgs_on", d.weakest, "V", "computed");
    }
    if let Some(v) = vds {
        f = f.with_value("vds_on", v, "V", "computed");
    }
    if let Some(p) = power {
        f = f.with_value("dissipation", p, "W", "computed");
    }
    Some(f)
}

fn weak_drive(cx: &RuleContext<'_>, sw: &SwitchFacts, k: Kind) -> Option<Finding> {
    let drive = in_conduction_sense(sw.vgs_on_v.as_ref()?, k);
    let vgs = drive.weakest;
    let state = &drive.weakest_state;
    let (th, rated) = thresholds(cx, sw);
    let gain = sw.gain.as_ref().filter(|g| !g.placeholder);
    let current = load_current(cx, sw);
    let s = name(cx, sw.device);
    let driver = sw.driver.as_ref().map(|d| d.device);
    let from = driver.map_or_else(String::new, |d| format!(" from {}", name(cx, d)));

    let (need, reason, overdrive) = match (gain, &current) {
        (Some(g), Some((i, i_state))) if g.k > 0.0 => {
            let i = *i;
            let ov = (2.0 * i / g.k).sqrt();
            (
                th.value + ov + MARGIN_V,
                format!(
                    "to stay in its triode region at {} ({i_state}) it needs vgs_th_max {} + \
                     √(2·I/k) {} + {} margin = {} (k = {} A/V² {}); below that it saturates, its \
                     on-resistance climbs and it heats",
                    format_si(i, "A"),
                    format_si(th.value, "V"),
                    format_si(ov, "V"),
                    format_si(MARGIN_V, "V"),
                    format_si(th.value + ov + MARGIN_V, "V"),
                    super::units::sig3(g.k),
                    g.how
                ),
                Some(ov),
            )
        }
        _ => {
            let mid = 0.5 * (th.value + rated.value);
            (
                mid,
                format!(
                    "with its load current or gain unknown, the bar is halfway between its \
                     worst-case threshold {} and the {} its on-resistance is rated at: {}",
                    format_si(th.value, "V"),
                    format_si(rated.value, "V"),
                    format_si(mid, "V")
                ),
                None,
            )
        }
    };

    // The analysis's channel resistance at the actual drive, else the square law here.
    let estimate = sw
        .rds_on_ohm
        .as_ref()
        .map(|r| r.max)
        .or_else(|| gain.and_then(|g| g.rds_at(vgs)));
    let th_min = rated_or(
        cx,
        sw.device,
        "vgs_th_min",
        2.0,
        "standard-threshold default (common practice)",
    );
    if vgs < th_min.value && sw.driver.is_none() {
        // No DC drive reaches the gate at all (a coupling capacitor, an open pin): that is
        // `gate-floating`'s and `pin-unconnected`'s finding, not a weak drive.
        return None;
    }
    let (severity, message) = if vgs < th_min.value {
        let load = load_device(cx, sw).map_or_else(|| "its load".to_string(), |l| name(cx, l));
        (
            RULE.grade(Severity::Error),
            format!(
                "{s}'s gate gets only {}{from} ({state}): below its lowest threshold of {}, so \
                 {s} never turns on and {load} never runs; it needs {} ({reason_short})",
                format_si(vgs, "V"),
                format_si(th_min.value, "V"),
                format_si(need, "V"),
                reason_short = if overdrive.is_some() {
                    "vgs_th_max + √(2·I/k) + 1 V at the load's current"
                } else {
                    "halfway between vgs_th_max and vgs_rated"
                }
            ),
        )
    } else if vgs < need {
        let mut m = format!(
            "{s}'s gate gets only {}{from} ({state}): {reason}",
            format_si(vgs, "V")
        );
        if let Some(p) = sw.dissipation_w.as_ref().filter(|_| sw.linear_region) {
            m.push_str(&format!(
                "; the DC engine finds it out of its triode region, dissipating {}",
                format_si(p.max, "W")
            ));
        }
        (RULE.grade(Severity::Error), m)
    } else if vgs < RATED_SHARE * rated.value {
        let mut m = format!(
            "{s}'s gate gets {}{from} ({state}), below the {} its on-resistance is rated at",
            format_si(vgs, "V"),
            format_si(rated.value, "V")
        );
        if let Some(r) = estimate {
            m.push_str(&format!(
                ": expect about {} on-resistance (1/(k·(V_GS − V_th)), cold die)",
                format_si(r, "Ω")
            ));
            if let Some(rds) = cx
                .circuit
                .devices()
                .get(sw.device)
                .and_then(|d| d.data.get("rds_on"))
            {
                m.push_str(&format!(" instead of {}", format_si(rds.value, "Ω")));
            }
        }
        (RULE.grade(Severity::Note), m)
    } else {
        return None;
    };

    let mut f = finding_at(RULE, severity, cx, sw.device, message)?;
    if let Some(d) = driver {
        let level = drive_level(cx, d).map_or_else(String::new, |l| {
            format!(" ({} high)", format_si(l.high, "V"))
        });
        f = label(f, cx, d, &format!("drives {s}'s gate{level}"));
    }
    if let Some(l) = load_device(cx, sw) {
        f = label(f, cx, l, &format!("the load {s} switches"));
    }
    f = f.with_help(help(cx, sw, &s, need, severity));
    f = f
        .with_value("vgs_on", vgs, "V", "computed")
        .with_value("vgs_th_max", th.value, "V", th.source)
        .with_value("vgs_rated", rated.value, "V", rated.source)
        .with_value("required_vgs", need, "V", "computed");
    if let Some((i, _)) = current {
        f = f.with_value("load_current", i, "A", "computed");
    }
    if let Some(g) = gain {
        f = f.with_value(
            "k",
            g.k,
            "A/V²",
            format!("computed {} ({})", g.how, g.source),
        );
    }
    if let Some(ov) = overdrive {
        f = f.with_value("overdrive", ov, "V", "computed");
    }
    if let Some(r) = estimate {
        f = f.with_value("rds_on_estimate", r, "Ω", "computed");
    }
    Some(f)
}

fn help(cx: &RuleContext<'_>, sw: &SwitchFacts, s: &str, need: f64, severity: Severity) -> String {
    let driver = sw.driver.as_ref().map(|d| d.device);
    let timer = driver.filter(|&d| kind(cx, d).is_some_and(Kind::is_timer));
    let raise = match timer {
        Some(t) => {
            let drop = rated_or(cx, t, "out_high_drop", 1.7, "timer-555 default");
            format!(
                ", or run {} from at least {} so its output reaches {}",
                name(cx, t),
                format_si(need + drop.value, "V"),
                format_si(need, "V")
            )
        }
        None => format!(
            ", or drive the gate from a gate driver or a level shifter off the rail that gives at \
             least {}",
            format_si(need, "V")
        ),
    };
    if severity == Severity::Note {
        format!(
            "fine if {s} stays cool; a logic-level MOSFET (on-resistance rated at 4.5 V) or a \
             10 V gate drive brings it to its rated on-resistance"
        )
    } else {
        format!(
            "use a logic-level MOSFET whose on-resistance is rated at the drive it gets (rated at \
             4.5 V or lower, vgs_th_max 2 V or lower){raise}"
        )
    }
}
