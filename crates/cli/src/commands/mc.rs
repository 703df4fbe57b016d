//! `rungs mc LATTICE --sizes 8,16,32 --temps ... [--sweeps N] [--warmup N] [--seed S]`:
//! Monte Carlo on finite periodic tori of the lattice (L cells along every primitive
//! vector), with a Binder-cumulant crossing estimate of Tc.
//!
//! Wolff cluster updates (Wolff 1989, Phys. Rev. Lett. 62, 361) where every coupling is
//! ferromagnetic and h = 0, Metropolis otherwise. A sweep flips, on average, as many
//! spins as the torus has sites (Metropolis: one attempted flip per site). Each
//! (size, temperature) point is seeded from (seed, size, temperature index), so the
//! same seed gives the same numbers however the points are scheduled.
//!
//! Every argument is checked, and the run's memory and time estimated, before any torus
//! is built (`rungs_reference::montecarlo::plan`): a torus too large for memory is
//! refused with exit status 2 naming the limit. The susceptibility reported is
//! χ′ = N(⟨m²⟩ − ⟨|m|⟩²)/T ([`CHI_PRIME`]), which is not `sweep`'s χ = ∂m/∂h; the CSV
//! column says so (`susceptibility_abs_m`), JSON keeps the contract's `susceptibility`
//! and states both definitions under `definitions`.

use rungs_reference::montecarlo::{self, McConfig, McError, McReport, RunPlan};
use serde_json::Value;

use crate::args::McArgs;
use crate::error::CliError;
use crate::output::{num, Block, Grid, Output, Report, TextDoc};
use crate::progress::{seconds, Progress};

/// Table header of the Monte Carlo susceptibility: not `sweep`'s χ = ∂m/∂h.
pub const CHI_PRIME: &str = "χ′ = N(⟨m²⟩−⟨|m|⟩²)/T";

/// Run `rungs mc`.
pub fn run(args: &McArgs, out: &mut Output) -> Result<(), CliError> {
    let lattice = super::load_lattice(&args.common.lattice)?;
    let config = McConfig {
        temperatures: args.temps.0.clone(),
        sweeps: usize::try_from(args.sweeps).unwrap_or(usize::MAX),
        warmup: usize::try_from(args.warmup).unwrap_or(usize::MAX),
        seed: args.seed,
        ..McConfig::default()
    };
    // Every argument checked and the memory estimated before any torus is built.
    let plan = montecarlo::plan(
        &lattice,
        &args.sizes.0,
        &config,
        rayon::current_num_threads(),
    )
    .map_err(mc_error)?;
    let points = plan.sizes.len() * config.temperatures.len();
    let progress = Progress::new(
        (points * (config.sweeps + config.warmup)) as u64,
        &progress_label(&plan, config.temperatures.len()),
    );
    let observer = progress.observer();
    let result =
        montecarlo::run(&lattice, &args.sizes.0, &config, Some(&observer)).map_err(mc_error)?;
    progress.finish();
    out.emit(&McReport {
        lattice: lattice.name().to_string(),
        dimension: lattice.dimension(),
        result,
    })
}

/// The progress label of a run: what is simulated and the rough cost, e.g.
/// `Monte Carlo L = 8, 16 × 3 T (est. 2 MiB, 40.0 s)`.
fn progress_label(plan: &RunPlan, temperatures: usize) -> String {
    let sizes: Vec<String> = plan.sizes.iter().map(usize::to_string).collect();
    let mib = plan.bytes as f64 / (1u64 << 20) as f64;
    let memory = if mib < 1024.0 {
        format!("{:.0} MiB", mib.max(1.0))
    } else {
        format!("{:.1} GiB", mib / 1024.0)
    };
    format!(
        "Monte Carlo L = {} × {temperatures} T (est. {memory}, {})",
        sizes.join(", "),
        seconds(std::time::Duration::from_secs_f64(plan.seconds.min(1e9))),
    )
}

/// Monte Carlo errors are all about the request (sizes, temperatures, sweeps): exit 2.
fn mc_error(e: McError) -> CliError {
    CliError::Usage(format!("Monte Carlo: {e}"))
}

impl Report for McReport {
    /// The library result's own serialization (`rungs_reference::montecarlo::McReport`),
    /// the same that the Python package returns.
    fn json(&self) -> Result<Value, serde_json::Error> {
        serde_json::to_value(self)
    }

    fn csv(&self) -> Grid {
        let mut grid = Grid::new([
            "size",
            "sites",
            "temperature",
            "energy",
            "energy_error",
            "abs_magnetization",
            "abs_magnetization_error",
            "binder",
            "binder_error",
            "specific_heat",
            "specific_heat_error",
            "susceptibility_abs_m",
            "susceptibility_abs_m_error",
            "spins_flipped",
            "seconds",
        ]);
        for p in &self.result.points {
            grid.push([
                p.size.to_string(),
                p.sites.to_string(),
                num(p.temperature),
                num(p.energy),
                num(p.energy_error),
                num(p.abs_magnetization),
                num(p.abs_magnetization_error),
                num(p.binder),
                num(p.binder_error),
                num(p.specific_heat),
                num(p.specific_heat_error),
                num(p.susceptibility),
                num(p.susceptibility_error),
                p.spins_flipped.to_string(),
                num(p.seconds),
            ]);
        }
        grid
    }

    fn table(&self) -> TextDoc {
        let pm = |v: f64, e: f64| format!("{} ± {}", fmt4(v), fmt_err(e));
        let mut grid = Grid::new([
            "L",
            "sites",
            "T",
            "energy",
            "|m|",
            "Binder U4",
            "C",
            CHI_PRIME,
            "update",
            "s",
        ]);
        for p in &self.result.points {
            grid.push([
                p.size.to_string(),
                p.sites.to_string(),
                num(p.temperature),
                pm(p.energy, p.energy_error),
                pm(p.abs_magnetization, p.abs_magnetization_error),
                pm(p.binder, p.binder_error),
                pm(p.specific_heat, p.specific_heat_error),
                pm(p.susceptibility, p.susceptibility_error),
                p.algorithm.name().to_string(),
                format!("{:.2}", p.seconds),
            ]);
        }
        let mut blocks = vec![
            Block::Table(grid),
            Block::Heading("Critical temperature".into()),
        ];
        blocks.push(Block::Line(match &self.result.tc_estimate {
            Some(t) => format!("Binder-cumulant crossing: Tc = {} ± {}", fmt4(t.tc), fmt_err(t.tc_error)),
            None => "no Binder-cumulant crossing between the temperatures given: widen --temps around Tc or add sizes".into(),
        }));
        let mut notes = vec![
            format!("per-site values on L×…×L tori; seed {} (same seed, same numbers)", self.result.seed),
            "U4 = 1 − ⟨m⁴⟩/(3⟨m²⟩²) (Binder 1981); error bars: binning (means), jackknife (U4, C, χ′)".into(),
            "C = N(⟨e²⟩ − ⟨e⟩²)/T², the same quantity as `sweep`'s C = ∂U/∂T; χ′ = N(⟨m²⟩ − ⟨|m|⟩²)/T, \
             the finite-torus susceptibility from fluctuations of |m| (common practice in finite-size Monte Carlo), \
             NOT `sweep`'s χ = ∂m/∂h: above Tc, where m is near-Gaussian (⟨|m|⟩² = (2/π)⟨m²⟩), \
             χ′ ≈ (1 − 2/π) χ ≈ 0.36 χ"
                .into(),
        ];
        if self.dimension == 1 {
            notes.push("a one-dimensional lattice has no order at T > 0: U4 curves do not cross at a finite Tc".into());
        }
        TextDoc {
            title: format!("Monte Carlo on `{}`", self.lattice),
            blocks,
            notes,
        }
    }
}

fn fmt4(v: f64) -> String {
    if v.is_finite() {
        format!("{v:.4}")
    } else {
        "-".into()
    }
}

fn fmt_err(e: f64) -> String {
    if e.is_finite() {
        format!("{e:.1e}")
    } else {
        "-".into()
    }
}
