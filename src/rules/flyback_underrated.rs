//! `flyback-underrated`: a freewheel diode whose voltage, current or recovery rating does not
//! fit its load. See `rules/flyback-underrated.md`.

use super::switch_util::{
    diode_hint, duty_text, finding_at, is_pwm, is_switch, kind, label, load_device, load_of, name,
    rail, rated,
};
use super::units::{format_si, percent};
use super::Rule;
use super::RuleContext;
use crate::analysis::{Freewheel, FreewheelKind, SwitchFacts};
use crate::circuit::{DeviceId, Kind};
use crate::diagnostic::{Finding, Severity};

/// This rule's identity: its ID, the severities it gives and its page.
pub const RULE: Rule = Rule {
    id: "flyback-underrated",
    default_severity: Severity::Warning,
    grades: &[Severity::Error, Severity::Warning],
    summary: "A freewheel diode's voltage, current or recovery rating does not fit the load",
    page: include_str!("../../rules/flyback-underrated.md"),
    check: Some(check),
};
/// Reverse rating wanted over the rail (common practice: the rail rings and spikes).
const VOLTAGE_MARGIN: f64 = 2.0;
/// A diode slower than this is standard recovery (the 1N400x family is a few µs; from memory).
const SLOW_TRR_S: f64 = 1e-6;
/// Above this PWM frequency a standard-recovery diode's reverse current each cycle matters.
const SLOW_DIODE_MAX_HZ: f64 = 1e3;
/// A diode that sees less than this share of the rail in reverse while the switch is on does
/// not hold the rail off: the zener of a diode-plus-zener clamp, whose series diode blocks the
/// rail and which breaks down at turn-off by design.
const HOLDS_RAIL_FRACTION: f64 = 0.5;

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let mut seen: Vec<DeviceId> = Vec::new();
    // A diode beside a resistive branch is no freewheel diode: a gate clamp zener across a
    // level shifter's pull-up breaks down every cycle by design.
    for sw in cx
        .analysis
        .switches
        .iter()
        .filter(|s| is_switch(s) && s.inductive)
    {
        for fw in &sw.freewheel {
            let placed = matches!(fw.kind, FreewheelKind::AcrossLoad | FreewheelKind::ToRail);
            let plain = matches!(kind(cx, fw.device), Some(Kind::Diode | Kind::Schottky));
            if fw.reversed || !placed || !plain || seen.contains(&fw.device) {
                continue;
            }
            seen.push(fw.device);
            let diode = Diode { cx, sw, fw };
            out.extend(diode.voltage());
            out.extend(diode.average_current());
            out.extend(diode.peak_current());
            out.extend(diode.recovery());
        }
    }
}

struct Diode<'a, 'b> {
    cx: &'a RuleContext<'b>,
    sw: &'a SwitchFacts,
    fw: &'a Freewheel,
}

impl Diode<'_, '_> {
    fn name(&self) -> String {
        name(self.cx, self.fw.device)
    }

    fn load_name(&self) -> String {
        load_device(self.cx, self.sw).map_or_else(|| "the load".into(), |l| name(self.cx, l))
    }

    /// The on-state current the winding carries when the switch lets go, and the state.
    fn on_current(&self) -> Option<(f64, String)> {
        let range = load_of(self.cx, self.sw)
            .and_then(|l| l.current_a.as_ref())
            .or(self.sw.current_a.as_ref())
            .filter(|r| r.max > 0.0);
        match (self.fw.peak_current_a, range) {
            (Some(i), Some(r)) => Some((i, r.max_state.clone())),
            (Some(i), None) => Some((i, "the on state".into())),
            (None, Some(r)) => Some((r.max, r.max_state.clone())),
            (None, None) => None,
        }
    }

    fn finding(&self, severity: Severity, message: String) -> Option<Finding> {
        let mut f = finding_at(RULE, severity, self.cx, self.fw.device, message)?;
        if let Some(l) = load_device(self.cx, self.sw) {
            f = label(f, self.cx, l, "the load it freewheels");
        }
        f = label(f, self.cx, self.sw.device, "switches the load");
        Some(f)
    }

    fn hint(&self, amps: f64) -> String {
        let rail_v = rail(self.cx, self.sw).map_or(0.0, |r| r.v.max);
        diode_hint(VOLTAGE_MARGIN * rail_v, amps, is_pwm(self.sw))
    }

    fn voltage(&self) -> Option<Finding> {
        let vrrm = rated(self.cx, self.fw.device, "vrrm")?;
        let rail = rail(self.cx, self.sw)?;
        let v = rail.v.max;
        let wanted = VOLTAGE_MARGIN * v;
        if vrrm.value >= wanted {
            return None;
        }
        if self
            .fw
            .on_state_reverse_v
            .is_some_and(|reverse| reverse < HOLDS_RAIL_FRACTION * v)
        {
            return None;
        }
        let d = self.name();
        let (severity, why) = if vrrm.value < v {
            (
                Severity::Error,
                format!(
                    "below the rail itself: it breaks down every time {} turns on",
                    name(self.cx, self.sw.device)
                ),
            )
        } else {
            (
                Severity::Warning,
                "below twice the rail (common practice: the rail rings and spikes at each switching edge)".to_string(),
            )
        };
        let message = format!(
            "{d}'s reverse rating of {} is {why}; the rail reaches {} ({})",
            format_si(vrrm.value, "V"),
            format_si(v, "V"),
            rail.v.max_state
        );
        let amps = self.on_current().map_or(0.0, |i| i.0);
        let mut f = self.finding(severity, message)?;
        if let Some(s) = rail.supply {
            f = label(f, self.cx, s, &format!("the {} rail", format_si(v, "V")));
        }
        Some(
            f.with_help(format!("replace {d} with {}", self.hint(amps)))
                .with_value("vrrm", vrrm.value, "V", vrrm.source)
                .with_value("rail_voltage", v, "V", "computed")
                .with_value("wanted_vrrm", wanted, "V", "computed"),
        )
    }

    /// Average freewheel current against `if_avg`, for PWM loads.
    fn average_current(&self) -> Option<Finding> {
        if !is_pwm(self.sw) {
            return None;
        }
        let rating = rated(self.cx, self.fw.device, "if_avg")?;
        let (i_on, _) = self.on_current()?;
        let duty = load_of(self.cx, self.sw)
            .and_then(|l| l.duty.as_ref())
            .or(self.sw.duty.as_ref())?;
        let tau = load_of(self.cx, self.sw).and_then(|l| l.time_constant_s);
        let freq = self.sw.frequency_hz.as_ref();
        let (avg, formula) = match (tau, freq) {
            (Some(tau), Some(f)) if tau > 0.0 && f.min > 0.0 => {
                let (avg, d) = worst_rl_average(i_on, tau, f, duty);
                (
                    avg,
                    format!(
                        "the winding's L/R of {} at D = {}, τ·I_max·(1 − e^(−T_off/τ))/T",
                        format_si(tau, "s"),
                        percent(d)
                    ),
                )
            }
            _ => {
                // τ or the frequency unknown: the bound (1 − D)·I (the current never decays).
                let d = duty.min;
                let avg = self
                    .fw
                    .avg_current_a
                    .as_ref()
                    .map_or((1.0 - d) * i_on, |r| r.max);
                (avg, format!("(1 − D)·I at D = {}", percent(d)))
            }
        };
        if avg <= rating.value {
            return None;
        }
        let d = self.name();
        let message = format!(
            "{d} carries about {} on average while {} freewheels ({formula}, I = {} on-state, \
             duty {}): above its {} average forward rating",
            format_si(avg, "A"),
            self.load_name(),
            format_si(i_on, "A"),
            duty_text(duty),
            format_si(rating.value, "A"),
        );
        let f = self.finding(Severity::Warning, message)?;
        Some(
            f.with_help(format!("replace {d} with {}", self.hint(avg.max(i_on))))
                .with_value("if_avg", rating.value, "A", rating.source)
                .with_value("freewheel_average_current", avg, "A", "computed")
                .with_value("on_state_current", i_on, "A", "computed"),
        )
    }

    /// The winding's current at turn-off against the repetitive (else surge) peak rating.
    fn peak_current(&self) -> Option<Finding> {
        let pwm = is_pwm(self.sw);
        let rating = match rated(self.cx, self.fw.device, "ifrm") {
            Some(r) => ("ifrm", "repetitive peak", r),
            None if !pwm => ("ifsm", "surge", rated(self.cx, self.fw.device, "ifsm")?),
            None => return None,
        };
        let (i_on, state) = self.on_current()?;
        if i_on <= rating.2.value {
            return None;
        }
        let d = self.name();
        let message = format!(
            "{d} takes {}'s full {} each time {} turns off ({state}): above its {} {} current \
             rating",
            self.load_name(),
            format_si(i_on, "A"),
            name(self.cx, self.sw.device),
            format_si(rating.2.value, "A"),
            rating.1,
        );
        let f = self.finding(Severity::Warning, message)?;
        Some(
            f.with_help(format!("replace {d} with {}", self.hint(i_on)))
                .with_value(rating.0, rating.2.value, "A", rating.2.source)
                .with_value("turn_off_current", i_on, "A", "computed"),
        )
    }

    /// A standard-recovery diode on fast PWM.
    fn recovery(&self) -> Option<Finding> {
        if kind(self.cx, self.fw.device) == Some(Kind::Schottky) || !is_pwm(self.sw) {
            return None;
        }
        let trr = rated(self.cx, self.fw.device, "trr")?;
        let f_hz = self.sw.frequency_hz.as_ref()?;
        if trr.value <= SLOW_TRR_S || f_hz.max <= SLOW_DIODE_MAX_HZ {
            return None;
        }
        let d = self.name();
        let switch = name(self.cx, self.sw.device);
        let message = format!(
            "{d} is a standard-recovery diode (trr {}) on {} PWM: each time {switch} turns on, \
             {d} conducts backwards for its recovery time, a current spike through {switch} \
             that heats both",
            format_si(trr.value, "s"),
            format_si(f_hz.max, "Hz")
        );
        let amps = self.on_current().map_or(0.0, |i| i.0);
        let rail_v = rail(self.cx, self.sw).map_or(0.0, |r| r.v.max);
        let f = self.finding(Severity::Warning, message)?;
        Some(
            f.with_help(format!(
                "replace {d} with {}: a Schottky has no reverse recovery; or use a fast-recovery \
                 diode with trr under 100 ns",
                diode_hint(VOLTAGE_MARGIN * rail_v, amps, true)
            ))
            .with_value("trr", trr.value, "s", trr.source)
            .with_value("pwm_frequency", f_hz.max, "Hz", "computed"),
        )
    }
}

/// The diode's average current in the RL steady state of a stalled winding (I = V/R with the
/// switch on, ideal switch and diode), worst over the duty and frequency ranges.
///
/// First-order RL response, i(t) = I∞ + (i₀ − I∞)·e^(−t/τ): with a = e^(−T_on/τ) and
/// b = e^(−T_off/τ) the current peaks at I_max = I·(1 − a)/(1 − a·b) and decays to I_max·b
/// through the diode, which carries the charge τ·I_max·(1 − b) each period. In the limits this
/// is (1 − D)·D·I (τ ≫ T, the current barely ripples) and 0 (τ ≪ T).
fn worst_rl_average(
    i: f64,
    tau: f64,
    f: &crate::analysis::Range,
    duty: &crate::analysis::Range,
) -> (f64, f64) {
    let mut best = (0.0, duty.min);
    let steps = 20;
    for freq in [f.min, f.max] {
        if freq <= 0.0 || !freq.is_finite() {
            continue;
        }
        let period = 1.0 / freq;
        let mut ds: Vec<f64> = (0..=steps)
            .map(|k| duty.min + (duty.max - duty.min) * k as f64 / steps as f64)
            .collect();
        ds.push(0.5f64.clamp(duty.min, duty.max));
        for d in ds {
            let d = d.clamp(0.0, 1.0);
            let a = (-(d * period) / tau).exp();
            let b = (-((1.0 - d) * period) / tau).exp();
            let denominator = 1.0 - a * b;
            if denominator <= 0.0 {
                continue;
            }
            let i_max = i * (1.0 - a) / denominator;
            let avg = tau * i_max * (1.0 - b) / period;
            if avg > best.0 {
                best = (avg, d);
            }
        }
    }
    best
}

#[cfg(test)]
mod tests {
    use super::worst_rl_average;
    use crate::analysis::Range;

    // First-order RL steady state: its limits are (1 − D)·D·I for τ ≫ T and 0 for τ ≪ T.
    #[test]
    fn rl_average_has_the_textbook_limits() {
        let d = Range::point(0.3, "");
        let f = Range::point(20e3, "");
        let (slow, _) = worst_rl_average(2.0, 1.0, &f, &d);
        assert!((slow - 0.7 * 0.3 * 2.0).abs() < 1e-3, "{slow}");
        let (fast, _) = worst_rl_average(2.0, 1e-9, &f, &d);
        assert!(fast < 1e-3, "{fast}");
        // Over a duty range the worst is at D = 0.5 when the current barely ripples.
        let range = Range {
            min: 0.1,
            max: 0.9,
            min_state: String::new(),
            max_state: String::new(),
        };
        let (worst, at) = worst_rl_average(2.0, 1.0, &f, &range);
        assert!((worst - 0.5).abs() < 1e-3 && (at - 0.5).abs() < 1e-9);
    }
}
