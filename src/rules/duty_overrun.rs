//! `duty-overrun`: a one-shot's pulse reaches its trigger period. See `rules/duty-overrun.md`.

use super::eseries::{self, ohms};
use super::support::timer::{
    at_state, farads_of, finding_at, label, name, percent, timing_part, ONE_SHOT_MAX_SHARE,
};
use super::units::format_si;
use super::Rule;
use super::RuleContext;
use crate::analysis::{TimerFacts, TimerMode};
use crate::diagnostic::{Finding, Severity};

/// This rule's identity: its ID, the severities it gives and its page.
pub const RULE: Rule = Rule {
    id: "duty-overrun",
    default_severity: Severity::Warning,
    grades: &[Severity::Warning],
    summary: "A one-shot's pulse reaches its trigger period",
    page: include_str!("../../rules/duty-overrun.md"),
    check: Some(check),
};

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    for t in &cx.analysis.timers {
        if t.mode == TimerMode::Monostable {
            out.extend(overrun(cx, t));
        }
    }
}

fn overrun(cx: &RuleContext<'_>, t: &TimerFacts) -> Option<Finding> {
    let trigger = t.trigger.as_ref()?;
    let width = t.high_s.as_ref()?;
    let period = &trigger.period_s;
    if period.min <= 0.0 || width.max < ONE_SHOT_MAX_SHARE * period.min {
        return None;
    }
    let timer = name(cx, t.device);
    let driver = name(cx, trigger.driver);
    let share = width.max / period.min;
    let head = format!(
        "{timer}'s longest pulse, {}{}, reaches {} of its trigger period ({} from {driver}{})",
        format_si(width.max, "s"),
        at_state(&width.max_state),
        percent(share),
        format_si(period.min, "s"),
        at_state(&period.min_state),
    );
    let message = match (t.divided_frequency_hz, t.divided_duty) {
        (Some(f), Some(d)) if width.max >= period.min => format!(
            "{head}: triggers that arrive during the pulse are skipped, so the output runs at {} with {} duty instead of {}",
            format_si(f, "Hz"),
            percent(d),
            format_si(1.0 / period.min, "Hz"),
        ),
        _ => format!(
            "{head}: the capacitor has only {} to discharge before the next trigger, so pulses come out short or are skipped",
            format_si(period.min - width.max, "s"),
        ),
    };

    let target = timing_part(cx, t).unwrap_or(t.device);
    let mut f = finding_at(RULE, RULE.severity(), cx, target, message)?;
    f = label(f, cx, t.device, &format!("{timer}: the one-shot"));
    f = label(
        f,
        cx,
        trigger.driver,
        &format!("{driver} triggers it every {}", format_si(period.min, "s")),
    );
    if let Some(c) = t.timing_capacitor {
        f = label(f, cx, c, &format!("{timer}'s timing capacitor"));
    }

    // 555 datasheet: width ≈ 1.1·R·C; keep the longest pulse under 0.9 of the period.
    let limit = ONE_SHOT_MAX_SHARE * period.min;
    let mut help = format!(
        "keep {timer}'s longest pulse under {} × {} = {}",
        ONE_SHOT_MAX_SHARE,
        format_si(period.min, "s"),
        format_si(limit, "s")
    );
    if let Some(c) = t.timing_capacitor.and_then(|c| farads_of(cx, c)) {
        if let Some(r) = eseries::round_down(limit / (1.1 * c), &eseries::E12) {
            help.push_str(&format!(
                ": the timing resistance at most {} with {} (1.1·R·C), or a smaller capacitor",
                ohms(r),
                format_si(c, "F"),
            ));
        }
    }
    f = f.with_help(help);
    f = f.with_value(
        "pulse_max",
        width.max,
        "s",
        format!("computed: longest pulse{}", at_state(&width.max_state)),
    );
    f = f.with_value(
        "trigger_period",
        period.min,
        "s",
        format!(
            "computed: shortest trigger period{}",
            at_state(&period.min_state)
        ),
    );
    f = f.with_value(
        "max_share",
        ONE_SHOT_MAX_SHARE,
        "",
        "kickback default (common practice)",
    );
    if let (Some(fd), Some(d)) = (t.divided_frequency_hz, t.divided_duty) {
        f = f.with_value(
            "divided_frequency",
            fd,
            "Hz",
            "computed: output retriggers at the first trigger after the pulse",
        );
        f = f.with_value("divided_duty", d, "", "computed");
    }
    Some(f)
}
