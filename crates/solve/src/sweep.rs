//! Thermodynamics along a path: for each field, the temperatures in the order given, each
//! point warm-started from the one before (continuation), so that below Tc at h = 0 the
//! ordered branch with m > 0 is followed.

use rungs_lattice::Level;

use crate::error::SolveError;
use crate::state::equilibrium;
use crate::thermo::{observables, Observables};

/// Observables of `level` at every (field, temperature), fields outermost. `tick` is
/// called once per finished point (for progress reporting; the engine never prints).
pub fn sweep(
    level: &Level,
    temps: &[f64],
    fields: &[f64],
    tick: &(dyn Fn() + Sync),
) -> Result<Vec<Observables>, SolveError> {
    let mut out = Vec::with_capacity(temps.len() * fields.len());
    for &h in fields {
        let mut warm: Option<Vec<f64>> = None;
        for &t in temps {
            let state = equilibrium(level, t, h, warm.as_deref())?;
            out.push(observables(level, &state)?);
            warm = Some(state.solution.x);
            tick();
        }
    }
    Ok(out)
}
