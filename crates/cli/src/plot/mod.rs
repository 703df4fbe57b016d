//! SVG figures (plotters): thermodynamics along a sweep ([`sweep`]) and Tc across the
//! rungs of the ladder ([`ladder`]). Written atomically like every output file.

pub mod ladder;
pub mod style;
pub mod sweep;
