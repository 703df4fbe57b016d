//! What a Monte Carlo run will cost, known before anything is allocated: [`plan`] checks
//! every argument of [`super::run()`] (sizes, temperatures, sweeps, field, algorithm) and
//! estimates the peak memory and the work of the run from the lattice's cell alone, so a
//! request that cannot fit is refused in microseconds instead of aborting the process
//! when an allocation of hundreds of gigabytes fails.
//!
//! Memory, per torus of S sites and B = S·(bonds per cell)/(sites per cell) bonds, from
//! the data structures built for it (byte counts of the types used, 64-bit target):
//! * while it is built ([`rungs_lattice::Torus`], then [`super::Neighbours`]):
//!   the graph, 40 B per site (site label 32 B + links 8 B) and 24 B per bond (weight,
//!   ends, links); first the set of seen pairs, at most 64 B per bond (16 B entries
//!   plus a control byte in a table 7/16 to 7/8 full, old and new table alive during a
//!   resize), then instead the edge list, 24 B per bond, and the neighbour table under
//!   construction, 12 B per site and 32 B per bond — at most
//!   [`BUILD_BYTES_PER_SITE`] = 52 and [`BUILD_BYTES_PER_BOND`] = 88 at the peak;
//! * kept for the run ([`super::Neighbours`]): offsets 4 B per site, and per bond two
//!   slots of target (4 B), coupling (8 B) and coupling kind (4 B) —
//!   [`KEPT_BYTES_PER_SITE`] = 4, [`KEPT_BYTES_PER_BOND`] = 32; and the order
//!   parameter's weights ([`super::OrderPattern`]), 8 B per site and component, plus one
//!   component more for the gauge of an antiferromagnet ([`ORDER_BYTES_PER_SITE`]);
//! * per point being simulated (one per worker thread): spins 1 B and the Wolff stack
//!   4 B per site ([`POINT_BYTES_PER_SITE`] = 5), plus the fixed measurement store
//!   ([`POINT_BYTES`]).
//!
//! Tori are built smallest first and all kept, so the peak is the larger of building
//! the largest (with the others kept) and simulating (every table kept, one point per
//! thread on the largest). Work: every sweep updates about as many spins as the torus
//! has sites, so a run makes Σ_L S_L · (warmup + sweeps) · (temperatures) site updates;
//! at [`NS_PER_SITE_UPDATE`] each that is the time estimate.

use rungs_lattice::Lattice;

use super::error::McError;
use super::observables::{BinnedSeries, K, MIN_BINS};
use super::order::Order;
use super::run::{Algorithm, McConfig};

/// Largest peak memory a run may need, in bytes (8 GiB).
pub const MAX_BYTES: u64 = 8 << 30;
/// Largest torus: site indices are 32-bit.
pub const MAX_SITES: u64 = u32::MAX as u64;
/// Peak bytes per site while a torus is built.
pub const BUILD_BYTES_PER_SITE: u64 = 52;
/// Peak bytes per bond while a torus is built.
pub const BUILD_BYTES_PER_BOND: u64 = 88;
/// Bytes per site of a kept neighbour table.
pub const KEPT_BYTES_PER_SITE: u64 = 4;
/// Bytes per bond of a kept neighbour table.
pub const KEPT_BYTES_PER_BOND: u64 = 32;
/// Bytes per site and order-parameter component (one f64 weight).
pub const ORDER_BYTES_PER_SITE: u64 = 8;
/// Bytes per site of one point being simulated (spins and the Wolff stack).
pub const POINT_BYTES_PER_SITE: u64 = 5;
/// Fixed bytes of one point being simulated: the binned measurement store.
pub const POINT_BYTES: u64 = (BinnedSeries::CAPACITY * K * 8) as u64;
/// Rough time of one site update, in nanoseconds: a Wolff flip or a Metropolis visit
/// on a 256 × 256 square torus takes 13–15 ns (docs/benchmarks.md); a guide for
/// progress displays, not a promise.
pub const NS_PER_SITE_UPDATE: f64 = 15.0;

/// The cost of a run, as estimated by [`plan`].
#[derive(Debug, Clone, PartialEq)]
pub struct RunPlan {
    /// Linear sizes, sorted, duplicates dropped (as [`super::run()`] simulates them).
    pub sizes: Vec<usize>,
    /// Sites of each torus, in the order of `sizes`.
    pub sites: Vec<u64>,
    /// Estimated peak memory in bytes.
    pub bytes: u64,
    /// Site updates of the whole run, warm-up included.
    pub site_updates: f64,
    /// Rough wall-clock seconds on `threads` threads at [`NS_PER_SITE_UPDATE`].
    pub seconds: f64,
}

/// Check the arguments of a run of `lattice` on `L × … × L` tori for every `L` in
/// `sizes` with `config`, measuring `order`, and estimate its peak memory and work
/// (module docs) on `threads` worker threads — without building anything. Refuses what
/// [`super::run()`] would refuse (a size that is not a multiple of the order's period
/// among it), and a run whose peak memory would exceed [`MAX_BYTES`]
/// ([`McError::TooMuchMemory`]) or whose torus would exceed [`MAX_SITES`].
///
/// ```
/// use rungs_reference::montecarlo::{plan, McConfig, McError, Order};
/// let square = rungs_lattice::Lattice::from_yaml_str(
///     "name: sq\ndimension: 2\nvectors: [[1.0, 0.0], [0.0, 1.0]]\nbasis: [{name: a}]\n\
///      couplings: {J: 1.0}\nbonds: [{from: a, to: a, cell: [1, 0], coupling: J},\n\
///      {from: a, to: a, cell: [0, 1], coupling: J}]\n",
///     "sq.yaml",
/// )
/// .unwrap();
/// let config = McConfig { temperatures: vec![2.3], ..McConfig::default() };
/// let small = plan(&square, &[16, 32], &config, &Order::Uniform, 2).unwrap();
/// assert_eq!(small.sites, vec![256, 1024]);
/// assert!(small.bytes < 10 << 20);
/// // 10^10 sites cannot fit: refused before anything is allocated.
/// let huge = plan(&square, &[100_000], &config, &Order::Uniform, 2).unwrap_err();
/// assert!(matches!(huge, McError::TooMuchMemory { .. }));
/// ```
pub fn plan(
    lattice: &Lattice,
    sizes: &[usize],
    config: &McConfig,
    order: &Order,
    threads: usize,
) -> Result<RunPlan, McError> {
    check_config(lattice, config)?;
    let mut sizes = sizes.to_vec();
    sizes.sort_unstable();
    sizes.dedup();
    if sizes.is_empty() {
        return Err(McError::Empty("sizes"));
    }
    let cell_sites = lattice.sites_per_cell() as f64;
    let cell_bonds = lattice.bonds().len() as f64;
    let dimension = lattice.dimension() as i32;
    let threads = threads.max(1) as f64;
    // In f64: sizes up to 10^6 in 3D overflow no u64 but their products might.
    let mut kept = 0.0f64;
    let mut peak = 0.0f64;
    let mut sites = Vec::with_capacity(sizes.len());
    let mut site_updates = 0.0;
    let too_much = |size: usize, s: f64, bytes: f64| McError::TooMuchMemory {
        size,
        sites: s,
        gib: bytes / GIB,
        limit_gib: MAX_BYTES as f64 / GIB,
    };
    for &size in &sizes {
        if size == 0 {
            return Err(McError::BadSiteCount {
                sites: 0,
                max: MAX_SITES as usize,
            });
        }
        order.check_size(size)?;
        let cells = (size as f64).powi(dimension);
        let s = cells * cell_sites;
        let b = cells * cell_bonds;
        let build = BUILD_BYTES_PER_SITE as f64 * s + BUILD_BYTES_PER_BOND as f64 * b;
        peak = peak.max(kept + build);
        let weights = ORDER_BYTES_PER_SITE as f64 * (order.components() + 1) as f64;
        kept += (KEPT_BYTES_PER_SITE as f64 + weights) * s + KEPT_BYTES_PER_BOND as f64 * b;
        if peak > MAX_BYTES as f64 {
            return Err(too_much(size, s, peak));
        }
        if s > MAX_SITES as f64 || 2.0 * b > MAX_SITES as f64 {
            return Err(McError::BadSiteCount {
                sites: s as usize,
                max: MAX_SITES as usize,
            });
        }
        sites.push(s as u64);
        site_updates += s * (config.warmup + config.sweeps) as f64;
    }
    let largest = sites.last().copied().unwrap_or(0) as f64;
    let simulate = kept + threads * (POINT_BYTES_PER_SITE as f64 * largest + POINT_BYTES as f64);
    peak = peak.max(simulate);
    if peak > MAX_BYTES as f64 {
        let size = sizes.last().copied().unwrap_or(0);
        return Err(too_much(size, largest, peak));
    }
    site_updates *= config.temperatures.len() as f64;
    Ok(RunPlan {
        sizes,
        sites,
        bytes: peak as u64,
        site_updates,
        seconds: site_updates * NS_PER_SITE_UPDATE * 1e-9 / threads,
    })
}

/// Bytes in a GiB.
const GIB: f64 = (1u64 << 30) as f64;

/// The checks of the run configuration that need no torus: temperatures, sweeps, field
/// and a forced algorithm.
pub(crate) fn check_config(lattice: &Lattice, config: &McConfig) -> Result<(), McError> {
    check_run(config)?;
    let field = lattice.field();
    if !field.is_finite() {
        return Err(McError::BadField(field));
    }
    // Antiferromagnetic bonds are checked on the torus: a sublattice gauge may make
    // them ferromagnetic (super::gauge).
    if config.algorithm == Algorithm::Wolff && field != 0.0 {
        return Err(McError::WolffNotApplicable {
            detail: format!("the field is h = {field}"),
        });
    }
    Ok(())
}

/// The checks shared by every entry point: some temperatures, each positive and finite,
/// and enough measured sweeps for binning error bars.
pub(crate) fn check_run(config: &McConfig) -> Result<(), McError> {
    if config.temperatures.is_empty() {
        return Err(McError::Empty("temperatures"));
    }
    if let Some(&t) = config
        .temperatures
        .iter()
        .find(|t| !(t.is_finite() && **t > 0.0))
    {
        return Err(McError::BadTemperature(t));
    }
    if config.sweeps < 2 * MIN_BINS {
        return Err(McError::TooFewSweeps {
            sweeps: config.sweeps,
            min: 2 * MIN_BINS,
        });
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::montecarlo::{run, Neighbours};
    use rungs_lattice::Torus;

    fn square() -> Lattice {
        Lattice::from_yaml_str(
            "name: sq\ndimension: 2\nvectors: [[1.0, 0.0], [0.0, 1.0]]\nbasis: [{name: a}]\n\
             couplings: {J: 1.0}\nbonds: [{from: a, to: a, cell: [1, 0], coupling: J},\n\
             {from: a, to: a, cell: [0, 1], coupling: J}]\n",
            "sq.yaml",
        )
        .unwrap()
    }

    fn config() -> McConfig {
        McConfig {
            temperatures: vec![2.0, 2.5],
            sweeps: 100,
            warmup: 10,
            ..McConfig::default()
        }
    }

    #[test]
    fn kept_bytes_match_the_neighbour_table() {
        // The kept-table constants are the sizes of `Neighbours`' vectors: 4 B offsets
        // per site (+1), 2 slots per bond of 4 + 8 + 4 B.
        let lattice = square();
        let torus = Torus::new(&lattice, &[8, 8]).unwrap();
        let n = Neighbours::from_torus(&torus).unwrap();
        let exact = 4 * (n.sites() + 1) + 2 * n.bonds() * (4 + 8 + 4);
        let estimate =
            KEPT_BYTES_PER_SITE as usize * n.sites() + KEPT_BYTES_PER_BOND as usize * n.bonds();
        assert!(exact.abs_diff(estimate) <= 8, "{exact} vs {estimate}");
    }

    #[test]
    fn sizes_work_and_memory_grow_with_the_torus() {
        let lattice = square();
        let p = plan(&lattice, &[16, 8, 16], &config(), &Order::Uniform, 2).unwrap();
        assert_eq!(p.sizes, vec![8, 16]);
        assert_eq!(p.sites, vec![64, 256]);
        // (64 + 256) sites × 110 sweeps × 2 temperatures.
        assert_eq!(p.site_updates, 320.0 * 110.0 * 2.0);
        let bigger = plan(&lattice, &[8, 1024], &config(), &Order::Uniform, 2).unwrap();
        assert!(bigger.bytes > 100 * p.bytes / 2);
    }

    #[test]
    fn a_huge_torus_is_refused_with_the_limit() {
        let e = plan(&square(), &[100_000], &config(), &Order::Uniform, 2).unwrap_err();
        let text = e.to_string();
        assert!(matches!(e, McError::TooMuchMemory { .. }), "{e:?}");
        assert!(
            text.contains("8.0 GiB") && text.contains("100000"),
            "{text}"
        );
        // run() refuses it the same way, before building the torus.
        assert!(matches!(
            run(&square(), &[100_000], &config(), &Order::Uniform, None),
            Err(McError::TooMuchMemory { .. })
        ));
    }

    #[test]
    fn arguments_are_checked_before_sizes() {
        let few = McConfig {
            sweeps: 10,
            ..config()
        };
        // Too few sweeps is named even when the size is absurd: the cheap checks come first.
        assert!(matches!(
            plan(&square(), &[1_000_000], &few, &Order::Uniform, 2),
            Err(McError::TooFewSweeps { .. })
        ));
        let cold = McConfig {
            temperatures: vec![0.0],
            ..config()
        };
        assert!(matches!(
            plan(&square(), &[8], &cold, &Order::Uniform, 2),
            Err(McError::BadTemperature(_))
        ));
        let forced = McConfig {
            algorithm: Algorithm::Wolff,
            ..config()
        };
        assert!(matches!(
            plan(&square().with_field(0.5), &[8], &forced, &Order::Uniform, 2),
            Err(McError::WolffNotApplicable { .. })
        ));
        assert!(matches!(
            plan(&square(), &[], &config(), &Order::Uniform, 2),
            Err(McError::Empty(_))
        ));
    }
}
