//! The facts analyses hand to rules and to `kickback report`. Every number is in SI base units;
//! every range remembers the state that produced each extreme; every part number says where it
//! came from.

use crate::circuit::{DeviceId, Kind, Rated};
use serde::Serialize;

/// A value over states and corners, with the state that gave each extreme
/// (e.g. `V12 at max 12.6 V, RV1 wiper at 0 %, VSTIR high`).
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Range {
    pub min: f64,
    pub max: f64,
    #[serde(skip)]
    pub min_state: String,
    #[serde(skip)]
    pub max_state: String,
}

impl Range {
    pub fn point(value: f64, state: impl Into<String>) -> Range {
        let state = state.into();
        Range {
            min: value,
            max: value,
            min_state: state.clone(),
            max_state: state,
        }
    }

    /// Widens the range to include `value` seen in `state`.
    pub fn include(&mut self, value: f64, state: &str) {
        if value < self.min {
            self.min = value;
            self.min_state = state.to_string();
        }
        if value > self.max {
            self.max = value;
            self.max_state = state.to_string();
        }
    }

    /// Builds a range from (value, state) samples; `None` when there are none or any is not finite.
    pub fn from_samples<'a>(samples: impl IntoIterator<Item = (f64, &'a str)>) -> Option<Range> {
        let mut range: Option<Range> = None;
        for (v, s) in samples {
            if !v.is_finite() {
                return None;
            }
            match &mut range {
                Some(r) => r.include(v, s),
                None => range = Some(Range::point(v, s)),
            }
        }
        range
    }
}

/// An independent voltage source treated as a supply, with its corners.
#[derive(Clone, Debug, PartialEq)]
pub struct SupplyFacts {
    pub device: DeviceId,
    pub nominal: f64,
    pub min: f64,
    pub max: f64,
    /// Where the corners came from (`from config [supply.V12]`, `the source's DC value`).
    pub source: String,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum TimerMode {
    Astable,
    Monostable,
    Unknown,
}

/// Which phase of a timer cannot finish, and why.
#[derive(Clone, Debug, PartialEq)]
pub struct StuckPhase {
    /// `"high"` (charging) or `"low"` (discharging).
    pub phase: &'static str,
    pub reason: String,
    /// Devices that make it so (the resistor too large, the missing path...), the one to change
    /// first.
    pub devices: Vec<DeviceId>,
    /// Where the capacitor voltage settles in that phase, and the threshold it would have to
    /// reach.
    pub settles_v: f64,
    pub threshold_v: f64,
    /// The comparator input's bias current when it is what stops the phase (the network alone
    /// would reach the threshold), with the resistance it flows through.
    pub bias_a: Option<f64>,
    pub bias_ohms: Option<f64>,
    /// The discharge pin runs at its own current limit: the supply reaches DIS through almost
    /// nothing, so the pin cannot pull the capacitor down.
    pub discharge_limited: bool,
    /// The state in which it was found (`V1 at min, RV1 wiper at 100 %`).
    pub state: String,
}

/// What triggers a monostable and how its pulse compares with the trigger.
#[derive(Clone, Debug, PartialEq)]
pub struct TriggerFacts {
    /// The PULSE source or the timer whose output drives TRIG.
    pub driver: DeviceId,
    /// Resistors between the driver and TRIG (empty: wired straight).
    pub via: Vec<DeviceId>,
    /// Time the trigger input spends below its threshold in each period.
    pub low_s: Range,
    pub period_s: Range,
    /// The one-shot's trigger threshold (half its control voltage).
    pub threshold_v: Range,
}

#[derive(Clone, Debug, PartialEq)]
pub struct TimerFacts {
    pub device: DeviceId,
    pub mode: TimerMode,
    pub supply_v: Option<Range>,
    pub high_s: Option<Range>,
    pub low_s: Option<Range>,
    pub period_s: Option<Range>,
    pub frequency_hz: Option<Range>,
    pub duty: Option<Range>,
    /// Current the discharge pin sinks when on, over pot travel and supply corners.
    pub discharge_current_a: Option<Range>,
    /// The resistor/pot chain between the discharge pin and the supply (empty: none found).
    pub discharge_chain: Vec<DeviceId>,
    /// Peak current of a capacitor dumped into the discharge pin through a diode with no
    /// series resistor, and the diode.
    pub discharge_dump: Option<(DeviceId, f64)>,
    /// The state in which that peak is largest (`RV1 wiper at 100 %`).
    pub discharge_dump_state: Option<String>,
    pub timing_capacitor: Option<DeviceId>,
    pub pots: Vec<DeviceId>,
    pub stuck: Option<StuckPhase>,
    pub trigger: Option<TriggerFacts>,
    /// For a monostable whose pulse outlasts its trigger period: the output's real frequency
    /// and duty.
    pub divided_frequency_hz: Option<f64>,
    pub divided_duty: Option<f64>,
    /// Output pin current over states: positive while the pin sources current, negative while
    /// it sinks.
    pub output_current_a: Option<Range>,
    /// Comparator thresholds on the capacitor: upper (threshold input, the control voltage) and
    /// lower (trigger input, half of it), over corners.
    pub upper_threshold_v: Option<Range>,
    pub lower_threshold_v: Option<Range>,
    /// What the discharge pin sees while it is off: the Thevenin resistance of the network at
    /// the pin and the voltage behind it, over pot travel and corners. A resistance near zero
    /// with a voltage behind it is a dead short once the pin turns on.
    pub discharge_source_ohms: Option<Range>,
    pub discharge_open_v: Option<Range>,
    /// Devices that carry the capacitor's current while it charges (output high) and while it
    /// discharges (output low): the parts that set each phase's time.
    pub charge_path: Vec<DeviceId>,
    pub discharge_path: Vec<DeviceId>,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Side {
    Low,
    High,
    Bridge,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum FreewheelKind {
    /// A diode across the load branch (cathode toward the rail end).
    AcrossLoad,
    /// A diode from the switched node to the rail.
    ToRail,
    /// A TVS or zener across the switch.
    Clamp,
    /// The body diode of the opposite switch of a bridge leg.
    OppositeBodyDiode,
}

#[derive(Clone, Debug, PartialEq)]
pub struct Freewheel {
    pub device: DeviceId,
    pub kind: FreewheelKind,
    /// True when the diode is fitted so that it conducts from the rail in the on state.
    pub reversed: bool,
    /// Current through it in the on state when reversed (the short).
    pub on_state_current_a: Option<f64>,
}

/// What drives a switch's gate or base.
#[derive(Clone, Debug, PartialEq)]
pub struct DriverFacts {
    /// The source, timer or logic output at the far end of the gate network.
    pub device: DeviceId,
    /// Resistors and other parts between driver and gate.
    pub network: Vec<DeviceId>,
    /// Other switches whose gates share this drive.
    pub shared_with: Vec<DeviceId>,
    /// A bootstrap or charge pump lifts the drive above the rail.
    pub boosted: bool,
    /// Driver output can float (tri-state, reset, unpowered).
    pub can_float: bool,
}

#[derive(Clone, Debug, PartialEq)]
pub struct SwitchFacts {
    pub device: DeviceId,
    pub kind: Kind,
    pub side: Side,
    /// The rail net the load branch returns to (the supply's positive net for low side).
    pub rail_v: Option<Range>,
    pub rail_supply: Option<DeviceId>,
    /// Index into [`Analysis::loads`] of the load branch it interrupts.
    pub load: Option<usize>,
    /// Every device of the interrupted branch.
    pub branch: Vec<DeviceId>,
    pub inductive: bool,
    pub driver: Option<DriverFacts>,
    pub freewheel: Vec<Freewheel>,
    /// The other switch of a bridge leg.
    pub bridge_partner: Option<DeviceId>,
    /// On-state V_GS (MOS) or V_BE (BJT), relative to the switch's own source/emitter.
    pub vgs_on_v: Option<Range>,
    pub vgs_off_v: Option<Range>,
    /// BJT base current in the on state.
    pub base_current_a: Option<Range>,
    /// On-state V_DS / V_CE.
    pub vds_on_v: Option<Range>,
    /// On-state drain/collector current.
    pub current_a: Option<Range>,
    /// Conduction loss over the duty range (hot-die Rds(on) for MOS).
    pub dissipation_w: Option<Range>,
    /// Duty and frequency of the drive, when known.
    pub duty: Option<Range>,
    pub frequency_hz: Option<Range>,
    /// The switch ends up a source follower (high-side N-channel with no boost).
    pub follower: bool,
    /// The on-state solve found the switch outside its triode/saturation region.
    pub linear_region: bool,
}

#[derive(Clone, Debug, PartialEq)]
pub struct LoadFacts {
    pub device: DeviceId,
    pub kind: Kind,
    pub rated_v: Option<Rated>,
    pub resistance: Option<Rated>,
    pub inductance: Option<Rated>,
    /// On-state voltage across the load.
    pub peak_v: Option<Range>,
    /// Average `Vpk·D` over the duty range.
    pub avg_v: Option<Range>,
    /// Average when the PWM period is short against L/R (T < τ/3), RMS `Vpk·√D` otherwise or
    /// when τ is unknown.
    pub effective_v: Option<Range>,
    /// Whether `effective_v` is the average (true) or the RMS value (false).
    pub effective_is_average: bool,
    pub current_a: Option<Range>,
    pub duty: Option<Range>,
    pub frequency_hz: Option<Range>,
    /// ½·L·I² at the peak current.
    pub stored_energy_j: Option<f64>,
    pub switch: Option<DeviceId>,
    pub freewheel: Option<DeviceId>,
}

/// Worst-state dissipation of a resistor or pot (and the wiper current of a pot).
#[derive(Clone, Debug, PartialEq)]
pub struct ResistorFacts {
    pub device: DeviceId,
    pub power_w: Range,
    pub wiper_current_a: Option<Range>,
}

/// Voltage across a capacitor (pos − neg in the element's node order) over states.
#[derive(Clone, Debug, PartialEq)]
pub struct CapacitorFacts {
    pub device: DeviceId,
    pub voltage_v: Range,
}
