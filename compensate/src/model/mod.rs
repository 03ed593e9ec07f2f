//! Reduced runtime model of a doped semiconductor in f32: closed forms cheap
//! enough for a microcontroller, for firmware that evaluates drift from
//! physics instead of (or besides) a table.
//!
//! Simplifications against the host's full f64 model (the host keeps the
//! full fidelity, the runtime this reduced one): Boltzmann statistics, one effective donor and one effective
//! acceptor level, power-law effective densities of states, Caughey–Thomas
//! mobility with power-law temperature exponents, constant Hall scattering
//! factors, and a power-law piezoresistance factor. Each public function's
//! first doc line names its error bound against the full model; the bounds
//! are the constants in [`bounds`], checked by the repository's
//! `tests/runtime_model_deviation.rs` over -55..175 C.
//!
//! All functions are total: out-of-domain inputs (non-positive temperature,
//! NaN) give NaN or 0, never a panic, in bounded time.
// `!(x > 0.0)` is used on purpose throughout: it also rejects NaN.
#![allow(clippy::neg_cmp_op_on_partial_ord)]

mod bands;
pub mod bounds;
mod carriers;
mod mobility;
mod params;
mod prepared;
mod ratios;
mod runtime;

use bands::{band_gap_ev, effective_dos_cm3, intrinsic_density_cm3};
use carriers::carriers;
use mobility::{caughey_thomas_cm2_vs, mobilities_cm2_vs};
use ratios::{
    conductivity_ratio, conductivity_s_cm, hall_coefficient_cm3_c, hall_current_bias_ratio,
    hall_voltage_bias_ratio, piezo_factor_ratio,
};

pub use carriers::Carriers;
pub use params::{CaugheyThomas, ModelParams};
pub use runtime::Model;

/// Boltzmann constant in eV/K (CODATA 2018, exact in SI since 2019).
pub const K_B_EV_PER_K: f32 = 8.617_333e-5;
/// Elementary charge in coulomb (CODATA 2018, exact).
pub const Q_C: f32 = 1.602_176_6e-19;
/// Reference temperature of the power laws, 300 K.
pub const T_REF_K: f32 = 300.0;
