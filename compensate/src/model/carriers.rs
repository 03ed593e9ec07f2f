//! Electron and hole densities through freeze-out, extrinsic and intrinsic
//! regimes, in closed form.
//!
//! Two quadratics, both from Boltzmann statistics and charge neutrality
//! with one effective dopant level (common practice; e.g. Sze & Ng 2007,
//! Physics of Semiconductor Devices, 3rd ed., section 1.4.2):
//!
//! 1. Freeze-out of the majority dopant with compensation by the minority
//!    dopant, holes neglected (n-type shown):
//!    `n (n + N_A) / (N_D - N_A - n) = n1`, `n1 = (Nc / g_D) exp(-E_D / kT)`,
//!    solved as `n = 2 n1 N / (b + sqrt(b^2 + 4 n1 N))`, `b = N_A + n1`,
//!    `N = N_D - N_A` (the cancellation-free root).
//! 2. The intrinsic regime: with the ionized net doping `N+` from step 1,
//!    `n - p = N+` and `n p = n_i^2` give `n = N+/2 + sqrt((N+/2)^2 + n_i^2)`.
//!
//! Step 1 is accurate where `p << n`, step 2 where the dopants are fully
//! ionized; in Si the regimes are separated by hundreds of kelvin, so the
//! stitched result follows the full neutrality solution closely.

use super::bands::intrinsic_density_cm3;
use super::prepared::{At, Prepared};
use crate::math::Backend;

/// Carrier densities at one temperature, cm^-3.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Carriers {
    /// Electron density.
    pub n_cm3: f32,
    /// Hole density.
    pub p_cm3: f32,
    /// Intrinsic density.
    pub ni_cm3: f32,
}

/// `sqrt(a^2 + b^2)` without overflow for `a, b >= 0` up to f32::MAX.
#[inline]
fn hypot<B: Backend>(a: f32, b: f32) -> f32 {
    let (hi, lo) = if a >= b { (a, b) } else { (b, a) };
    if !(hi > 0.0) {
        return 0.0;
    }
    let r = lo / hi;
    hi * B::sqrt(1.0 + r * r)
}

/// Ionized net doping of the majority type through freeze-out:
/// `2 n1 N / (b + sqrt(b^2 + 4 n1 N))`, `b = N_minority + n1`, given
/// `sqrt(n1)` and `sqrt(N)` (so that `4 n1 N`, up to 1e39, never forms).
#[inline]
fn ionized_net<B: Backend>(net: f32, minority: f32, sqrt_n1: f32, sqrt_net: f32) -> f32 {
    let n1 = sqrt_n1 * sqrt_n1;
    let b = minority + n1;
    let root = hypot::<B>(b, 2.0 * sqrt_n1 * sqrt_net);
    let den = b + root;
    if !(den > 0.0) {
        return 0.0;
    }
    // 2 n1 N / den written as (2 n1 / den) N to stay in range.
    2.0 * n1 / den * net
}

/// Electron and hole densities at `t_k`; deviation from the full model
/// within [`super::bounds::MAJORITY_REL`] for the majority carrier over
/// -55..175 C for Si at 1e14..1e19 cm^-3 (Boltzmann statistics limit the
/// accuracy at the degenerate end). NaN for `t_k <= 0` or NaN inputs.
///
/// Two `exp`: the intrinsic density's and `sqrt(n1) = sqrt(N(300)/g)
/// exp(e/2 ln(T/300) - E/2kT)`, whose square is `n1` (no `sqrt` of it).
#[must_use]
pub(crate) fn carriers<B: Backend>(pr: &Prepared, at: &At) -> Carriers {
    let p = &pr.params;
    let ni = intrinsic_density_cm3::<B>(pr, at);
    if (p.donor_cm3 - p.acceptor_cm3).is_nan() || ni.is_nan() {
        return Carriers {
            n_cm3: f32::NAN,
            p_cm3: f32::NAN,
            ni_cm3: f32::NAN,
        };
    }
    // Signed ionized net doping (positive: n-type).
    let ionized = match &pr.freeze_out {
        Some(f) => {
            let sqrt_n1 =
                f.sqrt_prefactor * B::exp(f.half_dos_exp * at.ln_x - f.half_level_ev * at.inv_kt);
            let ionized = ionized_net::<B>(f.net, f.minority, sqrt_n1, f.sqrt_net);
            if f.n_type { ionized } else { -ionized }
        }
        None => 0.0,
    };
    let half = 0.5 * ionized.abs();
    let majority = half + hypot::<B>(half, ni);
    // minority = ni^2 / majority written as ni * (ni / majority).
    let minority = if majority > 0.0 {
        ni * (ni / majority)
    } else {
        ni
    };
    let (n_cm3, p_cm3) = if ionized >= 0.0 {
        (majority, minority)
    } else {
        (minority, majority)
    };
    Carriers {
        n_cm3,
        p_cm3,
        ni_cm3: ni,
    }
}
