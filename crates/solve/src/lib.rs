//! rungs-solve
