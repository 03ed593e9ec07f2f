//! Kanda's piezoresistance factor P(N, T) of the majority carrier in Si.
//!
//! Kanda (1982, IEEE Trans. Electron Devices 29, 64, eq. 11) scales Smith's
//! room-temperature, low-doping piezoresistance coefficients by
//!
//! `P(N, T) = (300 / T) * F'_{1/2}(eta) / F_{1/2}(eta)`,
//!
//! where `eta` is the reduced Fermi level of the majority carrier (positive
//! inside the band) and `F'` the derivative with respect to `eta`. In the
//! normalisation `F_j(eta) = 1/Γ(j+1) ∫ x^j / (1 + e^(x - eta)) dx` used by
//! [`super::fermi`], `F'_{1/2} = F_{-1/2}`, so
//! `P = (300/T) F_{-1/2}(eta) / F_{1/2}(eta)`.
//! Non-degenerate limit (`eta -> -inf`): both integrals tend to `e^eta`, so
//! `P -> 300/T`, and `P = 1` at low doping and 300 K.
//!
//! Smith's coefficients themselves live with the element models.

use super::carriers::CarrierState;
use super::constants::T_300_K;
use super::fermi;
use super::transport::{Carrier, reduced_fermi_level};

/// Kanda's factor from the two Fermi-Dirac integrals at the majority carrier's `eta`.
pub fn kanda_factor_from_integrals(t_k: f64, f_minus_half: f64, f_half: f64) -> f64 {
    (T_300_K / t_k) * f_minus_half / f_half
}

/// Kanda's factor at reduced Fermi level `eta` (majority carrier) and `t_k`.
///
/// Uses the slope `d ln F_{1/2} / d eta = F_{-1/2}/F_{1/2}` directly, which
/// stays finite where the integrals themselves underflow (eta << 0).
pub fn kanda_factor(eta: f64, t_k: f64) -> f64 {
    let (_, ratio) = fermi::ln_f_half_and_slope(eta);
    (T_300_K / t_k) * ratio
}

/// The majority carrier of a solved state (holes when `p > n`).
pub fn majority_carrier(state: &CarrierState) -> Carrier {
    if state.p_cm3 > state.n_cm3 {
        Carrier::Hole
    } else {
        Carrier::Electron
    }
}

/// Kanda's factor P(N, T) of the majority carrier of a solved Si state.
pub fn piezo_factor(state: &CarrierState) -> f64 {
    kanda_factor(
        reduced_fermi_level(state, majority_carrier(state)),
        state.t_k,
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    fn check_abs(what: &str, got: f64, expected: f64, tol: f64) -> Result<(), String> {
        if (got - expected).abs() <= tol {
            Ok(())
        } else {
            Err(format!(
                "{what}: got {got}, expected {expected}, |diff| > {tol}"
            ))
        }
    }

    #[test]
    fn check_abs_can_fail() {
        assert!(check_abs("x", 1.2, 1.0, 0.1).is_err());
    }

    /// The slope form equals the ratio of the two integrals (definition),
    /// to the 1e-12 the Antia fits are consistent to (see fermi.rs).
    #[test]
    fn slope_equals_integral_ratio() {
        for eta in [-5.0, 0.0, 1.9, 2.1, 10.0] {
            let a = kanda_factor(eta, 300.0);
            let b =
                kanda_factor_from_integrals(300.0, fermi::f_minus_half(eta), fermi::f_half(eta));
            check_abs(&format!("eta {eta}"), a, b, 1e-12 * b).unwrap();
        }
    }

    /// Non-degenerate limit (Kanda 1982, text after eq. 11): P = 300/T.
    /// At eta = -15 the Fermi-Dirac integrals differ from e^eta by
    /// e^-15 / 2^(j+1) relative, ~1e-7, so 1e-6 relative.
    #[test]
    fn nondegenerate_limit_is_300_over_t() {
        for &t in &[200.0, 300.0, 400.0] {
            let p = kanda_factor(-15.0, t);
            check_abs(
                &format!("P(eta=-15, {t} K)"),
                p,
                300.0 / t,
                1e-6 * 300.0 / t,
            )
            .unwrap();
        }
    }

    /// Degenerate limit: F_{1/2} -> eta^{3/2}/Γ(5/2), F_{-1/2} -> eta^{1/2}/Γ(3/2),
    /// so P -> (300/T) (3/2)/eta (Sommerfeld leading term). At eta = 50 the
    /// next Sommerfeld term is (π^2/6)(...)/eta^2 ~ 1e-3 relative; 3e-3.
    #[test]
    fn degenerate_limit() {
        let eta = 50.0;
        let p = kanda_factor(eta, 300.0);
        check_abs("P(eta=50)", p, 1.5 / eta, 3e-3 * 1.5 / eta).unwrap();
    }

    /// P decreases monotonically as the Fermi level rises into the band.
    #[test]
    fn monotone_in_eta() {
        let mut last = f64::INFINITY;
        for k in 0..100 {
            let eta = -10.0 + 0.2 * f64::from(k);
            let p = kanda_factor(eta, 300.0);
            assert!(p < last && p > 0.0, "eta {eta}: P {p} !< {last}");
            last = p;
        }
    }
}
