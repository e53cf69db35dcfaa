//! The role tables: each kind's default port order and the port names (and common aliases)
//! that name each role.

use super::kind::{Kind, PinRole};

/// One role of a kind, with the port names that mean it (upper-case, after [`normalize`]).
pub struct RoleNames {
    pub role: PinRole,
    pub names: &'static [&'static str],
}

/// How a kind's terminals are laid out.
pub struct Layout {
    /// The roles in their default port order, each with its names.
    pub order: &'static [RoleNames],
    /// Port counts that make sense by position alone.
    pub by_order: (usize, usize),
    /// Fewest ports when every port names its role.
    pub named_min: usize,
    /// Whether `x+` / `x-` port names mean the first / second role.
    pub sign_suffixes: bool,
    /// Whether ports whose names say nothing may take their position's role: parts whose ends
    /// swap with little consequence (a load's two ends, a pot's two ends around its wiper).
    pub words_by_position: bool,
}

const GND_NAMES: &[&str] = &["GND", "VSS", "VN", "V-", "VEE", "GROUND", "0"];
const VCC_NAMES: &[&str] = &["VCC", "VDD", "VP", "V+", "VPLUS", "VS", "VCC+", "VIO"];

static TIMER: Layout = Layout {
    order: &[
        RoleNames {
            role: PinRole::Gnd,
            names: GND_NAMES,
        },
        RoleNames {
            role: PinRole::Trig,
            names: &["TRIG", "TRIGGER", "TR", "TRI", "TRG", "TRIGBAR", "TRIGN"],
        },
        RoleNames {
            role: PinRole::Out,
            names: &["OUT", "OUTPUT", "Q", "O"],
        },
        RoleNames {
            role: PinRole::Reset,
            names: &[
                "RESET", "RST", "RESETBAR", "RESETB", "RESETN", "NRESET", "R", "RES",
            ],
        },
        RoleNames {
            role: PinRole::Ctrl,
            names: &["CTRL", "CONTROL", "CV", "CONT", "CON"],
        },
        RoleNames {
            role: PinRole::Thr,
            names: &["THR", "THRESHOLD", "THRES", "THRESH", "TH"],
        },
        RoleNames {
            role: PinRole::Dis,
            names: &["DIS", "DISCHARGE", "DISCH", "DISC", "D"],
        },
        RoleNames {
            role: PinRole::Vcc,
            names: VCC_NAMES,
        },
    ],
    by_order: (8, 8),
    named_min: 4,
    sign_suffixes: false,
    words_by_position: false,
};

static MOS: Layout = Layout {
    order: &[
        RoleNames {
            role: PinRole::Drain,
            names: &["D", "DRAIN"],
        },
        RoleNames {
            role: PinRole::Gate,
            names: &["G", "GATE"],
        },
        RoleNames {
            role: PinRole::Source,
            names: &["S", "SOURCE"],
        },
        RoleNames {
            role: PinRole::Bulk,
            names: &["B", "BULK", "BODY", "SUB", "SUBSTRATE"],
        },
    ],
    by_order: (3, 4),
    named_min: 3,
    sign_suffixes: false,
    words_by_position: false,
};

static JFET: Layout = Layout {
    order: &[
        RoleNames {
            role: PinRole::Drain,
            names: &["D", "DRAIN"],
        },
        RoleNames {
            role: PinRole::Gate,
            names: &["G", "GATE"],
        },
        RoleNames {
            role: PinRole::Source,
            names: &["S", "SOURCE"],
        },
    ],
    by_order: (3, 3),
    named_min: 3,
    sign_suffixes: false,
    words_by_position: false,
};

static BJT: Layout = Layout {
    order: &[
        RoleNames {
            role: PinRole::Collector,
            names: &["C", "COLLECTOR", "COL"],
        },
        RoleNames {
            role: PinRole::Base,
            names: &["B", "BASE"],
        },
        RoleNames {
            role: PinRole::Emitter,
            names: &["E", "EMITTER", "EMIT"],
        },
        RoleNames {
            role: PinRole::Substrate,
            names: &["S", "SUB", "SUBSTRATE"],
        },
    ],
    by_order: (3, 4),
    named_min: 3,
    sign_suffixes: false,
    words_by_position: false,
};

static DIODE: Layout = Layout {
    order: &[
        RoleNames {
            role: PinRole::Anode,
            names: &["A", "ANODE", "AN", "P", "+"],
        },
        RoleNames {
            role: PinRole::Cathode,
            names: &["K", "CATHODE", "CATH", "C", "N", "-"],
        },
    ],
    by_order: (2, 2),
    named_min: 2,
    sign_suffixes: false,
    words_by_position: false,
};

pub static TWO_TERMINAL: Layout = Layout {
    order: &[
        RoleNames {
            role: PinRole::Pos,
            names: &["POS", "P", "+", "PLUS", "POSITIVE", "A"],
        },
        RoleNames {
            role: PinRole::Neg,
            names: &["NEG", "N", "-", "MINUS", "NEGATIVE", "B"],
        },
    ],
    by_order: (2, 2),
    named_min: 2,
    sign_suffixes: true,
    words_by_position: true,
};

/// Counter-clockwise end = `a`, clockwise end = `b` (the wiper moves towards `b` when turned
/// clockwise); pins 1, 2, 3 are a, w, b.
static POT: Layout = Layout {
    order: &[
        RoleNames {
            role: PinRole::A,
            names: &["A", "CCW", "END1", "E1"],
        },
        RoleNames {
            role: PinRole::Wiper,
            names: &["W", "WIPER", "WIP", "WIPE"],
        },
        RoleNames {
            role: PinRole::B,
            names: &["B", "CW", "END2", "E2"],
        },
    ],
    by_order: (3, 3),
    named_min: 3,
    sign_suffixes: false,
    words_by_position: true,
};

static LOGIC: Layout = Layout {
    order: &[
        RoleNames {
            role: PinRole::Out,
            names: &["OUT", "OUTPUT", "O", "Y", "Q", "PIN", "IO", "GPIO"],
        },
        RoleNames {
            role: PinRole::Gnd,
            names: GND_NAMES,
        },
        RoleNames {
            role: PinRole::Vcc,
            names: VCC_NAMES,
        },
    ],
    by_order: (1, 3),
    named_min: 1,
    sign_suffixes: false,
    words_by_position: false,
};

static FOUR_TERMINAL: Layout = Layout {
    order: &[
        RoleNames {
            role: PinRole::Pos,
            names: &["POS", "P", "+", "NP", "N+"],
        },
        RoleNames {
            role: PinRole::Neg,
            names: &["NEG", "N", "-", "NN", "N-"],
        },
        RoleNames {
            role: PinRole::CtrlPos,
            names: &["CTRL+", "NC+", "CP"],
        },
        RoleNames {
            role: PinRole::CtrlNeg,
            names: &["CTRL-", "NC-", "CN"],
        },
    ],
    by_order: (4, 4),
    named_min: 4,
    sign_suffixes: false,
    words_by_position: false,
};

pub static ALL_LAYOUTS: [&Layout; 9] = [
    &TIMER,
    &MOS,
    &JFET,
    &BJT,
    &DIODE,
    &TWO_TERMINAL,
    &POT,
    &LOGIC,
    &FOUR_TERMINAL,
];

/// Names that mark a port as deliberately unused.
pub const OTHER_NAMES: [&str; 3] = ["OTHER", "NC", "UNUSED"];

/// Upper-case, without separators and inversion marks (`~RESET`, `reset_n` → `RESET`, `RESETN`).
pub fn normalize(name: &str) -> String {
    name.chars()
        .filter(|c| !matches!(c, '_' | '~' | '/' | '!' | '#' | '*' | '.' | ' '))
        .map(|c| c.to_ascii_uppercase())
        .collect()
}

pub fn layout_of_kind(kind: Kind) -> Option<&'static Layout> {
    match kind {
        Kind::Timer555 | Kind::Timer555Cmos => Some(&TIMER),
        Kind::Nmos | Kind::Pmos => Some(&MOS),
        Kind::Jfet => Some(&JFET),
        Kind::Npn | Kind::Pnp => Some(&BJT),
        Kind::Diode | Kind::Schottky | Kind::Zener | Kind::Tvs => Some(&DIODE),
        Kind::DcMotor
        | Kind::RelayCoil
        | Kind::Solenoid
        | Kind::Inductor
        | Kind::Resistor
        | Kind::Capacitor
        | Kind::VoltageSource
        | Kind::CurrentSource => Some(&TWO_TERMINAL),
        Kind::Potentiometer => Some(&POT),
        Kind::LogicOutput => Some(&LOGIC),
        Kind::ControlledSource | Kind::Switch => Some(&FOUR_TERMINAL),
        Kind::Coupling | Kind::TransmissionLine | Kind::Unknown => None,
    }
}
