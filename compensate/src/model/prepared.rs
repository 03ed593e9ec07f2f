//! Per-part constants of the runtime model, computed once when a
//! [`super::Model`] is built, and the per-temperature quantities that every
//! function of one evaluation shares.
//!
//! Every power law of the model, `c (T/300)^e`, is evaluated as
//! `c exp(e ln(T/300))` with one logarithm per temperature, and the
//! exponentials that multiply (density of states times Boltzmann factor)
//! share one `exp`: an evaluation of the conductivity costs one `ln` and
//! at most ten `exp` instead of fourteen `powf` and five `exp`. The
//! prefactors stay multiplicative (never `exp(ln c + ...)`), so the
//! argument of each `exp` is small and its f32 rounding negligible, and
//! the backend's own error enters each quantity once, as before.

use super::{CaugheyThomas, K_B_EV_PER_K, ModelParams, T_REF_K};
use crate::math::Backend;

/// One temperature, with the logarithm and Boltzmann factor that the
/// power laws and exponentials of one evaluation share.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct At {
    /// Temperature, K.
    pub t_k: f32,
    /// `ln(T / 300 K)`; NaN or -inf for `t_k <= 0`.
    pub ln_x: f32,
    /// `1 / (k_B T)`, 1/eV.
    pub inv_kt: f32,
}

impl At {
    /// The shared quantities at `t_k` (one `ln`, one division).
    #[inline]
    pub fn new<B: Backend>(t_k: f32) -> Self {
        Self {
            t_k,
            ln_x: B::ln(t_k / T_REF_K),
            inv_kt: 1.0 / (K_B_EV_PER_K * t_k),
        }
    }

    /// `(T / 300 K)^e` as `exp(e ln(T / 300 K))`.
    #[inline]
    pub fn pow<B: Backend>(&self, e: f32) -> f32 {
        B::exp(e * self.ln_x)
    }
}

/// Per-part constants of one Caughey–Thomas mobility at the part's total
/// dopant density.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct MobilityConsts {
    /// The published parameters.
    pub ct: CaugheyThomas,
    /// `ln(N / n_ref(300 K))`, `None` without scattering centres (no
    /// roll-off term).
    pub ln_ratio: Option<f32>,
}

impl MobilityConsts {
    /// Constants for density `n_cm3` (one `ln`).
    #[inline]
    pub fn new<B: Backend>(ct: CaugheyThomas, n_cm3: f32) -> Self {
        let ratio = n_cm3 / ct.n_ref_cm3;
        // N = 0 (or NaN) has no roll-off: micromath's ln(0) is not finite.
        let ln_ratio = if ratio > 0.0 {
            Some(B::ln(ratio))
        } else {
            None
        };
        Self { ct, ln_ratio }
    }
}

/// Freeze-out constants of the majority dopant.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct FreezeOut {
    /// `|N_D - N_A|`, cm^-3.
    pub net: f32,
    /// `sqrt(|N_D - N_A|)`.
    pub sqrt_net: f32,
    /// Density of the compensating (minority) dopant, cm^-3.
    pub minority: f32,
    /// `sqrt(N(300 K) / g)` of the majority band's density of states and
    /// the dopant's degeneracy factor.
    pub sqrt_prefactor: f32,
    /// Half the band's DOS temperature exponent.
    pub half_dos_exp: f32,
    /// Half the ionization energy, eV.
    pub half_level_ev: f32,
    /// `true` for n-type (donors in excess).
    pub n_type: bool,
}

/// Everything the runtime model's functions need about one part.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct Prepared {
    /// The parameters the constants were computed from.
    pub params: ModelParams,
    /// `sqrt(Nc(300 K)) sqrt(Nv(300 K))` (the product overflows f32).
    pub sqrt_ncnv_300: f32,
    /// `(nc_exp + nv_exp) / 2`, the exponent of `sqrt(Nc Nv)`.
    pub ni_exp: f32,
    /// Majority-dopant freeze-out; `None` when the net doping is zero.
    pub freeze_out: Option<FreezeOut>,
    /// Electron mobility at `N_D + N_A`.
    pub electron: MobilityConsts,
    /// Hole mobility at `N_D + N_A`.
    pub hole: MobilityConsts,
}

impl Prepared {
    /// Computes the constants (three `ln` and a few `sqrt`; once per part).
    pub fn new<B: Backend>(p: ModelParams) -> Self {
        let net = p.donor_cm3 - p.acceptor_cm3;
        let freeze_out = if net > 0.0 {
            Some(FreezeOut {
                net,
                sqrt_net: B::sqrt(net),
                minority: p.acceptor_cm3,
                sqrt_prefactor: B::sqrt(p.nc_300_cm3 / p.donor_degeneracy),
                half_dos_exp: 0.5 * p.nc_exp,
                half_level_ev: 0.5 * p.donor_level_ev,
                n_type: true,
            })
        } else if net < 0.0 {
            Some(FreezeOut {
                net: -net,
                sqrt_net: B::sqrt(-net),
                minority: p.donor_cm3,
                sqrt_prefactor: B::sqrt(p.nv_300_cm3 / p.acceptor_degeneracy),
                half_dos_exp: 0.5 * p.nv_exp,
                half_level_ev: 0.5 * p.acceptor_level_ev,
                n_type: false,
            })
        } else {
            None
        };
        let scatter = p.donor_cm3 + p.acceptor_cm3;
        Self {
            params: p,
            sqrt_ncnv_300: B::sqrt(p.nc_300_cm3) * B::sqrt(p.nv_300_cm3),
            ni_exp: 0.5 * (p.nc_exp + p.nv_exp),
            freeze_out,
            electron: MobilityConsts::new::<B>(p.electron, scatter),
            hole: MobilityConsts::new::<B>(p.hole, scatter),
        }
    }
}
