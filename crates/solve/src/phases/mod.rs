//! Phase diagrams of one level: which phase has the lowest free energy at each (T, h),
//! and every transition met along a path in T at fixed h (or in h at fixed T), with its
//! kind and its jumps.
//!
//! * [`candidates`]: the phases compared — the disordered (translation-invariant) phase,
//!   the ordered phases built from the level's ordering wavevector and its star (every
//!   symmetry-distinct ±1 pattern made of the star's modes: on the fcc lattice the
//!   CuAu-type single-q layering and the Cu3Au-type three-to-one patterns of the three X
//!   points), and the patterns a file declares under `phases:`.
//! * [`follow`]: each phase as a branch of local minima followed by continuation along
//!   the path (in T with the ordered phase's Boltzmann predictor, in h by Newton from the
//!   neighbouring field), ending where it collapses onto a more symmetric state, loses
//!   its symmetry, or jumps away (a fold: the limit of metastability).
//! * [`path`]: one path. The equilibrium at each grid point is the branch of lowest free
//!   energy; where it changes between two grid points, the transition is located:
//!   **first order** where two branches' free energies cross (Brent's method on
//!   `F_a − F_b`, to 10⁻¹⁰ relative), with the jumps there — latent heat `T ΔS` per site,
//!   `Δm`, and `Δψ` of the order parameters; **second order** where an ordered branch
//!   ends continuously on the disordered one, located by the stability condition of the
//!   disordered state (the smallest eigenvalue of `H(q)` over the ordered cell's
//!   wavevectors crossing zero, as `tc` does). Ends of branches that are not transitions
//!   (spinodals, the limits of metastability) are reported apart.
//! * [`mod@assemble`]: the diagram from its paths, in any order and from any number of
//!   separately computed parts (paths are independent, so a diagram split into shards
//!   and merged is the same diagram), with tricritical points where a line of
//!   transitions changes kind between two neighbouring paths.
//! * [`alloy`]: the same diagram in the language of a binary alloy (A = +1, B = −1).
//!
//! Conventions: per site, k_B = 1; along a path, "below" and "above" mean lower and
//! higher values of the path's variable (T, or h with `Along::Field`).

pub mod alloy;
pub mod assemble;
pub mod candidates;
pub mod follow;
pub mod locate;
pub mod path;
pub mod setup;

pub use assemble::{assemble, AssembleError, DiagramHeader, PhaseDiagram};
pub use candidates::{Origin, Pattern, PhaseInfo};
pub use setup::{DiagramSpec, PhaseDiagramSetup};

/// The variable a path runs along.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub enum Along {
    /// Paths in temperature, one per field.
    Temperature,
    /// Paths in field, one per temperature.
    Field,
}

impl Along {
    /// `temperature` or `field`.
    pub fn as_str(self) -> &'static str {
        match self {
            Along::Temperature => "temperature",
            Along::Field => "field",
        }
    }
}

/// The kind of a transition.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub enum Kind {
    /// A crossing of two branches' free energies: jumps in S, m, ψ.
    First,
    /// An ordered branch ending continuously on the disordered one: no jumps.
    Second,
    /// A point where a line of transitions changes from first to second order.
    Tricritical,
}

impl Kind {
    /// `first`, `second` or `tricritical`.
    pub fn as_str(self) -> &'static str {
        match self {
            Kind::First => "first",
            Kind::Second => "second",
            Kind::Tricritical => "tricritical",
        }
    }
}

/// One transition met along a path.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Transition {
    /// Temperature.
    pub temperature: f64,
    /// Field.
    pub field: f64,
    /// First, second or tricritical.
    pub kind: Kind,
    /// The phase at lower values of the path's variable.
    pub below: String,
    /// The phase at higher values.
    pub above: String,
    /// Latent heat per site, `T (S_above − S_below)` (0 unless first order).
    pub latent_heat: f64,
    /// Magnetisation per site of the phase below, at the transition.
    pub magnetization_below: f64,
    /// Magnetisation per site of the phase above.
    pub magnetization_above: f64,
    /// Order parameter of the phase below (its own pattern's amplitude; 0 when
    /// disordered).
    pub order_parameter_below: f64,
    /// Order parameter of the phase above.
    pub order_parameter_above: f64,
    /// A caution about this transition, if any.
    pub note: Option<String>,
}

impl Transition {
    /// `m_above − m_below`.
    pub fn magnetization_jump(&self) -> f64 {
        self.magnetization_above - self.magnetization_below
    }
    /// `ψ_above − ψ_below`.
    pub fn order_parameter_jump(&self) -> f64 {
        self.order_parameter_above - self.order_parameter_below
    }
}

/// Which end of a branch, along the path.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub enum Side {
    /// The branch exists above this point only.
    Lower,
    /// The branch exists below this point only.
    Upper,
}

impl Side {
    /// `lower` or `upper`.
    pub fn as_str(self) -> &'static str {
        match self {
            Side::Lower => "lower",
            Side::Upper => "upper",
        }
    }
}

/// The end of a branch that is not a transition: a limit of metastability (spinodal).
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Spinodal {
    /// Temperature.
    pub temperature: f64,
    /// Field.
    pub field: f64,
    /// The phase whose branch ends.
    pub phase: String,
    /// Which end of the branch (along the path) this is.
    pub side: Side,
}

/// The equilibrium at one grid point.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct GridPoint {
    /// Temperature.
    pub temperature: f64,
    /// Field.
    pub field: f64,
    /// The phase of lowest free energy (`None` when no phase could be solved there).
    pub phase: Option<String>,
    /// Its free energy per site.
    pub free_energy: Option<f64>,
    /// Its magnetisation per site.
    pub magnetization: Option<f64>,
}

/// Everything one path contributes to a diagram.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct PathResult {
    /// The path's index among the diagram's paths (ascending fixed value).
    pub index: usize,
    /// The fixed value: the field (paths in T) or the temperature (paths in h).
    pub fixed: f64,
    /// Transitions in ascending order of the path's variable.
    pub transitions: Vec<Transition>,
    /// Branch ends that are not transitions.
    pub spinodals: Vec<Spinodal>,
    /// The equilibrium at each grid point of the path, ascending.
    pub grid: Vec<GridPoint>,
    /// Cautions about this path.
    pub notes: Vec<String>,
}
