//! The typed tables of a validated image, one struct per number format.

use super::column::{ColumnF32, ColumnQ};
use super::layout::QFormat;
use crate::interp::{Axis, AxisQ};

/// The f32 tables of a validated f32 image.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct TablesF32<'a> {
    /// Temperature axis of the channels, degrees Celsius.
    pub temperature: Axis,
    /// Offset channel, raw codes.
    pub offset: ColumnF32<'a>,
    /// Gain channel, output units per raw code.
    pub gain: ColumnF32<'a>,
    /// Optional quadratic channel, gain units per raw code.
    pub quadratic: Option<ColumnF32<'a>>,
    /// Optional map from temperature signal (axis) to degrees Celsius.
    pub thermometer: Option<(Axis, ColumnF32<'a>)>,
    /// Optional 2-D correction: raw axis and row-major values (one row of
    /// `raw.len` values per temperature node), output units.
    pub grid: Option<(Axis, ColumnF32<'a>)>,
    /// Lowest plausible temperature signal.
    pub signal_lo: f32,
    /// Highest plausible temperature signal.
    pub signal_hi: f32,
}

// Same shape as TablesF32: the Q tables carry other axis and value types.
/// The Q-format tables of a validated Q image.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct TablesQ<'a> {
    /// Temperature axis, Q(`temperature`) degrees Celsius.
    pub temperature: AxisQ,
    /// Offset channel, Q(`offset`) raw codes.
    pub offset: ColumnQ<'a>,
    /// Gain channel, Q(`gain`) output units per raw code.
    pub gain: ColumnQ<'a>,
    /// Optional quadratic channel, Q(`quadratic`).
    pub quadratic: Option<ColumnQ<'a>>,
    /// Optional map from Q(`signal`) temperature signal to Q(`temperature`).
    pub thermometer: Option<(AxisQ, ColumnQ<'a>)>,
    /// Optional 2-D correction: raw axis (integer codes) and row-major
    /// Q(`output`) values.
    pub grid: Option<(AxisQ, ColumnQ<'a>)>,
    /// Lowest plausible temperature signal, Q(`signal`).
    pub signal_lo: i32,
    /// Highest plausible temperature signal, Q(`signal`).
    pub signal_hi: i32,
    /// Fractional bits of every quantity.
    pub q: QFormat,
}
