//! Independent-source descriptions to [`SourceSpec`]: the DC value and the waveform.

use super::element::{SourceForm, Val};
use super::flat::{Num, SourceSpec, Waveform};

/// `eval` turns each written value into a number (reporting failures itself).
pub fn source_spec<'a>(form: &SourceForm<'a>, mut eval: impl FnMut(&Val<'a>) -> Num) -> SourceSpec {
    let dc = form.dc.as_ref().map(&mut eval);
    let wave = match &form.wave {
        None => Waveform::Dc,
        Some(w) => {
            let values: Option<Vec<f64>> = w.args.iter().map(|v| eval(v).known()).collect();
            waveform(w.kind, values)
        }
    };
    let dc = match dc {
        Some(Num::Known(v)) => Some(v),
        Some(Num::Varies) => None,
        None => time_zero(&wave, form),
    };
    SourceSpec { dc, wave }
}

fn arg(values: &[f64], i: usize) -> f64 {
    values.get(i).copied().unwrap_or(0.0)
}

fn waveform(kind: &str, values: Option<Vec<f64>>) -> Waveform {
    let upper = kind.to_ascii_uppercase();
    let Some(v) = values else {
        return Waveform::Other(upper);
    };
    match upper.as_str() {
        "PULSE" if v.len() >= 2 => Waveform::Pulse {
            v1: arg(&v, 0),
            v2: arg(&v, 1),
            delay: arg(&v, 2),
            rise: arg(&v, 3),
            fall: arg(&v, 4),
            width: arg(&v, 5),
            period: arg(&v, 6),
        },
        "SIN" | "SINE" if v.len() >= 2 => Waveform::Sin {
            offset: arg(&v, 0),
            amplitude: arg(&v, 1),
            frequency: arg(&v, 2),
        },
        "PWL" if v.len() >= 2 => Waveform::Pwl(v.chunks_exact(2).map(|p| (p[0], p[1])).collect()),
        _ => Waveform::Other(upper),
    }
}

/// SPICE's value at time zero, for sources without a DC value.
fn time_zero(wave: &Waveform, form: &SourceForm<'_>) -> Option<f64> {
    match wave {
        Waveform::Dc if form.blank_dc => None,
        Waveform::Dc => Some(0.0),
        Waveform::Pulse { v1, .. } => Some(*v1),
        Waveform::Sin { offset, .. } => Some(*offset),
        Waveform::Pwl(points) => points.first().map(|p| p.1),
        Waveform::Other(kind) if kind == "EXP" => form
            .wave
            .as_ref()
            .and_then(|w| w.args.first())
            .and_then(|v| super::value::parse_number(&v.text))
            .and_then(Result::ok),
        Waveform::Other(_) => None,
    }
}
