//! `flyback-reversed`: a freewheel diode fitted backwards conducts from the rail in the on state
//! and shorts the supply through the switch. See `rules/flyback-reversed.md`.

use super::support::switch::{
    branch_ends, finding_at, is_switch, label, load_device, name, net_name, rail,
};
use super::units::format_si;
use super::Rule;
use super::RuleContext;
use crate::analysis::{Freewheel, FreewheelKind, Side, SwitchFacts};
use crate::circuit::DeviceId;
use crate::diagnostic::{Finding, Severity};

/// This rule's identity: its ID, the severities it gives and its page.
pub const RULE: Rule = Rule {
    id: "flyback-reversed",
    default_severity: Severity::Error,
    grades: &[Severity::Error],
    summary: "A freewheel diode is fitted backwards and shorts the supply through the switch",
    page: include_str!("../../rules/flyback-reversed.md"),
    check: Some(check),
};

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let mut reported: Vec<DeviceId> = Vec::new();
    for sw in cx.analysis.switches.iter().filter(|s| is_switch(s)) {
        for fw in sw.freewheel.iter().filter(|f| f.reversed) {
            if reported.contains(&fw.device) {
                continue;
            }
            reported.push(fw.device);
            if fw.kind == FreewheelKind::Clamp {
                out.extend(reversed_clamp(cx, sw, fw));
                continue;
            }
            let diode = name(cx, fw.device);
            let switch = name(cx, sw.device);
            let load = load_device(cx, sw);
            let load_name = load.map_or_else(|| "the load".to_string(), |l| name(cx, l));
            let rail = rail(cx, sw);
            let rail_text = rail.as_ref().map_or_else(
                || "the rail".to_string(),
                |r| format!("the {} rail", format_si(r.v.max, "V")),
            );
            let mut message = format!(
                "{diode} is fitted backwards across {load_name}: when {switch} turns on it \
                 conducts from {rail_text} straight through {switch}"
            );
            match fw.on_state_current_a {
                Some(i) => message.push_str(&format!(
                    ", and the DC engine finds {} in it — a short across the supply that burns \
                     {diode} or {switch}",
                    format_si(i.abs(), "A")
                )),
                None => message
                    .push_str(", a short across the supply that burns the diode or the switch"),
            }
            let Some(mut f) = finding_at(RULE, RULE.severity(), cx, fw.device, message) else {
                continue;
            };
            f = label(
                f,
                cx,
                sw.device,
                &format!("{switch} closes the short when it turns on"),
            );
            if let Some(l) = load {
                f = label(
                    f,
                    cx,
                    l,
                    "the diode belongs across this load, the other way round",
                );
            }
            if let Some(s) = rail.as_ref().and_then(|r| r.supply) {
                f = label(f, cx, s, "the supply it shorts");
            }
            let ends = branch_ends(cx, sw);
            let help = match (sw.side, ends) {
                (Side::Low, Some(e)) => format!(
                    "turn {diode} round: cathode to {} (the rail end), anode to {} (the switched \
                     node)",
                    net_name(cx, e.far),
                    net_name(cx, e.switched)
                ),
                (Side::High, Some(e)) => format!(
                    "turn {diode} round: cathode to {} (the switched node), anode to {}",
                    net_name(cx, e.switched),
                    net_name(cx, e.far)
                ),
                _ => format!(
                    "turn {diode} round so that its cathode sits on the end of {load_name} that \
                     is positive while {switch} conducts"
                ),
            };
            f = f.with_help(help);
            if let Some(i) = fw.on_state_current_a {
                f = f.with_value("on_state_current", i.abs(), "A", "computed");
            }
            if let Some(r) = &rail {
                f = f.with_value("rail_voltage", r.v.max, "V", "computed");
            }
            out.push(f);
        }
    }
}

/// A TVS or zener across the switch, fitted so it conducts forward while the switch is off: it
/// holds the load on and clamps nothing at turn-off.
fn reversed_clamp(cx: &RuleContext<'_>, sw: &SwitchFacts, fw: &Freewheel) -> Option<Finding> {
    let clamp = name(cx, fw.device);
    let switch = name(cx, sw.device);
    let load = load_device(cx, sw);
    let load_name = load.map_or_else(|| "the load".to_string(), |l| name(cx, l));
    let mut message = format!(
        "{clamp} is fitted backwards across {switch}: it conducts forward while {switch} is \
         off"
    );
    if let Some(i) = fw.off_state_current_a {
        message.push_str(&format!(
            ", {} through {load_name}",
            format_si(i.abs(), "A")
        ));
    }
    message.push_str(&format!(
        ", so {load_name} never turns off, and at turn-off it clamps nothing"
    ));
    let mut f = finding_at(RULE, RULE.severity(), cx, fw.device, message)?;
    f = label(f, cx, sw.device, "the switch it bypasses");
    if let Some(l) = load {
        f = label(f, cx, l, "stays energised");
    }
    let node = |n: Option<crate::circuit::NetId>| n.map(|n| net_name(cx, n).to_string());
    let help = match (node(sw.switched_net), node(sw.anchor_net)) {
        (Some(hi), Some(lo)) if sw.side == Side::Low => {
            format!("turn {clamp} round: cathode to {hi} (the drain), anode to {lo}")
        }
        _ => format!(
            "turn {clamp} round so that it blocks while {switch} is off and breaks down only \
             above the rail"
        ),
    };
    f = f.with_help(help);
    if let Some(i) = fw.off_state_current_a {
        f = f.with_value("off_state_current", i.abs(), "A", "computed");
    }
    Some(f)
}
