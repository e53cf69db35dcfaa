//! Gate and base drive: conduction sense, drive levels, MOSFET gain and on-resistance.

use super::*;

/// +1 for N-channel and NPN parts (they conduct with the gate or base above the source or
/// emitter), −1 for P-channel and PNP parts.
pub fn polarity(kind: Kind) -> f64 {
    if matches!(kind, Kind::Pmos | Kind::Pnp) {
        -1.0
    } else {
        1.0
    }
}
/// A gate or base voltage range read in the conduction sense of its switch: positive values
/// turn it on, whatever its polarity.
#[derive(Clone, Debug, PartialEq)]
pub struct Drive {
    pub weakest: f64,
    pub weakest_state: String,
    pub strongest: f64,
    pub strongest_state: String,
}
pub fn in_conduction_sense(range: &Range, kind: Kind) -> Drive {
    if polarity(kind) > 0.0 {
        Drive {
            weakest: range.min,
            weakest_state: range.min_state.clone(),
            strongest: range.max,
            strongest_state: range.max_state.clone(),
        }
    } else {
        // 0 − x rather than −x, so a zero reads as 0, not −0.
        Drive {
            weakest: 0.0 - range.max,
            weakest_state: range.max_state.clone(),
            strongest: 0.0 - range.min,
            strongest_state: range.min_state.clone(),
        }
    }
}
/// The high level a driver gives at its weakest corner, and how it was found.
#[derive(Clone, Debug, PartialEq)]
pub struct DriveLevel {
    pub high: f64,
    pub low: f64,
    pub how: String,
}
pub fn drive_level(cx: &RuleContext<'_>, driver: DeviceId) -> Option<DriveLevel> {
    let dev = device(cx, driver)?;
    let who = name(cx, driver);
    match dev.kind {
        Kind::VoltageSource => {
            let spec = element(cx, driver)?.source.as_ref()?;
            let (low, high) = spec
                .levels()
                .or_else(|| spec.dc.map(|v| (v.min(0.0), v.max(0.0))))?;
            Some(DriveLevel {
                high,
                low,
                how: format!("{who}'s high level"),
            })
        }
        Kind::Timer555 | Kind::Timer555Cmos => {
            let supply = timer_facts(cx, driver)
                .and_then(|t| t.supply_v.as_ref())
                .map(|r| r.min)?;
            let drop = rated_or(cx, driver, "out_high_drop", 1.7, "timer-555 default");
            let low = dev.data.value("vol").unwrap_or(0.1);
            Some(DriveLevel {
                high: (supply - drop.value).max(0.0),
                low,
                how: format!(
                    "{who}'s supply {} less its output's high-level drop {} ({})",
                    format_si(supply, "V"),
                    format_si(drop.value, "V"),
                    drop.source
                ),
            })
        }
        Kind::LogicOutput => {
            let voh = rated_or(cx, driver, "voh", 3.3, "3.3 V logic, common practice");
            Some(DriveLevel {
                high: voh.value,
                low: dev.data.value("vol").unwrap_or(0.0),
                how: format!("{who}'s high level ({})", voh.source),
            })
        }
        _ => None,
    }
}
/// True when the drive is a repeating PWM (a known frequency of at least 20 Hz) rather than an
/// on/off command.
pub fn is_pwm(sw: &SwitchFacts) -> bool {
    sw.frequency_hz.as_ref().is_some_and(|f| f.max >= 20.0)
        && sw.duty.as_ref().is_none_or(|d| d.min < 1.0 && d.max > 0.0)
}
/// The weakest magnitude of a range and its state (0 when the range crosses zero).
pub fn weakest_magnitude(range: &Range) -> (f64, String) {
    if range.min >= 0.0 {
        (range.min, range.min_state.clone())
    } else if range.max <= 0.0 {
        (-range.max, range.max_state.clone())
    } else if range.min.abs() < range.max.abs() {
        (0.0, range.min_state.clone())
    } else {
        (0.0, range.max_state.clone())
    }
}
/// True when a switch's gate (base) is wired straight to its own source (emitter): it is held
/// off on purpose (an unused bridge switch) and no drive rule applies to it.
pub fn held_off(cx: &RuleContext<'_>, sw: &SwitchFacts) -> bool {
    let Some(d) = device(cx, sw.device) else {
        return false;
    };
    let (control, reference) = if d.kind.is_bjt() {
        (d.pin(PinRole::Base), d.pin(PinRole::Emitter))
    } else {
        (d.pin(PinRole::Gate), d.pin(PinRole::Source))
    };
    control.is_some() && control == reference
}
/// True when the analysis took the transistor for a switch (see
/// `analysis::switching::stage`). Every switch rule judges switches only: an amplifier sits in
/// its active region on purpose, and a stage kickback cannot place gets one note from
/// `stage-unknown` instead of findings built on a guess.
pub fn is_switch(sw: &SwitchFacts) -> bool {
    sw.stage == Stage::Switch
}
