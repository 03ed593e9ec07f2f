//! Conductivity, resistivity and the two-carrier Hall coefficient with a Hall
//! scattering factor per carrier.
//!
//! # Conductivity
//! `sigma = q (n mu_n + p mu_p)`, `rho = 1 / sigma` (per-free-carrier drift
//! mobilities from [`super::mobility`], densities from [`super::carriers`]).
//!
//! # Hall coefficient (low field, two carriers)
//! `R_H = (r_p p mu_p^2 - r_n n mu_n^2) / (q (n mu_n + p mu_p)^2)` in cm^3/C
//! (e.g. Putley, The Hall Effect and Semiconductor Physics, 1960, ch. 3; Look,
//! Electrical Characterization of GaAs Materials and Devices, 1989, ch. 1),
//! and the Hall mobility `mu_H = |R_H| sigma`.
//!
//! # Hall factor `r = r_A r_S`
//! - `r_S = <tau^2> / <tau>^2` (Look 1989, ch. 1; Seeger, Semiconductor
//!   Physics, ch. 4): energy averages weighted by `x^(3/2) (-df/dx)` with
//!   `x = E/kT` (Maxwellian `x^(3/2) e^-x` when the carrier is non-degenerate).
//!   The relaxation time combines acoustic-phonon `tau_L = a x^(-1/2)` and
//!   ionized-impurity `tau_I = b x^(3/2)` scattering by Matthiessen's rule,
//!   `1/tau = 1/tau_L + 1/tau_I`. The weights `a, b` come from our mobility
//!   model: `mu_L` is the model's lattice-limited mobility and `mu_I` follows
//!   from `1/mu = 1/mu_L + 1/mu_I`. Maxwellian averages give
//!   `mu_L ∝ a Γ(2)/Γ(5/2)` and `mu_I ∝ b Γ(4)/Γ(5/2)`, so
//!   `tau ∝ x^(3/2) / (x^2 + c)` with `c = a/b = 6 mu_L / mu_I`.
//!   Limits: pure lattice `3π/8 = 1.178`, pure impurity `315π/512 = 1.933`,
//!   degenerate carriers `1`.
//! - `r_A`: mass-anisotropy factor of many-valley conduction bands, Herring
//!   (1955, Bell Syst. Tech. J. 34, 237): `r_A = 3K(K+2)/(2K+1)^2` with
//!   `K = m_l/m_t`. Si electrons `K = 0.9163/0.1905` (Hensel, Hasegawa &
//!   Nakayama 1965, Phys. Rev. 138, A225), Ge electrons `K = 1.588/0.08152`
//!   (Levinger & Frankl 1961, J. Phys. Chem. Solids 20, 281; recalled from
//!   memory). Spherical Γ-valley electrons (GaAs, InSb, InAs) and all holes
//!   use `r_A = 1`.
//!
//! This theory is the fallback for materials without published Hall-factor
//! data; Si uses published temperature curves ([`super::hall_factor`]):
//! the theory gives 0.91 (electrons) and 1.06 (holes) for lightly doped Si
//! at 300 K against published 1.15 and 0.7..0.8.
//!
//! # Quadrature
//! Substituting `x = u^2` removes the half-integer powers, leaving smooth
//! integrands in `u` (`2 u^4 e^{-u^2} ...`); we integrate them with composite
//! Gauss-Legendre (16 quadratically graded panels of 4 nodes on `0..u_max`). Generalized
//! Gauss-Laguerre in `x` converges only algebraically here because of the
//! `x^(1/2)` factors; in `u` the error is about 1e-7 (see tests).

use std::sync::OnceLock;

use super::carriers::CarrierState;
use super::constants::Q_C;
use super::hall_factor::{HallFactorSource, hall_factor};
use super::material::Material;
use super::mobility::Mobility;

/// Transport coefficients at one temperature.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct Transport {
    /// Conductivity in S/cm.
    pub sigma_s_cm: f64,
    /// Resistivity in ohm cm.
    pub rho_ohm_cm: f64,
    /// Hall coefficient in cm^3/C (negative for electron conduction).
    pub hall_coefficient_cm3_c: f64,
    /// Hall factor of electrons (dimensionless; published data or `r_A r_S`).
    pub hall_factor_n: f64,
    /// Hall factor of holes (dimensionless; published data or `r_A r_S`).
    pub hall_factor_p: f64,
    /// Where the electron Hall factor comes from.
    pub hall_factor_n_source: HallFactorSource,
    /// Where the hole Hall factor comes from.
    pub hall_factor_p_source: HallFactorSource,
    /// Hall mobility `|R_H| sigma` in cm^2/(V s).
    pub hall_mobility_cm2_vs: f64,
}

/// Which band a carrier lives in.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Carrier {
    /// Conduction-band electrons.
    Electron,
    /// Valence-band holes.
    Hole,
}

/// Conductivity `q (n mu_n + p mu_p)` in S/cm.
pub fn conductivity_s_cm(n_cm3: f64, p_cm3: f64, mu_n_cm2_vs: f64, mu_p_cm2_vs: f64) -> f64 {
    Q_C * (n_cm3 * mu_n_cm2_vs + p_cm3 * mu_p_cm2_vs)
}

/// Two-carrier low-field Hall coefficient in cm^3/C with Hall factors `r_n`, `r_p`.
pub fn hall_coefficient_cm3_c(
    n_cm3: f64,
    p_cm3: f64,
    mu_n_cm2_vs: f64,
    mu_p_cm2_vs: f64,
    r_n: f64,
    r_p: f64,
) -> f64 {
    let s = n_cm3 * mu_n_cm2_vs + p_cm3 * mu_p_cm2_vs;
    (r_p * p_cm3 * mu_p_cm2_vs * mu_p_cm2_vs - r_n * n_cm3 * mu_n_cm2_vs * mu_n_cm2_vs)
        / (Q_C * s * s)
}

/// Herring's mass-anisotropy factor `3K(K+2)/(2K+1)^2` for mass ratio `K = m_l/m_t`.
pub fn herring_anisotropy_factor(k_mass_ratio: f64) -> f64 {
    let k = k_mass_ratio;
    3.0 * k * (k + 2.0) / ((2.0 * k + 1.0) * (2.0 * k + 1.0))
}

/// Mass-anisotropy factor `r_A` of a carrier in a material (see module docs).
pub fn anisotropy_factor(material: Material, carrier: Carrier) -> f64 {
    match (material, carrier) {
        // Hensel, Hasegawa & Nakayama 1965: m_l = 0.9163, m_t = 0.1905.
        (Material::Si, Carrier::Electron) => herring_anisotropy_factor(0.9163 / 0.1905),
        // Levinger & Frankl 1961: m_l = 1.588, m_t = 0.08152 (recalled from memory).
        (Material::Ge, Carrier::Electron) => herring_anisotropy_factor(1.588 / 0.08152),
        _ => 1.0,
    }
}

/// Panels and nodes of the composite Gauss-Legendre rule in `u = sqrt(E/kT)`.
const PANELS: usize = 16;
/// Gauss-Legendre nodes per panel.
const NODES: usize = 4;
/// Upper limit of `u` for a non-degenerate carrier: `u^10 e^{-u^2}` at 7 is 1e-13 of its peak.
const U_MAX_MAXWELL: f64 = 7.0;
/// Above this reduced Fermi level the Maxwellian weight is replaced by the
/// Fermi-Dirac one; at -4 the two differ by e^-4 ~ 2 % in the tail occupancy,
/// which moves r_S by well under 1 % (common practice for the switch-over).
const ETA_DEGENERATE: f64 = -4.0;

/// Unit Gauss-Legendre rule on [0, 1] (nodes, weights), 4 points.
fn unit_rule() -> ([f64; NODES], [f64; NODES]) {
    // Abramowitz & Stegun 25.4.30, n = 4, mapped from [-1, 1] to [0, 1].
    let x = [0.339_981_043_584_856, 0.861_136_311_594_053];
    let w = [0.652_145_154_862_546, 0.347_854_845_137_454];
    let nodes = [
        0.5 * (1.0 - x[1]),
        0.5 * (1.0 - x[0]),
        0.5 * (1.0 + x[0]),
        0.5 * (1.0 + x[1]),
    ];
    let weights = [0.5 * w[1], 0.5 * w[0], 0.5 * w[0], 0.5 * w[1]];
    (nodes, weights)
}

/// Node `s` (in 0..1) of panel `panel` on `0..u_max` with quadratic grading
/// (panel edges at `u_max (k/PANELS)^2`), returned with the panel width.
/// The grading resolves the knee of `tau` at `u ~ c^(1/4)` when the impurity
/// share is small (uniform panels leave 1e-5 errors there, graded ones 1e-7).
fn graded_node(u_max: f64, panel: usize, s: f64) -> (f64, f64) {
    let p = PANELS as f64;
    let a = u_max * (panel as f64 / p).powi(2);
    let b = u_max * ((panel + 1) as f64 / p).powi(2);
    (a + (b - a) * s, b - a)
}

/// Precomputed Maxwellian nodes: (u^3, u^4, weight 2 u^4 e^{-u^2} du).
struct MaxwellRule {
    u3: [f64; PANELS * NODES],
    u4: [f64; PANELS * NODES],
    w: [f64; PANELS * NODES],
    /// `2 u^4 du` without the occupancy factor (for Fermi-Dirac weights).
    base: [f64; PANELS * NODES],
    /// `e^{u^2}`, so a Fermi-Dirac weight costs one exp per call, not per node.
    exp_u2: [f64; PANELS * NODES],
    norm: f64,
}

fn maxwell_rule() -> &'static MaxwellRule {
    static RULE: OnceLock<MaxwellRule> = OnceLock::new();
    RULE.get_or_init(|| {
        let (nodes, weights) = unit_rule();
        let mut rule = MaxwellRule {
            u3: [0.0; PANELS * NODES],
            u4: [0.0; PANELS * NODES],
            w: [0.0; PANELS * NODES],
            base: [0.0; PANELS * NODES],
            exp_u2: [0.0; PANELS * NODES],
            norm: 0.0,
        };
        for panel in 0..PANELS {
            for k in 0..NODES {
                let i = panel * NODES + k;
                let (u, h) = graded_node(U_MAX_MAXWELL, panel, nodes[k]);
                let u2 = u * u;
                rule.u3[i] = u2 * u;
                rule.u4[i] = u2 * u2;
                rule.base[i] = 2.0 * u2 * u2 * weights[k] * h;
                rule.exp_u2[i] = u2.exp();
                rule.w[i] = rule.base[i] / rule.exp_u2[i];
                rule.norm += rule.w[i];
            }
        }
        rule
    })
}

/// Scattering part `r_S = <tau^2>/<tau>^2` of the Hall factor for a carrier
/// with total mobility `mu` and lattice-limited mobility `mu_lattice`, at
/// reduced Fermi level `eta` (band edge to Fermi level over kT, positive
/// inside the band).
pub fn hall_scattering_factor(mu_cm2_vs: f64, mu_lattice_cm2_vs: f64, eta: f64) -> f64 {
    // c = 6 mu_L / mu_I with 1/mu_I = 1/mu - 1/mu_L (module docs).
    let c = if mu_cm2_vs > 0.0 && mu_lattice_cm2_vs > mu_cm2_vs {
        6.0 * (mu_lattice_cm2_vs / mu_cm2_vs - 1.0)
    } else {
        0.0
    };
    let (mut k0, mut k1, mut k2) = (0.0, 0.0, 0.0);
    if eta <= ETA_DEGENERATE {
        let rule = maxwell_rule();
        for i in 0..PANELS * NODES {
            let t = rule.u3[i] / (rule.u4[i] + c);
            let wt = rule.w[i] * t;
            k1 += wt;
            k2 += wt * t;
        }
        k0 = rule.norm;
    } else if eta <= 0.0 {
        // Fermi-Dirac weight x^(3/2) (-df/dx) = x^(3/2) f (1 - f), x = u^2,
        // on the Maxwellian nodes (the tail beyond u = 7 is still < 1e-13).
        let rule = maxwell_rule();
        let shift = (-eta).exp();
        for i in 0..PANELS * NODES {
            let e = rule.exp_u2[i] * shift;
            let d = 1.0 + e;
            let w = rule.base[i] * e / (d * d);
            let t = rule.u3[i] / (rule.u4[i] + c);
            k0 += w;
            k1 += w * t;
            k2 += w * t * t;
        }
    } else {
        // Degenerate: extend the range past the Fermi level.
        let (nodes, weights) = unit_rule();
        let u_max = (49.0 + eta.max(0.0)).sqrt();
        for panel in 0..PANELS {
            for k in 0..NODES {
                let (u, h) = graded_node(u_max, panel, nodes[k]);
                let u2 = u * u;
                let u4 = u2 * u2;
                let e = (u2 - eta).exp();
                let ff = e / ((1.0 + e) * (1.0 + e));
                let w = 2.0 * u4 * ff * weights[k] * h;
                let t = u2 * u / (u4 + c);
                k0 += w;
                k1 += w * t;
                k2 += w * t * t;
            }
        }
    }
    k2 * k0 / (k1 * k1)
}

/// Reduced Fermi level of a carrier, `(E_F - E_c)/kT` for electrons and
/// `(E_v - E_F)/kT` for holes, from the solved state.
pub fn reduced_fermi_level(state: &CarrierState, carrier: Carrier) -> f64 {
    match carrier {
        Carrier::Electron => state.eta_n,
        Carrier::Hole => state.eta_p,
    }
}

/// Conductivity, resistivity, Hall coefficient, Hall factors and Hall mobility
/// of `material` at the solved `state` with mobilities `mobility` (the
/// per-free-carrier ones pair with the band densities; the published ones
/// set the theory's impurity share).
pub fn transport(material: Material, state: &CarrierState, mobility: &Mobility) -> Transport {
    let (n, p) = (state.n_cm3, state.p_cm3);
    let (mu_n, mu_p) = (
        mobility.mu_n_per_free_carrier_cm2_vs,
        mobility.mu_p_per_free_carrier_cm2_vs,
    );
    let sigma = conductivity_s_cm(n, p, mu_n, mu_p);
    let (r_n, source_n) = hall_factor(
        material,
        Carrier::Electron,
        state.t_k,
        mobility.mu_n_cm2_vs,
        mobility.mu_n_lattice_cm2_vs,
        reduced_fermi_level(state, Carrier::Electron),
    );
    let (r_p, source_p) = hall_factor(
        material,
        Carrier::Hole,
        state.t_k,
        mobility.mu_p_cm2_vs,
        mobility.mu_p_lattice_cm2_vs,
        reduced_fermi_level(state, Carrier::Hole),
    );
    let r_h = hall_coefficient_cm3_c(n, p, mu_n, mu_p, r_n, r_p);
    Transport {
        sigma_s_cm: sigma,
        rho_ohm_cm: 1.0 / sigma,
        hall_coefficient_cm3_c: r_h,
        hall_factor_n: r_n,
        hall_factor_p: r_p,
        hall_factor_n_source: source_n,
        hall_factor_p_source: source_p,
        hall_mobility_cm2_vs: r_h.abs() * sigma,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::physics::check::check_rel;
    use std::f64::consts::PI;

    /// Analytic limits of `<tau^2>/<tau>^2` over a Maxwellian (Look 1989,
    /// ch. 1, table of Hall factors; Seeger, Semiconductor Physics, ch. 4):
    /// acoustic phonons 3π/8, ionized impurities 315π/512. The quadrature
    /// must reach them to 1e-6 (64 graded nodes give ~1e-7); the impurity
    /// limit is taken at c = 1e12 where the lattice admixture is 1e-12.
    #[test]
    fn scattering_factor_limits() {
        let lattice_only = hall_scattering_factor(1000.0, 1000.0, -20.0);
        check_rel("acoustic", lattice_only, 3.0 * PI / 8.0, 1e-6).unwrap();
        let impurity_only = hall_scattering_factor(1.0, 1.0 + 1e12 / 6.0, -20.0);
        check_rel("impurity", impurity_only, 315.0 * PI / 512.0, 1e-6).unwrap();
    }

    /// Mixed scattering: r_S dips below both limits (the impurity part cuts
    /// off the long low-energy lattice relaxation times) with a minimum near
    /// 1.03 at c ~ 1, then rises to the impurity limit. Reference values from
    /// an independent midpoint-rule integration of the same averages
    /// (Python, 2e5 points on u in [0, 9], error < 1e-8); tolerance 1e-6
    /// (our 64-node rule reaches ~1e-7).
    #[test]
    fn scattering_factor_mixed_table() {
        let table = [
            (1e-3, 1.164_096_918),
            (0.03, 1.102_413_506),
            (0.3, 1.037_261_894),
            (1.0, 1.032_251_078),
            (10.0, 1.197_749_422),
            (100.0, 1.614_506_250),
        ];
        for (c, expected) in table {
            // c = 6 (mu_L/mu - 1)  =>  mu_L = 1 + c/6 for mu = 1.
            let r = hall_scattering_factor(1.0, 1.0 + c / 6.0, -20.0);
            check_rel(&format!("c = {c}"), r, expected, 1e-6).unwrap();
        }
    }

    /// Degenerate carriers: only the Fermi surface conducts, so r_S -> 1
    /// (Look 1989, ch. 1). At eta = 40 the thermal smearing leaves a
    /// correction of order (π^2/6)/eta^2 ~ 1e-3 times the curvature; 1e-2.
    #[test]
    fn scattering_factor_degenerate_limit() {
        for ratio in [0.0, 1.0, 100.0] {
            let r = hall_scattering_factor(1.0, 1.0 + ratio, 40.0);
            check_rel(&format!("eta=40 ratio {ratio}"), r, 1.0, 1e-2).unwrap();
        }
    }

    /// The Fermi-Dirac branch joins the Maxwellian branch at the switch-over
    /// within 1 % (the stated switch-over error).
    #[test]
    fn scattering_factor_continuous_at_switch() {
        for ratio in [0.0, 0.3, 3.0] {
            let a = hall_scattering_factor(1.0, 1.0 + ratio, ETA_DEGENERATE);
            let b = hall_scattering_factor(1.0, 1.0 + ratio, ETA_DEGENERATE + 1e-9);
            check_rel(&format!("ratio {ratio}"), b, a, 1e-2).unwrap();
        }
    }

    /// The two Fermi-Dirac paths (fixed nodes for eta <= 0, widened range
    /// above) are the same integral with different nodes: they agree at
    /// eta = 0 to the quadrature error (~1e-7); 1e-6.
    #[test]
    fn fermi_dirac_paths_agree_at_zero() {
        for ratio in [0.0, 0.3, 3.0, 300.0] {
            let a = hall_scattering_factor(1.0, 1.0 + ratio, 0.0);
            let b = hall_scattering_factor(1.0, 1.0 + ratio, 1e-12);
            check_rel(&format!("ratio {ratio}"), b, a, 1e-6).unwrap();
        }
    }

    /// Herring 1955 factor for Si electrons, K = 4.81: 3K(K+2)/(2K+1)^2 =
    /// 0.87129 (hand arithmetic, rounded to 5 digits, so 2e-5).
    #[test]
    fn herring_factor_si() {
        let r = anisotropy_factor(Material::Si, Carrier::Electron);
        check_rel("r_A Si", r, 0.87129, 2e-5).unwrap();
        assert_eq!(anisotropy_factor(Material::GaAs, Carrier::Electron), 1.0);
        check_rel("K=1 spherical", herring_anisotropy_factor(1.0), 1.0, 1e-15).unwrap();
    }

    /// One-carrier limits of the two-carrier formula: R_H = -r/(q n) for
    /// electrons alone and +r/(q p) for holes alone (definition).
    #[test]
    fn hall_one_carrier_limits() {
        let r = hall_coefficient_cm3_c(1e16, 0.0, 1000.0, 400.0, 1.1, 1.2);
        check_rel("n only", r, -1.1 / (Q_C * 1e16), 1e-12).unwrap();
        let r = hall_coefficient_cm3_c(0.0, 1e15, 1000.0, 400.0, 1.1, 1.2);
        check_rel("p only", r, 1.2 / (Q_C * 1e15), 1e-12).unwrap();
    }

    /// p-type with rising intrinsic electrons: R_H changes sign where
    /// r_p p mu_p^2 = r_n n mu_n^2 (two-carrier formula), i.e. at
    /// n/p = (mu_p/mu_n)^2 r_p/r_n, well before n = p because mu_n > mu_p.
    #[test]
    fn hall_sign_change_p_type() {
        let (mu_n, mu_p, r_n, r_p) = (1400.0, 470.0, 1.0, 1.0);
        let p = 1e15;
        let n_zero = p * (mu_p / mu_n) * (mu_p / mu_n) * r_p / r_n;
        assert!(hall_coefficient_cm3_c(0.9 * n_zero, p, mu_n, mu_p, r_n, r_p) > 0.0);
        assert!(hall_coefficient_cm3_c(1.1 * n_zero, p, mu_n, mu_p, r_n, r_p) < 0.0);
        assert!(n_zero < p);
    }
}
