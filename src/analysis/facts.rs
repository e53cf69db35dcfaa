//! The facts analyses hand to rules and to `kickback report`. Every number is in SI base units;
//! every range remembers the state that produced each extreme; every part number says where it
//! came from.

use crate::circuit::{DeviceId, Kind, NetId, Rated};
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

/// Where a switch sits against its load (see `analysis::switching::topology`).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Side {
    /// Returns the load to the lower rail: an N-channel source or NPN emitter on ground (or
    /// through a sense resistor of at most 10 Ω).
    Low,
    /// Connects the load to the upper rail: a P-channel source or PNP emitter on the rail, or
    /// an N-channel drain on the rail with its source toward the load (a follower unless
    /// boosted).
    High,
    /// One switch of a leg: a high-side and a low-side switch sharing their switched node.
    Bridge,
}

/// What a transistor's stage was taken for (see `analysis::switching::stage`). The switch
/// rules judge switches only: an amplifier sits in its active region on purpose, and a stage
/// kickback cannot place gets at most a note saying what it needs.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Stage {
    /// Driven between two levels by a pulse source, a timer, a logic output or a pre-driver
    /// that follows one.
    Switch,
    /// Biased into its active region: a divider or DC level at its base or gate, feedback from
    /// its collector or drain, emitter or source degeneration, a sine or AC drive, an
    /// amplifier's output with feedback.
    Amplifier,
    /// Neither could be told from the circuit.
    Unknown,
}

impl Stage {
    pub fn as_str(self) -> &'static str {
        match self {
            Stage::Switch => "switch",
            Stage::Amplifier => "amplifier",
            Stage::Unknown => "unknown",
        }
    }
}

#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum FreewheelKind {
    /// A diode with both ends on the load branch (alone, or in series with one more diode,
    /// zener or resistor through a net of their own), either way round; whether it is the
    /// right way round is [`Freewheel::reversed`].
    AcrossLoad,
    /// A diode from the switched node to a rail other than the switch's own and the branch's
    /// far end (across the opposite switch of a leg, to another supply).
    ToRail,
    /// A TVS or zener from the switched node to the switch's own rail: across the switch.
    Clamp,
    /// The body diode of the opposite switch of a bridge leg (never the switch's own).
    OppositeBodyDiode,
    /// An AC path: the turn-off current goes on through a capacitor, either a diode from the
    /// switched node into a capacitor-held output (boost) or a coupling capacitor into a
    /// diode or winding (Ćuk, SEPIC). The device is the diode, or the capacitor when no diode
    /// is in the path.
    ThroughCapacitor,
    /// A winding magnetically coupled (`K`) to the switched one, with a load or rectifier on
    /// it, takes the stored energy (flyback or forward transformer). The device is the other
    /// winding.
    CoupledWinding,
}

/// A freewheeling path of a switched branch (see `analysis::switching::freewheel`).
#[derive(Clone, Debug, PartialEq)]
pub struct Freewheel {
    /// The diode, TVS or zener; for [`FreewheelKind::OppositeBodyDiode`] the opposite switch.
    pub device: DeviceId,
    pub kind: FreewheelKind,
    /// True when the diode is fitted so that it conducts from the rail in the on state (a
    /// short through the switch). For a [`FreewheelKind::Clamp`]: it conducts forward in the
    /// off state (it holds the load on instead of clamping).
    pub reversed: bool,
    /// Largest forward current through it in the on state when reversed (the short), from
    /// the solved on state at every corner.
    pub on_state_current_a: Option<f64>,
    /// Largest forward current through a reversed clamp in the off state.
    pub off_state_current_a: Option<f64>,
    /// Current it takes over at turn-off: the load's largest on-state current (`None` when
    /// reversed, or when the load current is unknown).
    pub peak_current_a: Option<f64>,
    /// Average freewheel current `(1−D)·I` over the duty range (PWM loads; `None` for a
    /// clamp, which only conducts in the turn-off transient, and when D or I is unknown).
    pub avg_current_a: Option<Range>,
    /// Largest reverse voltage across the diode (cathode above anode) in the on state, at every
    /// corner: the rail for a diode that holds the rail off, near zero for the zener of a
    /// diode-plus-zener clamp, whose series diode holds the rail off instead (`None` for the
    /// opposite switch's body diode and where the on state was not solved).
    pub on_state_reverse_v: Option<f64>,
}

/// The switches that share one drive, seen from one of them: every switch on the drive is
/// held once, shared by all of them, so that thousands of switches on one driver cost a list
/// each rather than a list of thousands each.
#[derive(Clone, Debug, Default)]
pub struct SharedDrive {
    /// Every switch on the drive, sorted, this one included.
    all: std::sync::Arc<[DeviceId]>,
    /// The switch these facts belong to, left out of every answer.
    me: Option<DeviceId>,
}

impl SharedDrive {
    /// `all` switches on one drive (sorted here), seen from `me`.
    pub fn new(all: std::sync::Arc<[DeviceId]>, me: DeviceId) -> Self {
        SharedDrive { all, me: Some(me) }
    }

    pub fn contains(&self, device: &DeviceId) -> bool {
        Some(*device) != self.me && self.all.binary_search(device).is_ok()
    }

    pub fn iter(&self) -> impl Iterator<Item = DeviceId> + '_ {
        let me = self.me;
        self.all.iter().copied().filter(move |&d| Some(d) != me)
    }

    pub fn is_empty(&self) -> bool {
        self.iter().next().is_none()
    }

    pub fn to_vec(&self) -> Vec<DeviceId> {
        self.iter().collect()
    }
}

impl From<Vec<DeviceId>> for SharedDrive {
    /// The other switches, listed: none of them is left out.
    fn from(mut others: Vec<DeviceId>) -> Self {
        others.sort_unstable();
        others.dedup();
        SharedDrive {
            all: others.into(),
            me: None,
        }
    }
}

impl PartialEq for SharedDrive {
    fn eq(&self, other: &Self) -> bool {
        self.iter().eq(other.iter())
    }
}

impl PartialEq<Vec<DeviceId>> for SharedDrive {
    fn eq(&self, other: &Vec<DeviceId>) -> bool {
        self.iter().eq(other.iter().copied())
    }
}

/// What drives a switch's gate or base.
#[derive(Clone, Debug, PartialEq)]
pub struct DriverFacts {
    /// The source, timer or logic output at the far end of the gate network (a pulse source
    /// holding the gate's net, or a timer's / logic output's `out` pin); failing that, a
    /// transistor whose drain or collector pulls the gate (a pre-driver).
    pub device: DeviceId,
    /// The switching input the switch follows: `device` itself, or a pre-driver's own driver.
    /// `None` when the chain ends in something that is not a switching input.
    pub control: Option<DeviceId>,
    /// True when the switch conducts while `control` is high (false: while it is low, as for
    /// a P-channel switch or behind an inverting pre-driver). Found by solving both levels;
    /// `None` when `control` is unknown or not part of the switch's sub-network.
    pub on_when_high: Option<bool>,
    /// Resistors and other parts between driver and gate.
    pub network: Vec<DeviceId>,
    /// Other switches whose gates share this drive.
    pub shared_with: SharedDrive,
    /// A bootstrap or charge pump lifts the drive above the rail: a capacitor from the
    /// switched node to a net a diode feeds (then `vgs_on_v` is the bootstrap estimate, feed
    /// − 0.7 V, as a DC solve cannot see a pump), or the solved gate sits above the drain
    /// rail by at least the threshold in every on state.
    pub boosted: bool,
    /// The bootstrap capacitor and diode, when that is what boosts it.
    pub bootstrap: Option<(DeviceId, DeviceId)>,
    /// Driver output can float: a logic output (tri-state at reset and while unpowered).
    /// Pulse sources, timers and pre-drivers are taken as always driven.
    pub can_float: bool,
}

/// One MOSFET or BJT and what it switches (see `analysis::switching`).
///
/// Sign conventions: `vgs_on_v` and `vgs_off_v` are the physical V(gate) − V(source)
/// (V(base) − V(emitter)), so a P-channel or PNP that is on shows a negative value; use
/// [`SwitchFacts::enhancement_on`] / [`SwitchFacts::enhancement_off`] for the magnitude toward
/// conduction. Every other number (`vds_on_v`, `current_a`, `base_current_a`...) is in the sense
/// of normal conduction: positive when the switch conducts as intended.
///
/// "On states" are the solved states in which the control input is at the level that turns
/// the switch on (and a bridge partner with a drive of its own is off); ranges over them run
/// over every supply corner. Current-like numbers come, per corner, from the on state with the
/// most current.
#[derive(Clone, Debug, PartialEq)]
pub struct SwitchFacts {
    pub device: DeviceId,
    pub kind: Kind,
    /// What the stage was taken for, and why (`driven between two levels by VG, a pulse
    /// source`; `base biased from the divider RB1/RB2`).
    pub stage: Stage,
    pub stage_reason: String,
    pub side: Side,
    /// The net the switch connects to its rail (drain of a low side, source of an N-channel
    /// high side, the shared node of a bridge leg); `None` when both terminals sit on rails.
    pub switched_net: Option<NetId>,
    /// The rail the switch's own source/emitter (low side) or drain/source (high side)
    /// returns to.
    pub anchor_net: Option<NetId>,
    /// The positive rail feeding the branch: the branch's far end for a low side, the anchor
    /// for a high side, the upper rail of a bridge leg. Its potential over the corners.
    pub rail_v: Option<Range>,
    pub rail_net: Option<NetId>,
    pub rail_supply: Option<DeviceId>,
    /// Index into [`Analysis::loads`] of the load branch it interrupts.
    pub load: Option<usize>,
    /// Indices into [`Analysis::loads`] of further loads in parallel on the same switch.
    pub parallel_loads: Vec<usize>,
    /// Every device of the interrupted branch, from the switched node to the far end.
    pub branch: Vec<DeviceId>,
    /// The branch (or a parallel load) holds an inductor, motor, relay coil or solenoid.
    pub inductive: bool,
    pub driver: Option<DriverFacts>,
    /// Freewheel paths in the order across-load, to-rail, clamp, opposite body diode; each
    /// with its orientation checked in the solved states.
    pub freewheel: Vec<Freewheel>,
    /// The other switch of a bridge leg.
    pub bridge_partner: Option<DeviceId>,
    /// On-state V_GS (MOS) or V_BE (BJT), relative to the switch's own source/emitter
    /// (physical sign; the worst corner is the one nearest zero).
    pub vgs_on_v: Option<Range>,
    /// Off-state V_GS / V_BE (physical sign), `None` when there is no off state (no
    /// switching drive found).
    pub vgs_off_v: Option<Range>,
    /// BJT base current in the on state (into the base for NPN, out of it for PNP).
    pub base_current_a: Option<Range>,
    /// On-state V_DS / V_CE (V_SD / V_EC for P-type).
    pub vds_on_v: Option<Range>,
    /// On-state drain/collector current. `None` when a part of the branch has no known
    /// resistance (it was solved as a placeholder, see [`LoadFacts`]).
    pub current_a: Option<Range>,
    /// Channel resistance at the on-state V_GS in the triode region, square law at small
    /// V_DS: 1/(k·(V_GS − V_T)), cold die. `None` for BJTs and when not in triode.
    pub rds_on_ohm: Option<Range>,
    /// Conduction loss over the duty range: MOS in triode `I²·Rds(on)·D` with Rds(on) at the
    /// actual V_GS × 1.5 for a hot die (common practice); MOS in saturation (a follower or
    /// starved gate) and BJT `V_DS·I·D`. A duty that is unknown is taken as 100 %.
    pub dissipation_w: Option<Range>,
    /// Fraction of time on, and frequency, of the drive when known (from the PULSE source or
    /// the timer's facts; 1 for a switch with no switching drive that conducts).
    pub duty: Option<Range>,
    pub frequency_hz: Option<Range>,
    /// The switch ends up a source/emitter follower: its source is the switched node (an
    /// N-channel high side or the upper N-channel of a bridge leg) and nothing boosts its drive.
    pub follower: bool,
    /// In some corner the on-state solve found the switch carrying current outside the
    /// region a closed switch sits in: MOS in saturation instead of triode, BJT active
    /// instead of saturated.
    pub linear_region: bool,
    /// Square-law gain of a MOSFET as the DC engine uses it, with where it came from.
    pub gain: Option<MosGain>,
    /// The branch current with the switch saturated: the rail (over its corners) less a
    /// saturated switch's drop ([`SATURATED_BJT_DROP_V`] for a BJT, the rated on-resistance's
    /// drop for a MOSFET) over the branch's resistance. The current the load draws once the
    /// drive is right; `None` when a part of the branch has no known resistance.
    pub saturated_current_a: Option<Range>,
    /// Gate edges from the drive's source resistance and the switch's gate charge or input
    /// capacitance (`None` for BJTs and when either is unknown).
    pub gate_edges: Option<GateEdges>,
}

/// V_CE of a saturated BJT switch (from memory: 0.1–0.3 V for small-signal parts).
pub const SATURATED_BJT_DROP_V: f64 = 0.2;

/// A MOSFET's square-law gain k (A/V², `I_D = k/2·(V_GS − V_T)²` in saturation) and the
/// threshold it goes with, computed once for the DC engine, the facts and the rules.
#[derive(Clone, Debug, PartialEq)]
pub struct MosGain {
    pub k: f64,
    /// The threshold V_T the engine uses with it: the model's VTO, else `vgs_th_max`.
    pub threshold_v: f64,
    /// How it was found (`KP·W/L from the model`, `rds_on 50 mΩ at V_GS 10 V`).
    pub how: String,
    /// Provenance of the number it came from.
    pub source: String,
    /// Neither KP nor `rds_on` was given: a placeholder the engine needs, not a fact a rule
    /// may judge on.
    pub placeholder: bool,
}

impl MosGain {
    /// Channel resistance of the square law in the triode region at small V_DS:
    /// 1/(k·(V_GS − V_T)), cold die.
    pub fn rds_at(&self, vgs: f64) -> Option<f64> {
        let overdrive = vgs - self.threshold_v;
        (self.k > 0.0 && overdrive > 0.0).then(|| 1.0 / (self.k * overdrive))
    }
}

/// How fast a MOSFET's gate moves: a first-order RC edge, 10–90 % in `2.2·R·C` (common
/// practice), with `R` the drive's source resistance and `C` the input capacitance
/// (`Qg/V_drive` when the gate charge is given).
#[derive(Clone, Debug, PartialEq)]
pub struct GateEdges {
    pub rise_s: f64,
    pub fall_s: f64,
    /// Series gate resistance plus the driver's output resistance.
    pub drive_ohms: f64,
    /// The capacitance the drive charges.
    pub input_capacitance_f: f64,
    /// Where the resistance and capacitance came from.
    pub how: String,
    /// Hard-switching loss `½·V·I·(t_r + t_f)·f` (a standard estimate) at the worst corner,
    /// when the rail, current and frequency are known.
    pub switching_loss_w: Option<f64>,
}

impl SwitchFacts {
    /// True for N-channel MOSFETs and NPN transistors.
    pub fn is_n_type(&self) -> bool {
        matches!(self.kind, Kind::Nmos | Kind::Npn)
    }

    fn toward_conduction(&self, range: &Option<Range>) -> Option<Range> {
        let r = range.as_ref()?;
        if self.is_n_type() {
            return Some(r.clone());
        }
        Some(Range {
            min: -r.max,
            max: -r.min,
            min_state: r.max_state.clone(),
            max_state: r.min_state.clone(),
        })
    }

    /// On-state V_GS / V_BE toward conduction (positive when it enhances the switch, for
    /// either polarity); `min` is the worst corner.
    pub fn enhancement_on(&self) -> Option<Range> {
        self.toward_conduction(&self.vgs_on_v)
    }

    /// Off-state V_GS / V_BE toward conduction; `max` is the worst state for turn-off.
    pub fn enhancement_off(&self) -> Option<Range> {
        self.toward_conduction(&self.vgs_off_v)
    }
}

/// A load part (motor, relay coil, solenoid; an inductor when a switched branch has no load
/// part) and the voltage it sees (see `analysis::switching::load`).
///
/// A load whose winding resistance is unknown (no `resistance`, no rated voltage with a stall
/// or rated current) is solved as a light 1 kΩ placeholder: its voltage is then close to the
/// full rail, the worst case for overvoltage, while its current, stored energy and time
/// constant are `None` and the effective voltage is the RMS value.
#[derive(Clone, Debug, PartialEq)]
pub struct LoadFacts {
    pub device: DeviceId,
    pub kind: Kind,
    pub rated_v: Option<Rated>,
    /// Winding resistance: stated, or rated voltage over stall (rated) current.
    pub resistance: Option<Rated>,
    pub inductance: Option<Rated>,
    /// On-state voltage across the load (magnitude), per corner from the on state with the
    /// most current: the switch as it really is (a starved switch drops part of the rail).
    pub peak_v: Option<Range>,
    /// The on-state voltage with its switch saturated (see [`SwitchFacts::saturated_current_a`]),
    /// set only when the switch now runs in its linear region or as a follower: what the load
    /// gets once the drive is fixed. The load's ratings are judged on it.
    pub full_on_v: Option<Range>,
    /// Average `I_avg·R` over the duty range, from the same closed form as `effective_v`
    /// (`Vpk·D` when the closed form cannot be used).
    pub avg_v: Option<Range>,
    /// Effective voltage `I_rms·R` over the duty range (see `effective_method`), from
    /// `full_on_v` when set, else `peak_v`. Its states name the basis.
    pub effective_v: Option<Range>,
    /// How `effective_v` was found.
    pub effective_method: EffectiveMethod,
    /// Peak-to-peak ripple of the winding current over one PWM period (closed form), at the
    /// duty and frequency extreme where it is largest.
    pub ripple_a: Option<Range>,
    /// The largest duty whose effective voltage stays at `rated_v` (closed form solved for
    /// D; `(V_rated/Vpk)²` when L/R is unknown). `None` when the load is not PWM-driven or has
    /// no rating.
    pub duty_limit: Option<f64>,
    /// τ = L/R of the branch (its inductances over its resistances), when both are known.
    pub time_constant_s: Option<f64>,
    /// On-state current through the load (magnitude); `None` when its resistance is unknown.
    pub current_a: Option<Range>,
    /// Fraction of time the load is energised: its switch's duty, the duty of the switching
    /// input it hangs on when it has no switch, 1 when nothing switches it. A duty the drive
    /// does not state is `None`, and the effective voltage is then the peak.
    pub duty: Option<Range>,
    pub frequency_hz: Option<Range>,
    /// ½·L·I² at the peak current.
    pub stored_energy_j: Option<f64>,
    /// The switch that interrupts it.
    pub switch: Option<DeviceId>,
    /// The first freewheel path of its switch that is fitted the right way round.
    pub freewheel: Option<DeviceId>,
    /// The switching input it hangs on directly, when no switch interrupts it (a motor on a
    /// PULSE source or a timer's output pin).
    pub driven_by: Option<DeviceId>,
    /// The closed-form drive of the winding at the case the effective voltage is largest
    /// (highest peak, largest duty, longest period): what its current over one period is
    /// drawn from. `None` unless `effective_method` is the closed form.
    pub drive: Option<WindingDrive>,
}

/// One PWM'd winding's closed-form drive (see `analysis::switching::winding`).
#[derive(Clone, Debug, PartialEq)]
pub struct WindingDrive {
    /// In volts across the load's own resistance.
    pub winding: crate::analysis::switching::winding::Winding,
    pub duty: f64,
    pub period_s: f64,
    /// The load's own resistance: current = volts / this.
    pub load_ohms: f64,
    /// The state it stands for.
    pub state: String,
}

/// How a load's effective voltage was found.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum EffectiveMethod {
    /// `I_rms·R` from the closed-form periodic steady state of the R-L branch
    /// (`analysis::switching::winding`).
    ClosedForm,
    /// `Vpk·√D`: L/R or the frequency is unknown, so the current is taken to follow each
    /// pulse (never below the true value).
    RmsAssumed,
    /// The peak: the duty is unknown, or nothing switches the load.
    Peak,
}

/// Dissipation of a resistor or pot over its sub-network's states, with the wipers of the
/// sub-network's pots searched for the worst position (and the wiper current of a pot).
#[derive(Clone, Debug, PartialEq)]
pub struct ResistorFacts {
    pub device: DeviceId,
    /// Dissipation averaged over the PWM period of the switching inputs it depends on (a
    /// resistor that conducts only during the pulse dissipates `D·P` on average); inputs
    /// slower than 20 Hz, or whose duty is unknown, are taken at their worst level. `max` is
    /// the worst state (named in `max_state`); `min` the lightest. Thermal ratings are judged
    /// on this.
    pub power_w: Range,
    /// Instantaneous dissipation in the worst single state (the peak inside a pulse).
    pub peak_power_w: Range,
    /// Current through a pot's wiper terminal (magnitude).
    pub wiper_current_a: Option<Range>,
    /// Largest current through the part (a pot: through either half).
    pub current_a: Option<Range>,
    /// A transistor of the same sub-network whose stage kickback could not place (driven by a
    /// stage that is not switched, say): its bias, set by feedback and by model details a DC
    /// solve with simplified models does not settle, sets the currents here, so the
    /// dissipation is not judged.
    pub set_by_linear_stage: Option<DeviceId>,
}

/// Voltage across a capacitor (pos − neg in the element's node order) over states.
#[derive(Clone, Debug, PartialEq)]
pub struct CapacitorFacts {
    pub device: DeviceId,
    /// `min` below zero means the capacitor is reverse-biased in that state.
    pub voltage_v: Range,
}

/// Waveforms for a person to look at (see `analysis::waveform`): sampled from the same closed
/// forms and phase times the other facts come from, so a picture cannot disagree with a number.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Waveforms {
    pub timers: Vec<TimerWaveform>,
    pub switches: Vec<SwitchWaveform>,
}

/// One sampled curve: `(t, value)` points in SI base units, in time order.
#[derive(Clone, Debug, PartialEq)]
pub struct Trace {
    /// The state it stands for (`V12 at min, XRV1 wiper at 50 %`).
    pub state: String,
    pub points: Vec<(f64, f64)>,
}

/// A computed time drawn as a span on a timing diagram.
#[derive(Clone, Debug, PartialEq)]
pub struct TimeMark {
    /// `high`, `low`, `pulse`, `trigger period`, `trigger low`.
    pub what: &'static str,
    pub start_s: f64,
    pub end_s: f64,
}

/// A timer's timing diagram over two periods.
#[derive(Clone, Debug, PartialEq)]
pub struct TimerWaveform {
    pub device: DeviceId,
    pub mode: TimerMode,
    /// Capacitor voltage; the first trace is the reference case (nominal supply, every pot at
    /// mid travel), then the pots' ends at the nominal supply, then the supply's corners.
    pub capacitor: Vec<Trace>,
    /// The comparator thresholds of the reference case.
    pub upper_v: f64,
    pub lower_v: f64,
    /// The time the diagram covers.
    pub span_s: f64,
    /// Intervals (start, end) of the reference case.
    pub output_high: Vec<(f64, f64)>,
    pub discharge_on: Vec<(f64, f64)>,
    /// A one-shot's trigger below its threshold (empty for an astable or an unknown driver).
    pub trigger_low: Vec<(f64, f64)>,
    /// Trigger edges that arrive while the pulse is still running: the one-shot ignores them.
    pub ignored_triggers: Vec<f64>,
    pub marks: Vec<TimeMark>,
    /// Cases with no pulse at all (the capacitor already sits at the threshold): named, not
    /// drawn, as their flat line would lie on the threshold's.
    pub no_pulse: Vec<String>,
}

/// One PWM period of a switch: gate drive and load current from turn-on.
#[derive(Clone, Debug, PartialEq)]
pub struct SwitchWaveform {
    pub device: DeviceId,
    pub period_s: f64,
    pub duty: f64,
    /// Gate–source (base–emitter) voltage toward conduction: on level at the worst corner,
    /// edges from [`GateEdges`] (square edges when those are unknown).
    pub gate: Trace,
    pub edges_known: bool,
    /// The threshold band (lowest, highest) and where it comes from; `None` for a BJT.
    pub threshold_v: Option<(f64, f64)>,
    pub threshold_source: String,
    /// The load and its current in amps (closed form, [`LoadFacts::drive`]): at the duty
    /// drawn, then at the highest duty when that is another.
    pub load: Option<DeviceId>,
    pub current: Vec<Trace>,
    /// Current at turn-off (the peak the freewheel path takes over).
    pub peak_a: Option<f64>,
    /// When the freewheel path carries the current (start, end), and the path.
    pub freewheel: Option<(f64, f64)>,
    pub freewheel_device: Option<DeviceId>,
}
