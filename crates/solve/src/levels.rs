//! The critical point at several levels of one lattice: what `rungs tc`, the ladder and
//! the Python package compute, in one place.
//!
//! Each level is built ([`prepare`]) as a dense [`Level`], or — when its clusters exceed
//! [`MAX_MATERIALISED_SITES`] — only on point-group orbits ([`CompactLevel`]); then its
//! Tc is searched ([`search`]) with [`crate::critical_temperature`] or, on orbits,
//! [`crate::big::critical_temperature_compact`]; a big level that is a rectangular block
//! of a square net ([`RectBlock`]) is searched on its sub-blocks' potentials instead
//! ([`crate::big::rect`]), without building its orbits. A level the engine refuses (too large)
//! or whose search fails stays in the result as a row with its reason
//! ([`TcOutcome`]); [`tc_levels`] fails only when no level gives a result at all.
//!
//! Two schedules ([`Schedule`]): `Parallel` builds every level and searches the dense
//! ones at once (rayon), then the big ones one by one; `Chained` goes one level at a time
//! in the order given. Every big level (and, chained, every level) starts its search just
//! above the lowest Tc of the smaller cluster rungs already found: cluster Tc's of a
//! ferromagnet fall as the clusters grow (Kikuchi & Brush 1967, J. Chem. Phys. 47, 195).
//!
//! Progress goes to an observer ([`LevelEvent`]); nothing here prints.

use std::time::Instant;

use rayon::prelude::*;
use rungs_lattice::{CompactLevel, Lattice, LatticeError, Level, MAX_MATERIALISED_SITES};
use thiserror::Error;

use crate::big::rect::RectBlock;
use crate::functional::check_size;
use crate::{critical_temperature_observed, CriticalPoint, SolveError, TcOptions};

/// How the levels are scheduled.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Schedule {
    /// Build all levels and search the dense ones in parallel; then the big ones (on
    /// point-group orbits, or too large for the dense Hessian) one by one, each starting
    /// just above the lowest Tc of the smaller cluster rungs (`rungs tc`).
    #[default]
    Parallel,
    /// One level at a time in the order given, each built just before its search and
    /// each starting just above the lowest Tc of the smaller cluster rungs (the ladder:
    /// one level in memory at a time).
    Chained,
}

/// What [`tc_levels`] reports while it runs, for a progress display. `index` is the
/// position of the level in the list given.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum LevelEvent<'a> {
    /// The level entered a stage (`building clusters`, `Tc search`, ...).
    Stage {
        /// Position of the level in the list.
        index: usize,
        /// What it does now.
        stage: &'a str,
    },
    /// The level is built and waits for its turn.
    Waiting {
        /// Position of the level in the list.
        index: usize,
    },
    /// One point of the level's path is done (sweeps).
    Point {
        /// Position of the level in the list.
        index: usize,
    },
    /// The level is done: `outcome` is `done`, `no transition`, `skipped` or `failed`.
    Finished {
        /// Position of the level in the list.
        index: usize,
        /// How it ended.
        outcome: &'a str,
    },
}

/// An observer that ignores every event.
pub fn no_progress(_: LevelEvent<'_>) {}

/// What the Tc search gave at one level.
#[derive(Debug, Clone)]
pub enum TcOutcome {
    /// The search ran; the critical point's `tc` is `None` when no transition was found.
    Searched(Box<CriticalPoint>),
    /// The engine refused the level; `kind` says which limit, `why` says it in words.
    Refused {
        /// The limit met.
        kind: Refusal,
        /// The engine's reason, for the reader.
        why: String,
    },
    /// The search failed (no convergence); the reason says where.
    Failed(String),
}

/// Why the engine refused a level.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Refusal {
    /// The level is too large to be built or searched.
    TooLarge,
    /// The level is searched at h = 0 only and a Tc in a field was asked for.
    FieldUnsupported,
}

/// One level's critical point, or why there is none.
#[derive(Debug, Clone)]
pub struct LevelTc {
    /// Level name.
    pub level: String,
    /// Sites of the largest maximal cluster.
    pub max_cluster_sites: usize,
    /// Correlation variables of the level (translation classes on point-group orbits);
    /// for a rectangular block solved on region potentials, the potentials; 0 when it
    /// could not be built.
    pub variables: usize,
    /// Wall-clock seconds: building the level and searching Tc.
    pub seconds: f64,
    /// Searched on point-group orbits or past the dense limit (a big level).
    pub orbit_reduced: bool,
    /// The result.
    pub outcome: TcOutcome,
}

impl LevelTc {
    /// The critical temperature, when one was found (finite).
    pub fn tc(&self) -> Option<f64> {
        self.critical()
            .and_then(|cp| cp.tc)
            .filter(|t| t.is_finite())
    }

    /// The critical point, when the search ran.
    pub fn critical(&self) -> Option<&CriticalPoint> {
        match &self.outcome {
            TcOutcome::Searched(cp) => Some(cp),
            TcOutcome::Refused { .. } | TcOutcome::Failed(_) => None,
        }
    }

    /// Why no search result exists (refused or failed), if so.
    pub fn failure(&self) -> Option<&str> {
        match &self.outcome {
            TcOutcome::Searched(_) => None,
            TcOutcome::Refused { why, .. } | TcOutcome::Failed(why) => Some(why),
        }
    }

    /// One word for a progress line: `done`, `no transition`, `skipped` or `failed`.
    pub fn outcome_word(&self) -> &'static str {
        match &self.outcome {
            TcOutcome::Refused { .. } => "skipped",
            TcOutcome::Failed(_) => "failed",
            TcOutcome::Searched(cp) if cp.tc.is_none() => "no transition",
            TcOutcome::Searched(_) => "done",
        }
    }
}

/// Why [`tc_levels`] gave nothing.
#[derive(Debug, Error, Clone, PartialEq)]
#[non_exhaustive]
pub enum LevelsError {
    /// A level could not be built for a reason other than its size (e.g. an unknown
    /// name): bad input.
    #[error(transparent)]
    Lattice(Box<LatticeError>),
    /// No level gave a result: every one was refused or its search failed.
    #[error("{}", reasons.iter().map(|(_, r)| r.as_str()).collect::<Vec<_>>().join("; "))]
    NothingComputed {
        /// `(level, reason)` for every level.
        reasons: Vec<(String, String)>,
    },
}

impl From<LatticeError> for LevelsError {
    fn from(e: LatticeError) -> LevelsError {
        LevelsError::Lattice(Box::new(e))
    }
}

/// Levels in ladder order: `site`, `pair`, then the others by their largest cluster
/// (ties keep the order given). An unknown name is an error listing the known ones.
pub fn sort_levels(lattice: &Lattice, names: Vec<String>) -> Result<Vec<String>, LatticeError> {
    let mut keyed = names
        .into_iter()
        .map(|n| {
            let rank = match n.as_str() {
                "site" => 0,
                "pair" => 1,
                _ => 2,
            };
            Level::max_cluster_sites_of(lattice, &n).map(|sites| ((rank, sites), n))
        })
        .collect::<Result<Vec<_>, _>>()?;
    keyed.sort_by_key(|(key, _)| *key);
    Ok(keyed.into_iter().map(|(_, n)| n).collect())
}

/// The levels asked for: `requested` in the order given (names trimmed, duplicates
/// dropped), or every level of the lattice when `None`. An unknown name is a
/// [`LatticeError::UnknownLevel`] listing the known ones (with a suggestion when one is
/// near); an empty list gives an empty result (the caller says what to do).
pub fn select_levels(
    lattice: &Lattice,
    requested: Option<&[String]>,
) -> Result<Vec<String>, LatticeError> {
    let known = Level::names(lattice);
    let Some(requested) = requested else {
        return Ok(known);
    };
    let mut chosen: Vec<String> = Vec::new();
    for name in requested {
        let name = name.trim();
        if !known.iter().any(|k| k == name) {
            return Err(LatticeError::unknown_level(name, &known));
        }
        if !chosen.iter().any(|c| c == name) {
            chosen.push(name.to_string());
        }
    }
    Ok(chosen)
}

/// A level built and ready for the Tc search.
#[derive(Debug)]
pub struct Prepared {
    /// Level name.
    pub name: String,
    /// Sites of the largest maximal cluster.
    pub max_cluster_sites: usize,
    /// Seconds spent building it.
    pub seconds: f64,
    /// The level, or why it cannot be built (cluster over the site limit).
    pub level: Result<Level, String>,
    /// Levels whose clusters exceed [`MAX_MATERIALISED_SITES`] (e.g. the 5×5 block),
    /// built only on point-group orbits.
    pub compact: Option<CompactLevel>,
    /// Whether it is too large for the dense engine, so that its Tc is searched on
    /// point-group orbits or region potentials (uniform order only).
    pub big: bool,
    /// A big level that is a rectangular block of a square net: searched on its
    /// sub-blocks' potentials ([`crate::big::rect`]), its orbits not built.
    pub rect: Option<RectBlock>,
}

impl Prepared {
    /// Correlation variables (translation classes on point-group orbits); 0 when the
    /// level could not be built.
    pub fn variables(&self) -> usize {
        if let Some(rect) = &self.rect {
            return rect.unknowns();
        }
        match (&self.level, &self.compact) {
            (Ok(level), _) => level.variables.len(),
            (_, Some(compact)) => compact.translation_classes(),
            _ => 0,
        }
    }
}

/// Build level `name` of `lattice`. A level over the engine's cluster limits is kept
/// with its reason (it becomes a [`TcOutcome::Refused`]); any other lattice error (an
/// unknown name) is returned.
pub fn prepare(lattice: &Lattice, name: &str) -> Result<Prepared, LatticeError> {
    let start = Instant::now();
    let max_cluster_sites = Level::max_cluster_sites_of(lattice, name)?;
    let rect = RectBlock::detect(lattice, name);
    if max_cluster_sites > MAX_MATERIALISED_SITES {
        if let Some(rect) = rect {
            return Ok(Prepared {
                name: name.to_string(),
                max_cluster_sites,
                seconds: start.elapsed().as_secs_f64(),
                level: Err("solved on its sub-blocks' potentials only".to_string()),
                compact: None,
                big: true,
                rect: Some(rect),
            });
        }
        let (level, compact) = match CompactLevel::build(lattice, name) {
            Ok(c) => (Err("built on point-group orbits only".to_string()), Some(c)),
            Err(e @ LatticeError::CompactLimit { .. }) => (Err(e.to_string()), None),
            Err(e) => return Err(e),
        };
        return Ok(Prepared {
            name: name.to_string(),
            max_cluster_sites,
            seconds: start.elapsed().as_secs_f64(),
            level,
            compact,
            big: true,
            rect: None,
        });
    }
    let level = match Level::build(lattice, name) {
        Ok(level) => Ok(level),
        Err(e @ LatticeError::ClusterTooLarge { .. }) => Err(e.to_string()),
        Err(e) => return Err(e),
    };
    let big = level.as_ref().is_ok_and(|l| check_size(l).is_err());
    Ok(Prepared {
        name: name.to_string(),
        max_cluster_sites,
        seconds: start.elapsed().as_secs_f64(),
        level,
        compact: None,
        big,
        // A big rectangular block (the 4×4 block) is searched on region potentials too.
        rect: rect.filter(|_| big),
    })
}

/// Find the Tc of a prepared level in field `field`; `start_below` is where the search
/// starts ([`TcOptions::start_below`]); `observe` hears the stages of a dense search
/// ([`critical_temperature_observed`]: stepping down, root, wavevector check). A level
/// the engine refuses as too large is a [`TcOutcome::Refused`], one whose search fails a
/// [`TcOutcome::Failed`].
pub fn search(
    lattice: &Lattice,
    p: &Prepared,
    start_below: Option<f64>,
    field: f64,
    observe: &(dyn Fn(&str) + Sync),
) -> LevelTc {
    let start = Instant::now();
    let options = TcOptions {
        start_below,
        field,
        ..TcOptions::default()
    };
    let outcome = match (&p.level, &p.compact) {
        _ if p.rect.is_some() => {
            // The gauge-equivalent lattice of an antiferromagnet is a rectangle too.
            let mut run = |l: &Lattice| {
                let rect = RectBlock::detect(l, &p.name).ok_or_else(|| SolveError::TcSearch {
                    level: p.name.clone(),
                    detail: "the gauge-equivalent lattice is not a square net".into(),
                })?;
                let start = options
                    .start_below
                    .filter(|t| t.is_finite() && *t > 0.0)
                    .unwrap_or_else(|| {
                        crate::big::own_start(
                            l,
                            p.max_cluster_sites,
                            crate::tc::mean_field_scale(l).max(1e-12),
                        )
                    });
                crate::big::rect::critical_temperature_rect(
                    l, &p.name, rect, options, start, observe,
                )
            };
            outcome_of(crate::tc::big_level_search(
                lattice, &p.name, options, &mut run,
            ))
        }
        (_, Some(compact)) => {
            // The prepared compact level serves the lattice as given; its
            // gauge-equivalent lattice (antiferromagnets) gets its own.
            let mut run = |l: &Lattice| {
                if std::ptr::eq(l, lattice) {
                    crate::big::critical_temperature_compact(l, compact, options)
                } else {
                    let gauged = crate::big::compact_level(l, &p.name)?;
                    crate::big::critical_temperature_compact(l, &gauged, options)
                }
            };
            outcome_of(crate::tc::big_level_search(
                lattice, &p.name, options, &mut run,
            ))
        }
        (Err(reason), None) => TcOutcome::Refused {
            kind: Refusal::TooLarge,
            why: reason.clone(),
        },
        (Ok(level), None) => outcome_of(critical_temperature_observed(
            lattice, level, options, observe,
        )),
    };
    LevelTc {
        level: p.name.clone(),
        max_cluster_sites: p.max_cluster_sites,
        variables: p.variables(),
        seconds: p.seconds + start.elapsed().as_secs_f64(),
        orbit_reduced: p.big,
        outcome,
    }
}

/// A search's result as an outcome: a level the engine cannot search (too large, or
/// too large to be searched in a field) is refused, any other error a failure.
fn outcome_of(result: Result<CriticalPoint, SolveError>) -> TcOutcome {
    match result {
        Ok(cp) => TcOutcome::Searched(Box::new(cp)),
        Err(e @ SolveError::TooLarge { .. }) => TcOutcome::Refused {
            kind: Refusal::TooLarge,
            why: e.to_string(),
        },
        Err(e @ SolveError::FieldUnsupported { .. }) => TcOutcome::Refused {
            kind: Refusal::FieldUnsupported,
            why: e.to_string(),
        },
        Err(e) => TcOutcome::Failed(e.to_string()),
    }
}

/// Where the search of a level of `sites` sites starts: 1 % above the lowest Tc of the
/// smaller cluster rungs (two sites or more) in `done`, or `None` (mean field).
fn start_below<'r>(done: impl Iterator<Item = &'r LevelTc>, sites: usize) -> Option<f64> {
    done.filter(|r| r.max_cluster_sites >= 2 && r.max_cluster_sites < sites)
        .filter_map(LevelTc::tc)
        .reduce(f64::min)
        .map(|t| 1.01 * t)
}

/// The critical point of every level in `names` (in that order) in the uniform field
/// `field`, scheduled as `schedule`; `observe` hears each level's stages.
///
/// # Errors
/// [`LevelsError::Lattice`] for a level that cannot be built (an unknown name);
/// [`LevelsError::NothingComputed`] when every level was refused or failed (with one
/// level refused among others, that level is a row with its reason instead).
///
/// ```
/// use rungs_solve::levels::{no_progress, tc_levels, Schedule};
/// let square = rungs_lattice::Lattice::from_yaml_str(
///     "name: sq\ndimension: 2\nvectors: [[1, 0], [0, 1]]\nbasis: [{name: a}]\n\
///      couplings: {J: 1}\nbonds: [{from: a, to: a, cell: [1, 0], coupling: J},\n\
///      {from: a, to: a, cell: [0, 1], coupling: J}]\n",
///     "sq.yaml",
/// )?;
/// let rows = tc_levels(&square, &["site".into(), "pair".into()], 0.0, Schedule::Parallel, &no_progress)?;
/// // Mean field: Tc = z J = 4; Bethe: Tc = 2 / ln(z / (z − 2)) = 2 / ln 2
/// // (Bethe 1935, Proc. R. Soc. A 150, 552).
/// assert!((rows[0].tc().unwrap() - 4.0).abs() < 1e-6);
/// assert!((rows[1].tc().unwrap() - 2.0 / 2f64.ln()).abs() < 1e-6);
/// # Ok::<(), Box<dyn std::error::Error>>(())
/// ```
pub fn tc_levels(
    lattice: &Lattice,
    names: &[String],
    field: f64,
    schedule: Schedule,
    observe: &(dyn Fn(LevelEvent<'_>) + Sync),
) -> Result<Vec<LevelTc>, LevelsError> {
    let rows = match schedule {
        Schedule::Parallel => parallel(lattice, names, field, observe)?,
        Schedule::Chained => chained(lattice, names, field, observe)?,
    };
    if rows.iter().all(|r| r.failure().is_some()) {
        return Err(LevelsError::NothingComputed {
            reasons: rows
                .iter()
                .map(|r| (r.level.clone(), r.failure().unwrap_or_default().to_string()))
                .collect(),
        });
    }
    Ok(rows)
}

/// Clusters from this many sites up are announced as long work: on point-group orbits
/// a 24-site cluster takes hours, the 5×5 block on region potentials minutes
/// (docs/benchmarks.md), the 4×4 block (16 sites) seconds.
const LONG_SEARCH_SITES: usize = 24;

/// The first stage of a level's search, as shown: a big level says it is solved on
/// point-group orbits, and one of 24 sites or more (`LONG_SEARCH_SITES`) that it will take
/// long, so that nobody waits for seconds what takes hours.
pub fn search_stage(p: &Prepared) -> String {
    if !p.big {
        return "Tc search".into();
    }
    if p.rect.is_some() {
        return rect_search_stage(p.max_cluster_sites);
    }
    big_search_stage(p.max_cluster_sites, p.variables())
}

/// [`search_stage`] of a rectangular block solved on region potentials: one of
/// `LONG_SEARCH_SITES` sites or more says it takes minutes (measured in
/// docs/benchmarks.md).
fn rect_search_stage(sites: usize) -> String {
    if sites >= LONG_SEARCH_SITES {
        return format!(
            "Tc search on sub-block potentials ({sites}-site blocks, 2^{sites} states: expect minutes)"
        );
    }
    "Tc search on sub-block potentials".into()
}

/// [`search_stage`] of a big level with clusters of `sites` sites and `variables`
/// translation classes.
fn big_search_stage(sites: usize, variables: usize) -> String {
    if sites >= LONG_SEARCH_SITES {
        return format!(
            "Tc search on point-group orbits ({:.1} million variables, {sites}-site clusters: expect hours)",
            variables as f64 / 1e6,
        );
    }
    "Tc search on point-group orbits".into()
}

/// [`search`] of level `index`, announced to `observe` (its first stage, every stage of
/// the search, and its outcome).
fn observed_search(
    lattice: &Lattice,
    p: &Prepared,
    index: usize,
    below: Option<f64>,
    field: f64,
    observe: &(dyn Fn(LevelEvent<'_>) + Sync),
) -> LevelTc {
    let stage = |stage: &str| observe(LevelEvent::Stage { index, stage });
    stage(&search_stage(p));
    let row = search(lattice, p, below, field, &stage);
    observe(LevelEvent::Finished {
        index,
        outcome: row.outcome_word(),
    });
    row
}

/// [`Schedule::Parallel`].
fn parallel(
    lattice: &Lattice,
    names: &[String],
    field: f64,
    observe: &(dyn Fn(LevelEvent<'_>) + Sync),
) -> Result<Vec<LevelTc>, LatticeError> {
    let prepared = names
        .par_iter()
        .enumerate()
        .map(|(index, name)| {
            observe(LevelEvent::Stage {
                index,
                stage: "building clusters",
            });
            let p = prepare(lattice, name);
            observe(LevelEvent::Waiting { index });
            p
        })
        .collect::<Result<Vec<_>, _>>()?;
    let mut rows = prepared
        .par_iter()
        .enumerate()
        .map(|(index, p)| {
            if p.big {
                return None;
            }
            Some(observed_search(lattice, p, index, None, field, observe))
        })
        .collect::<Vec<_>>();
    for (index, p) in prepared.iter().enumerate().filter(|(_, p)| p.big) {
        let below = start_below(rows.iter().flatten(), p.max_cluster_sites);
        rows[index] = Some(observed_search(lattice, p, index, below, field, observe));
    }
    Ok(rows.into_iter().flatten().collect())
}

/// [`Schedule::Chained`].
fn chained(
    lattice: &Lattice,
    names: &[String],
    field: f64,
    observe: &(dyn Fn(LevelEvent<'_>) + Sync),
) -> Result<Vec<LevelTc>, LatticeError> {
    let mut rows: Vec<LevelTc> = Vec::with_capacity(names.len());
    for (index, name) in names.iter().enumerate() {
        observe(LevelEvent::Stage {
            index,
            stage: "building clusters",
        });
        let p = prepare(lattice, name)?;
        let below = start_below(rows.iter(), p.max_cluster_sites);
        rows.push(observed_search(lattice, &p, index, below, field, observe));
    }
    Ok(rows)
}

#[cfg(test)]
mod tests {
    use std::sync::Mutex;

    use super::*;

    fn square() -> Lattice {
        Lattice::from_yaml_str(
            "name: sq\ndimension: 2\nvectors: [[1.0, 0.0], [0.0, 1.0]]\nbasis: [{name: a}]\n\
             couplings: {J: 1.0}\nbonds: [{from: a, to: a, cell: [1, 0], coupling: J}, \
             {from: a, to: a, cell: [0, 1], coupling: J}]\n\
             clusters: {plaquette: [[[a, [0, 0]], [a, [1, 0]], [a, [0, 1]], [a, [1, 1]]]]}\n",
            "sq.yaml",
        )
        .unwrap()
    }

    #[test]
    fn both_schedules_find_the_same_critical_points() {
        let lattice = square();
        let names = sort_levels(&lattice, Level::names(&lattice)).unwrap();
        assert_eq!(names, ["site", "pair", "plaquette"]);
        let events = Mutex::new(Vec::new());
        let record = |e: LevelEvent<'_>| {
            if let LevelEvent::Finished { index, outcome } = e {
                events.lock().unwrap().push((index, outcome.to_string()));
            }
        };
        let parallel = tc_levels(&lattice, &names, 0.0, Schedule::Parallel, &record).unwrap();
        let chained = tc_levels(&lattice, &names, 0.0, Schedule::Chained, &no_progress).unwrap();
        // Mean field Tc = z J = 4 and Bethe Tc = 2/ln 2 (Bethe 1935, Proc. R. Soc. A 150,
        // 552); the plaquette rung lies between the pair's and Onsager's 2.269 (Kikuchi
        // 1951, Phys. Rev. 81, 988).
        assert!((parallel[0].tc().unwrap() - 4.0).abs() < 1e-6);
        assert!((parallel[1].tc().unwrap() - 2.0 / 2f64.ln()).abs() < 1e-6);
        let plaquette = parallel[2].tc().unwrap();
        assert!(plaquette < 2.0 / 2f64.ln() && plaquette > 2.269);
        for (a, b) in parallel.iter().zip(&chained) {
            assert!((a.tc().unwrap() / b.tc().unwrap() - 1.0).abs() < 1e-7);
        }
        let mut events = events.into_inner().unwrap();
        events.sort();
        assert_eq!(
            events,
            [(0, "done".into()), (1, "done".into()), (2, "done".into())]
        );
    }

    #[test]
    fn a_search_of_hours_says_so_before_it_starts() {
        let lattice = square();
        let plaquette = prepare(&lattice, "plaquette").unwrap();
        assert_eq!(search_stage(&plaquette), "Tc search");
        let block4 = prepare(&lattice.with_block_level("b4", [4, 4, 1]).unwrap(), "b4").unwrap();
        assert_eq!(search_stage(&block4), "Tc search on sub-block potentials");
        // The 5×5 block is a rectangle: minutes, its orbits never built.
        let b5 = lattice.with_block_level("b5", [5, 5, 1]).unwrap();
        let five = prepare(&b5, "b5").unwrap();
        assert!(five.rect.is_some() && five.compact.is_none());
        assert!(
            search_stage(&five).contains("expect minutes"),
            "{}",
            search_stage(&five)
        );
        // A 25-site cluster on point-group orbits: 31,522,816 translation classes for
        // the 5×5 block (the lattice crate's count).
        let orbits = big_search_stage(25, 31_522_816);
        assert!(orbits.contains("31.5 million variables"), "{orbits}");
        assert!(orbits.contains("expect hours"), "{orbits}");
    }

    #[test]
    fn unknown_and_duplicate_names() {
        let lattice = square();
        let e = select_levels(&lattice, Some(&["plaquete".into()])).unwrap_err();
        assert!(e.to_string().contains("plaquette"), "{e}");
        let chosen = select_levels(&lattice, Some(&["pair".into(), " pair".into()])).unwrap();
        assert_eq!(chosen, ["pair"]);
    }
}
