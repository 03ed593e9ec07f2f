//! Caughey–Thomas mobility with power-law temperature dependence.

use super::prepared::{At, MobilityConsts, Prepared};
use crate::math::Backend;

/// Caughey–Thomas mobility (Caughey & Thomas 1967, Proc. IEEE 55, 2192) in
/// cm^2/(V s) at the density `m` was prepared for, with Arora-style
/// temperature exponents; reproduces Arora et al. 1982 to f32 rounding
/// when given their parameters ([`super::ModelParams::silicon`]).
///
/// Four `exp` (three power laws and the roll-off
/// `(N / n_ref(T))^alpha(T) = exp(alpha(T) (ln(N / n_ref(300)) - n_ref_exp
/// ln(T/300)))`), none without scattering centres beyond the two power
/// laws.
#[inline]
#[must_use]
pub(crate) fn caughey_thomas_cm2_vs<B: Backend>(m: &MobilityConsts, at: &At) -> f32 {
    let ct = &m.ct;
    let pow_min = at.pow::<B>(ct.min_exp);
    let pow_alpha = at.pow::<B>(ct.alpha_exp);
    with_powers::<B>(m, at, pow_min, pow_alpha)
}

/// [`caughey_thomas_cm2_vs`] given `(T/300)^min_exp` and
/// `(T/300)^alpha_exp` (shared between carriers with equal exponents).
#[inline]
fn with_powers<B: Backend>(m: &MobilityConsts, at: &At, pow_min: f32, pow_alpha: f32) -> f32 {
    let ct = &m.ct;
    let mu_min = ct.mu_min_cm2_vs * pow_min;
    let mu_delta = ct.mu_delta_cm2_vs * at.pow::<B>(ct.delta_exp);
    let roll = match m.ln_ratio {
        Some(ln_ratio) => {
            let alpha = ct.alpha * pow_alpha;
            B::exp(alpha * (ln_ratio - ct.n_ref_exp * at.ln_x))
        }
        None => 0.0,
    };
    mu_min + mu_delta / (1.0 + roll)
}

/// `(mu_n, mu_p)` in cm^2/(V s) with scattering centres `N_D + N_A`;
/// deviation from the full model within [`super::bounds::MOBILITY_REL`]
/// over -55..175 C for Si at 1e14..1e19 cm^-3.
///
/// Arora's parameters give electrons and holes the same `min_exp` and
/// `alpha_exp`; a power law with the same exponent is evaluated once
/// (identical result, one `exp` fewer each).
#[inline]
#[must_use]
pub(crate) fn mobilities_cm2_vs<B: Backend>(pr: &Prepared, at: &At) -> (f32, f32) {
    let (e, h) = (&pr.electron.ct, &pr.hole.ct);
    let e_min = at.pow::<B>(e.min_exp);
    let e_alpha = at.pow::<B>(e.alpha_exp);
    let h_min = if h.min_exp == e.min_exp {
        e_min
    } else {
        at.pow::<B>(h.min_exp)
    };
    let h_alpha = if h.alpha_exp == e.alpha_exp {
        e_alpha
    } else {
        at.pow::<B>(h.alpha_exp)
    };
    (
        with_powers::<B>(&pr.electron, at, e_min, e_alpha),
        with_powers::<B>(&pr.hole, at, h_min, h_alpha),
    )
}
