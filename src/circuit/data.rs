//! Kind, pin roles and part data of one element, from every source of part knowledge, strongest
//! first: `[elements."PATH"]`, `[parts.NAME]`, the element's own value and instance parameters,
//! its `.model` card, the built-in library, the kind's defaults.

use super::defaults::apply_defaults;
use super::{glob, library, parts, pins, Kind, PartData, PinRole, UnknownPart};
use crate::config::{Config, PartConfig};
use crate::netlist::{FlatElement, Model, Num};
use std::collections::HashMap;

/// What part knowledge says about one element.
#[derive(Clone)]
pub(crate) struct Resolved {
    pub kind: Kind,
    pub roles: Vec<PinRole>,
    pub data: PartData,
    /// Why the element's ports do not fit its kind, if they do not.
    pub pin_problem: Option<pins::PinProblem>,
    /// What part knowledge could not settle (then `kind` is `Unknown` and every role `other`).
    pub unknown: Option<UnknownPart>,
}

/// The config's part entries, indexed once per build.
pub(crate) struct PartSources<'a> {
    config: &'a Config,
    /// Lower-case path → (path as written, entry).
    elements: HashMap<String, (&'a str, &'a PartConfig)>,
    /// Lower-case model or subcircuit name → indices of matching `[parts]` entries, exact names
    /// first, then globs in file order.
    matches: HashMap<String, Vec<usize>>,
    /// What was resolved for elements that look alike to part knowledge (see [`Likeness`]),
    /// by the likeness's hash: a board repeats a few parts many times over.
    shared: HashMap<u64, Vec<(Likeness, Resolved)>>,
    shared_count: usize,
    /// The last element with an entry of its own in `[elements]` (never shared).
    own: Option<Resolved>,
    /// An include could not be read: a part kept by its name but defined nowhere in the deck
    /// may have been defined, with its own port order, in the missing file.
    definitions_missing: bool,
}

/// Distinct likenesses kept at most; past that, elements are resolved one by one.
const SHARED_MAX: usize = 1 << 16;

/// Everything of an element that part knowledge reads, apart from its path (which only
/// `[elements."PATH"]` entries read, and elements with one are never shared).
#[derive(PartialEq)]
struct Likeness {
    letter: char,
    model: Option<String>,
    model_index: Option<usize>,
    subckt: Option<(String, Vec<String>)>,
    nodes: usize,
    value: Option<u64>,
    params: Vec<(String, Option<u64>)>,
}

fn known_bits(num: Num) -> Option<u64> {
    num.known().map(f64::to_bits)
}

impl Likeness {
    fn of(element: &FlatElement) -> Likeness {
        Likeness {
            letter: element.letter,
            model: element.model.clone(),
            model_index: element.model_index,
            subckt: element
                .subckt
                .as_ref()
                .map(|k| (k.name.clone(), k.ports.clone())),
            nodes: element.nodes.len(),
            value: element.value.and_then(known_bits),
            params: element
                .params
                .iter()
                .map(|(k, v)| (k.clone(), known_bits(*v)))
                .collect(),
        }
    }

    fn matches(&self, element: &FlatElement) -> bool {
        let subckt_matches = match (&self.subckt, &element.subckt) {
            (None, None) => true,
            (Some((name, ports)), Some(k)) => *name == k.name && *ports == k.ports,
            _ => false,
        };
        self.letter == element.letter
            && self.model == element.model
            && self.model_index == element.model_index
            && subckt_matches
            && self.nodes == element.nodes.len()
            && self.value == element.value.and_then(known_bits)
            && self.params.len() == element.params.len()
            && self
                .params
                .iter()
                .zip(&element.params)
                .all(|((k, v), (ek, ev))| k == ek && *v == known_bits(*ev))
    }

    fn hash(element: &FlatElement) -> u64 {
        use std::hash::{Hash, Hasher};
        let mut h = super::names::FastHasher::default();
        element.letter.hash(&mut h);
        element.model.hash(&mut h);
        element.model_index.hash(&mut h);
        if let Some(k) = &element.subckt {
            k.name.hash(&mut h);
            k.ports.hash(&mut h);
        }
        element.nodes.len().hash(&mut h);
        element.value.and_then(known_bits).hash(&mut h);
        for (k, v) in &element.params {
            k.hash(&mut h);
            known_bits(*v).hash(&mut h);
        }
        h.finish()
    }
}

impl<'a> PartSources<'a> {
    pub fn new(config: &'a Config, definitions_missing: bool) -> Self {
        let mut elements = HashMap::new();
        for (path, entry) in &config.elements {
            elements
                .entry(path.to_ascii_lowercase())
                .or_insert((path.as_str(), entry));
        }
        PartSources {
            config,
            elements,
            matches: HashMap::new(),
            shared: HashMap::new(),
            shared_count: 0,
            own: None,
            definitions_missing,
        }
    }

    /// What part knowledge says about `element`, shared with every element like it.
    pub fn resolve(&mut self, element: &FlatElement, models: &[Model]) -> &Resolved {
        if self.element_entry(&element.path).is_some() {
            let resolved = resolve(element, models, self);
            return self.own.insert(resolved);
        }
        let hash = Likeness::hash(element);
        let found = self
            .shared
            .get(&hash)
            .and_then(|list| list.iter().position(|(like, _)| like.matches(element)));
        if found.is_none() && self.shared_count >= SHARED_MAX {
            let resolved = resolve(element, models, self);
            return self.own.insert(resolved);
        }
        let at = match found {
            Some(at) => at,
            None => {
                let resolved = resolve(element, models, self);
                self.shared_count += 1;
                let list = self.shared.entry(hash).or_default();
                list.push((Likeness::of(element), resolved));
                list.len() - 1
            }
        };
        let stored = self.shared.get(&hash).is_some_and(|list| at < list.len());
        if !stored {
            let resolved = resolve(element, models, self);
            return self.own.insert(resolved);
        }
        &self.shared[&hash][at].1
    }

    fn element_entry(&self, path: &str) -> Option<(&'a str, &'a PartConfig)> {
        if self.elements.is_empty() {
            return None;
        }
        self.elements.get(&path.to_ascii_lowercase()).copied()
    }

    fn part_entries(&mut self, name: &str) -> Vec<(&'a str, &'a PartConfig)> {
        let parts = &self.config.parts;
        if parts.is_empty() {
            return Vec::new();
        }
        let indices = self
            .matches
            .entry(name.to_ascii_lowercase())
            .or_insert_with(|| {
                let exact = parts.iter().enumerate().filter(|(_, (pattern, _))| {
                    !glob::is_glob(pattern) && pattern.eq_ignore_ascii_case(name)
                });
                let globbed = parts.iter().enumerate().filter(|(_, (pattern, _))| {
                    glob::is_glob(pattern) && glob::matches(pattern, name)
                });
                exact.chain(globbed).map(|(i, _)| i).collect()
            });
        indices
            .iter()
            .filter_map(|&i| parts.get(i))
            .map(|(pattern, entry)| (pattern.as_str(), entry))
            .collect()
    }
}

/// A table name as it is written in TOML: bare when it can be, quoted otherwise.
pub(crate) fn toml_key(name: &str) -> String {
    let bare = !name.is_empty()
        && name
            .chars()
            .all(|c| c.is_ascii_alphanumeric() || c == '_' || c == '-');
    if bare {
        name.to_string()
    } else {
        format!("\"{}\"", name.replace('\\', "\\\\").replace('"', "\\\""))
    }
}

fn resolve(element: &FlatElement, models: &[Model], sources: &mut PartSources<'_>) -> Resolved {
    let model = element.model_index.and_then(|i| models.get(i));
    let part_name = element
        .subckt
        .as_ref()
        .map(|s| s.name.as_str())
        .or(element.model.as_deref());
    let own_entry = sources.element_entry(&element.path);
    let part_entries = part_name.map_or_else(Vec::new, |n| sources.part_entries(n));
    let entries = || {
        own_entry
            .map(|(_, e)| e)
            .into_iter()
            .chain(part_entries.iter().map(|(_, e)| *e))
    };

    let configured_kind = entries().find_map(|e| e.kind);
    let kind = configured_kind.unwrap_or_else(|| parts::element_kind(element, model));

    let count = element.nodes.len();
    let configured_pins = entries().find_map(|e| e.pins.as_ref());
    let mapped = match (configured_pins, &element.subckt) {
        (Some(names), _) => pins::from_config(kind, names, count).map_err(Some),
        (None, Some(kept))
            if kept.definition.is_none()
                && configured_kind.is_none()
                && sources.definitions_missing =>
        {
            // The missing file may define it, in a port order of its own.
            Err(None)
        }
        (None, Some(kept)) => pins::for_kept(kind, &kept.ports, count).map_err(Some),
        (None, None) if configured_kind.is_some() && element.letter != 'X' => {
            pins::by_kind_order(kind, count).map_err(Some)
        }
        (None, None) => Ok(pins::by_letter(element.letter, kind, count)),
    };
    let (kind, roles, pin_problem, unknown) = match mapped {
        Ok(roles) => (kind, roles, None, None),
        Err(problem) => {
            let why = match problem {
                Some(_) => UnknownPart::Pins(kind),
                None => UnknownPart::Undefined,
            };
            (
                Kind::Unknown,
                vec![PinRole::Other; count],
                problem,
                Some(why),
            )
        }
    };

    let mut data = PartData::default();
    if let Some((path, entry)) = own_entry {
        let source = format!("from config [elements.{}]", toml_key(path));
        add_ratings(&mut data, entry, &source);
    }
    for (pattern, entry) in &part_entries {
        let source = format!("from config [parts.{}]", toml_key(pattern));
        add_ratings(&mut data, entry, &source);
    }
    add_element_value(&mut data, element, kind);
    add_instance_params(&mut data, element, kind);
    if let Some(model) = model {
        add_model_params(&mut data, model, kind);
    }
    if let Some(part) = part_name.and_then(library::lookup) {
        let same_family = part.kind == kind
            || (part.kind.is_diode_like() && kind.is_diode_like())
            || (part.kind.is_mos() && kind.is_mos());
        if same_family {
            let source = part.source();
            for (name, value) in part.ratings {
                data.set_if_absent(name, *value, source.as_str());
            }
        }
    }
    apply_defaults(&mut data, kind);
    Resolved {
        kind,
        roles,
        data,
        pin_problem,
        unknown,
    }
}

fn add_ratings(data: &mut PartData, entry: &PartConfig, source: &str) {
    for (name, value) in &entry.ratings {
        data.set_if_absent(name, *value, source);
    }
}

fn add_element_value(data: &mut PartData, element: &FlatElement, kind: Kind) {
    let Some(value) = element.value.and_then(Num::known) else {
        return;
    };
    let name = match element.letter {
        'R' => "resistance",
        'C' => "capacitance",
        'L' => "inductance",
        'K' => "coupling",
        'E' | 'F' | 'G' | 'H' => "gain",
        _ if kind == Kind::Potentiometer => "resistance",
        _ => return,
    };
    data.set_if_absent(name, value, "from element value");
}

/// Instance-parameter spellings that mean a rating for this kind (a motor subcircuit's `R=`).
fn parameter_alias(kind: Kind, key: &str) -> Option<&'static str> {
    if kind.is_load() {
        match key {
            "r" | "rm" | "ra" | "rw" | "rcoil" => return Some("resistance"),
            "l" | "lm" | "la" | "lw" | "lcoil" => return Some("inductance"),
            _ => {}
        }
    }
    if kind == Kind::Potentiometer && matches!(key, "r" | "rtot" | "rpot" | "value") {
        return Some("resistance");
    }
    None
}

fn add_instance_params(data: &mut PartData, element: &FlatElement, kind: Kind) {
    for (key, value) in &element.params {
        let Some(value) = value.known() else {
            continue;
        };
        let key = key.to_ascii_lowercase();
        let source = format!("from instance parameter {key}");
        if parts::FLAG_RATINGS.contains(&key.as_str()) {
            data.set_if_absent(&key, if value != 0.0 { 1.0 } else { 0.0 }, source);
            continue;
        }
        if let Some(rating) = parameter_alias(kind, &key) {
            data.set_if_absent(rating, value, source.as_str());
        }
        data.set_if_absent(&key, value, source);
    }
}

fn add_model_params(data: &mut PartData, model: &Model, kind: Kind) {
    for (key, value) in &model.params {
        let Some(value) = value.known() else {
            continue;
        };
        let lower = key.to_ascii_lowercase();
        let source = format!("from .model {} {}", model.name, key.to_ascii_uppercase());
        if lower == "bv" && kind.is_diode_like() {
            let rating = if matches!(kind, Kind::Zener | Kind::Tvs) {
                "vz"
            } else {
                "vrrm"
            };
            data.set_if_absent(rating, value, source.as_str());
        }
        data.set_if_absent(&lower, value, source);
    }
}
