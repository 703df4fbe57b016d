//! Typed errors of the engine: each says where (level, T, h) and how far it got.

use thiserror::Error;

/// A computation that did not succeed.
#[derive(Debug, Error, Clone, PartialEq)]
#[non_exhaustive]
pub enum SolveError {
    /// Newton and its fallback stopped before the gradient norm reached the tolerance.
    #[error("level `{level}` at T = {t}, h = {h}: equilibrium not reached after {iterations} iterations (gradient norm {gradient_norm:.3e}, tolerance {tolerance:.1e}); the level has no well-conditioned state here: near a transition, approach the point along a path of nearby temperatures; far below any transition, the cluster probabilities of this state may be beyond double precision")]
    NotConverged {
        /// Level name.
        level: String,
        /// Temperature.
        t: f64,
        /// Field.
        h: f64,
        /// Iterations done.
        iterations: usize,
        /// Largest gradient component when it stopped.
        gradient_norm: f64,
        /// The tolerance asked for.
        tolerance: f64,
    },
    /// The paramagnet is unstable but no ordered minimum below it was found.
    #[error("level `{level}` at T = {t}, h = {h}: no minimum of this level's free energy was found here: the disordered state is unstable and Newton found only saddles (the approximation may be ill-posed at this temperature, its minimum on the boundary of the probabilities)")]
    NoStableState {
        /// Level name.
        level: String,
        /// Temperature.
        t: f64,
        /// Field.
        h: f64,
    },
    /// A starting point with a non-positive cluster probability.
    #[error("level `{level}` at T = {t}, h = {h}: the starting point has a non-positive cluster probability")]
    InfeasibleStart {
        /// Level name.
        level: String,
        /// Temperature.
        t: f64,
        /// Field.
        h: f64,
    },
    /// A temperature that is not a positive finite number.
    #[error(
        "temperature {t} is not a positive finite number; give T > 0 in units of the coupling"
    )]
    BadTemperature {
        /// The value given.
        t: f64,
    },
    /// A level whose dense Hessian would not fit in memory.
    #[error("level `{level}` has {variables} correlation variables: its dense Hessian would need {gib:.1} GiB, above the engine's limit of {limit} variables; use a smaller cluster")]
    TooLarge {
        /// Level name.
        level: String,
        /// Correlation variables of the level.
        variables: usize,
        /// Memory the dense Hessian would take.
        gib: f64,
        /// The limit.
        limit: usize,
    },
    /// The state cannot be represented precisely in double precision any more.
    #[error("level `{level}` at T = {t}, h = {h}: not computed: {detail}")]
    PrecisionLimit {
        /// Level name.
        level: String,
        /// Temperature.
        t: f64,
        /// Field.
        h: f64,
        /// Why, and where the limit lies.
        detail: String,
    },
    /// A conjugate-gradient solve (χ and C of big levels) stopped short of its tolerance.
    #[error("level `{level}` at T = {t}, h = {h}: the linear solve for C and χ stopped at relative residual {residual:.1e} after {products} Hessian products; the big-level preconditioner is weak deep in the ordered phase, try a temperature nearer Tc")]
    LinearSolve {
        /// Level name.
        level: String,
        /// Temperature.
        t: f64,
        /// Field.
        h: f64,
        /// Products with the Hessian spent.
        products: usize,
        /// Relative residual reached.
        residual: f64,
    },
    /// The Tc search failed.
    #[error("level `{level}`: Tc search failed: {detail}")]
    TcSearch {
        /// Level name.
        level: String,
        /// What went wrong.
        detail: String,
    },
    /// A Tc asked in a field of a level that is searched at h = 0 only.
    #[error("level `{level}` is too large for the dense engine: its Tc is searched at h = 0 only (uniform order, on point-group orbits or, for a rectangular block of a square net, on sub-block potentials), so no Tc in the field h = {h} is given; a smaller level gives the Néel line or the Tc in a field")]
    FieldUnsupported {
        /// Level name.
        level: String,
        /// The field asked for.
        h: f64,
    },
    /// A field that is not a finite number.
    #[error("field {h} is not a finite number; give a finite h in units of the coupling")]
    BadField {
        /// The value given.
        h: f64,
    },
}
