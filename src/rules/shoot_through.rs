//! `shoot-through`: both switches of a bridge leg can conduct at once. See
//! `rules/shoot-through.md`.
//!
//! Three ways a leg shorts its rail: a shared gate drive whose one level leaves the opposite
//! switch on (error); two separate PULSE drives whose on-times overlap (error); and a shared
//! drive that passes through the band where both conduct on every edge (warning).

use super::support::switch::{conducts_with_partner, shared, threshold_min};
use super::support::switch::{
    element, finding_at, held_off, in_conduction_sense, is_switch, kind, label, name, rail,
    SwitchIndex,
};
use super::units::format_si;
use super::Rule;
use super::RuleContext;
use crate::analysis::SwitchFacts;
use crate::circuit::Kind;
use crate::diagnostic::{Finding, Severity};
use crate::netlist::Waveform;

/// This rule's identity: its ID, the severities it gives and its page.
pub const RULE: Rule = Rule {
    id: "shoot-through",
    default_severity: Severity::Error,
    grades: &[Severity::Error, Severity::Warning],
    summary: "Both switches of a bridge leg can conduct at once",
    page: include_str!("../../rules/shoot-through.md"),
    check: Some(check),
};

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let index = SwitchIndex::new(cx);
    for sw in &cx.analysis.switches {
        let Some(partner) = sw.bridge_partner.and_then(|p| index.get(p)) else {
            continue;
        };
        if held_off(cx, sw) || held_off(cx, partner) || !is_switch(sw) || !is_switch(partner) {
            continue;
        }
        // Each leg once.
        if partner.device < sw.device && partner.bridge_partner == Some(sw.device) {
            continue;
        }
        let leg = Leg {
            cx,
            a: sw,
            b: partner,
        };
        if leg.shares_drive() {
            if let Some(f) = leg.static_overlap().or_else(|| leg.transition_band()) {
                out.push(f);
            }
        } else if let Some(f) = leg.pulse_overlap() {
            out.push(f);
        }
    }
}

struct Leg<'a, 'b> {
    cx: &'a RuleContext<'b>,
    a: &'a SwitchFacts,
    b: &'a SwitchFacts,
}

impl Leg<'_, '_> {
    fn shares_drive(&self) -> bool {
        shared(self.a, self.b)
    }

    fn rail_v(&self) -> Option<f64> {
        let a = rail(self.cx, self.a).map(|r| r.v.max);
        let b = rail(self.cx, self.b).map(|r| r.v.max);
        match (a, b) {
            (Some(x), Some(y)) => Some(x.max(y)),
            (x, y) => x.or(y),
        }
    }

    fn rail_text(&self) -> String {
        self.rail_v().map_or_else(
            || "its rail".into(),
            |v| format!("the {} rail", format_si(v, "V")),
        )
    }

    fn with_context(&self, mut f: Finding, primary: &SwitchFacts, other: &SwitchFacts) -> Finding {
        let cx = self.cx;
        f = label(f, cx, other.device, "the other switch of the leg");
        for sw in [primary, other] {
            if let Some(d) = &sw.driver {
                f = label(
                    f,
                    cx,
                    d.device,
                    &format!("drives {}'s gate", name(cx, sw.device)),
                );
            }
        }
        if let Some(s) = rail(cx, primary).and_then(|r| r.supply) {
            f = label(f, cx, s, "the rail the leg shorts");
        }
        if let Some(v) = self.rail_v() {
            f = f.with_value("rail_voltage", v, "V", "computed");
        }
        f
    }

    /// A shared drive level that turns one switch on and leaves the other conducting.
    fn static_overlap(&self) -> Option<Finding> {
        let cx = self.cx;
        let (stuck, other, (vgs, state)) = conducts_with_partner(cx, self.a, self.b)
            .map(|e| (self.a, self.b, e))
            .or_else(|| conducts_with_partner(cx, self.b, self.a).map(|e| (self.b, self.a, e)))
            .or_else(|| self.same_polarity())?;
        let th = threshold_min(cx, stuck.device);
        let s = name(cx, stuck.device);
        let o = name(cx, other.device);
        let message = format!(
            "{s} and {o} share one gate drive, and at the level that turns {o} on {s} still sees \
             {} across its gate ({state}), at or above its {} threshold: both conduct and the leg \
             shorts {} to ground through them",
            format_si(vgs, "V"),
            format_si(th.value, "V"),
            self.rail_text()
        );
        let f = finding_at(RULE, RULE.grade(Severity::Error), cx, stuck.device, message)?;
        let f = self.with_context(f, stuck, other);
        Some(
            f.with_help(format!(
                "drive the two gates separately with dead time between them (a half-bridge gate \
                 driver), or give {s} a drive that pulls its gate all the way to its source while \
                 {o} is on"
            ))
            .with_value("off_state_vgs", vgs, "V", "computed")
            .with_value("vgs_th_min", th.value, "V", th.source),
        )
    }

    /// Two switches of the same polarity on one drive turn on together.
    fn same_polarity(&self) -> Option<(&SwitchFacts, &SwitchFacts, (f64, String))> {
        let cx = self.cx;
        let ka = kind(cx, self.a.device)?;
        let kb = kind(cx, self.b.device)?;
        if super::support::switch::polarity(ka) != super::support::switch::polarity(kb) {
            return None;
        }
        let on = in_conduction_sense(self.b.vgs_on_v.as_ref()?, kb);
        (on.strongest >= threshold_min(cx, self.b.device).value).then_some((
            self.b,
            self.a,
            (on.strongest, on.strongest_state),
        ))
    }

    /// A shared drive with no dead time passes through the band where both switches conduct.
    fn transition_band(&self) -> Option<Finding> {
        let cx = self.cx;
        let both_mos = [self.a, self.b]
            .iter()
            .all(|s| kind(cx, s.device).is_some_and(Kind::is_mos));
        if !both_mos || self.has_delay_network() {
            return None;
        }
        let rail_v = self.rail_v()?;
        let ta = threshold_min(cx, self.a.device);
        let tb = threshold_min(cx, self.b.device);
        let band = rail_v - ta.value - tb.value;
        if band <= 0.0 {
            return None;
        }
        let (first, second) = if self.a.device <= self.b.device {
            (self.a, self.b)
        } else {
            (self.b, self.a)
        };
        let s = name(cx, first.device);
        let o = name(cx, second.device);
        let message = format!(
            "{s} and {o} share one gate drive with no dead time: on every edge the gate passes \
             through a band of {} where both conduct (the {} rail above the sum of their lowest \
             thresholds, {} + {}): a current spike from the rail to ground at each switching edge",
            format_si(band, "V"),
            format_si(rail_v, "V"),
            format_si(ta.value, "V"),
            format_si(tb.value, "V"),
        );
        let f = finding_at(
            RULE,
            RULE.grade(Severity::Warning),
            cx,
            first.device,
            message,
        )?;
        let f = self.with_context(f, first, second);
        Some(
            f.with_help(
                "drive each gate on its own with dead time between the edges: a half-bridge gate \
                 driver, or on each gate a resistor with a diode across it so the switch turns off \
                 fast and on slow",
            )
            .with_value("conduction_band", band, "V", "computed")
            .with_value("vgs_th_min", ta.value, "V", ta.source)
            .with_value("partner_vgs_th_min", tb.value, "V", tb.source),
        )
    }

    /// A diode or capacitor in either gate network is taken for a dead-time network.
    fn has_delay_network(&self) -> bool {
        [self.a, self.b].iter().any(|s| {
            s.driver.as_ref().is_some_and(|d| {
                d.network.iter().any(|&n| {
                    kind(self.cx, n).is_some_and(|k| k.is_diode_like() || k == Kind::Capacitor)
                })
            })
        })
    }

    /// Separate PULSE drives whose on-times overlap, or meet with no dead time.
    fn pulse_overlap(&self) -> Option<Finding> {
        let cx = self.cx;
        let wa = on_window(cx, self.a)?;
        let wb = on_window(cx, self.b)?;
        let (s, o) = (name(cx, self.a.device), name(cx, self.b.device));
        let (severity, message, value) = if (wa.period - wb.period).abs() > 1e-9 * wa.period {
            (
                RULE.grade(Severity::Error),
                format!(
                    "{s} and {o} are driven by PULSE sources of different periods ({} and {}): \
                     their on-times drift into each other and both conduct, shorting {} to ground",
                    format_si(wa.period, "s"),
                    format_si(wb.period, "s"),
                    self.rail_text()
                ),
                None,
            )
        } else {
            let overlap = wa.overlap(&wb);
            let edge = wa.edge.max(wb.edge);
            let dead = if overlap > 0.0 {
                0.0
            } else {
                wa.gap_to(&wb).min(wb.gap_to(&wa))
            };
            // An overlap no longer than an edge is two edges meeting: no dead time, not a
            // stretch where both switches are fully on.
            if overlap > edge.max(1e-9 * wa.period) {
                (
                    RULE.grade(Severity::Error),
                    format!(
                        "{s} and {o} are both on for {} of every {} period: their PULSE drives \
                         overlap and the leg shorts {} to ground",
                        format_si(overlap, "s"),
                        format_si(wa.period, "s"),
                        self.rail_text()
                    ),
                    Some(("overlap_time", overlap)),
                )
            } else if overlap > 0.0 || dead < edge.max(1e-12) {
                (
                    RULE.grade(Severity::Warning),
                    format!(
                        "{s} turns on as {o} turns off with no dead time between their PULSE \
                         drives ({} gap, {} edges): both conduct during the edge",
                        format_si(dead, "s"),
                        format_si(edge, "s")
                    ),
                    Some(("dead_time", dead)),
                )
            } else {
                return None;
            }
        };
        let f = finding_at(RULE, severity, cx, self.a.device, message)?;
        let mut f = self.with_context(f, self.a, self.b).with_help(
            "shift one PULSE so each switch turns on only after the other has turned off, with \
             dead time of at least a few hundred nanoseconds (longer for slow gates)",
        );
        if let Some((n, v)) = value {
            f = f.with_value(n, v, "s", "computed");
        }
        Some(f)
    }
}

/// The time window of each period in which a PULSE-driven switch conducts.
struct Window {
    start: f64,
    end: f64,
    period: f64,
    edge: f64,
}

fn on_window(cx: &RuleContext<'_>, sw: &SwitchFacts) -> Option<Window> {
    let driver = sw.driver.as_ref()?;
    let control = driver.control.unwrap_or(driver.device);
    // The analysis solves which level turns the switch on ("high" is the higher level);
    // without it, only a passive gate network keeps the PULSE's sense (an inverting stage
    // flips it).
    let solved = driver.on_when_high;
    let physical = match solved {
        Some(_) => None,
        None => {
            let passive = control == driver.device
                && driver
                    .network
                    .iter()
                    .all(|&n| kind(cx, n).is_some_and(|k| k == Kind::Resistor));
            if !passive {
                return None;
            }
            Some(super::support::switch::polarity(kind(cx, sw.device)?) > 0.0)
        }
    };
    let Waveform::Pulse {
        v1,
        v2,
        delay,
        rise,
        fall,
        width,
        period,
    } = element(cx, control)?.source.as_ref()?.wave
    else {
        return None;
    };
    if period <= 0.0 || !period.is_finite() {
        return None;
    }
    // v2 window, edge midpoints.
    let start = delay + rise / 2.0;
    let end = delay + rise + width + fall / 2.0;
    let on_in_v2_window = match (solved, physical) {
        (Some(on_at_high), _) | (None, Some(on_at_high)) => on_at_high == (v2 >= v1),
        (None, None) => return None,
    };
    let (start, end) = if on_in_v2_window {
        (start, end)
    } else {
        (end, start + period)
    };
    Some(Window {
        start: start.rem_euclid(period),
        end: start.rem_euclid(period) + (end - start).clamp(0.0, period),
        period,
        edge: rise.max(fall),
    })
}

impl Window {
    /// Total time in one period where both windows are on.
    fn overlap(&self, other: &Window) -> f64 {
        let t = self.period;
        let mut total = 0.0;
        for shift in [-t, 0.0, t] {
            let lo = self.start.max(other.start + shift);
            let hi = self.end.min(other.end + shift);
            if hi > lo {
                total += hi - lo;
            }
        }
        total
    }

    /// Time from this window's end to the other's next start.
    fn gap_to(&self, other: &Window) -> f64 {
        let gap = (other.start - self.end).rem_euclid(self.period);
        // Windows that meet exactly come out a hair short of a whole period.
        if self.period - gap < 1e-9 * self.period {
            0.0
        } else {
            gap
        }
    }
}
