//! rungs: Ising-type lattice spin models beyond mean field.
//!
//! Facade over the workspace crates: [`lattice`] (YAML lattice files, cluster geometry),
//! [`solve`] (the cluster-variation engine), [`reference`] (exact results and Monte Carlo)
//! and [`cli`] (the `rungs` command).
pub use rungs_cli as cli;
pub use rungs_lattice as lattice;
pub use rungs_reference as reference;
pub use rungs_solve as solve;
