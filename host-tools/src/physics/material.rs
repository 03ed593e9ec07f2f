//! Materials and their band parameters: band gap versus temperature and the
//! effective densities of states Nc(T), Nv(T).
//!
//! # Silicon
//! - Gap: Pässler (2002), phys. stat. sol. (b) 230, 355, dispersion-related
//!   model with Eg(0) = 1.17 eV, alpha = 3.23e-4 eV/K, Theta = 446 K,
//!   Delta = 0.51 (his Si parameter set; the gap Couderc et al. 2014 use).
//!   Eg(300 K) = 1.12416 eV.
//! - Nc(T): Green (1990), J. Appl. Phys. 67, 2944: six valleys with
//!   m_l = 0.9163 m0 and m_t(T) = 0.1905 m0 Eg(0)/Eg(T), so that
//!   m_dc = 6^(2/3) (m_l m_t^2)^(1/3) = 1.09 m0 and Nc(300 K) = 2.86e19 cm^-3.
//! - Nv(T): chosen so that sqrt(Nc Nv) exp(-Eg/2kT) equals the intrinsic
//!   density of Couderc, Amara & Lemiti (2014), J. Appl. Phys. 115, 093705:
//!   n_i = 1.541e15 T^1.712 exp(-Eg/2kT) with the Pässler gap, i.e.
//!   `Nv = (1.541e15 T^1.712)^2 / Nc`. This pairing of Green's Nc with
//!   Couderc's product is ours; it gives n_i(300 K) = 9.67e9 cm^-3 (Altermatt
//!   et al. 2003, J. Appl. Phys. 93, 1598: 9.65e9 +/- 3 %) and Nv(300 K) =
//!   2.51e19 cm^-3. Couderc state validity 50-400 K; above and below we
//!   extrapolate the power law (documented model limitation).
//! - No band-gap narrowing: `ni_cm3` is the intrinsic density of the pure
//!   crystal. Heavily doped samples see an effective n_i larger than this.
//!
//! # Other materials (parabolic bands, constant density-of-states masses)
//! Varshni gaps `Eg(T) = Eg0 - alpha T^2 / (T + beta)`:
//! - GaAs, InSb, InAs: Vurgaftman, Meyer & Ram-Mohan (2001), J. Appl. Phys.
//!   89, 5815, Table III (Gamma gap).
//! - Ge: Levinshtein & Rumyantsev, in "Handbook Series on Semiconductor
//!   Parameters" Vol. 1 (1996), Ge chapter (indirect L gap).
//! - 4H-SiC: Levinshtein, Rumyantsev & Shur, "Properties of Advanced
//!   Semiconductor Materials" (2001), SiC chapter (recalled from memory).
//!
//! Nc, Nv follow `N = C T^1.5` with the handbook prefactors C (Levinshtein
//! handbooks 1996/2001, recalled from memory); GaAs's Nc carries the
//! handbook's non-parabolic factor (1 - 1.93e-4 T - 4.19e-8 T^2).
//! Approximations: InSb and InAs conduction bands are strongly
//! non-parabolic (Kane); a parabolic Nc underestimates n at high T/degeneracy
//! by tens of percent in InSb. The L and X satellite valleys of GaAs are
//! ignored. Ge's and 4H-SiC's gaps are indirect; only the lowest valley set
//! is counted (it is what the handbook Nc counts).

use super::constants::K_B_EV_PER_K;

/// A semiconductor the full model knows.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum Material {
    /// Silicon.
    Si,
    /// Germanium.
    Ge,
    /// Gallium arsenide.
    #[serde(rename = "gaas")]
    GaAs,
    /// Indium antimonide.
    #[serde(rename = "insb")]
    InSb,
    /// Indium arsenide.
    #[serde(rename = "inas")]
    InAs,
    /// 4H silicon carbide.
    #[serde(rename = "4h-sic")]
    Sic4H,
}

/// Temperature dependence of the band gap.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum GapModel {
    /// Varshni (1967): `Eg0 - alpha T^2 / (T + beta)`.
    Varshni {
        /// Gap at 0 K in eV.
        eg0_ev: f64,
        /// alpha in eV/K.
        alpha_ev_per_k: f64,
        /// beta in K.
        beta_k: f64,
    },
    /// Pässler (2002) dispersion-related form (his eq. 22).
    Passler {
        /// Gap at 0 K in eV.
        eg0_ev: f64,
        /// High-temperature slope alpha in eV/K.
        alpha_ev_per_k: f64,
        /// Effective phonon temperature Theta in K.
        theta_k: f64,
        /// Phonon dispersion coefficient Delta (dimensionless).
        delta: f64,
    },
}

impl GapModel {
    /// Band gap at 0 K in eV.
    pub fn eg0_ev(&self) -> f64 {
        match *self {
            GapModel::Varshni { eg0_ev, .. } | GapModel::Passler { eg0_ev, .. } => eg0_ev,
        }
    }

    /// Band gap in eV at `t_k`.
    pub fn eg_ev(&self, t_k: f64) -> f64 {
        match *self {
            GapModel::Varshni {
                eg0_ev,
                alpha_ev_per_k,
                beta_k,
            } => eg0_ev - alpha_ev_per_k * t_k * t_k / (t_k + beta_k),
            GapModel::Passler {
                eg0_ev,
                alpha_ev_per_k,
                theta_k,
                delta,
            } => {
                let d2 = delta * delta;
                let xi = 2.0 * t_k / theta_k;
                let xi2 = xi * xi;
                // (1 - 3 D^2)/(exp(Theta/T) - 1); exp_m1 keeps it exact at low T.
                let bose = (1.0 - 3.0 * d2) / (theta_k / t_k).exp_m1();
                let poly = 1.0
                    + std::f64::consts::PI.powi(2) / (3.0 * (1.0 + d2)) * xi2
                    + (3.0 * d2 - 1.0) / 4.0 * xi2 * xi
                    + 8.0 / 3.0 * xi2 * xi2
                    + xi2 * xi2 * xi2;
                eg0_ev - alpha_ev_per_k * theta_k * (bose + 1.5 * d2 * (poly.powf(1.0 / 6.0) - 1.0))
            }
        }
    }
}

/// How the effective densities of states depend on temperature.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum DosModel {
    /// `Nc = c_nc T^1.5 (1 + a1 T + a2 T^2)`, `Nv = c_nv T^1.5` (handbook form).
    PowerLaw {
        /// Prefactor of Nc in cm^-3 K^-1.5.
        c_nc: f64,
        /// Linear non-parabolicity coefficient of Nc in 1/K (0 if none).
        nc_a1_per_k: f64,
        /// Quadratic non-parabolicity coefficient of Nc in 1/K^2 (0 if none).
        nc_a2_per_k2: f64,
        /// Prefactor of Nv in cm^-3 K^-1.5.
        c_nv: f64,
    },
    /// Silicon: Green (1990) Nc and Couderc et al. (2014) n_i (see module docs).
    SiGreenCouderc,
}

/// Band parameters of one material.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BandParams {
    /// Band gap model.
    pub gap: GapModel,
    /// Density-of-states model.
    pub dos: DosModel,
    /// Static relative permittivity (used for the hydrogenic dopant scaling).
    pub eps_r: f64,
    /// Where the numbers come from.
    pub source: &'static str,
}

// Constants with their sources look alike across files (e.g. physics/mobility.rs).
/// 2 (2 pi m0 k T / h^2)^1.5 at 1 K in cm^-3 (CODATA 2018 constants):
/// the effective density of states for unit mass is this times T^1.5.
pub const NC_UNIT_MASS_PER_K15_CM3: f64 = 4.829_366_08e15;

/// 6^(2/3): six equivalent conduction-band valleys in Si.
const SIX_POW_2_3: f64 = 3.301_927_248_894_626;
/// Green (1990) silicon masses.
const SI_ML: f64 = 0.9163;
const SI_MT0: f64 = 0.1905;
/// Couderc et al. (2014) n_i prefactor (cm^-3 K^-1.712) and exponent.
const SI_NI_PREFACTOR: f64 = 1.541e15;
const SI_NI_EXPONENT: f64 = 1.712;

impl Material {
    /// All materials, in documentation order.
    pub const ALL: [Material; 6] = [
        Material::Si,
        Material::Ge,
        Material::GaAs,
        Material::InSb,
        Material::InAs,
        Material::Sic4H,
    ];

    /// Lower-case name used on the command line and in files (`si`, `gaas`, `4h-sic`).
    pub fn name(self) -> &'static str {
        match self {
            Material::Si => "si",
            Material::Ge => "ge",
            Material::GaAs => "gaas",
            Material::InSb => "insb",
            Material::InAs => "inas",
            Material::Sic4H => "4h-sic",
        }
    }

    /// Parses a command-line name (case-insensitive).
    pub fn from_name(name: &str) -> Option<Material> {
        let lower = name.to_ascii_lowercase();
        Material::ALL.into_iter().find(|m| m.name() == lower)
    }

    /// The band parameters of the material, with their sources.
    pub fn band_params(self) -> BandParams {
        match self {
            Material::Si => BandParams {
                gap: GapModel::Passler {
                    eg0_ev: 1.17,
                    alpha_ev_per_k: 3.23e-4,
                    theta_k: 446.0,
                    delta: 0.51,
                },
                dos: DosModel::SiGreenCouderc,
                // Common practice (11.7 at 300 K).
                eps_r: 11.7,
                source: "gap Pässler 2002; Nc Green 1990; n_i Couderc et al. 2014",
            },
            Material::Ge => BandParams {
                gap: GapModel::Varshni {
                    eg0_ev: 0.742,
                    alpha_ev_per_k: 4.8e-4,
                    beta_k: 235.0,
                },
                dos: DosModel::PowerLaw {
                    c_nc: 1.98e15,
                    nc_a1_per_k: 0.0,
                    nc_a2_per_k2: 0.0,
                    c_nv: 9.6e14,
                },
                eps_r: 16.2,
                source: "Levinshtein & Rumyantsev 1996 Handbook Vol. 1, Ge (recalled from memory)",
            },
            Material::GaAs => BandParams {
                gap: GapModel::Varshni {
                    eg0_ev: 1.519,
                    alpha_ev_per_k: 5.405e-4,
                    beta_k: 204.0,
                },
                dos: DosModel::PowerLaw {
                    c_nc: 8.63e13,
                    nc_a1_per_k: -1.93e-4,
                    nc_a2_per_k2: -4.19e-8,
                    c_nv: 1.83e15,
                },
                eps_r: 12.9,
                source: "gap Vurgaftman et al. 2001 Table III; Nc, Nv Levinshtein 1996 Handbook Vol. 1 (recalled from memory)",
            },
            Material::InSb => BandParams {
                gap: GapModel::Varshni {
                    eg0_ev: 0.235,
                    alpha_ev_per_k: 3.2e-4,
                    beta_k: 170.0,
                },
                dos: DosModel::PowerLaw {
                    c_nc: 8.0e12,
                    nc_a1_per_k: 0.0,
                    nc_a2_per_k2: 0.0,
                    c_nv: 1.4e15,
                },
                eps_r: 16.8,
                source: "gap Vurgaftman et al. 2001 Table III; Nc, Nv Levinshtein 1996 Handbook Vol. 2 (recalled from memory)",
            },
            Material::InAs => BandParams {
                gap: GapModel::Varshni {
                    eg0_ev: 0.417,
                    alpha_ev_per_k: 2.76e-4,
                    beta_k: 93.0,
                },
                dos: DosModel::PowerLaw {
                    c_nc: 1.68e13,
                    nc_a1_per_k: 0.0,
                    nc_a2_per_k2: 0.0,
                    c_nv: 1.27e15,
                },
                eps_r: 15.15,
                source: "gap Vurgaftman et al. 2001 Table III; Nc, Nv Levinshtein 1996 Handbook Vol. 2 (recalled from memory)",
            },
            Material::Sic4H => BandParams {
                gap: GapModel::Varshni {
                    eg0_ev: 3.265,
                    alpha_ev_per_k: 6.5e-4,
                    beta_k: 1300.0,
                },
                dos: DosModel::PowerLaw {
                    c_nc: 3.25e15,
                    nc_a1_per_k: 0.0,
                    nc_a2_per_k2: 0.0,
                    c_nv: 4.8e15,
                },
                eps_r: 9.66,
                source: "Levinshtein, Rumyantsev & Shur 2001, SiC chapter (recalled from memory)",
            },
        }
    }

    /// Band gap in eV at `t_k` (no doping-induced narrowing).
    pub fn eg_ev(self, t_k: f64) -> f64 {
        self.band_params().gap.eg_ev(t_k)
    }

    /// Effective densities of states (Nc, Nv) in cm^-3 at `t_k`.
    pub fn nc_nv_cm3(self, t_k: f64) -> (f64, f64) {
        let (_, nc, nv) = self.band_state(t_k);
        (nc, nv)
    }

    /// Band gap in eV and (Nc, Nv) in cm^-3 at `t_k`, computing the gap once.
    pub fn band_state(self, t_k: f64) -> (f64, f64, f64) {
        let p = self.band_params();
        let eg = p.gap.eg_ev(t_k);
        let t15 = t_k * t_k.sqrt();
        match p.dos {
            DosModel::PowerLaw {
                c_nc,
                nc_a1_per_k,
                nc_a2_per_k2,
                c_nv,
            } => (
                eg,
                c_nc * t15 * (1.0 + nc_a1_per_k * t_k + nc_a2_per_k2 * t_k * t_k),
                c_nv * t15,
            ),
            DosModel::SiGreenCouderc => {
                let mt = SI_MT0 * p.gap.eg0_ev() / eg;
                // 6^(2/3) (m_l m_t^2)^(1/3), Green (1990) eq. for m_dc.
                let m_dc = SIX_POW_2_3 * (SI_ML * mt * mt).cbrt();
                let nc = NC_UNIT_MASS_PER_K15_CM3 * m_dc * m_dc.sqrt() * t15;
                let sqrt_ncnv = SI_NI_PREFACTOR * t_k.powf(SI_NI_EXPONENT);
                (eg, nc, sqrt_ncnv * sqrt_ncnv / nc)
            }
        }
    }

    /// Intrinsic density sqrt(Nc Nv) exp(-Eg / 2kT) in cm^-3 at `t_k` (Boltzmann definition, no gap narrowing).
    ///
    /// ```
    /// use host_tools::physics::Material;
    /// let ni = Material::Si.ni_cm3(300.0);
    /// assert!((ni / 9.65e9 - 1.0).abs() < 0.01);
    /// ```
    pub fn ni_cm3(self, t_k: f64) -> f64 {
        self.ln_ni(t_k).exp()
    }

    /// Natural logarithm of [`Material::ni_cm3`] (finite where n_i itself underflows, e.g. 4H-SiC below ~60 K).
    pub fn ln_ni(self, t_k: f64) -> f64 {
        let (eg, nc, nv) = self.band_state(t_k);
        0.5 * (nc.ln() + nv.ln()) - eg / (2.0 * K_B_EV_PER_K * t_k)
    }

    /// Static relative permittivity (common-practice handbook values).
    pub fn eps_r(self) -> f64 {
        self.band_params().eps_r
    }
}

impl std::fmt::Display for Material {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.name())
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::physics::check::rel;
    use crate::physics::constants::{H_J_S, K_B_J_PER_K, M0_KG};

    #[test]
    fn rel_helper_can_fail() {
        assert!(rel(2.0, 1.0) > 0.5);
    }

    /// The unit-mass DOS constant follows from CODATA: 2 (2 pi m0 k / h^2)^1.5
    /// in m^-3 K^-1.5, / 1e6 to cm^-3. Rounded to 8 digits, hence 1e-7.
    #[test]
    fn unit_mass_constant_matches_codata() {
        let x = 2.0 * std::f64::consts::PI * M0_KG * K_B_J_PER_K / (H_J_S * H_J_S);
        let c = 2.0 * x.powf(1.5) / 1e6;
        assert!(rel(NC_UNIT_MASS_PER_K15_CM3, c) < 1e-7, "got {c}");
    }

    /// Published 300 K values. Sources and tolerances per row:
    /// - Si Eg 1.12416 eV: Pässler 2002 parameters evaluated (Couderc 2014
    ///   quote 1.1242 eV); 1e-4 eV covers rounding of the quoted value.
    /// - Si Nc 2.86e19: Green 1990 Table; 1 % (Green's gap differs by < 1 meV).
    /// - GaAs Eg 1.4225 eV from Vurgaftman 2001 parameters; Ge 0.661, InSb 0.174,
    ///   InAs 0.354 eV (Levinshtein handbooks quote 0.66, 0.17, 0.354); 4H-SiC
    ///   3.23 eV (Levinshtein 2001). Tolerance 0.01 eV = handbook rounding.
    #[test]
    fn gaps_and_dos_at_300k() {
        let rows: [(Material, f64, f64); 6] = [
            (Material::Si, 1.12416, 1e-4),
            (Material::Ge, 0.66, 0.01),
            (Material::GaAs, 1.4225, 0.001),
            (Material::InSb, 0.17, 0.01),
            (Material::InAs, 0.354, 0.01),
            (Material::Sic4H, 3.23, 0.015),
        ];
        for (m, expected, tol) in rows {
            let got = m.eg_ev(300.0);
            assert!(
                (got - expected).abs() < tol,
                "{m}: Eg got {got} expected {expected}"
            );
        }
        let (nc, _) = Material::Si.nc_nv_cm3(300.0);
        assert!(rel(nc, 2.86e19) < 0.01, "Si Nc got {nc:e}");
    }

    /// Intrinsic densities at 300 K vs the handbooks: Si 9.65e9 (Altermatt et
    /// al. 2003, +/- 3 % stated), Ge 2.0e13, GaAs 2.1e6, InSb 2e16, InAs 1e15
    /// (Levinshtein handbooks 1996). The handbook values are quoted to 1-2
    /// digits and their Nc, Nv, Eg are themselves rounded, hence 25 % for
    /// the III-Vs and Ge (n_i changes 20 % per 10 meV of gap).
    #[test]
    fn intrinsic_densities_at_300k() {
        // Table-driven like the gap test above: one row per material.
        let rows: [(Material, f64, f64); 5] = [
            (Material::Si, 9.65e9, 0.03),
            (Material::Ge, 2.0e13, 0.25),
            (Material::GaAs, 2.1e6, 0.25),
            (Material::InSb, 2.0e16, 0.25),
            (Material::InAs, 1.0e15, 0.25),
        ];
        for (m, expected, tol) in rows {
            let got = m.ni_cm3(300.0);
            assert!(
                rel(got, expected) < tol,
                "{m}: n_i got {got:e} expected {expected:e}"
            );
        }
    }

    /// Misiakos & Tsamakis (1993), J. Appl. Phys. 74, 3293: n_i = 5.29e19
    /// (T/300)^2.54 exp(-6726/T), fitted to capacitance data 78-340 K
    /// (constants recalled from memory of that paper). Our Couderc 2014 product differs
    /// from it by at most 1.0 % over 250-400 K (0.1 % at 300 K); 2 % allows
    /// for the 3-4 digit rounding of both fits' published constants.
    #[test]
    fn si_ni_vs_misiakos_tsamakis() {
        let mut t = 250.0;
        while t <= 400.0 {
            let mt = 5.29e19 * (t / 300.0f64).powf(2.54) * (-6726.0 / t).exp();
            let got = Material::Si.ni_cm3(t);
            assert!(rel(got, mt) < 0.02, "T {t}: got {got:e} expected {mt:e}");
            t += 10.0;
        }
    }

    /// Gap decreases with temperature for every material (physics: lattice
    /// dilation and electron-phonon coupling); at 0 K it equals Eg0.
    #[test]
    fn gaps_monotone() {
        for m in Material::ALL {
            let mut prev = m.eg_ev(1.0);
            for i in 2..=1000 {
                let e = m.eg_ev(i as f64);
                assert!(e < prev, "{m} at {i} K");
                prev = e;
            }
        }
    }

    #[test]
    fn six_pow_two_thirds() {
        assert!((SIX_POW_2_3 - 6f64.powf(2.0 / 3.0)).abs() < 1e-15);
    }

    #[test]
    fn names_round_trip() {
        for m in Material::ALL {
            assert_eq!(Material::from_name(&m.name().to_uppercase()), Some(m));
        }
        assert_eq!(Material::from_name("diamond"), None);
    }
}
