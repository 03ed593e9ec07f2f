//! Band gap, effective densities of states, intrinsic density.

use super::ModelParams;
use super::prepared::{At, Prepared};
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
pub(crate) fn effective_dos_cm3<B: Backend>(p: &ModelParams, at: &At) -> (f32, f32) {
    (
        p.nc_300_cm3 * at.pow::<B>(p.nc_exp),
        p.nv_300_cm3 * at.pow::<B>(p.nv_exp),
    )
}

/// Intrinsic density `sqrt(Nc Nv) exp(-Eg / 2kT)` in cm^-3, Boltzmann
/// statistics; deviation from the full model within
/// [`super::bounds::NI_REL`] over -55..175 C for Si.
///
/// One `exp`: `sqrt(Nc(300) Nv(300)) exp(e ln(T/300) - Eg / 2kT)` with
/// `e = (nc_exp + nv_exp) / 2`.
#[inline]
#[must_use]
pub(crate) fn intrinsic_density_cm3<B: Backend>(pr: &Prepared, at: &At) -> f32 {
    let eg = band_gap_ev(&pr.params, at.t_k);
    pr.sqrt_ncnv_300 * B::exp(pr.ni_exp * at.ln_x - 0.5 * eg * at.inv_kt)
}
