//! The serde mirror of a scheme file: the YAML shape, nothing more.
//!
//! Owns: the key names (unknown keys are refused through
//! `deny_unknown_fields`), the order of maps as written, and the raw scalar
//! text of every value. Must not: interpret units, check ranges or look up
//! ids; that is `validate`'s job, which collects every problem at once. So
//! almost every key is optional here and scalars are kept as written.

use serde::de::{self, Deserializer, MapAccess, Visitor};
use serde::ser::{SerializeMap, Serializer};
use serde::{Deserialize, Serialize};
use std::fmt;

/// A scalar as written: a string, a number or a boolean.
#[derive(Debug, Clone, PartialEq)]
pub enum Scalar {
    Str(String),
    Num(f64),
    Bool(bool),
}

impl Scalar {
    /// The value as text, for messages and for unit parsing.
    pub fn text(&self) -> String {
        match self {
            Scalar::Str(s) => s.clone(),
            Scalar::Num(x) => format_number(*x),
            Scalar::Bool(b) => b.to_string(),
        }
    }
}

/// A number printed compactly: plain for ordinary magnitudes, exponent form
/// for very small or very large ones.
pub fn format_number(x: f64) -> String {
    let a = x.abs();
    if a == 0.0 || (1e-4..1e7).contains(&a) || !x.is_finite() {
        format!("{x}")
    } else {
        format!("{x:e}")
    }
}

impl<'de> Deserialize<'de> for Scalar {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct V;
        impl Visitor<'_> for V {
            type Value = Scalar;
            fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
                f.write_str("a single value (a number, or a string such as \"5 MHz\")")
            }
            fn visit_bool<E: de::Error>(self, v: bool) -> Result<Scalar, E> {
                Ok(Scalar::Bool(v))
            }
            fn visit_i64<E: de::Error>(self, v: i64) -> Result<Scalar, E> {
                Ok(Scalar::Num(v as f64))
            }
            fn visit_u64<E: de::Error>(self, v: u64) -> Result<Scalar, E> {
                Ok(Scalar::Num(v as f64))
            }
            fn visit_i128<E: de::Error>(self, v: i128) -> Result<Scalar, E> {
                Ok(Scalar::Num(v as f64))
            }
            fn visit_u128<E: de::Error>(self, v: u128) -> Result<Scalar, E> {
                Ok(Scalar::Num(v as f64))
            }
            fn visit_f64<E: de::Error>(self, v: f64) -> Result<Scalar, E> {
                Ok(Scalar::Num(v))
            }
            fn visit_str<E: de::Error>(self, v: &str) -> Result<Scalar, E> {
                Ok(Scalar::Str(v.to_string()))
            }
        }
        d.deserialize_any(V)
    }
}

/// An id (level or field) as written. Plain numbers are accepted and read as
/// their text, so `levels: {1: ...}` and `initial: 1` agree. A map
/// `{ manifold: S, F: 2, m_F: 2 }` (a generated level's name) is kept as its
/// text form ([`level_name_text`]), which the validator resolves.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Id(pub String);

/// Refusal of an id that YAML reads as a floating-point number (`1.5`,
/// `1e3`, `.inf`, `.nan`): its text would come back changed (`1.0` as `1`,
/// `-.INF` as `-inf`; found by fuzzing), so it is not taken as an id.
fn float_id<E: de::Error>() -> E {
    E::invalid_value(
        de::Unexpected::Other("a YAML floating-point number"),
        &"an id made of letters, digits, _ ' + or - (quote an id that YAML would read as a number)",
    )
}

impl<'de> Deserialize<'de> for Id {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct V;
        impl<'de> Visitor<'de> for V {
            type Value = Id;
            fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
                f.write_str("an id (or a generated level as { manifold: S, F: 2, m_F: 2 })")
            }
            fn visit_bool<E: de::Error>(self, v: bool) -> Result<Id, E> {
                Ok(Id(v.to_string()))
            }
            fn visit_i64<E: de::Error>(self, v: i64) -> Result<Id, E> {
                Ok(Id(v.to_string()))
            }
            fn visit_u64<E: de::Error>(self, v: u64) -> Result<Id, E> {
                Ok(Id(v.to_string()))
            }
            fn visit_f64<E: de::Error>(self, _: f64) -> Result<Id, E> {
                Err(float_id())
            }
            fn visit_str<E: de::Error>(self, v: &str) -> Result<Id, E> {
                Ok(Id(v.to_string()))
            }
            fn visit_map<A: MapAccess<'de>>(self, m: A) -> Result<Id, A::Error> {
                level_name(m).map(Id)
            }
        }
        d.deserialize_any(V)
    }
}

/// The keys of a level written as a map, in the order of its text form.
pub const LEVEL_NAME_KEYS: [&str; 3] = ["manifold", "F", "m_F"];

/// The text form of a level name written as a map (`{ manifold: S, F: 2,
/// m_F: 2 }`): `{manifold: S, F: 2, m_F: 2}` with the keys in that order,
/// the absent ones left out and the values as written. It begins with `{`,
/// which no level id may, so the validator tells the two apart; keeping it
/// as text lets the raw scheme round-trip through JSON for scans.
pub fn level_name_text(parts: &[Option<String>; 3]) -> String {
    let inner: Vec<String> = LEVEL_NAME_KEYS
        .iter()
        .zip(parts)
        .filter_map(|(k, v)| v.as_ref().map(|v| format!("{k}: {v}")))
        .collect();
    format!("{{{}}}", inner.join(", "))
}

/// A level name written as a map: only `manifold`, `F` and `m_F`, each
/// once, `manifold` required.
fn level_name<'de, A: MapAccess<'de>>(mut m: A) -> Result<String, A::Error> {
    let mut parts: [Option<String>; 3] = [None, None, None];
    while let Some(k) = m.next_key::<String>()? {
        let Some(slot) = LEVEL_NAME_KEYS.iter().position(|x| *x == k) else {
            return Err(de::Error::unknown_field(&k, &LEVEL_NAME_KEYS));
        };
        let v = m.next_value::<Scalar>()?;
        if parts[slot].replace(v.text()).is_some() {
            return Err(de::Error::duplicate_field(LEVEL_NAME_KEYS[slot]));
        }
    }
    if parts[0].is_none() {
        return Err(de::Error::missing_field("manifold"));
    }
    Ok(level_name_text(&parts))
}

/// A map kept in file order, duplicates kept (the validator reports them).
#[derive(Debug, Clone, PartialEq)]
pub struct Ordered<T>(pub Vec<(Id, T)>);

impl<T> Default for Ordered<T> {
    fn default() -> Self {
        Ordered(Vec::new())
    }
}

impl<'de, T: Deserialize<'de>> Deserialize<'de> for Ordered<T> {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct V<T>(std::marker::PhantomData<T>);
        impl<'de, T: Deserialize<'de>> Visitor<'de> for V<T> {
            type Value = Ordered<T>;
            fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
                f.write_str("a map of id: entry")
            }
            fn visit_map<A: MapAccess<'de>>(self, mut m: A) -> Result<Ordered<T>, A::Error> {
                let mut out = Vec::new();
                while let Some(k) = m.next_key::<Id>()? {
                    let v = m.next_value::<T>()?;
                    out.push((k, v));
                }
                Ok(Ordered(out))
            }
        }
        d.deserialize_map(V(std::marker::PhantomData))
    }
}

/// `initial:` either one level id or a map id -> population (whose one
/// entry may be `mixture:` or `superposition:` holding such a map).
#[derive(Debug, Clone, PartialEq)]
pub enum Initial {
    One(Id),
    Map(Ordered<InitialValue>),
}

/// A value in the `initial:` map: a population, or a nested map (only
/// meaningful under `mixture` or `superposition`; validation says so).
/// Also a field's `polarization:` (a name, or a map of name: fraction).
#[derive(Debug, Clone, PartialEq)]
pub enum InitialValue {
    Population(Option<Scalar>),
    Map(Ordered<Option<Scalar>>),
}

impl<'de> Deserialize<'de> for InitialValue {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct V;
        impl<'de> Visitor<'de> for V {
            type Value = InitialValue;
            fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
                f.write_str("a single value, or a map of id: value")
            }
            fn visit_unit<E: de::Error>(self) -> Result<InitialValue, E> {
                Ok(InitialValue::Population(None))
            }
            fn visit_none<E: de::Error>(self) -> Result<InitialValue, E> {
                Ok(InitialValue::Population(None))
            }
            fn visit_bool<E: de::Error>(self, v: bool) -> Result<InitialValue, E> {
                Ok(InitialValue::Population(Some(Scalar::Bool(v))))
            }
            fn visit_i64<E: de::Error>(self, v: i64) -> Result<InitialValue, E> {
                Ok(InitialValue::Population(Some(Scalar::Num(v as f64))))
            }
            fn visit_u64<E: de::Error>(self, v: u64) -> Result<InitialValue, E> {
                Ok(InitialValue::Population(Some(Scalar::Num(v as f64))))
            }
            fn visit_f64<E: de::Error>(self, v: f64) -> Result<InitialValue, E> {
                Ok(InitialValue::Population(Some(Scalar::Num(v))))
            }
            fn visit_str<E: de::Error>(self, v: &str) -> Result<InitialValue, E> {
                Ok(InitialValue::Population(Some(Scalar::Str(v.to_string()))))
            }
            fn visit_map<A: MapAccess<'de>>(self, m: A) -> Result<InitialValue, A::Error> {
                Ordered::deserialize(de::value::MapAccessDeserializer::new(m))
                    .map(InitialValue::Map)
            }
        }
        d.deserialize_any(V)
    }
}

impl Serialize for InitialValue {
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        match self {
            InitialValue::Population(p) => p.serialize(s),
            InitialValue::Map(m) => m.serialize(s),
        }
    }
}

impl<'de> Deserialize<'de> for Initial {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct V;
        impl<'de> Visitor<'de> for V {
            type Value = Initial;
            fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
                f.write_str("a level id, or a map of level id: population")
            }
            fn visit_bool<E: de::Error>(self, v: bool) -> Result<Initial, E> {
                Ok(Initial::One(Id(v.to_string())))
            }
            fn visit_i64<E: de::Error>(self, v: i64) -> Result<Initial, E> {
                Ok(Initial::One(Id(v.to_string())))
            }
            fn visit_u64<E: de::Error>(self, v: u64) -> Result<Initial, E> {
                Ok(Initial::One(Id(v.to_string())))
            }
            fn visit_f64<E: de::Error>(self, _: f64) -> Result<Initial, E> {
                Err(float_id())
            }
            fn visit_str<E: de::Error>(self, v: &str) -> Result<Initial, E> {
                Ok(Initial::One(Id(v.to_string())))
            }
            fn visit_map<A: MapAccess<'de>>(self, mut m: A) -> Result<Initial, A::Error> {
                let mut out = Vec::new();
                while let Some(k) = m.next_key::<Id>()? {
                    let v = m.next_value::<InitialValue>()?;
                    out.push((k, v));
                }
                Ok(Initial::Map(Ordered(out)))
            }
        }
        d.deserialize_any(V)
    }
}

// Serialization: the raw scheme as a JSON value, for overrides in scans
// (`scheme::Prepared`). Absent keys stay absent; a number stays a number.

impl Serialize for Scalar {
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        match self {
            Scalar::Str(t) => s.serialize_str(t),
            // JSON has no infinities: those are written as their text.
            Scalar::Num(x) if !x.is_finite() => s.serialize_str(&self.text()),
            Scalar::Num(x) => s.serialize_f64(*x),
            Scalar::Bool(b) => s.serialize_bool(*b),
        }
    }
}

impl Serialize for Id {
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        s.serialize_str(&self.0)
    }
}

impl<T: Serialize> Serialize for Ordered<T> {
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        let mut m = s.serialize_map(Some(self.0.len()))?;
        for (k, v) in &self.0 {
            m.serialize_entry(&k.0, v)?;
        }
        m.end()
    }
}

impl Serialize for Initial {
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        match self {
            Initial::One(id) => id.serialize(s),
            Initial::Map(m) => m.serialize(s),
        }
    }
}

/// The whole file.
#[derive(Debug, Clone, Default, Deserialize, Serialize)]
#[serde(deny_unknown_fields, rename = "scheme")]
pub struct RawScheme {
    #[serde(skip_serializing_if = "Option::is_none")]
    pub title: Option<Scalar>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub levels: Option<Ordered<Option<RawLevel>>>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub initial: Option<Initial>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub targets: Option<Vec<Id>>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub tolerance: Option<Scalar>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub couplings: Option<Vec<RawCoupling>>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub fields: Option<Ordered<Option<RawField>>>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub window: Option<RawWindow>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub solver: Option<RawSolver>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub readout: Option<Scalar>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub manifolds: Option<Ordered<Option<RawManifold>>>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub magnetic_field: Option<Scalar>,
}

/// A fine-structure manifold that generates levels.
#[derive(Debug, Clone, Default, Deserialize, Serialize)]
#[serde(deny_unknown_fields, rename = "manifold")]
pub struct RawManifold {
    #[serde(skip_serializing_if = "Option::is_none")]
    pub energy: Option<Scalar>,
    #[serde(rename = "J", skip_serializing_if = "Option::is_none")]
    pub j: Option<Scalar>,
    #[serde(rename = "I", skip_serializing_if = "Option::is_none")]
    pub i: Option<Scalar>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub hyperfine: Option<RawHyperfine>,
    #[serde(rename = "g_J", skip_serializing_if = "Option::is_none")]
    pub g_j: Option<Scalar>,
    #[serde(rename = "g_I", skip_serializing_if = "Option::is_none")]
    pub g_i: Option<Scalar>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub resolve: Option<Scalar>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub lifetime: Option<Scalar>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub linewidth: Option<Scalar>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub tolerance: Option<Scalar>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub label: Option<Scalar>,
}

/// Hyperfine constants A (magnetic dipole) and B (electric quadrupole).
#[derive(Debug, Clone, Default, Deserialize, Serialize)]
#[serde(deny_unknown_fields, rename = "hyperfine")]
pub struct RawHyperfine {
    #[serde(rename = "A", skip_serializing_if = "Option::is_none")]
    pub a: Option<Scalar>,
    #[serde(rename = "B", skip_serializing_if = "Option::is_none")]
    pub b: Option<Scalar>,
}

#[derive(Debug, Clone, Default, Deserialize, Serialize)]
#[serde(deny_unknown_fields, rename = "level")]
pub struct RawLevel {
    #[serde(skip_serializing_if = "Option::is_none")]
    pub energy: Option<Scalar>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub lifetime: Option<Scalar>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub linewidth: Option<Scalar>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub tolerance: Option<Scalar>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub label: Option<Scalar>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub decays_to: Option<Ordered<Option<Scalar>>>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub dephasing: Option<Scalar>,
}

#[derive(Debug, Clone, Default, Deserialize, Serialize)]
#[serde(deny_unknown_fields, rename = "coupling")]
pub struct RawCoupling {
    #[serde(skip_serializing_if = "Option::is_none")]
    pub between: Option<Vec<Id>>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub reduced_dipole: Option<Scalar>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub from_lifetime: Option<Scalar>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub dipole: Option<Scalar>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub einstein_a: Option<Scalar>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub g_lower: Option<Scalar>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub g_upper: Option<Scalar>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub fields: Option<Vec<Id>>,
}

#[derive(Debug, Clone, Default, Deserialize, Serialize)]
#[serde(deny_unknown_fields, rename = "field")]
pub struct RawField {
    #[serde(skip_serializing_if = "Option::is_none")]
    pub frequency: Option<Scalar>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub wavelength: Option<Scalar>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub tuned: Option<RawTuned>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub intensity: Option<Scalar>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub power: Option<Scalar>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub waist: Option<Scalar>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub rabi: Option<RawOnValue>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub area: Option<RawOnValue>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub envelope: Option<RawEnvelope>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub chirp: Option<Scalar>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub phase: Option<Scalar>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub rwa: Option<bool>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub linewidth: Option<Scalar>,
    /// `sigma+ | sigma- | pi` or a map of those to intensity fractions.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub polarization: Option<InitialValue>,
}

#[derive(Debug, Clone, Default, Deserialize, Serialize)]
#[serde(deny_unknown_fields, rename = "tuned")]
pub struct RawTuned {
    #[serde(skip_serializing_if = "Option::is_none")]
    pub to: Option<Vec<Id>>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub detuning: Option<Scalar>,
}

#[derive(Debug, Clone, Default, Deserialize, Serialize)]
#[serde(deny_unknown_fields, rename = "strength")]
pub struct RawOnValue {
    #[serde(skip_serializing_if = "Option::is_none")]
    pub on: Option<Vec<Id>>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub value: Option<Scalar>,
}

#[derive(Debug, Clone, Default, Deserialize, Serialize)]
#[serde(deny_unknown_fields, rename = "envelope")]
pub struct RawEnvelope {
    #[serde(skip_serializing_if = "Option::is_none")]
    pub shape: Option<Scalar>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub start: Option<Scalar>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub duration: Option<Scalar>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub center: Option<Scalar>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub fwhm: Option<Scalar>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub sigma: Option<Scalar>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub tau: Option<Scalar>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub points: Option<Vec<Vec<Option<Scalar>>>>,
}

#[derive(Debug, Clone, Default, Deserialize, Serialize)]
#[serde(deny_unknown_fields, rename = "window")]
pub struct RawWindow {
    #[serde(skip_serializing_if = "Option::is_none")]
    pub start: Option<Scalar>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub end: Option<Scalar>,
}

#[derive(Debug, Clone, Default, Deserialize, Serialize)]
#[serde(deny_unknown_fields, rename = "solver")]
pub struct RawSolver {
    #[serde(skip_serializing_if = "Option::is_none")]
    pub rtol: Option<Scalar>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub atol: Option<Scalar>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub method: Option<Scalar>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub detuning_cutoff: Option<Scalar>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub dynamics: Option<Scalar>,
}
