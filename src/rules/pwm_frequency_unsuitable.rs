//! `pwm-frequency-unsuitable`: the PWM frequency does not suit the load or the gate drive.
//! See `rules/pwm-frequency-unsuitable.md`.
//!
//! Two cases, both read from the analysis's facts:
//! - a motor whose PWM period exceeds its L/R: the winding current chops within each period
//!   (the ripple is the closed-form peak-to-peak current of the analysis) and the motor cogs;
//! - a MOSFET whose gate edges, from the drive's source resistance and the gate's input
//!   capacitance or charge, take more than 5 % of the period: it spends that time half on,
//!   and the switching loss `½·V·I·(t_r + t_f)·f` follows.

use super::support::switch::{duty_text, finding_at, is_pwm, label, name, SwitchIndex};
use super::units::{format_si, percent};
use super::Rule;
use super::RuleContext;
use crate::analysis::{LoadFacts, SwitchFacts};
use crate::circuit::Kind;
use crate::diagnostic::{Finding, Severity};

/// This rule's identity: its ID, the severities it gives and its page.
pub const RULE: Rule = Rule {
    id: "pwm-frequency-unsuitable",
    default_severity: Severity::Warning,
    grades: &[Severity::Warning],
    summary: "The PWM period is longer than the motor's L/R, or too short for the gate's edges",
    page: include_str!("../../rules/pwm-frequency-unsuitable.md"),
    check: Some(check),
};
/// Share of the period a gate edge may take (common practice: beyond a few percent the switch
/// spends a noticeable part of each period half on).
const EDGE_SHARE: f64 = 0.05;
/// Lowest frequency that counts as a PWM rather than an on/off command (as `pwm-audible`).
const PWM_MIN_HZ: f64 = 20.0;

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let switches = SwitchIndex::new(cx);
    for load in &cx.analysis.loads {
        out.extend(chopped(cx, &switches, load));
    }
    for sw in &cx.analysis.switches {
        out.extend(slow_gate(cx, sw));
    }
}

/// A motor whose current chops: the PWM period (at the lowest frequency) exceeds τ = L/R.
fn chopped(cx: &RuleContext<'_>, switches: &SwitchIndex<'_>, load: &LoadFacts) -> Option<Finding> {
    if load.kind != Kind::DcMotor {
        return None;
    }
    let f = load.frequency_hz.as_ref().filter(|f| f.min >= PWM_MIN_HZ)?;
    let duty = load.duty.as_ref().filter(|d| d.min < 1.0 && d.max > 0.0)?;
    let tau = load.time_constant_s.filter(|t| *t > 0.0)?;
    let period = 1.0 / f.min;
    if period <= tau {
        return None;
    }
    let ripple = load.ripple_a.as_ref()?;
    let l = name(cx, load.device);
    let mut message = format!(
        "{l} is switched with a {} period ({}, {}) against its L/R of {}: its current chops \
         within each period, swinging {} peak to peak ({}, from the R-L current's closed form), \
         so the motor cogs and its winding runs hotter than the average current suggests",
        format_si(period, "s"),
        format_si(f.min, "Hz"),
        f.min_state,
        format_si(tau, "s"),
        format_si(ripple.max, "A"),
        ripple.max_state
    );
    if let Some(i) = load.current_a.as_ref().filter(|i| i.max > 0.0) {
        message.push_str(&format!(
            " (on-state current {}, duty {})",
            format_si(i.max, "A"),
            duty_text(duty)
        ));
    }
    let mut finding = finding_at(RULE, RULE.severity(), cx, load.device, message)?;
    let switch = load.switch.and_then(|s| switches.get(s));
    let driver = switch
        .and_then(|s| s.driver.as_ref())
        .map(|d| d.control.unwrap_or(d.device))
        .or(load.driven_by);
    if let Some(s) = load.switch {
        finding = label(finding, cx, s, &format!("switches {l}"));
    }
    if let Some(d) = driver {
        finding = label(finding, cx, d, "sets the PWM frequency");
    }
    // A period of a third of τ keeps the ripple under a tenth of the on-state current at
    // D = ½ (ripple/I = tanh(T/4τ), 8 % at T = τ/3, from the same closed form): common
    // practice.
    let wanted = 3.0 / tau;
    finding = finding
        .with_help(format!(
            "raise the PWM frequency to at least {} (a period of a third of τ or less), or add \
             series inductance; above 20 kHz it is also out of the audible band",
            format_si(wanted, "Hz")
        ))
        .with_value("period", period, "s", "computed")
        .with_value("time_constant", tau, "s", "computed")
        .with_value("ripple", ripple.max, "A", "computed");
    Some(finding)
}

/// A MOSFET whose gate edges take more than [`EDGE_SHARE`] of the PWM period.
fn slow_gate(cx: &RuleContext<'_>, sw: &SwitchFacts) -> Option<Finding> {
    if !is_pwm(sw) {
        return None;
    }
    let edges = sw.gate_edges.as_ref()?;
    let f = sw.frequency_hz.as_ref()?;
    let period = 1.0 / f.max;
    let slowest = edges.rise_s.max(edges.fall_s);
    if slowest <= EDGE_SHARE * period {
        return None;
    }
    let s = name(cx, sw.device);
    let mut message = format!(
        "{s}'s gate rises in {} and falls in {} ({}), {} of the {} period at {} ({}): it \
         spends that long half on each cycle",
        format_si(edges.rise_s, "s"),
        format_si(edges.fall_s, "s"),
        edges.how,
        percent(slowest / period),
        format_si(period, "s"),
        format_si(f.max, "Hz"),
        f.max_state
    );
    if let Some(p) = edges.switching_loss_w {
        message.push_str(&format!(
            ", losing about {} in switching (½·V·I·(t_r + t_f)·f, the hard-switching estimate)",
            format_si(p, "W")
        ));
    }
    let mut finding = finding_at(RULE, RULE.severity(), cx, sw.device, message)?;
    if let Some(d) = &sw.driver {
        finding = label(finding, cx, d.device, &format!("drives {s}'s gate"));
        for &r in &d.network {
            finding = label(finding, cx, r, "in series with the gate");
        }
    }
    let ohms = EDGE_SHARE * period
        / (crate::analysis::switching::edges::RC_EDGE_FACTOR * edges.input_capacitance_f);
    finding = finding
        .with_help(format!(
            "drive the gate through at most {} in all (a gate driver, a smaller series resistor), \
             or use a MOSFET with less gate charge, or lower the PWM frequency",
            format_si(ohms, "Ω")
        ))
        .with_value("rise_time", edges.rise_s, "s", "computed")
        .with_value("fall_time", edges.fall_s, "s", "computed")
        .with_value("period", period, "s", "computed")
        .with_value("drive_resistance", edges.drive_ohms, "Ω", "computed")
        .with_value(
            "input_capacitance",
            edges.input_capacitance_f,
            "F",
            "computed",
        );
    if let Some(p) = edges.switching_loss_w {
        finding = finding.with_value("switching_loss", p, "W", "computed");
    }
    Some(finding)
}
