//! Point-group symmetries of a lattice.
