//! `kickback report`: the electrical facts of one netlist, as tables for a person
//! ([`render_human`]) or as JSON for a program ([`render_json`]).
//!
//! JSON shape (`version` 1): `{"version", "supplies", "timers", "switches", "loads"}`. Ranges
//! are `{"min", "max", "min_state", "max_state"}` in SI base units, the states naming what
//! produced each extreme; a rated number is `{"value", "source"}`; unknown numbers are `null`.
//! Every list is in netlist order.

use super::format_quantity;
use crate::analysis::{
    Analysis, Freewheel, FreewheelKind, LoadFacts, Range, Side, Stage, SupplyFacts, SwitchFacts,
    TimerFacts, TimerMode,
};
use crate::circuit::{Circuit, DeviceId, Kind, Rated};
use crate::netlist::FlatNetlist;
use serde::Serialize;
use std::fmt::Write;

pub const VERSION: u32 = 1;

#[derive(Debug, Serialize)]
pub struct ReportOutput {
    pub version: u32,
    pub supplies: Vec<SupplyJson>,
    pub timers: Vec<TimerJson>,
    pub switches: Vec<SwitchJson>,
    pub loads: Vec<LoadJson>,
}

#[derive(Debug, Serialize)]
pub struct RangeJson {
    pub min: Option<f64>,
    pub max: Option<f64>,
    pub min_state: String,
    pub max_state: String,
}

#[derive(Debug, Serialize)]
pub struct RatedJson {
    pub value: Option<f64>,
    pub source: String,
}

#[derive(Debug, Serialize)]
pub struct SupplyJson {
    pub element: String,
    pub nominal_v: Option<f64>,
    pub voltage_v: RangeJson,
    pub source: String,
}

#[derive(Debug, Serialize)]
pub struct TimerJson {
    pub element: String,
    pub mode: TimerMode,
    pub supply_v: Option<RangeJson>,
    pub high_s: Option<RangeJson>,
    pub low_s: Option<RangeJson>,
    pub period_s: Option<RangeJson>,
    pub frequency_hz: Option<RangeJson>,
    pub duty: Option<RangeJson>,
    pub discharge_current_a: Option<RangeJson>,
}

#[derive(Debug, Serialize)]
pub struct SwitchJson {
    pub element: String,
    pub kind: Kind,
    /// What the stage was taken for (`switch`, `amplifier`, `unknown`) and why; the switch
    /// rules judge switches only.
    pub stage: Stage,
    pub stage_reason: String,
    pub side: Side,
    pub load: Option<String>,
    pub driver: Option<String>,
    pub vgs_on_v: Option<RangeJson>,
    pub vgs_off_v: Option<RangeJson>,
    pub current_a: Option<RangeJson>,
    pub dissipation_w: Option<RangeJson>,
}

#[derive(Debug, Serialize)]
pub struct LoadJson {
    pub element: String,
    pub kind: Kind,
    pub rated_v: Option<RatedJson>,
    pub peak_v: Option<RangeJson>,
    pub avg_v: Option<RangeJson>,
    pub effective_v: Option<RangeJson>,
    pub freewheel: Option<String>,
}

/// Significant digits kept in JSON numbers: far beyond what any part is known to, and few
/// enough that solver noise in the last bits does not show.
const JSON_DIGITS: i32 = 9;

fn finite(v: f64) -> Option<f64> {
    if !v.is_finite() {
        return None;
    }
    // Through decimal text, so the number prints as its shortest form (1.10807356e-23).
    let text = format!("{:.*e}", (JSON_DIGITS - 1) as usize, v);
    let rounded = text.parse::<f64>().unwrap_or(v);
    Some(if rounded == 0.0 { 0.0 } else { rounded })
}

fn range_json(r: &Option<Range>) -> Option<RangeJson> {
    r.as_ref().map(|r| RangeJson {
        min: finite(r.min),
        max: finite(r.max),
        min_state: r.min_state.clone(),
        max_state: r.max_state.clone(),
    })
}

/// The flattened name of a device (`XCH1.M1`).
fn name(netlist: &FlatNetlist, circuit: &Circuit, device: DeviceId) -> String {
    circuit
        .devices
        .get(device)
        .and_then(|d| netlist.elements.get(d.element))
        .map_or_else(|| format!("#{device}"), |e| e.path.clone())
}

fn supply_range(s: &SupplyFacts, name: &str) -> Range {
    Range {
        min: s.min,
        max: s.max,
        min_state: format!("{name} at min"),
        max_state: format!("{name} at max"),
    }
}

fn sorted<T>(items: &[T], key: impl Fn(&T) -> DeviceId) -> Vec<&T> {
    let mut v: Vec<&T> = items.iter().collect();
    v.sort_by_key(|t| key(t));
    v
}

/// The facts as the JSON document's structure.
pub fn output(analysis: &Analysis, netlist: &FlatNetlist, circuit: &Circuit) -> ReportOutput {
    let n = |d: DeviceId| name(netlist, circuit, d);
    ReportOutput {
        version: VERSION,
        supplies: sorted(&analysis.supplies, |s| s.device)
            .into_iter()
            .map(|s| SupplyJson {
                element: n(s.device),
                nominal_v: finite(s.nominal),
                voltage_v: range_json(&Some(supply_range(s, &n(s.device)))).unwrap_or(RangeJson {
                    min: None,
                    max: None,
                    min_state: String::new(),
                    max_state: String::new(),
                }),
                source: s.source.clone(),
            })
            .collect(),
        timers: sorted(&analysis.timers, |t| t.device)
            .into_iter()
            .map(|t| TimerJson {
                element: n(t.device),
                mode: t.mode,
                supply_v: range_json(&t.supply_v),
                high_s: range_json(&t.high_s),
                low_s: range_json(&t.low_s),
                period_s: range_json(&t.period_s),
                frequency_hz: range_json(&t.frequency_hz),
                duty: range_json(&t.duty),
                discharge_current_a: range_json(&t.discharge_current_a),
            })
            .collect(),
        switches: sorted(&analysis.switches, |s| s.device)
            .into_iter()
            .map(|s| SwitchJson {
                element: n(s.device),
                kind: s.kind,
                stage: s.stage,
                stage_reason: s.stage_reason.clone(),
                side: s.side,
                load: s
                    .load
                    .and_then(|i| analysis.loads.get(i))
                    .map(|l| n(l.device)),
                driver: s.driver.as_ref().map(|d| n(d.device)),
                vgs_on_v: range_json(&s.vgs_on_v),
                vgs_off_v: range_json(&s.vgs_off_v),
                current_a: range_json(&s.current_a),
                dissipation_w: range_json(&s.dissipation_w),
            })
            .collect(),
        loads: sorted(&analysis.loads, |l| l.device)
            .into_iter()
            .map(|l| LoadJson {
                element: n(l.device),
                kind: l.kind,
                rated_v: l.rated_v.as_ref().map(|r| RatedJson {
                    value: finite(r.value),
                    source: r.source.clone(),
                }),
                peak_v: range_json(&l.peak_v),
                avg_v: range_json(&l.avg_v),
                effective_v: range_json(&l.effective_v),
                freewheel: l.freewheel.map(n),
            })
            .collect(),
    }
}

/// `kickback report --format json`: one pretty-printed document and a newline.
pub fn render_json(analysis: &Analysis, netlist: &FlatNetlist, circuit: &Circuit) -> String {
    let mut text = serde_json::to_string_pretty(&output(analysis, netlist, circuit))
        .unwrap_or_else(|e| format!("{{\"version\": {VERSION}, \"error\": \"{e}\"}}"));
    text.push('\n');
    text
}

/// `kickback report` for a person: a table per supply, timer, switch and load, then the
/// resistors' dissipation and the capacitors' voltages.
pub fn render_human(analysis: &Analysis, netlist: &FlatNetlist, circuit: &Circuit) -> String {
    render_human_with(analysis, netlist, circuit, false)
}

/// As [`render_human`]; with `ascii`, `µ` is written `u` and `Ω` `ohm`.
pub fn render_human_with(
    analysis: &Analysis,
    netlist: &FlatNetlist,
    circuit: &Circuit,
    ascii: bool,
) -> String {
    let table = Table {
        netlist,
        circuit,
        ascii,
    };
    let mut out = String::new();
    table.supplies(&mut out, analysis);
    for t in sorted(&analysis.timers, |t| t.device) {
        table.timer(&mut out, t);
    }
    for s in sorted(&analysis.switches, |s| s.device) {
        table.switch(&mut out, analysis, s);
    }
    for l in sorted(&analysis.loads, |l| l.device) {
        table.load(&mut out, l);
    }
    table.resistors(&mut out, analysis);
    table.capacitors(&mut out, analysis);
    if out.is_empty() {
        out.push_str("no supplies, timers, switches or loads found\n");
    }
    out
}

struct Table<'a> {
    netlist: &'a FlatNetlist,
    circuit: &'a Circuit,
    ascii: bool,
}

impl Table<'_> {
    fn name(&self, device: DeviceId) -> String {
        name(self.netlist, self.circuit, device)
    }

    fn q(&self, value: f64, unit: &str) -> String {
        if unit == "%" {
            return format!("{} %", format_quantity(value * 100.0, "", self.ascii));
        }
        // Below these a solved number is the solver's leakage, not a fact.
        let floor = match unit {
            "V" => 1e-6,
            "A" | "W" | "J" => 1e-9,
            _ => 0.0,
        };
        let value = if value.abs() < floor { 0.0 } else { value };
        format_quantity(value, unit, self.ascii)
    }

    fn row(&self, out: &mut String, label: &str, value: &str, note: &str) {
        let _ = if note.is_empty() {
            writeln!(out, "  {label:<14} {value}")
        } else {
            writeln!(out, "  {label:<14} {value}  ({note})")
        };
    }

    /// A range row: `min … max  (states; extra)`; `unknown` when absent.
    fn range(&self, out: &mut String, label: &str, r: &Option<Range>, unit: &str, extra: &str) {
        let Some(r) = r else {
            self.row(out, label, "unknown", extra);
            return;
        };
        let (lo, hi) = (self.q(r.min, unit), self.q(r.max, unit));
        let same = lo == hi;
        let value = format!("{lo} … {hi}");
        let states = if r.min_state == r.max_state || same {
            r.min_state.clone()
        } else {
            format!("min: {}; max: {}", r.min_state, r.max_state)
        };
        let note = match (states.is_empty(), extra.is_empty()) {
            (_, true) => states,
            (true, false) => extra.to_string(),
            (false, false) => format!("{states}; {extra}"),
        };
        self.row(out, label, &value, &note);
    }

    fn rated(&self, out: &mut String, label: &str, r: &Option<Rated>, unit: &str) {
        match r {
            Some(r) => self.row(out, label, &self.q(r.value, unit), &r.source),
            None => self.row(out, label, "unknown", ""),
        }
    }

    /// `threshold 3 V from .model NCH VTO` for a switch's gate numbers.
    fn threshold_note(&self, device: DeviceId) -> String {
        let Some(d) = self.circuit.devices.get(device) else {
            return String::new();
        };
        let (key, label) = if d.kind.is_mos() {
            if d.data.get("vto").is_some() {
                ("vto", "threshold")
            } else {
                ("vgs_th_max", "threshold")
            }
        } else {
            ("bf", "βF")
        };
        match d.data.get(key) {
            Some(r) if d.kind.is_mos() => {
                format!("{label} {} {}", self.q(r.value.abs(), "V"), r.source)
            }
            Some(r) => format!(
                "{label} {} {}",
                format_quantity(r.value, "", self.ascii),
                r.source
            ),
            None => String::new(),
        }
    }

    fn supplies(&self, out: &mut String, analysis: &Analysis) {
        if analysis.supplies.is_empty() {
            return;
        }
        out.push_str("Supplies\n");
        for s in sorted(&analysis.supplies, |s| s.device) {
            let value = if s.min == s.max {
                self.q(s.nominal, "V")
            } else {
                format!(
                    "{} ({} … {})",
                    self.q(s.nominal, "V"),
                    self.q(s.min, "V"),
                    self.q(s.max, "V")
                )
            };
            self.row(out, &self.name(s.device), &value, &s.source);
        }
        out.push('\n');
    }

    fn timer(&self, out: &mut String, t: &TimerFacts) {
        let mode = match t.mode {
            TimerMode::Astable => "astable",
            TimerMode::Monostable => "monostable",
            TimerMode::Unknown => "configuration unknown",
        };
        let kind = self
            .circuit
            .devices
            .get(t.device)
            .map_or(Kind::Unknown, |d| d.kind);
        let _ = writeln!(out, "Timer {} ({kind}, {mode})", self.name(t.device));
        self.range(out, "supply", &t.supply_v, "V", "");
        self.range(out, "high time", &t.high_s, "s", "");
        self.range(out, "low time", &t.low_s, "s", "");
        self.range(out, "period", &t.period_s, "s", "");
        self.range(out, "frequency", &t.frequency_hz, "Hz", "");
        self.range(out, "duty", &t.duty, "%", "");
        self.range(out, "discharge", &t.discharge_current_a, "A", "");
        if let (Some(f), Some(d)) = (t.divided_frequency_hz, t.divided_duty) {
            let value = format!("{} at {}", self.q(f, "Hz"), self.q(d, "%"));
            self.row(
                out,
                "output",
                &value,
                "the pulse outlasts the trigger period",
            );
        }
        if let Some(stuck) = &t.stuck {
            self.row(
                out,
                "stuck",
                &format!("{} phase", stuck.phase),
                &stuck.reason,
            );
        }
        out.push('\n');
    }

    fn switch(&self, out: &mut String, analysis: &Analysis, s: &SwitchFacts) {
        let side = match s.side {
            Side::Low => "low side".to_string(),
            Side::High => "high side".to_string(),
            Side::Bridge => match s.bridge_partner {
                Some(p) => format!("bridge leg with {}", self.name(p)),
                None => "bridge leg".to_string(),
            },
        };
        let _ = writeln!(out, "Switch {} ({}, {side})", self.name(s.device), s.kind);
        self.row(out, "stage", s.stage.as_str(), &s.stage_reason);
        let load = s.load.and_then(|i| analysis.loads.get(i));
        let load_text = match load {
            Some(l) => format!("{} ({})", self.name(l.device), l.kind),
            None if s.branch.is_empty() => "none found".to_string(),
            None => self.names(&s.branch),
        };
        let inductive = if s.inductive { "inductive" } else { "" };
        self.row(out, "load", &load_text, inductive);
        match &s.driver {
            Some(d) => {
                let mut notes = Vec::new();
                if !d.network.is_empty() {
                    notes.push(format!("through {}", self.names(&d.network)));
                }
                if let Some(c) = d.control.filter(|&c| c != d.device) {
                    notes.push(format!("following {}", self.name(c)));
                }
                match d.on_when_high {
                    Some(true) => notes.push("on while high".into()),
                    Some(false) => notes.push("on while low".into()),
                    None => {}
                }
                if !d.shared_with.is_empty() {
                    notes.push(format!("shared with {}", self.names(&d.shared_with)));
                }
                if d.boosted {
                    notes.push("boosted".into());
                }
                if d.can_float {
                    notes.push("can float".into());
                }
                self.row(out, "driver", &self.name(d.device), &notes.join("; "));
            }
            None => self.row(out, "driver", "none found", ""),
        }
        self.range(out, "rail", &s.rail_v, "V", "");
        let threshold = self.threshold_note(s.device);
        let (gate, base) = if s.kind.is_mos() {
            ("vgs_on", "vgs_off")
        } else {
            ("vbe_on", "vbe_off")
        };
        self.range(out, gate, &s.vgs_on_v, "V", &threshold);
        self.range(out, base, &s.vgs_off_v, "V", "");
        if s.kind.is_bjt() {
            self.range(out, "base current", &s.base_current_a, "A", "");
        }
        let channel = if s.kind.is_mos() { "vds_on" } else { "vce_on" };
        self.range(out, channel, &s.vds_on_v, "V", "");
        self.range(out, "current", &s.current_a, "A", "");
        if s.kind.is_mos() {
            match &s.rds_on_ohm {
                None if s.vgs_on_v.is_some() => {
                    self.row(out, "rds_on", "n/a", "not in its triode region when on")
                }
                r => self.range(out, "rds_on", r, "Ω", "square law at the on-state V_GS"),
            }
        }
        self.range(out, "dissipation", &s.dissipation_w, "W", "");
        self.range(out, "duty", &s.duty, "%", "");
        self.range(out, "frequency", &s.frequency_hz, "Hz", "");
        if s.freewheel.is_empty() {
            self.row(out, "freewheel", "none", "");
        }
        for f in &s.freewheel {
            self.row(
                out,
                "freewheel",
                &self.freewheel(f),
                &self.freewheel_note(f),
            );
        }
        if s.follower {
            self.row(
                out,
                "note",
                "source follower",
                "nothing lifts the gate above the rail",
            );
        }
        if s.linear_region {
            self.row(
                out,
                "note",
                "linear region",
                "carries current out of its closed region",
            );
        }
        out.push('\n');
    }

    fn freewheel(&self, f: &Freewheel) -> String {
        let how = match f.kind {
            FreewheelKind::AcrossLoad => "across the load",
            FreewheelKind::ToRail => "switched node to rail",
            FreewheelKind::Clamp => "clamp across the switch",
            FreewheelKind::OppositeBodyDiode => "body diode of the opposite switch",
            FreewheelKind::ThroughCapacitor => "through a capacitor (converter)",
            FreewheelKind::CoupledWinding => "coupled winding (transformer)",
        };
        format!("{} {how}", self.name(f.device))
    }

    fn freewheel_note(&self, f: &Freewheel) -> String {
        if f.reversed {
            return match (f.on_state_current_a, f.off_state_current_a) {
                (Some(i), _) => {
                    format!("REVERSED: {} from the rail in the on state", self.q(i, "A"))
                }
                (None, Some(i)) => format!("REVERSED: {} forward in the off state", self.q(i, "A")),
                _ => "REVERSED".into(),
            };
        }
        match (f.peak_current_a, &f.avg_current_a) {
            (Some(p), Some(a)) => format!(
                "takes {} at turn-off, {} … {} average",
                self.q(p, "A"),
                self.q(a.min, "A"),
                self.q(a.max, "A")
            ),
            (Some(p), None) => format!("takes {} at turn-off", self.q(p, "A")),
            _ => String::new(),
        }
    }

    fn load(&self, out: &mut String, l: &LoadFacts) {
        let _ = writeln!(out, "Load {} ({})", self.name(l.device), l.kind);
        match (l.switch, l.driven_by) {
            (Some(s), _) => self.row(out, "switched by", &self.name(s), ""),
            (None, Some(d)) => self.row(out, "driven by", &self.name(d), "no switch"),
            (None, None) => self.row(out, "switched by", "nothing", "always on"),
        }
        self.rated(out, "rated", &l.rated_v, "V");
        self.rated(out, "resistance", &l.resistance, "Ω");
        self.rated(out, "inductance", &l.inductance, "H");
        self.range(out, "peak", &l.peak_v, "V", "");
        self.range(out, "average", &l.avg_v, "V", "");
        let how = match (l.effective_is_average, l.time_constant_s) {
            (true, Some(tau)) => format!("average: period short against τ = {}", self.q(tau, "s")),
            (false, Some(tau)) => format!("RMS: period not below τ/3, τ = {}", self.q(tau, "s")),
            (_, None) => "RMS: τ unknown".to_string(),
        };
        self.range(out, "effective", &l.effective_v, "V", &how);
        self.range(out, "current", &l.current_a, "A", "");
        match l.stored_energy_j {
            Some(e) => self.row(
                out,
                "stored energy",
                &self.q(e, "J"),
                "½·L·I² at the peak current",
            ),
            None => self.row(out, "stored energy", "unknown", ""),
        }
        self.range(out, "duty", &l.duty, "%", "");
        let freewheel = l
            .freewheel
            .map_or_else(|| "none".to_string(), |d| self.name(d));
        self.row(out, "freewheel", &freewheel, "");
        out.push('\n');
    }

    /// A rating the part data holds, with where it came from; the rules' defaults otherwise.
    fn rating_note(&self, device: DeviceId, key: &str, unit: &str) -> String {
        let rated = self
            .circuit
            .devices
            .get(device)
            .and_then(|d| d.data.get(key));
        match rated {
            Some(r) => format!("{key} {} {}", self.q(r.value, unit), r.source),
            None => format!("no {key} given"),
        }
    }

    /// One row per resistor and pot: dissipation over states, and a pot's wiper current.
    fn resistors(&self, out: &mut String, analysis: &Analysis) {
        if analysis.resistors.is_empty() {
            return;
        }
        out.push_str("Resistors and pots (dissipation)\n");
        for r in sorted(&analysis.resistors, |r| r.device) {
            let note = self.rating_note(r.device, "power_rating", "W");
            self.range(
                out,
                &self.name(r.device),
                &Some(r.power_w.clone()),
                "W",
                &note,
            );
            if let Some(wiper) = &r.wiper_current_a {
                let note = self.rating_note(r.device, "wiper_current_max", "A");
                self.range(out, "  wiper", &Some(wiper.clone()), "A", &note);
            }
        }
        out.push('\n');
    }

    /// One row per capacitor: the voltage across it over states.
    fn capacitors(&self, out: &mut String, analysis: &Analysis) {
        if analysis.capacitors.is_empty() {
            return;
        }
        out.push_str("Capacitors (voltage, + to − in node order)\n");
        for c in sorted(&analysis.capacitors, |c| c.device) {
            let note = self.rating_note(c.device, "voltage_rating", "V");
            self.range(
                out,
                &self.name(c.device),
                &Some(c.voltage_v.clone()),
                "V",
                &note,
            );
        }
        out.push('\n');
    }

    fn names(&self, devices: &[DeviceId]) -> String {
        devices
            .iter()
            .map(|&d| self.name(d))
            .collect::<Vec<_>>()
            .join(", ")
    }
}
