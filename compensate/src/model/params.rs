//! Parameters of the runtime model: a plain struct the host fills.

/// Caughey–Thomas mobility of one carrier with power-law temperature
/// dependence of every parameter (the form of Arora, Hauser & Roulston 1982,
/// IEEE Trans. Electron Devices 29(2) 292, Table I):
///
/// `mu = mu_min (T/300)^min_exp + mu_delta (T/300)^delta_exp /
///       (1 + (N / (n_ref (T/300)^n_ref_exp))^(alpha (T/300)^alpha_exp))`
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct CaugheyThomas {
    /// Minimum (impurity-limited) mobility at 300 K, cm^2/(V s).
    pub mu_min_cm2_vs: f32,
    /// Temperature exponent of `mu_min`.
    pub min_exp: f32,
    /// Lattice minus minimum mobility at 300 K, cm^2/(V s).
    pub mu_delta_cm2_vs: f32,
    /// Temperature exponent of `mu_delta` (lattice scattering, about -2.3).
    pub delta_exp: f32,
    /// Reference density at 300 K, cm^-3.
    pub n_ref_cm3: f32,
    /// Temperature exponent of `n_ref`.
    pub n_ref_exp: f32,
    /// Roll-off exponent at 300 K.
    pub alpha: f32,
    /// Temperature exponent of `alpha`.
    pub alpha_exp: f32,
}

/// Everything the runtime model needs about one doped layer.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct ModelParams {
    /// Varshni band gap at 0 K, eV.
    pub eg0_ev: f32,
    /// Varshni alpha, eV/K.
    pub varshni_alpha_ev_per_k: f32,
    /// Varshni beta, K.
    pub varshni_beta_k: f32,
    /// Conduction-band effective density of states at 300 K, cm^-3.
    pub nc_300_cm3: f32,
    /// Valence-band effective density of states at 300 K, cm^-3.
    pub nv_300_cm3: f32,
    /// Temperature exponent of `Nc` (1.5 for a temperature-independent mass).
    pub nc_exp: f32,
    /// Temperature exponent of `Nv`.
    pub nv_exp: f32,
    /// Effective donor density, cm^-3.
    pub donor_cm3: f32,
    /// Effective acceptor density, cm^-3.
    pub acceptor_cm3: f32,
    /// Donor ionization energy below the conduction band, eV.
    pub donor_level_ev: f32,
    /// Acceptor ionization energy above the valence band, eV.
    pub acceptor_level_ev: f32,
    /// Donor degeneracy factor (2 for shallow donors).
    pub donor_degeneracy: f32,
    /// Acceptor degeneracy factor (4 for shallow acceptors in Si).
    pub acceptor_degeneracy: f32,
    /// Electron mobility.
    pub electron: CaugheyThomas,
    /// Hole mobility.
    pub hole: CaugheyThomas,
    /// Hall scattering factor of electrons (constant).
    pub hall_factor_n: f32,
    /// Hall scattering factor of holes (constant).
    pub hall_factor_p: f32,
    /// Exponent `theta` of the piezoresistance factor `P ∝ T^-theta`
    /// (1 in the nondegenerate limit of Kanda 1982; smaller when degenerate).
    pub piezo_exp: f32,
}

impl ModelParams {
    /// Silicon with the given donor and acceptor densities, from published
    /// parameters (values recalled from memory, sources named):
    /// - Varshni gap 1.170 eV, 4.73e-4 eV/K, 636 K (Thurmond 1975, J.
    ///   Electrochem. Soc. 122, 1133);
    /// - Nc = 2.86e19, Nv = 3.10e19 cm^-3 at 300 K (Green 1990, J. Appl. Phys.
    ///   67, 2944), exponents 1.5 (common practice);
    /// - P donor 45 meV, B acceptor 45 meV (Sze & Ng 2007, Physics of
    ///   Semiconductor Devices, 3rd ed., Fig. 1.13 data);
    /// - Arora, Hauser & Roulston 1982 mobility (IEEE TED 29, 292, Table I):
    ///   electrons 88 T^-0.57 + 7.4e8 T^-2.33 / (1 + (N / 1.26e17 T^2.4)^(0.88 T^-0.146)),
    ///   holes 54.3 T^-0.57 + 1.36e8 T^-2.23 / (1 + (N / 2.35e17 T^2.4)^(0.88 T^-0.146)),
    ///   T in units of 300 K where normalized (7.4e8 * 300^-2.33 = 1252,
    ///   1.36e8 * 300^-2.23 = 407 cm^2/(V s));
    /// - Hall factors 1.1 (electrons) and 0.7 (holes) (common practice,
    ///   typical room-temperature values);
    /// - piezoresistance exponent 1 (Kanda 1982 nondegenerate limit).
    #[must_use]
    pub const fn silicon(donor_cm3: f32, acceptor_cm3: f32) -> Self {
        Self {
            eg0_ev: 1.170,
            varshni_alpha_ev_per_k: 4.73e-4,
            varshni_beta_k: 636.0,
            nc_300_cm3: 2.86e19,
            nv_300_cm3: 3.10e19,
            nc_exp: 1.5,
            nv_exp: 1.5,
            donor_cm3,
            acceptor_cm3,
            donor_level_ev: 0.045,
            acceptor_level_ev: 0.045,
            donor_degeneracy: 2.0,
            acceptor_degeneracy: 4.0,
            electron: CaugheyThomas {
                mu_min_cm2_vs: 88.0,
                min_exp: -0.57,
                mu_delta_cm2_vs: 1252.0,
                delta_exp: -2.33,
                n_ref_cm3: 1.26e17,
                n_ref_exp: 2.4,
                alpha: 0.88,
                alpha_exp: -0.146,
            },
            hole: CaugheyThomas {
                mu_min_cm2_vs: 54.3,
                min_exp: -0.57,
                mu_delta_cm2_vs: 407.0,
                delta_exp: -2.23,
                n_ref_cm3: 2.35e17,
                n_ref_exp: 2.4,
                alpha: 0.88,
                alpha_exp: -0.146,
            },
            hall_factor_n: 1.1,
            hall_factor_p: 0.7,
            piezo_exp: 1.0,
        }
    }
}
