//! Shared pieces of the switching and stress rules: the finding skeleton for an element, names
//! and ratings with their provenance, a switch's rail and switched node, ranges read in a
//! switch's conduction sense, drive levels, MOSFET gain, and the standard ratings a fix names.
//!
//! Every structure here is built once per rule call and is linear in the number of pins.

use super::eseries;
use super::units::{format_si, sig3};
use super::RuleContext;
use crate::analysis::{LoadFacts, Range, SupplyFacts, SwitchFacts, TimerFacts};
use crate::circuit::{Device, DeviceId, Kind, NetId, PinRole, Rated};
use crate::diagnostic::{Finding, Severity};
use crate::netlist::FlatElement;

/// The flattened element behind a device.
pub fn element<'a>(cx: &RuleContext<'a>, id: DeviceId) -> Option<&'a FlatElement> {
    cx.netlist.elements.get(cx.circuit.devices.get(id)?.element)
}

pub fn device<'a>(cx: &RuleContext<'a>, id: DeviceId) -> Option<&'a Device> {
    cx.circuit.devices.get(id)
}

pub fn kind(cx: &RuleContext<'_>, id: DeviceId) -> Option<Kind> {
    device(cx, id).map(|d| d.kind)
}

/// The element's path as the user reads it (`XDRV.M1`, or `M1` at top level).
pub fn name(cx: &RuleContext<'_>, id: DeviceId) -> String {
    element(cx, id).map_or_else(|| format!("device {id}"), |e| e.path.clone())
}

pub fn net_name<'a>(cx: &RuleContext<'a>, net: NetId) -> &'a str {
    cx.circuit.nets.get(net).map_or("?", |n| n.name.as_str())
}

pub fn is_ground(cx: &RuleContext<'_>, net: NetId) -> bool {
    cx.circuit.nets.get(net).is_some_and(|n| n.is_ground)
}

/// A finding on a device's line, with its instance path and the instance lines that placed it.
pub fn finding_at(
    rule: &str,
    severity: Severity,
    cx: &RuleContext<'_>,
    id: DeviceId,
    message: impl Into<String>,
) -> Option<Finding> {
    let element = element(cx, id)?;
    let mut finding = Finding::new(rule, severity, element.span, message)
        .with_element(element.name.clone(), element.instance_path());
    finding.instances = element.instances.clone();
    Some(finding)
}

/// Adds a label on a device's line, unless the device is unknown or is the finding's own line.
pub fn label(finding: Finding, cx: &RuleContext<'_>, id: DeviceId, message: &str) -> Finding {
    match element(cx, id) {
        Some(e) if e.span != finding.span && !finding.labels.iter().any(|l| l.span == e.span) => {
            finding.with_label(e.span, message)
        }
        _ => finding,
    }
}

/// A rating with its provenance.
pub fn rated(cx: &RuleContext<'_>, id: DeviceId, key: &str) -> Option<Rated> {
    device(cx, id)?.data.get(key).cloned()
}

/// A rating, or the kind's documented default when part knowledge gave none.
pub fn rated_or(cx: &RuleContext<'_>, id: DeviceId, key: &str, default: f64, why: &str) -> Rated {
    rated(cx, id, key).unwrap_or_else(|| Rated {
        value: default,
        source: why.to_string(),
    })
}

/// `4.2 V` or `4.2–5.1 V`.
pub fn range_text(min: f64, max: f64, unit: &str) -> String {
    if (max - min).abs() <= 1e-9 * max.abs().max(min.abs()).max(1e-30) {
        format_si(max, unit)
    } else {
        format!("{}–{}", sig3_scaled(min, max, unit), format_si(max, unit))
    }
}

/// The lower end of a range in the upper end's prefix, so `0.45–1.2 A` reads as one scale.
fn sig3_scaled(min: f64, max: f64, unit: &str) -> String {
    let upper = format_si(max, unit);
    let prefix_and_unit = upper.split_once(' ').map_or("", |(_, rest)| rest);
    let prefix = prefix_and_unit.strip_suffix(unit).unwrap_or("");
    let scale = match prefix {
        "G" => 1e9,
        "M" => 1e6,
        "k" => 1e3,
        "m" => 1e-3,
        "µ" => 1e-6,
        "n" => 1e-9,
        "p" => 1e-12,
        "f" => 1e-15,
        _ => 1.0,
    };
    sig3(min / scale)
}

/// `90 %` or `10–90 %`.
pub fn duty_text(range: &Range) -> String {
    let lo = sig3(range.min * 100.0);
    let hi = sig3(range.max * 100.0);
    if lo == hi {
        format!("{hi} %")
    } else {
        format!("{lo}–{hi} %")
    }
}

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

/// The supply a switch and its load work from.
#[derive(Clone, Debug)]
pub struct Rail {
    pub v: Range,
    pub supply: Option<DeviceId>,
    /// The supply's positive net, when known.
    pub net: Option<NetId>,
}

pub fn supply_facts<'a>(cx: &RuleContext<'a>, supply: DeviceId) -> Option<&'a SupplyFacts> {
    cx.analysis.supplies.iter().find(|s| s.device == supply)
}

/// A supply's corners as a range whose states name the corner (`V12 at min`).
pub fn supply_range(cx: &RuleContext<'_>, s: &SupplyFacts) -> Range {
    let name = name(cx, s.device);
    if s.min == s.max {
        Range::point(
            s.nominal,
            format!("{name} at {}", format_si(s.nominal, "V")),
        )
    } else {
        Range {
            min: s.min,
            max: s.max,
            min_state: format!("{name} at min"),
            max_state: format!("{name} at max"),
        }
    }
}

/// The rail of a switch: the analysis's rail voltage, or the corners of its rail supply.
pub fn rail(cx: &RuleContext<'_>, sw: &SwitchFacts) -> Option<Rail> {
    let net = sw.rail_net.or_else(|| {
        sw.rail_supply
            .and_then(|s| device(cx, s))
            .and_then(|d| d.pin(PinRole::Pos))
    });
    let from_supply = || {
        sw.rail_supply
            .and_then(|s| supply_facts(cx, s))
            .map(|s| supply_range(cx, s))
    };
    let v = match &sw.rail_v {
        Some(r) if r.max.abs() > 0.1 => Some(r.clone()),
        _ => from_supply(),
    }?;
    Some(Rail {
        v,
        supply: sw.rail_supply,
        net,
    })
}

pub fn load_of<'a>(cx: &RuleContext<'a>, sw: &SwitchFacts) -> Option<&'a LoadFacts> {
    cx.analysis.loads.get(sw.load?)
}

/// The device a person calls "the load": the load part, else the first inductive part of the
/// branch, else the branch's first device.
pub fn load_device(cx: &RuleContext<'_>, sw: &SwitchFacts) -> Option<DeviceId> {
    if let Some(load) = load_of(cx, sw) {
        return Some(load.device);
    }
    sw.branch
        .iter()
        .copied()
        .find(|&d| kind(cx, d).is_some_and(Kind::is_inductive))
        .or_else(|| sw.branch.first().copied())
}

/// The switch's main terminals: drain and source, or collector and emitter.
pub fn main_terminals(d: &Device) -> Option<(NetId, NetId)> {
    if d.kind.is_mos() {
        Some((d.pin(PinRole::Drain)?, d.pin(PinRole::Source)?))
    } else if d.kind.is_bjt() {
        Some((d.pin(PinRole::Collector)?, d.pin(PinRole::Emitter)?))
    } else {
        None
    }
}

/// The two ends of a load branch: the node the switch pulls (`switched`) and the far end.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct BranchEnds {
    pub switched: NetId,
    pub far: NetId,
}

pub fn branch_ends(cx: &RuleContext<'_>, sw: &SwitchFacts) -> Option<BranchEnds> {
    let mut counts: Vec<(NetId, usize)> = Vec::new();
    for &d in &sw.branch {
        for pin in &device(cx, d)?.pins {
            match counts.iter_mut().find(|(n, _)| *n == pin.net) {
                Some((_, c)) => *c += 1,
                None => counts.push((pin.net, 1)),
            }
        }
    }
    let ends: Vec<NetId> = counts
        .iter()
        .filter(|(_, c)| c % 2 == 1)
        .map(|(n, _)| *n)
        .collect();
    if let Some(switched) = sw.switched_net {
        if let Some(&far) = ends.iter().find(|&&n| n != switched) {
            return Some(BranchEnds { switched, far });
        }
    }
    let (a, b) = main_terminals(device(cx, sw.device)?)?;
    match ends.as_slice() {
        [x, y] if *x == a || *x == b => Some(BranchEnds {
            switched: *x,
            far: *y,
        }),
        [x, y] if *y == a || *y == b => Some(BranchEnds {
            switched: *y,
            far: *x,
        }),
        _ => None,
    }
}

/// Pins on each net, built once per rule call.
pub struct NetIndex {
    offsets: Vec<usize>,
    pins: Vec<(DeviceId, usize)>,
}

impl NetIndex {
    pub fn new(cx: &RuleContext<'_>) -> NetIndex {
        let nets = cx.circuit.nets.len();
        let mut offsets = vec![0usize; nets + 1];
        for device in &cx.circuit.devices {
            for pin in &device.pins {
                if let Some(count) = offsets.get_mut(pin.net + 1) {
                    *count += 1;
                }
            }
        }
        for i in 1..offsets.len() {
            offsets[i] += offsets[i - 1];
        }
        let mut fill = offsets.clone();
        let mut pins = vec![(0, 0); offsets.last().copied().unwrap_or(0)];
        for (id, device) in cx.circuit.devices.iter().enumerate() {
            for (index, pin) in device.pins.iter().enumerate() {
                if let Some(slot) = fill.get_mut(pin.net) {
                    if let Some(entry) = pins.get_mut(*slot) {
                        *entry = (id, index);
                    }
                    *slot += 1;
                }
            }
        }
        NetIndex { offsets, pins }
    }

    /// `(device, pin index)` of every pin on `net`.
    pub fn on(&self, net: NetId) -> &[(DeviceId, usize)] {
        match (self.offsets.get(net), self.offsets.get(net + 1)) {
            (Some(&a), Some(&b)) => self.pins.get(a..b).unwrap_or(&[]),
            _ => &[],
        }
    }

    /// Two-terminal devices with one pin on `a` and the other on `b`, either way round.
    pub fn between(&self, cx: &RuleContext<'_>, a: NetId, b: NetId) -> Vec<DeviceId> {
        let mut found: Vec<DeviceId> = self
            .on(a)
            .iter()
            .map(|&(d, _)| d)
            .filter(|&d| {
                device(cx, d).is_some_and(|dev| {
                    dev.pins.len() == 2 && {
                        let (x, y) = (dev.pins[0].net, dev.pins[1].net);
                        (x == a && y == b) || (x == b && y == a)
                    }
                })
            })
            .collect();
        found.sort_unstable();
        found.dedup();
        found
    }

    /// The supply source holding `net` against ground, when there is one.
    pub fn supply_on<'a>(&self, cx: &RuleContext<'a>, net: NetId) -> Option<&'a SupplyFacts> {
        self.on(net).iter().find_map(|&(d, _)| {
            let dev = device(cx, d)?;
            let grounded = dev.pin(PinRole::Neg).is_some_and(|n| is_ground(cx, n));
            if dev.kind == Kind::VoltageSource && dev.pin(PinRole::Pos) == Some(net) && grounded {
                supply_facts(cx, d)
            } else {
                None
            }
        })
    }
}

/// The timer facts of a device.
pub fn timer_facts<'a>(cx: &RuleContext<'a>, id: DeviceId) -> Option<&'a TimerFacts> {
    cx.analysis.timers.iter().find(|t| t.device == id)
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

/// Square-law gain of a MOSFET and how it was found.
#[derive(Clone, Debug, PartialEq)]
pub struct Gain {
    /// k in A/V² (I_D = k/2·(V_GS − V_th)² in saturation).
    pub k: f64,
    /// How it was found, for messages (`from rds_on 50 mΩ at 10 V`).
    pub how: String,
    /// Provenance of the data it came from.
    pub source: String,
}

/// `k = KP·W/L` from the model, else `1/(rds_on·(vgs_rated − vgs_th_max))` (the triode
/// region at small V_DS: R = 1/(k·(V_GS − V_th))).
pub fn mos_gain(cx: &RuleContext<'_>, id: DeviceId) -> Option<Gain> {
    let data = &device(cx, id)?.data;
    if let Some(kp) = data.get("kp").filter(|r| r.value > 0.0) {
        let w = data.value("w").filter(|v| *v > 0.0).unwrap_or(1.0);
        let l = data.value("l").filter(|v| *v > 0.0).unwrap_or(1.0);
        return Some(Gain {
            k: kp.value * w / l,
            how: "from KP·W/L".into(),
            source: kp.source.clone(),
        });
    }
    let rds = data.get("rds_on").filter(|r| r.value > 0.0)?;
    let rated = data.value("vgs_rated")?;
    let th = data.value("vgs_th_max")?;
    if rated - th < 0.1 {
        return None;
    }
    Some(Gain {
        k: 1.0 / (rds.value * (rated - th)),
        how: format!(
            "from rds_on {} at {}, k = 1/(rds_on·(vgs_rated − vgs_th_max))",
            format_si(rds.value, "Ω"),
            format_si(rated, "V")
        ),
        source: rds.source.clone(),
    })
}

/// Estimated on-resistance at a gate drive, `1/(k·(V_GS − V_th))`.
pub fn rds_at(gain: &Gain, vgs: f64, threshold: f64) -> Option<f64> {
    let over = vgs - threshold;
    (over > 0.0 && gain.k > 0.0).then(|| 1.0 / (gain.k * over))
}

/// MOSFET drain-source voltage classes a buyer finds (common practice).
pub const VDS_CLASSES: [f64; 14] = [
    20.0, 30.0, 40.0, 60.0, 80.0, 100.0, 150.0, 200.0, 250.0, 400.0, 500.0, 600.0, 800.0, 1000.0,
];
/// Capacitor voltage ratings (common practice for aluminium electrolytics and ceramics).
pub const CAP_VOLTAGES: [f64; 16] = [
    6.3, 10.0, 16.0, 25.0, 35.0, 50.0, 63.0, 80.0, 100.0, 160.0, 200.0, 250.0, 350.0, 400.0, 450.0,
    630.0,
];
/// Resistor power ratings (common practice).
pub const RESISTOR_WATTS: [f64; 8] = [0.125, 0.25, 0.5, 1.0, 2.0, 3.0, 5.0, 10.0];
/// E6 series (IEC 60063), one decade: the usual steps of electrolytic capacitors.
pub const E6: [f64; 6] = [1.0, 1.5, 2.2, 3.3, 4.7, 6.8];

/// The smallest standard rating at or above `value`.
pub fn next_rating(list: &[f64], value: f64) -> Option<f64> {
    list.iter().copied().find(|&r| r >= value * (1.0 - 1e-9))
}

/// A capacitance rounded up to E6.
pub fn cap_e6(value: f64) -> Option<f64> {
    eseries::round_up(value, &E6)
}

/// A concrete diode for a freewheel path that must block `v_rev` and carry `amps`, from the
/// JEDEC numbers in the built-in library where one fits. `fast` asks for no reverse recovery.
pub fn diode_hint(v_rev: f64, amps: f64, fast: bool) -> String {
    let need = if amps > 0.0 {
        format!(
            "rated for at least {} reverse and {}",
            format_si(v_rev, "V"),
            format_si(amps, "A")
        )
    } else {
        format!(
            "rated for at least {} reverse and the load's current",
            format_si(v_rev, "V")
        )
    };
    let schottky_1a = [("1N5817", 20.0), ("1N5818", 30.0), ("1N5819", 40.0)];
    let rectifier_1a = [
        ("1N4001", 50.0),
        ("1N4002", 100.0),
        ("1N4003", 200.0),
        ("1N4004", 400.0),
    ];
    let rectifier_3a = [
        ("1N5400", 50.0),
        ("1N5401", 100.0),
        ("1N5402", 200.0),
        ("1N5404", 400.0),
    ];
    let pick = |list: &[(&'static str, f64)], amps_rated: f64| {
        (amps <= amps_rated)
            .then(|| list.iter().find(|(_, v)| *v >= v_rev))
            .flatten()
            .map(|(n, v)| (*n, *v, amps_rated))
    };
    if fast {
        match pick(&schottky_1a, 1.0) {
            Some((n, v, a)) => format!(
                "a Schottky {need}, e.g. a {n} ({}, {})",
                format_si(v, "V"),
                format_si(a, "A")
            ),
            None if v_rev <= 100.0 => format!("a Schottky {need}"),
            None => format!("an ultrafast-recovery diode {need}"),
        }
    } else {
        match pick(&rectifier_1a, 1.0).or_else(|| pick(&rectifier_3a, 3.0)) {
            Some((n, v, a)) => format!(
                "a rectifier {need}, e.g. a {n} ({}, {})",
                format_si(v, "V"),
                format_si(a, "A")
            ),
            None => format!("a rectifier {need}"),
        }
    }
}

/// True when the drive is a repeating PWM (a known frequency of at least 20 Hz) rather than an
/// on/off command.
pub fn is_pwm(sw: &SwitchFacts) -> bool {
    sw.frequency_hz.as_ref().is_some_and(|f| f.max >= 20.0)
        && sw.duty.as_ref().is_none_or(|d| d.min < 1.0 && d.max > 0.0)
}

/// A device's DC resistance as the stand-ins see it: a resistor's value, a winding's
/// resistance (or rated voltage over stall or rated current).
pub fn dc_resistance(cx: &RuleContext<'_>, id: DeviceId) -> Option<f64> {
    let d = device(cx, id)?;
    let data = &d.data;
    match d.kind {
        Kind::Resistor | Kind::Potentiometer => data
            .value("resistance")
            .or_else(|| element(cx, id)?.value?.known()),
        k if k.is_inductive() => data.value("resistance").or_else(|| {
            let v = data.value("rated_voltage")?;
            let i = data
                .value("stall_current")
                .or_else(|| data.value("rated_current").filter(|_| k != Kind::DcMotor))?;
            (i > 0.0).then(|| v / i)
        }),
        _ => None,
    }
    .filter(|r| r.is_finite() && *r >= 0.0)
}

/// The current the load branch draws with the switch fully on (V_rail less a saturated switch's
/// drop, over the branch's resistance), when every part of the branch is resistive.
pub fn saturated_current(cx: &RuleContext<'_>, sw: &SwitchFacts, switch_drop: f64) -> Option<f64> {
    let v = rail(cx, sw)?.v.max;
    let mut r = 0.0;
    for &d in &sw.branch {
        r += dc_resistance(cx, d)?;
    }
    (r > 0.0 && v > switch_drop).then(|| (v - switch_drop) / r)
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

/// True when something other than the load flows through the switch in the on state: a
/// freewheel diode fitted backwards, or one whose reverse rating is below the rail so that it
/// breaks down. The switch's current and loss then describe that short, which its own rule
/// reports, not the switch's drive.
pub fn shorted_through(cx: &RuleContext<'_>, sw: &SwitchFacts) -> bool {
    let rail_v = rail(cx, sw).map(|r| r.v.max);
    sw.freewheel.iter().any(|fw| {
        let broken_down = matches!(kind(cx, fw.device), Some(Kind::Diode | Kind::Schottky))
            && match (rated(cx, fw.device, "vrrm"), rail_v) {
                (Some(v), Some(rail)) => v.value < rail,
                _ => false,
            };
        fw.reversed || broken_down
    })
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
