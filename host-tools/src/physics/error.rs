//! Errors of the full model.

use thiserror::Error;

/// Why the full model refused an input or could not produce a result.
#[derive(Debug, Clone, PartialEq, Error)]
#[non_exhaustive]
pub enum ModelError {
    /// Temperature outside the range the model is valid for.
    #[error("temperature {t_k} K is outside the model range {min_k}..={max_k} K")]
    TemperatureOutOfRange {
        /// Requested temperature in kelvin.
        t_k: f64,
        /// Lowest supported temperature in kelvin.
        min_k: f64,
        /// Highest supported temperature in kelvin.
        max_k: f64,
    },
    /// Dopant density outside the supported range or not finite.
    #[error("{species} density {density_cm3:e} cm^-3 is outside {min_cm3:e}..={max_cm3:e} cm^-3")]
    DensityOutOfRange {
        /// Species symbol, e.g. "B".
        species: String,
        /// Requested density.
        density_cm3: f64,
        /// Lowest supported density.
        min_cm3: f64,
        /// Highest supported density.
        max_cm3: f64,
    },
    /// The species is not a known dopant of the material, or has the wrong kind.
    #[error("{species} is not a known {kind} in {material}")]
    UnknownSpecies {
        /// Species symbol as given.
        species: String,
        /// "donor" or "acceptor".
        kind: &'static str,
        /// Material name.
        material: &'static str,
    },
    /// The neutrality solver did not converge (never expected; reported, not hidden).
    #[error("charge neutrality did not converge at {t_k} K (residual {residual:e})")]
    NoConvergence {
        /// Temperature in kelvin.
        t_k: f64,
        /// Relative charge residual at the last iterate.
        residual: f64,
    },
}
