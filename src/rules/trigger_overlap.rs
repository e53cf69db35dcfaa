//! `trigger-overlap`: a one-shot's trigger stays low longer than its shortest pulse. See
//! `rules/trigger-overlap.md`.

use super::eseries::{self, ohms};
use super::support::timer::{
    at_state, farads_of, finding_at, is_diode, is_pot, is_resistor, label, name, ohms_of,
    timing_part, ONE_SHOT_MAX_SHARE,
};
use super::units::format_si;
use super::Rule;
use super::RuleContext;
use crate::analysis::{TimerFacts, TimerMode};
use crate::diagnostic::{Finding, Severity};

/// This rule's identity: its ID, the severities it gives and its page.
pub const RULE: Rule = Rule {
    id: "trigger-overlap",
    default_severity: Severity::Error,
    grades: &[Severity::Error],
    summary: "A one-shot's trigger stays low longer than its shortest pulse",
    page: include_str!("../../rules/trigger-overlap.md"),
    check: Some(check),
};

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    for t in &cx.analysis.timers {
        if t.mode == TimerMode::Monostable {
            out.extend(overlap(cx, t));
        }
    }
}

fn overlap(cx: &RuleContext<'_>, t: &TimerFacts) -> Option<Finding> {
    let trigger = t.trigger.as_ref()?;
    let width = t.high_s.as_ref()?;
    let low = &trigger.low_s;
    // A pulse of zero width means the discharge pin cannot empty the capacitor at all (a dead
    // short on DIS, reported by `discharge-unprotected`), not a trigger problem.
    if low.max <= width.min || width.min <= 0.0 {
        return None;
    }
    let timer = name(cx, t.device);
    let driver = name(cx, trigger.driver);
    let driver_facts = cx
        .analysis
        .timers
        .iter()
        .find(|d| d.device == trigger.driver);
    let threshold = trigger.threshold_v.min;

    // The driver's discharge resistor sets its low time; with no diode across it yet, a diode
    // shortens that low time to a spike.
    let driver_resistor = driver_facts.and_then(|d| {
        if d.discharge_path.iter().any(|&p| is_diode(cx, p)) {
            return None;
        }
        d.discharge_path
            .iter()
            .copied()
            .filter(|&p| is_resistor(cx, p) || is_pot(cx, p))
            .max_by(|a, b| {
                ohms_of(cx, *a)
                    .unwrap_or(0.0)
                    .total_cmp(&ohms_of(cx, *b).unwrap_or(0.0))
            })
    });
    let own_timing = timing_part(cx, t);
    let target = if driver_facts.is_some() {
        driver_resistor.or(own_timing).unwrap_or(t.device)
    } else {
        trigger.driver
    };

    let what = match driver_facts {
        Some(_) => format!("{driver}'s low time"),
        None => format!("{driver}'s pulse"),
    };
    let message = format!(
        "{timer}'s trigger stays below its {} threshold for up to {} each period ({what}{}), longer than {timer}'s shortest pulse of {}{}: the output follows the trigger and the one-shot's width is lost",
        format_si(threshold, "V"),
        format_si(low.max, "s"),
        also(&low.max_state),
        format_si(width.min, "s"),
        at_state(&width.min_state),
    );

    let mut help = Vec::new();
    if let Some(r) = driver_resistor {
        help.push(format!(
            "fit a diode across {} (anode on the capacitor side, cathode at DIS) so {driver}'s low time shrinks to a short spike",
            name(cx, r)
        ));
    } else if driver_facts.is_none() {
        help.push(format!(
            "make {driver}'s time below {} shorter than {}",
            format_si(threshold, "V"),
            format_si(width.min, "s")
        ));
    }
    help.push(format!(
        "couple {timer}'s trigger through a 1 nF capacitor with a 10 kΩ pull-up to its VCC so it sees only the falling edge"
    ));
    if let Some(c) = t.timing_capacitor.and_then(|c| farads_of(cx, c)) {
        // 555 datasheet: width ≈ 1.1·R·C. The pulse must outlast the trigger and still end
        // before 0.9 of the trigger period (see `duty-overrun`).
        let lo = eseries::round_up(low.max / (1.1 * c), &eseries::E12);
        let hi = eseries::round_down(
            ONE_SHOT_MAX_SHARE * trigger.period_s.min / (1.1 * c),
            &eseries::E12,
        );
        if let (Some(lo), Some(hi)) = (lo, hi) {
            if lo <= hi {
                let span = if lo == hi {
                    ohms(lo)
                } else {
                    format!("between {} and {}", ohms(lo), ohms(hi))
                };
                let pot = t.charge_path.iter().copied().find(|&p| is_pot(cx, p));
                help.push(match pot {
                    Some(p) => format!(
                        "or keep {timer}'s timing resistance {span} over {}'s travel (1.1·R·C with {})",
                        name(cx, p),
                        format_si(c, "F")
                    ),
                    None => format!(
                        "or make {timer}'s timing resistance {span} (1.1·R·C with {})",
                        format_si(c, "F")
                    ),
                });
            }
        }
    }

    let mut f = finding_at(RULE, RULE.severity(), cx, target, message)?;
    f = label(
        f,
        cx,
        t.device,
        &format!(
            "{timer}: the one-shot, shortest pulse {}",
            format_si(width.min, "s")
        ),
    );
    f = label(
        f,
        cx,
        trigger.driver,
        &format!(
            "{driver} drives the trigger: below {} for up to {}",
            format_si(threshold, "V"),
            format_si(low.max, "s")
        ),
    );
    for &v in &trigger.via {
        f = label(f, cx, v, "between the driver and TRIG");
    }
    if let Some(p) = own_timing {
        f = label(f, cx, p, &format!("sets {timer}'s pulse"));
    }
    if let Some(c) = t.timing_capacitor {
        f = label(f, cx, c, &format!("{timer}'s timing capacitor"));
    }
    f = f.with_help(help.join("; "));
    f = f.with_value(
        "trigger_low",
        low.max,
        "s",
        format!(
            "computed: time below the trigger threshold{}",
            at_state(&low.max_state)
        ),
    );
    f = f.with_value(
        "pulse_min",
        width.min,
        "s",
        format!("computed: shortest pulse{}", at_state(&width.min_state)),
    );
    f = f.with_value(
        "trigger_threshold",
        threshold,
        "V",
        "computed: half the control voltage (1/3 VCC with the internal ladder)",
    );
    Some(f)
}

/// `, STATE` or nothing.
fn also(state: &str) -> String {
    match at_state(state).trim() {
        "" => String::new(),
        s => format!(", {}", s.trim_start_matches('(').trim_end_matches(')')),
    }
}
