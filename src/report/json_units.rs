//! The unit changes of the serialised reports, and the spelling of the two
//! enums the reports hold but do not own ([`Order`], [`MethodUsed`]).
//!
//! Owns: every conversion from the SI numbers inside the report types to
//! the unit a JSON key names (`_mhz` from rad/s or Hz, `_nm` from m,
//! `_w_per_cm2` from W/m^2). Each helper is a `serialize_with` function
//! named after the unit it writes. Must not: round, or change anything but
//! the unit; the arithmetic here is the documented unit change only, done
//! in the same order as before the reports derived `Serialize` so that the
//! output keeps every bit (tests/cli/json_golden.rs).

use crate::estimate::Order;
use crate::model::{Dynamics, InitialKind, Readout};
use crate::solve::MethodUsed;
use serde::{Serialize, Serializer};

const TWO_PI: f64 = 2.0 * std::f64::consts::PI;

/// rad/s written as MHz (cyclic).
pub(super) fn mhz<S: Serializer>(omega: &f64, s: S) -> Result<S::Ok, S::Error> {
    s.serialize_f64(*omega / TWO_PI / 1e6)
}

/// rad/s that serialises as MHz, for a hand-written `Serialize`.
pub(super) struct Mhz(pub(super) f64);

impl Serialize for Mhz {
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        mhz(&self.0, s)
    }
}

/// A cyclic frequency in Hz written as MHz.
pub(super) fn hz_as_mhz<S: Serializer>(hz: &f64, s: S) -> Result<S::Ok, S::Error> {
    s.serialize_f64(*hz / 1e6)
}

/// Metres written as nanometres.
pub(super) fn nm<S: Serializer>(m: &f64, s: S) -> Result<S::Ok, S::Error> {
    s.serialize_f64(*m * 1e9)
}

/// Metres written as nanometres; None as null.
pub(super) fn nm_opt<S: Serializer>(m: &Option<f64>, s: S) -> Result<S::Ok, S::Error> {
    m.map(|m| m * 1e9).serialize(s)
}

/// W/m^2 written as W/cm^2; None (unknown) as null.
pub(super) fn w_per_cm2_opt<S: Serializer>(i: &Option<f64>, s: S) -> Result<S::Ok, S::Error> {
    i.map(|i| i * 1e-4).serialize(s)
}

/// An angular momentum quantum number (J, F, m_F): a whole number as a
/// JSON integer (`2`, `-1`), a half-integer as a number with its fraction
/// (`1.5`). No unit: the value is written as it is.
pub(super) fn half<S: Serializer>(x: &f64, s: S) -> Result<S::Ok, S::Error> {
    if x.fract() == 0.0 && x.abs() < 1e9 {
        s.serialize_i64(*x as i64)
    } else {
        s.serialize_f64(*x)
    }
}

/// [`half`] of a value that may be absent (the key is then skipped).
pub(super) fn half_opt<S: Serializer>(x: &Option<f64>, s: S) -> Result<S::Ok, S::Error> {
    match x {
        Some(x) => half(x, s),
        None => s.serialize_none(),
    }
}

/// The estimate order as a word: `initial`, `none`, `first`, `second`.
pub(super) fn order<S: Serializer>(o: &Order, s: S) -> Result<S::Ok, S::Error> {
    s.serialize_str(order_word(*o))
}

pub(super) fn order_word(o: Order) -> &'static str {
    match o {
        Order::Initial => "initial",
        Order::Unreached => "none",
        Order::First => "first",
        Order::Second => "second",
    }
}

/// The propagator used: `exact` or `adaptive`.
pub(super) fn method<S: Serializer>(m: &MethodUsed, s: S) -> Result<S::Ok, S::Error> {
    s.serialize_str(match m {
        MethodUsed::Exact => "exact",
        MethodUsed::Adaptive => "adaptive",
    })
}

/// The equation that ran: `amplitudes` or `density_matrix`.
pub(super) fn dynamics<S: Serializer>(d: &Dynamics, s: S) -> Result<S::Ok, S::Error> {
    s.serialize_str(match d {
        Dynamics::DensityMatrix => "density_matrix",
        Dynamics::Amplitudes | Dynamics::Auto => "amplitudes",
    })
}

/// The readout: `window_end`, `settled`, or the time in seconds.
pub(super) fn readout<S: Serializer>(r: &Readout, s: S) -> Result<S::Ok, S::Error> {
    match r {
        Readout::WindowEnd => s.serialize_str("window_end"),
        Readout::Settled => s.serialize_str("settled"),
        Readout::At(t) => s.serialize_f64(*t),
    }
}

/// How the initial populations combine: `coherent` (one level or the v1
/// map), `superposition` (written so), `mixture`.
pub(super) fn initial_kind<S: Serializer>(k: &InitialKind, s: S) -> Result<S::Ok, S::Error> {
    s.serialize_str(match k {
        InitialKind::Coherent => "coherent",
        InitialKind::Superposition => "superposition",
        InitialKind::Mixture => "mixture",
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[derive(Serialize)]
    struct Units {
        #[serde(serialize_with = "mhz")]
        a: f64,
        #[serde(serialize_with = "hz_as_mhz")]
        b: f64,
        #[serde(serialize_with = "nm")]
        c: f64,
        #[serde(serialize_with = "nm_opt")]
        d: Option<f64>,
        #[serde(serialize_with = "w_per_cm2_opt")]
        e: Option<f64>,
        #[serde(serialize_with = "w_per_cm2_opt")]
        f: Option<f64>,
        #[serde(serialize_with = "order")]
        g: Order,
        #[serde(serialize_with = "method")]
        h: MethodUsed,
        #[serde(serialize_with = "half")]
        i: f64,
        #[serde(serialize_with = "half")]
        j: f64,
        #[serde(serialize_with = "half_opt")]
        k: Option<f64>,
    }

    #[test]
    fn each_helper_writes_the_unit_it_names() {
        let u = Units {
            a: TWO_PI * 3e6,
            b: 2.5e6,
            c: 780e-9,
            d: None,
            e: Some(25.0),
            f: None,
            g: Order::Unreached,
            h: MethodUsed::Adaptive,
            i: 1.5,
            j: -2.0,
            k: Some(-0.5),
        };
        let v = serde_json::to_value(&u).unwrap();
        assert_eq!(v["a"], 3.0);
        assert_eq!(v["b"], 2.5);
        assert!((v["c"].as_f64().unwrap() - 780.0).abs() < 1e-9);
        assert!(v["d"].is_null());
        assert_eq!(v["e"], 25.0 * 1e-4);
        assert!(v["f"].is_null());
        assert_eq!(v["g"], "none");
        assert_eq!(v["h"], "adaptive");
        let t = serde_json::to_string(&u).unwrap();
        assert!(t.contains("\"i\":1.5,\"j\":-2,\"k\":-0.5"), "{t}");
    }

    #[test]
    fn non_finite_numbers_become_null_not_nan() {
        // The app refuses non-finite reports before rendering; should one
        // slip through, JSON still parses.
        let mut buf = Vec::new();
        mhz(&f64::NAN, &mut serde_json::Serializer::new(&mut buf)).unwrap();
        assert_eq!(buf, b"null");
    }
}
