//! Band gap, effective densities of states, intrinsic density.

use super::{K_B_EV_PER_K, ModelParams, T_REF_K};
use crate::math::Backend;

/// Varshni band gap `Eg0 - alpha T^2 / (T + beta)` in eV (Varshni 1967,
/// Physica 34, 149, eq. 4); exact evaluation of the formula to f32
/// rounding, NaN for `t_k <= 0`.
#[inline]
#[must_use]
pub(crate) fn band_gap_ev(p: &ModelParams, t_k: f32) -> f32 {
    if !(t_k > 0.0) {
        return f32::NAN;
    }
    p.eg0_ev - p.varshni_alpha_ev_per_k * t_k * t_k / (t_k + p.varshni_beta_k)
}

/// `(Nc, Nv)` at `t_k` in cm^-3: `N(300 K) (T/300)^exp` (1.5 for
/// temperature-independent effective masses; common practice).
#[inline]
#[must_use]
pub(crate) fn effective_dos_cm3<B: Backend>(p: &ModelParams, t_k: f32) -> (f32, f32) {
    let x = t_k / T_REF_K;
    (
        p.nc_300_cm3 * B::powf(x, p.nc_exp),
        p.nv_300_cm3 * B::powf(x, p.nv_exp),
    )
}

/// Intrinsic density `sqrt(Nc Nv) exp(-Eg / 2kT)` in cm^-3, Boltzmann
/// statistics; deviation from the full model within
/// [`super::bounds::NI_REL`] over -55..175 C for Si.
#[inline]
#[must_use]
pub(crate) fn intrinsic_density_cm3<B: Backend>(p: &ModelParams, t_k: f32) -> f32 {
    let (nc, nv) = effective_dos_cm3::<B>(p, t_k);
    let eg = band_gap_ev(p, t_k);
    // sqrt(nc) * sqrt(nv) avoids the 1e39 overflow of nc * nv in f32.
    B::sqrt(nc) * B::sqrt(nv) * B::exp(-eg / (2.0 * K_B_EV_PER_K * t_k))
}
