//! A memo of Newton outcomes keyed by a network's exact contents.
//!
//! The analyses solve the same network many times: the timer, switching and stress analyses
//! each solve a sub-network in the same states, a wiper search revisits positions, and a board
//! of repeated channels builds the same network once per channel (only the net names differ).
//! The key holds every number that reaches the arithmetic — the solve options, the node count,
//! each element's kind, nodes and the exact bits of its values — and nothing else (names only
//! appear in error messages, which are rebuilt for each network from the cached unknowns). A
//! solve is a pure function of that key, so an answer from the memo is the answer the solve
//! would give, to the last bit, and output never depends on what was cached.
//!
//! Memory stays bounded: entries go into a young generation of at most [`GENERATION`]
//! entries; when it is full it becomes the old one (the previous old one is dropped), and a
//! hit in the old generation moves the entry back into the young one.

use std::collections::HashMap;
use std::hash::{BuildHasherDefault, Hasher};
use std::sync::{Arc, Mutex};

use super::mna::DeviceVoltages;
use super::network::{Element, Network};
use super::newton::{Failure, Fallback};
use super::options::SolveOptions;

/// Entries per generation: about 2.5 kB each for the sub-networks of a motor-drive channel, so
/// the memo stays under about 25 MB while holding a few channels' worth of states.
pub const GENERATION: usize = 4096;

/// What a Newton run ended with, without anything that names nets.
#[derive(Clone, Debug)]
pub(crate) enum Outcome {
    Solved {
        x: Vec<f64>,
        lin: DeviceVoltages,
        fallback: Fallback,
        iterations: usize,
    },
    Failed {
        failure: Failure,
        iterations: usize,
    },
}

/// The words of a network's contents; hashed word by word (the standard hash of a slice of
/// words feeds it as bytes, which a word hasher would take apart byte by byte).
#[derive(Clone, Debug, PartialEq, Eq)]
pub(crate) struct Key(Vec<u64>);

impl std::hash::Hash for Key {
    fn hash<H: Hasher>(&self, state: &mut H) {
        state.write_usize(self.0.len());
        for &word in &self.0 {
            state.write_u64(word);
        }
    }
}

type Map = HashMap<Key, Arc<Outcome>, BuildHasherDefault<WordHasher>>;

#[derive(Default)]
struct Generations {
    young: Map,
    old: Map,
}

/// Newton outcomes of networks already solved; shared by reference (it locks inside), so the
/// analyses of one board may use it from several threads.
#[derive(Default)]
pub struct SolveCache {
    inner: Mutex<Generations>,
}

impl std::fmt::Debug for SolveCache {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str("SolveCache")
    }
}

impl SolveCache {
    pub fn new() -> Self {
        Self::default()
    }

    pub(crate) fn get(&self, key: &Key) -> Option<Arc<Outcome>> {
        let mut g = self.inner.lock().ok()?;
        if let Some(hit) = g.young.get(key) {
            return Some(Arc::clone(hit));
        }
        let (key, hit) = g.old.remove_entry(key)?;
        g.insert(key, Arc::clone(&hit));
        Some(hit)
    }

    pub(crate) fn put(&self, key: Key, outcome: Arc<Outcome>) {
        if let Ok(mut g) = self.inner.lock() {
            g.insert(key, outcome);
        }
    }
}

impl Generations {
    fn insert(&mut self, key: Key, value: Arc<Outcome>) {
        if self.young.len() >= GENERATION {
            self.old = std::mem::take(&mut self.young);
        }
        self.young.insert(key, value);
    }
}

/// The memo key of solving `net` with `options` from a zero start.
pub(crate) fn key(net: &Network, options: &SolveOptions) -> Key {
    let mut k = Vec::with_capacity(8 + 7 * net.elements.len());
    k.extend([
        options.reltol.to_bits(),
        options.vntol.to_bits(),
        options.abstol.to_bits(),
        options.gmin.to_bits(),
        options.max_iterations as u64,
        options.max_total_iterations as u64,
        options.temperature_celsius.to_bits(),
        net.node_count() as u64,
    ]);
    for element in &net.elements {
        push_element(&mut k, element);
    }
    Key(k)
}

fn push_element(k: &mut Vec<u64>, element: &Element) {
    let n = |node: super::network::Node| node.0 as u64;
    match *element {
        Element::Resistor { a, b, ohms } => k.extend([0, n(a), n(b), ohms.to_bits()]),
        Element::VoltageSource { p, n: m, volts } => k.extend([1, n(p), n(m), volts.to_bits()]),
        Element::CurrentSource { p, n: m, amps } => k.extend([2, n(p), n(m), amps.to_bits()]),
        Element::Vcvs {
            p,
            n: m,
            cp,
            cn,
            gain,
        } => k.extend([3, n(p), n(m), n(cp), n(cn), gain.to_bits()]),
        Element::Vccs {
            p,
            n: m,
            cp,
            cn,
            gm,
        } => k.extend([4, n(p), n(m), n(cp), n(cn), gm.to_bits()]),
        Element::Diode {
            anode,
            cathode,
            params: d,
        } => k.extend([
            5,
            n(anode),
            n(cathode),
            d.is.to_bits(),
            d.n.to_bits(),
            d.rs.to_bits(),
            d.bv.map_or(u64::MAX, f64::to_bits),
            u64::from(d.bv.is_some()),
            d.ibv.to_bits(),
        ]),
        Element::Mosfet { d, g, s, params: m } => k.extend([
            6,
            n(d),
            n(g),
            n(s),
            m.polarity as u64,
            m.vto.to_bits(),
            m.k.to_bits(),
            m.lambda.to_bits(),
        ]),
        Element::Bjt { c, b, e, params: q } => k.extend([
            7,
            n(c),
            n(b),
            n(e),
            q.polarity as u64,
            q.is.to_bits(),
            q.beta_f.to_bits(),
            q.beta_r.to_bits(),
            q.n.to_bits(),
        ]),
        Element::CurrentLimited {
            a,
            b,
            ohms,
            i_limit,
        } => k.extend([8, n(a), n(b), ohms.to_bits(), i_limit.to_bits()]),
    }
}

/// A fast hash for keys of machine words (the memo is private, so no defence against chosen
/// keys is needed): multiply-rotate per word.
#[derive(Default)]
pub(crate) struct WordHasher(u64);

impl Hasher for WordHasher {
    fn finish(&self) -> u64 {
        self.0
    }

    fn write(&mut self, bytes: &[u8]) {
        for chunk in bytes.chunks(8) {
            let mut word = [0u8; 8];
            for (w, b) in word.iter_mut().zip(chunk) {
                *w = *b;
            }
            self.write_u64(u64::from_le_bytes(word));
        }
    }

    fn write_u64(&mut self, word: u64) {
        self.0 = (self.0.rotate_left(5) ^ word).wrapping_mul(0x51_7c_c1_b7_27_22_0a_95);
    }

    fn write_usize(&mut self, word: usize) {
        self.write_u64(word as u64);
    }
}
