//! Grouped level rows of the readable formats: the Zeeman sublevels a
//! manifold generates, one row per (manifold, F), with the group's total
//! and its largest member; or every sublevel on its own row.
//!
//! Owns: [`Sublevels`] (grouped or each), which report rows form a group
//! ([`entries`], plain data built from the rows' quantum numbers), the
//! group's label, and the small sums and picks a group row shows. Must not:
//! change a report, touch the JSON or CSV (they list every level), or
//! group anything but sublevels (a level written by hand, or an F level of
//! `resolve: hyperfine`, is always its own row).

use crate::report::{QuantumNumbers, Role};

/// How the readable formats show the sublevels of a manifold.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Sublevels {
    /// One row per (manifold, F): the total over its m_F sublevels and the
    /// largest of them.
    #[default]
    Grouped,
    /// Every sublevel on its own row.
    Each,
}

/// One row of a level table: a report row as it is, or a group of them.
#[derive(Debug, Clone, PartialEq)]
pub(super) enum Entry {
    One(usize),
    Group(Group),
}

/// The sublevels of one F level of one manifold (indices of report rows,
/// in report order; at least two).
#[derive(Debug, Clone, PartialEq)]
pub(super) struct Group {
    pub manifold: String,
    pub f: f64,
    pub members: Vec<usize>,
}

impl Group {
    /// `S_F2 (5 sublevels)`: the F level's id pattern and the count.
    pub fn label(&self) -> String {
        format!(
            "{}_F{} ({} sublevels)",
            self.manifold,
            half_text(self.f),
            self.members.len()
        )
    }

    /// The sum of a number over the members.
    pub fn sum(&self, value: impl Fn(usize) -> f64) -> f64 {
        self.members.iter().map(|&k| value(k)).sum()
    }

    /// The member with the largest value (the first of equals).
    pub fn largest(&self, value: impl Fn(usize) -> f64) -> usize {
        let mut best = self.members[0];
        for &k in &self.members[1..] {
            if value(k) > value(best) {
                best = k;
            }
        }
        best
    }

    /// The members' common value, if they all share it.
    pub fn common<T: PartialEq>(&self, value: impl Fn(usize) -> T) -> Option<T> {
        let first = value(self.members[0]);
        self.members[1..]
            .iter()
            .all(|&k| value(k) == first)
            .then_some(first)
    }

    /// The members' roles, each once in the order initial, target,
    /// spectator: `initial+target`.
    pub fn roles(&self, role: impl Fn(usize) -> Role) -> String {
        let present: Vec<Role> = self.members.iter().map(|&k| role(k)).collect();
        [Role::Initial, Role::Target, Role::Spectator]
            .into_iter()
            .filter(|r| present.contains(r))
            .map(|r| r.as_str())
            .collect::<Vec<_>>()
            .join("+")
    }
}

/// A half-integer as level ids write it: `2`, `3/2`.
pub(super) fn half_text(x: f64) -> String {
    let two = (2.0 * x).round() as i64;
    if two % 2 == 0 {
        format!("{}", two / 2)
    } else {
        format!("{two}/2")
    }
}

/// The rows of a level table. `quantum[k]` is report row k's quantum
/// numbers. Grouped: the sublevels (rows with an m_F) of one manifold and
/// F form one entry at the place of the first of them; a group of one
/// stays a plain row. Each: every row as it is.
pub(super) fn entries(quantum: &[Option<&QuantumNumbers>], mode: Sublevels) -> Vec<Entry> {
    if mode == Sublevels::Each {
        return (0..quantum.len()).map(Entry::One).collect();
    }
    let mut out: Vec<Entry> = Vec::new();
    for (k, q) in quantum.iter().enumerate() {
        let Some(q) = q.filter(|q| q.m_f.is_some()) else {
            out.push(Entry::One(k));
            continue;
        };
        let found = out.iter_mut().find_map(|e| match e {
            Entry::Group(g) if g.manifold == q.manifold && g.f == q.f => Some(g),
            _ => None,
        });
        match found {
            Some(g) => g.members.push(k),
            None => out.push(Entry::Group(Group {
                manifold: q.manifold.clone(),
                f: q.f,
                members: vec![k],
            })),
        }
    }
    out.into_iter()
        .map(|e| match e {
            Entry::Group(g) if g.members.len() == 1 => Entry::One(g.members[0]),
            e => e,
        })
        .collect()
}

/// The first group among the entries, if any (the table then has its
/// extra column, and its note names this group).
pub(super) fn first_group(entries: &[Entry]) -> Option<&Group> {
    entries.iter().find_map(|e| match e {
        Entry::Group(g) => Some(g),
        Entry::One(_) => None,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn q(manifold: &str, f: f64, m_f: Option<f64>) -> QuantumNumbers {
        QuantumNumbers::new(manifold, 0.5, f, m_f)
    }

    #[test]
    fn sublevels_group_by_manifold_and_f_at_their_first_row() {
        let rows = [
            None,
            Some(q("S", 1.0, Some(-1.0))),
            Some(q("S", 1.0, Some(0.0))),
            Some(q("S", 1.0, Some(1.0))),
            Some(q("P", 0.0, Some(0.0))),
            Some(q("H", 1.0, None)),
            Some(q("S", 2.0, Some(2.0))),
            Some(q("S", 2.0, Some(-2.0))),
        ];
        let refs: Vec<Option<&QuantumNumbers>> = rows.iter().map(Option::as_ref).collect();
        let e = entries(&refs, Sublevels::Grouped);
        let group = |m: &str, f: f64, members: Vec<usize>| {
            Entry::Group(Group {
                manifold: m.into(),
                f,
                members,
            })
        };
        assert_eq!(
            e,
            [
                Entry::One(0),
                group("S", 1.0, vec![1, 2, 3]),
                Entry::One(4),
                Entry::One(5),
                group("S", 2.0, vec![6, 7]),
            ],
            "v1 rows, a lone sublevel and a hyperfine level stay rows"
        );
        assert_eq!(
            first_group(&e).map(Group::label).as_deref(),
            Some("S_F1 (3 sublevels)")
        );
        let each = entries(&refs, Sublevels::Each);
        assert_eq!(each, (0..8).map(Entry::One).collect::<Vec<_>>());
        assert_eq!(first_group(&each), None);
    }

    #[test]
    fn a_group_sums_picks_and_names_its_members() {
        let g = Group {
            manifold: "P".into(),
            f: 1.5,
            members: vec![2, 3, 5],
        };
        let v = [0.0, 0.0, 0.1, 0.4, 9.0, 0.4];
        assert_eq!(g.label(), "P_F3/2 (3 sublevels)");
        assert!((g.sum(|k| v[k]) - 0.9).abs() < 1e-15);
        assert_eq!(g.largest(|k| v[k]), 3, "the first of equals");
        assert_eq!(g.common(|k| v[k]), None);
        assert_eq!(g.common(|k| k > 1), Some(true));
        let role = |k: usize| {
            if k == 3 {
                Role::Target
            } else {
                Role::Spectator
            }
        };
        assert_eq!(g.roles(role), "target+spectator");
        assert_eq!(half_text(2.0), "2");
        assert_eq!(half_text(0.5), "1/2");
    }
}
