//! Typed errors of the Monte Carlo module; each message says what to change.

use rungs_lattice::LatticeError;
use thiserror::Error;

/// Everything that can stop a Monte Carlo run before it starts.
#[derive(Debug, Error, Clone, PartialEq)]
#[non_exhaustive]
pub enum McError {
    /// The torus could not be built from the lattice at this size.
    #[error("Monte Carlo size {size}: {source}")]
    Torus {
        /// Linear size (cells per direction) that was asked for.
        size: usize,
        /// The lattice crate's reason.
        source: LatticeError,
    },
    /// An edge list that does not describe a valid set of bonds.
    #[error("bond {index} ({i}, {j}): {detail}")]
    BadEdge {
        /// Position of the edge in the list.
        index: usize,
        /// First site.
        i: usize,
        /// Second site.
        j: usize,
        /// What is wrong with it.
        detail: String,
    },
    /// A torus with no sites, or more than the 32-bit site indices can hold.
    #[error(
        "a Monte Carlo torus needs between 1 and {max} sites, got {sites}; choose another size"
    )]
    BadSiteCount {
        /// Sites asked for.
        sites: usize,
        /// Largest supported count.
        max: usize,
    },
    /// A run whose estimated peak memory exceeds the limit (see
    /// [`super::budget::plan`]).
    #[error(
        "size {size}: a torus of {sites:.3e} sites needs about {gib:.1} GiB of memory, over the limit of {limit_gib:.1} GiB; choose smaller sizes"
    )]
    TooMuchMemory {
        /// The linear size that breaks the limit.
        size: usize,
        /// Sites of that torus.
        sites: f64,
        /// Estimated peak memory of the run, GiB.
        gib: f64,
        /// The limit, GiB.
        limit_gib: f64,
    },
    /// A temperature that is not a positive finite number.
    #[error("temperature {0} is not a positive finite number; give temperatures > 0")]
    BadTemperature(f64),
    /// A field that is not finite.
    #[error("field {0} is not a finite number")]
    BadField(f64),
    /// Too few measurement sweeps for binning error bars.
    #[error("{sweeps} measurement sweeps are too few for error bars; give at least {min}")]
    TooFewSweeps {
        /// Sweeps asked for.
        sweeps: usize,
        /// Minimum accepted.
        min: usize,
    },
    /// Nothing to simulate.
    #[error("no {0} given; give at least one")]
    Empty(&'static str),
    /// Wolff cluster updates requested where they are not valid.
    #[error("Wolff cluster updates need every coupling J >= 0 and field h = 0 ({detail}); use Metropolis or automatic choice")]
    WolffNotApplicable {
        /// Which condition fails.
        detail: String,
    },
    /// A torus size that the order parameter's pattern does not tile.
    #[error("size {size} is not a multiple of {period}, the period in cells of the ordering pattern measured; use {suggestion}")]
    Incommensurate {
        /// The linear size asked for.
        size: usize,
        /// The pattern's period in cells.
        period: usize,
        /// Nearby sizes that fit.
        suggestion: String,
    },
    /// Order-parameter weights that cannot be used.
    #[error("order parameter: {detail}")]
    BadOrder {
        /// What is wrong with them.
        detail: String,
    },
}
