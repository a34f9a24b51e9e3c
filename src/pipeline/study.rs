//! Many runs of one scheme: the points of a scan grid and the search of
//! `tune`. The scheme text is parsed once; each point only replaces values
//! and validates again.
//!
//! Owns: axes from `--vary` specs and the scheme's units, the model at a
//! point, the preflight of the grid's corners, one point's report and row,
//! and the whole `tune` search. Must not: read or write files, draw a
//! progress bar, or spell rows (the CLI and `render::scan` do).

use super::vet_model_with;
use crate::error::Error;
use crate::model::Model;
use crate::report::{self, Provenance, Role, VetReport};
use crate::scan::{
    self as grid, bad, Axis, Grid, ScanRow, TuneFound, TuneGoal, TuneReport, VarySpec,
};
use crate::scheme::{self, SchemeSource};
use crate::tune;

/// A scheme read as text, with what its results must state about it.
#[derive(Debug)]
pub struct Study {
    text: String,
    source: SchemeSource,
    /// The scheme parsed once for every grid point (built on first use).
    prepared: std::sync::OnceLock<scheme::Prepared>,
    /// Step budget of every point's propagation.
    step_budget: u64,
    /// `tuned` carriers follow varied level energies
    /// ([`scheme::Prepared::with_tuned_follows`]).
    tuned_follows: bool,
}

impl Study {
    /// A study of this scheme text (the file's name and hash as read).
    pub fn new(text: String, source: SchemeSource) -> Study {
        Study {
            text,
            source,
            prepared: std::sync::OnceLock::new(),
            step_budget: crate::solve::DEFAULT_STEP_BUDGET,
            tuned_follows: false,
        }
    }

    /// The same study with `tuned` carriers following (true) or not
    /// (false, the default) the level energies a point varies
    /// ([`scheme::Prepared::with_tuned_follows`]).
    pub fn with_tuned_follows(mut self, follows: bool) -> Study {
        self.tuned_follows = follows;
        self
    }

    /// The same study with this step budget for every point's propagation
    /// ([`SolveOptions::step_budget`](crate::solve::SolveOptions::step_budget)).
    pub fn with_step_budget(mut self, step_budget: u64) -> Study {
        self.step_budget = step_budget;
        self
    }

    /// The scheme text.
    pub fn text(&self) -> &str {
        &self.text
    }

    /// The scheme's file name as given.
    pub fn file(&self) -> &str {
        &self.source.path
    }

    /// What every result states about the scheme.
    pub fn provenance(&self) -> Provenance {
        Provenance::new(&self.source.path, &self.source.sha256)
    }

    /// Axes of the specs: each PATH must hold a number in the scheme; its
    /// unit is the default of the range.
    pub fn axes(
        &self,
        specs: &[VarySpec],
        log: bool,
        default_count: usize,
    ) -> Result<Vec<Axis>, Error> {
        let mut axes: Vec<Axis> = Vec::new();
        for s in specs {
            if axes.iter().any(|a| a.path == s.path) {
                return Err(bad("--vary", format!("{} is varied twice", s.path)));
            }
            let (_, unit) = scheme::numeric_value_at(&self.text, &self.source.path, &s.path)
                .map_err(|e| bad(&format!("--vary {}", s.path), e.to_string()))?;
            axes.push(Axis::new(s, &unit, log, s.count.unwrap_or(default_count))?);
        }
        Ok(axes)
    }

    /// Attach the `--with` specs to their axes: `(k, spec)` steps with
    /// `axes[k]`. A path that is varied, or linked, twice is refused, as is
    /// a path the scheme does not hold as a number.
    pub fn link(&self, axes: &mut [Axis], links: &[(usize, VarySpec)]) -> Result<(), Error> {
        for (k, s) in links {
            let what = format!("--with {}", s.path);
            if axes.iter().any(|a| a.path == s.path) {
                return Err(bad(
                    &what,
                    format!(
                        "{} is both varied (--vary) and linked (--with); give it once",
                        s.path
                    ),
                ));
            }
            if axes.iter().flat_map(|a| &a.links).any(|l| l.path == s.path) {
                return Err(bad(&what, format!("{} is linked twice", s.path)));
            }
            let (_, unit) = scheme::numeric_value_at(&self.text, &self.source.path, &s.path)
                .map_err(|e| bad(&what, e.to_string()))?;
            let axis = axes.get_mut(*k).ok_or_else(|| {
                bad(
                    &what,
                    "a --with steps with the --vary before it; write one first",
                )
            })?;
            axis.link(s, &unit)?;
        }
        Ok(())
    }

    /// The model at a point of the grid.
    pub fn model_at(&self, grid: &Grid, coords: &[f64]) -> Result<Model, Error> {
        let prepared = match self.prepared.get() {
            Some(p) => p,
            None => {
                let p = scheme::Prepared::new(&self.text, &self.source.path)?
                    .with_tuned_follows(self.tuned_follows);
                self.prepared.get_or_init(|| p)
            }
        };
        Ok(prepared.with_overrides(&grid.overrides(coords))?)
    }

    /// Parse the scheme at the first and last grid point (every START and
    /// END), so a wrong path, a non-numeric value or a unit of the wrong
    /// dimension is bad input before anything runs. Returns the first model.
    pub fn preflight(&self, grid: &Grid) -> Result<Model, Error> {
        self.preflight_open(grid).map(|(m, _)| m)
    }

    /// [`Study::preflight`], and whether the scheme uses the open-system
    /// keys at the first or the last point ([`Model::uses_open_system`]):
    /// the scan's rows then carry the lost population and the scattered
    /// photons. A rate varied from 0 is open at one end of its axis, and
    /// every axis is at its start in the first point and at its end in the
    /// last, so the two decide for the whole grid.
    pub fn preflight_open(&self, grid: &Grid) -> Result<(Model, bool), Error> {
        let mut first = None;
        let mut open = false;
        for index in [0, grid.len() - 1] {
            let coords = grid.point(index);
            let m = self.model_at(grid, &coords).map_err(|e| {
                bad(
                    "--vary",
                    format!("the scheme does not take {}: {e}", describe(grid, &coords)),
                )
            })?;
            open |= m.uses_open_system();
            first.get_or_insert(m);
        }
        first
            .map(|m| (m, open))
            .ok_or_else(|| bad("--vary", "empty grid"))
    }

    /// One full run (exact + perturbative, no remedy checks, no peak
    /// tracking: rows show final populations) at a point, errors marked
    /// with the point.
    pub fn vet_point(
        &self,
        grid: &Grid,
        tolerance: Option<f64>,
        n_levels: usize,
        coords: &[f64],
    ) -> Result<VetReport, Error> {
        let run = || -> Result<VetReport, Error> {
            let model = self.model_at(grid, coords)?;
            let rep = vet_model_with(
                &model,
                self.provenance(),
                tolerance,
                false,
                self.step_budget,
            )?;
            if rep.levels.len() != n_levels {
                return Err(bad(
                    "--vary",
                    "the number of levels changed across the grid",
                ));
            }
            Ok(rep)
        };
        run().map_err(|e| Error::AtPoint {
            at: describe(grid, coords),
            source: Box::new(e),
        })
    }
}

/// "path = value unit, ..." of a point, for messages.
fn describe(grid: &Grid, coords: &[f64]) -> String {
    grid.overrides(coords)
        .iter()
        .map(|(p, v)| format!("{p} = {v}"))
        .collect::<Vec<_>>()
        .join(", ")
}

/// The row of a point from its report.
pub fn row_from_report(coords: &[f64], rep: &VetReport) -> ScanRow {
    ScanRow {
        coords: coords.to_vec(),
        populations: rep.levels.iter().map(|l| l.final_population).collect(),
        max_spectator: rep.max_spectator,
        flagged: rep.flagged,
        estimates: rep.levels.iter().map(|l| l.estimate()).collect(),
        lost: Some(rep.lost_population),
        scattered_photons: rep.emitted,
    }
}

/// A `--vary` text with the level names of its PATH written as maps
/// (`initial.mixture.{manifold: S, F: 2, m_F: 2}=...`) spelt as generated
/// ids, so the CSV, the scan hash and the overrides see one spelling.
fn spelled_levels(text: &str) -> Result<String, Error> {
    match text.split_once('=') {
        Some((path, rest)) if path.contains('{') => {
            let path = scheme::level_names_in_path(path)
                .map_err(|e| bad(&format!("--vary '{text}'"), e))?;
            Ok(format!("{path}={rest}"))
        }
        _ => Ok(text.to_string()),
    }
}

/// Parse the `--with` texts, each with the number of `--vary` options
/// written before it on the command line: it steps with the last of them.
/// Returns (axis index, spec) pairs; a `--with` before any `--vary` is
/// refused.
pub fn parse_links(texts: &[(String, usize)]) -> Result<Vec<(usize, VarySpec)>, Error> {
    texts
        .iter()
        .map(|(t, before)| {
            if *before == 0 {
                return Err(bad(
                    &format!("--with '{t}'"),
                    "a --with moves a path together with the --vary written before it, and none is; put it after its --vary",
                ));
            }
            Ok((before - 1, VarySpec::parse_link(&spelled_levels(t)?)?))
        })
        .collect()
}

/// Parse the `--vary` texts and check what needs no scheme (form, COUNT,
/// positivity of log ranges).
pub fn parse_specs(
    texts: &[String],
    count_required: bool,
    log: bool,
) -> Result<Vec<VarySpec>, Error> {
    if texts.is_empty() {
        return Err(bad(
            "--vary",
            "at least one --vary PATH=START..END:COUNT is needed",
        ));
    }
    let specs = texts
        .iter()
        .map(|t| VarySpec::parse(&spelled_levels(t)?, count_required))
        .collect::<Result<Vec<_>, _>>()?;
    for s in &specs {
        s.spacing(log)?;
    }
    Ok(specs)
}

/// What `tune` is asked to find.
#[derive(Debug, Clone, PartialEq)]
pub struct TuneRequest {
    /// `PATH=LO..HI[:COUNT][:log]`.
    pub vary: String,
    pub log: bool,
    /// Level id to maximise; None with `shortest`.
    pub maximize: Option<String>,
    pub shortest: bool,
    pub goal: f64,
    pub tolerance: Option<f64>,
    /// Refinement tolerance, a fraction of the range.
    pub xtol: f64,
}

impl TuneRequest {
    /// Check everything that needs no scheme; returns the parsed spec.
    pub fn check(&self) -> Result<VarySpec, Error> {
        super::check_tolerance(self.tolerance)?;
        if !(self.goal.is_finite() && self.goal > 0.0 && self.goal <= 1.0) {
            return Err(bad(
                "--goal",
                format!("expected a population in (0, 1], found {}", self.goal),
            ));
        }
        if !(self.xtol.is_finite() && self.xtol > 0.0 && self.xtol < 1.0) {
            return Err(bad(
                "--xtol",
                format!(
                    "expected a fraction of the range in (0, 1), found {}",
                    self.xtol
                ),
            ));
        }
        let spec = parse_specs(std::slice::from_ref(&self.vary), false, self.log)?.remove(0);
        if spec.count.is_some_and(|n| n < 3) {
            return Err(bad("--vary", "tune needs at least 3 coarse points"));
        }
        if spec.start >= spec.end {
            return Err(bad(
                "--vary",
                format!("tune needs LO < HI, found {} and {}", spec.start, spec.end),
            ));
        }
        Ok(spec)
    }

    fn goal(&self, level_ids: &[String]) -> Result<TuneGoal, Error> {
        match &self.maximize {
            Some(written) => {
                // A generated level may be written as a map.
                let id = &scheme::level_names_in_path(written).map_err(|e| bad("--maximize", e))?;
                Ok(TuneGoal::Maximize {
                    level: level_ids.iter().position(|l| l == id).ok_or_else(|| {
                        bad(
                            "--maximize",
                            format!(
                                "no level '{id}' in the scheme (levels: {})",
                                level_ids.join(", ")
                            ),
                        )
                    })?,
                })
            }
            None if self.shortest => Ok(TuneGoal::Shortest { goal: self.goal }),
            None => Err(bad("tune", "give --maximize LEVEL or --shortest")),
        }
    }
}

/// Score of a point: the level's population, or 1/0 for feasibility.
fn score(goal: &TuneGoal, rep: &VetReport) -> f64 {
    match *goal {
        TuneGoal::Maximize { level } => rep.levels[level].final_population,
        TuneGoal::Shortest { goal } => {
            let ok = rep.flagged == 0
                && rep
                    .levels
                    .iter()
                    .filter(|l| l.role == Role::Target)
                    .all(|l| l.final_population >= goal);
            if ok {
                1.0
            } else {
                0.0
            }
        }
    }
}

/// `tune`: a coarse grid (in parallel on `pool`), then golden-section
/// search for the maximum of a level's population, or bisection for the
/// smallest value that meets the goal. `found` is None when no value of
/// the range meets the `shortest` condition.
pub fn tune(
    study: &Study,
    req: &TuneRequest,
    pool: &rayon::ThreadPool,
) -> Result<TuneReport, Error> {
    let spec = req.check()?;
    let axes = study.axes(
        std::slice::from_ref(&spec),
        req.log,
        grid::DEFAULT_TUNE_POINTS,
    )?;
    let grid = Grid::new(axes, false)?;
    let model = study.preflight(&grid)?;
    let axis = grid.axes[0].clone();
    let level_ids: Vec<String> = model.levels.iter().map(|l| l.id.clone()).collect();
    let n_levels = level_ids.len();
    let goal = req.goal(&level_ids)?;
    let at = |t: f64| -> Result<(f64, ScanRow), Error> {
        let coords = [axis.at_fraction(t)];
        let rep = study.vet_point(&grid, req.tolerance, n_levels, &coords)?;
        Ok((score(&goal, &rep), row_from_report(&coords, &rep)))
    };
    let ts = tune::coarse(axis.count);
    let mut coarse = Vec::with_capacity(ts.len());
    grid::run_ordered(
        pool,
        0..ts.len(),
        |i| at(ts[i]),
        |_, r| {
            coarse.push(r);
            Ok(())
        },
    )?;
    let refined = match goal {
        TuneGoal::Maximize { .. } => tune::maximize(&ts, &coarse, req.xtol, at),
        TuneGoal::Shortest { .. } => {
            let ok: Vec<(bool, ScanRow)> =
                coarse.iter().map(|(v, r)| (*v > 0.5, r.clone())).collect();
            tune::smallest_feasible(&ts, &ok, req.xtol, |t| at(t).map(|(v, r)| (v > 0.5, r)))
        }
    }
    .transpose()?;
    let found = refined.as_ref().map(|r| TuneFound {
        value: axis.at_fraction(r.t),
        lo: axis.at_fraction(r.lo),
        hi: axis.at_fraction(r.hi),
        at_edge: r.at_edge,
        row: r.data.clone(),
    });
    Ok(TuneReport {
        provenance: study.provenance(),
        axis: axis.clone(),
        goal,
        level_ids,
        roles: report::roles(&model),
        coarse_points: ts.len(),
        refine_solves: refined.as_ref().map_or(0, |r| r.evaluations),
        found,
    })
}
