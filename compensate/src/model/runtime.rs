//! [`Model`]: the runtime model's functions on one parameter set, with the
//! math backend as a type parameter.

use core::marker::PhantomData;

use super::prepared::{At, MobilityConsts, Prepared};
use super::{
    Carriers, ModelParams, band_gap_ev, carriers, caughey_thomas_cm2_vs, conductivity_ratio,
    conductivity_s_cm, effective_dos_cm3, hall_coefficient_cm3_c, hall_current_bias_ratio,
    hall_voltage_bias_ratio, intrinsic_density_cm3, mobilities_cm2_vs, piezo_factor_ratio,
};
use crate::math::{Backend, Selected};

/// The reduced runtime model of one doped layer.
///
/// `B` is the math backend; [`Model::new`] uses the one selected by cargo
/// features, [`Model::with_backend`] any enabled one (tests compare both).
/// Construction precomputes the per-part constants (a few `ln` and `sqrt`),
/// so that one evaluation at a temperature costs one `ln` plus the `exp`
/// of each temperature-dependent factor; the parameters are therefore
/// read-only afterwards ([`Model::params`]).
///
/// ```
/// use compensate::model::{Model, ModelParams};
/// // p-type piezoresistor, 2e18 cm^-3 boron (well-level logger scenario).
/// let m = Model::new(ModelParams::silicon(0.0, 2e18));
/// let r = m.conductivity_ratio(358.15, 298.15);
/// assert!(r.is_finite() && r > 0.0);
/// ```
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Model<B: Backend = Selected> {
    prepared: Prepared,
    backend: PhantomData<B>,
}

impl Model<Selected> {
    /// A model using the backend selected by cargo features.
    #[must_use]
    pub fn new(params: ModelParams) -> Self {
        Self::with_backend(params)
    }
}

impl<B: Backend> Model<B> {
    /// A model using backend `B`.
    #[must_use]
    pub fn with_backend(params: ModelParams) -> Self {
        Self {
            prepared: Prepared::new::<B>(params),
            backend: PhantomData,
        }
    }

    /// The parameters the model was built from (filled by the host).
    #[must_use]
    pub const fn params(&self) -> &ModelParams {
        &self.prepared.params
    }

    /// Varshni band gap in eV; exact formula to f32 rounding.
    #[must_use]
    pub fn band_gap_ev(&self, t_k: f32) -> f32 {
        band_gap_ev(&self.prepared.params, t_k)
    }

    /// `(Nc, Nv)` in cm^-3, power laws in T; exact formula to backend
    /// rounding (its deviation from the full DOS model is part of
    /// [`super::bounds::NI_REL`]).
    #[must_use]
    pub fn effective_dos_cm3(&self, t_k: f32) -> (f32, f32) {
        effective_dos_cm3::<B>(&self.prepared.params, &At::new::<B>(t_k))
    }

    /// Intrinsic density in cm^-3; within [`super::bounds::NI_REL`] of the
    /// full model (Si, -55..175 C).
    #[must_use]
    pub fn intrinsic_density_cm3(&self, t_k: f32) -> f32 {
        intrinsic_density_cm3::<B>(&self.prepared, &At::new::<B>(t_k))
    }

    /// Electron and hole densities; majority carrier within
    /// [`super::bounds::MAJORITY_REL`] of the full model (Si, -55..175 C,
    /// 1e14..1e19 cm^-3).
    #[must_use]
    pub fn carriers(&self, t_k: f32) -> Carriers {
        carriers::<B>(&self.prepared, &At::new::<B>(t_k))
    }

    /// Caughey–Thomas mobility of the electron parameter set at density
    /// `n_cm3`; exact formula to backend rounding.
    #[must_use]
    pub fn electron_mobility_cm2_vs(&self, n_cm3: f32, t_k: f32) -> f32 {
        let m = MobilityConsts::new::<B>(self.prepared.params.electron, n_cm3);
        caughey_thomas_cm2_vs::<B>(&m, &At::new::<B>(t_k))
    }

    /// `(mu_n, mu_p)` in cm^2/(V s); within [`super::bounds::MOBILITY_REL`]
    /// of the full model (Si, -55..175 C, 1e14..1e19 cm^-3).
    #[must_use]
    pub fn mobilities_cm2_vs(&self, t_k: f32) -> (f32, f32) {
        mobilities_cm2_vs::<B>(&self.prepared, &At::new::<B>(t_k))
    }

    /// Conductivity in S/cm; deviation from the full model within
    /// `(1 + MAJORITY_REL)(1 + MOBILITY_REL) - 1` (see [`super::bounds`]),
    /// Si, -55..175 C, 1e14..2e18 cm^-3.
    #[must_use]
    pub fn conductivity_s_cm(&self, t_k: f32) -> f32 {
        conductivity_s_cm::<B>(&self.prepared, t_k)
    }

    /// `sigma(T)/sigma(T_ref)`; within
    /// [`super::bounds::CONDUCTIVITY_RATIO_REL`] of the full model.
    #[must_use]
    pub fn conductivity_ratio(&self, t_k: f32, t_ref_k: f32) -> f32 {
        conductivity_ratio::<B>(&self.prepared, t_k, t_ref_k)
    }

    /// Two-carrier Hall coefficient in cm^3/C; exact formula to backend
    /// rounding given the carriers and mobilities (only its ratio to a
    /// reference temperature is bounded: [`super::bounds::HALL_RATIO_REL`]).
    // Thin methods read alike: each forwards to its own model function.
    #[must_use]
    pub fn hall_coefficient_cm3_c(&self, t_k: f32) -> f32 {
        hall_coefficient_cm3_c::<B>(&self.prepared, t_k)
    }

    /// Current-bias Hall sensitivity ratio `|R_H(T)/R_H(T_ref)|`; within
    /// [`super::bounds::HALL_RATIO_REL`] of the full model.
    #[must_use]
    pub fn hall_current_bias_ratio(&self, t_k: f32, t_ref_k: f32) -> f32 {
        hall_current_bias_ratio::<B>(&self.prepared, t_k, t_ref_k)
    }

    /// Voltage-bias Hall sensitivity ratio (Hall mobility ratio); within
    /// [`super::bounds::HALL_RATIO_REL`] of the full model.
    #[must_use]
    pub fn hall_voltage_bias_ratio(&self, t_k: f32, t_ref_k: f32) -> f32 {
        hall_voltage_bias_ratio::<B>(&self.prepared, t_k, t_ref_k)
    }

    /// Piezoresistance-factor ratio `(T_ref/T)^theta`; within
    /// [`super::bounds::PIEZO_RATIO_REL`] of Kanda's full form.
    #[must_use]
    pub fn piezo_factor_ratio(&self, t_k: f32, t_ref_k: f32) -> f32 {
        piezo_factor_ratio::<B>(&self.prepared.params, t_k, t_ref_k)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn within(got: f32, want: f64, rel: f64) -> bool {
        ((f64::from(got) - want) / want).abs() <= rel
    }

    #[test]
    fn assert_helper_can_fail() {
        assert!(!within(1.2, 1.0, 0.1));
        assert!(within(1.05, 1.0, 0.1));
    }

    #[test]
    fn silicon_reference_values() {
        let m = Model::new(ModelParams::silicon(1e15, 0.0));
        // (what, got, published, relative tolerance, source)
        let cases = [
            // Altermatt et al. 2003, J. Appl. Phys. 93, 1598: ni(300 K) =
            // 9.65e9 cm^-3; 15 % covers the unfitted Boltzmann/power-law
            // preset (the fitted deviation is in bounds::NI_REL).
            ("ni 300 K", m.intrinsic_density_cm3(300.0), 9.65e9, 0.15),
            // Thurmond 1975 Varshni fit: Eg(300 K) = 1.1245 eV (formula).
            ("Eg 300 K", m.band_gap_ev(300.0), 1.124_52, 1e-5),
            // Arora et al. 1982 eq. at 300 K, N -> 0: 88 + 1251.8 = 1339.8
            // (preset rounds 1251.8 to 1252: 2e-4).
            (
                "mu_n lattice",
                m.electron_mobility_cm2_vs(0.0, 300.0),
                1339.8,
                3e-4,
            ),
            // Same, N = 1e17: 88 + 1251.8 / (1 + (1e17/1.26e17)^0.88).
            (
                "mu_n 1e17",
                m.electron_mobility_cm2_vs(1e17, 300.0),
                88.0 + 1251.8 / (1.0 + (1e17f64 / 1.26e17).powf(0.88)),
                3e-4,
            ),
            // Full ionization of 1e15 P at 300 K (Boltzmann: 1 - n/n1 with
            // n1 ~ 2.5e18 leaves < 0.1 % neutral).
            ("n 1e15 300 K", m.carriers(300.0).n_cm3, 1e15, 1e-3),
        ];
        for (what, got, want, tol) in cases {
            assert!(
                within(got, want, tol),
                "{what}: got {got}, expected {want} (tol {tol})"
            );
        }
    }

    #[test]
    fn regimes_and_limits() {
        // n-type 1e14: extrinsic at 300 K, intrinsic contribution at 448 K
        // (ni ~ 1e13..1e14), freeze-out only far below 218 K.
        let m = Model::new(ModelParams::silicon(1e14, 0.0));
        let c = m.carriers(448.15);
        let ni = m.intrinsic_density_cm3(448.15);
        let want_n = 0.5e14 + (0.25e28f64 + f64::from(ni) * f64::from(ni)).sqrt();
        assert!(
            within(c.n_cm3, want_n, 1e-4),
            "n at 175 C: {} vs {want_n}",
            c.n_cm3
        );
        // Mass action n p = ni^2.
        let np = f64::from(c.n_cm3) * f64::from(c.p_cm3);
        assert!(within(np.sqrt() as f32, f64::from(ni), 1e-5));
        // Deep freeze-out at 40 K: far fewer carriers than dopants.
        assert!(m.carriers(40.0).n_cm3 < 0.5e14);
        // Compensated p-type: holes = N_A - N_D at 300 K, less the neutral
        // boron: p (p + N_D) / (N_A - N_D - p) = p1 = Nv/4 exp(-45 meV/kT)
        // = 1.36e18 leaves about 0.7 % neutral; 1 % tolerance.
        let p = Model::new(ModelParams::silicon(1e15, 1e16)).carriers(300.0);
        assert!(within(p.p_cm3, 9e15, 1e-2), "p = {}", p.p_cm3);
        assert!(p.p_cm3 < 9e15, "some boron must stay neutral");
        // Total functions: no panic, NaN out for nonsense in.
        assert!(m.carriers(-1.0).n_cm3.is_nan());
        assert!(m.carriers(f32::NAN).n_cm3.is_nan());
        assert!(m.piezo_factor_ratio(0.0, 300.0).is_nan());
        assert_eq!(m.conductivity_ratio(300.0, 300.0), 1.0);
        // Current-biased Hall sensitivity of n-type falls as ni takes over.
        assert!(m.hall_current_bias_ratio(448.15, 298.15) < 1.0);
        assert!(
            m.hall_coefficient_cm3_c(300.0) < 0.0,
            "n-type R_H must be negative"
        );
    }
}
