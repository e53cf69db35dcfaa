//! `kickback report`: the electrical facts of one netlist, as tables for a person
//! ([`render_human`]) or as JSON for a program ([`render_json`]).
//!
//! JSON shape (`version` 1): `{"version", "supplies", "timers", "switches", "loads"}`. Ranges
//! are `{"min", "max", "min_state", "max_state"}` in SI base units, the states naming what
//! produced each extreme; a rated number is `{"value", "source"}`; unknown numbers are `null`.
//! Every list is in netlist order.

pub use super::facts_table::{render_device, render_human, render_human_with};
use crate::analysis::{Analysis, EffectiveMethod, Range, Side, Stage, SupplyFacts, TimerMode};
use crate::circuit::{Circuit, DeviceId, Kind};
use crate::netlist::FlatNetlist;
use serde::Serialize;

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
    /// Square-law gain k (A/V²) of a MOSFET, with how and from what it was found.
    pub gain_k: Option<RatedJson>,
    pub rds_on_ohm: Option<RangeJson>,
    pub saturated_current_a: Option<RangeJson>,
    pub gate_rise_s: Option<f64>,
    pub gate_fall_s: Option<f64>,
    pub switching_loss_w: Option<f64>,
}

#[derive(Debug, Serialize)]
pub struct LoadJson {
    pub element: String,
    pub kind: Kind,
    pub rated_v: Option<RatedJson>,
    pub peak_v: Option<RangeJson>,
    pub avg_v: Option<RangeJson>,
    pub effective_v: Option<RangeJson>,
    pub effective_method: EffectiveMethod,
    /// The on-state voltage with the switch saturated, when the switch now runs linear.
    pub full_on_v: Option<RangeJson>,
    pub ripple_a: Option<RangeJson>,
    pub duty_limit: Option<f64>,
    pub time_constant_s: Option<f64>,
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
pub(crate) fn name(netlist: &FlatNetlist, circuit: &Circuit, device: DeviceId) -> String {
    circuit
        .devices()
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

pub(crate) fn sorted<T>(items: &[T], key: impl Fn(&T) -> DeviceId) -> Vec<&T> {
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
                gain_k: s.gain.as_ref().map(|g| RatedJson {
                    value: finite(g.k),
                    source: format!("{} ({})", g.how, g.source),
                }),
                rds_on_ohm: range_json(&s.rds_on_ohm),
                saturated_current_a: range_json(&s.saturated_current_a),
                gate_rise_s: s.gate_edges.as_ref().and_then(|e| finite(e.rise_s)),
                gate_fall_s: s.gate_edges.as_ref().and_then(|e| finite(e.fall_s)),
                switching_loss_w: s
                    .gate_edges
                    .as_ref()
                    .and_then(|e| e.switching_loss_w)
                    .and_then(finite),
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
                effective_method: l.effective_method,
                full_on_v: range_json(&l.full_on_v),
                ripple_a: range_json(&l.ripple_a),
                duty_limit: l.duty_limit.and_then(finite),
                time_constant_s: l.time_constant_s.and_then(finite),
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
