//! Smith's coefficients carried to any doping and temperature with Kanda's
//! piezoresistance factor: pi(N, T) = pi_Smith * P(N, T) / P(N_Smith, 300 K)
//! (Y. Kanda, "A graphical representation of the piezoresistance
//! coefficients in silicon", IEEE Trans. Electron Devices 29, 64 (1982)).
//!
//! N_Smith, the doping of Smith's samples, is found from their resistivity
//! (7.8 ohm cm p-type, 11.7 ohm cm n-type) with the full model itself, so the
//! scaling is consistent with the model's own mobility.

use super::cache::evaluate_cached;
use super::error::ElementError;
use super::sample::region_sample;
use super::smith::{Carrier, SMITH_T_K, smith_row};
use crate::physics::{Material, ModelPoint, Species};
use std::sync::OnceLock;

/// Dopant assumed for Smith's samples: boron (p), phosphorus (n) (common practice).
pub fn smith_species(carrier: Carrier) -> Species {
    match carrier {
        Carrier::P => Species::B,
        Carrier::N => Species::P,
    }
}

/// Smith's sample at a trial density, evaluated at 300 K.
fn smith_point(carrier: Carrier, density_cm3: f64) -> Result<ModelPoint, ElementError> {
    let sample = region_sample(Material::Si, smith_species(carrier), density_cm3, None);
    evaluate_cached(&sample, SMITH_T_K).map_err(|source| ElementError::Model {
        part: format!("Smith {carrier:?}-type reference sample"),
        t_k: SMITH_T_K,
        source,
    })
}

/// The density (cm^-3) at which the full model gives Smith's resistivity at
/// 300 K: bisection in log density over 1e12..1e18 cm^-3, where resistivity
/// falls monotonically with doping.
pub fn solve_smith_density(carrier: Carrier) -> Result<f64, ElementError> {
    let target = smith_row(carrier).rho_ohm_cm;
    let (mut lo, mut hi) = (12.0_f64, 18.0_f64);
    // 50 halvings of 6 decades: 5e-15 decades, far below any model change.
    for _ in 0..50 {
        let mid = 0.5 * (lo + hi);
        let rho = smith_point(carrier, 10f64.powf(mid))?.rho_ohm_cm;
        if rho > target { lo = mid } else { hi = mid }
    }
    Ok(10f64.powf(0.5 * (lo + hi)))
}

/// Smith's density and the model's P(N_Smith, 300 K), solved once per process.
fn reference(carrier: Carrier) -> Result<(f64, f64), ElementError> {
    static P: OnceLock<Result<(f64, f64), ElementError>> = OnceLock::new();
    static N: OnceLock<Result<(f64, f64), ElementError>> = OnceLock::new();
    let cell = match carrier {
        Carrier::P => &P,
        Carrier::N => &N,
    };
    cell.get_or_init(|| {
        let density = solve_smith_density(carrier)?;
        let factor = smith_point(carrier, density)?.piezo_factor.ok_or_else(|| {
            ElementError::NoPiezoFactor {
                part: format!("Smith {carrier:?}-type reference"),
            }
        })?;
        Ok((density, factor))
    })
    .clone()
}

/// Doping of Smith's sample of this type in cm^-3 (from its resistivity).
pub fn smith_density_cm3(carrier: Carrier) -> Result<f64, ElementError> {
    reference(carrier).map(|(n, _)| n)
}

/// The factor that carries Smith's coefficients to a region whose full-model
/// piezoresistance factor is `piezo_factor`: P(N, T) / P(N_Smith, 300 K).
pub fn smith_scale(carrier: Carrier, piezo_factor: f64) -> Result<f64, ElementError> {
    reference(carrier).map(|(_, p_ref)| piezo_factor / p_ref)
}
