//! Caughey–Thomas mobility with power-law temperature dependence.

use super::{CaugheyThomas, ModelParams, T_REF_K};
use crate::math::Backend;

/// Caughey–Thomas mobility (Caughey & Thomas 1967, Proc. IEEE 55, 2192) in
/// cm^2/(V s) at total ionized-impurity density `n_cm3`, with Arora-style
/// temperature exponents; reproduces Arora et al. 1982 to f32 rounding
/// when given their parameters ([`ModelParams::silicon`]).
#[inline]
#[must_use]
pub(crate) fn caughey_thomas_cm2_vs<B: Backend>(ct: &CaugheyThomas, n_cm3: f32, t_k: f32) -> f32 {
    let x = t_k / T_REF_K;
    let mu_min = ct.mu_min_cm2_vs * B::powf(x, ct.min_exp);
    let mu_delta = ct.mu_delta_cm2_vs * B::powf(x, ct.delta_exp);
    let n_ref = ct.n_ref_cm3 * B::powf(x, ct.n_ref_exp);
    let alpha = ct.alpha * B::powf(x, ct.alpha_exp);
    let ratio = n_cm3 / n_ref;
    // (N/Nref)^alpha; N = 0 gives 0 (powf(0, a > 0) = 0 in both backends'
    // domain, but micromath's ln(0) is not finite: handle it here).
    let roll = if ratio > 0.0 {
        B::powf(ratio, alpha)
    } else {
        0.0
    };
    mu_min + mu_delta / (1.0 + roll)
}

/// `(mu_n, mu_p)` in cm^2/(V s) with scattering centres `N_D + N_A`;
/// deviation from the full model within [`super::bounds::MOBILITY_REL`]
/// over -55..175 C for Si at 1e14..1e19 cm^-3.
#[inline]
#[must_use]
pub(crate) fn mobilities_cm2_vs<B: Backend>(p: &ModelParams, t_k: f32) -> (f32, f32) {
    let n = p.donor_cm3 + p.acceptor_cm3;
    (
        caughey_thomas_cm2_vs::<B>(&p.electron, n, t_k),
        caughey_thomas_cm2_vs::<B>(&p.hole, n, t_k),
    )
}
