//! Monte Carlo on finite tori.
