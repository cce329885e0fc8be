//! JSON Lines: one object per line. Numeric fields (and `null`, and strings that
//! read as numbers such as `"NaN"`) become columns in the order they appear in the
//! first object; other fields (text, booleans, arrays, objects) are ignored.

use std::fmt;

use serde::Deserialize;
use serde::de::{self, IgnoredAny, MapAccess, Visitor};

/// One field's value as a column sees it: a number, or `None` when the field is
/// not numeric and is left out.
struct Num(Option<f64>);

impl<'de> Deserialize<'de> for Num {
    fn deserialize<D: de::Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct V;
        impl<'de> Visitor<'de> for V {
            type Value = Num;
            fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
                f.write_str("any JSON value")
            }
            fn visit_f64<E>(self, v: f64) -> Result<Num, E> {
                Ok(Num(Some(v)))
            }
            fn visit_i64<E>(self, v: i64) -> Result<Num, E> {
                Ok(Num(Some(v as f64)))
            }
            fn visit_u64<E>(self, v: u64) -> Result<Num, E> {
                Ok(Num(Some(v as f64)))
            }
            fn visit_str<E>(self, v: &str) -> Result<Num, E> {
                Ok(Num(super::number::parse_field(v.as_bytes())))
            }
            fn visit_unit<E>(self) -> Result<Num, E> {
                Ok(Num(Some(f64::NAN)))
            }
            fn visit_none<E>(self) -> Result<Num, E> {
                Ok(Num(Some(f64::NAN)))
            }
            fn visit_bool<E>(self, _: bool) -> Result<Num, E> {
                Ok(Num(None))
            }
            fn visit_seq<A: de::SeqAccess<'de>>(self, mut a: A) -> Result<Num, A::Error> {
                while a.next_element::<IgnoredAny>()?.is_some() {}
                Ok(Num(None))
            }
            fn visit_map<A: MapAccess<'de>>(self, mut a: A) -> Result<Num, A::Error> {
                while a.next_entry::<IgnoredAny, IgnoredAny>()?.is_some() {}
                Ok(Num(None))
            }
        }
        d.deserialize_any(V)
    }
}

/// The numeric fields of one object, in order.
struct Ordered(Vec<(String, f64)>);

impl<'de> Deserialize<'de> for Ordered {
    fn deserialize<D: de::Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct V;
        impl<'de> Visitor<'de> for V {
            type Value = Ordered;
            fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
                f.write_str("a JSON object")
            }
            fn visit_map<A: MapAccess<'de>>(self, mut a: A) -> Result<Ordered, A::Error> {
                let mut out = Vec::new();
                while let Some((k, Num(v))) = a.next_entry::<String, Num>()? {
                    if let Some(v) = v {
                        out.push((k, v));
                    }
                }
                Ok(Ordered(out))
            }
        }
        d.deserialize_map(V)
    }
}

/// Parse one line as an object; returns its numeric fields in order.
pub fn parse_object(line: &[u8]) -> Result<Vec<(String, f64)>, String> {
    serde_json::from_slice::<Ordered>(line)
        .map(|o| o.0)
        .map_err(|e| format!("not a JSON object: {e}"))
}

/// Fill `out` with the values of `names` from `fields`; `Err(name)` when one is missing.
pub fn values_for<'a>(
    names: &'a [String],
    fields: &[(String, f64)],
    out: &mut Vec<f64>,
) -> Result<(), &'a str> {
    out.clear();
    for (i, name) in names.iter().enumerate() {
        // Fields usually come in the same order: try the same position first.
        let v = match fields.get(i) {
            Some((k, v)) if k == name => Some(*v),
            _ => fields.iter().find(|(k, _)| k == name).map(|(_, v)| *v),
        };
        match v {
            Some(v) => out.push(v),
            None => return Err(name),
        }
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    #[test]
    fn keeps_order_and_numbers_only() {
        let f = parse_object(
            br#"{"t": 0.5, "phase": "explicit", "ke": 1e3, "w": null, "n": 7, "x": "NaN"}"#,
        )
        .unwrap();
        let keys: Vec<_> = f.iter().map(|(k, _)| k.as_str()).collect();
        assert_eq!(keys, ["t", "ke", "w", "n", "x"]);
        assert!(f[2].1.is_nan() && f[4].1.is_nan());
        assert!(parse_object(b"[1,2]").is_err());
        assert!(parse_object(b"{\"t\": 1").is_err());
    }
}
