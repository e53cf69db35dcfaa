//! Prints a flattened netlist back as a flat SPICE deck (for tests and for looking at what the
//! front end understood). Values that are not constant print as `{time}`, which reads back as
//! "not constant" again.

use super::flat::{FlatElement, FlatNetlist, Num, Waveform};
use std::collections::HashSet;
use std::fmt::Write;

fn number(v: f64) -> String {
    format!("{v:e}")
}

fn num(v: Num) -> String {
    match v {
        Num::Known(x) => number(x),
        Num::Varies => "{time}".into(),
    }
}

fn element_name(e: &FlatElement) -> String {
    let first = e.path.chars().next().map(|c| c.to_ascii_uppercase());
    if e.instances.is_empty() && first == Some(e.letter) {
        e.path.clone()
    } else {
        format!("{}:{}", e.letter, e.path)
    }
}

/// The flat deck as SPICE text.
pub fn write_flat(flat: &FlatNetlist) -> String {
    let mut out = String::new();
    let title: String = flat
        .title
        .chars()
        .filter(|c| *c != '\n' && *c != '\r')
        .collect();
    let _ = writeln!(
        out,
        "{}",
        if title.trim().is_empty() {
            "flattened netlist"
        } else {
            &title
        }
    );
    if !flat.globals.is_empty() {
        let _ = writeln!(out, ".global {}", flat.globals.join(" "));
    }
    let mut seen = HashSet::new();
    for m in &flat.models {
        if !seen.insert(m.name.to_ascii_lowercase()) {
            continue;
        }
        let _ = write!(out, ".model {} {}", m.name, m.kind);
        let known: Vec<String> = m
            .params
            .iter()
            .filter_map(|(k, v)| v.known().map(|x| format!("{k}={}", number(x))))
            .collect();
        if !known.is_empty() {
            let _ = write!(out, " ({})", known.join(" "));
        }
        out.push('\n');
    }
    for e in &flat.elements {
        let vertical = e.letter == 'M'
            && e.model_index
                .and_then(|i| flat.models.get(i))
                .is_some_and(|m| m.kind.eq_ignore_ascii_case("VDMOS"));
        if vertical && e.nodes.len() > 4 {
            // The parser reads a vertical part's body as its source; written back, the line
            // carries only the drain, gate, source and thermal nodes, as it was written.
            let mut written = e.clone();
            written.nodes.remove(3);
            element(&mut out, &written);
        } else {
            element(&mut out, e);
        }
        out.push('\n');
    }
    out.push_str(".end\n");
    out
}

fn element(out: &mut String, e: &FlatElement) {
    let _ = write!(out, "{}", element_name(e));
    let value = e.value.map(num);
    let model = e.model.as_deref();
    let push = |out: &mut String, s: &str| {
        out.push(' ');
        out.push_str(s);
    };
    let nodes = |out: &mut String, list: &[String]| {
        for n in list {
            push(out, n);
        }
    };
    match e.letter {
        'E' | 'G' if e.nodes.len() > 4 || (e.nodes.len() == 4 && value.is_none()) => {
            nodes(out, &e.nodes[..2]);
            let _ = write!(out, " poly({})", (e.nodes.len() - 2) / 2);
            nodes(out, &e.nodes[2..]);
            push(out, "0 1");
        }
        'E' | 'G' if e.nodes.len() == 2 => {
            nodes(out, &e.nodes);
            let _ = write!(out, " value={}", value.as_deref().unwrap_or("{time}"));
        }
        'F' | 'H' if e.refs.len() != 1 => {
            nodes(out, &e.nodes);
            if e.refs.is_empty() {
                let _ = write!(out, " value={}", value.as_deref().unwrap_or("{time}"));
            } else {
                let _ = write!(out, " poly({})", e.refs.len());
                nodes(out, &e.refs);
                push(out, "0 1");
            }
        }
        'F' | 'H' => {
            nodes(out, &e.nodes);
            nodes(out, &e.refs);
            push(out, value.as_deref().unwrap_or("1"));
        }
        'B' => {
            nodes(out, &e.nodes);
            let _ = write!(out, " V={}", value.as_deref().unwrap_or("{time}"));
        }
        'K' => {
            nodes(out, &e.refs);
            push(out, value.as_deref().unwrap_or("1"));
        }
        'W' => {
            nodes(out, &e.nodes);
            nodes(out, &e.refs);
            push(out, model.unwrap_or("sw"));
        }
        'V' | 'I' => {
            nodes(out, &e.nodes);
            if let Some(spec) = &e.source {
                if let Some(dc) = spec.dc {
                    let _ = write!(out, " DC {}", number(dc));
                }
                wave(out, &spec.wave);
            } else if let Some(v) = &value {
                push(out, v);
            }
        }
        'R' | 'C' | 'L' | 'E' | 'G' => {
            nodes(out, &e.nodes);
            if let Some(v) = &value {
                push(out, v);
            }
            if let Some(m) = model {
                push(out, m);
            }
        }
        'A' => {
            nodes(out, &e.nodes);
            for r in &e.refs {
                let _ = write!(out, " %vnam {r}");
            }
            if let Some(m) = model {
                push(out, m);
            }
        }
        _ => {
            nodes(out, &e.nodes);
            if let Some(m) = model {
                push(out, m);
            }
        }
    }
    for (k, v) in &e.params {
        let _ = write!(out, " {k}={}", num(*v));
    }
}

fn wave(out: &mut String, wave: &Waveform) {
    let list = |v: &[f64]| v.iter().map(|x| number(*x)).collect::<Vec<_>>().join(" ");
    match wave {
        Waveform::Pulse {
            v1,
            v2,
            delay,
            rise,
            fall,
            width,
            period,
        } => {
            let _ = write!(
                out,
                " PULSE({})",
                list(&[*v1, *v2, *delay, *rise, *fall, *width, *period])
            );
        }
        Waveform::Sin {
            offset,
            amplitude,
            frequency,
        } => {
            let _ = write!(out, " SIN({})", list(&[*offset, *amplitude, *frequency]));
        }
        Waveform::Pwl(points) => {
            let flat: Vec<f64> = points.iter().flat_map(|p| [p.0, p.1]).collect();
            let _ = write!(out, " PWL({})", list(&flat));
        }
        Waveform::Dc | Waveform::Other(_) => {}
    }
}
