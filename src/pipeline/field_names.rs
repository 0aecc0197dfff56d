//! The keys a config struct accepts, read from its own `Deserialize` derive.
//!
//! serde's derive passes the list of a struct's field names (after `rename`) to
//! `Deserializer::deserialize_struct`. [`field_names`] calls `T::deserialize` with a
//! deserializer that records that list and stops, so the key check of a config table and the
//! struct it is read into share one definition and cannot drift apart.

use serde::de::{self, Deserialize, Deserializer, Visitor};

/// Field names of the struct `T` as serde reads them, in declaration order.
///
/// Panics if `T` is not read as a plain struct (e.g. it uses `#[serde(flatten)]`, which reads a
/// map instead): a programming error that the unit tests of every config struct catch.
pub fn field_names<'de, T: Deserialize<'de>>() -> &'static [&'static str] {
    let mut seen = None;
    let _ = T::deserialize(FieldNameProbe { seen: &mut seen });
    seen.unwrap_or_else(|| {
        panic!(
            "{} is not deserialized as a plain struct",
            std::any::type_name::<T>()
        )
    })
}

struct FieldNameProbe<'a> {
    seen: &'a mut Option<&'static [&'static str]>,
}

impl<'de> Deserializer<'de> for FieldNameProbe<'_> {
    type Error = de::value::Error;

    fn deserialize_any<V: Visitor<'de>>(self, _visitor: V) -> Result<V::Value, Self::Error> {
        Err(de::Error::custom("not a struct"))
    }

    fn deserialize_struct<V: Visitor<'de>>(
        self,
        _name: &'static str,
        fields: &'static [&'static str],
        _visitor: V,
    ) -> Result<V::Value, Self::Error> {
        *self.seen = Some(fields);
        Err(de::Error::custom("field names recorded"))
    }

    serde::forward_to_deserialize_any! {
        bool i8 i16 i32 i64 i128 u8 u16 u32 u64 u128 f32 f64 char str string bytes byte_buf
        option unit unit_struct newtype_struct seq tuple tuple_struct map enum identifier
        ignored_any
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[derive(serde::Deserialize)]
    #[allow(dead_code)]
    struct Sample {
        first: usize,
        #[serde(rename = "second_km")]
        second: Option<f64>,
    }

    #[test]
    fn lists_fields_after_rename() {
        assert_eq!(field_names::<Sample>(), &["first", "second_km"]);
    }

    #[test]
    #[should_panic(expected = "not deserialized as a plain struct")]
    fn refuses_what_is_not_a_struct() {
        field_names::<Vec<f64>>();
    }
}
