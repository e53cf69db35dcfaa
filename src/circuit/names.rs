//! Case-insensitive lookup of net names without a second copy of every name: the index maps
//! a name's hash to the first net with that hash, and nets with equal hashes are chained, so
//! the names themselves stay in the net table.

use super::{Net, NetId};
use std::collections::HashMap;
use std::hash::{BuildHasherDefault, Hasher};

/// A fast hasher for short keys (multiply-rotate per word, as in compilers' own tables, and a
/// mixing finish). Not resistant to chosen collisions, which only slow a lookup down.
#[derive(Clone, Copy, Default)]
pub(crate) struct FastHasher(u64);

const SEED: u64 = 0x51_7c_c1_b7_27_22_0a_95;

impl FastHasher {
    fn add(&mut self, word: u64) {
        self.0 = (self.0.rotate_left(5) ^ word).wrapping_mul(SEED);
    }
}

impl Hasher for FastHasher {
    /// Mixes the high bits into the low ones (splitmix64's finaliser): a table picks buckets by
    /// the low bits, which a multiply alone leaves to depend on the first bytes only.
    fn finish(&self) -> u64 {
        let mut x = self.0;
        x ^= x >> 30;
        x = x.wrapping_mul(0xbf58_476d_1ce4_e5b9);
        x ^= x >> 27;
        x = x.wrapping_mul(0x94d0_49bb_1331_11eb);
        x ^ (x >> 31)
    }

    fn write(&mut self, bytes: &[u8]) {
        let mut chunks = bytes.chunks_exact(8);
        for chunk in &mut chunks {
            let mut word = [0u8; 8];
            word.copy_from_slice(chunk);
            self.add(u64::from_le_bytes(word));
        }
        let rest = chunks.remainder();
        if !rest.is_empty() {
            let mut word = [0u8; 8];
            word[..rest.len()].copy_from_slice(rest);
            self.add(u64::from_le_bytes(word) ^ ((rest.len() as u64) << 56));
        }
    }

    fn write_u8(&mut self, i: u8) {
        self.add(u64::from(i));
    }

    fn write_u32(&mut self, i: u32) {
        self.add(u64::from(i));
    }

    fn write_u64(&mut self, i: u64) {
        self.add(i);
    }

    fn write_usize(&mut self, i: usize) {
        self.add(i as u64);
    }
}

pub(crate) type FastMap<K, V> = HashMap<K, V, BuildHasherDefault<FastHasher>>;

use crate::netlist::caseless_hash;

/// Net names → nets, case-insensitive.
#[derive(Clone, Debug, Default)]
pub(crate) struct NameIndex {
    first: FastMap<u64, NetId>,
    /// The next net with the same hash, per net.
    next: Vec<Option<NetId>>,
}

impl NameIndex {
    pub fn with_capacity(n: usize) -> Self {
        NameIndex {
            first: FastMap::with_capacity_and_hasher(n, Default::default()),
            next: Vec::with_capacity(n),
        }
    }

    pub fn get(&self, nets: &[Net], name: &str) -> Option<NetId> {
        let mut at = self.first.get(&caseless_hash(name)).copied();
        while let Some(id) = at {
            let net = nets.get(id)?;
            if net.name.eq_ignore_ascii_case(name) {
                return Some(id);
            }
            at = self.next.get(id).copied().flatten();
        }
        None
    }

    /// Records net `id` (the newest net, named `name`) under its name.
    pub fn insert(&mut self, id: NetId, name: &str) {
        if self.next.len() <= id {
            self.next.resize(id + 1, None);
        }
        let previous = self.first.insert(caseless_hash(name), id);
        if let Some(slot) = self.next.get_mut(id) {
            *slot = previous;
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names_are_found_whatever_their_case() {
        let names = ["a", "A1", "net.long_name_1", "NET.LONG_NAME_2", "b"];
        let nets: Vec<Net> = names
            .iter()
            .map(|n| Net {
                name: n.to_string(),
                is_ground: false,
            })
            .collect();
        let mut index = NameIndex::default();
        for (id, n) in names.iter().enumerate() {
            index.insert(id, n);
        }
        assert_eq!(index.get(&nets, "A"), Some(0));
        assert_eq!(index.get(&nets, "a1"), Some(1));
        assert_eq!(index.get(&nets, "Net.Long_Name_1"), Some(2));
        assert_eq!(index.get(&nets, "net.long_name_2"), Some(3));
        assert_eq!(index.get(&nets, "c"), None);
        assert_eq!(caseless_hash("XDRV.n1"), caseless_hash("xdrv.N1"));
    }
}
