//! The plots, drawn with plotters' SVG backend from the sampled waveforms: the text stays
//! text, every curve has its own dash pattern and a label beside its colour.

use super::model::q;
use crate::analysis::{SwitchWaveform, TimerMode, TimerWaveform};
use crate::circuit::DeviceId;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

const WIDTH: u32 = 760;
const FONT: &str = "sans-serif";

/// One line of a legend: colour and dash pattern (SVG `stroke-dasharray`) of a curve, and
/// what it shows.
pub struct LegendEntry {
    pub colour: String,
    pub dash: String,
    pub text: String,
}

/// Colours that stay apart for the common colour-vision deficiencies, each with a dash pattern
/// of its own so that print in grey and readers who cannot tell them apart lose nothing.
const STYLES: [(RGBColor, Option<(u32, u32)>); 6] = [
    (RGBColor(0x00, 0x5a, 0x9c), None),
    (RGBColor(0xc4, 0x4e, 0x00), Some((8, 4))),
    (RGBColor(0x00, 0x80, 0x5e), Some((2, 3))),
    (RGBColor(0x9c, 0x4f, 0x86), Some((12, 3))),
    (RGBColor(0x9a, 0x6a, 0x00), Some((5, 2))),
    (RGBColor(0x33, 0x33, 0x33), Some((1, 5))),
];
const GREY: RGBColor = RGBColor(0x66, 0x66, 0x66);
const BAND: RGBColor = RGBColor(0xe3, 0xd5, 0x8c);
const SHADE: RGBColor = RGBColor(0xcf, 0xe4, 0xf2);

fn hex(c: RGBColor) -> String {
    format!("#{:02x}{:02x}{:02x}", c.0, c.1, c.2)
}

fn dash(d: Option<(u32, u32)>) -> String {
    d.map_or("none".to_string(), |(a, b)| format!("{a} {b}"))
}

/// The time unit that suits a span: (divisor, name).
fn time_unit(span: f64) -> (f64, &'static str) {
    if span >= 1.0 {
        (1.0, "s")
    } else if span >= 1e-3 {
        (1e-3, "ms")
    } else if span >= 1e-6 {
        (1e-6, "µs")
    } else {
        (1e-9, "ns")
    }
}

/// A tick label: as few decimals as the number needs.
fn tick(v: &f64) -> String {
    let text = format!("{v:.3}");
    let text = text.trim_end_matches('0').trim_end_matches('.');
    if text == "-0" {
        "0".to_string()
    } else {
        text.to_string()
    }
}

fn font(size: u32) -> TextStyle<'static> {
    (FONT, size).into_font().color(&BLACK)
}

fn finite(points: &[(f64, f64)]) -> bool {
    points.iter().all(|(t, v)| t.is_finite() && v.is_finite())
}

/// Draws a curve, solid or dashed, on a chart.
fn curve<DB: DrawingBackend>(
    chart: &mut ChartContext<
        '_,
        DB,
        Cartesian2d<plotters::coord::types::RangedCoordf64, plotters::coord::types::RangedCoordf64>,
    >,
    points: Vec<(f64, f64)>,
    colour: RGBColor,
    pattern: Option<(u32, u32)>,
    width: u32,
) {
    let style = colour.stroke_width(width);
    let _ = match pattern {
        None => chart
            .draw_series(LineSeries::new(points, style))
            .map(|_| ()),
        Some((a, b)) => chart
            .draw_series(DashedLineSeries::new(points, a, b, style))
            .map(|_| ()),
    };
}

/// Wraps plotters' document: a class for the page's style, a role and a label for readers.
fn finish(svg: String, class: &str, label: &str) -> String {
    let attributes = format!(
        "<svg class=\"{class}\" role=\"img\" aria-label=\"{}\" preserveAspectRatio=\"xMinYMin meet\" ",
        super::escape(label)
    );
    svg.replacen("<svg ", &attributes, 1)
}

/// Step points of a 0/1 lane from the intervals it is high.
fn lane(intervals: &[(f64, f64)], span: f64, base: f64, scale: f64) -> Vec<(f64, f64)> {
    let (lo, hi) = (base, base + 1.0);
    let mut out = vec![(0.0, lo)];
    for &(a, b) in intervals {
        let (a, b) = (a.max(0.0) / scale, b.min(span) / scale);
        if b < a {
            continue;
        }
        out.push((a, lo));
        out.push((a, hi));
        out.push((b, hi));
        out.push((b, lo));
    }
    out.push((span / scale, lo));
    out
}

/// A digital lane: its name, the intervals it is high, its dash pattern.
type Lane<'a> = (&'a str, &'a [(f64, f64)], Option<(u32, u32)>);

/// A timer's timing diagram: the capacitor voltage of every case between the thresholds,
/// the computed times marked, and below it the output, discharge and trigger lanes.
pub fn timer(w: &TimerWaveform, element: &str) -> (String, Vec<LegendEntry>) {
    let mut legend = Vec::new();
    if !(w.span_s.is_finite() && w.span_s > 0.0) || w.capacitor.iter().any(|c| !finite(&c.points)) {
        return (String::new(), legend);
    }
    let (scale, unit) = time_unit(w.span_s);
    let span = w.span_s / scale;
    let top = w
        .capacitor
        .iter()
        .flat_map(|c| c.points.iter().map(|p| p.1))
        .fold(w.upper_v, f64::max)
        .max(1e-3);
    let v_max = top * 1.3;
    let lanes: Vec<Lane<'_>> = {
        let mut l: Vec<Lane<'_>> = vec![
            ("output", &w.output_high, None),
            ("discharge", &w.discharge_on, Some((6, 3))),
        ];
        if w.mode == TimerMode::Monostable && !w.trigger_low.is_empty() {
            l.push(("trigger low", &w.trigger_low, Some((2, 3))));
        }
        l
    };
    let lane_height = 34u32;
    let upper_height = 300u32;
    let height = upper_height + 40 + lane_height * lanes.len() as u32;
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, (WIDTH, height)).into_drawing_area();
        let _ = root.fill(&WHITE);
        let (upper, lower) = root.split_vertically(upper_height);
        let Ok(mut chart) = ChartBuilder::on(&upper)
            .margin_top(22)
            .margin_right(110)
            .margin_left(8)
            .x_label_area_size(30)
            .y_label_area_size(56)
            .build_cartesian_2d(0.0..span, 0.0..v_max)
        else {
            return (String::new(), legend);
        };
        let _ = chart
            .configure_mesh()
            .light_line_style(RGBColor(0xee, 0xee, 0xee))
            .x_desc(format!("time ({unit})"))
            .y_desc("capacitor (V)")
            .label_style(font(12))
            .axis_desc_style(font(13))
            .x_label_formatter(&tick)
            .y_label_formatter(&tick)
            .draw();
        // Thresholds: dashed grey lines, named at their right end.
        for (label, v) in [
            ("upper threshold", w.upper_v),
            ("lower threshold", w.lower_v),
        ] {
            if w.mode == TimerMode::Monostable && label == "lower threshold" {
                // A one-shot's lower threshold is its trigger's, not the capacitor's.
                continue;
            }
            curve(&mut chart, vec![(0.0, v), (span, v)], GREY, Some((4, 4)), 1);
            let (x, y) = chart.backend_coord(&(span, v));
            let _ = root.draw(&Text::new(
                format!("{label} {}", q(v, "V")),
                (x + 6, y),
                font(12).pos(Pos::new(HPos::Left, VPos::Center)),
            ));
        }
        for (i, case) in w.capacitor.iter().enumerate() {
            let (colour, pattern) = STYLES[i % STYLES.len()];
            let points = case.points.iter().map(|&(t, v)| (t / scale, v)).collect();
            curve(
                &mut chart,
                points,
                colour,
                pattern,
                if i == 0 { 2 } else { 1 },
            );
            legend.push(LegendEntry {
                colour: hex(colour),
                dash: dash(pattern),
                text: if i == 0 {
                    format!("{} (reference)", case.state)
                } else {
                    case.state.clone()
                },
            });
        }
        for state in &w.no_pulse {
            legend.push(LegendEntry {
                colour: "#ffffff".to_string(),
                dash: "none".to_string(),
                text: format!("{state}: no pulse, the capacitor already sits at the threshold"),
            });
        }
        // Computed times: a bracket with its length above the curves.
        for (i, mark) in w.marks.iter().enumerate() {
            let y = v_max * (0.97 - 0.07 * i as f64);
            let (a, b) = (mark.start_s / scale, mark.end_s.min(w.span_s) / scale);
            curve(&mut chart, vec![(a, y), (b, y)], BLACK, None, 1);
            for x in [a, b] {
                curve(
                    &mut chart,
                    vec![(x, y - v_max * 0.015), (x, y + v_max * 0.015)],
                    BLACK,
                    None,
                    1,
                );
            }
            let (px, py) = chart.backend_coord(&(b, y));
            let _ = root.draw(&Text::new(
                format!("{} {}", mark.what, q(mark.end_s - mark.start_s, "s")),
                (px + 6, py),
                font(12).pos(Pos::new(HPos::Left, VPos::Center)),
            ));
        }
        let rows = lanes.len() as f64;
        let Ok(mut digital) = ChartBuilder::on(&lower)
            .margin_top(10)
            .margin_right(110)
            .margin_left(8)
            .x_label_area_size(24)
            .y_label_area_size(56)
            .build_cartesian_2d(0.0..span, -0.3..(rows * 1.6))
        else {
            return (String::new(), legend);
        };
        let _ = digital
            .configure_mesh()
            .disable_y_mesh()
            .disable_y_axis()
            .light_line_style(RGBColor(0xee, 0xee, 0xee))
            .label_style(font(12))
            .x_label_formatter(&tick)
            .draw();
        for (i, (label, intervals, pattern)) in lanes.iter().enumerate() {
            let base = (rows - 1.0 - i as f64) * 1.6;
            curve(
                &mut digital,
                lane(intervals, w.span_s, base, scale),
                BLACK,
                *pattern,
                2,
            );
            let (px, py) = digital.backend_coord(&(span, base + 0.5));
            let _ = root.draw(&Text::new(
                label.to_string(),
                (px + 6, py),
                font(12).pos(Pos::new(HPos::Left, VPos::Center)),
            ));
            if *label == "trigger low" {
                for &t in &w.ignored_triggers {
                    let (px, py) = digital.backend_coord(&(t / scale, base + 1.25));
                    let _ = root.draw(&Text::new(
                        "ignored: pulse still running",
                        (px + 3, py),
                        font(11).pos(Pos::new(HPos::Left, VPos::Center)),
                    ));
                }
            }
        }
        let _ = root.present();
    }
    let label = format!("Timing diagram of {element}");
    (finish(svg, "plot timer-plot", &label), legend)
}

/// One PWM period of a switch: its drive against the threshold band above, the load
/// current below with the freewheel interval shaded and the peak at turn-off marked.
pub fn switch(
    w: &SwitchWaveform,
    element: &str,
    names: &dyn Fn(DeviceId) -> String,
) -> (String, Vec<LegendEntry>) {
    let mut legend = Vec::new();
    if !(w.period_s.is_finite() && w.period_s > 0.0 && finite(&w.gate.points)) {
        return (String::new(), legend);
    }
    let (scale, unit) = time_unit(w.period_s);
    let span = w.period_s / scale;
    let t_off = w.duty * w.period_s / scale;
    let gate_top = w
        .gate
        .points
        .iter()
        .map(|p| p.1)
        .fold(w.threshold_v.map_or(0.0, |t| t.1), f64::max)
        .max(1.0)
        * 1.25;
    let gate_bottom = w.gate.points.iter().map(|p| p.1).fold(0.0, f64::min);
    let current: Vec<&crate::analysis::Trace> =
        w.current.iter().filter(|c| finite(&c.points)).collect();
    let panel = 230u32;
    let height = if current.is_empty() { panel } else { 2 * panel };
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, (WIDTH, height)).into_drawing_area();
        let _ = root.fill(&WHITE);
        let (upper, lower) = if !current.is_empty() {
            root.split_vertically(panel)
        } else {
            root.split_vertically(height)
        };
        let Ok(mut gate) = ChartBuilder::on(&upper)
            .margin_top(14)
            .margin_right(150)
            .margin_left(8)
            .x_label_area_size(30)
            .y_label_area_size(56)
            .build_cartesian_2d(0.0..span, gate_bottom..gate_top)
        else {
            return (String::new(), legend);
        };
        let what = if w.threshold_v.is_some() {
            "V_GS"
        } else {
            "V_BE"
        };
        let _ = gate
            .configure_mesh()
            .light_line_style(RGBColor(0xee, 0xee, 0xee))
            .x_desc(format!("time ({unit})"))
            .y_desc(format!("{what} toward on (V)"))
            .label_style(font(12))
            .axis_desc_style(font(13))
            .x_label_formatter(&tick)
            .y_label_formatter(&tick)
            .draw();
        if let Some((lo, hi)) = w.threshold_v {
            let hi = if hi - lo < gate_top * 0.01 {
                lo + gate_top * 0.01
            } else {
                hi
            };
            let _ = gate.draw_series(std::iter::once(Rectangle::new(
                [(0.0, lo), (span, hi)],
                BAND.mix(0.6).filled(),
            )));
            let (px, py) = gate.backend_coord(&(span, 0.5 * (lo + hi)));
            let _ = root.draw(&Text::new(
                format!(
                    "threshold {} … {}",
                    q(lo, "V"),
                    q(w.threshold_v.map_or(hi, |t| t.1), "V")
                ),
                (px + 6, py),
                font(12).pos(Pos::new(HPos::Left, VPos::Center)),
            ));
            legend.push(LegendEntry {
                colour: hex(BAND),
                dash: "band".to_string(),
                text: format!("threshold band: {}", w.threshold_source),
            });
        }
        let points: Vec<(f64, f64)> = w.gate.points.iter().map(|&(t, v)| (t / scale, v)).collect();
        curve(&mut gate, points, STYLES[0].0, None, 2);
        legend.push(LegendEntry {
            colour: hex(STYLES[0].0),
            dash: "none".to_string(),
            text: format!(
                "{what} toward conduction at {}{}",
                if w.gate.state.is_empty() {
                    "the worst corner"
                } else {
                    &w.gate.state
                },
                if w.edges_known {
                    ""
                } else {
                    " (edges not known: drawn square)"
                }
            ),
        });
        curve(
            &mut gate,
            vec![(t_off, gate_bottom), (t_off, gate_top)],
            GREY,
            Some((3, 3)),
            1,
        );
        let (px, py) = gate.backend_coord(&(t_off, gate_top));
        let _ = root.draw(&Text::new(
            format!("turn-off, duty {}", q(w.duty, "%")),
            (px + 4, py + 10),
            font(12).pos(Pos::new(HPos::Left, VPos::Center)),
        ));
        if !current.is_empty() {
            let i_top = current
                .iter()
                .flat_map(|c| c.points.iter().map(|p| p.1))
                .fold(0.0, f64::max)
                .max(1e-6)
                * 1.3;
            let Ok(mut amps) = ChartBuilder::on(&lower)
                .margin_top(14)
                .margin_right(150)
                .margin_left(8)
                .x_label_area_size(30)
                .y_label_area_size(56)
                .build_cartesian_2d(0.0..span, 0.0..i_top)
            else {
                return (String::new(), legend);
            };
            let _ = amps
                .configure_mesh()
                .light_line_style(RGBColor(0xee, 0xee, 0xee))
                .x_desc(format!("time ({unit})"))
                .y_desc("load current (A)")
                .label_style(font(12))
                .axis_desc_style(font(13))
                .x_label_formatter(&tick)
                .y_label_formatter(&tick)
                .draw();
            if let Some((a, b)) = w.freewheel {
                let (a, b) = (a / scale, (b / scale).min(span));
                let _ = amps.draw_series(std::iter::once(Rectangle::new(
                    [(a, 0.0), (b, i_top)],
                    SHADE.mix(0.7).filled(),
                )));
                let via = w.freewheel_device.map(names).unwrap_or_default();
                let (px, py) = amps.backend_coord(&(a, i_top));
                let _ = root.draw(&Text::new(
                    format!("freewheel through {via}"),
                    (px + 4, py + 10),
                    font(12).pos(Pos::new(HPos::Left, VPos::Center)),
                ));
                legend.push(LegendEntry {
                    colour: hex(SHADE),
                    dash: "band".to_string(),
                    text: format!("freewheel interval: {via} carries the current"),
                });
            }
            for (k, trace) in current.iter().enumerate() {
                let (colour, pattern) = STYLES[(1 + k) % STYLES.len()];
                let points: Vec<(f64, f64)> =
                    trace.points.iter().map(|&(t, v)| (t / scale, v)).collect();
                curve(&mut amps, points, colour, pattern, 2);
                legend.push(LegendEntry {
                    colour: hex(colour),
                    dash: dash(pattern),
                    text: format!("load current at {}", trace.state),
                });
            }
            curve(
                &mut amps,
                vec![(t_off, 0.0), (t_off, i_top)],
                GREY,
                Some((3, 3)),
                1,
            );
            if let Some(peak) = w.peak_a {
                let _ = amps.draw_series(std::iter::once(Circle::new(
                    (t_off, peak),
                    4,
                    BLACK.filled(),
                )));
                let (px, py) = amps.backend_coord(&(t_off, peak));
                let _ = root.draw(&Text::new(
                    format!("peak {} at turn-off", q(peak, "A")),
                    (px + 8, py - 10),
                    font(12).pos(Pos::new(HPos::Left, VPos::Center)),
                ));
            }
        }
        let _ = root.present();
    }
    let label = format!("One PWM period of {element}");
    (finish(svg, "plot switch-plot", &label), legend)
}
