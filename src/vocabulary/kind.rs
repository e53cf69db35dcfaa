//! Device kinds and pin roles: the vocabulary of part knowledge (trade terms).

use serde::Serialize;

#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Kind {
    // Part kinds a user can name in `kickback.toml` (`kind = "dc-motor"`).
    #[serde(rename = "timer-555")]
    Timer555,
    #[serde(rename = "timer-555-cmos")]
    Timer555Cmos,
    Nmos,
    Pmos,
    Npn,
    Pnp,
    Diode,
    Schottky,
    Zener,
    Tvs,
    DcMotor,
    RelayCoil,
    Solenoid,
    Inductor,
    Resistor,
    Capacitor,
    Potentiometer,
    LogicOutput,
    // Element kinds that only come from the netlist's letters.
    VoltageSource,
    CurrentSource,
    /// E, F, G, H and B sources.
    ControlledSource,
    /// S and W voltage/current controlled switches.
    Switch,
    Jfet,
    /// K: mutual inductance (refers to inductors, no nodes of its own).
    Coupling,
    TransmissionLine,
    /// A code-model (A) device or a subcircuit kept whole whose role we do not know.
    Unknown,
}

impl Kind {
    pub const CONFIGURABLE: [Kind; 18] = [
        Kind::Timer555,
        Kind::Timer555Cmos,
        Kind::Nmos,
        Kind::Pmos,
        Kind::Npn,
        Kind::Pnp,
        Kind::Diode,
        Kind::Schottky,
        Kind::Zener,
        Kind::Tvs,
        Kind::DcMotor,
        Kind::RelayCoil,
        Kind::Solenoid,
        Kind::Inductor,
        Kind::Resistor,
        Kind::Capacitor,
        Kind::Potentiometer,
        Kind::LogicOutput,
    ];

    pub fn as_str(self) -> &'static str {
        match self {
            Kind::Timer555 => "timer-555",
            Kind::Timer555Cmos => "timer-555-cmos",
            Kind::Nmos => "nmos",
            Kind::Pmos => "pmos",
            Kind::Npn => "npn",
            Kind::Pnp => "pnp",
            Kind::Diode => "diode",
            Kind::Schottky => "schottky",
            Kind::Zener => "zener",
            Kind::Tvs => "tvs",
            Kind::DcMotor => "dc-motor",
            Kind::RelayCoil => "relay-coil",
            Kind::Solenoid => "solenoid",
            Kind::Inductor => "inductor",
            Kind::Resistor => "resistor",
            Kind::Capacitor => "capacitor",
            Kind::Potentiometer => "potentiometer",
            Kind::LogicOutput => "logic-output",
            Kind::VoltageSource => "voltage-source",
            Kind::CurrentSource => "current-source",
            Kind::ControlledSource => "controlled-source",
            Kind::Switch => "switch",
            Kind::Jfet => "jfet",
            Kind::Coupling => "coupling",
            Kind::TransmissionLine => "transmission-line",
            Kind::Unknown => "unknown",
        }
    }

    /// Parses a configurable kind name (`"dc-motor"`), case-insensitive.
    pub fn parse(text: &str) -> Option<Kind> {
        Kind::CONFIGURABLE
            .iter()
            .copied()
            .find(|k| k.as_str().eq_ignore_ascii_case(text.trim()))
    }

    pub fn is_timer(self) -> bool {
        matches!(self, Kind::Timer555 | Kind::Timer555Cmos)
    }

    pub fn is_mos(self) -> bool {
        matches!(self, Kind::Nmos | Kind::Pmos)
    }

    pub fn is_bjt(self) -> bool {
        matches!(self, Kind::Npn | Kind::Pnp)
    }

    pub fn is_switch_transistor(self) -> bool {
        self.is_mos() || self.is_bjt()
    }

    pub fn is_diode_like(self) -> bool {
        matches!(self, Kind::Diode | Kind::Schottky | Kind::Zener | Kind::Tvs)
    }

    /// Loads whose current keeps flowing when switched off.
    pub fn is_inductive(self) -> bool {
        matches!(
            self,
            Kind::DcMotor | Kind::RelayCoil | Kind::Solenoid | Kind::Inductor
        )
    }

    pub fn is_load(self) -> bool {
        matches!(self, Kind::DcMotor | Kind::RelayCoil | Kind::Solenoid)
    }
}

impl std::fmt::Display for Kind {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.as_str())
    }
}

/// What a device's terminal does.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum PinRole {
    // 555 family
    Gnd,
    Trig,
    Out,
    Reset,
    Ctrl,
    Thr,
    Dis,
    Vcc,
    // MOS / JFET
    Drain,
    Gate,
    Source,
    Bulk,
    // BJT
    Collector,
    Base,
    Emitter,
    Substrate,
    // diodes
    Anode,
    Cathode,
    // two-terminal parts, sources and loads: `pos` is the first node
    Pos,
    Neg,
    // potentiometer
    A,
    Wiper,
    B,
    // controlled sources and switches: control inputs
    CtrlPos,
    CtrlNeg,
    /// A terminal whose role is unknown (code models, unknown subcircuits).
    Other,
}

impl PinRole {
    pub fn as_str(self) -> &'static str {
        match self {
            PinRole::Gnd => "gnd",
            PinRole::Trig => "trig",
            PinRole::Out => "out",
            PinRole::Reset => "reset",
            PinRole::Ctrl => "ctrl",
            PinRole::Thr => "thr",
            PinRole::Dis => "dis",
            PinRole::Vcc => "vcc",
            PinRole::Drain => "d",
            PinRole::Gate => "g",
            PinRole::Source => "s",
            PinRole::Bulk => "b",
            PinRole::Collector => "c",
            PinRole::Base => "b",
            PinRole::Emitter => "e",
            PinRole::Substrate => "sub",
            PinRole::Anode => "a",
            PinRole::Cathode => "k",
            PinRole::Pos => "pos",
            PinRole::Neg => "neg",
            PinRole::A => "a",
            PinRole::Wiper => "w",
            PinRole::B => "b",
            PinRole::CtrlPos => "ctrl+",
            PinRole::CtrlNeg => "ctrl-",
            PinRole::Other => "other",
        }
    }
}

impl std::fmt::Display for PinRole {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.as_str())
    }
}
