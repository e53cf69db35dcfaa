//! The TOML document as a tree whose keys keep their byte spans, so that every complaint about
//! the configuration can name its line and column.

use serde::de::{self, Deserialize, Deserializer, MapAccess, SeqAccess, Visitor};
use serde_spanned::Spanned;
use std::fmt;

/// A TOML value. Tables keep their keys in file order, each with its span.
#[derive(Clone, Debug, PartialEq)]
pub(crate) enum Node {
    Bool(bool),
    Integer(i64),
    Float(f64),
    Str(String),
    Array(Vec<Node>),
    Table(Vec<(Spanned<String>, Node)>),
}

impl Node {
    /// The TOML type name, for messages.
    pub(crate) fn type_name(&self) -> &'static str {
        match self {
            Node::Bool(_) => "a boolean",
            Node::Integer(_) => "an integer",
            Node::Float(_) => "a number",
            Node::Str(_) => "a string",
            Node::Array(_) => "an array",
            Node::Table(_) => "a table",
        }
    }
}

impl<'de> Deserialize<'de> for Node {
    fn deserialize<D: Deserializer<'de>>(deserializer: D) -> Result<Node, D::Error> {
        deserializer.deserialize_any(NodeVisitor)
    }
}

struct NodeVisitor;

impl<'de> Visitor<'de> for NodeVisitor {
    type Value = Node;

    fn expecting(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str("a TOML value")
    }

    fn visit_bool<E: de::Error>(self, v: bool) -> Result<Node, E> {
        Ok(Node::Bool(v))
    }

    fn visit_i64<E: de::Error>(self, v: i64) -> Result<Node, E> {
        Ok(Node::Integer(v))
    }

    fn visit_u64<E: de::Error>(self, v: u64) -> Result<Node, E> {
        i64::try_from(v)
            .map(Node::Integer)
            .or(Ok(Node::Float(v as f64)))
    }

    fn visit_f64<E: de::Error>(self, v: f64) -> Result<Node, E> {
        Ok(Node::Float(v))
    }

    fn visit_str<E: de::Error>(self, v: &str) -> Result<Node, E> {
        Ok(Node::Str(v.to_string()))
    }

    fn visit_string<E: de::Error>(self, v: String) -> Result<Node, E> {
        Ok(Node::Str(v))
    }

    fn visit_seq<A: SeqAccess<'de>>(self, mut seq: A) -> Result<Node, A::Error> {
        let mut items = Vec::new();
        while let Some(item) = seq.next_element::<Node>()? {
            items.push(item);
        }
        Ok(Node::Array(items))
    }

    fn visit_map<A: MapAccess<'de>>(self, mut map: A) -> Result<Node, A::Error> {
        let mut entries = Vec::new();
        while let Some(key) = map.next_key::<Spanned<String>>()? {
            let value = map.next_value::<Node>()?;
            entries.push((key, value));
        }
        Ok(Node::Table(entries))
    }
}

/// 1-based line and column (in characters) of a byte offset in `text`.
pub(crate) fn line_column(text: &str, offset: usize) -> (usize, usize) {
    let mut offset = offset.min(text.len());
    while offset > 0 && !text.is_char_boundary(offset) {
        offset -= 1;
    }
    let before = text.get(..offset).unwrap_or("");
    let line = before.matches('\n').count() + 1;
    let line_start = before.rfind('\n').map_or(0, |i| i + 1);
    let column = before.get(line_start..).unwrap_or("").chars().count() + 1;
    (line, column)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn keys_keep_their_spans() {
        let text = "[parts.PUMP12]\nkind = \"dc-motor\"\n\n[rules]\npwm-audible = \"off\"\n";
        let Ok(Node::Table(top)) = toml::from_str::<Node>(text) else {
            panic!("not a table")
        };
        let names: Vec<_> = top.iter().map(|(k, _)| k.get_ref().as_str()).collect();
        assert_eq!(names, ["parts", "rules"]);
        let Some((_, Node::Table(parts))) = top.first() else {
            panic!("parts")
        };
        let Some((pump, Node::Table(entries))) = parts.first() else {
            panic!("pump")
        };
        assert_eq!(line_column(text, pump.span().start), (1, 8));
        let Some((kind, _)) = entries.first() else {
            panic!("kind")
        };
        assert_eq!(line_column(text, kind.span().start), (2, 1));
    }

    #[test]
    fn line_column_counts_characters() {
        assert_eq!(line_column("ab\nµx", 5), (2, 2));
        assert_eq!(line_column("", 10), (1, 1));
    }
}
