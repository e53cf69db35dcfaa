//! The page's content as plain strings, in the order the template shows it.

use super::charts;
use super::neighbourhood;
use super::Review;
use crate::analysis::{Range, Stage, SwitchFacts, TimerFacts, TimerMode};
use crate::circuit::{DeviceId, Kind};
use crate::diagnostic::{Finding, Severity};
use crate::report::facts::{name, sorted};
use crate::report::{format_quantity, locate, Summary};
use askama::Template;

#[derive(Template)]
#[template(path = "review.html")]
pub struct Page {
    pub version: &'static str,
    pub file: String,
    pub title: String,
    pub summary: String,
    pub failure: String,
    pub stages: Vec<StageRow>,
    pub timers: Vec<Figure>,
    pub switches: Vec<Figure>,
    pub findings: Vec<FindingView>,
}

pub struct StageRow {
    pub anchor: String,
    pub element: String,
    pub kind: String,
    pub taken_for: String,
    pub verdict: String,
    pub class: &'static str,
}

/// A stage's diagram with its key numbers.
pub struct Figure {
    pub anchor: String,
    pub heading: String,
    /// Drawn SVG, every embedded string escaped; empty when there is nothing to draw.
    pub svg: String,
    pub alt: String,
    pub legend: Vec<charts::LegendEntry>,
    pub numbers: Vec<NumberRow>,
    pub note: String,
}

pub struct NumberRow {
    pub name: String,
    pub value: String,
    pub source: String,
    /// 0–100 for a bar against a limit, with the limit; `None`: no limit known.
    pub bar: Option<u32>,
    pub over: bool,
}

pub struct FindingView {
    pub anchor: String,
    pub severity: &'static str,
    pub rule: String,
    pub message: String,
    pub location: String,
    pub element: String,
    pub svg: String,
    pub lines: Vec<(String, String)>,
    pub numbers: Vec<NumberRow>,
    pub help: String,
}

pub(super) fn q(value: f64, unit: &str) -> String {
    if unit == "%" {
        return format!("{} %", format_quantity(value * 100.0, "", false));
    }
    let floor = match unit {
        "V" => 1e-6,
        "A" | "W" | "J" => 1e-9,
        _ => 0.0,
    };
    format_quantity(if value.abs() < floor { 0.0 } else { value }, unit, false)
}

pub(super) fn range(r: &Option<Range>, unit: &str) -> String {
    match r {
        Some(r) => {
            let (lo, hi) = (q(r.min, unit), q(r.max, unit));
            if lo == hi {
                lo
            } else {
                format!("{lo} … {hi}")
            }
        }
        None => "unknown".to_string(),
    }
}

fn states(r: &Option<Range>) -> String {
    match r {
        Some(r) if r.min_state == r.max_state => r.min_state.clone(),
        Some(r) => format!("min: {}; max: {}", r.min_state, r.max_state),
        None => String::new(),
    }
}

fn row(name: &str, r: &Option<Range>, unit: &str) -> NumberRow {
    NumberRow {
        name: name.to_string(),
        value: range(r, unit),
        source: states(r),
        bar: None,
        over: false,
    }
}

pub(super) fn anchor(prefix: &str, id: usize) -> String {
    format!("{prefix}-{id}")
}

pub(super) fn severity_word(s: Severity) -> &'static str {
    match s {
        Severity::Error => "error",
        Severity::Warning => "warning",
        Severity::Note => "note",
    }
}

/// The verdict on one stage: the severest finding about its device — named as the element,
/// or with the device's line among the lines it involves (a finding placed on the resistor to
/// change still speaks of the transistor it labels) — and the rules that gave them.
fn verdict(
    r: &Review<'_>,
    stage_names: &std::collections::BTreeSet<String>,
    device: DeviceId,
) -> (String, &'static str) {
    let element = name(r.netlist, r.circuit, device);
    let line = r
        .circuit
        .devices()
        .get(device)
        .and_then(|d| r.netlist.elements.get(d.element))
        .map(|e| locate(r.report, e.span));
    let same_line = |span| {
        let at = locate(r.report, span);
        line.as_ref()
            .is_some_and(|l| l.file == at.file && l.line == at.line)
    };
    // A finding about a stage's own device belongs to that stage alone; one placed on a
    // passive part (the resistor or diode to change) belongs to every stage it involves.
    let mine: Vec<&Finding> = r
        .report
        .findings
        .iter()
        .filter(|f| {
            let about = f.instance_path.as_deref().or(f.element.as_deref());
            if about == Some(element.as_str()) || same_line(f.span) {
                return true;
            }
            let on_a_stage = about.is_some_and(|a| stage_names.contains(a));
            !on_a_stage && f.involved_lines().into_iter().any(|(s, _)| same_line(s))
        })
        .collect();
    let worst = mine.iter().map(|f| f.severity).max();
    match worst {
        None => ("no findings".to_string(), "ok"),
        Some(s) => {
            let mut rules: Vec<&str> = mine.iter().map(|f| f.rule.as_str()).collect();
            rules.sort_unstable();
            rules.dedup();
            (
                format!("{}: {}", severity_word(s), rules.join(", ")),
                severity_word(s),
            )
        }
    }
}

pub fn page(review: &Review<'_>, draw: bool) -> Page {
    let r = review;
    let n = |d: DeviceId| name(r.netlist, r.circuit, d);
    let stage_names: std::collections::BTreeSet<String> = r
        .analysis
        .timers
        .iter()
        .map(|t| t.device)
        .chain(r.analysis.switches.iter().map(|s| s.device))
        .chain(r.analysis.loads.iter().map(|l| l.device))
        .map(n)
        .collect();
    let kind_of = |d: DeviceId| r.circuit.devices().get(d).map_or(Kind::Unknown, |x| x.kind);
    let mut stages = Vec::new();
    for t in sorted(&r.analysis.timers, |t| t.device) {
        let (verdict, class) = verdict(r, &stage_names, t.device);
        stages.push(StageRow {
            anchor: anchor("timer", t.device),
            element: n(t.device),
            kind: kind_of(t.device).to_string(),
            taken_for: timer_taken_for(t),
            verdict,
            class,
        });
    }
    for s in sorted(&r.analysis.switches, |s| s.device) {
        let (verdict, class) = verdict(r, &stage_names, s.device);
        stages.push(StageRow {
            anchor: anchor("switch", s.device),
            element: n(s.device),
            kind: s.kind.to_string(),
            taken_for: switch_taken_for(r, s),
            verdict,
            class,
        });
    }
    for l in sorted(&r.analysis.loads, |l| l.device) {
        let (verdict, class) = verdict(r, &stage_names, l.device);
        stages.push(StageRow {
            anchor: String::new(),
            element: n(l.device),
            kind: l.kind.to_string(),
            taken_for: match (l.switch, l.driven_by) {
                (Some(s), _) => format!("load switched by {}", n(s)),
                (None, Some(d)) => format!("load driven straight from {}", n(d)),
                _ => "load".to_string(),
            },
            verdict,
            class,
        });
    }
    let timers = sorted(&r.analysis.timers, |t| t.device)
        .into_iter()
        .map(|t| timer_figure(r, t, draw))
        .collect();
    let switches = sorted(&r.analysis.switches, |s| s.device)
        .into_iter()
        .filter(|s| s.stage == Stage::Switch)
        .map(|s| switch_figure(r, s, draw))
        .collect();
    let findings = crate::report::ordered(std::slice::from_ref(r.report))
        .into_iter()
        .enumerate()
        .map(|(i, e)| finding_view(r, e.finding, i, draw))
        .collect();
    Page {
        version: super::VERSION,
        file: crate::report::display_path(&r.report.path),
        title: r.netlist.title.trim().to_string(),
        summary: Summary::of(std::slice::from_ref(r.report)).line(),
        failure: r
            .report
            .failure
            .as_ref()
            .map(|e| e.to_string())
            .unwrap_or_default(),
        stages,
        timers,
        switches,
        findings,
    }
}

fn timer_taken_for(t: &TimerFacts) -> String {
    match t.mode {
        TimerMode::Astable => "555 astable (free-running)".to_string(),
        TimerMode::Monostable => "555 monostable (one-shot)".to_string(),
        TimerMode::Unknown => "555, configuration not recognised".to_string(),
    }
}

fn switch_taken_for(r: &Review<'_>, s: &SwitchFacts) -> String {
    let side = match s.side {
        crate::analysis::Side::Low => "low-side",
        crate::analysis::Side::High => "high-side",
        crate::analysis::Side::Bridge => "bridge-leg",
    };
    let load = s
        .load
        .and_then(|i| r.analysis.loads.get(i))
        .map(|l| format!(" of {}", name(r.netlist, r.circuit, l.device)))
        .unwrap_or_default();
    match s.stage {
        Stage::Switch => format!("{side} switch{load}"),
        other => format!("{} ({})", other.as_str(), s.stage_reason),
    }
}

fn timer_figure(r: &Review<'_>, t: &TimerFacts, draw: bool) -> Figure {
    let element = name(r.netlist, r.circuit, t.device);
    let wave = r.waveforms.timers.iter().find(|w| w.device == t.device);
    let (svg, legend) = match (wave, draw) {
        (Some(w), true) => charts::timer(w, &element),
        _ => (String::new(), Vec::new()),
    };
    let mut numbers = vec![
        row("supply", &t.supply_v, "V"),
        row("upper threshold", &t.upper_threshold_v, "V"),
        row("lower threshold", &t.lower_threshold_v, "V"),
        row("high time", &t.high_s, "s"),
    ];
    if t.mode == TimerMode::Astable {
        numbers.push(row("low time", &t.low_s, "s"));
        numbers.push(row("period", &t.period_s, "s"));
        numbers.push(row("frequency", &t.frequency_hz, "Hz"));
        numbers.push(row("duty", &t.duty, "%"));
    }
    if let Some(tr) = &t.trigger {
        numbers.push(row("trigger low", &Some(tr.low_s.clone()), "s"));
        numbers.push(row("trigger period", &Some(tr.period_s.clone()), "s"));
    }
    numbers.push(row("discharge current", &t.discharge_current_a, "A"));
    let mut note = String::new();
    if let (Some(f), Some(d)) = (t.divided_frequency_hz, t.divided_duty) {
        note = format!(
            "The pulse outlasts the trigger period: the output runs at {} and {} duty.",
            q(f, "Hz"),
            q(d, "%")
        );
    }
    if let Some(stuck) = &t.stuck {
        note = format!("The {} phase cannot finish: {}.", stuck.phase, stuck.reason);
    }
    if wave.is_none() && note.is_empty() {
        note = "No timing diagram: the phases could not be timed.".to_string();
    }
    let mode = match t.mode {
        TimerMode::Astable => "astable",
        TimerMode::Monostable => "monostable",
        TimerMode::Unknown => "configuration unknown",
    };
    Figure {
        anchor: anchor("timer", t.device),
        heading: format!("Timer {element} ({mode})"),
        alt: format!("Timing diagram of {element}: capacitor voltage between its thresholds over two periods, with the output, discharge and trigger below"),
        svg,
        legend,
        numbers,
        note,
    }
}

/// A number against its rating: the bar is the share of the limit used.
fn against(
    name: &str,
    value: Option<f64>,
    unit: &str,
    limit: Option<(f64, String)>,
    state: &str,
) -> NumberRow {
    let shown = value.map_or("unknown".to_string(), |v| q(v, unit));
    match (value, limit) {
        (Some(v), Some((l, source))) if l > 0.0 && v.is_finite() => NumberRow {
            name: name.to_string(),
            value: format!("{shown} of {}", q(l, unit)),
            source: format!("{state}; limit {source}"),
            bar: Some(((v / l).clamp(0.0, 1.0) * 100.0).round() as u32),
            over: v > l,
        },
        _ => NumberRow {
            name: name.to_string(),
            value: shown,
            source: state.to_string(),
            bar: None,
            over: false,
        },
    }
}

fn switch_figure(r: &Review<'_>, s: &SwitchFacts, draw: bool) -> Figure {
    let element = name(r.netlist, r.circuit, s.device);
    let wave = r.waveforms.switches.iter().find(|w| w.device == s.device);
    let names = |d: DeviceId| name(r.netlist, r.circuit, d);
    let (svg, legend) = match (wave, draw) {
        (Some(w), true) => charts::switch(w, &element, &names),
        _ => (String::new(), Vec::new()),
    };
    let data = r.circuit.devices().get(s.device).map(|d| &d.data);
    let rating = |key: &str| {
        data.and_then(|d| d.get(key))
            .map(|x| (x.value, format!("{key} {}", x.source)))
    };
    let mos = s.kind.is_mos();
    let (v_key, i_key) = if mos {
        ("vds_max", "id_max")
    } else {
        ("vce_max", "ic_max")
    };
    let state = |r: &Option<Range>| r.as_ref().map_or(String::new(), |r| r.max_state.clone());
    let mut numbers = vec![
        row(if mos { "V_GS on" } else { "V_BE on" }, &s.vgs_on_v, "V"),
        row(if mos { "V_GS off" } else { "V_BE off" }, &s.vgs_off_v, "V"),
        row(if mos { "V_DS on" } else { "V_CE on" }, &s.vds_on_v, "V"),
        against(
            "current",
            s.current_a.as_ref().map(|c| c.max),
            "A",
            rating(i_key),
            &state(&s.current_a),
        ),
        against(
            "dissipation",
            s.dissipation_w.as_ref().map(|c| c.max),
            "W",
            rating("pd_max"),
            &state(&s.dissipation_w),
        ),
    ];
    if let Some((v, src)) = rating(v_key) {
        numbers.push(NumberRow {
            name: "voltage rating".to_string(),
            value: q(v, "V"),
            source: src,
            bar: None,
            over: false,
        });
    }
    numbers.push(row("duty", &s.duty, "%"));
    numbers.push(row("frequency", &s.frequency_hz, "Hz"));
    let note = match wave {
        None => {
            "No waveform: the drive's duty or frequency, or its on-state gate voltage, is unknown."
                .to_string()
        }
        Some(w) if w.current.is_empty() => {
            "The load current over the period needs the winding's inductance and resistance."
                .to_string()
        }
        Some(_) => String::new(),
    };
    let what = if mos { "gate" } else { "base" };
    Figure {
        anchor: anchor("switch", s.device),
        heading: format!("Switch {element} ({})", switch_taken_for(r, s)),
        alt: format!("One PWM period of {element}: {what} voltage against the threshold band, and the load current with the freewheel interval and the peak at turn-off"),
        svg,
        legend,
        numbers,
        note,
    }
}

fn finding_view(r: &Review<'_>, f: &Finding, i: usize, draw: bool) -> FindingView {
    let location = locate(r.report, f.span);
    let mut lines = Vec::new();
    let mut spans = vec![f.span];
    spans.extend(f.involved_lines().into_iter().map(|(s, _)| s));
    let mut seen = std::collections::BTreeSet::new();
    for span in spans {
        let at = locate(r.report, span);
        if !seen.insert((at.file.clone(), at.line)) {
            continue;
        }
        let text = r
            .report
            .sources
            .get(span.file)
            .and_then(|file| {
                let (a, b) = file.line_span(at.line)?;
                file.text.get(a..b).map(str::to_string)
            })
            .unwrap_or_default();
        lines.push((format!("{}:{}", at.file, at.line), text));
    }
    let element = f
        .instance_path
        .clone()
        .or_else(|| f.element.clone())
        .unwrap_or_default();
    let device = (!element.is_empty())
        .then(|| {
            r.circuit.devices().iter().position(|d| {
                r.netlist
                    .elements
                    .get(d.element)
                    .is_some_and(|e| e.path == element)
            })
        })
        .flatten();
    let svg = match (device, draw) {
        (Some(d), true) => neighbourhood::draw(r.circuit, r.netlist, d),
        _ => String::new(),
    };
    FindingView {
        anchor: anchor("finding", i),
        severity: severity_word(f.severity),
        rule: f.rule.clone(),
        message: f.message.clone(),
        location: format!("{}:{}:{}", location.file, location.line, location.column),
        element,
        svg,
        lines,
        numbers: f
            .values
            .iter()
            .map(|v| NumberRow {
                name: v.name.clone(),
                value: format_quantity(v.value, &v.unit, false),
                source: v.source.clone(),
                bar: None,
                over: false,
            })
            .collect(),
        help: f.help.clone().unwrap_or_default(),
    }
}
