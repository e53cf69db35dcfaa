//! `flyback-reversed`: a freewheel diode fitted backwards conducts from the rail in the on state
//! and shorts the supply through the switch. See `rules/flyback-reversed.md`.

use super::switch_util::{branch_ends, finding_at, label, load_device, name, net_name, rail};
use super::units::format_si;
use super::RuleContext;
use crate::analysis::Side;
use crate::circuit::DeviceId;
use crate::diagnostic::{Finding, Severity};

const RULE: &str = "flyback-reversed";

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let mut reported: Vec<DeviceId> = Vec::new();
    for sw in &cx.analysis.switches {
        for fw in sw.freewheel.iter().filter(|f| f.reversed) {
            if reported.contains(&fw.device) {
                continue;
            }
            reported.push(fw.device);
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
            let Some(mut f) = finding_at(RULE, Severity::Error, cx, fw.device, message) else {
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
