//! What the deck leaves unknown, kept as a fact the rules read instead of guessing:
//!
//! - parts whose model or subcircuit is defined nowhere the check can see (a typo, or a library
//!   that could not be read), and parts kept whole by their name whose definition may sit in a
//!   missing include;
//! - parts whose ports cannot be matched to the pins of their kind (names and count do not say);
//! - mixed-signal code-model devices, whose outputs drive their nets in ways not modelled.
//!
//! Such a part may connect its pins to each other, to ground or to a rail inside a definition
//! kickback cannot read, so a net it touches is not "dangling", a pin on it is not "open", and a
//! section it joins is not "unreferenced" on the deck's word alone.

use super::{glob, parts, Circuit, DeviceId, Kind, NetId};
use crate::config::Config;
use crate::netlist::{FlatElement, FlatNetlist};
use std::collections::HashSet;

/// Why a part is unknown.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum UnknownPart {
    /// Its model or subcircuit is defined nowhere the check can see.
    Undefined,
    /// It is defined, but its ports cannot be given the pins of this kind (what its name or the
    /// config says it is); a `part-pins` note says which mapping is needed.
    Pins(Kind),
    /// A mixed-signal code-model device (an `A` line): its connections are read, but what it
    /// drives onto them (a converter's output, a digital source) is not modelled.
    CodeModel,
}

/// Names part knowledge can describe without a `.model` or `.subckt` in the deck.
pub(crate) struct KnownNames<'a> {
    config: &'a Config,
    subckts: HashSet<String>,
    exact_parts: HashSet<String>,
    glob_parts: Vec<&'a str>,
    elements: HashSet<String>,
}

impl<'a> KnownNames<'a> {
    pub fn new(netlist: &FlatNetlist, config: &'a Config) -> Self {
        let mut exact_parts = HashSet::new();
        let mut glob_parts = Vec::new();
        for (pattern, _) in &config.parts {
            if glob::is_glob(pattern) {
                glob_parts.push(pattern.as_str());
            } else {
                exact_parts.insert(pattern.to_ascii_lowercase());
            }
        }
        KnownNames {
            config,
            subckts: lower_set(netlist.subckt_names.iter()),
            exact_parts,
            glob_parts,
            elements: lower_set(config.elements.keys()),
        }
    }

    fn knows(&self, element: &FlatElement, name: &str) -> bool {
        let lower = name.to_ascii_lowercase();
        self.subckts.contains(&lower)
            || self.exact_parts.contains(&lower)
            || self.glob_parts.iter().any(|g| glob::matches(g, name))
            || self.elements.contains(&element.path.to_ascii_lowercase())
            || parts::keeps_whole(name, self.config)
    }

    /// True when the element names a model or subcircuit that nothing defines or describes.
    pub fn is_undefined(&self, element: &FlatElement) -> bool {
        let Some(name) = element.model.as_deref() else {
            return false;
        };
        element.model_index.is_none() && element.subckt.is_none() && !self.knows(element, name)
    }
}

fn lower_set<'s>(names: impl Iterator<Item = &'s String>) -> HashSet<String> {
    names.map(|n| n.to_ascii_lowercase()).collect()
}

impl Circuit {
    /// Why the device is an unknown part, when it is one.
    pub fn unknown_part(&self, device: DeviceId) -> Option<UnknownPart> {
        self.unknown_parts
            .binary_search_by_key(&device, |(d, _)| *d)
            .ok()
            .and_then(|at| self.unknown_parts.get(at))
            .map(|(_, why)| *why)
    }

    /// Every unknown part, in device order.
    pub fn unknown_parts(&self) -> &[(DeviceId, UnknownPart)] {
        &self.unknown_parts
    }

    /// True when an unknown part has a pin on the net: what else the net joins is not known.
    pub fn touches_unknown_part(&self, net: NetId) -> bool {
        if self.unknown_parts.is_empty() {
            return false;
        }
        self.devices_on(net)
            .iter()
            .any(|&(device, _)| self.unknown_part(device).is_some())
    }
}
