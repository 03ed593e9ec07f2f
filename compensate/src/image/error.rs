//! Why an image was rejected, or could not be written.

use core::fmt;

use super::layout::NumberFormat;
use crate::interp::Interpolation;

/// Part of an image an error refers to.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum Section {
    /// The fixed header.
    Header,
    /// Temperature-signal to temperature map.
    Thermometer,
    /// Per-temperature correction channels (and their temperature axis).
    Channels,
    /// 2-D correction over temperature x raw signal.
    Grid,
}

impl fmt::Display for Section {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(match self {
            Self::Header => "header",
            Self::Thermometer => "thermometer section",
            Self::Channels => "channel section",
            Self::Grid => "2-D correction section",
        })
    }
}

/// A table image failed validation; nothing of it is trusted.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum ImageError {
    /// Fewer bytes than the header or the declared length need.
    Truncated {
        /// Bytes needed.
        needed: usize,
        /// Bytes given.
        got: usize,
    },
    /// The first four bytes are not the image magic.
    BadMagic,
    /// Layout version this crate does not read.
    UnsupportedVersion(u16),
    /// Header length field disagrees with the layout version.
    BadHeaderLength(u16),
    /// More bytes given than the header declares.
    TrailingBytes {
        /// Declared total length.
        declared: usize,
        /// Bytes given.
        got: usize,
    },
    /// The stored CRC-32 does not match the contents.
    CrcMismatch {
        /// CRC stored in the image.
        stored: u32,
        /// CRC computed over the contents.
        computed: u32,
    },
    /// Unknown number-format code.
    UnknownFormat(u8),
    /// Unknown interpolation code.
    UnknownInterpolation(u8),
    /// Unknown temperature-signal kind code.
    UnknownSignalKind(u8),
    /// Unknown measurand unit code.
    UnknownUnit(u8),
    /// A reserved field or flag bit is not zero.
    ReservedNotZero {
        /// Header offset of the field.
        offset: usize,
    },
    /// A node or channel count is outside its allowed range.
    BadCount {
        /// Name of the count field.
        field: &'static str,
        /// Value found.
        value: usize,
    },
    /// The declared total length does not equal the sum of the sections.
    LengthMismatch {
        /// Declared total length.
        declared: usize,
        /// Length the counts add up to (0 on overflow).
        expected: usize,
    },
    /// A fractional-bit count is invalid for the format or the arithmetic.
    BadFracBits {
        /// Name of the quantity.
        field: &'static str,
        /// Value found.
        value: u8,
    },
    /// Limits are not ordered, or a scale is not positive and finite.
    BadLimits {
        /// Name of the field.
        field: &'static str,
    },
    /// An axis is not strictly increasing (non-positive, non-finite or
    /// vanishing step) or its last node overflows.
    BadAxis {
        /// Section of the axis.
        section: Section,
    },
    /// A stored number is NaN or infinite.
    NonFinite {
        /// Section of the number.
        section: Section,
        /// Index of the number within the section's values.
        index: usize,
    },
    /// A valid image in a number format the chosen parse entry point does
    /// not accept ([`super::TableView::parse_q`] takes Q images only).
    FormatNotAccepted {
        /// Format the entry point accepts.
        expected: NumberFormat,
        /// Format of the image.
        found: NumberFormat,
    },
    /// The image asks for an interpolation method this build of the crate
    /// leaves out (monotone cubic without the `cubic` cargo feature).
    InterpolationNotCompiled(Interpolation),
}

impl fmt::Display for ImageError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match *self {
            Self::Truncated { needed, got } => {
                write!(f, "image truncated: {got} bytes, need {needed}")
            }
            Self::BadMagic => f.write_str("not a semidrift table image (bad magic)"),
            Self::UnsupportedVersion(v) => write!(f, "unsupported image layout version {v}"),
            Self::BadHeaderLength(v) => {
                write!(f, "header length {v} does not match the layout version")
            }
            Self::TrailingBytes { declared, got } => {
                write!(f, "{got} bytes given, image declares {declared}")
            }
            Self::CrcMismatch { stored, computed } => {
                write!(
                    f,
                    "CRC mismatch: stored {stored:#010x}, computed {computed:#010x}"
                )
            }
            Self::UnknownFormat(c) => write!(f, "unknown number format code {c}"),
            Self::UnknownInterpolation(c) => write!(f, "unknown interpolation code {c}"),
            Self::UnknownSignalKind(c) => write!(f, "unknown temperature-signal kind code {c}"),
            Self::UnknownUnit(c) => write!(f, "unknown unit code {c}"),
            Self::ReservedNotZero { offset } => {
                write!(f, "reserved field at header offset {offset} is not zero")
            }
            Self::BadCount { field, value } => write!(f, "count {field} = {value} out of range"),
            Self::LengthMismatch { declared, expected } => {
                write!(
                    f,
                    "declared length {declared} but sections add up to {expected}"
                )
            }
            Self::BadFracBits { field, value } => {
                write!(f, "fractional bits of {field} = {value} invalid")
            }
            Self::BadLimits { field } => write!(f, "limits {field} not ordered or not finite"),
            Self::BadAxis { section } => {
                write!(f, "axis of the {section} is not strictly increasing")
            }
            Self::NonFinite { section, index } => {
                write!(f, "value {index} of the {section} is NaN or infinite")
            }
            Self::FormatNotAccepted { expected, found } => {
                write!(
                    f,
                    "image number format is {found:?}, this parser accepts {expected:?} only"
                )
            }
            Self::InterpolationNotCompiled(m) => {
                write!(
                    f,
                    "image asks for {m:?} interpolation, left out of this build \
                     (cargo feature `cubic`)"
                )
            }
        }
    }
}

impl core::error::Error for ImageError {}

/// The encoder could not write an image.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum EncodeError {
    /// The output buffer is too small.
    BufferTooSmall {
        /// Bytes needed.
        needed: usize,
        /// Bytes available.
        got: usize,
    },
    /// Column lengths disagree (every channel and the 2-D grid rows need one
    /// value per temperature node; the grid needs `n_t * raw_len`).
    ColumnLength {
        /// Name of the column.
        column: &'static str,
        /// Values given.
        got: usize,
        /// Values expected.
        expected: usize,
    },
    // Error variants read alike: each names its own fields.
    /// The described image would be invalid; the written bytes were cleared.
    Invalid(ImageError),
}

impl fmt::Display for EncodeError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match *self {
            Self::BufferTooSmall { needed, got } => {
                write!(f, "output buffer of {got} bytes, image needs {needed}")
            }
            Self::ColumnLength {
                column,
                got,
                expected,
            } => write!(f, "column {column} has {got} values, expected {expected}"),
            Self::Invalid(e) => write!(f, "described image is invalid: {e}"),
        }
    }
}

impl core::error::Error for EncodeError {
    fn source(&self) -> Option<&(dyn core::error::Error + 'static)> {
        match self {
            Self::Invalid(e) => Some(e),
            _ => None,
        }
    }
}

impl From<ImageError> for EncodeError {
    fn from(e: ImageError) -> Self {
        Self::Invalid(e)
    }
}
