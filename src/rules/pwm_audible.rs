//! `pwm-audible`: an inductive load switched at a frequency inside the audible band (20 Hz to
//! 20 kHz). See `rules/pwm-audible.md`.
//!
//! Frequencies come from the switch and timer analyses when they ran; otherwise from the
//! switch's own drive: a PULSE source's period, or the 555 datasheet astable equation on the
//! driving timer's RA, RB and C. One finding per frequency-setting driver, at the line whose
//! value sets the frequency (the PULSE source, the astable's timing capacitor).

use super::hygiene_util::{
    astable, astable_frequency, capacitance, device_element, finding_at, resistance, shown,
    NetIndex, Tracer,
};
use super::Rule;
use super::RuleContext;
use crate::analysis::TimerMode;
use crate::circuit::{DeviceId, Kind, NetId, PinRole};
use crate::diagnostic::{Finding, Severity};
use crate::netlist::Waveform;
use crate::rules::eseries::{round_down, E12};
use crate::rules::units::format_si;
use std::collections::BTreeMap;

/// This rule's identity: its ID, the severities it gives and its page.
pub const RULE: Rule = Rule {
    id: "pwm-audible",
    default_severity: Severity::Note,
    grades: &[Severity::Note],
    summary: "The switching frequency lies in the audible band",
    page: include_str!("../../rules/pwm-audible.md"),
    check: Some(check),
};
/// The band of human hearing, commonly quoted as 20 Hz to 20 kHz.
const BAND_LOW_HZ: f64 = 20.0;
const BAND_HIGH_HZ: f64 = 20e3;
/// Where the fix aims: clear of the band with some margin.
const TARGET_HZ: f64 = 25e3;

/// How a driver's frequency is known and what sets it.
struct Drive {
    min_hz: f64,
    max_hz: f64,
    provenance: String,
}

#[derive(Default)]
struct Group {
    switches: Vec<DeviceId>,
    loads: Vec<DeviceId>,
}

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let mut groups: BTreeMap<DeviceId, Group> = BTreeMap::new();
    let mut drives: BTreeMap<DeviceId, Drive> = BTreeMap::new();
    let index = NetIndex::new(cx);
    if cx.analysis.switches.is_empty() {
        from_topology(cx, &index, &mut groups);
    } else {
        for s in cx.analysis.switches.iter().filter(|s| s.inductive) {
            // Behind a pre-driver the frequency is the switching input's: group and fix there.
            let Some(driver) = s.driver.as_ref().map(|d| d.control.unwrap_or(d.device)) else {
                continue;
            };
            let mut loads: Vec<DeviceId> = s
                .load
                .and_then(|i| cx.analysis.loads.get(i))
                .map(|l| vec![l.device])
                .unwrap_or_default();
            if loads.is_empty() {
                loads = s
                    .branch
                    .iter()
                    .copied()
                    .filter(|&d| {
                        cx.circuit
                            .devices
                            .get(d)
                            .is_some_and(|x| x.kind.is_inductive())
                    })
                    .collect();
            }
            if let Some(f) = &s.frequency_hz {
                drives.entry(driver).or_insert(Drive {
                    min_hz: f.min,
                    max_hz: f.max,
                    provenance: "switch analysis".into(),
                });
            }
            let g = groups.entry(driver).or_default();
            g.switches.push(s.device);
            g.loads.extend(loads);
        }
    }
    // One note per load: the drives of a bridge's four switches whine through the same
    // winding, so later drives are labelled on the first one's note.
    let mut noted: BTreeMap<Vec<DeviceId>, usize> = BTreeMap::new();
    for (driver, group) in groups {
        let drive = match drives.remove(&driver) {
            Some(d) => Some(d),
            None => frequency_of(cx, &index, driver),
        };
        let Some(drive) = drive else {
            continue;
        };
        if drive.min_hz >= BAND_HIGH_HZ || drive.max_hz < BAND_LOW_HZ {
            continue;
        }
        let mut loads = group.loads.clone();
        loads.sort_unstable();
        loads.dedup();
        if let Some(&first) = noted.get(&loads).filter(|_| !loads.is_empty()) {
            if let (Some(f), Some((_, e))) = (out.get_mut(first), device_element(cx, driver)) {
                let label = format!("{} also switches it", e.path);
                *f = f.clone().with_label(e.span, label);
            }
            continue;
        }
        if let Some(f) = report(cx, &index, driver, &drive, &group) {
            noted.insert(loads, out.len());
            out.push(f);
        }
    }
}

/// Without switch facts: every transistor with an inductive part on its switched terminals,
/// grouped by the pulse source or timer its gate network reaches.
fn from_topology(
    cx: &RuleContext<'_>,
    index: &NetIndex<'_>,
    groups: &mut BTreeMap<DeviceId, Group>,
) {
    if !cx
        .circuit
        .devices
        .iter()
        .any(|d| d.kind.is_switch_transistor())
    {
        return;
    }
    let tracer = Tracer::new(cx);
    for (id, device) in cx.circuit.devices.iter().enumerate() {
        if !device.kind.is_switch_transistor() {
            continue;
        }
        let switched: Vec<NetId> = device
            .pins
            .iter()
            .filter(|p| {
                matches!(
                    p.role,
                    PinRole::Drain | PinRole::Source | PinRole::Collector | PinRole::Emitter
                )
            })
            .map(|p| p.net)
            .filter(|&n| tracer.fixed(n).is_none())
            .collect();
        let mut loads: Vec<DeviceId> = switched
            .iter()
            .flat_map(|&n| index.on(n).iter().map(|&(d, _)| d))
            .filter(|&d| {
                cx.circuit
                    .devices
                    .get(d)
                    .is_some_and(|x| x.kind.is_inductive())
            })
            .collect();
        loads.sort_unstable();
        loads.dedup();
        if loads.is_empty() {
            continue;
        }
        let gate = device.pin(PinRole::Gate).or(device.pin(PinRole::Base));
        let source = device.pin(PinRole::Source).or(device.pin(PinRole::Emitter));
        let (Some(gate), Some(source)) = (gate, source) else {
            continue;
        };
        let trace = tracer.trace(gate, &[source]);
        let pulse = trace.fixed.iter().find_map(|&(_, s)| {
            s.filter(|&s| {
                device_element(cx, s).is_some_and(|(_, e)| {
                    e.source
                        .as_ref()
                        .is_some_and(|spec| matches!(spec.wave, Waveform::Pulse { .. }))
                })
            })
        });
        let timer = trace.drivers.iter().find_map(|&(d, role)| {
            (role == PinRole::Out && cx.circuit.devices.get(d).is_some_and(|x| x.kind.is_timer()))
                .then_some(d)
        });
        if let Some(driver) = pulse.or(timer) {
            let g = groups.entry(driver).or_default();
            g.switches.push(id);
            g.loads.extend(loads);
        }
    }
}

fn frequency_of(cx: &RuleContext<'_>, index: &NetIndex<'_>, driver: DeviceId) -> Option<Drive> {
    let (device, element) = device_element(cx, driver)?;
    if let Some(spec) = &element.source {
        let f = spec.frequency()?;
        return Some(Drive {
            min_hz: f,
            max_hz: f,
            provenance: format!("the PULSE period of {}", element.path),
        });
    }
    if let Some(t) = cx.analysis.timers.iter().find(|t| t.device == driver) {
        let f = t.frequency_hz.as_ref()?;
        return Some(Drive {
            min_hz: f.min,
            max_hz: f.max,
            provenance: format!("timer analysis of {}", element.path),
        });
    }
    if !device.kind.is_timer() {
        return None;
    }
    let parts = astable(cx, index, device)?;
    let value = |id: DeviceId, cap: bool| {
        device_element(cx, id).and_then(|(d, e)| {
            if cap {
                capacitance(d, e)
            } else {
                resistance(d, e)
            }
        })
    };
    let f = astable_frequency(
        value(parts.ra, false)?,
        value(parts.rb, false)?,
        value(parts.c, true)?,
    )?;
    Some(Drive {
        min_hz: f,
        max_hz: f,
        provenance: "555 datasheet astable equation f ≈ 1.44/((RA+2RB)·C)".into(),
    })
}

fn load_noun(kind: Kind) -> &'static str {
    match kind {
        Kind::DcMotor => "motor winding",
        Kind::Solenoid => "solenoid",
        Kind::RelayCoil => "relay coil",
        _ => "inductor",
    }
}

fn report(
    cx: &RuleContext<'_>,
    index: &NetIndex<'_>,
    driver: DeviceId,
    drive: &Drive,
    group: &Group,
) -> Option<Finding> {
    let (setter, help) = fix(cx, index, driver, drive);
    let (origin, _) = frequency_origin(cx, driver);
    let (_, element) = device_element(cx, setter)?;
    let mut loads = group.loads.clone();
    loads.sort_unstable();
    loads.dedup();
    let load_names: Vec<String> = loads.iter().map(|&l| shown(cx, l)).collect();
    let noun = loads
        .first()
        .and_then(|&l| cx.circuit.devices.get(l))
        .map_or("load", |d| load_noun(d.kind));
    let (low, high) = (format_si(drive.min_hz, "Hz"), format_si(drive.max_hz, "Hz"));
    let at = if low != high {
        format!(
            "{}–{}",
            format_si(drive.min_hz, "Hz"),
            format_si(drive.max_hz, "Hz")
        )
    } else {
        format_si(drive.min_hz, "Hz")
    };
    let mut finding = finding_at(
        RULE,
        Severity::Note,
        element,
        format!(
            "{} {} switched at {at} (from {}), inside the audible band of 20 Hz–20 kHz: the \
             {noun} will whine at that pitch",
            load_names.join(", "),
            if loads.len() == 1 { "is" } else { "are" },
            drive.provenance
        ),
    )
    .with_value(
        "frequency_min",
        drive.min_hz,
        "Hz",
        drive.provenance.clone(),
    )
    .with_value(
        "frequency_max",
        drive.max_hz,
        "Hz",
        drive.provenance.clone(),
    )
    .with_help(help);
    for &s in &group.switches {
        if let Some((_, e)) = device_element(cx, s) {
            finding = finding.with_label(e.span, format!("{} switches the load", e.path));
        }
    }
    if setter != driver {
        if let Some((_, e)) = device_element(cx, driver) {
            finding = finding.with_label(e.span, format!("{} drives the switch", e.path));
        }
    }
    if origin != driver && origin != setter {
        if let Some((_, e)) = device_element(cx, origin) {
            finding = finding.with_label(e.span, format!("{} sets the frequency", e.path));
        }
    }
    Some(finding)
}

/// The element whose value sets the frequency, and the change that moves it to 25 kHz. A
/// one-shot triggered by another timer or a pulse source takes its frequency from that driver,
/// so the fix goes there, and the one-shot's capacitor is scaled to keep the duty.
fn fix(
    cx: &RuleContext<'_>,
    index: &NetIndex<'_>,
    driver: DeviceId,
    drive: &Drive,
) -> (DeviceId, String) {
    let tail = "(check the switching loss and the gate drive at the higher frequency), or below \
                20 Hz if the load only needs on/off control";
    let (origin, one_shots) = frequency_origin(cx, driver);
    let Some((device, element)) = device_element(cx, origin) else {
        return (driver, format!("move the PWM above 20 kHz {tail}"));
    };
    let (setter, mut help, factor) = if let Some(Waveform::Pulse { period, width, .. }) =
        element.source.as_ref().map(|s| &s.wave)
    {
        let new_period = 1.0 / TARGET_HZ;
        (
            origin,
            format!(
                "set the PULSE period to {} (25 kHz) and the width to {} to keep the duty",
                spice(new_period),
                spice(width * new_period / period)
            ),
            new_period / period,
        )
    } else {
        let facts = cx.analysis.timers.iter().find(|t| t.device == origin);
        let cap = facts.and_then(|t| t.timing_capacitor).or_else(|| {
            device
                .kind
                .is_timer()
                .then(|| astable(cx, index, device))
                .flatten()
                .map(|a| a.c)
        });
        let value = cap.and_then(|c| device_element(cx, c).and_then(|(d, e)| capacitance(d, e)));
        let (Some(c_id), Some(c)) = (cap, value) else {
            return (
                driver,
                format!("move {}'s frequency above 20 kHz {tail}", element.path),
            );
        };
        let Some(new_c) = round_down(c * drive.min_hz / TARGET_HZ, &E12) else {
            return (driver, format!("move the PWM above 20 kHz {tail}"));
        };
        (
            c_id,
            format!(
                "the frequency goes as 1/C: reduce {} from {} to {} (E12) to run at about {} or \
                 more",
                shown(cx, c_id),
                format_si(c, "F"),
                format_si(new_c, "F"),
                format_si(drive.min_hz * c / new_c, "Hz")
            ),
            new_c / c,
        )
    };
    for (shot, cap) in one_shots {
        let value = cap.and_then(|c| device_element(cx, c).and_then(|(d, e)| capacitance(d, e)));
        if let (Some(c_id), Some(c)) = (cap, value) {
            if let Some(new_c) = round_down(c * factor, &E12) {
                help.push_str(&format!(
                    "; scale the one-shot {}'s {} by the same factor, to {}, so its pulses keep \
                     their share of the shorter period",
                    shown(cx, shot),
                    shown(cx, c_id),
                    format_si(new_c, "F")
                ));
            }
        }
    }
    (setter, format!("{help} {tail}"))
}

/// Follows one-shots to what triggers them: the device that sets the frequency, and the
/// one-shots on the way (with their timing capacitors).
fn frequency_origin(
    cx: &RuleContext<'_>,
    driver: DeviceId,
) -> (DeviceId, Vec<(DeviceId, Option<DeviceId>)>) {
    let mut at = driver;
    let mut one_shots = Vec::new();
    for _ in 0..4 {
        let Some(t) = cx.analysis.timers.iter().find(|t| t.device == at) else {
            break;
        };
        match (&t.mode, &t.trigger) {
            (TimerMode::Monostable, Some(trigger)) if trigger.driver != at => {
                one_shots.push((at, t.timing_capacitor));
                at = trigger.driver;
            }
            _ => break,
        }
    }
    (at, one_shots)
}

/// A value as SPICE text: `40u`, `22.5u`.
fn spice(value: f64) -> String {
    let text = format_si(value, "");
    text.replace(' ', "").replace('µ', "u")
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::rules::hygiene_util::testkit::Deck;

    #[test]
    fn fan_at_24_khz_is_quiet_at_2_khz_fires_on_the_capacitor() {
        let mut d = Deck::fan();
        assert!(d.run(check).is_empty());
        let ct = d
            .netlist
            .elements
            .iter()
            .position(|e| e.name == "CT")
            .unwrap();
        d.netlist.elements[ct].value = Some(crate::netlist::Num::Known(12e-9));
        let found = d.run(check);
        assert_eq!(found.len(), 1, "{found:?}");
        assert_eq!(found[0].span, d.netlist.elements[ct].span);
        // 555 datasheet: 1.44 / ((5.6k + 2·27k)·12n) ≈ 2.01 kHz.
        assert!(
            found[0].message.contains("2.01 kHz"),
            "{}",
            found[0].message
        );
        assert!(found[0].help.as_deref().unwrap_or("").contains("to 820 pF"));
    }

    #[test]
    fn pulse_source_on_a_solenoid() {
        let mut d = Deck::new();
        d.v("V12", "v12", "0", 12.0);
        d.pulse("VP", "p", "0", 5.0, 1e-3);
        d.r("RG", "p", "g", "100", 100.0);
        d.mos("M1", Kind::Nmos, "d", "g", "0");
        d.part(
            "XV",
            Kind::Solenoid,
            "VALVE",
            &[(PinRole::Pos, "v12"), (PinRole::Neg, "d")],
        );
        let found = d.run(check);
        assert_eq!(found.len(), 1);
        let help = found[0].help.as_deref().unwrap_or("");
        assert!(
            help.contains("period to 40u (25 kHz) and the width to 20u"),
            "{help}"
        );
        // An on/off valve at 1 Hz is below the band.
        let vp = d
            .netlist
            .elements
            .iter()
            .position(|e| e.name == "VP")
            .unwrap();
        if let Some(Waveform::Pulse { period, width, .. }) =
            d.netlist.elements[vp].source.as_mut().map(|s| &mut s.wave)
        {
            *period = 1.0;
            *width = 0.5;
        }
        assert!(d.run(check).is_empty());
    }
}
