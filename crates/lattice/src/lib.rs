//! rungs-lattice: lattice files, the validated lattice model and cluster geometry.
//!
//! Data flow: YAML text → [`spec`] (plain serde structs, every rule checked) →
//! [`Lattice`] (resolved indices and couplings) → [`Level`] (maximal clusters,
//! regions, Kikuchi coefficients, correlation-variable orbits) for the engine, and
//! [`Torus`] (a finite periodic sample as a petgraph graph) for exact enumeration and
//! Monte Carlo.
//!
//! Conventions, everywhere in rungs: spins s = ±1, `H = -Σ_bonds J_b s_i s_j - h Σ_i s_i`,
//! k_B = 1, J > 0 ferromagnetic; cells are integer offsets along the primitive vectors,
//! stored as `[i32; 3]` with unused dimensions zero.
//!
//! ```
//! let text = "name: chain\ndimension: 1\nvectors: [[1.0]]\nbasis: [{name: a}]\n\
//!             couplings: {J: 1.0}\nbonds: [{from: a, to: a, cell: [1], coupling: J}]\n";
//! let lattice = rungs_lattice::Lattice::from_yaml_str(text, "chain.yaml").unwrap();
//! assert_eq!(lattice.coordination(), vec![2]);
//! assert!(lattice.is_bipartite());
//! ```

pub mod check;
pub mod cluster;
pub mod compact;
pub mod error;
pub mod level;
pub mod model;
pub mod spec;
pub mod suggest;
pub mod symmetry;
#[cfg(test)]
mod testutil;
pub mod torus;

pub use cluster::Cluster;
pub use compact::{CompactLevel, CompactRegion};
pub use error::LatticeError;
pub use level::{BondTerm, Level, Region, Skeleton, MAX_CLUSTER_SITES, MAX_MATERIALISED_SITES};
pub use model::{Bond, Cell, Lattice, LevelSpec, Neighbour, PhaseSpec, Reference, Site};
pub use torus::Torus;
