//! SVG figures (plotters): thermodynamics along a sweep ([`sweep`]), Tc across the
//! rungs of the ladder ([`ladder`]) and a patch of the lattice ([`inspect`]). Written atomically like every output file.

pub mod inspect;
pub mod ladder;
pub mod style;
pub mod sweep;
