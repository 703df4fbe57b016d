//! rungs-solve: the cluster-variation engine, one computation for every level.
//!
//! * [`functional`]: F(ξ) of correlation variables with Walsh–Hadamard derivatives;
//! * [`equilibrium`]: damped, shifted Newton that keeps every cluster probability > 0;
//! * [`state`]: paramagnetic / ordered / in-field equilibrium at (T, h);
//! * [`tc`]: the critical temperature from the odd-sector stability of the paramagnet;
//! * [`thermo`]: per-site observables (m, U, F, S, C, χ) from a solved state.
//!
//! Conventions: spins ±1, `H = −Σ J s_i s_j − h Σ s_i`, k_B = 1; the functional is per
//! unit cell, every reported observable per site.

pub mod big;
pub mod equilibrium;
pub mod error;
pub mod extrapolate;
pub mod functional;
pub mod krylov;
pub mod state;
pub mod sweep;
pub mod tc;
pub mod thermo;
pub mod wht;

pub use error::SolveError;
pub use state::{equilibrium as solve_equilibrium, Branch, State};
pub use sweep::sweep;
pub use tc::{critical_temperature, CriticalPoint, ModeKind, TcOptions};
pub use thermo::{observables, Observables};
