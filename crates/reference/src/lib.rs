//! rungs-reference: what the approximations are judged against.
//!
//! * [`closed`]: closed forms (Onsager, Yang, exact critical temperatures, the chain in
//!   a field, the Bethe lattice);
//! * [`enumerate`]: exact enumeration of small tori of any lattice file;
//! * [`transfer`]: transfer matrices on infinite strips of 2D lattice files;
//! * [`montecarlo`]: Wolff and Metropolis Monte Carlo with Binder-cumulant analysis.
//!
//! Units as everywhere in rungs: k_B = 1, `H = -Σ J s_i s_j - h Σ s_i`, per-site values.

pub mod closed;
pub mod enumerate;
pub mod montecarlo;
pub mod transfer;
