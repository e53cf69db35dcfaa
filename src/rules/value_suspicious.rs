//! `value-suspicious`: a value that is almost surely a unit slip. See `rules/value-suspicious.md`.
//!
//! - a resistor written `1M`/`68m` (SPICE reads milli; mega is `MEG`) whose value is under 1 Ω,
//!   in a timing, pull or gate network (it touches a gate, a base or a 555's TRIG, THR, DIS,
//!   RESET or CTRL);
//! - a timing resistor or a pot under 1 Ω, whatever its suffix;
//! - a capacitor of 1 F or more (a bare `470` is farads; µF is what fits).
//!
//! The message gives both readings and what each does: the 555's frequency or pulse width by the
//! datasheet equations where the part is an astable's RA/RB/C or a monostable's R/C.

use super::support::hygiene::{
    astable, astable_frequency, capacitance, device_element, finding_at, monostable,
    monostable_width, net_name, resistance, NetIndex, Once,
};
use super::Rule;
use super::RuleContext;
use crate::circuit::{Device, DeviceId, Kind, NetId, PinRole};
use crate::diagnostic::{Finding, Severity};
use crate::netlist::FlatElement;
use crate::rules::units::format_si;

/// This rule's identity: its ID, the severities it gives and its page.
pub const RULE: Rule = Rule {
    id: "value-suspicious",
    default_severity: Severity::Warning,
    grades: &[Severity::Warning],
    summary: "A value that is almost surely a unit slip",
    page: include_str!("../../rules/value-suspicious.md"),
    check: Some(check),
};
/// SPICE `M` is milli; `MEG` is mega: the slip multiplies by 10⁻⁹.
const MILLI_TO_MEGA: f64 = 1e9;

/// The signal pins on a net that make a resistor there part of a timing, pull or gate network.
/// Kept compact (one per net): device indices as `u32`, [`NONE`] for none.
#[derive(Clone, Copy)]
struct Signal {
    /// A MOSFET gate or BJT base: the switch.
    gate: u32,
    /// A 555 pin other than its supply and output, and its role.
    timer: u32,
    role: PinRole,
}

const NONE: u32 = u32::MAX;

impl Default for Signal {
    fn default() -> Self {
        Signal {
            gate: NONE,
            timer: NONE,
            role: PinRole::Other,
        }
    }
}

impl Signal {
    fn any(&self) -> bool {
        self.gate != NONE || self.timer != NONE
    }

    fn gate(&self) -> Option<DeviceId> {
        (self.gate != NONE).then_some(self.gate as DeviceId)
    }

    fn timer(&self) -> Option<(DeviceId, PinRole)> {
        (self.timer != NONE).then_some((self.timer as DeviceId, self.role))
    }
}

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let index = NetIndex::new(cx);
    let mut signals: Vec<Signal> = vec![Signal::default(); cx.circuit.nets().len()];
    for (id, device) in cx.circuit.devices().iter().enumerate() {
        for pin in &device.pins {
            match (device.kind, pin.role) {
                (k, PinRole::Gate | PinRole::Base) if k.is_switch_transistor() => {
                    if let Some(s) = signals.get_mut(pin.net) {
                        if s.gate == NONE {
                            s.gate = u32::try_from(id).unwrap_or(NONE);
                        }
                    }
                }
                (k, r)
                    if k.is_timer() && !matches!(r, PinRole::Vcc | PinRole::Gnd | PinRole::Out) =>
                {
                    if let Some(s) = signals.get_mut(pin.net) {
                        if s.timer == NONE {
                            s.timer = u32::try_from(id).unwrap_or(NONE);
                            s.role = r;
                        }
                    }
                }
                _ => {}
            }
        }
    }
    let ctx = Ctx {
        cx,
        index: &index,
        signals: &signals,
    };
    let mut once = Once::default();
    for (id, device) in cx.circuit.devices().iter().enumerate() {
        let Some(element) = cx.netlist.elements.get(device.element) else {
            continue;
        };
        let finding = match device.kind {
            Kind::Resistor => ctx.resistor(id, device, element),
            Kind::Potentiometer => ctx.pot(device, element),
            Kind::Capacitor => ctx.capacitor(id, device, element),
            _ => None,
        };
        if let Some(f) = finding {
            let text = element.value_text.clone().unwrap_or_default();
            if once.first(element.span, text) {
                out.push(f);
            }
        }
    }
}

/// `1M`, `68m`, `4.7Mohm`: a scale suffix of milli that is neither `MEG` nor `MIL`. Returns the
/// number as written.
fn milli_suffix(text: &str) -> Option<&str> {
    let bytes = text.as_bytes();
    let mut end = 0;
    while end < bytes.len() {
        let c = bytes[end];
        let exponent = matches!(c, b'e' | b'E')
            && end > 0
            && bytes
                .get(end + 1)
                .is_some_and(|n| n.is_ascii_digit() || matches!(n, b'+' | b'-'));
        if c.is_ascii_digit() || c == b'.' || (end == 0 && matches!(c, b'+' | b'-')) || exponent {
            end += if exponent { 2 } else { 1 };
        } else {
            break;
        }
    }
    let (number, suffix) = (text.get(..end)?, text.get(end..)?);
    let lower = suffix.to_ascii_lowercase();
    let milli = lower.starts_with('m') && !lower.starts_with("meg") && !lower.starts_with("mil");
    (milli && !number.is_empty()).then_some(number)
}

fn is_bare_number(text: &str) -> bool {
    !text.is_empty() && text.parse::<f64>().is_ok()
}

struct Ctx<'c, 'a> {
    cx: &'c RuleContext<'a>,
    index: &'c NetIndex<'a>,
    signals: &'c [Signal],
}

impl Ctx<'_, '_> {
    /// The reference, or a net a voltage source sets.
    fn is_fixed(&self, net: NetId) -> bool {
        crate::rules::support::hygiene::is_ground(self.cx, net)
            || self.index.on(net).iter().any(|&(d, _)| {
                self.cx
                    .circuit
                    .devices()
                    .get(d)
                    .is_some_and(|x| x.kind == Kind::VoltageSource)
            })
    }

    /// Whether a behavioural or controlled source (B, E, F, G, H) has a pin on the net.
    fn behavioural_on(&self, net: NetId) -> bool {
        self.index.on(net).iter().any(|&(d, _)| {
            device_element(self.cx, d)
                .is_some_and(|(_, e)| matches!(e.letter, 'B' | 'E' | 'F' | 'G' | 'H'))
        })
    }

    /// Where a pull resistor's far end goes: a fixed net, or a switch's source or emitter.
    fn is_pull_end(&self, net: NetId) -> bool {
        self.is_fixed(net)
            || self.index.on(net).iter().any(|&(d, pin)| {
                self.cx
                    .circuit
                    .devices()
                    .get(d)
                    .and_then(|x| x.pins.get(pin))
                    .is_some_and(|p| matches!(p.role, PinRole::Source | PinRole::Emitter))
            })
    }

    fn value(&self, id: DeviceId) -> Option<f64> {
        let (d, e) = device_element(self.cx, id)?;
        match d.kind {
            Kind::Capacitor => capacitance(d, e),
            _ => resistance(d, e),
        }
    }

    /// What a resistor does to a 555's timing under a changed value: "runs at 14.4 kHz".
    fn timing_effect(&self, timer: DeviceId, part: DeviceId, value: f64) -> Option<(String, f64)> {
        let device = self.cx.circuit.devices().get(timer)?;
        let pick = |id: DeviceId| {
            if id == part {
                Some(value)
            } else {
                self.value(id)
            }
        };
        if let Some(a) = astable(self.cx, self.index, device) {
            if [a.ra, a.rb, a.c].contains(&part) {
                let f = astable_frequency(pick(a.ra)?, pick(a.rb)?, pick(a.c)?)?;
                return Some((format!("runs at {}", format_si(f, "Hz")), f));
            }
        }
        let m = monostable(self.cx, self.index, device)?;
        if [m.r, m.c].contains(&part) {
            let t = monostable_width(pick(m.r)?, pick(m.c)?)?;
            return Some((format!("gives pulses of {}", format_si(t, "s")), t));
        }
        None
    }

    fn timer_on(&self, device: &Device) -> Option<(DeviceId, PinRole)> {
        device
            .pins
            .iter()
            .find_map(|p| self.signals.get(p.net).and_then(Signal::timer))
    }

    fn resistor(&self, id: DeviceId, device: &Device, element: &FlatElement) -> Option<Finding> {
        let r = element
            .value
            .and_then(|v| v.known())
            .or_else(|| device.data.value("resistance"))?;
        if r.is_nan() || r >= 1.0 {
            return None;
        }
        let text = element.value_text.as_deref().unwrap_or("");
        // A timer's timing or control net, or a gate or base pulled to a rail or to the
        // switch's own source or emitter. A milliohm link in series with a base or gate is a
        // deliberate near-short (a current probe, a jumper), not a slip.
        let on_timer = device
            .pins
            .iter()
            .any(|p| self.signals.get(p.net).is_some_and(|s| s.timer().is_some()));
        let pulls_gate = device.pins.iter().enumerate().any(|(i, p)| {
            self.signals.get(p.net).is_some_and(|s| s.gate().is_some())
                && device
                    .pins
                    .iter()
                    .enumerate()
                    .any(|(j, other)| j != i && self.is_pull_end(other.net))
        });
        let on_signal = on_timer || pulls_gate;
        let timer = self.timer_on(device);
        let timing = matches!(
            timer,
            Some((_, PinRole::Trig | PinRole::Thr | PinRole::Dis))
        );
        match milli_suffix(text) {
            Some(number) if on_signal => Some(self.milli_slip(id, device, element, r, number)),
            _ if timing => {
                let (t, _) = timer?;
                Some(self.tiny_timing(id, element, r, text, t))
            }
            _ => None,
        }
    }

    fn milli_slip(
        &self,
        id: DeviceId,
        device: &Device,
        element: &FlatElement,
        r: f64,
        number: &str,
    ) -> Finding {
        let text = element.value_text.as_deref().unwrap_or("");
        let mega = r * MILLI_TO_MEGA;
        let meant = format!("{number}MEG");
        let (written, intended) = (format_si(r, "Ω"), format_si(mega, "Ω"));
        let mut finding = finding_at(
            RULE,
            RULE.severity(),
            element,
            format!(
                "{} = `{text}` reads as {written}: in SPICE `M` is milli, mega is `MEG`. {}",
                element.path,
                self.readings(id, device, r, mega, &written, &intended)
            ),
        )
        .with_value("resistance_as_written", r, "Ω", format!("from `{text}`"))
        .with_value("resistance_if_mega", mega, "Ω", format!("`{meant}`"))
        .with_help(format!("write `{meant}` if you meant {intended}"));
        if let Some((timer, _)) = self.timer_on(device) {
            if let (Some((_, a)), Some((_, b))) = (
                self.timing_effect(timer, id, r),
                self.timing_effect(timer, id, mega),
            ) {
                let unit = if finding.message.contains("runs at") {
                    ("frequency", "Hz")
                } else {
                    ("pulse_width", "s")
                };
                finding = finding
                    .with_value(
                        format!("{}_as_written", unit.0),
                        a,
                        unit.1,
                        "555 datasheet equation",
                    )
                    .with_value(
                        format!("{}_if_mega", unit.0),
                        b,
                        unit.1,
                        "555 datasheet equation",
                    );
            }
        }
        finding
    }

    /// Both readings and what each does, in a sentence or two.
    fn readings(
        &self,
        id: DeviceId,
        device: &Device,
        r: f64,
        mega: f64,
        written: &str,
        intended: &str,
    ) -> String {
        if let Some((timer, _)) = self.timer_on(device) {
            let name = super::support::hygiene::shown(self.cx, timer);
            if let (Some((a, _)), Some((b, _))) = (
                self.timing_effect(timer, id, r),
                self.timing_effect(timer, id, mega),
            ) {
                let equation = if a.starts_with("runs") {
                    "f ≈ 1.44/((RA+2RB)·C)"
                } else {
                    "t ≈ 1.1·R·C"
                };
                return format!(
                    "As written {name} {a}; as {intended} it {b} ({equation}, 555 datasheet)"
                );
            }
        }
        let far_of = |net: NetId| device.pins.iter().map(|p| p.net).find(|&n| n != net);
        for pin in &device.pins {
            let Some(signal) = self.signals.get(pin.net).filter(|s| s.any()) else {
                continue;
            };
            let far = far_of(pin.net);
            let far_fixed = far.is_some_and(|n| self.is_fixed(n));
            let far_name = far.map_or("?", |n| net_name(self.cx, n));
            if let Some(switch) = signal.gate() {
                let name = super::support::hygiene::shown(self.cx, switch);
                let own_source = self
                    .cx
                    .circuit
                    .devices()
                    .get(switch)
                    .and_then(|s| s.pin(PinRole::Source).or(s.pin(PinRole::Emitter)));
                if far_fixed || far == own_source {
                    return format!(
                        "As written it shorts the gate of {name} to `{far_name}`: the driver works \
                         into a short and the switch can never change state; as {intended} it is \
                         a pull resistor that holds the gate when the drive lets go"
                    );
                }
                return format!(
                    "As written it limits nothing between the driver and {name}; as {intended} \
                     the gate charges through {intended} so slowly that the switch lingers in its \
                     linear region"
                );
            }
            if let Some((timer, role)) = signal.timer() {
                let name = super::support::hygiene::shown(self.cx, timer);
                let pin_name = role.as_str().to_ascii_uppercase();
                let held = match (
                    role,
                    far.is_some_and(|n| crate::rules::support::hygiene::is_ground(self.cx, n)),
                ) {
                    (PinRole::Reset, true) => ": the timer is held in reset and never runs",
                    (PinRole::Trig, true) => ": the trigger is held low and the output stays high",
                    (PinRole::Ctrl, _) => ": the thresholds are forced to that node's voltage",
                    _ => "",
                };
                return format!(
                    "As written it ties {pin_name} of {name} to `{far_name}` through {written}{held}; \
                     as {intended} it is a pull resistor"
                );
            }
        }
        format!("As written it is {written}; as {intended} it is what a signal network uses")
    }

    fn tiny_timing(
        &self,
        id: DeviceId,
        element: &FlatElement,
        r: f64,
        text: &str,
        timer: DeviceId,
    ) -> Finding {
        let name = super::support::hygiene::shown(self.cx, timer);
        let effect = self
            .timing_effect(timer, id, r)
            .map_or(String::new(), |(a, _)| format!(": as written {name} {a}"));
        let help = if is_bare_number(text) {
            format!(
                "a scale suffix is probably missing, e.g. `{text}MEG` is {}; timing resistors \
                 are 1 kΩ to a few MΩ (common practice)",
                format_si(r * 1e6, "Ω")
            )
        } else {
            "timing resistors are 1 kΩ to a few MΩ (common practice): check the value".to_string()
        };
        finding_at(
            RULE,
            RULE.severity(),
            element,
            format!(
                "{} = {} is under 1 Ω in the timing network of {name}{effect}; below about 1 kΩ \
                 the discharge pin is overloaded and the timing no longer follows the equations",
                element.path,
                format_si(r, "Ω")
            ),
        )
        .with_value("resistance", r, "Ω", format!("from `{text}`"))
        .with_help(help)
    }

    fn pot(&self, device: &Device, element: &FlatElement) -> Option<Finding> {
        let r = resistance(device, element)?;
        if !(r > 0.0 && r < 1.0) {
            return None;
        }
        let mega = r * MILLI_TO_MEGA;
        let source = device.data.get("resistance").map_or_else(
            || "from the instance parameter".to_string(),
            |q| q.source.clone(),
        );
        Some(
            finding_at(
                RULE,
                RULE.severity(),
                element,
                format!(
                    "{} has a track resistance of {}: pots are 100 Ω to 1 MΩ (common practice), \
                     so at either end of its travel it is a dead short; if the value was written \
                     with `M` for mega, it is {} instead",
                    element.path,
                    format_si(r, "Ω"),
                    format_si(mega, "Ω")
                ),
            )
            .with_value("resistance", r, "Ω", source)
            .with_value("resistance_if_mega", mega, "Ω", "reading M as mega")
            .with_help(format!(
                "write the value with `MEG` ({}) or `k` as meant",
                format_si(mega, "Ω")
            )),
        )
    }

    fn capacitor(&self, id: DeviceId, device: &Device, element: &FlatElement) -> Option<Finding> {
        // The value as written is what a unit slip is about.
        let c = element
            .value
            .and_then(|v| v.known())
            .or_else(|| capacitance(device, element))?;
        if c.is_nan() || c < 1.0 {
            return None;
        }
        // Beside a behavioural or controlled source a capacitor is a model's integrator (a
        // rotor's inertia, a thermal mass), where farads are what is meant.
        if device.pins.iter().any(|p| self.behavioural_on(p.net)) {
            return None;
        }
        let text = element.value_text.as_deref().unwrap_or("");
        let micro = c * 1e-6;
        let meant = if is_bare_number(text) {
            format!("{text}u")
        } else {
            format_si(micro, "").replace([' ', 'µ'], "").to_string() + "u"
        };
        let reading = if is_bare_number(text) {
            format!(
                "reads as {} (a number with no suffix is farads)",
                format_si(c, "F")
            )
        } else {
            format!("is {}", format_si(c, "F"))
        };
        let effect = self
            .timer_on(device)
            .and_then(|(t, _)| {
                let name = super::support::hygiene::shown(self.cx, t);
                let (a, _) = self.timing_effect(t, id, c)?;
                let (b, _) = self.timing_effect(t, id, micro)?;
                Some(format!(
                    ": as written {name} {a}; as {} it {b}",
                    format_si(micro, "F")
                ))
            })
            .unwrap_or_else(|| {
                format!(
                    ": that is a supercapacitor's value; at this place {} fits",
                    format_si(micro, "F")
                )
            });
        Some(
            finding_at(
                RULE,
                RULE.severity(),
                element,
                format!("{} = `{text}` {reading}{effect}", element.path),
            )
            .with_value("capacitance_as_written", c, "F", format!("from `{text}`"))
            .with_value(
                "capacitance_if_micro",
                micro,
                "F",
                "reading the value as µF",
            )
            .with_help(
                resistor_named_as_capacitor(element, text).unwrap_or_else(|| {
                    format!("write `{meant}` if you meant {}", format_si(micro, "F"))
                }),
            ),
        )
    }
}

/// A value written with a resistor's suffix (`1k`, `4.7kOhm`, `2meg`) on a line whose name only
/// happens to start with C (a schematic reference such as `CHARGE1`): SPICE reads the first
/// letter, so the part is a capacitor of kilofarads.
fn resistor_named_as_capacitor(element: &FlatElement, text: &str) -> Option<String> {
    let lower = text.to_ascii_lowercase();
    let suffix = lower.trim_start_matches(|c: char| c.is_ascii_digit() || c == '.');
    let ohms = suffix.starts_with('k') || suffix.starts_with("meg") || suffix.contains("ohm");
    (ohms && element.name.len() > 2).then(|| {
        format!(
            "`{text}` is written like a resistance: if {} is meant as a resistor, rename it to \
             start with R (SPICE takes an element's kind from the first letter of its name, so \
             `{}` is a capacitor)",
            element.path, element.name
        )
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::netlist::Num;
    use crate::rules::support::hygiene::testkit::Deck;

    #[test]
    fn suffixes() {
        assert_eq!(milli_suffix("1M"), Some("1"));
        assert_eq!(milli_suffix("68m"), Some("68"));
        assert_eq!(milli_suffix("4.7Mohm"), Some("4.7"));
        assert_eq!(milli_suffix("1MEG"), None);
        assert_eq!(milli_suffix("1meg"), None);
        assert_eq!(milli_suffix("2mil"), None);
        assert_eq!(milli_suffix("1e3"), None);
        assert_eq!(milli_suffix("{rt}"), None);
        assert_eq!(milli_suffix("M"), None);
    }

    #[test]
    fn timing_resistor_in_milli_shows_both_frequencies() {
        let mut d = Deck::fan();
        let rb = d
            .netlist
            .elements
            .iter()
            .position(|e| e.name == "RB")
            .unwrap();
        d.netlist.elements[rb].value = Some(Num::Known(1e-3));
        d.netlist.elements[rb].value_text = Some("1M".into());
        let found = d.run(check);
        assert_eq!(found.len(), 1, "{found:?}");
        // 555 datasheet: 1.44/((5.6k + 2·1m)·1n) ≈ 257 kHz; 1.44/((5.6k + 2·1MEG)·1n) ≈ 718 Hz.
        let m = &found[0].message;
        assert!(
            m.contains("runs at 257 kHz") && m.contains("it runs at 718 Hz"),
            "{m}"
        );
        assert!(found[0].help.as_deref().unwrap_or("").contains("`1MEG`"));
    }

    #[test]
    fn sense_resistor_in_milli_is_fine_gate_pull_is_not() {
        let mut d = Deck::fan();
        d.r("RSENSE", "d", "0", "100m", 0.1);
        assert!(d.run(check).is_empty());
        let rpd = d
            .netlist
            .elements
            .iter()
            .position(|e| e.name == "RPD")
            .unwrap();
        d.netlist.elements[rpd].value = Some(Num::Known(0.01));
        d.netlist.elements[rpd].value_text = Some("10M".into());
        let found = d.run(check);
        assert_eq!(found.len(), 1);
        assert!(found[0].message.contains("shorts the gate of M1 to `0`"));
    }

    #[test]
    fn bare_number_capacitor() {
        let mut d = Deck::fan();
        d.two("CBULK", Kind::Capacitor, "v12", "0", 470.0, "470");
        let found = d.run(check);
        assert_eq!(found.len(), 1);
        assert!(found[0].help.as_deref().unwrap_or("").contains("`470u`"));
    }
}
