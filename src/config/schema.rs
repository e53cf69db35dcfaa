//! The schema of `kickback.toml`: walks the spanned TOML tree into a [`Config`], refusing
//! unknown keys, wrong types and impossible values with the line, column and key.

use super::tree::{line_column, Node};
use super::value::{parse_value, written_unit};
use super::{Config, ConfigError, ConfigWarning, PartConfig, RuleLevel, SupplyConfig};
use crate::diagnostic::Severity;
use crate::vocabulary::{glob, ratings, roles, Kind};
use serde_spanned::Spanned;
use std::cell::RefCell;
use std::ops::Range;
use std::path::Path;

type Entries = Vec<(Spanned<String>, Node)>;

const TOP_KEYS: [&str; 6] = ["root", "analysis", "rules", "supply", "parts", "elements"];
const SUPPLY_KEYS: [&str; 3] = ["min", "nominal", "max"];

/// Pairs of ratings where the first may not exceed the second.
const ORDERED_RATINGS: [(&str, &str); 5] = [
    ("vgs_th_min", "vgs_th_max"),
    ("vgs_rated", "vgs_max"),
    ("supply_min", "supply_max"),
    ("supply_max", "supply_abs_max"),
    ("discharge_current_rated", "discharge_current_max"),
];

pub(super) fn read(text: &str, path: &Path) -> Result<Config, ConfigError> {
    let cx = Reader {
        text,
        path,
        warnings: RefCell::new(Vec::new()),
    };
    let root = toml::from_str::<Node>(text).map_err(|e| {
        let offset = e.span().map_or(0, |s| s.start);
        // The TOML reader hands dates to a tree of plain values as a private marker key.
        let message = if e.message().contains("toml_private_datetime") {
            "a date or time is not a valid value here; write a number or a string".to_string()
        } else {
            e.message().trim().to_string()
        };
        cx.error_at(offset, None, message)
    })?;
    let Node::Table(top) = root else {
        return Err(cx.error_at(0, None, "the file is not a TOML table".into()));
    };
    let mut config = Config::default();
    for (key, node) in &top {
        match key.get_ref().as_str() {
            "root" => match node {
                Node::Bool(flag) => config.root = *flag,
                other => {
                    return Err(cx.error(
                        key.span(),
                        "root",
                        format!("must be true or false, not {}", other.type_name()),
                    ))
                }
            },
            "analysis" => cx.analysis(key, node, &mut config)?,
            "rules" => cx.rules(key, node, &mut config)?,
            "supply" => {
                for (name, entry) in cx.table(key, node, key.get_ref())? {
                    let dotted = format!("supply.{}", name.get_ref());
                    let supply = cx.supply(name, entry, &dotted)?;
                    config.supplies.insert(name.get_ref().clone(), supply);
                }
            }
            "parts" => {
                for (name, entry) in cx.table(key, node, key.get_ref())? {
                    let dotted = format!("parts.{}", name.get_ref());
                    if let Err(reason) = glob::validate(name.get_ref()) {
                        return Err(cx.error(name.span(), &dotted, reason));
                    }
                    let part = cx.part(name, entry, &dotted)?;
                    config.parts.push((name.get_ref().clone(), part));
                }
            }
            "elements" => {
                for (name, entry) in cx.table(key, node, key.get_ref())? {
                    let dotted = format!("elements.\"{}\"", name.get_ref());
                    let part = cx.part(name, entry, &dotted)?;
                    config.elements.insert(name.get_ref().clone(), part);
                }
            }
            other => return Err(cx.unknown_key(key, other, "", &TOP_KEYS)),
        }
    }
    config.warnings = cx.warnings.into_inner();
    Ok(config)
}

struct Reader<'a> {
    text: &'a str,
    path: &'a Path,
    /// Values accepted but most likely meant otherwise.
    warnings: RefCell<Vec<ConfigWarning>>,
}

impl Reader<'_> {
    fn error_at(&self, offset: usize, key: Option<&str>, message: String) -> ConfigError {
        let (line, column) = line_column(self.text, offset);
        ConfigError {
            path: self.path.to_path_buf(),
            line,
            column,
            key: key.map(str::to_string),
            message,
        }
    }

    fn error(&self, span: Range<usize>, key: &str, message: impl Into<String>) -> ConfigError {
        let message = format!("`{key}`: {}", message.into());
        self.error_at(span.start, Some(key), message)
    }

    fn unknown_key(
        &self,
        key: &Spanned<String>,
        name: &str,
        prefix: &str,
        known: &[&str],
    ) -> ConfigError {
        let dotted = format!("{prefix}{name}");
        let best = known
            .iter()
            .map(|k| (strsim::jaro_winkler(k, &name.to_ascii_lowercase()), *k))
            .filter(|(score, _)| *score > 0.8)
            .max_by(|a, b| a.0.total_cmp(&b.0));
        let message = match best {
            Some((_, k)) => format!("unknown key; did you mean `{k}`?"),
            None if known.len() <= 8 => {
                format!("unknown key; expected one of {}", known.join(", "))
            }
            None => "unknown key".to_string(),
        };
        self.error(key.span(), &dotted, message)
    }

    fn table<'n>(
        &self,
        key: &Spanned<String>,
        node: &'n Node,
        dotted: &str,
    ) -> Result<&'n Entries, ConfigError> {
        match node {
            Node::Table(entries) => Ok(entries),
            other => Err(self.error(
                key.span(),
                dotted,
                format!("must be a table, not {}", other.type_name()),
            )),
        }
    }

    fn analysis(
        &self,
        key: &Spanned<String>,
        node: &Node,
        config: &mut Config,
    ) -> Result<(), ConfigError> {
        for (name, value) in self.table(key, node, "analysis")? {
            let dotted = format!("analysis.{}", name.get_ref());
            if name.get_ref() != "ground" {
                return Err(self.unknown_key(name, name.get_ref(), "analysis.", &["ground"]));
            }
            let Node::Array(items) = value else {
                return Err(self.error(
                    name.span(),
                    &dotted,
                    format!("must be an array of net names, not {}", value.type_name()),
                ));
            };
            let mut ground = Vec::new();
            for item in items {
                match item {
                    Node::Str(net) if !net.trim().is_empty() => ground.push(net.trim().to_string()),
                    Node::Str(_) => {
                        return Err(self.error(name.span(), &dotted, "a net name is empty"))
                    }
                    other => {
                        return Err(self.error(
                            name.span(),
                            &dotted,
                            format!("net names are strings, not {}", other.type_name()),
                        ))
                    }
                }
            }
            config.analysis.ground = ground;
            config.ground_given = true;
        }
        Ok(())
    }

    fn rules(
        &self,
        key: &Spanned<String>,
        node: &Node,
        config: &mut Config,
    ) -> Result<(), ConfigError> {
        for (name, value) in self.table(key, node, "rules")? {
            let dotted = format!("rules.{}", name.get_ref());
            let level = match value {
                Node::Str(text) if text.eq_ignore_ascii_case("off") => Some(RuleLevel::Off),
                Node::Str(text) => Severity::parse(text).map(RuleLevel::Set),
                _ => None,
            };
            let Some(level) = level else {
                let given = match value {
                    Node::Str(text) => format!("\"{text}\""),
                    other => other.type_name().to_string(),
                };
                return Err(self.error(
                    name.span(),
                    &dotted,
                    format!(
                        "{given} is not a rule level; use \"error\", \"warning\", \"note\" \
                         or \"off\""
                    ),
                ));
            };
            // Rule IDs are case-insensitive: keep them in one case so every lookup agrees.
            let id = name.get_ref().to_ascii_lowercase();
            config.rules.insert(id.clone(), level);
            let position = line_column(self.text, name.span().start);
            config.rule_spans.insert(id, position);
        }
        Ok(())
    }

    fn supply(
        &self,
        key: &Spanned<String>,
        node: &Node,
        dotted: &str,
    ) -> Result<SupplyConfig, ConfigError> {
        let mut supply = SupplyConfig::default();
        let mut spans = Vec::new();
        for (name, value) in self.table(key, node, dotted)? {
            let here = format!("{dotted}.{}", name.get_ref());
            let slot = match name.get_ref().as_str() {
                "min" => &mut supply.min,
                "nominal" => &mut supply.nominal,
                "max" => &mut supply.max,
                other => {
                    return Err(self.unknown_key(name, other, &format!("{dotted}."), &SUPPLY_KEYS))
                }
            };
            *slot = Some(self.number(name, value, &here)?);
            spans.push((name.get_ref().clone(), name.span()));
        }
        let span_of = |wanted: &str| {
            spans
                .iter()
                .find(|(k, _)| k == wanted)
                .map_or(key.span(), |(_, s)| s.clone())
        };
        if let (Some(min), Some(max)) = (supply.min, supply.max) {
            if min > max {
                return Err(self.error(
                    span_of("max"),
                    &format!("{dotted}.max"),
                    format!("max ({max}) is below min ({min})"),
                ));
            }
        }
        if let Some(nominal) = supply.nominal {
            let below = supply.min.is_some_and(|min| nominal < min);
            let above = supply.max.is_some_and(|max| nominal > max);
            if below || above {
                return Err(self.error(
                    span_of("nominal"),
                    &format!("{dotted}.nominal"),
                    format!("nominal ({nominal}) lies outside min..max"),
                ));
            }
        }
        Ok(supply)
    }

    fn part(
        &self,
        key: &Spanned<String>,
        node: &Node,
        dotted: &str,
    ) -> Result<PartConfig, ConfigError> {
        let mut part = PartConfig::default();
        let mut spans = Vec::new();
        for (name, value) in self.table(key, node, dotted)? {
            let written = name.get_ref();
            let lower = written.to_ascii_lowercase();
            let here = format!("{dotted}.{written}");
            match lower.as_str() {
                "kind" => part.kind = Some(self.kind(name, value, &here)?),
                "pins" => part.pins = Some(self.pins(name, value, &here)?),
                rating if ratings::FLAG_RATINGS.contains(&rating) => {
                    let Node::Bool(flag) = value else {
                        return Err(self.error(
                            name.span(),
                            &here,
                            format!("must be true or false, not {}", value.type_name()),
                        ));
                    };
                    part.ratings
                        .insert(lower.clone(), if *flag { 1.0 } else { 0.0 });
                }
                rating if ratings::RATING_NAMES.contains(&rating) => {
                    let number = self.number(name, value, &here)?;
                    if number < 0.0 {
                        return Err(self.error(
                            name.span(),
                            &here,
                            format!(
                                "{number} is negative; ratings are magnitudes (write {})",
                                -number
                            ),
                        ));
                    }
                    if let Node::Str(text) = value {
                        self.check_mega(name, text, &lower, number, &here);
                    }
                    part.ratings.insert(lower.clone(), number);
                }
                _ => {
                    let mut known = vec!["kind", "pins"];
                    known.extend(ratings::FLAG_RATINGS);
                    known.extend(ratings::RATING_NAMES);
                    return Err(self.unknown_key(name, written, &format!("{dotted}."), &known));
                }
            }
            spans.push((lower, name.span()));
        }
        for (low, high) in ORDERED_RATINGS {
            if let (Some(a), Some(b)) = (part.ratings.get(low), part.ratings.get(high)) {
                if a > b {
                    let span = spans
                        .iter()
                        .find(|(k, _)| k == high)
                        .map_or(key.span(), |(_, s)| s.clone());
                    return Err(self.error(
                        span,
                        &format!("{dotted}.{high}"),
                        format!("{high} ({b}) is below {low} ({a})"),
                    ));
                }
            }
        }
        Ok(part)
    }

    fn kind(&self, name: &Spanned<String>, value: &Node, here: &str) -> Result<Kind, ConfigError> {
        let kinds: Vec<&str> = Kind::CONFIGURABLE.iter().map(|k| k.as_str()).collect();
        match value {
            Node::Str(text) => Kind::parse(text).ok_or_else(|| {
                self.error(
                    name.span(),
                    here,
                    format!(
                        "unknown kind \"{text}\"; expected one of {}",
                        kinds.join(", ")
                    ),
                )
            }),
            other => Err(self.error(
                name.span(),
                here,
                format!("must be a string, not {}", other.type_name()),
            )),
        }
    }

    fn pins(
        &self,
        name: &Spanned<String>,
        value: &Node,
        here: &str,
    ) -> Result<Vec<String>, ConfigError> {
        let Node::Array(items) = value else {
            return Err(self.error(
                name.span(),
                here,
                format!("must be an array of pin roles, not {}", value.type_name()),
            ));
        };
        let mut roles = Vec::new();
        for item in items {
            let Node::Str(role) = item else {
                return Err(self.error(
                    name.span(),
                    here,
                    format!("pin roles are strings, not {}", item.type_name()),
                ));
            };
            if !roles::is_role_name(role) {
                return Err(self.error(
                    name.span(),
                    here,
                    format!(
                        "unknown pin role \"{role}\"; expected one of {}",
                        roles::PRIMARY_ROLE_NAMES.join(", ")
                    ),
                ));
            }
            roles.push(role.trim().to_string());
        }
        Ok(roles)
    }

    /// The line of `span` with the value after its key underlined, for a message about it.
    fn snippet(&self, span: &Range<usize>) -> String {
        let (line, _) = line_column(self.text, span.start);
        let text = self.text.lines().nth(line - 1).unwrap_or("");
        let start = text.find('=').map_or(0, |eq| {
            eq + 1 + text[eq + 1..].len() - text[eq + 1..].trim_start().len()
        });
        let value = text[start..].split('#').next().unwrap_or("").trim_end();
        let gutter = line.to_string();
        let pad = " ".repeat(gutter.len());
        let lead = " ".repeat(text[..start].chars().count());
        let marks = "^".repeat(value.chars().count().max(1));
        format!("\n {pad} |\n {gutter} | {text}\n {pad} | {lead}{marks}")
    }

    /// A unit written after a number must be the key's own: `"6 A"` is no voltage.
    fn check_unit(
        &self,
        name: &Spanned<String>,
        text: &str,
        here: &str,
    ) -> Result<(), ConfigError> {
        let key = here.rsplit('.').next().unwrap_or(here);
        let expected = match key {
            "min" | "nominal" | "max" if here.starts_with("supply.") => Some("V"),
            other => ratings::rating_unit(other),
        };
        let (Some(expected), Some(written)) = (expected, written_unit(text)) else {
            return Ok(());
        };
        if expected == written {
            return Ok(());
        }
        let wanted = if expected.is_empty() {
            "a plain number".to_string()
        } else {
            format!("in {expected}")
        };
        let message = format!(
            "\"{text}\" is in {written}, and `{key}` is {wanted}{}",
            self.snippet(&name.span())
        );
        Err(self.error(name.span(), here, message))
    }

    /// `"6M"` where mega was surely meant: SPICE reads a capital `M` as milli, and for a key
    /// whose real values lie far above the milli reading and take in the mega one (a
    /// resistance, a 555's ladder), that is a warning naming both readings.
    fn check_mega(&self, name: &Spanned<String>, text: &str, key: &str, number: f64, here: &str) {
        let Some((low, high, range)) = ratings::mega_range(key) else {
            return;
        };
        // The letters after the number (an exponent's `e` is part of the number).
        let trimmed = text.trim();
        let Some(start) = trimmed.char_indices().find_map(|(i, c)| {
            let exponent = matches!(c, 'e' | 'E')
                && trimmed[i + 1..]
                    .starts_with(|d: char| d.is_ascii_digit() || d == '-' || d == '+');
            (c.is_alphabetic() && !exponent).then_some(i)
        }) else {
            return;
        };
        let rest = &trimmed[start..];
        let lower = rest.to_ascii_lowercase();
        if !rest.starts_with('M') || lower.starts_with("meg") || lower.starts_with("mil") {
            return;
        }
        let mega = number * 1e9;
        if !(number > 0.0 && number < low && mega >= low && mega <= high) {
            return;
        }
        let unit = ratings::rating_unit(key).unwrap_or("");
        let digits = trimmed[..start].trim_end();
        let message = format!(
            "`{here}`: \"{text}\" reads as {}: in SPICE `M` is milli and mega is `MEG`, and \
             `{key}` is usually {range}; write \"{digits}MEG\" for {}, or \"{digits}m\" if \
             milli was meant{}",
            crate::units::format_si(number, unit),
            crate::units::format_si(mega, unit),
            self.snippet(&name.span())
        );
        let (line, column) = line_column(self.text, name.span().start);
        self.warnings.borrow_mut().push(ConfigWarning {
            path: self.path.to_path_buf(),
            line,
            column,
            key: here.to_string(),
            message,
        });
    }

    fn number(&self, name: &Spanned<String>, value: &Node, here: &str) -> Result<f64, ConfigError> {
        if let Node::Str(text) = value {
            self.check_unit(name, text, here)?;
        }
        let number = match value {
            Node::Integer(i) => Some(*i as f64),
            Node::Float(f) => Some(*f),
            Node::Str(text) => parse_value(text),
            other => {
                return Err(self.error(
                    name.span(),
                    here,
                    format!(
                        "must be a number or a string such as \"2.2m\", not {}",
                        other.type_name()
                    ),
                ))
            }
        };
        match number {
            Some(n) if n.is_finite() => Ok(n),
            _ => Err(self.error(
                name.span(),
                here,
                match value {
                    Node::Str(text) => format!(
                        "\"{text}\" is not a number (write e.g. 2.2e-3, \"2.2m\" or \"10k\")"
                    ),
                    _ => "must be a finite number".to_string(),
                },
            )),
        }
    }
}
