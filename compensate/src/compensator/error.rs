//! Why a compensator could not be built from a table view.

use crate::image::NumberFormat;
use core::fmt;

/// A valid image that does not fit the requested compensator.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum CompensatorError {
    /// The image stores numbers in the other format (f32 vs Q).
    WrongFormat {
        /// Format this compensator runs on.
        expected: NumberFormat,
        /// Format of the image.
        found: NumberFormat,
    },
}

impl fmt::Display for CompensatorError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::WrongFormat { expected, found } => {
                write!(
                    f,
                    "image number format is {found:?}, this compensator needs {expected:?}"
                )
            }
        }
    }
}

impl core::error::Error for CompensatorError {}
