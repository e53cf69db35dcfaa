//! Memos of what the analyses ask of a sub-network in a state: a full solve, or the current
//! into a held timing node. The timer's phases, its wiper refinements and its thresholds ask
//! the same questions again and again, and the switching and stress analyses solve the same
//! sub-networks in the same states; building the network again only to find its solve in the
//! DC memo cost more than the solve once was.
//!
//! A key names the component (its first net and device and its sizes, which no other
//! component shares), the state to the bit (corner, high inputs, each wiper's exact position)
//! and, for a held node, the net and the voltage's bits. Building and solving are pure
//! functions of the key, so an answer from the memo is the answer a fresh solve gives, errors
//! included (their net names are this component's own). Two generations of a bounded size
//! keep the memory bounded, as in the DC memo.

use super::partition::Component;
use super::states::State;
use crate::circuit::{DeviceId, NetId};
use std::collections::HashMap;
use std::hash::Hash;
use std::sync::{Arc, Mutex};

/// Which component, and in which state.
#[derive(Clone, Debug, PartialEq, Eq, Hash)]
pub struct StateKey {
    component: (Option<NetId>, Option<DeviceId>, usize, usize),
    corner: u8,
    high: Vec<DeviceId>,
    wipers: Vec<(DeviceId, u64)>,
}

impl StateKey {
    pub fn new(component: &Component, state: &State) -> Self {
        StateKey {
            component: (
                component.nets.first().copied(),
                component.devices.first().copied(),
                component.nets.len(),
                component.devices.len(),
            ),
            corner: state.corner as u8,
            high: state.high.clone(),
            wipers: state
                .wipers
                .iter()
                .map(|(&d, x)| (d, x.to_bits()))
                .collect(),
        }
    }
}

struct Generations<K, V> {
    young: HashMap<K, Arc<V>>,
    old: HashMap<K, Arc<V>>,
}

/// A bounded memo shared by reference between threads.
pub struct Memo<K, V> {
    generation: usize,
    inner: Mutex<Generations<K, V>>,
}

impl<K: Eq + Hash, V> Memo<K, V> {
    /// A memo of at most `2 × generation` entries.
    pub fn new(generation: usize) -> Self {
        Memo {
            generation,
            inner: Mutex::new(Generations {
                young: HashMap::new(),
                old: HashMap::new(),
            }),
        }
    }

    pub fn get(&self, key: &K) -> Option<Arc<V>> {
        let mut g = self.inner.lock().ok()?;
        if let Some(hit) = g.young.get(key) {
            return Some(Arc::clone(hit));
        }
        let (key, hit) = g.old.remove_entry(key)?;
        self.insert(&mut g, key, Arc::clone(&hit));
        Some(hit)
    }

    pub fn put(&self, key: K, value: Arc<V>) {
        if let Ok(mut g) = self.inner.lock() {
            self.insert(&mut g, key, value);
        }
    }

    fn insert(&self, g: &mut Generations<K, V>, key: K, value: Arc<V>) {
        if g.young.len() >= self.generation {
            g.old = std::mem::take(&mut g.young);
        }
        g.young.insert(key, value);
    }
}

impl<K, V> std::fmt::Debug for Memo<K, V> {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str("Memo")
    }
}
