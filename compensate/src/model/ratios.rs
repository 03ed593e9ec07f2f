//! Conductivity, Hall coefficient and piezoresistance factor, and their
//! ratios to a reference temperature (what drift compensation needs).

use super::prepared::{At, Prepared};
use super::{ModelParams, Q_C, carriers, mobilities_cm2_vs};
use crate::math::Backend;

/// Conductivity terms at one temperature: carriers and mobilities share
/// one [`At`] (one `ln`).
#[derive(Clone, Copy)]
struct Terms {
    /// `n mu_n`, 1/(cm V s).
    sn: f32,
    /// `p mu_p`, 1/(cm V s).
    sp: f32,
    mu_n: f32,
    mu_p: f32,
}

impl Terms {
    #[inline]
    fn at<B: Backend>(pr: &Prepared, t_k: f32) -> Self {
        let at = At::new::<B>(t_k);
        let c = carriers::<B>(pr, &at);
        let (mu_n, mu_p) = mobilities_cm2_vs::<B>(pr, &at);
        Self {
            sn: c.n_cm3 * mu_n,
            sp: c.p_cm3 * mu_p,
            mu_n,
            mu_p,
        }
    }

    /// Conductivity `q (n mu_n + p mu_p)` in S/cm.
    #[inline]
    fn sigma_s_cm(&self) -> f32 {
        Q_C * (self.sn + self.sp)
    }

    /// Two-carrier Hall coefficient in cm^3/C.
    #[inline]
    fn hall_cm3_c(&self, p: &ModelParams) -> f32 {
        // Normalize by the total conductivity so the squares stay in f32
        // range (n mu_n can reach 1e22):
        // (r_p p mu_p^2 - r_n n mu_n^2) / s^2 = (r_p fp mu_p - r_n fn mu_n) / s.
        let s = self.sn + self.sp;
        if !(s > 0.0) {
            return f32::NAN;
        }
        let (fn_, fp) = (self.sn / s, self.sp / s);
        (p.hall_factor_p * fp * self.mu_p - p.hall_factor_n * fn_ * self.mu_n) / s / Q_C
    }
}

/// Conductivity `q (n mu_n + p mu_p)` in S/cm.
#[must_use]
pub(crate) fn conductivity_s_cm<B: Backend>(pr: &Prepared, t_k: f32) -> f32 {
    Terms::at::<B>(pr, t_k).sigma_s_cm()
}

/// `sigma(T) / sigma(T_ref)`; deviation from the full model within
/// [`super::bounds::CONDUCTIVITY_RATIO_REL`] over -55..175 C for Si at
/// 1e14..1e19 cm^-3 with `T_ref` = 25 C.
#[must_use]
pub(crate) fn conductivity_ratio<B: Backend>(pr: &Prepared, t_k: f32, t_ref_k: f32) -> f32 {
    conductivity_s_cm::<B>(pr, t_k) / conductivity_s_cm::<B>(pr, t_ref_k)
}

/// Two-carrier low-field Hall coefficient in cm^3/C:
/// `R_H = (r_p p mu_p^2 - r_n n mu_n^2) / (q (n mu_n + p mu_p)^2)`
/// (common practice; e.g. Putley 1960, The Hall Effect and Related
/// Phenomena, ch. 4). Single-carrier limit `-r_n / (q n)`.
#[must_use]
pub(crate) fn hall_coefficient_cm3_c<B: Backend>(pr: &Prepared, t_k: f32) -> f32 {
    Terms::at::<B>(pr, t_k).hall_cm3_c(&pr.params)
}

/// Hall sensitivity ratio `S(T)/S(T_ref)` of a current-biased plate,
/// `|R_H(T)| / |R_H(T_ref)|`; deviation from the full model within
/// [`super::bounds::HALL_RATIO_REL`] over -55..175 C for n-type Si at
/// 1e14..1e17 cm^-3 with `T_ref` = 25 C.
#[must_use]
pub(crate) fn hall_current_bias_ratio<B: Backend>(pr: &Prepared, t_k: f32, t_ref_k: f32) -> f32 {
    math_abs(hall_coefficient_cm3_c::<B>(pr, t_k))
        / math_abs(hall_coefficient_cm3_c::<B>(pr, t_ref_k))
}

/// Hall sensitivity ratio of a voltage-biased plate, proportional to the
/// Hall mobility `|R_H| sigma`; deviation within
/// [`super::bounds::HALL_RATIO_REL`] under the same conditions. One
/// evaluation of carriers and mobilities per temperature.
#[must_use]
pub(crate) fn hall_voltage_bias_ratio<B: Backend>(pr: &Prepared, t_k: f32, t_ref_k: f32) -> f32 {
    let mu_h = |t: f32| {
        let terms = Terms::at::<B>(pr, t);
        math_abs(terms.hall_cm3_c(&pr.params)) * terms.sigma_s_cm()
    };
    mu_h(t_k) / mu_h(t_ref_k)
}

/// Piezoresistance-factor ratio `P(T)/P(T_ref) = (T_ref/T)^theta`; with
/// `theta = 1` the nondegenerate limit of Kanda 1982 (IEEE TED 29(1), 64,
/// eq. 11: `P = (300/T) F'_{1/2}(eta)/F_{1/2}(eta)` -> `300/T`). Deviation
/// from Kanda's full form within [`super::bounds::PIEZO_RATIO_REL`] over
/// -55..175 C for Si at or below 1e18 cm^-3 with `theta` fitted.
#[must_use]
pub(crate) fn piezo_factor_ratio<B: Backend>(p: &ModelParams, t_k: f32, t_ref_k: f32) -> f32 {
    if !(t_k > 0.0 && t_ref_k > 0.0) {
        return f32::NAN;
    }
    B::powf(t_ref_k / t_k, p.piezo_exp)
}

/// `|x|` without std (core's `f32::abs` is available in core since 1.85 but
/// spelled out here so no method call can be shadowed by std on the host).
#[inline]
fn math_abs(x: f32) -> f32 {
    f32::from_bits(x.to_bits() & 0x7FFF_FFFF)
}
