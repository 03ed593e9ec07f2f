//! A sample (material + dopants) and the full model evaluated at one temperature.
//! SKELETON: helper "transport" owns this file (the Sample struct is shared).

use super::dopant::Dopant;
use super::error::ModelError;
use super::material::Material;

/// A doped semiconductor: material and any number of donor and acceptor species.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Sample {
    /// Host material.
    pub material: Material,
    /// Donor species and densities.
    pub donors: Vec<Dopant>,
    /// Acceptor species and densities.
    pub acceptors: Vec<Dopant>,
}

/// Every quantity the full model gives at one temperature (the `semidrift model` row).
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct ModelPoint {
    /// Temperature in kelvin.
    pub t_k: f64,
    /// Band gap in eV.
    pub eg_ev: f64,
    /// Intrinsic density in cm^-3.
    pub ni_cm3: f64,
    /// Electron density in cm^-3.
    pub n_cm3: f64,
    /// Hole density in cm^-3.
    pub p_cm3: f64,
    /// Ionized donors in cm^-3.
    pub donors_ionized_cm3: f64,
    /// Ionized acceptors in cm^-3.
    pub acceptors_ionized_cm3: f64,
    /// Fermi level above the valence-band edge in eV.
    pub fermi_from_ev_ev: f64,
    /// Electron drift mobility in cm^2/(V s).
    pub mu_n_cm2_vs: f64,
    /// Hole drift mobility in cm^2/(V s).
    pub mu_p_cm2_vs: f64,
    /// Resistivity in ohm cm.
    pub rho_ohm_cm: f64,
    /// Hall coefficient in cm^3/C (negative for electron conduction).
    pub hall_coefficient_cm3_c: f64,
    /// Piezoresistance factor P(N, T) of the majority carrier (Si only).
    pub piezo_factor: Option<f64>,
}

/// Evaluates the full model of `sample` at `t_k`.
pub fn evaluate(sample: &Sample, t_k: f64) -> Result<ModelPoint, ModelError> {
    let _ = (sample, t_k);
    todo!("SKELETON: helper transport")
}
