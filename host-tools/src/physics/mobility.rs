//! Carrier mobility: lattice and ionized-impurity scattering (Masetti doping
//! dependence with Arora-type temperature dependence, or Klaassen, for Si;
//! Caughey-Thomas for other materials).
//! SKELETON: helper "transport" owns this file.

use super::carriers::CarrierState;
use super::material::Material;

/// Electron and hole drift mobilities in cm^2/(V s).
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct Mobility {
    /// Electron drift mobility in cm^2/(V s).
    pub mu_n_cm2_vs: f64,
    /// Hole drift mobility in cm^2/(V s).
    pub mu_p_cm2_vs: f64,
}

/// Drift mobilities for the material at the solved state.
pub fn drift_mobility(material: Material, state: &CarrierState) -> Mobility {
    let _ = (material, state);
    todo!("SKELETON: helper transport")
}
