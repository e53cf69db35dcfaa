//! `timer-stuck`: a timer phase can never reach its threshold. See `rules/timer-stuck.md`.

use super::eseries::{self, ohms};
use super::support::timer::{at_state, finding_at, is_pot, is_resistor, label, name, ohms_of};
use super::units::format_si;
use super::Rule;
use super::RuleContext;
use crate::analysis::{StuckPhase, TimerFacts, TimerMode};
use crate::diagnostic::{Finding, Severity};

/// This rule's identity: its ID, the severities it gives and its page.
pub const RULE: Rule = Rule {
    id: "timer-stuck",
    default_severity: Severity::Error,
    grades: &[Severity::Error],
    summary: "A timer phase can never reach its threshold",
    page: include_str!("../../rules/timer-stuck.md"),
    check: Some(check),
};

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    for t in &cx.analysis.timers {
        if let Some(s) = &t.stuck {
            out.extend(stuck(cx, t, s));
        }
    }
}

fn stuck(cx: &RuleContext<'_>, t: &TimerFacts, s: &StuckPhase) -> Option<Finding> {
    let timer = name(cx, t.device);
    let cap = t
        .timing_capacitor
        .map_or_else(|| "the timing capacitor".to_string(), |c| name(cx, c));
    let charging = s.phase == "high";
    let (phase, comparator, consequence) = match (charging, t.mode) {
        (true, TimerMode::Monostable) => (
            "pulse",
            "threshold",
            "once triggered, its output stays high for good",
        ),
        (true, _) => (
            "high phase",
            "threshold",
            "its output sticks high: no oscillation",
        ),
        (false, _) => (
            "low phase",
            "trigger threshold",
            "its output sticks low: no oscillation",
        ),
    };
    let resistive = |d: &usize| is_resistor(cx, *d) || is_pot(cx, *d);
    // Bias-limited: the big resistor comes first. Otherwise a pot at its end is the usual cause.
    let pot_first = s.bias_a.is_none() || s.discharge_limited;
    // With nothing but a blocking diode in the capacitor's path, the diode is the part to
    // change (usually fitted the wrong way round).
    let blocker = s.devices.first().copied().filter(|&d| {
        s.bias_a.is_none()
            && cx
                .circuit
                .devices()
                .get(d)
                .is_some_and(|x| x.kind.is_diode_like())
    });
    let target = blocker
        .or_else(|| {
            s.devices
                .iter()
                .copied()
                .find(|&d| pot_first && is_pot(cx, d))
        })
        .or_else(|| s.devices.iter().copied().find(resistive))
        .or(t.timing_capacitor)
        .unwrap_or(t.device);
    let target_name = name(cx, target);
    let settle = format!(
        "{cap} settles at {}, {} the {} {comparator}",
        format_si(s.settles_v, "V"),
        if charging { "short of" } else { "above" },
        format_si(s.threshold_v, "V"),
    );
    let message = match (s.bias_a, s.bias_ohms) {
        (Some(i), Some(r)) => format!(
            "{timer} never ends its {phase}{}: the {} input's {} bias current through {} of timing resistance ({target_name}) holds it back, so {settle}; {consequence}",
            at_state(&s.state),
            if charging { "threshold" } else { "trigger" },
            format_si(i, "A"),
            ohms(r),
        ),
        _ => match blocker {
            Some(_) => format!(
                "{timer} never ends its {phase}{}: {}: {target_name} blocks the capacitor's \
                 path in that phase (it points against the current), so {cap} sits at {}, {} the \
                 {} {comparator}; {consequence}",
                at_state(&s.state),
                s.reason,
                format_si(s.settles_v, "V"),
                if charging { "short of" } else { "above" },
                format_si(s.threshold_v, "V"),
            ),
            None => format!(
                "{timer} never ends its {phase}{}: {}; {settle}, so {consequence}",
                at_state(&s.state),
                s.reason,
            ),
        },
    };

    let mut f = finding_at(RULE, RULE.severity(), cx, target, message)?;
    f = label(f, cx, t.device, &format!("{timer}: its {phase} never ends"));
    for &d in s.devices.iter().filter(|&&d| d != target).take(4) {
        f = label(f, cx, d, "in the capacitor's path in that phase");
    }
    if let Some(c) = t.timing_capacitor {
        f = label(
            f,
            cx,
            c,
            &format!("settles at {}", format_si(s.settles_v, "V")),
        );
    }

    let help = match (s.bias_a, s.bias_ohms) {
        (Some(i), Some(r)) if i > 0.0 => {
            // 555 datasheet: the largest timing resistance is (V∞ − V_threshold)/I_bias; keep
            // half of it for margin and scale the capacitor up for the same time.
            let headroom = if charging {
                s.settles_v + i * r - s.threshold_v
            } else {
                s.threshold_v - (s.settles_v - i * r)
            };
            let limit = headroom / i;
            let now = ohms_of(cx, target).unwrap_or(r);
            let suggest = eseries::round_down((0.5 * limit).min(now), &eseries::E12);
            match suggest {
                Some(new) if new < now => format!(
                    "the timing resistance must stay well under {} ({} headroom / {}): make {target_name} {} and raise {cap} by {}× for the same time",
                    ohms(limit),
                    format_si(headroom, "V"),
                    format_si(i, "A"),
                    ohms(new),
                    super::units::sig3(now / new),
                ),
                _ => format!(
                    "the timing resistance must stay well under {}; use a smaller resistance and a larger capacitor",
                    ohms(limit)
                ),
            }
        }
        _ if blocker.is_some() => format!(
            "check {target_name}'s orientation: fitted the other way round it conducts {}",
            if charging {
                format!("from the supply toward {cap}")
            } else {
                format!("from {cap} toward the discharge pin")
            }
        ),
        _ if s.discharge_limited => format!(
            "the discharge pin needs resistance between DIS and the supply: keep {target_name} from reaching zero with a fixed resistor in series (see discharge-unprotected for its value)"
        ),
        _ if charging => format!(
            "give {cap} a charging path that reaches above the {} threshold (a resistor from the supply, or a control voltage below what the network reaches)",
            format_si(s.threshold_v, "V")
        ),
        _ => format!(
            "give {cap} a discharge path that pulls it below the {} trigger threshold (a resistor to DIS, with resistance between DIS and the supply)",
            format_si(s.threshold_v, "V")
        ),
    };
    f = f.with_help(help);
    f = f.with_value(
        "settles",
        s.settles_v,
        "V",
        format!("computed: DC solve of the {phase}{}", at_state(&s.state)),
    );
    f = f.with_value(
        "threshold",
        s.threshold_v,
        "V",
        "computed: the control voltage (2/3 VCC) or half of it",
    );
    if let Some(i) = s.bias_a {
        let source = cx
            .circuit
            .devices()
            .get(t.device)
            .and_then(|d| {
                d.data.get(if charging {
                    "threshold_bias_current"
                } else {
                    "trigger_bias_current"
                })
            })
            .map_or_else(
                || "built-in default (from memory)".to_string(),
                |r| r.source.clone(),
            );
        f = f.with_value("bias_current", i, "A", source);
    }
    if let Some(r) = s.bias_ohms {
        f = f.with_value(
            "timing_resistance",
            r,
            "Ω",
            "computed: Thevenin resistance at the capacitor",
        );
    }
    Some(f)
}
