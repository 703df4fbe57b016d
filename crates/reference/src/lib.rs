//! rungs-reference: what the approximations are judged against.
//!
//! * [`closed`]: closed forms (Onsager, Yang, exact critical temperatures, the chain in
//!   a field, the Bethe lattice);
//! * [`enumerate`]: exact enumeration of small tori of any lattice file;
//! * [`transfer`]: transfer matrices on infinite strips of 2D lattice files;
//! * [`montecarlo`]: Wolff and Metropolis Monte Carlo with Binder-cumulant analysis;
//! * [`tc_report`]: the critical temperature at each level beside the lattice's
//!   reference (what `rungs tc` reports);
//! * [`ladder`]: the ladder of levels against the reference, with extrapolations (what
//!   `rungs ladder` reports).
//!
//! This crate builds on the engine (`rungs_solve`) for the last two: they judge its
//! rungs against the references kept here.
//!
//! Units as everywhere in rungs: k_B = 1, `H = -Σ J s_i s_j - h Σ s_i`, per-site values.

pub mod closed;
pub mod enumerate;
pub mod ladder;
pub mod montecarlo;
pub mod tc_report;
pub mod transfer;
