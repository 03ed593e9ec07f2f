//! Charge neutrality: the Fermi level, band carriers and ionized dopants at a
//! temperature, with Fermi-Dirac statistics for the band carriers.
//! SKELETON: helper "carriers" owns this file.

use super::error::ModelError;
use super::model::Sample;

/// The solved equilibrium state of a sample at one temperature.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct CarrierState {
    /// Temperature in kelvin.
    pub t_k: f64,
    /// Band gap in eV.
    pub eg_ev: f64,
    /// Intrinsic density in cm^-3 (Boltzmann definition sqrt(Nc Nv) exp(-Eg/2kT), with the gap narrowing of the model if any is stated in the docs).
    pub ni_cm3: f64,
    /// Effective density of states of the conduction band in cm^-3.
    pub nc_cm3: f64,
    /// Effective density of states of the valence band in cm^-3.
    pub nv_cm3: f64,
    /// Electron density in cm^-3.
    pub n_cm3: f64,
    /// Hole density in cm^-3.
    pub p_cm3: f64,
    /// Ionized donor density (sum over donor species) in cm^-3.
    pub donors_ionized_cm3: f64,
    /// Ionized acceptor density (sum over acceptor species) in cm^-3.
    pub acceptors_ionized_cm3: f64,
    /// Total donor density in cm^-3.
    pub donors_total_cm3: f64,
    /// Total acceptor density in cm^-3.
    pub acceptors_total_cm3: f64,
    /// Fermi level measured from the valence-band edge, in eV.
    pub fermi_from_ev_ev: f64,
    /// |p - n + Nd+ - Na-| / (n + p + Nd+ + Na-) at the solution.
    pub neutrality_residual: f64,
}

/// Solves charge neutrality for `sample` at `t_k`.
pub fn solve(sample: &Sample, t_k: f64) -> Result<CarrierState, ModelError> {
    let _ = (sample, t_k);
    todo!("SKELETON: helper carriers")
}
