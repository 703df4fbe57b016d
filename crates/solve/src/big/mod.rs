//! Levels too large for the dense engine (over 6,000 correlation variables: the square
//! 4×4 block has 57,856, the 5×5 block 31.5 million), solved matrix-free on point-group
//! orbits of a [`CompactLevel`].
//!
//! * [`model`]: F, ∇F, H·v (two Walsh–Hadamard transforms per region) and diag H;
//! * [`newton`]: truncated Newton with preconditioned conjugate gradients;
//! * [`search`]: the probe of Tc, the lowest odd-sector eigenvalue (LOBPCG), for the
//!   one step-down and Brent search of [`crate::search`];
//! * [`thermo`]: m, U, F, S, C, χ of point-group-symmetric phases, C and χ from CG
//!   solves;
//! * [`orbit_dense`]: the earlier dense orbit-reduced path, kept for comparison;
//! * [`rect`]: rectangular blocks of a square net on their sub-blocks' potentials (a
//!   region fixed point, no orbits), the path of `tc` and the ladder for such blocks.
//!
//! Only point-group-symmetric states and modes are reached here: the paramagnet,
//! uniform order and states in a uniform field. The critical mode searched is the
//! symmetric one (uniform order); reports say so.

pub mod model;
pub mod newton;
pub mod orbit_dense;
pub mod rect;
pub mod search;
pub mod thermo;

use std::time::Instant;

use rungs_lattice::{CompactLevel, Lattice, Level};

use crate::error::SolveError;
use crate::search::{refine, step_down, Bracket, StepRules};
use crate::tc::{classify, mean_field_scale, CriticalPoint, TcOptions};

pub use orbit_dense::{critical_temperature_orbits_dense, SymmetricSolver, MAX_REDUCED_VARIABLES};
pub use search::{ProbeValue, SymmetricProbe};
pub use thermo::{observables_symmetric, SymmetricEngine, SymmetricState};

/// The note of every result of this path.
pub const SYMMETRIC_ONLY: &str = "big level, solved matrix-free on point-group orbits: only point-group-symmetric (uniform) order is searched";

/// Tc of a level too large for the dense engine: its compact form is built from
/// `lattice` and the level's name, then [`critical_temperature_compact`] runs, starting
/// at `start_below` when given.
pub fn critical_temperature_big(
    lattice: &Lattice,
    level: &Level,
    options: TcOptions,
    start_below: Option<f64>,
) -> Result<CriticalPoint, SolveError> {
    let compact = compact_level(lattice, &level.name)?;
    critical_temperature_compact(
        lattice,
        &compact,
        TcOptions {
            start_below,
            ..options
        },
    )
}

/// The compact form of level `name`, a lattice error becoming a search error.
pub fn compact_level(lattice: &Lattice, name: &str) -> Result<CompactLevel, SolveError> {
    CompactLevel::build(lattice, name).map_err(|e| SolveError::TcSearch {
        level: name.to_string(),
        detail: e.to_string(),
    })
}

/// Where a big level's search starts without a hint: the Tc of the largest level of
/// the lattice that has smaller clusters and fits the dense engine (e.g. the 3×3 block
/// for the 4×4 block; at least the pair level, Bethe), found in milliseconds. For a
/// ferromagnet it lies above the Tc of larger clusters; the search steps up if it does
/// not. The mean-field Tc when no smaller level orders.
pub(crate) fn own_start(lattice: &Lattice, sites: usize, scale: f64) -> f64 {
    let mut smaller: Vec<(usize, String)> = Level::names(lattice)
        .into_iter()
        .filter(|n| n != "site")
        .filter_map(|n| {
            let s = Level::max_cluster_sites_of(lattice, &n).ok()?;
            (s < sites).then_some((s, n))
        })
        .collect();
    smaller.sort_by_key(|b| std::cmp::Reverse(b.0));
    for (_, name) in smaller {
        let Ok(level) = Level::build(lattice, &name) else {
            continue;
        };
        if crate::functional::check_size(&level).is_err() {
            continue;
        }
        if let Some(tc) = crate::tc::critical_temperature(lattice, &level, TcOptions::default())
            .ok()
            .and_then(|cp| cp.tc)
            .filter(|t| t.is_finite() && *t > 0.0)
        {
            return tc;
        }
    }
    scale * 1.02
}

/// Tc of a compact level at h = 0 (symmetric critical mode), matrix-free. The search
/// starts at `options.start_below`, or at the Tc of a smaller level solved here (see
/// `own_start`), so the result does not depend on which other levels were computed.
pub fn critical_temperature_compact(
    lattice: &Lattice,
    level: &CompactLevel,
    options: TcOptions,
) -> Result<CriticalPoint, SolveError> {
    let clock = Instant::now();
    let scale = mean_field_scale(lattice).max(1e-12);
    let start = options
        .start_below
        .filter(|t| t.is_finite() && *t > 0.0)
        .unwrap_or_else(|| own_start(lattice, level.max_cluster_sites, scale));
    let mut probe = SymmetricProbe::new(level);
    let t_min = scale * options.lowest_fraction;
    let bracket = step_down(&mut probe, start, t_min, StepRules::creeping())?;
    let nb = level.sites_per_cell;
    let (lo, hi) = match bracket {
        Bracket::Found { lo, hi, .. } => (lo, hi),
        Bracket::Stable { down_to } | Bracket::Noise { at: down_to } => {
            return Ok(CriticalPoint {
                level: level.name.clone(),
                max_cluster_sites: level.max_cluster_sites,
                field: options.field,
                tc: None,
                searched_down_to: down_to,
                mode: vec![0.0; nb],
                kind: crate::tc::ModeKind::Hidden,
                ordering: None,
                amplitude: None,
                notes: vec![SYMMETRIC_ONLY.to_string()],
                seconds: clock.elapsed().as_secs_f64(),
            });
        }
    };
    let tc = refine(&mut probe, lo, hi, options.relative_tolerance)?;
    // The mode at Tc and λ'(Tc) from its Rayleigh quotient at Tc ± δ.
    probe.probe(tc)?;
    let u = probe.mode().map(<[f64]>::to_vec).unwrap_or_default();
    let delta = 1e-4 * tc;
    let slope = (probe.rayleigh(tc + delta, &u)? - probe.rayleigh(tc - delta, &u)?) / (2.0 * delta);
    let bu: f64 = probe
        .field_direction()
        .iter()
        .zip(&u)
        .map(|(b, u)| b * u)
        .sum();
    let amplitude = (slope > 0.0).then(|| bu * bu / (nb as f64 * slope));
    let components: Vec<f64> = level
        .site_vars
        .iter()
        .map(|&v| {
            probe
                .odd()
                .iter()
                .position(|&k| k == v)
                .map_or(0.0, |i| u[i])
        })
        .collect();
    let (mode, kind) = classify(&components);
    let site_mode = mode
        .iter()
        .map(|&c| nalgebra::Complex::new(c, 0.0))
        .collect();
    Ok(CriticalPoint {
        level: level.name.clone(),
        max_cluster_sites: level.max_cluster_sites,
        field: options.field,
        tc: Some(tc),
        searched_down_to: lo,
        mode,
        kind,
        ordering: Some(crate::ordering::Ordering::new(
            lattice.dimension(),
            [0.0; 3],
            site_mode,
        )),
        amplitude,
        notes: vec![SYMMETRIC_ONLY.to_string()],
        seconds: clock.elapsed().as_secs_f64(),
    })
}

/// Make room in a history of solutions kept for warm starts: with `keep` or more
/// entries, drop the one whose temperature (`temperature`) lies farthest from `t`.
pub(crate) fn drop_farthest<E>(
    history: &mut Vec<E>,
    keep: usize,
    t: f64,
    temperature: impl Fn(&E) -> f64,
) {
    if history.len() < keep {
        return;
    }
    if let Some(far) = (0..history.len()).max_by(|&i, &j| {
        (temperature(&history[i]) - t)
            .abs()
            .total_cmp(&(temperature(&history[j]) - t).abs())
    }) {
        history.swap_remove(far);
    }
}

/// Levels shared by the unit tests of the big-level modules.
#[cfg(test)]
pub(crate) mod test_levels {
    use rungs_lattice::{CompactLevel, Lattice};

    /// The compact n×n block level of the shipped square lattice.
    pub fn square_block(n: usize) -> CompactLevel {
        let path = concat!(env!("CARGO_MANIFEST_DIR"), "/../../lattices/square.yaml");
        let name = format!("block{n}x{n}");
        let lattice = Lattice::from_file(std::path::Path::new(path))
            .and_then(|l| l.with_block_level(&name, [n, n, 1]))
            .expect("the shipped square lattice");
        CompactLevel::build(&lattice, &name).expect("a compact square block")
    }
}
