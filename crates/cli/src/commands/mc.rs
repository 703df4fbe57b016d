//! `rungs mc LATTICE --sizes 8,16,32 --temps ... [--sweeps N] [--warmup N] [--seed S]`:
//! Monte Carlo on finite periodic tori of the lattice (L cells along every primitive
//! vector), with a Binder-cumulant crossing estimate of Tc.
//!
//! Wolff cluster updates (Wolff 1989, Phys. Rev. Lett. 62, 361) where every coupling is
//! ferromagnetic and h = 0, Metropolis otherwise. A sweep flips, on average, as many
//! spins as the torus has sites (Metropolis: one attempted flip per site). Each
//! (size, temperature) point is seeded from (seed, size, temperature index), so the
//! same seed gives the same numbers however the points are scheduled.

use rungs_reference::montecarlo::{self, McConfig, McError, McResult};
use serde_json::{json, Value};

use crate::args::McArgs;
use crate::error::CliError;
use crate::output::{num, Block, Grid, Output, Report, TextDoc};
use crate::progress::Progress;

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
    let points = args.sizes.0.len() * config.temperatures.len();
    let progress = Progress::new(
        (points * (config.sweeps + config.warmup)) as u64,
        "Monte Carlo sweeps",
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

/// Monte Carlo errors are all about the request (sizes, temperatures, sweeps): exit 2.
fn mc_error(e: McError) -> CliError {
    CliError::Usage(format!("Monte Carlo: {e}"))
}

/// The `mc` result for the exporters.
struct McReport {
    lattice: String,
    dimension: usize,
    result: McResult,
}

impl Report for McReport {
    fn json(&self) -> Result<Value, serde_json::Error> {
        let points: Vec<Value> = self
            .result
            .points
            .iter()
            .map(|p| {
                json!({
                    "size": p.size, "sites": p.sites, "temperature": p.temperature,
                    "energy": p.energy, "energy_error": p.energy_error,
                    "abs_magnetization": p.abs_magnetization, "abs_magnetization_error": p.abs_magnetization_error,
                    "binder": p.binder, "binder_error": p.binder_error,
                    "specific_heat": p.specific_heat, "susceptibility": p.susceptibility,
                    "specific_heat_error": p.specific_heat_error, "susceptibility_error": p.susceptibility_error,
                    "algorithm": p.algorithm.name(), "errors_converged": p.errors_converged,
                    "spins_flipped": p.spins_flipped, "seconds": p.seconds,
                })
            })
            .collect();
        let tc = self.result.tc_estimate.as_ref().map(|t| {
            json!({"tc": t.tc, "tc_error": t.tc_error, "method": t.method,
                   "crossings": t.crossings.iter().map(|c| json!({
                       "size_small": c.size_small, "size_large": c.size_large, "tc": c.tc, "tc_error": c.tc_error,
                   })).collect::<Vec<_>>()})
        });
        Ok(json!({
            "lattice": self.lattice, "seed": self.result.seed, "sizes": self.result.sizes,
            "points": points, "tc_estimate": tc,
        }))
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
            "susceptibility",
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
                num(p.susceptibility),
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
            "χ",
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
                fmt4(p.specific_heat),
                fmt4(p.susceptibility),
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
            "U4 = 1 − ⟨m⁴⟩/(3⟨m²⟩²) (Binder 1981); error bars: binning (means), jackknife (U4, C, χ)".into(),
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
