//! Errors of the element models: a bad spec (located in its file) or a model
//! failure at one temperature.

use crate::physics::ModelError;
use std::fmt;

/// A spec value that is malformed or physically impossible, located in its file.
#[derive(Debug, Clone, PartialEq)]
pub struct SpecError {
    /// Line in the spec text (1-based); the line of the key when it is
    /// present, else the line of its table header, else 1.
    pub line: usize,
    /// Dotted key, e.g. `die.junction_depth_um` or `arm[2].density_cm3`.
    pub field: String,
    /// What is wrong and what was expected.
    pub message: String,
}

impl fmt::Display for SpecError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(
            f,
            "line {}: field '{}': {}",
            self.line, self.field, self.message
        )
    }
}

impl std::error::Error for SpecError {}

/// Why an element model could not give a result.
#[derive(Debug, Clone, PartialEq)]
#[non_exhaustive]
pub enum ElementError {
    /// The spec is malformed or physically impossible.
    Spec(SpecError),
    /// The full model refused or failed for one part of the element.
    Model {
        /// Which part of the element, as a spec key (e.g. `arm[1]`, `plate`).
        part: String,
        /// Temperature in kelvin.
        t_k: f64,
        /// The model's own error.
        source: ModelError,
    },
    /// The full model gave no piezoresistance factor (material is not silicon).
    NoPiezoFactor {
        /// Which arm, as a spec key.
        part: String,
    },
    /// A temperature or stimulus given to the model is not a finite number.
    NotFinite {
        /// Name of the argument.
        what: &'static str,
    },
}

impl fmt::Display for ElementError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            ElementError::Spec(e) => e.fmt(f),
            ElementError::Model { part, t_k, source } => {
                write!(f, "{part} at {t_k} K: {source}")
            }
            ElementError::NoPiezoFactor { part } => {
                write!(
                    f,
                    "{part}: the full model gives no piezoresistance factor for this material"
                )
            }
            ElementError::NotFinite { what } => write!(f, "{what} is not a finite number"),
        }
    }
}

impl std::error::Error for ElementError {}

impl From<SpecError> for ElementError {
    fn from(e: SpecError) -> Self {
        ElementError::Spec(e)
    }
}
