//! `kickback parts`: every part kind a configuration can name, the keys that describe it with
//! their units, and the default each key takes when nothing stronger gives it, with where that
//! default comes from. Read from the one defaults table the circuit applies
//! ([`crate::circuit::defaults::DEFAULTS`]) and the rating vocabulary, so the reference cannot
//! drift from what a check assumes.

use crate::circuit::defaults::{self, DefaultValue, KindDefault};
use crate::units::format_si;
use crate::vocabulary::layouts::layout_of_kind;
use crate::vocabulary::{ratings, Kind};

/// The sources of part data, strongest first.
pub const SOURCES: [&str; 6] = [
    "[elements.\"PATH\"] in kickback.toml (one instance)",
    "[parts.NAME] in kickback.toml (a model or subcircuit name, or a glob)",
    "instance or subcircuit parameters with the key's name",
    "SPICE model parameters (BV, VTO...)",
    "the built-in library of registered part numbers",
    "the kind's default, listed here",
];

/// One key of a kind as the reference lists it.
struct KeyEntry {
    key: &'static str,
    /// `Some("")` for a plain ratio; `None` for a yes/no flag.
    unit: Option<&'static str>,
    /// False for a SPICE model parameter a default fills (not a `kickback.toml` key).
    config: bool,
    defaults: Vec<&'static KindDefault>,
}

fn entries(kind: Kind) -> Vec<KeyEntry> {
    let mut entries: Vec<KeyEntry> = ratings::keys_of_kind(kind)
        .iter()
        .map(|key| KeyEntry {
            key,
            unit: ratings::rating_unit(key),
            config: true,
            defaults: Vec::new(),
        })
        .collect();
    for default in defaults::defaults_of(kind) {
        match entries.iter_mut().find(|e| e.key == default.key) {
            Some(entry) => entry.defaults.push(default),
            None => entries.push(KeyEntry {
                key: default.key,
                unit: ratings::rating_unit(default.key)
                    .or_else(|| ratings::model_parameter_unit(default.key)),
                config: ratings::is_rating_name(default.key),
                defaults: vec![default],
            }),
        }
    }
    entries
}

fn pins(kind: Kind) -> Vec<&'static str> {
    layout_of_kind(kind)
        .map(|layout| layout.order.iter().map(|r| r.role.as_str()).collect())
        .unwrap_or_default()
}

/// A default's value in words, with its unit.
fn value_text(value: &DefaultValue, unit: &str) -> String {
    match value {
        DefaultValue::Fixed(v) => format_si(*v, unit),
        DefaultValue::BelowKnownMax(v) => {
            format!(
                "{} (half of vgs_th_max when that is lower)",
                format_si(*v, unit)
            )
        }
        DefaultValue::AboveKnownMin(v) => {
            format!(
                "{} (vgs_th_min + 2 V when that is higher)",
                format_si(*v, unit)
            )
        }
        DefaultValue::Derived { formula, .. } => (*formula).to_string(),
    }
}

fn unit_text(unit: Option<&str>) -> &str {
    match unit {
        None => "yes/no",
        Some("") => "ratio",
        Some(unit) => unit,
    }
}

/// The reference as text for a person: one section per kind, a table of its keys.
pub fn text() -> String {
    let mut out = String::new();
    out.push_str(
        "Part kinds and their keys, for `kind = \"...\"` and the ratings of [parts.NAME] and\n\
         [elements.\"PATH\"] in kickback.toml. Values are in SI base units; a string may carry\n\
         SPICE scale letters and the unit (\"45 mH\", \"10k\"; M is milli, MEG mega).\n\
         A value comes from the strongest source that gives it:\n",
    );
    for (i, source) in SOURCES.iter().enumerate() {
        out.push_str(&format!("  {}. {source}\n", i + 1));
    }
    for kind in Kind::CONFIGURABLE {
        out.push('\n');
        let pins = pins(kind);
        out.push_str(&format!(
            "{kind}   pins in package order: {}\n",
            pins.join(" ")
        ));
        let header = ["KEY", "UNIT", "DEFAULT", "APPLIES", "SOURCE OF THE DEFAULT"];
        let mut rows: Vec<[String; 5]> = Vec::new();
        for entry in entries(kind) {
            let key = if entry.config {
                entry.key.to_string()
            } else {
                format!("{} (.model)", entry.key)
            };
            let unit = unit_text(entry.unit).to_string();
            if entry.defaults.is_empty() {
                rows.push([key, unit, "none".into(), String::new(), String::new()]);
                continue;
            }
            for (i, default) in entry.defaults.iter().enumerate() {
                let first = i == 0;
                rows.push([
                    if first { key.clone() } else { String::new() },
                    if first { unit.clone() } else { String::new() },
                    value_text(&default.value, entry.unit.unwrap_or("")),
                    default.applies.as_str().to_string(),
                    default.provenance(kind),
                ]);
            }
        }
        let [w0, w1, w2, w3, _] = crate::report::column_widths(header, &rows);
        let mut line = |cells: [&str; 5]| {
            let text = format!(
                "  {:<w0$}  {:<w1$}  {:<w2$}  {:<w3$}  {}",
                cells[0], cells[1], cells[2], cells[3], cells[4]
            );
            out.push_str(text.trim_end());
            out.push('\n');
        };
        line(header);
        for r in &rows {
            line([&r[0], &r[1], &r[2], &r[3], &r[4]]);
        }
    }
    out.push_str(
        "\nlogic-level: a MOSFET with logic_level = true, or whose vgs_th_max is 2.5 V or lower.\n\
         `kickback report FILE` shows the value each part got and where it came from.\n",
    );
    out
}

/// The reference as JSON for a program (described in docs/json.md).
pub fn json() -> String {
    let kinds: Vec<serde_json::Value> = Kind::CONFIGURABLE
        .iter()
        .map(|kind| {
            let keys: Vec<serde_json::Value> = entries(*kind)
                .iter()
                .map(|entry| {
                    let defaults: Vec<serde_json::Value> = entry
                        .defaults
                        .iter()
                        .map(|d| {
                            let (value, formula) = match d.value {
                                DefaultValue::Fixed(v)
                                | DefaultValue::BelowKnownMax(v)
                                | DefaultValue::AboveKnownMin(v) => (Some(v), None),
                                DefaultValue::Derived { formula, .. } => (None, Some(formula)),
                            };
                            let adjusted = match d.value {
                                DefaultValue::BelowKnownMax(_) => {
                                    Some("half of vgs_th_max when that is lower")
                                }
                                DefaultValue::AboveKnownMin(_) => {
                                    Some("vgs_th_min + 2 V when that is higher")
                                }
                                _ => None,
                            };
                            serde_json::json!({
                                "value": value,
                                "formula": formula,
                                "adjusted": adjusted,
                                "applies": d.applies.as_str(),
                                "source": d.provenance(*kind),
                            })
                        })
                        .collect();
                    serde_json::json!({
                        "key": entry.key,
                        "type": if entry.unit.is_some() { "number" } else { "flag" },
                        "unit": entry.unit,
                        "config": entry.config,
                        "defaults": defaults,
                    })
                })
                .collect();
            serde_json::json!({
                "kind": kind.as_str(),
                "pins": pins(*kind),
                "keys": keys,
            })
        })
        .collect();
    let document = serde_json::json!({
        "version": 1,
        "sources": SOURCES,
        "kinds": kinds,
    });
    let mut text = serde_json::to_string_pretty(&document).unwrap_or_default();
    text.push('\n');
    text
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_default_names_a_key_with_a_unit() {
        for default in defaults::DEFAULTS {
            let unit = ratings::rating_unit(default.key)
                .or_else(|| ratings::model_parameter_unit(default.key));
            assert!(unit.is_some(), "{}", default.key);
        }
    }
}
