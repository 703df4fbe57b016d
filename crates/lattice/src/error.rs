//! Typed errors of the lattice crate. Every message names what is wrong and how to fix it.

use thiserror::Error;

/// Everything that can go wrong reading a lattice file or building geometry from it.
#[derive(Debug, Error, Clone, PartialEq)]
#[non_exhaustive]
pub enum LatticeError {
    /// A supercell request that does not fit the lattice.
    #[error("supercell: {detail}")]
    BadSupercell {
        /// What is wrong and what to give instead.
        detail: String,
    },
    /// A maximal cluster larger than the engine can hold.
    #[error("level `{level}`: a maximal cluster has {sites} sites, more than the limit of {limit}; choose a smaller cluster")]
    ClusterTooLarge {
        /// Level name.
        level: String,
        /// Sites in the offending cluster.
        sites: usize,
        /// The engine's limit.
        limit: usize,
    },
    /// A level name that the lattice does not define.
    #[error("no level named `{name}` (known: {known})")]
    UnknownLevel {
        /// Requested name.
        name: String,
        /// Comma-separated known level names.
        known: String,
    },
    /// A finite torus that would fold a bond onto itself or a site onto its neighbour.
    #[error("torus {size}: {detail}")]
    BadTorus {
        /// The requested size, e.g. `2x2`.
        size: String,
        /// What goes wrong and the smallest size that works.
        detail: String,
    },
    /// Placeholder until the loader lands (replaced by the loader's own variants).
    #[error("{file}: {message}")]
    Invalid {
        /// File name as given.
        file: String,
        /// What is wrong and what to do.
        message: String,
    },
}
