//! rungs-solve: the cluster-variation engine, one computation for every level.
//!
//! * [`functional`]: F(ξ) of correlation variables with Walsh–Hadamard derivatives;
//! * [`equilibrium`]: damped, shifted Newton that keeps every cluster probability > 0;
//! * [`state`]: paramagnetic / ordered / in-field equilibrium at (T, h);
//! * [`tc`]: the critical temperature from the odd-sector stability of the paramagnet;
//! * [`thermo`]: per-site observables (m, U, F, S, C, χ) from a solved state;
//! * [`levels`]: the critical point at several levels of one lattice (what `rungs tc`
//!   and the ladder compute);
//! * [`sweep`], [`sweep_report`]: thermodynamics along a path, and its reportable result
//!   (the JSON of `rungs sweep`);
//! * [`cautions`]: the caution notes those reports share.
//! * [`phases`]: phase diagrams — every phase's branch, first- and second-order
//!   transitions, spinodals, tricritical points, the alloy view.
//!
//! Conventions: spins ±1, `H = −Σ J s_i s_j − h Σ s_i`, k_B = 1; the functional is per
//! unit cell, every reported observable per site.

pub mod big;
pub mod cautions;
pub mod dd;
pub mod disordered;
pub mod equilibrium;
pub mod error;
pub mod extrapolate;
pub mod functional;
pub mod gram;
pub mod krylov;
pub mod levels;
pub mod linalg;
pub mod order_parameter;
pub mod ordering;
pub mod phase;
pub mod phases;
pub mod qspace;
pub mod search;
pub mod state;
pub mod subset;
pub mod supercell;
pub mod sweep;
pub mod sweep_report;
pub mod tc;
pub mod thermo;
pub mod wht;

pub use error::SolveError;
pub use state::{equilibrium as solve_equilibrium, Branch, State};
pub use sweep::{sweep_level, LevelSweep, SweepOptions, SweepPoint};
pub use tc::{
    critical_temperature, critical_temperature_observed, CriticalPoint, ModeKind, TcOptions,
};
pub use thermo::{observables, Observables};

/// A number for notes and messages: at most 6 significant digits, no trailing zeros.
pub fn report_num(x: f64) -> String {
    if x == 0.0 || !x.is_finite() {
        return format!("{x}");
    }
    let digits = (6 - 1 - x.abs().log10().floor() as i32).max(0) as usize;
    let s = format!("{x:.digits$}");
    if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s
    }
}
