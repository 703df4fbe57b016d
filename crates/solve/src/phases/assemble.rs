//! A diagram from its paths: every path exactly once, in order, and the tricritical
//! points between neighbouring paths.
//!
//! Paths are computed independently, so they may come from several processes (shards);
//! assembling the same paths always gives the same diagram. A **tricritical point** is
//! where a line of transitions between the same two phases changes kind: a first-order
//! transition on one path and a second-order one on the neighbouring path bracket it.
//! Its position between the two paths is estimated from the jump of the order parameter
//! (Δψ, or Δm when ψ does not jump), whose square vanishes linearly at a tricritical
//! point in Landau theory (Landau & Lifshitz, Statistical Physics, §150, common
//! practice): extrapolated from the two nearest first-order paths when there are two,
//! else halfway; the position along the path is interpolated linearly.

use thiserror::Error;

use super::candidates::PhaseInfo;
use super::setup::{DiagramSpec, PhaseDiagramSetup};
use super::{Along, Kind, PathResult, Spinodal, Transition};

/// What a diagram is of: everything but its paths.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct DiagramHeader {
    /// The lattice's name.
    pub lattice: String,
    /// The level's name.
    pub level: String,
    /// The lattice's dimension (the used components of wavevectors).
    pub dimension: usize,
    /// The grid.
    pub spec: DiagramSpec,
    /// The phases compared, the disordered one first.
    pub phases: Vec<PhaseInfo>,
    /// The level's Tc at h = 0, if it has one.
    pub tc: Option<f64>,
    /// Cautions about the whole diagram.
    pub notes: Vec<String>,
}

impl DiagramHeader {
    /// The header of a prepared diagram.
    pub fn of(setup: &PhaseDiagramSetup) -> DiagramHeader {
        DiagramHeader {
            lattice: setup.lattice.name().to_string(),
            level: setup.level.name.clone(),
            dimension: setup.lattice.dimension(),
            spec: setup.spec().clone(),
            phases: setup.phases().to_vec(),
            tc: setup.tc(),
            notes: setup.notes().to_vec(),
        }
    }
}

/// Paths that do not make up one whole diagram.
#[derive(Debug, Error, Clone, PartialEq)]
pub enum AssembleError {
    /// A path index beyond the grid's paths.
    #[error("path {index} does not exist: the grid has {paths} paths")]
    Foreign {
        /// The index given.
        index: usize,
        /// Paths of the grid.
        paths: usize,
    },
    /// A path given twice.
    #[error("path {index} is given twice")]
    Duplicate {
        /// The index.
        index: usize,
    },
    /// Paths missing.
    #[error("{count} of the grid's {paths} paths are missing (the first is path {first})")]
    Missing {
        /// How many.
        count: usize,
        /// Paths of the grid.
        paths: usize,
        /// The first missing index.
        first: usize,
    },
}

/// A whole phase diagram.
#[derive(Debug, Clone, PartialEq)]
pub struct PhaseDiagram {
    /// What it is of.
    pub header: DiagramHeader,
    /// Every path, in order.
    pub paths: Vec<PathResult>,
    /// Tricritical points between neighbouring paths.
    pub tricritical: Vec<Transition>,
}

impl PhaseDiagram {
    /// Every transition: each path's in order, then the tricritical points.
    pub fn transitions(&self) -> impl Iterator<Item = &Transition> {
        self.paths
            .iter()
            .flat_map(|p| &p.transitions)
            .chain(&self.tricritical)
    }

    /// Every branch end that is not a transition.
    pub fn spinodals(&self) -> impl Iterator<Item = &Spinodal> {
        self.paths.iter().flat_map(|p| &p.spinodals)
    }

    /// Every path's notes, each prefixed with the path it concerns.
    pub fn path_notes(&self) -> Vec<String> {
        let (name, unit) = match self.header.spec.along {
            Along::Temperature => ("h", ""),
            Along::Field => ("T", ""),
        };
        self.paths
            .iter()
            .flat_map(|p| {
                p.notes.iter().map(move |n| {
                    format!("path at {name} = {}{unit}: {n}", crate::report_num(p.fixed))
                })
            })
            .collect()
    }
}

/// The diagram of `header` from its `paths` (any order; each exactly once).
pub fn assemble(
    header: DiagramHeader,
    mut paths: Vec<PathResult>,
) -> Result<PhaseDiagram, AssembleError> {
    let n = header.spec.paths();
    paths.sort_by_key(|p| p.index);
    for w in paths.windows(2) {
        if w[0].index == w[1].index {
            return Err(AssembleError::Duplicate { index: w[0].index });
        }
    }
    if let Some(p) = paths.iter().find(|p| p.index >= n) {
        return Err(AssembleError::Foreign {
            index: p.index,
            paths: n,
        });
    }
    if paths.len() < n {
        let first = (0..n)
            .find(|i| paths.get(*i).is_none_or(|p| p.index != *i))
            .unwrap_or(0);
        return Err(AssembleError::Missing {
            count: n - paths.len(),
            paths: n,
            first,
        });
    }
    let tricritical = tricritical_points(&paths, header.spec.along);
    Ok(PhaseDiagram {
        header,
        paths,
        tricritical,
    })
}

/// The position of a transition along its path.
fn position(t: &Transition, along: Along) -> f64 {
    match along {
        Along::Temperature => t.temperature,
        Along::Field => t.field,
    }
}

/// The size of a first-order jump: Δψ, or Δm when the order parameters do not jump.
fn jump(t: &Transition) -> f64 {
    let j = t.order_parameter_jump().abs();
    if j > 1e-12 {
        j
    } else {
        t.magnetization_jump().abs()
    }
}

/// Whether two transitions join the same two phases in the same order along the path
/// (one line of transitions; the reverse order is another line, e.g. the two sides of a
/// re-entrant phase).
fn same_pair(a: &Transition, b: &Transition) -> bool {
    a.below == b.below && a.above == b.above
}

/// The transition of `path` between the same phases as `t` and of kind `kind`, nearest
/// to `t` along the path.
fn matching<'p>(
    path: &'p PathResult,
    t: &Transition,
    kind: Kind,
    along: Along,
) -> Option<&'p Transition> {
    path.transitions
        .iter()
        .filter(|u| u.kind == kind && same_pair(u, t))
        .min_by(|a, b| {
            let d = |u: &Transition| (position(u, along) - position(t, along)).abs();
            d(a).total_cmp(&d(b))
        })
}

fn tricritical_points(paths: &[PathResult], along: Along) -> Vec<Transition> {
    let mut out = Vec::new();
    for p in 0..paths.len().saturating_sub(1) {
        for t in &paths[p].transitions {
            let other = match t.kind {
                Kind::First => Kind::Second,
                Kind::Second => Kind::First,
                Kind::Tricritical => continue,
            };
            let Some(u) = matching(&paths[p + 1], t, other, along) else {
                continue;
            };
            // (first-order transition, its path), (second-order, its path), and the
            // next first-order path further from the second-order one.
            let ((tf, pf), (ts, ps), far) = if t.kind == Kind::First {
                ((t, p), (u, p + 1), p.checked_sub(1))
            } else {
                ((u, p + 1), (t, p), Some(p + 2).filter(|&q| q < paths.len()))
            };
            let (ff, fs) = (paths[pf].fixed, paths[ps].fixed);
            let j1 = jump(tf).powi(2);
            let mut f0 = 0.5 * (ff + fs);
            if let Some(t3) = far.and_then(|q| {
                matching(&paths[q], tf, Kind::First, along).map(|t3| (t3, paths[q].fixed))
            }) {
                let (tt3, f3) = t3;
                let j3 = jump(tt3).powi(2);
                if j3 > j1 && (f3 - ff).abs() > 0.0 {
                    let zero = ff - j1 * (ff - f3) / (j1 - j3);
                    f0 = zero.clamp(ff.min(fs), ff.max(fs));
                }
            }
            let w = if fs != ff { (f0 - ff) / (fs - ff) } else { 0.5 };
            let pos = position(tf, along) + w * (position(ts, along) - position(tf, along));
            let m = tf.magnetization_below
                + w * (ts.magnetization_below - tf.magnetization_below)
                + 0.5 * (1.0 - w) * tf.magnetization_jump();
            let (temperature, field) = match along {
                Along::Temperature => (pos, f0),
                Along::Field => (f0, pos),
            };
            out.push(Transition {
                temperature,
                field,
                kind: Kind::Tricritical,
                below: tf.below.clone(),
                above: tf.above.clone(),
                latent_heat: 0.0,
                magnetization_below: m,
                magnetization_above: m,
                order_parameter_below: 0.0,
                order_parameter_above: 0.0,
                note: Some(format!(
                    "the {} → {} line is first order at {v} = {} and second order at {v} = {}: the tricritical point lies between; its position is {}",
                    tf.below,
                    tf.above,
                    crate::report_num(ff),
                    crate::report_num(fs),
                    if f0 == 0.5 * (ff + fs) { "taken halfway" } else { "extrapolated from the jumps of the first-order paths" },
                    v = match along {
                        Along::Temperature => "h",
                        Along::Field => "T",
                    }
                )),
            });
        }
    }
    out
}
