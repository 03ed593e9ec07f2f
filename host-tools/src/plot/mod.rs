//! SVG plots of the model and of fits, drawn with `plotters`.
//!
//! Text is measured with an embedded font (DejaVu Sans, registered at first
//! use), so layout never depends on the fonts installed on the machine and the
//! SVG is byte-identical from run to run. [`style`] holds what every plot
//! shares (font, palette, sizes, log-axis ranges, atomic file writes); each
//! other file draws one kind of plot.

pub mod model;
pub mod style;

pub use model::{Regime, classify_regime, model_rgb, model_svg, write_model_png};
pub use style::{PlotError, write_atomically};
