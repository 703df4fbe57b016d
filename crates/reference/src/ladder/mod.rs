//! The ladder: how Tc converges as the clusters grow, each rung against the reference,
//! with extrapolations — what `rungs ladder` prints and the Python package returns.
//!
//! The steps, one file each:
//! * [`blocks`]: when climbing up to N sites, square-ish blocks of cells up to N sites
//!   added as extra levels (the file's levels larger than N are left out);
//! * [`climb`]: every level (site, pair, then the named clusters), sorted by the size of
//!   its largest cluster; per level Tc, the critical amplitude χ̄ and the time, or why it
//!   was skipped; then the coherent-anomaly (Suzuki 1986, J. Phys. Soc. Jpn. 55, 4205)
//!   and inverse-size (Kikuchi & Brush 1967, J. Chem. Phys. 47, 195) extrapolations over
//!   the cluster rungs;
//! * [`mod@reference`]: what the rungs are judged against — a recognised closed form's exact
//!   Tc, else the file's `reference:`, else (when asked for) a Binder-crossing Monte Carlo
//!   estimate computed on the spot.
//!
//! Why it lives here: the ladder needs the engine (`rungs_solve`) and the references
//! (closed forms, Monte Carlo), and this crate is the one that sees both.
//!
//! [`Ladder`] serializes ([`serde::Serialize`]) to the JSON of the `ladder --format
//! json` contract: `lattice`, `reference`, `levels` (`level`, `max_cluster_sites`, `tc`,
//! `deviation`, `amplitude`, ...), `extrapolations` (`method`, `tc`, `tc_error`, and
//! `gamma`, `gamma_error` for the coherent-anomaly method), plus `dimension` and
//! `notes`. Unknown numbers are `null`, never NaN.

pub mod blocks;
pub mod climb;
pub mod reference;

use rungs_lattice::{Lattice, LatticeError};
use rungs_solve::levels::LevelEvent;
use serde::{Serialize, Serializer};
use thiserror::Error;

pub use climb::{Extrapolated, RungResult};
pub use reference::{ReferenceKind, ReferenceTc};

/// How to climb the ladder.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct LadderOptions {
    /// Climb up to this many sites: the file's levels with at most this many sites plus
    /// square-ish blocks of cells up to it (only the file's levels when `None`).
    pub up_to: Option<u32>,
    /// Run a Monte Carlo estimate when no exact or file reference exists.
    pub monte_carlo: bool,
    /// Uniform field h (every rung's Tc is that of the field-polarised phase).
    pub field: f64,
}

/// What a ladder reports while it climbs, for a progress display.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum LadderEvent<'a> {
    /// The levels about to be climbed, in order (sent once, first).
    Levels(&'a [String]),
    /// A level's stage; its `index` is its position in [`LadderEvent::Levels`].
    Level(LevelEvent<'a>),
    /// Progress of a Monte Carlo reference run: `pass` is `scan` or `refine`, `done` of
    /// `total` sweeps.
    MonteCarlo {
        /// Which pass.
        pass: &'a str,
        /// Sweeps done.
        done: usize,
        /// Sweeps in all.
        total: usize,
    },
}

/// Why no ladder could be made.
#[derive(Debug, Error, Clone, PartialEq)]
#[non_exhaustive]
pub enum LadderError {
    /// A level or block could not be built: bad input.
    #[error(transparent)]
    Lattice(Box<LatticeError>),
    /// A field that is not a finite number: bad input.
    #[error("field {0} is not a finite number")]
    BadField(f64),
    /// No level of the ladder gave a result; the message names each level's reason.
    #[error("{0}")]
    NothingComputed(String),
}

impl From<LatticeError> for LadderError {
    fn from(e: LatticeError) -> LadderError {
        LadderError::Lattice(Box::new(e))
    }
}

impl LadderError {
    /// Whether the request was at fault (bad input), rather than the computation.
    pub fn is_bad_input(&self) -> bool {
        matches!(self, LadderError::Lattice(_) | LadderError::BadField(_))
    }
}

/// A computed ladder: every rung, the reference, the extrapolations and the notes that
/// explain what is missing.
#[derive(Debug, Clone, PartialEq)]
pub struct Ladder {
    /// Lattice name.
    pub lattice: String,
    /// Spatial dimension.
    pub dimension: usize,
    /// The reference Tc, if any is known or was computed.
    pub reference: Option<ReferenceTc>,
    /// One entry per level, sorted by the size of its largest cluster (file order among
    /// equal sizes).
    pub rungs: Vec<RungResult>,
    /// Extrapolations that could be made (coherent-anomaly first).
    pub extrapolations: Vec<Extrapolated>,
    /// Explanations: skipped levels, extrapolations that could not be made, cautions.
    pub notes: Vec<String>,
}

impl Ladder {
    /// Climb every level of `lattice`, choose the reference, extrapolate; `observe`
    /// hears the levels, their stages and any Monte Carlo run.
    ///
    /// Levels the engine cannot do (too large, no convergence) are kept as skipped rungs
    /// with the reason; the ladder fails only when no level at all gives a result.
    ///
    /// ```
    /// use rungs_reference::ladder::{Ladder, LadderOptions};
    /// let square = rungs_lattice::Lattice::from_yaml_str(
    ///     "name: sq\ndimension: 2\nvectors: [[1, 0], [0, 1]]\nbasis: [{name: a}]\n\
    ///      couplings: {J: 1}\nbonds: [{from: a, to: a, cell: [1, 0], coupling: J},\n\
    ///      {from: a, to: a, cell: [0, 1], coupling: J}]\n",
    ///     "sq.yaml",
    /// )?;
    /// let ladder = Ladder::compute(&square, LadderOptions::default(), &|_| {})?;
    /// // The reference is Onsager's exact Tc = 2/ln(1 + √2) (Onsager 1944, Phys. Rev. 65,
    /// // 117); mean field (site) and Bethe (pair) lie above it (Griffiths 1967).
    /// let exact = ladder.reference.as_ref().unwrap().tc;
    /// assert!((exact - 2.0 / (1.0 + 2f64.sqrt()).ln()).abs() < 1e-12);
    /// assert!(ladder.rungs.iter().all(|r| r.tc.unwrap() > exact));
    /// # Ok::<(), Box<dyn std::error::Error>>(())
    /// ```
    pub fn compute(
        lattice: &Lattice,
        options: LadderOptions,
        observe: &(dyn Fn(LadderEvent<'_>) + Sync),
    ) -> Result<Ladder, LadderError> {
        if !options.field.is_finite() {
            return Err(LadderError::BadField(options.field));
        }
        let mut notes = Vec::new();
        let extended;
        let lattice = match options.up_to {
            Some(n) => {
                extended = blocks::with_blocks(lattice, n as usize, &mut notes)?;
                &extended
            }
            None => lattice,
        };
        let names = climb::rung_names(lattice, options.up_to, &mut notes)?;
        observe(LadderEvent::Levels(&names));
        let levels = |e: LevelEvent<'_>| observe(LadderEvent::Level(e));
        let rungs = climb::climb(lattice, &names, options.field, &levels)?;
        let extrapolations = climb::extrapolate(&rungs, &mut notes);
        let reference = reference::choose(
            lattice,
            &rungs,
            &extrapolations,
            options,
            &mut notes,
            observe,
        );
        notes.extend(climb::rung_notes(lattice, &rungs));
        notes.extend(reference::cautions(
            lattice,
            &extrapolations,
            reference.as_ref(),
        ));
        Ok(Ladder {
            lattice: lattice.name().to_string(),
            dimension: lattice.dimension(),
            reference,
            rungs,
            extrapolations,
            notes,
        })
    }

    /// `tc / reference − 1`, when both are known.
    pub fn deviation(&self, tc: Option<f64>) -> Option<f64> {
        let reference = self.reference.as_ref()?.tc;
        tc.filter(|t| t.is_finite())
            .map(|t| t / reference - 1.0)
            .filter(|d| d.is_finite())
    }
}

/// A finite number, else `None` (JSON `null`).
fn finite(x: Option<f64>) -> Option<f64> {
    x.filter(|v| v.is_finite())
}

/// A rung in JSON.
#[derive(Serialize)]
struct LevelJson<'a> {
    level: &'a str,
    max_cluster_sites: usize,
    variables: usize,
    tc: Option<f64>,
    deviation: Option<f64>,
    amplitude: Option<f64>,
    mode: Option<&'static str>,
    seconds: f64,
    skipped: Option<&'a str>,
}

/// An extrapolation in JSON: `gamma` and `gamma_error` only for the coherent-anomaly
/// method (`null` there when unknown).
#[derive(Serialize)]
struct ExtrapolationJson<'a> {
    method: &'a str,
    tc: f64,
    tc_error: f64,
    deviation: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    gamma: Option<Option<f64>>,
    #[serde(skip_serializing_if = "Option::is_none")]
    gamma_error: Option<Option<f64>>,
}

/// The JSON document of a ladder.
#[derive(Serialize)]
struct LadderJson<'a> {
    lattice: &'a str,
    dimension: usize,
    reference: Option<&'a ReferenceTc>,
    levels: Vec<LevelJson<'a>>,
    extrapolations: Vec<ExtrapolationJson<'a>>,
    notes: &'a [String],
}

impl Serialize for Ladder {
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        LadderJson {
            lattice: &self.lattice,
            dimension: self.dimension,
            reference: self.reference.as_ref(),
            levels: self
                .rungs
                .iter()
                .map(|r| LevelJson {
                    level: &r.level,
                    max_cluster_sites: r.max_cluster_sites,
                    variables: r.variables,
                    tc: finite(r.tc),
                    deviation: self.deviation(r.tc),
                    amplitude: finite(r.amplitude),
                    mode: r.mode.map(|m| m.as_str()),
                    seconds: r.seconds,
                    skipped: r.skipped.as_deref(),
                })
                .collect(),
            extrapolations: self
                .extrapolations
                .iter()
                .map(|e| {
                    let cam = e.method == "coherent-anomaly";
                    ExtrapolationJson {
                        method: e.method,
                        tc: e.tc,
                        tc_error: e.tc_error,
                        deviation: self.deviation(Some(e.tc)),
                        gamma: cam.then(|| finite(e.gamma)),
                        gamma_error: cam.then(|| finite(e.gamma_error)),
                    }
                })
                .collect(),
            notes: &self.notes,
        }
        .serialize(s)
    }
}
