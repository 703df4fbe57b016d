//! rungs: Ising-type lattice spin models beyond mean field, as a library.
//!
//! Read a lattice from a YAML file, then climb the ladder of approximations — single-site
//! mean field, pair (Bethe), Kikuchi cluster-variation levels — and hold each rung
//! against exact results and Monte Carlo. Model and units everywhere: spins s = ±1,
//! `H = −Σ_bonds J_b s_i s_j − h Σ_i s_i`, k_B = 1, temperatures in units of the file's
//! couplings, every quantity per lattice site.
//!
//! | to do this | call | result |
//! |---|---|---|
//! | load a lattice | [`load`], [`from_yaml`] | [`Lattice`] |
//! | list its levels | [`levels`] | level names, ladder order |
//! | Tc per level | [`tc`] | [`TcReport`] |
//! | one equilibrium point | [`equilibrium`] | [`Equilibrium`] |
//! | a sweep along T (and h) | [`sweep`] | [`SweepReport`] |
//! | the ladder with extrapolations | [`ladder`] | [`Ladder`] |
//! | references | [`reference()`], [`closed_form`] | [`Reference`], [`ClosedForm`] |
//! | Monte Carlo on finite tori | [`monte_carlo`] | [`McReport`] |
//!
//! Every result is a plain value; [`TcReport`], [`SweepReport`] and [`Ladder`] serialize
//! (`serde`) to exactly the JSON that `rungs tc|sweep|ladder --format json` prints, so a
//! program, the command and the Python package (`python/`) see the same numbers under
//! the same keys. Errors are one type, [`enum@Error`], that says whether the input was at
//! fault ([`Error::is_bad_input`]) or a computation did not converge.
//!
//! These entry points show no progress. The crates underneath take an observer where a
//! computation is long (`&dyn Fn(event)`, never printing): [`solve::levels::tc_levels`],
//! [`solve::sweep_report::sweep_levels`], [`reference::ladder::Ladder::compute`],
//! [`reference::montecarlo::run()`].
//!
//! The crates: [`lattice`] (YAML lattice files, cluster geometry), [`solve`] (the
//! cluster-variation engine), [`mod@reference`] (exact results, Monte Carlo, the ladder) and,
//! with the default `cli` feature, `cli` (the `rungs` command).

#![warn(missing_docs)]

use std::path::Path;

use thiserror::Error;

#[cfg(feature = "cli")]
pub use rungs_cli as cli;
pub use rungs_lattice as lattice;
pub use rungs_reference as reference;
pub use rungs_solve as solve;

pub use rungs_lattice::{Lattice, LatticeError, Level};
pub use rungs_reference::closed::ClosedForm;
pub use rungs_reference::ladder::{
    Extrapolated, Ladder, LadderError, LadderOptions, ReferenceKind, ReferenceTc, RungResult,
};
pub use rungs_reference::montecarlo::{McConfig, McError, McPoint, McReport, McResult};
pub use rungs_reference::tc_report::{Reference, TcReport, TcRow};
pub use rungs_solve::levels::LevelsError;
pub use rungs_solve::phase::Branch;
pub use rungs_solve::sweep_report::{SweepError, SweepReport, SweepRow, COLUMNS};
pub use rungs_solve::Observables;

/// Everything that can stop a computation of this API.
#[derive(Debug, Error, Clone, PartialEq)]
#[non_exhaustive]
pub enum Error {
    /// The lattice file or YAML is not a valid lattice, or names an unknown level: the
    /// message names the file, the place and what to fix (bad input).
    #[error(transparent)]
    Lattice(Box<LatticeError>),
    /// An argument that does not fit the lattice or the other arguments (bad input).
    #[error("{0}")]
    BadInput(String),
    /// A computation that did not succeed; the message says where.
    #[error("{0}")]
    NotConverged(String),
}

impl Error {
    /// Whether the input was at fault (the `rungs` command exits with status 2), rather
    /// than a computation that did not converge (status 1).
    pub fn is_bad_input(&self) -> bool {
        matches!(self, Error::Lattice(_) | Error::BadInput(_))
    }
}

impl From<LatticeError> for Error {
    fn from(e: LatticeError) -> Error {
        Error::Lattice(Box::new(e))
    }
}

impl From<LevelsError> for Error {
    fn from(e: LevelsError) -> Error {
        match e {
            LevelsError::Lattice(e) => Error::Lattice(e),
            e => Error::NotConverged(e.to_string()),
        }
    }
}

impl From<SweepError> for Error {
    fn from(e: SweepError) -> Error {
        match e {
            SweepError::Lattice(e) => Error::Lattice(e),
            e if e.is_bad_input() => Error::BadInput(e.to_string()),
            e => Error::NotConverged(e.to_string()),
        }
    }
}

impl From<LadderError> for Error {
    fn from(e: LadderError) -> Error {
        match e {
            LadderError::Lattice(e) => Error::Lattice(e),
            e if e.is_bad_input() => Error::BadInput(e.to_string()),
            e => Error::NotConverged(e.to_string()),
        }
    }
}

impl From<McError> for Error {
    /// Monte Carlo errors are all about the request (sizes, temperatures, sweeps).
    fn from(e: McError) -> Error {
        Error::BadInput(format!("Monte Carlo: {e}"))
    }
}

/// Read and validate the lattice file at `path` (format: `docs/lattice-format.md`).
///
/// ```
/// let square = rungs::load("lattices/square.yaml")?;
/// assert_eq!((square.name(), square.dimension()), ("square", 2));
/// assert!(rungs::load("no/such/file.yaml").unwrap_err().is_bad_input());
/// # Ok::<(), rungs::Error>(())
/// ```
pub fn load(path: impl AsRef<Path>) -> Result<Lattice, Error> {
    Ok(Lattice::from_file(path.as_ref())?)
}

/// Read and validate a lattice written as YAML text (messages name it `<yaml>`).
///
/// ```
/// let chain = rungs::from_yaml(
///     "name: chain\ndimension: 1\nvectors: [[1]]\nbasis: [{name: a}]\n\
///      couplings: {J: 1}\nbonds: [{from: a, to: a, cell: [1], coupling: J}]\n",
/// )?;
/// assert_eq!(chain.name(), "chain");
/// let bad = rungs::from_yaml("name: x\n").unwrap_err();
/// assert!(bad.is_bad_input() && bad.to_string().contains("<yaml>"));
/// # Ok::<(), rungs::Error>(())
/// ```
pub fn from_yaml(text: &str) -> Result<Lattice, Error> {
    Ok(Lattice::from_yaml_str(text, "<yaml>")?)
}

/// The levels of `lattice` in ladder order: `site`, `pair`, then the file's levels by
/// the size of their largest cluster.
///
/// ```
/// let square = rungs::load("lattices/square.yaml")?;
/// assert_eq!(rungs::levels(&square)[..3], ["site", "pair", "plaquette"]);
/// # Ok::<(), rungs::Error>(())
/// ```
pub fn levels(lattice: &Lattice) -> Vec<String> {
    let names = Level::names(lattice);
    rungs_solve::levels::sort_levels(lattice, names.clone()).unwrap_or(names)
}

/// What [`tc`] computes.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct TcRequest {
    /// The levels (default: all of them).
    pub levels: Option<Vec<String>>,
    /// The uniform field h (default: the file's `field`).
    pub field: Option<f64>,
    /// Build the levels on this supercell, one factor per dimension (e.g. `[2, 2]`), so
    /// that order inside the larger cell can set in.
    pub supercell: Option<Vec<usize>>,
}

/// The lattice on `factors` (one per dimension, each 1 to 64).
fn on_supercell(lattice: &Lattice, factors: &[usize]) -> Result<Lattice, Error> {
    let d = lattice.dimension();
    if factors.len() != d {
        return Err(Error::BadInput(format!(
            "supercell: {} factor(s) given but `{}` is {d}-dimensional; give one factor per dimension, e.g. {}",
            factors.len(),
            lattice.name(),
            vec!["2"; d].join("x"),
        )));
    }
    if let Some(f) = factors.iter().find(|f| !(1..=64).contains(*f)) {
        return Err(Error::BadInput(format!(
            "supercell: `{f}` is not a factor from 1 to 64"
        )));
    }
    let mut n = [1usize; 3];
    n[..d].copy_from_slice(factors);
    Ok(lattice.supercell(n)?)
}

/// The critical temperature at each level, beside the lattice's reference Tc: the
/// numbers of `rungs tc`. Levels are searched in ladder order, the dense ones in
/// parallel; a level the engine refuses stays as a row whose `note` says why.
///
/// ```
/// let square = rungs::load("lattices/square.yaml")?;
/// let request = rungs::TcRequest { levels: Some(vec!["pair".into()]), ..Default::default() };
/// let report = rungs::tc(&square, &request)?;
/// let pair = &report.levels[0];
/// // Bethe: Tc = 2/ln 2 on the square lattice (Bethe 1935, Proc. R. Soc. A 150, 552).
/// assert!((pair.tc.unwrap() - 2.0 / 2f64.ln()).abs() < 1e-6);
/// assert_eq!(pair.wavevector.as_deref(), Some(&[0.0, 0.0][..]));
/// // The JSON of `rungs tc --format json`:
/// let json = serde_json::to_value(&report).unwrap();
/// assert_eq!(json["levels"][0]["level"], "pair");
/// # Ok::<(), rungs::Error>(())
/// ```
pub fn tc(lattice: &Lattice, request: &TcRequest) -> Result<TcReport, Error> {
    let on = match &request.supercell {
        Some(factors) => on_supercell(lattice, factors)?,
        None => lattice.clone(),
    };
    let field = request.field.unwrap_or(lattice.field());
    if !field.is_finite() {
        return Err(Error::BadInput(format!(
            "field {field} is not a finite number"
        )));
    }
    let names = chosen_levels(&on, request.levels.as_deref())?;
    let names = rungs_solve::levels::sort_levels(&on, names)?;
    Ok(rungs_reference::tc_report::tc_report(
        lattice,
        &on,
        request.supercell.clone(),
        &names,
        field,
        &|_| {},
    )?)
}

/// `requested` levels checked against `lattice` (all when `None`; none is an error).
fn chosen_levels(lattice: &Lattice, requested: Option<&[String]>) -> Result<Vec<String>, Error> {
    let chosen = rungs_solve::levels::select_levels(lattice, requested)?;
    if chosen.is_empty() {
        return Err(Error::BadInput(format!(
            "levels is empty: name at least one of {}",
            Level::names(lattice).join(", ")
        )));
    }
    Ok(chosen)
}

/// What [`sweep`] computes.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct SweepRequest {
    /// The levels to sweep (at least one).
    pub levels: Vec<String>,
    /// Temperatures, in the order followed (descending paths cool).
    pub temperatures: Vec<f64>,
    /// Fields (outermost loop); the file's `field` when empty.
    pub fields: Vec<f64>,
    /// Follow the path on this supercell (one factor per dimension) instead of the cell
    /// that holds each level's ordering.
    pub supercell: Option<Vec<usize>>,
}

/// Equilibrium thermodynamics per site along a path: the numbers of `rungs sweep`. Each
/// point continues the branch of the one before (hysteresis through first-order
/// transitions); points that cannot be reported are left out with their reason.
///
/// ```
/// let square = rungs::load("lattices/square.yaml")?;
/// let request = rungs::SweepRequest {
///     levels: vec!["site".into()],
///     temperatures: vec![5.0, 2.0],
///     ..Default::default()
/// };
/// let rows = rungs::sweep(&square, &request)?.rows().into_iter().map(|r| (r.temperature, r.magnetization)).collect::<Vec<_>>();
/// // Mean field: m = tanh(4m/T); no order above Tc = 4, m ≈ 0.9575 at T = 2
/// // (Weiss 1907, J. Phys. Theor. Appl. 6, 661; solved by hand).
/// assert!(rows[0].1.abs() < 1e-9);
/// assert!((rows[1].1 - (2.0 * rows[1].1).tanh()).abs() < 1e-9 && rows[1].1 > 0.95);
/// # Ok::<(), rungs::Error>(())
/// ```
pub fn sweep(lattice: &Lattice, request: &SweepRequest) -> Result<SweepReport, Error> {
    let names = chosen_levels(lattice, Some(&request.levels))?;
    let fields = if request.fields.is_empty() {
        vec![lattice.field()]
    } else {
        request.fields.clone()
    };
    let supercell = match &request.supercell {
        Some(factors) => {
            on_supercell(lattice, factors)?;
            let mut n = [1usize; 3];
            n[..factors.len()].copy_from_slice(factors);
            Some(n)
        }
        None => None,
    };
    Ok(rungs_solve::sweep_report::sweep_levels(
        lattice,
        &names,
        &request.temperatures,
        &fields,
        supercell,
        &|_| {},
    )?)
}

/// One equilibrium point of one level.
#[derive(Debug, Clone, PartialEq)]
pub struct Equilibrium {
    /// Per-site observables: m, U, F, S, C, χ, sublattice magnetisations, bond
    /// correlations.
    pub observables: Observables,
    /// Amplitude of the level's ordering pattern (|m| for uniform order, the staggered
    /// magnetisation for Néel order, 0 when disordered).
    pub order_parameter: f64,
    /// Disordered or ordered.
    pub branch: Branch,
    /// Cautions at this point (e.g. negative entropy).
    pub notes: Vec<String>,
}

/// The equilibrium state of `level` at temperature `t` and field `h`: the lower free
/// energy of the disordered and the ordered branch, on the cell that holds the level's
/// ordering (a one-point [`sweep`]).
///
/// ```
/// let chain = rungs::load("lattices/chain.yaml")?;
/// let point = rungs::equilibrium(&chain, "pair", 1.0, 0.5)?;
/// // The pair level is exact on the chain: m = sinh(h/T) / √(sinh²(h/T) + e^(−4J/T))
/// // (Ising 1925, Z. Phys. 31, 253; Baxter 1982, Exactly Solved Models, eq. 2.2.13).
/// let s = 0.5f64.sinh();
/// let exact = s / (s * s + (-4.0f64).exp()).sqrt();
/// assert!((point.observables.magnetization - exact).abs() < 1e-8);
/// # Ok::<(), rungs::Error>(())
/// ```
pub fn equilibrium(lattice: &Lattice, level: &str, t: f64, h: f64) -> Result<Equilibrium, Error> {
    let request = SweepRequest {
        levels: vec![level.to_string()],
        temperatures: vec![t],
        fields: vec![h],
        supercell: None,
    };
    let mut report = sweep(lattice, &request)?;
    let mut swept = report.levels.remove(0);
    match (swept.points.pop(), swept.info.pop()) {
        (Some(observables), Some(info)) => Ok(Equilibrium {
            observables,
            order_parameter: info.order_parameter,
            branch: info.branch,
            notes: info.notes,
        }),
        _ => Err(Error::NotConverged(swept.omitted.pop().map_or_else(
            || format!("level `{level}` at T = {t}, h = {h}: no equilibrium found"),
            |o| o.reason,
        ))),
    }
}

/// The ladder: Tc rung by rung against the reference, with the coherent-anomaly and
/// inverse-size extrapolations and the notes that explain what is missing — the numbers
/// of `rungs ladder`.
///
/// ```
/// let square = rungs::load("lattices/square.yaml")?;
/// let ladder = rungs::ladder(&square, rungs::LadderOptions { up_to: Some(4), ..Default::default() })?;
/// let names: Vec<&str> = ladder.rungs.iter().map(|r| r.level.as_str()).collect();
/// assert_eq!(names, ["site", "pair", "plaquette"]);
/// // Kikuchi's square approximation lies between Bethe and Onsager (Kikuchi 1951,
/// // Phys. Rev. 81, 988; Onsager 1944, Phys. Rev. 65, 117).
/// let plaquette = ladder.rungs[2].tc.unwrap();
/// assert!(plaquette < 2.0 / 2f64.ln() && plaquette > ladder.reference.as_ref().unwrap().tc);
/// # Ok::<(), rungs::Error>(())
/// ```
pub fn ladder(lattice: &Lattice, options: LadderOptions) -> Result<Ladder, Error> {
    Ok(Ladder::compute(lattice, options, &|_| {})?)
}

/// The reference Tc of a lattice as `rungs tc` uses it: the file's `reference:`, else the
/// exact Tc of a closed form recognised from its bonds (the ladder prefers the closed
/// form and says so in a note when the two differ).
///
/// ```
/// let triangular = rungs::load("lattices/triangular.yaml")?;
/// // Houtappel (1950), Physica 16, 425: Tc = 4/ln 3.
/// assert!((rungs::reference(&triangular).unwrap().tc - 4.0 / 3f64.ln()).abs() < 1e-9);
/// # Ok::<(), rungs::Error>(())
/// ```
pub fn reference(lattice: &Lattice) -> Option<Reference> {
    rungs_reference::tc_report::reference_tc(lattice)
}

/// The closed form recognised from the lattice's bonds (Onsager, Houtappel, the chain,
/// ...), with its exact Tc, free energy and magnetisation where known.
///
/// ```
/// let square = rungs::load("lattices/square.yaml")?;
/// let form = rungs::closed_form(&square).unwrap();
/// // Onsager (1944), Phys. Rev. 65, 117: Tc = 2/ln(1 + √2).
/// assert!((form.tc().unwrap() - 2.269185314213022).abs() < 1e-12);
/// # Ok::<(), rungs::Error>(())
/// ```
pub fn closed_form(lattice: &Lattice) -> Option<ClosedForm> {
    ClosedForm::recognise(lattice)
}

/// Monte Carlo on `L × … × L` tori of the lattice for every L in `sizes`, at the
/// temperatures of `config`, measuring the lattice's own order parameter (the uniform
/// magnetisation for a ferromagnet, the staggered one for Néel order; sizes rounded up to
/// the pattern's period), with a Binder-crossing estimate of Tc that is withheld where
/// the ordering is degenerate (frustration) — the numbers of `rungs mc`. Wolff cluster
/// updates where every bond is ferromagnetic, or becomes so by flipping a sublattice, at
/// h = 0; Metropolis otherwise. The same seed gives the same numbers. Arguments and
/// memory are checked before anything is built.
///
/// ```
/// let square = rungs::load("lattices/square.yaml")?;
/// let config = rungs::McConfig { temperatures: vec![1.5], sweeps: 200, warmup: 50, ..Default::default() };
/// let run = rungs::monte_carlo(&square, &[4], &config)?;
/// // Far below Onsager's Tc = 2.269 the spins are nearly all aligned: |m| → 1.
/// assert!(run.result.points[0].estimates.abs_magnetization > 0.9);
/// assert!(rungs::monte_carlo(&square, &[], &config).unwrap_err().is_bad_input());
/// # Ok::<(), rungs::Error>(())
/// ```
pub fn monte_carlo(
    lattice: &Lattice,
    sizes: &[usize],
    config: &McConfig,
) -> Result<McReport, Error> {
    let prepared = rungs_reference::montecarlo::prepare(
        lattice,
        sizes,
        config,
        &rungs_reference::montecarlo::OrderChoice::Auto,
    )?;
    Ok(prepared.run(lattice, config, None)?)
}
