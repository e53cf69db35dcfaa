//! The circuit graph: nets and devices, each device with its kind, pin roles and part data
//! (ratings with provenance). Built from a [`FlatNetlist`] and the configuration; queried by the
//! analyses and the rules.

pub use crate::vocabulary::{glob, kind, Kind, PinRole};

use std::collections::BTreeMap;
use std::sync::Arc;

pub type NetId = usize;
pub type DeviceId = usize;

#[derive(Clone, Debug, PartialEq)]
pub struct Net {
    /// Name as first written (flattened: `XDRV.n1`).
    pub name: String,
    /// One of the reference nets (`[analysis] ground`, default `0` and `gnd`).
    pub is_ground: bool,
}

#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Pin {
    pub role: PinRole,
    pub net: NetId,
}

/// A number of part data with where it came from, e.g. `from config`,
/// `from .model DSW BV`, `built-in 1N4007 (JEDEC registration)`, `built-in default for timer-555`.
#[derive(Clone, Debug, PartialEq)]
pub struct Rated {
    pub value: f64,
    pub source: String,
}

/// Ratings and model numbers of one device, by rating name (`vrrm`, `vgs_th_max`, `kp`...).
/// Devices of one part with the same value and parameters share one table.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct PartData {
    pub values: Ratings,
}

/// A table of ratings shared between devices until one of them changes it (copy on write).
/// Reads go through `Deref` to the map.
#[derive(Clone, Default, PartialEq)]
pub struct Ratings(Arc<BTreeMap<String, Rated>>);

impl std::ops::Deref for Ratings {
    type Target = BTreeMap<String, Rated>;

    fn deref(&self) -> &Self::Target {
        &self.0
    }
}

impl std::fmt::Debug for Ratings {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        self.0.fmt(f)
    }
}

impl Ratings {
    pub fn insert(&mut self, name: String, rated: Rated) -> Option<Rated> {
        Arc::make_mut(&mut self.0).insert(name, rated)
    }

    pub fn get_mut(&mut self, name: &str) -> Option<&mut Rated> {
        Arc::make_mut(&mut self.0).get_mut(name)
    }

    pub fn remove(&mut self, name: &str) -> Option<Rated> {
        Arc::make_mut(&mut self.0).remove(name)
    }

    pub fn clear(&mut self) {
        Arc::make_mut(&mut self.0).clear()
    }
}

impl PartData {
    pub fn get(&self, name: &str) -> Option<&Rated> {
        self.values.get(name)
    }

    pub fn value(&self, name: &str) -> Option<f64> {
        self.values.get(name).map(|r| r.value)
    }

    /// Sets `name` unless a stronger source already did.
    pub fn set_if_absent(&mut self, name: &str, value: f64, source: impl Into<String>) {
        if !self.values.contains_key(name) {
            self.values.insert(
                name.to_string(),
                Rated {
                    value,
                    source: source.into(),
                },
            );
        }
    }

    /// Like [`PartData::set_if_absent`], building the provenance text only when it is used.
    pub fn set_if_absent_with(&mut self, name: &str, value: f64, source: impl FnOnce() -> String) {
        if !self.values.contains_key(name) {
            self.values.insert(
                name.to_string(),
                Rated {
                    value,
                    source: source(),
                },
            );
        }
    }
}

#[derive(Clone, Debug, PartialEq)]
pub struct Device {
    /// Index into `FlatNetlist::elements`.
    pub element: usize,
    pub kind: Kind,
    /// Terminals in the element's node order.
    pub pins: Vec<Pin>,
    pub data: PartData,
}

impl Device {
    /// The net on the first pin with this role.
    pub fn pin(&self, role: PinRole) -> Option<NetId> {
        self.pins.iter().find(|p| p.role == role).map(|p| p.net)
    }
}

pub mod builder;
mod data;
pub mod defaults;
pub mod graph;
mod library;
mod names;
pub mod parts;
pub mod pins;
mod query;
pub mod sections;
mod unknown;
mod wires;

pub use builder::CircuitBuilder;
pub use defaults::LOGIC_LEVEL_VGS_TH_MAX;
pub use graph::{Circuit, GraphNode};
pub use query::SeriesChain;
pub use unknown::UnknownPart;
