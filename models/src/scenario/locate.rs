//! Field paths, and finding the line of a path in the scenario text.
//!
//! Semantic checks run on the deserialized structs, which carry no
//! positions. Rather than thread spans through every struct, the loader
//! re-reads the text when (and only when) it reports an error, walking the
//! YAML to the offending path and provoking a deserialization error there:
//! the YAML parser stamps that error with the position of the value, which
//! works the same for block and flow style.

use std::fmt;

use serde::de::{self, DeserializeSeed, Deserializer, IgnoredAny, MapAccess, SeqAccess, Visitor};

/// One step of a field path.
#[derive(Debug, Clone, PartialEq, Eq)]
pub(crate) enum Seg {
    /// A mapping key.
    Key(String),
    /// A sequence index.
    Index(usize),
}

/// A field path such as `products[2].routing[4].then[1].p`.
#[derive(Debug, Clone, Default, PartialEq, Eq)]
pub(crate) struct FieldPath(Vec<Seg>);

impl FieldPath {
    /// The whole file.
    pub(crate) fn root() -> Self {
        FieldPath(Vec::new())
    }
    /// This path followed by a key.
    pub(crate) fn key(&self, k: &str) -> Self {
        let mut v = self.0.clone();
        v.push(Seg::Key(k.to_string()));
        FieldPath(v)
    }
    /// How many steps deep the path is.
    pub(crate) fn len(&self) -> usize {
        self.0.len()
    }

    /// When this path lies at or below `prefix`, the mapping keys below it (indices left out).
    pub(crate) fn keys_below(&self, prefix: &FieldPath) -> Option<Vec<&str>> {
        let rest = self.0.strip_prefix(prefix.0.as_slice())?;
        Some(
            rest.iter()
                .filter_map(|s| match s {
                    Seg::Key(k) => Some(k.as_str()),
                    Seg::Index(_) => None,
                })
                .collect(),
        )
    }

    /// This path with its `from` prefix replaced by `to`, when it lies at or below `from`.
    pub(crate) fn moved(&self, from: &FieldPath, to: &FieldPath) -> Option<FieldPath> {
        let rest = self.0.strip_prefix(from.0.as_slice())?;
        Some(FieldPath(to.0.iter().chain(rest).cloned().collect()))
    }

    /// This path followed by an index.
    pub(crate) fn index(&self, i: usize) -> Self {
        let mut v = self.0.clone();
        v.push(Seg::Index(i));
        FieldPath(v)
    }
}

impl fmt::Display for FieldPath {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        for (n, s) in self.0.iter().enumerate() {
            match s {
                Seg::Key(k) if n == 0 => f.write_str(k)?,
                Seg::Key(k) => write!(f, ".{k}")?,
                Seg::Index(i) => write!(f, "[{i}]")?,
            }
        }
        Ok(())
    }
}

/// The 1-based line of the value at `path`, or of the nearest enclosing
/// value that exists (a missing field is reported at its parent). The
/// whole file has no line.
pub(crate) fn line_of(text: &str, path: &FieldPath) -> Option<usize> {
    (1..=path.0.len()).rev().find_map(|n| find(text, &path.0[..n]))
}

fn find(text: &str, segs: &[Seg]) -> Option<usize> {
    let de = serde_norway::Deserializer::from_str(text);
    match (Finder { rest: segs }).deserialize(de) {
        // Only the target raises an error (everything else is skipped with
        // IgnoredAny), so an error with a position is the target's position.
        Err(e) => e.location().map(|l| l.line()),
        Ok(()) => None,
    }
}

struct Finder<'a> {
    rest: &'a [Seg],
}

/// Refuses whatever it is given, so the parser reports the value's position.
struct Refuse;

impl<'de> Visitor<'de> for Refuse {
    type Value = ();
    fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
        f.write_str("nothing (locating a value)")
    }
}

impl<'de> DeserializeSeed<'de> for Finder<'_> {
    type Value = ();
    fn deserialize<D: Deserializer<'de>>(self, d: D) -> Result<(), D::Error> {
        if self.rest.is_empty() {
            d.deserialize_any(Refuse)
        } else {
            d.deserialize_any(self)
        }
    }
}

/// A mapping key as text, whatever scalar it is written as.
struct KeyText(Option<String>);

impl<'de> de::Deserialize<'de> for KeyText {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct V;
        impl<'de> Visitor<'de> for V {
            type Value = KeyText;
            fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
                f.write_str("a key")
            }
            fn visit_str<E: de::Error>(self, v: &str) -> Result<KeyText, E> {
                Ok(KeyText(Some(v.to_string())))
            }
            fn visit_i64<E: de::Error>(self, v: i64) -> Result<KeyText, E> {
                Ok(KeyText(Some(v.to_string())))
            }
            fn visit_u64<E: de::Error>(self, v: u64) -> Result<KeyText, E> {
                Ok(KeyText(Some(v.to_string())))
            }
            fn visit_f64<E: de::Error>(self, v: f64) -> Result<KeyText, E> {
                Ok(KeyText(Some(v.to_string())))
            }
            fn visit_bool<E: de::Error>(self, v: bool) -> Result<KeyText, E> {
                Ok(KeyText(Some(v.to_string())))
            }
            fn visit_unit<E: de::Error>(self) -> Result<KeyText, E> {
                Ok(KeyText(None))
            }
            fn visit_map<A: MapAccess<'de>>(self, mut m: A) -> Result<KeyText, A::Error> {
                while m.next_entry::<IgnoredAny, IgnoredAny>()?.is_some() {}
                Ok(KeyText(None))
            }
            fn visit_seq<A: SeqAccess<'de>>(self, mut s: A) -> Result<KeyText, A::Error> {
                while s.next_element::<IgnoredAny>()?.is_some() {}
                Ok(KeyText(None))
            }
        }
        d.deserialize_any(V)
    }
}

impl<'de> Visitor<'de> for Finder<'_> {
    type Value = ();

    fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
        f.write_str("any value")
    }

    fn visit_map<A: MapAccess<'de>>(self, mut map: A) -> Result<(), A::Error> {
        let want = match &self.rest[0] {
            Seg::Key(k) => Some(k.as_str()),
            Seg::Index(_) => None,
        };
        while let Some(KeyText(key)) = map.next_key::<KeyText>()? {
            if want.is_some() && key.as_deref() == want {
                return map.next_value_seed(Finder { rest: &self.rest[1..] });
            }
            map.next_value::<IgnoredAny>()?;
        }
        Ok(())
    }

    fn visit_seq<A: SeqAccess<'de>>(self, mut seq: A) -> Result<(), A::Error> {
        let want = match &self.rest[0] {
            Seg::Index(i) => Some(*i),
            Seg::Key(_) => None,
        };
        let mut n = 0;
        loop {
            if Some(n) == want {
                seq.next_element_seed(Finder { rest: &self.rest[1..] })?;
                return Ok(());
            }
            if seq.next_element::<IgnoredAny>()?.is_none() {
                return Ok(());
            }
            n += 1;
        }
    }

    fn visit_str<E: de::Error>(self, _: &str) -> Result<(), E> {
        Ok(())
    }
    fn visit_i64<E: de::Error>(self, _: i64) -> Result<(), E> {
        Ok(())
    }
    fn visit_u64<E: de::Error>(self, _: u64) -> Result<(), E> {
        Ok(())
    }
    fn visit_f64<E: de::Error>(self, _: f64) -> Result<(), E> {
        Ok(())
    }
    fn visit_bool<E: de::Error>(self, _: bool) -> Result<(), E> {
        Ok(())
    }
    fn visit_unit<E: de::Error>(self) -> Result<(), E> {
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    const TEXT: &str = "a: 1\nlist:\n  - { x: 1, y: [5, 6] }\n  - x: 2\n    y:\n      - 7\n      - 8\n";

    #[test]
    fn finds_block_and_flow_values() {
        let p = FieldPath::root().key("list");
        assert_eq!(line_of(TEXT, &p.index(0).key("y").index(1)), Some(3));
        assert_eq!(line_of(TEXT, &p.index(1).key("y").index(1)), Some(7));
        assert_eq!(line_of(TEXT, &p.index(1).key("x")), Some(4));
        assert_eq!(line_of(TEXT, &FieldPath::root().key("a")), Some(1));
    }

    #[test]
    fn a_missing_field_is_found_at_its_parent() {
        let p = FieldPath::root().key("list").index(1).key("z");
        assert_eq!(line_of(TEXT, &p), Some(4));
        assert_eq!(p.to_string(), "list[1].z");
    }
}
