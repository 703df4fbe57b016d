//! The Monte Carlo driver: every (size, temperature) point of a run, in parallel with
//! rayon, each seeded from (seed, size, temperature index) alone so that results are the
//! same whatever the thread count or scheduling (only `seconds` varies).
//!
//! Each point starts from all spins up, runs `warmup` sweeps, then `sweeps` measured
//! sweeps, one sample after each. For Wolff the second half of the warmup sets the
//! clusters per measured sweep (see [`super::wolff`]). Wolff clusters are used when every
//! J ≥ 0 and h = 0, or when h = 0 and a sublattice gauge makes every bond ferromagnetic
//! (an antiferromagnet on a bipartite lattice, [`super::gauge`]); Metropolis sweeps
//! otherwise (or as [`Algorithm`] forces). Each sample records the energy, the order
//! parameter of the run ([`super::order`]) and the uniform magnetisation.

use std::sync::atomic::{AtomicUsize, Ordering};
use std::time::Instant;

use rayon::prelude::*;
use rungs_lattice::{Lattice, Torus};

use super::binder::{binder_crossing, TcEstimate};
use super::budget::{check_run, plan};
use super::error::McError;
use super::gauge::ferromagnetic_gauge;
use super::metropolis::Metropolis;
use super::neighbours::Neighbours;
use super::observables::{estimate, sample, BinnedSeries, Estimates, MIN_BINS};
use super::order::{Order, OrderPattern};
use super::rng::{point_seed, rng_from_seed, McRng};
use super::wolff::Wolff;

/// A progress observer: called with (sweeps done, sweeps in total) over all points,
/// possibly from several threads at once.
pub type Progress<'a> = &'a (dyn Fn(usize, usize) + Sync);

/// Which update to use.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Algorithm {
    /// Wolff when every J ≥ 0 and h = 0, Metropolis otherwise.
    #[default]
    Auto,
    /// Wolff single-cluster updates (refused unless every J ≥ 0 and h = 0).
    Wolff,
    /// Sequential single-spin Metropolis.
    Metropolis,
}

impl Algorithm {
    /// Lower-case name for reports: `auto`, `wolff`, `metropolis`.
    pub fn name(self) -> &'static str {
        match self {
            Algorithm::Auto => "auto",
            Algorithm::Wolff => "wolff",
            Algorithm::Metropolis => "metropolis",
        }
    }
}

/// Run parameters shared by every point.
#[derive(Debug, Clone, PartialEq)]
pub struct McConfig {
    /// Temperatures (> 0), reported in this order.
    pub temperatures: Vec<f64>,
    /// Measured sweeps per point (at least `2 · MIN_BINS` = 64).
    pub sweeps: usize,
    /// Sweeps discarded before measuring.
    pub warmup: usize,
    /// Seed of the whole run.
    pub seed: u64,
    /// Update algorithm.
    pub algorithm: Algorithm,
}

impl Default for McConfig {
    fn default() -> Self {
        McConfig {
            temperatures: Vec::new(),
            sweeps: 10_000,
            warmup: 1_000,
            seed: 1,
            algorithm: Algorithm::Auto,
        }
    }
}

/// One finite torus to simulate: its neighbour table, field, linear size (the label
/// used in results and in the Binder analysis) and what to measure.
#[derive(Debug, Clone, PartialEq)]
pub struct System {
    /// Linear size (cells per direction).
    pub size: usize,
    /// Bonds of the torus (after the gauge, if `gauged`).
    pub neighbours: Neighbours,
    /// Uniform field h.
    pub field: f64,
    /// The order parameter M on this torus, in the simulated spins.
    pub order: OrderPattern,
    /// The uniform magnetisation m of the physical spins, in the simulated spins: plain
    /// (no weights), or the gauge ε when `gauged`.
    pub magnetization: OrderPattern,
    /// Whether the spins simulated are `σ_i = ε_i s_i` of a sublattice gauge
    /// ([`super::gauge`]) that made every bond ferromagnetic.
    pub gauged: bool,
}

impl System {
    /// A torus measuring the uniform magnetisation, with no gauge.
    pub fn new(size: usize, neighbours: Neighbours, field: f64) -> System {
        System {
            size,
            neighbours,
            field,
            order: OrderPattern::uniform(),
            magnetization: OrderPattern::uniform(),
            gauged: false,
        }
    }

    /// The torus of `lattice` at linear size `size`, measuring `order` (whose period
    /// must divide `size`). When the field is zero, some bond is antiferromagnetic and
    /// `algorithm` is not [`Algorithm::Metropolis`], the sublattice gauge that makes
    /// every bond ferromagnetic is applied if one exists ([`super::gauge`]), so that
    /// Wolff clusters can run; the order parameter and m are then read through it.
    pub fn on_torus(
        lattice: &Lattice,
        size: usize,
        order: &Order,
        algorithm: Algorithm,
    ) -> Result<System, McError> {
        order.check_size(size)?;
        let torus = Torus::new(lattice, &vec![size; lattice.dimension()])
            .map_err(|source| McError::Torus { size, source })?;
        let pattern = order.on_torus(&torus)?;
        let field = lattice.field();
        let edges = torus.edges();
        let ferromagnetic = edges.iter().all(|e| e.2 >= 0.0);
        if !ferromagnetic && field == 0.0 && algorithm != Algorithm::Metropolis {
            if let Some(eps) = ferromagnetic_gauge(torus.sites(), &edges) {
                // ε_i ε_j J_ij ≥ 0 on every bond, so the gauged coupling is |J_ij|.
                let gauged: Vec<_> = edges.iter().map(|&(i, j, c)| (i, j, c.abs())).collect();
                return Ok(System {
                    size,
                    neighbours: Neighbours::from_edges(torus.sites(), &gauged)?,
                    field,
                    order: pattern.gauged(&eps)?,
                    magnetization: OrderPattern::uniform().gauged(&eps)?,
                    gauged: true,
                });
            }
        }
        Ok(System {
            order: pattern,
            ..System::new(size, Neighbours::from_edges(torus.sites(), &edges)?, field)
        })
    }
}

/// Results of one (size, temperature) point; values per site. Serialised (JSON) with
/// the estimates' keys inline.
#[derive(Debug, Clone, PartialEq, Default, serde::Serialize)]
pub struct McPoint {
    /// Linear size (cells per direction).
    pub size: usize,
    /// Sites of the torus.
    pub sites: usize,
    /// Temperature.
    pub temperature: f64,
    /// The measured estimates (energy, order parameter, U4, C, χ).
    #[serde(flatten)]
    pub estimates: Estimates,
    /// The algorithm used (`Wolff` or `Metropolis`).
    #[serde(serialize_with = "algorithm_name")]
    pub algorithm: Algorithm,
    /// Whether the spins were simulated in a sublattice gauge ([`System::gauged`]).
    pub gauged: bool,
    /// Spins flipped during the measured sweeps.
    pub spins_flipped: u64,
    /// Wall-clock seconds for the point, warmup included.
    pub seconds: f64,
}

fn algorithm_name<S: serde::Serializer>(a: &Algorithm, s: S) -> Result<S::Ok, S::Error> {
    s.serialize_str(a.name())
}

/// A whole run.
#[derive(Debug, Clone, PartialEq)]
pub struct McResult {
    /// The run's seed.
    pub seed: u64,
    /// Linear sizes simulated, in order.
    pub sizes: Vec<usize>,
    /// One point per (size, temperature), sizes outer, temperatures inner, in input order.
    pub points: Vec<McPoint>,
    /// Binder-crossing estimate of Tc; `None` when no crossing is bracketed.
    pub tc_estimate: Option<TcEstimate>,
}

/// Simulate `lattice` on `L × … × L` tori for every L in `sizes` (sorted, duplicates
/// dropped) at every temperature of `config`, measuring `order`. Every argument is
/// checked, and the memory the run needs estimated, before any torus is built
/// ([`plan`]); a size that is not a multiple of the order's period is refused
/// ([`McError::Incommensurate`]; [`Order::fit_size`] rounds up).
pub fn run(
    lattice: &Lattice,
    sizes: &[usize],
    config: &McConfig,
    order: &Order,
    progress: Option<Progress>,
) -> Result<McResult, McError> {
    let plan = plan(lattice, sizes, config, order, rayon::current_num_threads())?;
    let systems = plan
        .sizes
        .iter()
        .map(|&size| System::on_torus(lattice, size, order, config.algorithm))
        .collect::<Result<Vec<_>, McError>>()?;
    run_systems(&systems, config, progress)
}

/// Simulate every system at every temperature of `config`, in parallel.
pub fn run_systems(
    systems: &[System],
    config: &McConfig,
    progress: Option<Progress>,
) -> Result<McResult, McError> {
    check_run(config)?;
    if systems.is_empty() {
        return Err(McError::Empty("sizes"));
    }
    let algorithms = systems
        .iter()
        .map(|s| choose(s, config.algorithm))
        .collect::<Result<Vec<_>, McError>>()?;
    let nt = config.temperatures.len();
    let per_point = config.warmup + config.sweeps;
    let total = systems.len() * nt * per_point;
    let done = AtomicUsize::new(0);
    let report = |n: usize| {
        let now = done.fetch_add(n, Ordering::Relaxed) + n;
        if let Some(p) = progress {
            p(now, total);
        }
    };
    // Largest systems first for load balance; collect() keeps index order.
    let points = (0..systems.len() * nt)
        .into_par_iter()
        .map(|k| {
            let (si, ti) = (systems.len() - 1 - k / nt, k % nt);
            let system = &systems[si];
            let seed = point_seed(config.seed, system.size, ti);
            let point = simulate(
                system,
                config.temperatures[ti],
                config,
                algorithms[si],
                seed,
                &report,
            )?;
            Ok((si, ti, point))
        })
        .collect::<Result<Vec<_>, McError>>()?;
    let mut ordered: Vec<Option<McPoint>> = vec![None; points.len()];
    for (si, ti, point) in points {
        ordered[si * nt + ti] = Some(point);
    }
    let points: Vec<McPoint> = ordered.into_iter().flatten().collect();
    let tc_estimate = binder_crossing(&points);
    Ok(McResult {
        seed: config.seed,
        sizes: systems.iter().map(|s| s.size).collect(),
        points,
        tc_estimate,
    })
}

/// Simulate one system at one temperature with the given seed (no progress reports).
pub fn simulate_point(
    system: &System,
    temperature: f64,
    config: &McConfig,
    seed: u64,
) -> Result<McPoint, McError> {
    if !(temperature.is_finite() && temperature > 0.0) {
        return Err(McError::BadTemperature(temperature));
    }
    if config.sweeps < 2 * MIN_BINS {
        return Err(McError::TooFewSweeps {
            sweeps: config.sweeps,
            min: 2 * MIN_BINS,
        });
    }
    let algorithm = choose(system, config.algorithm)?;
    simulate(system, temperature, config, algorithm, seed, &|_| {})
}

/// The algorithm for a system: Wolff when valid unless Metropolis is asked for.
fn choose(system: &System, asked: Algorithm) -> Result<Algorithm, McError> {
    if !system.field.is_finite() {
        return Err(McError::BadField(system.field));
    }
    let wolff_ok = system.neighbours.is_ferromagnetic() && system.field == 0.0;
    match asked {
        Algorithm::Metropolis => Ok(Algorithm::Metropolis),
        Algorithm::Auto if wolff_ok => Ok(Algorithm::Wolff),
        Algorithm::Auto => Ok(Algorithm::Metropolis),
        Algorithm::Wolff if wolff_ok => Ok(Algorithm::Wolff),
        Algorithm::Wolff => Err(McError::WolffNotApplicable {
            detail: if system.field != 0.0 {
                format!("the field is h = {}", system.field)
            } else {
                "some couplings are antiferromagnetic".into()
            },
        }),
    }
}

/// The updater of one point, chosen once.
enum Updater {
    Wolff(Wolff),
    Metropolis(Metropolis),
}

impl Updater {
    fn sweep(&mut self, n: &Neighbours, spins: &mut [i8], rng: &mut McRng) -> u64 {
        match self {
            Updater::Wolff(w) => w.sweep(n, spins, rng),
            Updater::Metropolis(m) => m.sweep(n, spins, rng),
        }
    }
}

/// One point with the algorithm `choose` picked. `report(n)` is told of every n sweeps.
fn simulate(
    system: &System,
    t: f64,
    config: &McConfig,
    algorithm: Algorithm,
    seed: u64,
    report: &(dyn Fn(usize) + Sync),
) -> Result<McPoint, McError> {
    let start = Instant::now();
    let n = &system.neighbours;
    let sites = n.sites();
    let mut rng = rng_from_seed(seed);
    let mut updater = match algorithm {
        Algorithm::Wolff => Updater::Wolff(Wolff::new(n, t)?),
        _ => Updater::Metropolis(Metropolis::new(t, system.field)?),
    };
    let mut spins = vec![1i8; sites];
    let chunk = ((config.warmup + config.sweeps) / 100).max(1);
    let mut pending = 0;
    let tick = |pending: &mut usize| {
        *pending += 1;
        if *pending == chunk {
            report(chunk);
            *pending = 0;
        }
    };
    for w in 0..config.warmup {
        if w == config.warmup / 2 {
            if let Updater::Wolff(wolff) = &mut updater {
                wolff.reset_statistics();
            }
        }
        updater.sweep(n, &mut spins, &mut rng);
        tick(&mut pending);
    }
    if let Updater::Wolff(wolff) = &mut updater {
        wolff.fix_clusters_per_sweep(n, &mut spins, &mut rng);
    }
    let mut series = BinnedSeries::new();
    let mut flipped = 0;
    let inv = 1.0 / sites as f64;
    for _ in 0..config.sweeps {
        flipped += updater.sweep(n, &mut spins, &mut rng);
        let (e, m) = n.energy_magnetization(&spins, system.field);
        let uniform = system.magnetization.length(&spins, m);
        let order = if system.order.is_uniform() && !system.gauged {
            uniform
        } else {
            system.order.length(&spins, m)
        };
        series.push(sample(e * inv, order, uniform));
        tick(&mut pending);
    }
    if pending > 0 {
        report(pending);
    }
    Ok(McPoint {
        size: system.size,
        sites,
        temperature: t,
        estimates: estimate(&series, sites, t),
        algorithm,
        gauged: system.gauged,
        spins_flipped: flipped,
        seconds: start.elapsed().as_secs_f64(),
    })
}

#[cfg(test)]
mod tests {
    use std::sync::Mutex;

    use super::*;

    fn ring(size: usize, j: f64, field: f64) -> System {
        let edges: Vec<_> = (0..size).map(|i| (i, (i + 1) % size, j)).collect();
        System::new(size, Neighbours::from_edges(size, &edges).unwrap(), field)
    }

    fn config() -> McConfig {
        McConfig {
            temperatures: vec![0.8, 1.5, 3.0],
            sweeps: 300,
            warmup: 30,
            ..McConfig::default()
        }
    }

    fn run_in_pool(threads: usize) -> Vec<McPoint> {
        let pool = rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .unwrap();
        let systems = [ring(8, 1.0, 0.0), ring(12, -1.0, 0.0), ring(16, 1.0, 0.3)];
        let mut points = pool.install(|| run_systems(&systems, &config(), None).unwrap().points);
        points.iter_mut().for_each(|p| p.seconds = 0.0);
        points
    }

    #[test]
    fn results_do_not_depend_on_the_thread_count() {
        let one = run_in_pool(1);
        assert_eq!(one, run_in_pool(3));
        let algorithms: Vec<_> = one.iter().map(|p| p.algorithm).collect();
        use Algorithm::{Metropolis as M, Wolff as W};
        assert_eq!(algorithms, vec![W, W, W, M, M, M, M, M, M]);
    }

    #[test]
    fn progress_reaches_the_total_and_bad_input_is_refused() {
        let seen = Mutex::new((0usize, 0usize));
        let observe = |done: usize, total: usize| {
            let mut s = seen.lock().unwrap();
            assert!(done <= total);
            *s = (s.0.max(done), total);
        };
        run_systems(&[ring(8, 1.0, 0.0)], &config(), Some(&observe)).unwrap();
        assert_eq!(*seen.lock().unwrap(), (3 * 330, 3 * 330));

        let bad = |c: McConfig| run_systems(&[ring(8, 1.0, 0.0)], &c, None).unwrap_err();
        assert!(matches!(
            bad(McConfig {
                sweeps: 10,
                ..config()
            }),
            McError::TooFewSweeps { .. }
        ));
        assert!(matches!(
            bad(McConfig {
                temperatures: vec![-1.0],
                ..config()
            }),
            McError::BadTemperature(_)
        ));
        assert!(matches!(
            bad(McConfig {
                temperatures: vec![],
                ..config()
            }),
            McError::Empty(_)
        ));
        let forced = McConfig {
            algorithm: Algorithm::Wolff,
            ..config()
        };
        assert!(matches!(
            run_systems(&[ring(8, -1.0, 0.0)], &forced, None),
            Err(McError::WolffNotApplicable { .. })
        ));
    }

    #[test]
    fn the_ising_chain_energy_matches_its_closed_form() {
        // Open-boundary-free ring of 64 sites at T = 1: u = -tanh(1/T) up to corrections
        // of order tanh(1/T)^64 ≈ 1e-14 (Ising 1925, Z. Phys. 31, 253).
        let c = McConfig {
            temperatures: vec![1.0],
            sweeps: 20_000,
            warmup: 500,
            ..McConfig::default()
        };
        let p = &run_systems(&[ring(64, 1.0, 0.0)], &c, None).unwrap().points[0];
        let exact = -(1.0f64).tanh();
        assert!(
            (p.estimates.energy - exact).abs() < 4.0 * p.estimates.energy_error,
            "{} ± {}",
            p.estimates.energy,
            p.estimates.energy_error
        );
    }
}
