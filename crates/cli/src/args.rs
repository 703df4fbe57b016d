//! Command-line arguments, parsed and checked by clap (the "parse" step).
//!
//! Everything here is typed and already validated as far as it can be without reading
//! the lattice file: value lists are parsed by [`crate::list`], `--supercell` by
//! [`parse_supercell`], formats by [`Format`]. Checks that need the lattice (level names,
//! supercell dimension) happen in the commands. The options are those of
//! the command contract (README.md, `rungs --help`), plus `--output FILE` on every
//! command (our addition: write the report to FILE atomically instead of to standard
//! output).

use std::path::PathBuf;

use clap::{Args, Parser, Subcommand};

use crate::list::{parse_reals, parse_sizes, parse_temperatures, RealList, SizeList};
use crate::output::Format;
use crate::plot::parse_plot_path;
use crate::plot::sweep::{parse_panels, Panels};

/// Ising-type spin models on any lattice: mean field → Bethe → Kikuchi clusters,
/// held against exact results and Monte Carlo.
#[derive(Debug, Parser)]
#[command(name = "rungs", version, about, propagate_version = true)]
pub struct Cli {
    /// What to do.
    #[command(subcommand)]
    pub command: Command,
}

/// The subcommands of `rungs`.
#[derive(Debug, Subcommand)]
pub enum Command {
    /// What the lattice file describes and what each level builds.
    Inspect(InspectArgs),
    /// Critical temperature at each level (default: all levels).
    Tc(TcArgs),
    /// Equilibrium thermodynamics along a temperature path.
    ///
    /// Per site, at each level: m, U, F, S, C = ∂U/∂T and χ = ∂m/∂h, the response of m to
    /// the field (not the χ′ of `rungs mc`, a different quantity).
    Sweep(SweepArgs),
    /// Convergence of Tc with cluster size, against references.
    Ladder(LadderArgs),
    /// Phase diagram: every transition along each path (in T at each field, or in h at
    /// each temperature with `--along field`), first or second order, with its jumps.
    ///
    /// Compares the disordered phase with the ordered phases built from the level's
    /// ordering wavevector (and the file's `phases:`); first-order transitions are where
    /// two branches' free energies cross, second-order ones where the disordered state
    /// goes unstable under an ordered phase that vanishes continuously.
    Phases(PhasesArgs),
    /// Join the partial results of `rungs phases --shard k/n` runs into the output of
    /// the unsharded run.
    Merge(MergeArgs),
    /// Monte Carlo reference on finite tori of the lattice.
    ///
    /// Per site, each with its error bar: energy, |m|, the Binder cumulant U4,
    /// C = N(⟨e²⟩ − ⟨e⟩²)/T² and χ′ = N(⟨m²⟩ − ⟨|m|⟩²)/T, the susceptibility from the
    /// fluctuations of |m|. χ′ is NOT the χ = ∂m/∂h of `rungs sweep`: above Tc it is about
    /// 0.36 χ. Memory and time are estimated, and every argument checked, before any
    /// torus is built.
    Mc(McArgs),
}

/// Options every command takes.
#[derive(Debug, Clone, Args)]
pub struct CommonArgs {
    /// The lattice file (YAML), e.g. lattices/square.yaml.
    #[arg(value_name = "LATTICE")]
    pub lattice: PathBuf,
    /// Output format: `table` for people; `csv` and `json` are stable, for scripts.
    #[arg(long, value_enum, default_value_t = Format::Table)]
    pub format: Format,
    /// Write the report to FILE (atomically: a temporary file in the same directory,
    /// renamed into place) instead of standard output.
    #[arg(short = 'o', long, value_name = "FILE")]
    pub output: Option<PathBuf>,
}

/// `rungs inspect LATTICE`.
#[derive(Debug, Clone, Args)]
pub struct InspectArgs {
    /// The lattice file, `--format` and `--output`.
    #[command(flatten)]
    pub common: CommonArgs,
    /// Also draw a patch of the lattice into FILE (SVG or PNG, by its extension): sites,
    /// bonds coloured by coupling, and one translate of each level's cluster shapes.
    #[arg(long, value_name = "FILE", value_parser = parse_plot_path)]
    pub plot: Option<PathBuf>,
}

/// `rungs tc LATTICE [--levels a,b] [--field h] [--supercell 2x2]`.
#[derive(Debug, Clone, Args)]
pub struct TcArgs {
    /// The lattice file, `--format` and `--output`.
    #[command(flatten)]
    pub common: CommonArgs,
    /// Levels to compute, comma-separated (default: every level of the file).
    #[arg(long, value_delimiter = ',', value_name = "LEVELS")]
    pub levels: Option<Vec<String>>,
    /// Uniform field h (default: the file's `field:`). In a field Tc is where the
    /// field-polarised phase becomes unstable (e.g. the Néel line of an antiferromagnet);
    /// a ferromagnet has none.
    #[arg(long, allow_negative_numbers = true, value_name = "H")]
    pub field: Option<f64>,
    /// Compute on an enlarged unit cell, e.g. 2x2 (one factor per dimension). Not needed
    /// for order that breaks the translations: every level searches all wavevectors.
    #[arg(long, value_parser = parse_supercell, value_name = "N1xN2[xN3]")]
    pub supercell: Option<Supercell>,
}

/// `rungs sweep LATTICE --levels a,b --temps T0:T1:dT [--field h | --fields ...]
/// [--plot FILE.svg|FILE.png [--panels m,s,c]]`.
#[derive(Debug, Clone, Args)]
pub struct SweepArgs {
    /// The lattice file, `--format` and `--output`.
    #[command(flatten)]
    pub common: CommonArgs,
    /// Levels to sweep, comma-separated.
    #[arg(long, required = true, value_delimiter = ',', value_name = "LEVELS")]
    pub levels: Vec<String>,
    /// Temperatures: one value, a comma list, or an inclusive range start:stop:step.
    #[arg(long, value_parser = parse_temperatures, allow_hyphen_values = true, value_name = "LIST")]
    pub temps: RealList,
    /// One uniform field h for every point (default: the file's `field`).
    #[arg(
        long,
        allow_negative_numbers = true,
        conflicts_with = "fields",
        value_name = "H"
    )]
    pub field: Option<f64>,
    /// Several fields: one value, a comma list, or an inclusive range start:stop:step.
    #[arg(long, value_parser = parse_reals, allow_hyphen_values = true, value_name = "LIST")]
    pub fields: Option<RealList>,
    /// Follow the path on this cell, e.g. 2x2 (default: the smallest cell that holds
    /// each level's ordering wavevector).
    #[arg(long, value_parser = parse_supercell, value_name = "N1xN2[xN3]")]
    pub supercell: Option<Supercell>,
    /// Also draw the sweep into FILE: SVG or PNG, by its extension (.svg, .png).
    #[arg(long, value_name = "FILE", value_parser = parse_plot_path)]
    pub plot: Option<PathBuf>,
    /// Panels of the --plot figure, comma-separated, from m, u, f, s, c, chi (magnetisation,
    /// energy, free energy, entropy, specific heat, χ = ∂m/∂h) [default: all six].
    #[arg(long, requires = "plot", value_parser = parse_panels, value_name = "LIST")]
    pub panels: Option<Panels>,
}

/// `rungs ladder LATTICE [--up-to N] [--mc] [--plot FILE.svg|FILE.png]`.
#[derive(Debug, Clone, Args)]
pub struct LadderArgs {
    /// The lattice file, `--format` and `--output`.
    #[command(flatten)]
    pub common: CommonArgs,
    /// Climb up to N sites: the file's levels with at most N sites, plus square-ish
    /// blocks of cells (2x2, 2x3, 3x3, ...) up to N sites as extra rungs.
    #[arg(long, value_name = "N", value_parser = clap::value_parser!(u32).range(1..))]
    pub up_to: Option<u32>,
    /// Also run a Monte Carlo estimate of Tc as a reference.
    #[arg(long)]
    pub mc: bool,
    /// Uniform field h (default: the file's `field:`): each rung's Tc is that of the
    /// field-polarised phase's instability.
    #[arg(long, allow_negative_numbers = true, value_name = "H")]
    pub field: Option<f64>,
    /// Also draw the ladder into FILE: SVG or PNG, by its extension (.svg, .png).
    #[arg(long, value_name = "FILE", value_parser = parse_plot_path)]
    pub plot: Option<PathBuf>,
}

/// `rungs mc LATTICE --sizes 8,16,32 --temps ... [--sweeps N] [--warmup N] [--seed S]`.
#[derive(Debug, Clone, Args)]
pub struct McArgs {
    /// The lattice file, `--format` and `--output`.
    #[command(flatten)]
    pub common: CommonArgs,
    /// Linear torus sizes in cells: one value, a comma list, or a range start:stop:step
    /// (a run whose estimated memory exceeds 8 GiB is refused before it starts).
    #[arg(long, value_parser = parse_sizes, value_name = "LIST")]
    pub sizes: SizeList,
    /// Temperatures: one value, a comma list, or an inclusive range start:stop:step.
    #[arg(long, value_parser = parse_temperatures, allow_hyphen_values = true, value_name = "LIST")]
    pub temps: RealList,
    /// Measured sweeps per (size, temperature); a sweep flips, on average, as many spins
    /// as the torus has sites.
    #[arg(long, default_value_t = 10_000, value_name = "N", value_parser = clap::value_parser!(u64).range(1..))]
    pub sweeps: u64,
    /// Sweeps discarded before measuring, per (size, temperature).
    #[arg(long, default_value_t = 1_000, value_name = "N")]
    pub warmup: u64,
    /// Seed of the random-number generator (same seed, same numbers).
    #[arg(long, default_value_t = 1, value_name = "S")]
    pub seed: u64,
    /// The order parameter measured: `auto` (the lattice's ordering wavevector, from the
    /// pair level's instability or else the site level's), `uniform` (m), or a
    /// wavevector in units of the reciprocal primitive vectors, e.g. `0.5,0.5`.
    #[arg(long, default_value = "auto", value_parser = parse_order, value_name = "auto|uniform|Q")]
    pub order: OrderChoice,
}

pub use rungs_reference::montecarlo::OrderChoice;

/// Parse `auto`, `uniform` or a comma list of one to three finite numbers.
pub fn parse_order(text: &str) -> Result<OrderChoice, String> {
    match text.trim() {
        "auto" => return Ok(OrderChoice::Auto),
        "uniform" => return Ok(OrderChoice::Uniform),
        _ => {}
    }
    let parts: Vec<&str> = text.split(',').map(str::trim).collect();
    if parts.len() > 3 {
        return Err(format!(
            "`{text}` has more than three components: write auto, uniform or e.g. 0.5,0.5"
        ));
    }
    let mut q = [0.0; 3];
    for (k, part) in parts.iter().enumerate() {
        q[k] = part
            .parse::<f64>()
            .ok()
            .filter(|v| v.is_finite())
            .ok_or_else(|| {
                format!(
                    "`{part}` is not a number: write auto, uniform or a wavevector such as 0.5,0.5"
                )
            })?;
    }
    Ok(OrderChoice::Wavevector(q))
}

/// The variable a path of `rungs phases` runs along.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum AlongArg {
    /// Paths in temperature, one per field.
    Temperature,
    /// Paths in field, one per temperature (crosses a ferromagnet's h = 0 line).
    Field,
}

/// `rungs phases LATTICE --levels L --temps ... --fields ... [--along temperature|field]
/// [--alloy] [--plot FILE.svg] [--shard k/n]`.
#[derive(Debug, Clone, Args)]
pub struct PhasesArgs {
    /// The lattice file, `--format` and `--output`.
    #[command(flatten)]
    pub common: CommonArgs,
    /// Levels, comma-separated (one diagram each).
    #[arg(long, required = true, value_delimiter = ',', value_name = "LEVELS")]
    pub levels: Vec<String>,
    /// Temperatures of the grid: one value, a comma list, or a range start:stop:step.
    #[arg(long, value_parser = parse_temperatures, allow_hyphen_values = true, value_name = "LIST")]
    pub temps: RealList,
    /// Fields of the grid: one value, a comma list, or a range (default: the file's
    /// `field`).
    #[arg(long, value_parser = parse_reals, allow_hyphen_values = true, value_name = "LIST")]
    pub fields: Option<RealList>,
    /// The variable each path runs along.
    #[arg(long, value_enum, default_value_t = AlongArg::Temperature)]
    pub along: AlongArg,
    /// Report in the language of a binary alloy: composition x = (1 − m)/2 of B and
    /// chemical-potential difference Δμ = 2h.
    #[arg(long)]
    pub alloy: bool,
    /// Also draw the diagram into FILE: SVG or PNG, by its extension.
    #[arg(long, value_name = "FILE", value_parser = parse_plot_path, conflicts_with = "shard")]
    pub plot: Option<PathBuf>,
    /// Compute only the k-th of n interleaved parts of the paths (k from 1 to n) and
    /// write a partial result (JSON) for `rungs merge`.
    #[arg(long, value_parser = parse_shard, value_name = "k/n")]
    pub shard: Option<Shard>,
}

/// `rungs merge PART... [--format ...] [--output FILE] [--plot FILE.svg]`.
#[derive(Debug, Clone, Args)]
pub struct MergeArgs {
    /// The partial results written by `rungs phases --shard k/n`.
    #[arg(value_name = "PART", required = true)]
    pub parts: Vec<PathBuf>,
    /// Output format: `table` for people; `csv` and `json` are stable, for scripts.
    #[arg(long, value_enum, default_value_t = Format::Table)]
    pub format: Format,
    /// Write the report to FILE (atomically) instead of standard output.
    #[arg(short = 'o', long, value_name = "FILE")]
    pub output: Option<PathBuf>,
    /// Also draw the diagram into FILE: SVG or PNG, by its extension.
    #[arg(long, value_name = "FILE", value_parser = parse_plot_path)]
    pub plot: Option<PathBuf>,
}

/// One part of a sharded run: part `k` (1-based) of `n`.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Shard {
    /// Which part, 1 ..= n.
    pub k: usize,
    /// How many parts.
    pub n: usize,
}

impl Shard {
    /// Whether path `index` (0-based) belongs to this part: `index mod n = k − 1`.
    pub fn holds(&self, index: usize) -> bool {
        index % self.n == self.k - 1
    }
}

/// Parse `k/n` with 1 ≤ k ≤ n.
pub fn parse_shard(text: &str) -> Result<Shard, String> {
    let bad = || {
        format!("`{text}` is not a part k/n with 1 ≤ k ≤ n: write e.g. 1/3 (with Slurm: $SLURM_ARRAY_TASK_ID/3 and --array=1-3)")
    };
    let (k, n) = text.trim().split_once('/').ok_or_else(bad)?;
    let k: usize = k.trim().parse().map_err(|_| bad())?;
    let n: usize = n.trim().parse().map_err(|_| bad())?;
    if k == 0 || n == 0 || k > n {
        return Err(bad());
    }
    Ok(Shard { k, n })
}

/// Cell multiples of a supercell, unused dimensions 1 (`2x2` → `[2, 2, 1]`).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Supercell {
    /// Factors along each primitive vector.
    pub factors: [usize; 3],
    /// How many factors were written (must equal the lattice's dimension).
    pub given: usize,
}

/// Parse `N1[xN2[xN3]]`, each factor a positive integer of at most 64.
pub fn parse_supercell(text: &str) -> Result<Supercell, String> {
    let parts: Vec<&str> = text.trim().split(['x', 'X']).collect();
    if parts.len() > 3 {
        return Err(format!(
            "`{text}` has more than three factors: write e.g. 2x2 or 2x2x2"
        ));
    }
    let mut factors = [1usize; 3];
    for (slot, part) in factors.iter_mut().zip(&parts) {
        *slot = match part.trim().parse::<usize>() {
            Ok(n) if (1..=64).contains(&n) => n,
            _ => {
                return Err(format!(
                    "`{part}` in `{text}` is not a factor from 1 to 64: write e.g. 2x2 or 2x2x2"
                ))
            }
        };
    }
    Ok(Supercell {
        factors,
        given: parts.len(),
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use clap::CommandFactory;

    #[test]
    fn clap_definition_is_consistent() {
        Cli::command().debug_assert();
    }

    #[test]
    fn shards_interleave() {
        let s = parse_shard("2/3").unwrap();
        assert_eq!(s, Shard { k: 2, n: 3 });
        assert_eq!(
            (0..7).filter(|&i| s.holds(i)).collect::<Vec<_>>(),
            vec![1, 4]
        );
        for bad in ["0/3", "4/3", "3", "a/b", "1/0"] {
            assert!(parse_shard(bad).is_err(), "{bad}");
        }
    }

    #[test]
    fn supercell_factors() {
        assert_eq!(
            parse_supercell("2x2").unwrap(),
            Supercell {
                factors: [2, 2, 1],
                given: 2
            }
        );
        assert_eq!(parse_supercell("3").unwrap().factors, [3, 1, 1]);
        assert!(parse_supercell("2x0").is_err());
        assert!(parse_supercell("2x2x2x2").is_err());
        assert!(parse_supercell("axb").is_err());
    }

    #[test]
    fn options_of_the_contract_parse() {
        let cli = Cli::try_parse_from([
            "rungs",
            "sweep",
            "l.yaml",
            "--levels",
            "pair,plaquette",
            "--temps",
            "1:2:0.5",
            "--fields",
            "-0.1,0.1",
            "--format",
            "csv",
        ])
        .unwrap();
        let Command::Sweep(a) = cli.command else {
            panic!("not sweep")
        };
        assert_eq!(a.levels, vec!["pair", "plaquette"]);
        assert_eq!(a.temps.0, vec![1.0, 1.5, 2.0]);
        assert_eq!(a.fields.unwrap().0, vec![-0.1, 0.1]);
        assert_eq!(a.common.format, Format::Csv);
        let cli = Cli::try_parse_from([
            "rungs", "sweep", "l.yaml", "--levels", "pair", "--temps", "2", "--field", "-0.5",
        ])
        .unwrap();
        let Command::Sweep(a) = cli.command else {
            panic!("not sweep")
        };
        assert_eq!(a.field, Some(-0.5));
        assert!(Cli::try_parse_from([
            "rungs", "sweep", "l.yaml", "--levels", "pair", "--temps", "2", "--field", "1",
            "--fields", "1,2"
        ])
        .is_err());
        let cli = Cli::try_parse_from([
            "rungs",
            "mc",
            "l.yaml",
            "--sizes",
            "8,16",
            "--temps",
            "2.2:2.4:0.1",
            "--seed",
            "7",
        ])
        .unwrap();
        let Command::Mc(a) = cli.command else {
            panic!("not mc")
        };
        assert_eq!((a.sizes.0, a.seed, a.sweeps), (vec![8, 16], 7, 10_000));
        let cli = Cli::try_parse_from([
            "rungs",
            "tc",
            "l.yaml",
            "--supercell",
            "2x2",
            "--levels",
            "site",
        ])
        .unwrap();
        let Command::Tc(a) = cli.command else {
            panic!("not tc")
        };
        assert_eq!(a.supercell.unwrap().factors, [2, 2, 1]);
        let cli = Cli::try_parse_from([
            "rungs", "ladder", "l.yaml", "--up-to", "9", "--mc", "--output", "x.json",
        ])
        .unwrap();
        let Command::Ladder(a) = cli.command else {
            panic!("not ladder")
        };
        assert_eq!((a.up_to, a.mc), (Some(9), true));
        assert_eq!(a.common.output, Some(PathBuf::from("x.json")));
    }
}
