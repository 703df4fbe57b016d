//! Monte Carlo on finite tori of any lattice file: the reference that every cluster
//! approximation is finally held against where no closed form exists.
//!
//! * [`neighbours`]: the torus as a flat compressed-sparse-row neighbour table;
//! * [`wolff`]: single-cluster updates (Wolff 1989) for ferromagnets without field;
//! * [`gauge`]: the sublattice flip that makes a bipartite antiferromagnet a ferromagnet;
//! * [`order`]: the order parameter measured (uniform m, or the projection on an
//!   ordering pattern);
//! * [`metropolis`]: sequential single-spin Metropolis sweeps for everything else;
//! * [`observables`]: per-sweep measurements, binning-analysis error bars and
//!   jackknife estimates of the Binder cumulant, specific heat and susceptibility;
//! * [`binder`]: the critical temperature from Binder-cumulant crossings;
//! * [`budget`]: the arguments checked and the memory and work of a run estimated
//!   before anything is built;
//! * [`mod@run`]: the driver over sizes × temperatures, parallel and reproducible;
//! * [`report`]: a run as a reportable result (the JSON of `rungs mc`).
//!
//! Units as in the whole crate: k_B = 1, `H = -Σ J s_i s_j - h Σ s_i`, energies and
//! magnetisations per site. A *sweep* is a unit of work that flips, on average, as many
//! spins as the torus has sites for Wolff, and one pass of attempted flips over every
//! site for Metropolis.
//!
//! ```
//! use rungs_reference::montecarlo::{run_systems, McConfig, Neighbours, System};
//! // A 4 × 4 square torus written as an edge list: right and up neighbours, J = 1.
//! let l = 4;
//! let mut edges = Vec::new();
//! for y in 0..l {
//!     for x in 0..l {
//!         let i = x + l * y;
//!         edges.push((i, (x + 1) % l + l * y, 1.0));
//!         edges.push((i, x + l * ((y + 1) % l), 1.0));
//!     }
//! }
//! let system = System::new(l, Neighbours::from_edges(l * l, &edges).unwrap(), 0.0);
//! let config = McConfig { temperatures: vec![2.0, 3.0], sweeps: 200, warmup: 20, ..McConfig::default() };
//! let result = run_systems(&[system], &config, None).unwrap();
//! assert_eq!(result.points.len(), 2);
//! assert!(result.points[0].estimates.energy < result.points[1].estimates.energy);
//! ```

pub mod binder;
pub mod budget;
pub mod error;
pub mod gauge;
pub mod metropolis;
pub mod neighbours;
pub mod observables;
pub mod order;
pub mod report;
pub mod rng;
pub mod run;
pub mod wolff;

pub use binder::{assess_tc, binder_crossing, Crossing, TcAssessment, TcEstimate};
pub use budget::{plan, RunPlan};
pub use error::McError;
pub use metropolis::Metropolis;
pub use neighbours::Neighbours;
pub use observables::{BinnedSeries, Estimates};
pub use order::{CellOrder, Order, OrderPattern};
pub use report::{prepare, McReport, OrderChoice, Prepared};
pub use run::{
    run, run_systems, simulate_point, Algorithm, McConfig, McPoint, McResult, Progress, System,
};
pub use wolff::Wolff;
