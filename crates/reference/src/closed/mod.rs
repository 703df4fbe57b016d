//! Closed-form exact results: Onsager's square lattice (isotropic and anisotropic) with
//! Yang's and Chang's magnetisation, the triangular and honeycomb lattices (Houtappel),
//! exact critical temperatures (square, triangular, honeycomb, kagome, Bethe), the chain in
//! a field, and the Bethe lattice; plus [`ClosedForm`], which recognises from a lattice's
//! bond structure which of them applies.
//!
//! Per-site quantities, k_B = 1, `H = −Σ J s_i s_j − h Σ s_i`.

pub mod bethe;
pub mod chain;
pub mod elliptic;
pub mod exact_tc;
mod form;
pub mod houtappel;
pub mod onsager;
pub mod planar;
mod quad;
pub mod recognise;

pub use form::{ClosedForm, ClosedThermo};
pub use planar::PlanarThermo;
