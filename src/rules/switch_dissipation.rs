//! `switch-dissipation`: a switch's conduction loss exceeds what its package sheds. See
//! `rules/switch-dissipation.md`.
//!
//! The loss is the analysis's: `I²·Rds(on)·D` with Rds(on) at the actual V_GS and × 1.5 for a
//! hot die (common practice), or `V_CE·I_C·D` for a BJT, at the worst state and duty.

use super::support::switch::{
    duty_text, finding_at, in_conduction_sense, is_switch, kind, label, load_device, name,
    rated_or, shorted_through,
};
use super::units::format_si;
use super::Rule;
use super::RuleContext;
use crate::analysis::SwitchFacts;
use crate::diagnostic::{Finding, Severity};

/// This rule's identity: its ID, the severities it gives and its page.
pub const RULE: Rule = Rule {
    id: "switch-dissipation",
    default_severity: Severity::Warning,
    grades: &[Severity::Warning],
    summary: "A switch's conduction loss exceeds what its package can shed",
    page: include_str!("../../rules/switch-dissipation.md"),
    check: Some(check),
};
/// Hot-die factor on a MOSFET's on-resistance (common practice).
const HOT_DIE: f64 = 1.5;

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    for sw in cx.analysis.switches.iter().filter(|s| is_switch(s)) {
        out.extend(finding(cx, sw));
    }
}

fn finding(cx: &RuleContext<'_>, sw: &SwitchFacts) -> Option<Finding> {
    if shorted_through(cx, sw) {
        return None;
    }
    let loss = sw.dissipation_w.as_ref()?;
    let p = loss.max;
    let k = kind(cx, sw.device)?;
    let limit = rated_or(
        cx,
        sw.device,
        "pd_max",
        1.0,
        "default pd_max: a TO-220 in free air (common practice)",
    );
    if p <= limit.value {
        return None;
    }
    let s = name(cx, sw.device);
    let current = sw
        .current_a
        .as_ref()
        .map(|r| r.max.abs())
        .filter(|i| *i > 0.0);
    let duty = sw.duty.as_ref().map_or(1.0, |d| d.max.clamp(0.0, 1.0));
    let vgs = sw
        .vgs_on_v
        .as_ref()
        .map(|r| in_conduction_sense(r, k).weakest);
    // The analysis's on-resistance at the actual drive, from the gain it published.
    let rds = if k.is_mos() && !sw.linear_region && !sw.follower {
        sw.rds_on_ohm
            .as_ref()
            .map(|r| r.max)
            .or_else(|| sw.gain.as_ref().zip(vgs).and_then(|(g, v)| g.rds_at(v)))
    } else {
        None
    };
    let mut how = Vec::new();
    if let Some(i) = current {
        how.push(format!("I = {}", format_si(i, "A")));
    }
    if let (Some(r), Some(v)) = (rds, vgs) {
        let from = sw
            .gain
            .as_ref()
            .map_or_else(String::new, |g| format!(", k {} ({})", g.how, g.source));
        how.push(format!(
            "on-resistance about {} at V_GS {} × {HOT_DIE} hot die{from}",
            format_si(r, "Ω"),
            format_si(v, "V")
        ));
    }
    if k.is_bjt() || rds.is_none() {
        if let Some(v) = sw.vds_on_v.as_ref() {
            let which = if k.is_bjt() { "V_CE" } else { "V_DS" };
            how.push(format!("{which} = {}", format_si(v.max.abs(), "V")));
        }
    }
    if let Some(d) = &sw.duty {
        how.push(format!("duty {}", duty_text(d)));
    }
    let detail = if how.is_empty() {
        String::new()
    } else {
        format!(", {}", how.join(", "))
    };
    let linear = if sw.linear_region || sw.follower {
        "; it runs in its linear region rather than as a switch"
    } else {
        ""
    };
    let message = format!(
        "{s} dissipates about {} ({}{detail}): above the {} its package sheds{linear}",
        format_si(p, "W"),
        loss.max_state,
        format_si(limit.value, "W")
    );
    let mut f = finding_at(RULE, RULE.severity(), cx, sw.device, message)?;
    if let Some(l) = load_device(cx, sw) {
        f = label(f, cx, l, "the load whose current it carries");
    }
    let help = match (k.is_mos(), current) {
        (true, Some(i)) if !sw.linear_region && !sw.follower => {
            let wanted = limit.value / (HOT_DIE * i * i * duty.max(1e-3));
            format!(
                "use a MOSFET with at most {} on-resistance at the gate drive it gets (so \
                 1.5·I²·R·D stays under {}), drive its gate harder, or mount {s} on a heatsink",
                format_si(wanted, "Ω"),
                format_si(limit.value, "W")
            )
        }
        (true, _) => format!(
            "make {s} switch fully (see gate-underdrive), then check its loss again; or mount it \
             on a heatsink"
        ),
        (false, _) => format!(
            "saturate {s} with I_C/10 of base current, or use a logic-level MOSFET; or mount it \
             on a heatsink"
        ),
    };
    f = f
        .with_help(help)
        .with_value("dissipation", p, "W", "computed")
        .with_value("pd_max", limit.value, "W", limit.source);
    if let Some(i) = current {
        f = f.with_value("current", i, "A", "computed");
    }
    if let Some(r) = rds {
        f = f.with_value("rds_on_at_vgs", r, "Ω", "computed");
    }
    Some(f)
}
