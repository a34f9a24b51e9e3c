//! Overrides of single values of the raw scheme (as a JSON value), for
//! scans and tuning: key paths, walking them, and replacing one value.
//!
//! Owns: the dot-path syntax (`fields.probe.tuned.detuning`,
//! `couplings[0].dipole`), the numeric keys an override may create, the
//! level part of a path (a generated id also finds a key written in map
//! form), and the rule for a polarisation fraction (the other fractions of
//! that field rescale so the sum stays 1). Must not: validate (the
//! overridden raw scheme is validated again as a whole, per point).

use super::locate::{KeyPath, Locator};
use super::raw;
use super::raw::{level_name_text, LEVEL_NAME_KEYS};
use super::validate::{generated_id, map_name_id, polarization_component};
use super::{raw_value, read_raw, Diagnostic, SchemeError};
use serde_json::{Map, Value};

/// The value at a key path as written: the number and its unit (empty for
/// a bare number; "pi" for "0.5 pi"). For headers of scans.
pub fn numeric_value_at(
    text: &str,
    file_name: &str,
    path: &str,
) -> Result<(f64, String), SchemeError> {
    let value = raw_value(&read_raw(text, file_name)?, file_name)?;
    let fail = |kp: &KeyPath, expected: String, found: String| {
        let pos = Locator::new(text).locate(kp);
        SchemeError::one(
            file_name,
            Diagnostic {
                line: pos.map(|p| p.0),
                column: pos.map(|p| p.1),
                path: path.to_string(),
                expected,
                found,
            },
        )
    };
    let segs = split_path(path).map_err(|e| fail(&KeyPath::root(), e.0, e.1))?;
    if let Some(fraction) = polarization::fraction(&value, &segs) {
        return match fraction {
            Ok(p) => Ok((p, String::new())),
            Err((kp, exp, found)) => Err(fail(&kp, exp, found)),
        };
    }
    let (node, kp) = match walk(&value, &segs) {
        Ok(x) => x,
        Err((kp, exp, found)) => return Err(fail(&kp, exp, found)),
    };
    match numeric_of(node) {
        Some(x) => Ok(x),
        None => Err(fail(
            &kp,
            "a path to a numeric value".into(),
            format!("{} (not a number)", describe(node)),
        )),
    }
}

/// A key path with its level parts written as maps (`initial.mixture.
/// {manifold: S, F: 2, m_F: 2}`, spaces optional) rewritten to the
/// generated ids they stand for (`initial.mixture.S_F2_m+2`), so that a
/// scan's columns and hash see one spelling. Err says what is wrong.
/// Whether an override of `path` may move level energies: its first key is
/// `levels` or `manifolds`. Such a scan keeps `tuned` carriers at the
/// scheme's own lines unless asked to follow ([`super::Prepared::with_tuned_follows`]).
pub(crate) fn moves_levels(path: &str) -> bool {
    let first = path.split(['.', '[']).next().unwrap_or_default().trim();
    first == "levels" || first == "manifolds"
}

pub fn level_names_in_path(path: &str) -> Result<String, String> {
    let mut out = String::new();
    let mut rest = path;
    while let Some(open) = rest.find('{') {
        out.push_str(&rest[..open]);
        let Some(close) = rest[open..].find('}') else {
            return Err(format!("'{path}': a '{{' without its '}}'"));
        };
        let inner = &rest[open + 1..open + close];
        let mut parts: [Option<String>; 3] = [None, None, None];
        for item in inner.split(',') {
            let (k, v) = item
                .split_once(':')
                .map(|(k, v)| (k.trim(), v.trim()))
                .ok_or_else(|| format!("'{path}': '{item}' is not KEY: VALUE"))?;
            let slot = LEVEL_NAME_KEYS
                .iter()
                .position(|x| *x == k)
                .ok_or_else(|| {
                    format!("'{path}': a level name takes manifold, F, m_F, not '{k}'")
                })?;
            parts[slot] = Some(v.to_string());
        }
        if parts[0].is_none() {
            return Err(format!("'{path}': a level name needs its manifold"));
        }
        let id = map_name_id(&level_name_text(&parts)).map_err(|e| format!("'{path}': {e}"))?;
        out.push_str(&id);
        rest = &rest[open + close + 1..];
    }
    out.push_str(rest);
    Ok(out)
}

/// Split "a.b[2].c" / "a.b.2.c" into segments (indices stay text until the
/// node they index is known).
fn split_path(path: &str) -> Result<Vec<String>, (String, String)> {
    let mut out = Vec::new();
    for part in path.split('.') {
        let mut rest = part;
        // key[1][2]
        let key_end = rest.find('[').unwrap_or(rest.len());
        if key_end > 0 {
            out.push(rest[..key_end].to_string());
        }
        rest = &rest[key_end..];
        while let Some(r) = rest.strip_prefix('[') {
            let Some(close) = r.find(']') else {
                return Err((
                    "a key path like fields.probe.tuned.detuning".into(),
                    format!("'{path}'"),
                ));
            };
            out.push(r[..close].to_string());
            rest = &r[close + 1..];
        }
        if !rest.is_empty() || (key_end == 0 && part.is_empty()) {
            return Err((
                "a key path like fields.probe.tuned.detuning".into(),
                format!("'{path}'"),
            ));
        }
    }
    Ok(out)
}

type WalkErr = (KeyPath, String, String);

/// A field's polarisation fractions as override paths
/// (`fields.pump.polarization.sigma+`).
mod polarization {
    use super::{describe, numeric_of, polarization_component, walk, walk_mut, KeyPath, WalkErr};
    use serde_json::{Map, Value};

    /// The field path and the component (0: sigma-, 1: pi, 2: sigma+) of
    /// a polarisation fraction path.
    fn parts(segs: &[String]) -> Option<(&[String], &str, usize)> {
        match segs {
            [f, _, p, c] if f == "fields" && p == "polarization" => {
                Some((&segs[..3], c.as_str(), polarization_component(c)?))
            }
            _ => None,
        }
    }

    /// The fractions (key as written, component, fraction) of a
    /// polarisation value: a name is all in one component.
    fn entries(node: &Value, kp: &KeyPath) -> Result<Vec<(String, usize, f64)>, WalkErr> {
        let bad = || {
            (
                kp.clone(),
                "a polarisation (sigma+, sigma-, pi, or a map of those to bare fractions)".into(),
                describe(node),
            )
        };
        match node {
            Value::String(name) => {
                let k = polarization_component(name).ok_or_else(bad)?;
                Ok(vec![(name.clone(), k, 1.0)])
            }
            Value::Object(m) => m
                .iter()
                .map(|(key, v)| {
                    let k = polarization_component(key)?;
                    match numeric_of(v)? {
                        (x, u) if u.is_empty() => Some((key.clone(), k, x)),
                        _ => None,
                    }
                })
                .collect::<Option<Vec<_>>>()
                .ok_or_else(bad),
            _ => Err(bad()),
        }
    }

    /// The fraction a path names, as the scheme writes it (a name gives 1
    /// or 0); None where the path is not a polarisation fraction.
    pub(super) fn fraction(root: &Value, segs: &[String]) -> Option<Result<f64, WalkErr>> {
        let (field, _, k) = parts(segs)?;
        Some(walk(root, field).and_then(|(node, kp)| {
            let e = entries(node, &kp)?;
            Ok(e.iter().filter(|x| x.1 == k).map(|x| x.2).sum())
        }))
    }

    /// Set one polarisation fraction to `new` (a bare number): the other
    /// fractions of the field rescale in proportion so the sum stays 1
    /// (a name becomes a map). Refused where the others are all zero and
    /// the new fraction is below 1 (nothing to rescale). None where the
    /// path is not a polarisation fraction.
    pub(super) fn set(
        root: &mut Value,
        segs: &[String],
        new: &str,
    ) -> Result<Option<KeyPath>, WalkErr> {
        let Some((field, comp, k)) = parts(segs) else {
            return Ok(None);
        };
        let (node, kp) = walk(root, field)?;
        let e = entries(node, &kp)?;
        let x = match crate::units::split_quantity(new) {
            Some((x, u)) if u.is_empty() && x.is_finite() => x,
            _ => {
                return Err((
                    kp.k(comp),
                    "a bare intensity fraction between 0 and 1".into(),
                    format!("'{new}'"),
                ))
            }
        };
        let rest: f64 = e.iter().filter(|x| x.1 != k).map(|x| x.2).sum();
        if rest <= 0.0 && x != 1.0 {
            return Err((
                kp.k(comp),
                "other polarisation fractions to share the remainder (they rescale in \
                 proportion; write the component that should take it, e.g. pi: 0)"
                    .into(),
                format!("{} (only {comp})", describe(node)),
            ));
        }
        let scale = if rest > 0.0 { (1.0 - x) / rest } else { 0.0 };
        let num = |v: f64| serde_json::Number::from_f64(v).map_or(Value::Null, Value::Number);
        let mut out = Map::new();
        let mut key_set = None;
        for (key, j, v) in e {
            if j != k {
                out.insert(key, num(v * scale));
            } else if key_set.is_none() {
                out.insert(key.clone(), num(x));
                key_set = Some(key);
            }
        }
        let key = key_set.unwrap_or_else(|| {
            out.insert(comp.to_string(), num(x));
            comp.to_string()
        });
        if let Some(slot) = walk_mut(root, field) {
            *slot = Value::Object(out);
        }
        Ok(Some(kp.k(&key)))
    }
}

fn describe(v: &Value) -> String {
    match v {
        Value::Object(_) => "a mapping".into(),
        Value::Array(_) => "a list".into(),
        Value::String(s) => format!("'{s}'"),
        Value::Number(n) => format!("'{}'", n.as_f64().map_or(n.to_string(), raw::format_number)),
        Value::Bool(b) => format!("'{b}'"),
        Value::Null => "an empty value".into(),
    }
}

/// Follow a path through a value tree.
fn walk<'v>(root: &'v Value, segs: &[String]) -> Result<(&'v Value, KeyPath), WalkErr> {
    let mut node = root;
    let mut kp = KeyPath::root();
    for s in segs {
        match node {
            Value::Object(m) => match key_of(m, s) {
                Some(key) => {
                    node = &m[key];
                    kp = kp.k(key);
                }
                None => {
                    let keys: Vec<&str> = m.keys().map(String::as_str).collect();
                    return Err((
                        kp.clone(),
                        format!("one of the keys here ({})", keys.join(", ")),
                        format!(
                            "'{s}' (no such key under '{}')",
                            if kp.0.is_empty() {
                                "the top level".to_string()
                            } else {
                                kp.to_string()
                            }
                        ),
                    ));
                }
            },
            Value::Array(v) => match s.parse::<usize>() {
                Ok(i) if i < v.len() => {
                    node = &v[i];
                    kp = kp.i(i);
                }
                _ => {
                    return Err((
                        kp.clone(),
                        format!("an index 0..{} into the list {kp}", v.len()),
                        format!("'{s}'"),
                    ))
                }
            },
            other => {
                return Err((
                    kp.clone(),
                    format!("a mapping or list at '{kp}' to follow '{s}' into"),
                    describe(other),
                ))
            }
        }
    }
    Ok((node, kp))
}

/// The key of `m` a path segment `s` names: `s` itself, or a level written
/// in map form whose generated id is `s` (`initial.mixture.S_F2_m+2` finds
/// the key `{ manifold: S, F: 2, m_F: 2 }`).
fn key_of<'m>(m: &'m Map<String, Value>, s: &str) -> Option<&'m str> {
    if let Some((k, _)) = m.get_key_value(s) {
        return Some(k);
    }
    m.keys()
        .find(|k| generated_id(k).as_deref() == Some(s))
        .map(String::as_str)
}

/// Number and unit of a scalar, if it is numeric.
fn numeric_of(v: &Value) -> Option<(f64, String)> {
    match v {
        Value::Number(n) => n.as_f64().map(|x| (x, String::new())),
        Value::String(s) => crate::units::split_quantity(s),
        _ => None,
    }
}

/// Numeric keys the format knows, by the shape of their path, so that an
/// override may set one the file leaves out (e.g. `solver.rtol`).
fn known_numeric_key(segs: &[String]) -> bool {
    let s: Vec<&str> = segs.iter().map(|x| x.as_str()).collect();
    matches!(
        s.as_slice(),
        ["tolerance"]
            | [
                "levels",
                _,
                "energy" | "lifetime" | "linewidth" | "tolerance"
            ]
            | [
                "fields",
                _,
                "frequency" | "wavelength" | "intensity" | "power" | "waist" | "chirp" | "phase"
            ]
            | ["fields", _, "tuned", "detuning"]
            | ["fields", _, "rabi" | "area", "value"]
            | [
                "fields",
                _,
                "envelope",
                "start" | "duration" | "center" | "fwhm" | "sigma" | "tau"
            ]
            | [
                "couplings",
                _,
                "dipole" | "einstein_a" | "g_lower" | "g_upper"
            ]
            | ["window", "start" | "end"]
            | ["solver", "rtol" | "atol" | "detuning_cutoff"]
            | ["initial", _]
            | ["magnetic_field"]
            | [
                "manifolds",
                _,
                "energy" | "lifetime" | "linewidth" | "tolerance" | "g_J" | "g_I"
            ]
            | ["manifolds", _, "hyperfine", "A" | "B"]
    )
}

/// Replace the value at `path` by `new`; the key path on success.
pub(super) fn apply_override(root: &mut Value, path: &str, new: &str) -> Result<KeyPath, WalkErr> {
    let segs = split_path(path).map_err(|(e, f)| (KeyPath::root(), e, f))?;
    if segs.is_empty() {
        return Err((KeyPath::root(), "a key path".into(), "an empty path".into()));
    }
    let Some((new_v, _)) = crate::units::split_quantity(new) else {
        return Err((
            KeyPath::root(),
            "a numeric override value (a number, with a unit where the key takes one)".into(),
            format!("'{new}' for {path}"),
        ));
    };
    let replacement = match crate::units::split_quantity(new) {
        Some((_, u)) if u.is_empty() => serde_json::Number::from_f64(new_v)
            .map_or_else(|| Value::String(new.trim().to_string()), Value::Number),
        _ => Value::String(new.trim().to_string()),
    };
    if let Some(kp) = polarization::set(root, &segs, new)? {
        return Ok(kp);
    }
    let (parent_segs, last) = segs.split_at(segs.len() - 1);
    let last = &last[0];
    // Where the key is absent but known, create it (and a missing window or
    // solver mapping).
    let exists = walk(root, &segs).is_ok();
    if !exists && known_numeric_key(&segs) {
        if parent_segs.len() == 1 && (parent_segs[0] == "window" || parent_segs[0] == "solver") {
            if let Value::Object(m) = root {
                if !m.contains_key(&parent_segs[0]) {
                    m.insert(parent_segs[0].clone(), Value::Object(Map::new()));
                }
            }
        }
        if let [m, id, h] = parent_segs {
            // A manifold's missing `hyperfine:` mapping.
            if let (Some(Value::Object(man)), "manifolds", "hyperfine") = (
                walk_mut(root, &[m.clone(), id.clone()]),
                m.as_str(),
                h.as_str(),
            ) {
                man.entry("hyperfine")
                    .or_insert_with(|| Value::Object(Map::new()));
            }
        }
        if let Ok((Value::Object(_), _)) = walk(root, parent_segs) {
            let parent = walk_mut(root, parent_segs);
            if let Some(Value::Object(m)) = parent {
                m.insert(last.clone(), replacement);
                let (_, kp) = walk(root, &segs)?;
                return Ok(kp);
            }
        }
    }
    let (node, kp) = walk(root, &segs)?;
    if numeric_of(node).is_none() {
        return Err((
            kp,
            "a path to a numeric value".into(),
            format!("{} (not a number)", describe(node)),
        ));
    }
    if let Some(slot) = walk_mut(root, &segs) {
        *slot = replacement;
    }
    Ok(kp)
}

fn walk_mut<'v>(root: &'v mut Value, segs: &[String]) -> Option<&'v mut Value> {
    let mut node = root;
    for s in segs {
        node = match node {
            Value::Object(m) => {
                let key = key_of(m, s)?.to_string();
                m.get_mut(&key)?
            }
            Value::Array(v) => v.get_mut(s.parse::<usize>().ok()?)?,
            _ => return None,
        };
    }
    Some(node)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rewrites_level_names_in_paths() {
        assert_eq!(
            level_names_in_path("initial.mixture.{manifold: S, F: 2, m_F: -2}").unwrap(),
            "initial.mixture.S_F2_m-2"
        );
        assert_eq!(
            level_names_in_path("initial.{manifold:P,F:1.5,m_F:0.5}").unwrap(),
            "initial.P_F3/2_m+1/2"
        );
        assert_eq!(level_names_in_path("a.b").unwrap(), "a.b");
        assert!(level_names_in_path("initial.{manifold: S, F: 1, m_F: 2}").is_err());
        assert!(level_names_in_path("initial.{F: 1}").is_err());
        assert!(level_names_in_path("initial.{manifold: S").is_err());
    }

    #[test]
    fn splits_paths() {
        assert_eq!(
            split_path("couplings[1].dipole").unwrap(),
            vec!["couplings", "1", "dipole"]
        );
        assert_eq!(split_path("a.b.2.c").unwrap(), vec!["a", "b", "2", "c"]);
        assert!(split_path("a..b").is_err());
        assert!(split_path("a[1").is_err());
    }

    #[test]
    fn level_and_manifold_paths_move_levels() {
        for p in [
            "levels.e.energy",
            "manifolds.S.hyperfine.A",
            "levels[1].energy",
        ] {
            assert!(moves_levels(p), "{p}");
        }
        for p in [
            "magnetic_field",
            "fields.probe.tuned.detuning",
            "levelsx.a",
            "initial.g",
        ] {
            assert!(!moves_levels(p), "{p}");
        }
    }
}
