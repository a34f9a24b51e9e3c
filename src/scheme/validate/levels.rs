//! Levels, and references to them from elsewhere in the file.
//!
//! Owns: the `levels:` map (ids, energies, lifetime or linewidth, per-level
//! tolerance, labels) and [`Levels`], which resolves a level id or a pair
//! `[a, b]` of ids for the other concerns. Must not: know of couplings,
//! fields or drives.

use std::collections::HashMap;

use super::super::locate::KeyPath;
use super::super::raw::{Id, RawScheme};
use super::super::MAX_LEVELS;
use super::ctx::{Ctx, Sign};
use super::first_valid_id;
use super::names::Named;
use crate::model::Level;
use crate::units::Kind;

/// The levels as far as they validated.
pub(super) struct Levels {
    pub list: Vec<Level>,
    /// Whether each level's energy is known (derived checks skip the others).
    pub energy_ok: Vec<bool>,
    index: HashMap<String, usize>,
    ids: Vec<String>,
    /// Ids of manifolds that did not validate: references to the levels
    /// they would have generated (`<id>_F...`) are not reported again.
    withheld: Vec<String>,
    /// Groups of generated levels (`names.rs`).
    pub groups: Vec<super::names::Group>,
    /// What each manifold generated (`names.rs`).
    pub generated: Vec<super::names::Generated>,
}

impl Levels {
    /// A reference to one level (an id, or a generated level in map form):
    /// its index, or a message (a group of generated levels is refused
    /// here; `mixture:` and `tuned.to` read groups through `named`).
    pub fn lookup(&self, ctx: &mut Ctx, path: &KeyPath, id: &Id) -> Option<usize> {
        match self.named(id) {
            Ok(Named::Level(i)) => Some(i),
            // An F = 0 level of a manifold resolved into sublevels is one level.
            Ok(Named::Group(g)) if self.groups[g].members.len() == 1 => {
                Some(self.groups[g].members[0])
            }
            Ok(Named::Group(g)) => {
                ctx.push(
                    path,
                    "one level (a group of generated levels only in mixture: or tuned.to)",
                    format!(
                        "'{}', which names {} levels",
                        id.0,
                        self.groups[g].members.len()
                    ),
                );
                None
            }
            Err(_) if self.of_withheld_manifold(&id.0) => None,
            Err((expected, found)) => {
                ctx.push(path, expected, found);
                None
            }
        }
    }

    /// A pair [a, b] of two distinct known levels.
    pub fn pair(
        &self,
        ctx: &mut Ctx,
        path: &KeyPath,
        ids: &Option<Vec<Id>>,
    ) -> Option<(usize, usize)> {
        let Some(ids) = ids else {
            ctx.missing(path, "a pair of level ids [a, b]");
            return None;
        };
        if ids.len() != 2 {
            ctx.push(
                path,
                "a pair of level ids [a, b]",
                format!("a list of {} ids", ids.len()),
            );
            return None;
        }
        let a = self.lookup(ctx, &path.i(0), &ids[0]);
        let b = self.lookup(ctx, &path.i(1), &ids[1]);
        let (a, b) = (a?, b?);
        if a == b {
            ctx.push(
                path,
                "two different levels",
                format!("[{0}, {0}] (the same level twice)", ids[0].0),
            );
            return None;
        }
        Some((a, b))
    }

    /// The index of a level id, without a message.
    pub fn index_of(&self, id: &str) -> Option<usize> {
        self.index.get(id).copied()
    }

    /// The level ids in file order.
    pub fn ids(&self) -> &[String] {
        &self.ids
    }

    /// A manifold that did not validate (its own message says why): the
    /// levels it would have generated are not reported as unknown.
    pub fn withhold(&mut self, manifold: &str) {
        self.withheld.push(manifold.to_string());
    }

    /// Whether `name` (an id or a name in map form) is a level, F level or
    /// the manifold of a withheld manifold.
    pub(super) fn of_withheld_manifold(&self, name: &str) -> bool {
        let id = super::names::generated_id(name).unwrap_or_else(|| name.to_string());
        self.withheld.iter().any(|m| {
            id.strip_prefix(m.as_str())
                .is_some_and(|r| r.is_empty() || r.starts_with("_F"))
        })
    }

    /// One more level (a generated one), after those of `levels:`.
    pub fn push(&mut self, level: Level, energy_ok: bool) {
        self.index.insert(level.id.clone(), self.list.len());
        self.ids.push(level.id.clone());
        self.list.push(level);
        self.energy_ok.push(energy_ok);
    }
}

// Same steps as fields.rs field_ids (count limit, first valid id): other records.
/// The `levels:` map; None (with a message) when it is missing, empty or
/// too long, since nothing else can be checked without levels (a scheme
/// with `manifolds:` may have no `levels:`).
pub(super) fn levels(raw: &RawScheme, ctx: &mut Ctx) -> Option<Levels> {
    let lp = KeyPath::root().k("levels");
    let raw_levels: &[(Id, Option<super::super::raw::RawLevel>)] =
        raw.levels.as_ref().map(|o| &o.0[..]).unwrap_or(&[]);
    let generated = raw.manifolds.as_ref().is_some_and(|m| !m.0.is_empty());
    if raw_levels.is_empty() && !(generated && raw.levels.is_none()) {
        let found = if raw.levels.is_none() {
            "nothing (the key is missing)"
        } else {
            "an empty level list"
        };
        ctx.push(
            &lp,
            "at least one level (a map of id: {energy: ...})",
            found,
        );
        return None;
    }
    if !ctx.within(&lp, raw_levels.len(), MAX_LEVELS, "levels", "levels") {
        return None;
    }
    let mut out = Levels {
        list: Vec::new(),
        energy_ok: Vec::new(),
        index: HashMap::new(),
        ids: Vec::new(),
        withheld: Vec::new(),
        groups: Vec::new(),
        generated: Vec::new(),
    };
    let mut seen_count: HashMap<String, usize> = HashMap::new();
    for (id, lvl) in raw_levels {
        let id = &id.0;
        let path = lp.k(id);
        if !first_valid_id(ctx, &mut seen_count, &path, id, "level") {
            continue;
        }
        let (level, ok) = level(ctx, id, lvl.as_ref(), &path);
        out.index.insert(id.clone(), out.list.len());
        out.list.push(level);
        out.energy_ok.push(ok);
    }
    out.ids = out.list.iter().map(|l| l.id.clone()).collect();
    Some(out)
}

/// One level; the flag tells whether its energy is known.
pub(super) fn level(
    ctx: &mut Ctx,
    id: &str,
    lvl: Option<&super::super::raw::RawLevel>,
    path: &KeyPath,
) -> (Level, bool) {
    let mut level = Level::new(id, 0.0);
    let mut ok = false;
    let Some(l) = lvl else {
        ctx.missing(&path.k("energy"), Kind::Energy.expected());
        return (level, ok);
    };
    if let Some(e) = ctx.req_quantity(&path.k("energy"), &l.energy, Kind::Energy, Sign::Any) {
        level.omega = e;
        ok = true;
    }
    if l.lifetime.is_some() && l.linewidth.is_some() {
        ctx.push(
            &path.k("linewidth"),
            "either lifetime or linewidth, not both",
            "both",
        );
    } else if let Some(tau) =
        ctx.quantity(&path.k("lifetime"), &l.lifetime, Kind::Time, Sign::Positive)
    {
        level.gamma = 1.0 / tau;
    } else if let Some(g) = ctx.quantity(
        &path.k("linewidth"),
        &l.linewidth,
        Kind::Frequency,
        Sign::NonNegative,
    ) {
        // Gamma/2pi written in Hz units: the parser already gives 2 pi x value.
        level.gamma = g;
    }
    level.tolerance = ctx.population(&path.k("tolerance"), &l.tolerance);
    level.label = l.label.as_ref().map(|s| s.text());
    (level, ok)
}
