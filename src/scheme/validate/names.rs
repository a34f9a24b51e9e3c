//! Names of generated levels: the map form and the groups it can name.
//!
//! Owns: reading a level name written as a map (`{ manifold: S, F: 2,
//! m_F: 2 }`, kept by the raw mirror as its text form) into the generated
//! id it stands for; the groups of generated levels (a whole manifold, and
//! under `resolve: sublevels` each F level) with their zero-field energies;
//! resolving any level reference to one level or one group, and the
//! message for a name that is not there (which generated ids exist).
//! Must not: compute structure (`atom::structure`) or decide where a group
//! is allowed (the concern that reads the reference does).

use super::super::raw::{Id, LEVEL_NAME_KEYS};
use super::levels::Levels;
use super::manifolds::{half_text, hyperfine_id, sublevel_id, ManifoldInfo, Resolve};
use crate::atom::structure::hyperfine_levels;

/// What a level reference names.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(super) enum Named {
    /// One level, by index.
    Level(usize),
    /// A group of generated levels, by index into [`Levels::groups`].
    Group(usize),
}

/// A group of generated levels: a whole manifold, or one F level of a
/// manifold resolved into sublevels.
#[derive(Debug, Clone)]
pub(super) struct Group {
    /// `S` for the manifold, `S_F2` for an F level.
    pub id: String,
    /// Indices of its levels, in generated order.
    pub members: Vec<usize>,
    /// Its zero-field energy (rad/s): the manifold's centre of gravity, or
    /// the F level's hyperfine energy at zero field.
    pub zero_field: f64,
    /// Whether that energy is known.
    pub energy_ok: bool,
}

/// What a manifold generated, for resolving names and for messages.
#[derive(Debug, Clone)]
pub(super) struct Generated {
    pub id: String,
    pub first: usize,
    pub count: usize,
    pub sublevels: bool,
    /// 2F of each F level, ascending.
    pub two_f: Vec<i32>,
}

/// A doubled half-integer written as `2`, `-1/2`, `+3/2` or `1.5`.
fn doubled(text: &str) -> Option<i32> {
    let t = text.trim();
    let x = match t.split_once('/') {
        Some((n, "2")) => n.trim().parse::<f64>().ok()? / 2.0,
        Some(_) => return None,
        None => t.parse::<f64>().ok()?,
    };
    let two = 2.0 * x;
    (two.is_finite() && two.fract() == 0.0 && two.abs() <= 1000.0).then_some(two as i32)
}

/// A name in map form, read: manifold id, 2F and 2m_F where given.
struct MapName {
    manifold: String,
    two_f: Option<i32>,
    two_m: Option<i32>,
}

/// Read the text form of a map name; Err says what is wrong with it.
fn read_map_name(text: &str) -> Result<MapName, String> {
    let inner = text
        .strip_prefix('{')
        .and_then(|t| t.strip_suffix('}'))
        .unwrap_or_default();
    let mut parts: [Option<&str>; 3] = [None, None, None];
    for item in inner.split(", ") {
        let Some((k, v)) = item.split_once(": ") else {
            return Err(format!(
                "'{text}' (not a name of the form {{manifold: S, F: 2, m_F: 2}})"
            ));
        };
        match LEVEL_NAME_KEYS.iter().position(|x| *x == k) {
            Some(slot) => parts[slot] = Some(v),
            None => return Err(format!("'{text}' (an unknown key '{k}')")),
        }
    }
    let manifold = parts[0].unwrap_or_default().to_string();
    let two_f = match parts[1] {
        None => None,
        Some(f) => match doubled(f) {
            Some(t) if t >= 0 => Some(t),
            _ => {
                return Err(format!(
                    "'{text}' (F must be a non-negative multiple of 1/2)"
                ))
            }
        },
    };
    let two_m = match (parts[2], two_f) {
        (None, _) => None,
        (Some(_), None) => return Err(format!("'{text}' (m_F without F)")),
        (Some(m), Some(tf)) => match doubled(m) {
            Some(tm) if tm.abs() <= tf && (tf - tm) % 2 == 0 => Some(tm),
            _ => {
                return Err(format!(
                    "'{text}' (m_F must be one of -F, -F+1, ..., F for F = {})",
                    half_text(tf)
                ))
            }
        },
    };
    Ok(MapName {
        manifold,
        two_f,
        two_m,
    })
}

/// The generated id a name in map form stands for (`S_F2_m+2`, `S_F2`,
/// `S`): None for a text that is not in map form.
pub(crate) fn generated_id(text: &str) -> Option<String> {
    if !text.starts_with('{') {
        return None;
    }
    map_name_id(text).ok()
}

/// The generated id of a name in map form, or what is wrong with it.
pub(crate) fn map_name_id(text: &str) -> Result<String, String> {
    let n = read_map_name(text)?;
    Ok(match (n.two_f, n.two_m) {
        (Some(f), Some(m)) => sublevel_id(&n.manifold, f, m),
        (Some(f), None) => hyperfine_id(&n.manifold, f),
        _ => n.manifold,
    })
}

/// Record what one manifold generated (its levels are the last `count`
/// of `levels`) and its groups.
pub(super) fn register(levels: &mut Levels, info: &ManifoldInfo, energy_ok: bool) {
    let count = levels.list.len() - info.first;
    let members: Vec<usize> = (info.first..info.first + count).collect();
    let mut two_f: Vec<i32> = match info.resolve {
        Resolve::Sublevels => info.sublevels.iter().map(|s| s.two_f).collect(),
        Resolve::Hyperfine => info.two_f.clone(),
    };
    two_f.sort_unstable();
    two_f.dedup();
    levels.groups.push(Group {
        id: info.id.clone(),
        members,
        zero_field: info.centre,
        energy_ok,
    });
    if info.resolve == Resolve::Sublevels {
        let zero = hyperfine_levels(&info.atom).unwrap_or_default();
        for h in zero {
            let members = info
                .sublevels
                .iter()
                .enumerate()
                .filter(|(_, s)| s.two_f == h.two_f)
                .map(|(k, _)| info.first + k)
                .collect();
            levels.groups.push(Group {
                id: hyperfine_id(&info.id, h.two_f),
                members,
                zero_field: info.centre + h.energy,
                energy_ok,
            });
        }
    }
    levels.generated.push(Generated {
        id: info.id.clone(),
        first: info.first,
        count,
        sublevels: info.resolve == Resolve::Sublevels,
        two_f,
    });
}

impl Generated {
    /// What this manifold's names are, for messages.
    fn describe(&self, levels: &Levels) -> String {
        let fs: Vec<String> = self.two_f.iter().map(|&f| half_text(f)).collect();
        let first = levels.ids().get(self.first).cloned().unwrap_or_default();
        let last = levels
            .ids()
            .get(self.first + self.count.saturating_sub(1))
            .cloned()
            .unwrap_or_default();
        if self.sublevels {
            format!(
                "a level of manifold {}: F = {}, m_F from -F to F (ids {first} ... {last})",
                self.id,
                fs.join(", ")
            )
        } else {
            format!(
                "a level of manifold {} (resolve: hyperfine): F = {} (ids {first} ... {last})",
                self.id,
                fs.join(", ")
            )
        }
    }

    fn contains(&self, i: usize) -> bool {
        (self.first..self.first + self.count).contains(&i)
    }
}

impl Levels {
    /// The group with this id.
    fn group(&self, id: &str) -> Option<usize> {
        self.groups.iter().position(|g| g.id == id)
    }

    /// What a level reference names, or (expected, found) for a message.
    pub(super) fn named(&self, id: &Id) -> Result<Named, (String, String)> {
        let text = id.0.as_str();
        if text.starts_with('{') {
            return self.named_map(text);
        }
        if let Some(i) = self.index_of(text) {
            return Ok(Named::Level(i));
        }
        if let Some(g) = self.group(text) {
            return Ok(Named::Group(g));
        }
        let found = format!("'{text}' (no such level)");
        let by_prefix = self
            .generated
            .iter()
            .find(|g| text.starts_with(&format!("{}_F", g.id)));
        match by_prefix {
            Some(g) => Err((g.describe(self), found)),
            None if !self.generated.is_empty() => Err((
                format!(
                    "a level id ({}), or a generated level as {{ manifold: {}, F: .., m_F: .. }}",
                    super::id_list(self.ids()),
                    self.generated[0].id
                ),
                found,
            )),
            None => Err((
                format!("a level id ({})", super::id_list(self.ids())),
                found,
            )),
        }
    }

    /// A name in map form.
    fn named_map(&self, text: &str) -> Result<Named, (String, String)> {
        let expected = "a generated level { manifold: S, F: 2, m_F: 2 }, an F level \
                        { manifold: S, F: 2 } or a manifold { manifold: S }";
        let n = read_map_name(text).map_err(|e| (expected.to_string(), e))?;
        let Some(g) = self.generated.iter().find(|g| g.id == n.manifold) else {
            let ids: Vec<String> = self.generated.iter().map(|g| g.id.clone()).collect();
            return Err((
                format!("a manifold id ({})", super::id_list(&ids)),
                format!("'{text}' (no manifold '{}')", n.manifold),
            ));
        };
        let missing = || (g.describe(self), format!("'{text}' (no such level)"));
        match (n.two_f, n.two_m) {
            (None, _) => self.group(&g.id).map(Named::Group).ok_or_else(missing),
            (Some(f), None) => {
                if let Some(k) = self.group(&hyperfine_id(&g.id, f)) {
                    return Ok(Named::Group(k));
                }
                match self.index_of(&hyperfine_id(&g.id, f)) {
                    Some(i) if g.contains(i) => Ok(Named::Level(i)),
                    _ => Err(missing()),
                }
            }
            (Some(f), Some(m)) => match self.index_of(&sublevel_id(&g.id, f, m)) {
                Some(i) if g.contains(i) => Ok(Named::Level(i)),
                _ if !g.sublevels => Err((
                    g.describe(self),
                    format!("'{text}' (no m_F under resolve: hyperfine)"),
                )),
                _ => Err(missing()),
            },
        }
    }

    /// `tuned.to`: a pair of references, each a level or a group, naming
    /// different levels.
    pub(super) fn tuning_pair(
        &self,
        ctx: &mut super::Ctx,
        path: &super::super::locate::KeyPath,
        ids: &Option<Vec<Id>>,
    ) -> Option<(Named, Named)> {
        let expected = "a pair [a, b] of level ids, F levels or manifolds";
        let Some(ids) = ids else {
            ctx.missing(path, expected);
            return None;
        };
        if ids.len() != 2 {
            ctx.push(path, expected, format!("a list of {} ids", ids.len()));
            return None;
        }
        let mut one = |k: usize| match self.named(&ids[k]) {
            Ok(n) => Some(n),
            Err(_) if self.of_withheld_manifold(&ids[k].0) => None,
            Err((e, f)) => {
                ctx.push(&path.i(k), e, f);
                None
            }
        };
        let (a, b) = (one(0), one(1));
        let (a, b) = (a?, b?);
        if self.members(a).iter().any(|i| self.members(b).contains(i)) {
            let why = if a == b {
                "the same level twice"
            } else {
                "they share levels"
            };
            ctx.push(
                path,
                "two different levels, F levels or manifolds",
                format!("[{}, {}] ({why})", ids[0].0, ids[1].0),
            );
            return None;
        }
        Some((a, b))
    }

    /// The levels a reference names: one, or a group's members.
    pub(super) fn members(&self, n: Named) -> Vec<usize> {
        match n {
            Named::Level(i) => vec![i],
            Named::Group(g) => self.groups[g].members.clone(),
        }
    }

    /// The energy a reference stands for in `tuned.to` (rad/s): a level's
    /// energy at the field, a group's zero-field energy; None if unknown.
    pub(super) fn tuning_energy(&self, n: Named) -> Option<f64> {
        match n {
            Named::Level(i) => self.energy_ok[i].then_some(self.list[i].omega),
            Named::Group(g) => {
                let g = &self.groups[g];
                g.energy_ok.then_some(g.zero_field)
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn map_names_give_generated_ids() {
        assert_eq!(
            generated_id("{manifold: S, F: 2, m_F: 2}").as_deref(),
            Some("S_F2_m+2")
        );
        assert_eq!(
            generated_id("{manifold: P, F: 3/2, m_F: -0.5}").as_deref(),
            Some("P_F3/2_m-1/2")
        );
        assert_eq!(generated_id("{manifold: S, F: 1}").as_deref(), Some("S_F1"));
        assert_eq!(generated_id("{manifold: S}").as_deref(), Some("S"));
        assert_eq!(generated_id("S_F2_m+2"), None);
        assert!(read_map_name("{manifold: S, F: 1, m_F: 2}").is_err());
        assert!(read_map_name("{manifold: S, F: 1, m_F: 1/2}").is_err());
        assert!(read_map_name("{manifold: S, m_F: 1}").is_err());
        assert!(read_map_name("{manifold: S, F: 2.3}").is_err());
    }
}
