//! Physical constants (CODATA 2018 exact SI values where exact).

/// Boltzmann constant in eV/K (CODATA 2018, exact: 1.380649e-23 J/K / e).
pub const K_B_EV_PER_K: f64 = 8.617_333_262e-5;
/// Elementary charge in coulomb (CODATA 2018, exact).
pub const Q_C: f64 = 1.602_176_634e-19;
/// Planck constant in J s (CODATA 2018, exact).
pub const H_J_S: f64 = 6.626_070_15e-34;
/// Boltzmann constant in J/K (CODATA 2018, exact).
pub const K_B_J_PER_K: f64 = 1.380_649e-23;
/// Electron rest mass in kg (CODATA 2018).
pub const M0_KG: f64 = 9.109_383_701_5e-31;
/// Vacuum permittivity in F/cm (CODATA 2018: 8.8541878128e-12 F/m).
pub const EPS0_F_PER_CM: f64 = 8.854_187_812_8e-14;
/// Room temperature used as the reference of the trade, in kelvin (common practice).
pub const T_300_K: f64 = 300.0;
/// Zero of the Celsius scale in kelvin (SI definition).
pub const ZERO_C_K: f64 = 273.15;
