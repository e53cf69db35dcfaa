//! Rules: each reads the circuit and the analyses and returns findings. One module per rule,
//! one registry listing every rule once ([`REGISTRY`]), one page per rule in `rules/*.md`.

use crate::analysis::Analysis;
use crate::circuit::Circuit;
use crate::config::Config;
use crate::diagnostic::{Finding, Severity};
use crate::netlist::FlatNetlist;

pub mod base_underdrive;
pub mod bulk_capacitance_missing;
pub mod capacitor_overvoltage;
pub mod capacitor_reversed;
pub mod decoupling_missing;
pub mod discharge_unprotected;
pub mod driver_overload;
pub mod duty_overrun;
pub mod element_shorted;
pub mod flyback_missing;
pub mod flyback_reversed;
pub mod flyback_underrated;
pub mod gate_cannot_turn_off;
pub mod gate_floating;
pub mod gate_overvoltage;
pub mod gate_underdrive;
pub mod load_overvoltage;
pub mod model_missing;
pub mod name_duplicate;
pub mod net_dangling;
pub mod pin_unconnected;
pub mod pot_wiper_overcurrent;
pub mod pwm_audible;
pub mod resistor_overpower;
pub mod shoot_through;
pub mod stage_unknown;
pub mod supply_out_of_range;
pub mod supply_shorted;
pub mod supply_unreferenced;
pub mod switch_dissipation;
pub mod switch_voltage_margin;
pub mod timer_control_unbypassed;
pub mod timer_reset_floating;
pub mod timer_stuck;
pub mod trigger_overlap;
pub mod value_suspicious;

/// Everything a rule may read.
pub struct RuleContext<'a> {
    pub netlist: &'a FlatNetlist,
    pub circuit: &'a Circuit,
    pub analysis: &'a Analysis,
    pub config: &'a Config,
}

/// One registry entry.
pub struct RuleInfo {
    pub id: &'static str,
    pub default_severity: Severity,
    pub summary: &'static str,
    /// The rule's page (`rules/<id>.md`), compiled in.
    pub page: &'static str,
    /// `None` for rules whose findings come from an earlier stage (e.g. `syntax` from the parser).
    pub check: Option<fn(&RuleContext<'_>, &mut Vec<Finding>)>,
}

macro_rules! rule {
    ($id:literal, $sev:ident, $summary:literal, $check:expr) => {
        RuleInfo {
            id: $id,
            default_severity: Severity::$sev,
            summary: $summary,
            page: include_str!(concat!("../../rules/", $id, ".md")),
            check: $check,
        }
    };
}

/// Every rule, once. Keep in one-to-one agreement with `rules/*.md` (a test checks).
pub static REGISTRY: &[RuleInfo] = &[
    rule!(
        "flyback-missing",
        Error,
        "An inductive load is switched with no freewheeling path",
        Some(flyback_missing::check)
    ),
    rule!(
        "flyback-reversed",
        Error,
        "A freewheel diode is fitted backwards and shorts the supply through the switch",
        Some(flyback_reversed::check)
    ),
    rule!(
        "flyback-underrated",
        Warning,
        "A freewheel diode's voltage, current or recovery rating does not fit the load",
        Some(flyback_underrated::check)
    ),
    rule!(
        "shoot-through",
        Error,
        "Both switches of a bridge leg can conduct at once",
        Some(shoot_through::check)
    ),
    rule!(
        "gate-underdrive",
        Error,
        "The gate is driven too weakly to enhance the switch at the load current",
        Some(gate_underdrive::check)
    ),
    rule!(
        "gate-overvoltage",
        Error,
        "The on-state gate-source voltage exceeds the switch's rating",
        Some(gate_overvoltage::check)
    ),
    rule!(
        "gate-cannot-turn-off",
        Error,
        "The off-state gate-source voltage is too close to the threshold",
        Some(gate_cannot_turn_off::check)
    ),
    rule!(
        "base-underdrive",
        Error,
        "A BJT switch gets too little base current and runs in its active region",
        Some(base_underdrive::check)
    ),
    rule!(
        "discharge-unprotected",
        Error,
        "A 555's discharge pin can sink more current than it survives",
        Some(discharge_unprotected::check)
    ),
    rule!(
        "trigger-overlap",
        Error,
        "A one-shot's trigger stays low longer than its shortest pulse",
        Some(trigger_overlap::check)
    ),
    rule!(
        "duty-overrun",
        Warning,
        "A one-shot's pulse reaches its trigger period",
        Some(duty_overrun::check)
    ),
    rule!(
        "timer-stuck",
        Error,
        "A timer phase can never reach its threshold",
        Some(timer_stuck::check)
    ),
    rule!(
        "load-overvoltage",
        Error,
        "A load's effective or peak voltage exceeds its rating",
        Some(load_overvoltage::check)
    ),
    rule!(
        "supply-out-of-range",
        Error,
        "A part's supply is outside its operating or absolute range at some corner",
        Some(supply_out_of_range::check)
    ),
    rule!(
        "switch-voltage-margin",
        Error,
        "A switch's voltage rating leaves too little margin over rail and clamp",
        Some(switch_voltage_margin::check)
    ),
    rule!(
        "driver-overload",
        Error,
        "An output pin would source or sink more than its rating",
        Some(driver_overload::check)
    ),
    rule!(
        "resistor-overpower",
        Error,
        "A resistor dissipates more than its power rating in some state",
        Some(resistor_overpower::check)
    ),
    rule!(
        "pot-wiper-overcurrent",
        Warning,
        "A pot's wiper carries more current than it is rated for",
        Some(pot_wiper_overcurrent::check)
    ),
    rule!(
        "switch-dissipation",
        Warning,
        "A switch's conduction loss exceeds what its package can shed",
        Some(switch_dissipation::check)
    ),
    rule!(
        "capacitor-overvoltage",
        Error,
        "A capacitor sees more voltage than its rating allows",
        Some(capacitor_overvoltage::check)
    ),
    rule!(
        "capacitor-reversed",
        Error,
        "A polarized capacitor is reverse-biased in some state",
        Some(capacitor_reversed::check)
    ),
    rule!(
        "bulk-capacitance-missing",
        Warning,
        "A rail feeding switched inductive loads lacks bulk capacitance",
        Some(bulk_capacitance_missing::check)
    ),
    rule!(
        "syntax",
        Error,
        "The parser cannot read a statement",
        None
    ),
    rule!(
        "element-unknown",
        Warning,
        "An element letter that SPICE does not define",
        None
    ),
    rule!(
        "parameter-invalid",
        Error,
        "A parameter or expression cannot be evaluated",
        None
    ),
    rule!(
        "include-cycle",
        Error,
        "Included files include each other",
        None
    ),
    rule!(
        "include-refused",
        Error,
        "An include points outside the netlist's folder tree",
        None
    ),
    rule!(
        "dialect-foreign",
        Error,
        "The deck is written in another netlist family",
        None
    ),
    rule!(
        "part-pins",
        Warning,
        "A part's port count does not fit its kind",
        None
    ),
    rule!(
        "model-missing",
        Error,
        "An element names a model or subcircuit that is defined nowhere",
        Some(model_missing::check)
    ),
    rule!(
        "name-duplicate",
        Error,
        "Two elements share one name",
        Some(name_duplicate::check)
    ),
    rule!(
        "element-shorted",
        Warning,
        "Both terminals of an element sit on one net",
        Some(element_shorted::check)
    ),
    rule!(
        "net-dangling",
        Warning,
        "A net with a single connection, usually a typo",
        Some(net_dangling::check)
    ),
    rule!(
        "pin-unconnected",
        Warning,
        "A part pin sits on a net of its own",
        Some(pin_unconnected::check)
    ),
    rule!(
        "supply-shorted",
        Error,
        "Voltage sources in parallel or a source across a short",
        Some(supply_shorted::check)
    ),
    rule!(
        "supply-unreferenced",
        Error,
        "A section with no DC path to the reference, or a switch and driver on different references",
        Some(supply_unreferenced::check)
    ),
    rule!(
        "gate-floating",
        Warning,
        "A gate or base whose driver can float has no pull resistor",
        Some(gate_floating::check)
    ),
    rule!(
        "timer-reset-floating",
        Warning,
        "A timer's reset pin is left floating",
        Some(timer_reset_floating::check)
    ),
    rule!(
        "timer-control-unbypassed",
        Note,
        "A timer's control pin has no capacitor to ground",
        Some(timer_control_unbypassed::check)
    ),
    rule!(
        "decoupling-missing",
        Warning,
        "An IC has no capacitor across its supply pins",
        Some(decoupling_missing::check)
    ),
    rule!(
        "stage-unknown",
        Note,
        "A transistor runs an inductive load but its stage could not be told",
        Some(stage_unknown::check)
    ),
    rule!(
        "pwm-audible",
        Note,
        "The switching frequency lies in the audible band",
        Some(pwm_audible::check)
    ),
    rule!(
        "suppression-unused",
        Warning,
        "A suppression comment that suppressed nothing",
        None
    ),
    rule!(
        "suppression-invalid",
        Warning,
        "A suppression comment without a reason or naming an unknown rule",
        None
    ),
    rule!(
        "solve-failed",
        Warning,
        "The DC engine found no operating point for a sub-network",
        None
    ),
    rule!(
        "value-suspicious",
        Warning,
        "A value that is almost surely a unit slip",
        Some(value_suspicious::check)
    ),
];

pub fn find(id: &str) -> Option<&'static RuleInfo> {
    REGISTRY.iter().find(|r| r.id.eq_ignore_ascii_case(id))
}

/// Runs every enabled rule; findings inside behavioural part models are left out
/// ([`part_models`]).
pub fn run(cx: &RuleContext<'_>) -> Vec<Finding> {
    let mut out = Vec::new();
    for rule in REGISTRY {
        if let Some(check) = rule.check {
            check(cx, &mut out);
        }
    }
    let models = part_models::model_instances(cx.netlist);
    out.retain(|f| !part_models::inside_model(f, &models));
    out
}

pub mod eseries;
pub mod hygiene_util;
pub mod part_models;
pub mod suppress;
pub mod switch_util;
pub mod timer_util;
pub mod units;
