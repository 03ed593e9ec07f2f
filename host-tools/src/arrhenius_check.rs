//! Checks around an Arrhenius fit: is the window one conduction regime, and
//! what prefactor power a material's published laws give for a regime.
//!
//! # Mixed-regime window
//! Within one regime `ln y + m ln T` is a straight line in `1/T`; where two
//! regimes share the window the local activation energy changes across it.
//! We fit the lowest and the highest quarter of the window's points (at
//! least 3 each) separately, both with the whole fit's `m` held fixed (a
//! free `m` per segment would absorb the change, which is how a mixed
//! window hides inside a free-`m` fit), and call the window mixed when the
//! two `Ea` differ by more than [`MIXED_REL`] of the whole window's `Ea` and
//! by more than three combined standard uncertainties. The other regime leaks in at the end
//! with the lower local `Ea` (extrinsic saturation below an intrinsic
//! window, saturation above a freeze-out window): that is the end to trim.
//!
//! # Prefactor power from the material (Si)
//! Intrinsic conductivity `q n_i (mu_n + mu_p)` with `n_i ~ T^{3/2}` (power
//! law densities of states; the gap's linear term goes into the intercept,
//! module docs of [`crate::arrhenius`]) and lattice mobility `~ T^-zeta`:
//! `m = 3/2 - zeta`. `zeta` = 2.33 (electrons, which carry ~75 % of the
//! intrinsic current) and 2.23 (holes), Arora, Hauser & Roulston 1982 (IEEE
//! TED 29, 292, Table I); Jacoboni et al. 1977 (Solid-State Electron. 20,
//! 77) give 2.42 and 2.20 (recalled from memory). We take `zeta` = 2.3
//! (`m = -0.8`) with a systematic uncertainty of 0.2 in `m`: the spread of
//! the published exponents, widened for the Si gap's curvature and the
//! `T^{3/2}` law's departure from the real densities of states over
//! 400..1000 K (common practice). A carrier density (`n_cm3`) has `m = 3/2`
//! with no mobility term. An error `dm` in `m` moves `Ea` by about
//! `k T_mid dm` (leaving out `m ln T` biases `Ea` by `m k T_mid`), which is
//! the systematic part of the reported uncertainty.

use crate::arrhenius::{ArrheniusError, ArrheniusFit, BOLTZMANN_EV_K, PrefactorPower, fit};

/// Relative change of `Ea` between the window's end quarters above which
/// the window is called mixed. Measured on the full model's Si data: an
/// intrinsic window 600..1000 K gives 0.0 % with its fitted `m` and 1.3 %
/// with `m = -0.8`; a prefactor power off by 1 tilts the quarters by about
/// 5 %; a P 1e13 cm^-3 bar over 400..700 K, whose donors double the
/// electron density at the low end, gives 20..22 %. 8 % is clear of the
/// first three and well below the last.
pub const MIXED_REL: f64 = 0.08;

/// Result of the mixed-regime check.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct RegimeCheck {
    /// The prefactor power `m` the end segments were fitted with.
    pub power: f64,
    /// Points in each end segment.
    pub segment_points: usize,
    /// `Ea` of the low-temperature quarter (eV), `m` fixed at the window's.
    pub ea_low_end_ev: f64,
    /// Standard uncertainty of `ea_low_end_ev` (eV).
    pub ea_low_end_sigma_ev: f64,
    /// `Ea` of the high-temperature quarter (eV).
    pub ea_high_end_ev: f64,
    /// Standard uncertainty of `ea_high_end_ev` (eV).
    pub ea_high_end_sigma_ev: f64,
    /// Whether the window holds more than one regime.
    pub mixed: bool,
    /// The end to trim when mixed: `"low"` or `"high"` temperatures.
    pub trim_end: Option<&'static str>,
}

/// Fits the end quarters of `points` (sorted or not) with `m` fixed at
/// `power` and compares their activation energies with the whole fit's
/// (module docs). Needs at least 6 points (3 per end).
pub fn regime_check(
    points: &[(f64, f64)],
    whole: &ArrheniusFit,
    power: f64,
) -> Result<RegimeCheck, ArrheniusError> {
    let mut sorted = points.to_vec();
    sorted.sort_by(|a, b| a.0.total_cmp(&b.0));
    let segment = (sorted.len() / 4).max(3);
    if sorted.len() < 2 * segment {
        return Err(ArrheniusError::TooFewPoints {
            needed: 2 * segment,
            got: sorted.len(),
        });
    }
    let m = PrefactorPower::Fixed(power);
    let low = fit(&sorted[..segment], m)?;
    let high = fit(&sorted[sorted.len() - segment..], m)?;
    let diff = high.ea_ev - low.ea_ev;
    let sigma = low.ea_sigma_ev.hypot(high.ea_sigma_ev);
    let mixed = diff.abs() > MIXED_REL * whole.ea_ev.abs() && diff.abs() > 3.0 * sigma;
    let trim_end = mixed.then_some(if low.ea_ev < high.ea_ev {
        "low"
    } else {
        "high"
    });
    Ok(RegimeCheck {
        power,
        segment_points: segment,
        ea_low_end_ev: low.ea_ev,
        ea_low_end_sigma_ev: low.ea_sigma_ev,
        ea_high_end_ev: high.ea_ev,
        ea_high_end_sigma_ev: high.ea_sigma_ev,
        mixed,
        trim_end,
    })
}

/// Reference prefactor power of an intrinsic conductivity when no material
/// is given: `3/2 - 2`, a lattice-mobility exponent of 2 in the middle of
/// the published 1.66..2.4 of Ge, GaAs and Si (`physics::mobility` tables).
pub const GENERIC_INTRINSIC_CONDUCTIVITY_POWER: f64 = -0.5;

/// Smallest departure of a fitted `m` from the regime's reference power
/// that is called implausible: the published single-regime laws of the
/// materials here span -0.9..+0.5 for conductivity (above) and 3/2 for
/// densities, so a fitted `m` 1.5 away from the reference is outside all of
/// them (then the free `m` is absorbing a second regime).
pub const POWER_IMPLAUSIBLE: f64 = 1.5;

/// Whether a freely fitted `m` (`m_fit +- sigma`) is implausible for one
/// regime whose reference power is `reference`.
pub fn power_implausible(m_fit: f64, sigma: f64, reference: f64) -> bool {
    let d = (m_fit - reference).abs();
    d > POWER_IMPLAUSIBLE && d > 3.0 * sigma
}

/// Prefactor power for Si intrinsic conductivity, `3/2 - 2.3` (module docs).
pub const SI_INTRINSIC_CONDUCTIVITY_POWER: f64 = -0.8;
/// Prefactor power of an intrinsic carrier density, `3/2` (power-law DOS).
pub const INTRINSIC_DENSITY_POWER: f64 = 1.5;
/// Systematic standard uncertainty of the default powers (module docs).
pub const POWER_SYSTEMATIC: f64 = 0.2;

/// Systematic uncertainty of `Ea` (eV) from an uncertainty `dm` of a fixed
/// prefactor power over a window `t_min_k..t_max_k`: `k T_mid dm`.
pub fn ea_systematic_ev(dm: f64, t_min_k: f64, t_max_k: f64) -> f64 {
    BOLTZMANN_EV_K * 0.5 * (t_min_k + t_max_k) * dm
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Synthetic data from two regimes (`Ea` 0.6 eV, plus a constant
    /// extrinsic term that dominates at low T): flagged mixed, trim the low
    /// end; one regime alone: not mixed. Exact data, so the 3-sigma test is
    /// met whenever the 5 % one is.
    #[test]
    fn two_regimes_are_flagged_and_one_is_not() {
        let k = BOLTZMANN_EV_K;
        let one: Vec<(f64, f64)> = (0..41)
            .map(|i| {
                let t = 450.0 + 6.25 * f64::from(i);
                (t, 1e3 * t.powf(-0.8) * (-0.6 / (k * t)).exp())
            })
            .collect();
        let two: Vec<(f64, f64)> = one
            .iter()
            .map(|&(t, y)| (t, y + 0.4 * one[0].1 * 10.0))
            .collect();
        let f1 = fit(&one, PrefactorPower::Free).unwrap();
        let c1 = regime_check(&one, &f1, -0.8).unwrap();
        assert!(!c1.mixed, "{c1:?}");
        let f2 = fit(&two, PrefactorPower::Free).unwrap();
        let c2 = regime_check(&two, &f2, -0.8).unwrap();
        assert!(c2.mixed, "{c2:?}");
        assert_eq!(c2.trim_end, Some("low"));
        // The free fit's m soaks up part of the second regime.
        assert!(power_implausible(f2.prefactor_power, 0.0, -0.8), "{f2:?}");
        assert!(!power_implausible(f1.prefactor_power, 0.0, -0.8), "{f1:?}");
    }

    /// k T_mid dm by hand: 8.617333e-5 * 575 * 0.2 = 9.909933e-3 eV.
    #[test]
    fn systematic_by_hand() {
        let s = ea_systematic_ev(0.2, 450.0, 700.0);
        assert!((s - 9.909_933e-3).abs() < 1e-8, "{s}");
    }
}
