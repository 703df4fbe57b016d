//! Figures (plotters): thermodynamics along a sweep ([`sweep`]), Tc across the rungs of
//! the ladder ([`ladder`]) and a patch of the lattice ([`inspect`]), in the shared look
//! of [`style`]. Every `--plot` goes through [`mod@file`]: the format follows the file's
//! extension (`.svg` or `.png`, anything else refused before the computation starts),
//! text uses the embedded font, and the figure is written atomically like every output
//! file.

pub mod file;
pub mod inspect;
pub mod ladder;
pub mod phases;
pub mod style;
pub mod sweep;

pub use file::{parse_plot_path, Figure, ImageFormat};
