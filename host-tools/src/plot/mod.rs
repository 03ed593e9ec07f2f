//! SVG and PNG plots of the model, the elements and the station, drawn with
//! `plotters`.
//!
//! Text is measured with an embedded font (DejaVu Sans, registered at first
//! use), so layout never depends on the fonts installed on the machine and the
//! SVG and PNG are byte-identical from run to run. [`style`] holds what every
//! plot shares (font, palette, sizes, log-axis ranges, legend, the [`Figure`]
//! trait that draws once for both backends, atomic file writes); each other
//! file draws one kind of plot.

pub mod element;
pub mod model;
pub mod report;
pub mod station;
pub mod style;

pub use element::{element_svg, write_element_plot};
pub use model::{Regime, classify_regime, model_rgb, model_svg, write_model_plot};
pub use station::{error_svg, write_error_plot};
pub use style::{Figure, PlotError, is_png, write_atomically, write_figure};
