//! `rungs mc LATTICE --sizes 8,16,32 --temps ... [--sweeps N] [--warmup N] [--seed S]
//! [--order auto|uniform|Q]`: Monte Carlo on finite periodic tori of the lattice (L cells
//! along every primitive vector), measuring the lattice's order parameter, with a
//! Binder-cumulant crossing estimate of Tc.
//!
//! The order parameter (`rungs_solve::order_parameter`) is the projection of the spins
//! on the lattice's ordering pattern: the uniform magnetisation for a ferromagnet, the
//! staggered one for Néel order, the length over the star of q otherwise. Sizes that
//! its pattern does not tile are rounded up to multiples of its period, and the output
//! says so. Wolff cluster updates (Wolff 1989, Phys. Rev. Lett. 62, 361) where every
//! coupling is ferromagnetic, or becomes so by flipping a sublattice, and h = 0;
//! Metropolis otherwise. Each (size, temperature) point is seeded from (seed, size,
//! temperature index), so the same seed gives the same numbers however the points are
//! scheduled.
//!
//! Every argument is checked, and the run's memory and time estimated, before any torus
//! is built (`rungs_reference::montecarlo::plan`): a torus too large for memory is
//! refused with exit status 2 naming the limit. The susceptibility reported is
//! χ′ = N(⟨M²⟩ − ⟨|M|⟩²)/T ([`CHI_PRIME`]), which is not `sweep`'s χ = ∂m/∂h; the CSV
//! column says so (`susceptibility_abs_m`), JSON keeps the contract's `susceptibility`
//! and states both definitions under `definitions`. No Tc is reported when the Binder
//! curves do not cross as an ordering transition's do, or when the ordering is
//! degenerate (frustration): `tc_estimate` is null and `note` says why.

use rungs_reference::montecarlo::report::point_algorithm;
use rungs_reference::montecarlo::{self, McConfig, McError, McReport, RunPlan};
use rungs_solve::tc::fmt_vec;
use serde_json::Value;

use crate::args::McArgs;
use crate::error::CliError;
use crate::output::{num, Block, Grid, Output, Report, TextDoc};
use crate::progress::{seconds, Progress};

/// Table header of the Monte Carlo susceptibility of uniform order: not `sweep`'s
/// χ = ∂m/∂h.
pub const CHI_PRIME: &str = "χ′ = N(⟨m²⟩−⟨|m|⟩²)/T";
/// The same for any other order parameter M.
pub const CHI_PRIME_ORDER: &str = "χ′ = N(⟨M²⟩−⟨|M|⟩²)/T";

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
    let prepared =
        montecarlo::prepare(&lattice, &args.sizes.0, &config, &args.order).map_err(mc_error)?;
    let points = prepared.plan.sizes.len() * config.temperatures.len();
    let progress = Progress::new(
        (points * (config.sweeps + config.warmup)) as u64,
        &progress_label(&prepared.plan, config.temperatures.len()),
    );
    let observer = progress.observer();
    let report = prepared
        .run(&lattice, &config, Some(&observer))
        .map_err(mc_error)?;
    progress.finish();
    out.emit(&report)
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
        self.to_json()
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
            "order_parameter",
            "order_parameter_error",
            "binder_order",
            "binder_order_error",
            "uniform_magnetization",
            "uniform_magnetization_error",
            "algorithm",
            "wavevector",
        ]);
        let q: Vec<String> = self.wavevector().iter().map(|&c| num(c)).collect();
        let q = q.join(" ");
        for p in &self.result.points {
            let e = &p.estimates;
            grid.push([
                p.size.to_string(),
                p.sites.to_string(),
                num(p.temperature),
                num(e.energy),
                num(e.energy_error),
                num(e.abs_magnetization),
                num(e.abs_magnetization_error),
                num(e.binder),
                num(e.binder_error),
                num(e.specific_heat),
                num(e.specific_heat_error),
                num(e.susceptibility),
                num(e.susceptibility_error),
                p.spins_flipped.to_string(),
                num(p.seconds),
                num(e.abs_magnetization),
                num(e.abs_magnetization_error),
                num(e.binder),
                num(e.binder_error),
                num(e.uniform_magnetization),
                num(e.uniform_magnetization_error),
                point_algorithm(p.algorithm, p.gauged),
                q.clone(),
            ]);
        }
        grid
    }

    fn table(&self) -> TextDoc {
        let pm = |v: f64, e: f64| format!("{} ± {}", fmt4(v), fmt_err(e));
        let order_header = if self.parameter.is_uniform() {
            "|m|".to_string()
        } else {
            format!("|M| ({})", self.parameter.pattern())
        };
        let mut grid = Grid::new([
            "L".to_string(),
            "sites".into(),
            "T".into(),
            "energy".into(),
            order_header,
            "Binder U4".into(),
            "C".into(),
            if self.parameter.is_uniform() {
                CHI_PRIME.into()
            } else {
                CHI_PRIME_ORDER.into()
            },
            "update".into(),
            "s".into(),
        ]);
        for p in &self.result.points {
            let e = &p.estimates;
            grid.push([
                p.size.to_string(),
                p.sites.to_string(),
                num(p.temperature),
                pm(e.energy, e.energy_error),
                pm(e.abs_magnetization, e.abs_magnetization_error),
                pm(e.binder, e.binder_error),
                pm(e.specific_heat, e.specific_heat_error),
                pm(e.susceptibility, e.susceptibility_error),
                point_algorithm(p.algorithm, p.gauged),
                format!("{:.2}", p.seconds),
            ]);
        }
        let d = self.dimension;
        let mut blocks = vec![
            Block::Fields(vec![
                ("order parameter".into(), self.parameter.describe()),
                (
                    "wavevector".into(),
                    format!("({})", fmt_vec(&self.parameter.wavevector, d)),
                ),
                ("update".into(), self.algorithm.clone()),
            ]),
            Block::Table(grid),
            Block::Heading("Critical temperature".into()),
        ];
        blocks.push(Block::Line(
            match (&self.assessment.tc_estimate, &self.assessment.note) {
                (Some(t), _) => format!(
                    "Binder-cumulant crossing of the order parameter: Tc = {} ± {}",
                    fmt4(t.tc),
                    fmt_err(t.tc_error)
                ),
                (None, Some(why)) => format!("no Tc: {why}"),
                (None, None) => "no Tc".into(),
            },
        ));
        let mut notes = vec![
            format!("per-site values on L×…×L tori; seed {} (same seed, same numbers)", self.result.seed),
            "U4 = 1 − ⟨M⁴⟩/(3⟨M²⟩²) of the order parameter M (Binder 1981); error bars: binning (means), jackknife (U4, C, χ′)".into(),
            "C = N(⟨e²⟩ − ⟨e⟩²)/T², the same quantity as `sweep`'s C = ∂U/∂T; χ′ = N(⟨M²⟩ − ⟨|M|⟩²)/T, \
             the finite-torus susceptibility from fluctuations of |M| (common practice in finite-size Monte Carlo), \
             NOT `sweep`'s χ = ∂m/∂h: above Tc, where M is near-Gaussian (⟨|M|⟩² = (2/π)⟨M²⟩), \
             χ′ ≈ (1 − 2/π) χ ≈ 0.36 χ"
                .into(),
        ];
        if self.parameter.components() > 1 {
            notes.push(format!(
                "the order parameter has {} components: U4 of a disordered phase is 1 − (n + 2)/(3n) for n components, not 0 (1/3 for n = 2)",
                self.parameter.components()
            ));
        }
        if self.result.points.iter().any(|p| p.gauged) {
            notes.push(
                "Wolff clusters ran on the gauge-transformed spins σ_i = ε_i s_i (one sublattice flipped), \
                 in which every bond is ferromagnetic; energies and order parameters are those of the original spins"
                    .into(),
            );
        }
        notes.extend(self.notes.iter().cloned());
        if d == 1 {
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
