//! `kickback report` for a person: the facts as tables (the JSON form is in [`super::facts`]).

use super::facts::{name, sorted};
use super::format_quantity;
use crate::analysis::{
    Analysis, CapacitorFacts, EffectiveMethod, Freewheel, FreewheelKind, LoadFacts, Range,
    ResistorFacts, Side, SupplyFacts, SwitchFacts, TimerFacts, TimerMode,
};
use crate::circuit::{Circuit, DeviceId, Kind, Rated};
use crate::netlist::FlatNetlist;
use std::fmt::Write;

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

/// The facts of one device as `kickback report` prints them, for an editor's hover: its
/// supply, timer, switch or load table, a resistor's dissipation, a capacitor's voltage.
/// `None` when the analyses hold nothing about it.
pub fn render_device(
    analysis: &Analysis,
    netlist: &FlatNetlist,
    circuit: &Circuit,
    device: DeviceId,
) -> Option<String> {
    let table = Table {
        netlist,
        circuit,
        ascii: false,
    };
    let mut out = String::new();
    for s in analysis.supplies.iter().filter(|s| s.device == device) {
        out.push_str("Supply\n");
        table.supply(&mut out, s);
        out.push('\n');
    }
    for t in analysis.timers.iter().filter(|t| t.device == device) {
        table.timer(&mut out, t);
    }
    for s in analysis.switches.iter().filter(|s| s.device == device) {
        table.switch(&mut out, analysis, s);
    }
    for l in analysis.loads.iter().filter(|l| l.device == device) {
        table.load(&mut out, l);
    }
    for r in analysis.resistors.iter().filter(|r| r.device == device) {
        out.push_str("Resistor (dissipation)\n");
        table.resistor(&mut out, r);
        out.push('\n');
    }
    for c in analysis.capacitors.iter().filter(|c| c.device == device) {
        out.push_str("Capacitor (voltage, + to − in node order)\n");
        table.capacitor(&mut out, c);
        out.push('\n');
    }
    (!out.is_empty()).then_some(out)
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
        let Some(d) = self.circuit.devices().get(device) else {
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
            self.supply(out, s);
        }
        out.push('\n');
    }

    fn supply(&self, out: &mut String, s: &SupplyFacts) {
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

    fn timer(&self, out: &mut String, t: &TimerFacts) {
        let mode = match t.mode {
            TimerMode::Astable => "astable",
            TimerMode::Monostable => "monostable",
            TimerMode::Unknown => "configuration unknown",
        };
        let kind = self
            .circuit
            .devices()
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
                    notes.push(format!(
                        "shared with {}",
                        self.names(&d.shared_with.to_vec())
                    ));
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
        if let Some(g) = &s.gain {
            self.row(
                out,
                "gain k",
                &format!("{} A/V²", format_quantity(g.k, "", self.ascii)),
                &format!("{} ({})", g.how, g.source),
            );
        }
        if s.kind.is_mos() {
            match &s.rds_on_ohm {
                None if s.vgs_on_v.is_some() => {
                    self.row(out, "rds_on", "n/a", "not in its triode region when on")
                }
                r => self.range(out, "rds_on", r, "Ω", "square law at the on-state V_GS"),
            }
        }
        if s.saturated_current_a.is_some() && (s.linear_region || s.follower) {
            self.range(
                out,
                "saturated",
                &s.saturated_current_a,
                "A",
                "branch current with the switch saturated",
            );
        }
        if let Some(e) = &s.gate_edges {
            let value = format!("{} / {}", self.q(e.rise_s, "s"), self.q(e.fall_s, "s"));
            let note = format!(
                "rise / fall, 2.2·R·C with R {} and C {}: {}",
                self.q(e.drive_ohms, "Ω"),
                self.q(e.input_capacitance_f, "F"),
                e.how
            );
            self.row(out, "gate edges", &value, &note);
            if let Some(p) = e.switching_loss_w {
                self.row(
                    out,
                    "switching loss",
                    &self.q(p, "W"),
                    "½·V·I·(t_r + t_f)·f",
                );
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
            let (what, why) = if s.kind.is_bjt() {
                ("emitter follower", "nothing lifts the base above the rail")
            } else {
                ("source follower", "nothing lifts the gate above the rail")
            };
            self.row(out, "note", what, why);
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
        self.range(out, "peak", &l.peak_v, "V", "the switch as it is");
        if l.full_on_v.is_some() {
            self.range(
                out,
                "peak, full on",
                &l.full_on_v,
                "V",
                "with its switch saturated: ratings are judged on this",
            );
        }
        let tau = l
            .time_constant_s
            .map_or_else(String::new, |t| format!(", τ = {}", self.q(t, "s")));
        let how = match l.effective_method {
            EffectiveMethod::ClosedForm => format!("I_rms·R, R-L closed form{tau}"),
            EffectiveMethod::RmsAssumed => "Vpk·√D: L/R or frequency unknown".to_string(),
            EffectiveMethod::Peak => "the peak: on all the time, or no duty known".to_string(),
        };
        self.range(out, "average", &l.avg_v, "V", "");
        self.range(out, "effective", &l.effective_v, "V", &how);
        if l.ripple_a.is_some() {
            self.range(
                out,
                "ripple",
                &l.ripple_a,
                "A",
                "peak-to-peak current over one PWM period",
            );
        }
        if let Some(d) = l.duty_limit.filter(|d| *d < 1.0) {
            self.row(
                out,
                "duty limit",
                &self.q(d, "%"),
                "effective voltage at its rating",
            );
        }
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
            .devices()
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
            self.resistor(out, r);
        }
        out.push('\n');
    }

    fn resistor(&self, out: &mut String, r: &ResistorFacts) {
        {
            let note = self.rating_note(r.device, "power_rating", "W");
            self.range(
                out,
                &self.name(r.device),
                &Some(r.power_w.clone()),
                "W",
                &note,
            );
            // The peak beside the average only where the pulse makes a difference.
            if r.peak_power_w.max > r.power_w.max * 1.05 && r.peak_power_w.max > 1e-9 {
                self.range(
                    out,
                    "  peak",
                    &Some(r.peak_power_w.clone()),
                    "W",
                    "while it conducts; the rating is judged on the average above",
                );
            }
            if let Some(wiper) = &r.wiper_current_a {
                let note = self.rating_note(r.device, "wiper_current_max", "A");
                self.range(out, "  wiper", &Some(wiper.clone()), "A", &note);
            }
        }
    }

    /// One row per capacitor: the voltage across it over states.
    fn capacitors(&self, out: &mut String, analysis: &Analysis) {
        if analysis.capacitors.is_empty() {
            return;
        }
        out.push_str("Capacitors (voltage, + to − in node order)\n");
        for c in sorted(&analysis.capacitors, |c| c.device) {
            self.capacitor(out, c);
        }
        out.push('\n');
    }

    fn capacitor(&self, out: &mut String, c: &CapacitorFacts) {
        let note = self.rating_note(c.device, "voltage_rating", "V");
        self.range(
            out,
            &self.name(c.device),
            &Some(c.voltage_v.clone()),
            "V",
            &note,
        );
    }

    fn names(&self, devices: &[DeviceId]) -> String {
        devices
            .iter()
            .map(|&d| self.name(d))
            .collect::<Vec<_>>()
            .join(", ")
    }
}
