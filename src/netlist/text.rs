//! Raw bytes to text, and case-insensitive keys that borrow instead of allocating.

use std::borrow::Cow;
use std::collections::HashMap;
use std::hash::{Hash, Hasher};

/// Decodes a netlist file: a UTF-8 byte-order mark is dropped; a UTF-16 one (some Windows
/// simulators save netlists so) selects UTF-16; text that is not UTF-8 is read byte-for-char
/// (Latin-1), so the legacy 8-bit micro sign 0xB5 becomes `µ`.
/// A lone carriage return (old Mac line ends) ends a line as a line feed does; it is replaced
/// byte for byte, so every position stays where it was.
pub fn decode(bytes: Vec<u8>) -> String {
    let text = if let Some(text) = decode_utf16(&bytes) {
        text
    } else {
        let body = match bytes.strip_prefix(&[0xEF, 0xBB, 0xBF]) {
            Some(rest) => rest.to_vec(),
            None => bytes,
        };
        match String::from_utf8(body) {
            Ok(text) => text,
            Err(err) => err.into_bytes().iter().map(|&b| char::from(b)).collect(),
        }
    };
    lone_returns_to_line_feeds(text)
}

fn lone_returns_to_line_feeds(text: String) -> String {
    if !text.contains('\r') {
        return text;
    }
    let mut bytes = text.into_bytes();
    for i in 0..bytes.len() {
        if bytes[i] == b'\r' && bytes.get(i + 1) != Some(&b'\n') {
            bytes[i] = b'\n';
        }
    }
    // Only ASCII bytes were swapped for ASCII bytes, so the text is still UTF-8.
    String::from_utf8(bytes).unwrap_or_default()
}

/// Text after a UTF-16 byte-order mark, little- or big-endian; a broken pair becomes U+FFFD
/// and an odd last byte is dropped.
fn decode_utf16(bytes: &[u8]) -> Option<String> {
    let (little, body) = match bytes {
        [0xFF, 0xFE, rest @ ..] => (true, rest),
        [0xFE, 0xFF, rest @ ..] => (false, rest),
        _ => return None,
    };
    let units = body.chunks_exact(2).map(|pair| match pair {
        [a, b] if little => u16::from_le_bytes([*a, *b]),
        [a, b] => u16::from_be_bytes([*a, *b]),
        _ => 0xFFFD,
    });
    Some(
        char::decode_utf16(units)
            .map(|c| c.unwrap_or(char::REPLACEMENT_CHARACTER))
            .collect(),
    )
}

/// A name compared and hashed without regard to ASCII case (SPICE names are case-insensitive).
#[derive(Clone, Copy, Debug)]
pub struct Caseless<'a>(pub &'a str);

impl PartialEq for Caseless<'_> {
    fn eq(&self, other: &Self) -> bool {
        self.0.eq_ignore_ascii_case(other.0)
    }
}

impl Eq for Caseless<'_> {}

impl Hash for Caseless<'_> {
    fn hash<H: Hasher>(&self, state: &mut H) {
        for b in self.0.bytes() {
            state.write_u8(b.to_ascii_lowercase());
        }
        state.write_u8(0xFF);
    }
}

/// FNV-1a over the lower-cased bytes: names are short, so this beats a general hasher. The one
/// case-insensitive name hash of the crate (net, element and model tables all use it); equal
/// keys still need the names compared.
pub fn caseless_hash(name: &str) -> u64 {
    let mut h: u64 = 0xcbf2_9ce4_8422_2325;
    for b in name.bytes() {
        h ^= u64::from(b.to_ascii_lowercase());
        h = h.wrapping_mul(0x0100_0000_01b3);
    }
    h
}

/// The keys of [`CaselessMap`]'s index are hashes already.
#[derive(Clone, Copy, Debug, Default)]
pub struct PreHashed(u64);

impl Hasher for PreHashed {
    fn finish(&self) -> u64 {
        self.0
    }

    fn write(&mut self, bytes: &[u8]) {
        for &b in bytes {
            self.0 = (self.0 << 8) ^ u64::from(b);
        }
    }

    fn write_u64(&mut self, value: u64) {
        self.0 = value;
    }
}

type Index = HashMap<u64, usize, std::hash::BuildHasherDefault<PreHashed>>;

/// A map from case-insensitive names to values. Unlike a `HashMap<Caseless, V>`, it can be
/// queried with a name of any lifetime.
#[derive(Debug)]
pub struct CaselessMap<'a, V> {
    index: Index,
    /// Name, value, next entry with the same hash.
    entries: Vec<(&'a str, V, Option<usize>)>,
}

impl<V> Default for CaselessMap<'_, V> {
    fn default() -> Self {
        CaselessMap {
            index: Index::default(),
            entries: Vec::new(),
        }
    }
}

impl<'a, V> CaselessMap<'a, V> {
    fn position(&self, name: &str) -> Option<usize> {
        if self.entries.is_empty() {
            return None;
        }
        let mut at = self.index.get(&caseless_hash(name)).copied();
        while let Some(i) = at {
            let (key, _, next) = self.entries.get(i)?;
            if key.eq_ignore_ascii_case(name) {
                return Some(i);
            }
            at = *next;
        }
        None
    }

    pub fn get(&self, name: &str) -> Option<&V> {
        self.position(name)
            .and_then(|i| self.entries.get(i))
            .map(|e| &e.1)
    }

    pub fn contains(&self, name: &str) -> bool {
        self.position(name).is_some()
    }

    /// Inserts or replaces (the last definition wins).
    pub fn insert(&mut self, name: &'a str, value: V) {
        if let Some(i) = self.position(name) {
            self.entries[i].0 = name;
            self.entries[i].1 = value;
            return;
        }
        let hash = caseless_hash(name);
        let next = self.index.insert(hash, self.entries.len());
        self.entries.push((name, value, next));
    }

    /// Inserts unless present (the first definition wins).
    pub fn insert_first(&mut self, name: &'a str, value: V) {
        if !self.contains(name) {
            self.insert(name, value);
        }
    }

    pub fn values(&self) -> impl Iterator<Item = &V> {
        self.entries.iter().map(|e| &e.1)
    }
}

/// Lower-cases only when needed.
pub fn lower(text: &str) -> Cow<'_, str> {
    if text.bytes().any(|b| b.is_ascii_uppercase()) {
        Cow::Owned(text.to_ascii_lowercase())
    } else {
        Cow::Borrowed(text)
    }
}

/// Whitespace inside a line (the no-break space of 8-bit exports included).
pub fn is_ws(c: char) -> bool {
    matches!(c, ' ' | '\t' | '\r' | '\x0b' | '\x0c' | '\u{a0}')
}

/// Byte length of the word at the start of `rest`: up to whitespace or a character that is a
/// token of its own. Scanned over bytes (every byte of a large deck passes here); it stops only
/// at ASCII bytes or at a no-break space, so the length is always a character boundary.
/// Also says whether the word holds a `/` (a `//` comment may start inside it).
pub fn word_len(rest: &str) -> (usize, bool) {
    let bytes = rest.as_bytes();
    let mut i = 0;
    let mut slash = false;
    while let Some(&b) = bytes.get(i) {
        match b {
            b'(' if i > 0 && bytes[i - 1] == b'-' => match net_name_group(&bytes[i..]) {
                Some(len) => i += len,
                None => break,
            },
            b' ' | b'\t' | b'\r' | 0x0b | 0x0c | b'=' | b'(' | b')' | b',' | b'{' | b'}'
            | b'\'' | b'"' | b';' => break,
            0xC2 if bytes.get(i + 1) == Some(&0xA0) => break,
            b'/' => {
                slash = true;
                i += 1;
            }
            _ => i += 1,
        }
    }
    (i, slash)
}

/// Length of `(...)` in a net name as schematic tools write it after a dash (`Net-(U1-DIS)`,
/// `unconnected-(J1-Pad3)`): no blank, `=`, `,` or other bracket inside. Keyword groups such as
/// `PULSE(` or `POLY(2)` never follow a dash, so they stay groups.
fn net_name_group(bytes: &[u8]) -> Option<usize> {
    for (i, &b) in bytes.iter().enumerate().skip(1) {
        match b {
            b')' => return (i > 1).then_some(i + 1),
            b' ' | b'\t' | b'\r' | 0x0b | 0x0c | b'=' | b'(' | b',' | b'{' | b'}' | b'\''
            | b'"' | b';' => return None,
            _ => {}
        }
    }
    None
}

/// Byte length of the whitespace at the start of `rest`.
pub fn space_len(rest: &str) -> usize {
    let bytes = rest.as_bytes();
    let mut i = 0;
    while let Some(&b) = bytes.get(i) {
        match b {
            b' ' | b'\t' | b'\r' | 0x0b | 0x0c => i += 1,
            0xC2 if bytes.get(i + 1) == Some(&0xA0) => i += 2,
            _ => break,
        }
    }
    i
}

/// The first whitespace-delimited word (for block and end detection).
pub fn first_word(content: &str) -> &str {
    let bytes = content.as_bytes();
    let mut end = 0;
    while let Some(&b) = bytes.get(end) {
        if matches!(b, b' ' | b'\t' | b'\r' | 0x0b | 0x0c | b';' | b'(')
            || (b == 0xC2 && bytes.get(end + 1) == Some(&0xA0))
        {
            break;
        }
        end += 1;
    }
    &content[..end]
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn latin1_micro_sign_decodes() {
        assert_eq!(decode(b"C1 a b 2200\xB5".to_vec()), "C1 a b 2200µ");
    }

    #[test]
    fn bom_is_dropped() {
        assert_eq!(decode(b"\xEF\xBB\xBFtitle".to_vec()), "title");
    }

    #[test]
    fn caseless_map_finds_any_case() {
        let mut map = CaselessMap::default();
        map.insert("Rload", 1);
        map.insert_first("RLOAD", 2);
        assert_eq!(map.get("rload"), Some(&1));
        map.insert("rLoad", 3);
        assert_eq!(map.get("RLOAD"), Some(&3));
        assert_eq!(map.get("other"), None);
    }

    #[test]
    fn caseless_keys_match() {
        use std::collections::HashMap;
        let mut map = HashMap::new();
        map.insert(Caseless("Rload"), 1);
        assert_eq!(map.get(&Caseless("RLOAD")), Some(&1));
    }
}
