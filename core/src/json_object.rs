//! Reading JSON objects as objects only. serde's derived structs also take a JSON array, field by
//! field in order (`"distance": [0, 1]` would read as `{"min": 0, "max": 1}`); the file formats
//! and their schemas say objects, so every struct of a file is read through these, and an array
//! where an object belongs is an error.

use std::marker::PhantomData;

use serde::de::value::MapAccessDeserializer;
use serde::de::{Deserialize, Deserializer, MapAccess, Visitor};

/// A `T` read from a JSON object and nothing else.
struct Object<T>(T);

impl<'de, T: Deserialize<'de>> Deserialize<'de> for Object<T> {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct Only<T>(PhantomData<T>);
        impl<'de, T: Deserialize<'de>> Visitor<'de> for Only<T> {
            type Value = T;
            fn expecting(&self, f: &mut std::fmt::Formatter) -> std::fmt::Result {
                f.write_str("an object")
            }
            fn visit_map<A: MapAccess<'de>>(self, map: A) -> Result<T, A::Error> {
                T::deserialize(MapAccessDeserializer::new(map))
            }
        }
        d.deserialize_map(Only(PhantomData)).map(Object)
    }
}

/// A field holding an object (`#[serde(deserialize_with = "object")]`).
pub fn object<'de, D: Deserializer<'de>, T: Deserialize<'de>>(d: D) -> Result<T, D::Error> {
    Object::deserialize(d).map(|o| o.0)
}

/// A field that may hold an object (with `#[serde(default)]`).
pub fn optional_object<'de, D: Deserializer<'de>, T: Deserialize<'de>>(
    d: D,
) -> Result<Option<T>, D::Error> {
    Option::<Object<T>>::deserialize(d).map(|o| o.map(|o| o.0))
}

/// A field holding an array of objects.
pub fn objects<'de, D: Deserializer<'de>, T: Deserialize<'de>>(d: D) -> Result<Vec<T>, D::Error> {
    Vec::<Object<T>>::deserialize(d).map(|v| v.into_iter().map(|o| o.0).collect())
}

/// A field that may hold an array of objects (with `#[serde(default)]`).
pub fn optional_objects<'de, D: Deserializer<'de>, T: Deserialize<'de>>(
    d: D,
) -> Result<Option<Vec<T>>, D::Error> {
    Option::<Vec<Object<T>>>::deserialize(d)
        .map(|v| v.map(|v| v.into_iter().map(|o| o.0).collect()))
}

/// Parses `text`, which must hold one JSON object, into `T`.
pub fn from_object_str<'a, T: Deserialize<'a>>(text: &'a str) -> serde_json::Result<T> {
    let mut de = serde_json::Deserializer::from_str(text);
    let value = object(&mut de)?;
    de.end()?;
    Ok(value)
}
