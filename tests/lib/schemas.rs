//! docs/schemas.md against the wire types: every object of every schema has its section there,
//! listing exactly its keys, so a key added to a type without a line in the docs (or a line
//! left for a key that is gone) fails here.
//!
//! The keys are read from the types themselves: a small serde `Deserializer` walks each
//! document type the way `serde_json` would and records every struct with its field names
//! (serde hands them over in `deserialize_struct`), following options, lists and nested
//! objects, so an optional block that no example output happens to contain is checked too.

use std::cell::RefCell;
use std::collections::{BTreeMap, BTreeSet};

use serde::de::value::{Error, StrDeserializer};
use serde::de::{self, DeserializeSeed, Deserializer, IntoDeserializer, Visitor};

/// Struct name → field names, over every type reached.
type Seen = RefCell<BTreeMap<&'static str, Vec<&'static str>>>;

struct Tracer<'a> {
    seen: &'a Seen,
    depth: usize,
}

impl<'a> Tracer<'a> {
    fn deeper(&self) -> Tracer<'a> {
        Tracer { seen: self.seen, depth: self.depth + 1 }
    }
}

macro_rules! scalar {
    ($($name:ident => $visit:ident($v:expr)),* $(,)?) => {
        $(fn $name<V: Visitor<'de>>(self, visitor: V) -> Result<V::Value, Error> {
            visitor.$visit($v)
        })*
    };
}

impl<'de> Deserializer<'de> for Tracer<'_> {
    type Error = Error;

    fn deserialize_any<V: Visitor<'de>>(self, visitor: V) -> Result<V::Value, Error> {
        // Only the params file's numbers read "any" (to name a wrong type in the message).
        visitor.visit_f64(0.0)
    }

    scalar! {
        deserialize_bool => visit_bool(false),
        deserialize_i8 => visit_i64(0),
        deserialize_i16 => visit_i64(0),
        deserialize_i32 => visit_i64(0),
        deserialize_i64 => visit_i64(0),
        deserialize_u8 => visit_u64(0),
        deserialize_u16 => visit_u64(0),
        deserialize_u32 => visit_u64(0),
        deserialize_u64 => visit_u64(0),
        deserialize_f32 => visit_f64(0.0),
        deserialize_f64 => visit_f64(0.0),
        deserialize_char => visit_char('x'),
        deserialize_str => visit_str(""),
        deserialize_string => visit_str(""),
        deserialize_bytes => visit_bytes(&[]),
        deserialize_byte_buf => visit_bytes(&[]),
        deserialize_identifier => visit_str(""),
    }

    fn deserialize_unit<V: Visitor<'de>>(self, visitor: V) -> Result<V::Value, Error> {
        visitor.visit_unit()
    }

    fn deserialize_ignored_any<V: Visitor<'de>>(self, visitor: V) -> Result<V::Value, Error> {
        visitor.visit_unit()
    }

    fn deserialize_option<V: Visitor<'de>>(self, visitor: V) -> Result<V::Value, Error> {
        visitor.visit_some(self)
    }

    fn deserialize_unit_struct<V: Visitor<'de>>(
        self,
        _name: &'static str,
        visitor: V,
    ) -> Result<V::Value, Error> {
        visitor.visit_unit()
    }

    fn deserialize_newtype_struct<V: Visitor<'de>>(
        self,
        _name: &'static str,
        visitor: V,
    ) -> Result<V::Value, Error> {
        visitor.visit_newtype_struct(self)
    }

    fn deserialize_seq<V: Visitor<'de>>(self, visitor: V) -> Result<V::Value, Error> {
        visitor.visit_seq(Items { tracer: self.deeper(), left: 1 })
    }

    fn deserialize_tuple<V: Visitor<'de>>(self, len: usize, visitor: V) -> Result<V::Value, Error> {
        visitor.visit_seq(Items { tracer: self.deeper(), left: len })
    }

    fn deserialize_tuple_struct<V: Visitor<'de>>(
        self,
        _name: &'static str,
        len: usize,
        visitor: V,
    ) -> Result<V::Value, Error> {
        self.deserialize_tuple(len, visitor)
    }

    fn deserialize_map<V: Visitor<'de>>(self, _visitor: V) -> Result<V::Value, Error> {
        Err(de::Error::custom("a wire type with free-form keys (a map) cannot be documented"))
    }

    fn deserialize_struct<V: Visitor<'de>>(
        self,
        name: &'static str,
        fields: &'static [&'static str],
        visitor: V,
    ) -> Result<V::Value, Error> {
        if self.depth > 12 {
            return Err(de::Error::custom("too deep"));
        }
        {
            let mut seen = self.seen.borrow_mut();
            if let Some(before) = seen.get(name)
                && before.as_slice() != fields
            {
                return Err(de::Error::custom(format!(
                    "two wire types are both called {name}: give one its own name"
                )));
            }
            seen.insert(name, fields.to_vec());
        }
        visitor.visit_map(Fields { tracer: self.deeper(), fields, next: 0 })
    }

    fn deserialize_enum<V: Visitor<'de>>(
        self,
        _name: &'static str,
        variants: &'static [&'static str],
        visitor: V,
    ) -> Result<V::Value, Error> {
        visitor.visit_enum(Variant { first: variants.first().copied().unwrap_or("") })
    }
}

struct Items<'a> {
    tracer: Tracer<'a>,
    left: usize,
}

impl<'de> de::SeqAccess<'de> for Items<'_> {
    type Error = Error;
    fn next_element_seed<T: DeserializeSeed<'de>>(
        &mut self,
        seed: T,
    ) -> Result<Option<T::Value>, Error> {
        if self.left == 0 {
            return Ok(None);
        }
        self.left -= 1;
        seed.deserialize(Tracer { seen: self.tracer.seen, depth: self.tracer.depth }).map(Some)
    }
}

struct Fields<'a> {
    tracer: Tracer<'a>,
    fields: &'static [&'static str],
    next: usize,
}

impl<'de> de::MapAccess<'de> for Fields<'_> {
    type Error = Error;
    fn next_key_seed<K: DeserializeSeed<'de>>(
        &mut self,
        seed: K,
    ) -> Result<Option<K::Value>, Error> {
        let Some(name) = self.fields.get(self.next) else { return Ok(None) };
        self.next += 1;
        let key: StrDeserializer<'_, Error> = name.into_deserializer();
        seed.deserialize(key).map(Some)
    }
    fn next_value_seed<S: DeserializeSeed<'de>>(&mut self, seed: S) -> Result<S::Value, Error> {
        seed.deserialize(Tracer { seen: self.tracer.seen, depth: self.tracer.depth })
    }
}

struct Variant {
    first: &'static str,
}

impl<'de> de::EnumAccess<'de> for Variant {
    type Error = Error;
    type Variant = Self;
    fn variant_seed<S: DeserializeSeed<'de>>(self, seed: S) -> Result<(S::Value, Self), Error> {
        let key: StrDeserializer<'_, Error> = self.first.into_deserializer();
        Ok((seed.deserialize(key)?, self))
    }
}

impl<'de> de::VariantAccess<'de> for Variant {
    type Error = Error;
    fn unit_variant(self) -> Result<(), Error> {
        Ok(())
    }
    fn newtype_variant_seed<T: DeserializeSeed<'de>>(self, _seed: T) -> Result<T::Value, Error> {
        Err(de::Error::custom("data-carrying enums are not used on the wire"))
    }
    fn tuple_variant<V: Visitor<'de>>(self, _len: usize, _v: V) -> Result<V::Value, Error> {
        Err(de::Error::custom("data-carrying enums are not used on the wire"))
    }
    fn struct_variant<V: Visitor<'de>>(
        self,
        _fields: &'static [&'static str],
        _v: V,
    ) -> Result<V::Value, Error> {
        Err(de::Error::custom("data-carrying enums are not used on the wire"))
    }
}

/// Every struct reachable from `T`, with its fields.
fn shapes<T: serde::de::DeserializeOwned>() -> BTreeMap<&'static str, Vec<&'static str>> {
    let seen = Seen::default();
    if let Err(e) = T::deserialize(Tracer { seen: &seen, depth: 0 }) {
        panic!("{}: {e}", std::any::type_name::<T>());
    }
    seen.into_inner()
}

/// docs/schemas.md as `type name → documented keys`: each `### `Name`` heading followed by a
/// table whose rows start with `` | `key` ``.
fn documented() -> BTreeMap<String, BTreeSet<String>> {
    let path = concat!(env!("CARGO_MANIFEST_DIR"), "/docs/schemas.md");
    let text = std::fs::read_to_string(path).expect("docs/schemas.md");
    let mut out: BTreeMap<String, BTreeSet<String>> = BTreeMap::new();
    let mut current: Option<String> = None;
    for line in text.lines() {
        if let Some(h) = line.strip_prefix("### `") {
            let name = h.split('`').next().unwrap_or("").to_string();
            assert!(!out.contains_key(&name), "docs/schemas.md documents {name} twice");
            out.insert(name.clone(), BTreeSet::new());
            current = Some(name);
        } else if line.starts_with("#") {
            current = None;
        } else if let (Some(name), Some(row)) = (&current, line.strip_prefix("| `")) {
            let key = row.split('`').next().unwrap_or("").to_string();
            out.get_mut(name).map(|s| s.insert(key));
        }
    }
    out
}

#[test]
fn every_key_of_every_schema_is_documented_in_docs_schemas_md() {
    use swingfit::report::wire;
    let mut all = BTreeMap::new();
    all.extend(shapes::<wire::fit::FitDoc>());
    all.extend(shapes::<wire::compare::CompareDoc>());
    all.extend(shapes::<wire::batch::BatchRowDoc>());
    all.extend(shapes::<wire::check::CheckDoc>());
    all.extend(shapes::<wire::sheet::SheetDoc>());
    all.extend(shapes::<wire::params::PlainParams>());
    assert!(all.len() > 20, "the tracer found only {} types", all.len());
    let docs = documented();
    let mut problems = Vec::new();
    for (name, fields) in &all {
        let Some(keys) = docs.get(*name) else {
            problems.push(format!("{name}: no section \"### `{name}`\" in docs/schemas.md"));
            continue;
        };
        for f in fields {
            if !keys.contains(*f) {
                problems.push(format!("{name}.{f}: not documented"));
            }
        }
        for k in keys {
            if !fields.contains(&k.as_str()) {
                problems.push(format!("{name}.{k}: documented but not a key of the type"));
            }
        }
    }
    for name in docs.keys() {
        if !all.contains_key(name.as_str()) {
            problems.push(format!("{name}: documented but no wire type has that name"));
        }
    }
    assert!(problems.is_empty(), "docs/schemas.md is out of step:\n{}", problems.join("\n"));
}

#[test]
fn the_tracer_sees_a_missing_key() {
    // The check above can fail: a type with a key the docs do not list is reported.
    #[derive(serde::Deserialize)]
    #[allow(dead_code)]
    struct Estimated {
        value: f64,
        std: f64,
        ci95: [f64; 2],
        unit: String,
        not_in_the_docs: Option<u32>,
    }
    let seen = shapes::<Estimated>();
    let docs = documented();
    let keys = docs.get("Estimated").expect("Estimated is documented");
    assert!(seen["Estimated"].iter().any(|f| !keys.contains(*f)));
}
