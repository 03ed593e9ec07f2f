//! Activation-energy fit of a thermally activated quantity (conductivity,
//! carrier density) by linear least squares on
//! `ln y = a + m ln T - Ea / (k T)`.
//!
//! Why the `m ln T` term: the prefactor of every such law is itself a power
//! of temperature (effective densities of states N_c, N_v go as T^{3/2};
//! lattice mobility as T^{-gamma}), and leaving it out biases Ea by about
//! `m k T_mid`. `m` is either fitted or fixed from the physics
//! ([`PrefactorPower`]). The parameters' standard uncertainties come from the
//! least-squares covariance `s^2 (X^T X)^-1` with the residual variance
//! `s^2 = RSS / (n - p)` (ordinary least squares; the straight-line case is
//! ISO/IEC Guide 98-3 (GUM) example H.3, recalled from memory); they describe the scatter of the
//! data about the model, not systematic errors of the model itself.
//!
//! Interpretations of `Ea` (see [`ArrheniusFit::interpretations`]):
//! - intrinsic range: `n_i ~ T^{3/2} exp(-Eg(T) / 2kT)`. With the gap linear
//!   in T over the window, `Eg(T) = Eg0 - beta T`, the factor
//!   `exp(beta / 2k)` is a constant absorbed in `a`, so `2 Ea = Eg0`, the gap
//!   *linearly extrapolated to 0 K* (larger than the true Eg(0 K), because
//!   Eg(T) curves flat towards 0 K; Varshni 1967, Physica 34, 149).
//! - freeze-out, weak compensation (N_A << n << N_D):
//!   `n ~ sqrt(N_c N_D) exp(-E_d / 2kT)`, so `E_d = 2 Ea`;
//! - freeze-out, strong compensation (n << N_A < N_D):
//!   `n ~ (N_D - N_A) / N_A N_c exp(-E_d / kT)`, so `E_d = Ea`
//!   (both are limits of the single-donor neutrality equation; their use in
//!   Hall-effect analysis is common practice).

use nalgebra::{DMatrix, DVector};

/// Boltzmann constant in eV/K (CODATA 2018, exact in the SI).
pub const BOLTZMANN_EV_K: f64 = 8.617_333_262e-5;

/// How the prefactor's temperature power `m` is handled.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum PrefactorPower {
    /// Fitted together with `a` and `Ea` (needs a wide window: `ln T` and
    /// `1/T` are strongly correlated over a narrow one).
    Free,
    /// Fixed at this value, e.g. 3/2 for the N_c,v factor alone.
    Fixed(f64),
}

/// Why a fit could not be made.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum ArrheniusError {
    /// Fewer points than parameters + 1 (no residual degree of freedom).
    #[error("{got} points in the window; the fit needs at least {needed}")]
    TooFewPoints {
        /// Points needed.
        needed: usize,
        /// Points given.
        got: usize,
    },
    /// A temperature or value that has no logarithm.
    #[error("point {index}: temperature {t_k} K and value {value} must both be finite and > 0")]
    NotPositive {
        /// Index of the point (0-based).
        index: usize,
        /// Temperature in kelvin.
        t_k: f64,
        /// The value.
        value: f64,
    },
    /// The temperatures do not spread enough to separate the parameters.
    #[error("the temperatures do not determine the parameters (all equal, or too few distinct)")]
    Degenerate,
}

/// Result of an Arrhenius fit.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct ArrheniusFit {
    /// Activation energy in eV.
    pub ea_ev: f64,
    /// Standard uncertainty of `ea_ev` in eV.
    pub ea_sigma_ev: f64,
    // Documented result fields read alike across structs (design/learn.rs, make_firmware_image.rs).
    /// Prefactor temperature power `m` (fitted or fixed).
    pub prefactor_power: f64,
    /// Standard uncertainty of `m`; `None` when it was fixed.
    pub prefactor_power_sigma: Option<f64>,
    /// Correlation coefficient between `Ea` and `m`; `None` when `m` was fixed.
    pub ea_power_correlation: Option<f64>,
    /// Intercept `a` (natural log of the prefactor at T = 1 K).
    pub ln_prefactor: f64,
    /// Root-mean-square residual of `ln y`.
    pub rms_residual_ln: f64,
    /// Number of points used.
    pub points: usize,
    /// Lowest temperature used, in kelvin.
    pub t_min_k: f64,
    /// Highest temperature used, in kelvin.
    pub t_max_k: f64,
}

/// One reading of `Ea` as a physical energy, with its uncertainty.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct Interpretation {
    /// Name of the quantity, e.g. `band_gap_0k_linear_ev`.
    pub name: &'static str,
    /// Conduction regime where this reading applies.
    pub regime: &'static str,
    /// Energy in eV.
    pub value_ev: f64,
    /// Standard uncertainty in eV.
    pub sigma_ev: f64,
}

impl ArrheniusFit {
    /// The three readings of `Ea`: linearly extrapolated 0 K band gap
    /// (intrinsic, `2 Ea`), dopant ionization energy with weak compensation
    /// (`2 Ea`) and with strong compensation (`Ea`). See the module docs.
    pub fn interpretations(&self) -> [Interpretation; 3] {
        let (e, s) = (self.ea_ev, self.ea_sigma_ev);
        [
            Interpretation {
                name: "band_gap_0k_linear_ev",
                regime: "intrinsic",
                value_ev: 2.0 * e,
                sigma_ev: 2.0 * s,
            },
            Interpretation {
                name: "ionization_energy_weak_compensation_ev",
                regime: "freeze-out",
                value_ev: 2.0 * e,
                sigma_ev: 2.0 * s,
            },
            Interpretation {
                name: "ionization_energy_strong_compensation_ev",
                regime: "freeze-out-compensated",
                value_ev: e,
                sigma_ev: s,
            },
        ]
    }
}

/// Fits `ln y = a + m ln T - Ea / (k T)` to `(t_k, y)` points.
pub fn fit(points: &[(f64, f64)], power: PrefactorPower) -> Result<ArrheniusFit, ArrheniusError> {
    let params = match power {
        PrefactorPower::Free => 3,
        PrefactorPower::Fixed(_) => 2,
    };
    if points.len() < params + 1 {
        return Err(ArrheniusError::TooFewPoints {
            needed: params + 1,
            got: points.len(),
        });
    }
    for (index, &(t_k, value)) in points.iter().enumerate() {
        let ok = |x: f64| x.is_finite() && x > 0.0;
        if !ok(t_k) || !ok(value) {
            return Err(ArrheniusError::NotPositive { index, t_k, value });
        }
    }
    let n = points.len();
    // Regressors: x1 = -1/(kT) (coefficient Ea), x2 = ln T (coefficient m).
    // Centred about their means so the intercept column is orthogonal to
    // them; this does not change the slopes or their covariance.
    let x1: Vec<f64> = points
        .iter()
        .map(|p| -1.0 / (BOLTZMANN_EV_K * p.0))
        .collect();
    let x2: Vec<f64> = points.iter().map(|p| p.0.ln()).collect();
    let fixed_m = match power {
        PrefactorPower::Free => 0.0,
        PrefactorPower::Fixed(m) => m,
    };
    let y: Vec<f64> = points
        .iter()
        .zip(&x2)
        .map(|(p, l)| p.1.ln() - fixed_m * l)
        .collect();
    let mean = |v: &[f64]| v.iter().sum::<f64>() / n as f64;
    let (m1, m2) = (mean(&x1), mean(&x2));
    let design = DMatrix::from_fn(n, params, |i, j| match j {
        0 => 1.0,
        1 => x1[i] - m1,
        _ => x2[i] - m2,
    });
    let rhs = DVector::from_column_slice(&y);
    let qr = design.clone().qr();
    let r = qr.r();
    // A (near-)zero diagonal of R means a column is a combination of others.
    let scale = r.diagonal().iter().fold(0.0f64, |a, d| a.max(d.abs()));
    if r.diagonal().iter().any(|d| d.abs() <= 1e-12 * scale) {
        return Err(ArrheniusError::Degenerate);
    }
    let qty = qr.q().transpose() * &rhs;
    let beta = r
        .solve_upper_triangular(&qty)
        .ok_or(ArrheniusError::Degenerate)?;
    let residuals = &rhs - &design * &beta;
    let rss = residuals.norm_squared();
    let dof = (n - params) as f64;
    let s2 = rss / dof;
    // (X^T X)^-1 = R^-1 R^-T.
    let r_inv = r
        .solve_upper_triangular(&DMatrix::identity(params, params))
        .ok_or(ArrheniusError::Degenerate)?;
    let cov = &r_inv * r_inv.transpose() * s2;
    let ea_ev = beta[1];
    let ea_sigma_ev = cov[(1, 1)].sqrt();
    let (prefactor_power, prefactor_power_sigma, ea_power_correlation) = match power {
        PrefactorPower::Free => {
            let sm = cov[(2, 2)].sqrt();
            let corr = if ea_sigma_ev > 0.0 && sm > 0.0 {
                Some(cov[(1, 2)] / (ea_sigma_ev * sm))
            } else {
                None
            };
            (beta[2], Some(sm), corr)
        }
        PrefactorPower::Fixed(m) => (m, None, None),
    };
    let slope_m = if params == 3 { beta[2] } else { 0.0 };
    let ln_prefactor = beta[0] - ea_ev * m1 - slope_m * m2;
    let (t_min_k, t_max_k) = points
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), p| {
            (lo.min(p.0), hi.max(p.0))
        });
    Ok(ArrheniusFit {
        ea_ev,
        ea_sigma_ev,
        prefactor_power,
        prefactor_power_sigma,
        ea_power_correlation,
        ln_prefactor,
        rms_residual_ln: (rss / n as f64).sqrt(),
        points: n,
        t_min_k,
        t_max_k,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use rand::SeedableRng;
    use rand_distr::{Distribution, Normal};

    /// `A T^m exp(-Ea/kT)` on a grid.
    fn law(a: f64, m: f64, ea_ev: f64, t_k: impl Iterator<Item = f64>) -> Vec<(f64, f64)> {
        t_k.map(|t| (t, a * t.powf(m) * (-ea_ev / (BOLTZMANN_EV_K * t)).exp()))
            .collect()
    }

    #[test]
    fn exact_data_recovers_the_parameters() {
        // (m used, fit mode, Ea); exact data: only rounding error remains, so
        // 1e-9 eV / 1e-8 in m are generous for f64 QR on ~40 points.
        let cases = [
            (1.5, PrefactorPower::Free, 0.56),
            (-0.9, PrefactorPower::Free, 0.045),
            (1.5, PrefactorPower::Fixed(1.5), 0.56),
            (0.0, PrefactorPower::Fixed(0.0), 0.0),
        ];
        for (m, mode, ea) in cases {
            let pts = law(3e19, m, ea, (0..40).map(|i| 400.0 + 10.0 * i as f64));
            let f = fit(&pts, mode).unwrap();
            assert!(
                (f.ea_ev - ea).abs() < 1e-9 && (f.prefactor_power - m).abs() < 1e-8,
                "m {m} {mode:?} Ea {ea}: got Ea {} m {}",
                f.ea_ev,
                f.prefactor_power
            );
            assert!(((f.ln_prefactor - 3e19f64.ln()) / 3e19f64.ln()).abs() < 1e-9);
            assert!(f.ea_sigma_ev < 1e-9, "exact data: sigma {}", f.ea_sigma_ev);
        }
    }

    #[test]
    fn wrong_fixed_power_biases_ea_by_m_k_t() {
        // Fixing m = 0 when the truth is 1.5 shifts Ea by about m k T_mid
        // (d ln T / d(-1/kT) = kT): 1.5 * 8.617e-5 * 600 = 0.078 eV. 10 %
        // tolerance covers the curvature of ln T in 1/T over 400..800 K.
        let pts = law(1e19, 1.5, 0.56, (0..41).map(|i| 400.0 + 10.0 * i as f64));
        let f = fit(&pts, PrefactorPower::Fixed(0.0)).unwrap();
        let bias = f.ea_ev - 0.56;
        let expected = 1.5 * BOLTZMANN_EV_K * 600.0;
        assert!(
            (bias - expected).abs() < 0.1 * expected,
            "bias {bias}, expected {expected}"
        );
    }

    #[test]
    fn noisy_data_uncertainty_covers_the_truth() {
        // Seeded noise of 2 % in y; over 200 seeds the true Ea must lie within
        // 2 sigma in about 95 % of fits (OLS with normal errors). Allow 88..99 %
        // (binomial 95 % +- 3.5 standard deviations of sqrt(200*.05*.95) = 3.1).
        let truth = 0.56;
        let mut inside = 0;
        for seed in 0..200u64 {
            let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(seed);
            let noise = Normal::new(0.0, 0.02).unwrap();
            let pts: Vec<(f64, f64)> =
                law(1e19, 1.5, truth, (0..25).map(|i| 450.0 + 10.0 * i as f64))
                    .into_iter()
                    .map(|(t, y)| (t, y * (1.0 + noise.sample(&mut rng))))
                    .collect();
            let f = fit(&pts, PrefactorPower::Fixed(1.5)).unwrap();
            if (f.ea_ev - truth).abs() <= 2.0 * f.ea_sigma_ev {
                inside += 1;
            }
        }
        assert!(
            (176..=198).contains(&inside),
            "{inside}/200 fits cover the truth within 2 sigma"
        );
    }

    #[test]
    fn free_power_over_a_narrow_window_is_strongly_correlated() {
        let pts = law(1e19, 1.5, 0.56, (0..11).map(|i| 500.0 + 2.0 * i as f64));
        let noisy: Vec<(f64, f64)> = pts
            .iter()
            .enumerate()
            .map(|(i, p)| (p.0, p.1 * (1.0 + 1e-3 * (i % 3) as f64)))
            .collect();
        let f = fit(&noisy, PrefactorPower::Free).unwrap();
        let corr = f.ea_power_correlation.unwrap();
        // ln T and 1/T over 500..520 K are linear to 1e-4; |r| must be ~1.
        assert!(corr.abs() > 0.999, "correlation {corr}");
    }

    #[test]
    fn bad_inputs_are_refused() {
        let ok = law(1.0, 0.0, 0.1, (0..5).map(|i| 300.0 + i as f64));
        assert_eq!(
            fit(&ok[..3], PrefactorPower::Free),
            Err(ArrheniusError::TooFewPoints { needed: 4, got: 3 })
        );
        let mut bad = ok.clone();
        bad[2].1 = 0.0;
        assert!(matches!(
            fit(&bad, PrefactorPower::Free),
            Err(ArrheniusError::NotPositive { index: 2, .. })
        ));
        let same = vec![(300.0, 1.0), (300.0, 2.0), (300.0, 3.0)];
        assert_eq!(
            fit(&same, PrefactorPower::Fixed(0.0)),
            Err(ArrheniusError::Degenerate)
        );
    }

    #[test]
    fn interpretations_double_or_keep_ea() {
        let f = fit(
            &law(1.0, 0.0, 0.3, (0..5).map(|i| 300.0 + 20.0 * i as f64)),
            PrefactorPower::Fixed(0.0),
        )
        .unwrap();
        let [gap, weak, strong] = f.interpretations();
        assert!((gap.value_ev - 0.6).abs() < 1e-9 && (weak.value_ev - 0.6).abs() < 1e-9);
        assert!((strong.value_ev - 0.3).abs() < 1e-9);
    }
}
