//! Dopant species, their ionization energies, degeneracy factors and the
//! doping dependence of the ionization energy.
//!
//! # Level model (Altermatt et al. 2006)
//! Altermatt et al. (2006), "A simulation
//! model for the density of states and for incomplete ionization in
//! crystalline silicon" I and II, J. Appl. Phys. 100, 113714 and 113715.
//! Their simplified parametrisation (paper II, Table 3). The form is paper
//! II's; the table's numbers below are recalled from memory of that Table 3
//! (the paper was not re-read for this module). They reproduce the ionized
//! fractions of paper II Fig. 5 within the tolerance stated at the check in
//! `carriers.rs`:
//!
//! ```text
//! E_dop(N) = E_dop0 / (1 + (N / N_ref)^c)
//! b(N)     = 1 / (1 + (N / N_b)^d)
//! N_dop^0  = b(N) N f_occupied(E_dop)      (neutral dopants)
//! ```
//!
//! Only the fraction `b` of dopant states is localised and can hold its
//! carrier; the rest belongs to the band tail and is always ionized. As the
//! density approaches the metal-insulator transition (Si:P 3.7e18, recalled
//! from memory) `b -> 0`
//! and ionization becomes complete again, which is why Si:P ionization has a
//! minimum near 1e18-2e18 at 300 K: ~0.76 in Altermatt 2006 II Fig. 5
//! (recalled from memory), ~0.78 in this model with Fermi-Dirac bands.
//!
//! | Si | E_dop0 (meV) | N_ref | c | N_b | d |
//! |----|-----|------|-----|------|-----|
//! | P  | 45.5  | 2.2e18 | 2   | 6e18   | 2.3 |
//! | As | 53.7  | 3.0e18 | 1.5 | 9e18   | 1.8 |
//! | B  | 44.39 | 1.3e18 | 1.4 | 4.5e18 | 2.4 |
//!
//! **Our extension** (not in the paper): Si:Sb, Si:Al, Si:Ga, Si:In use the
//! same form with their own E_dop0 (Sze & Ng 2007, Ch. 1 Fig. 12) and the
//! (N_ref, c, N_b, d) of P (donors) or B (acceptors). For Ge, GaAs, InSb,
//! InAs and 4H-SiC we scale Si:P's N_ref and N_b by the Mott density of the
//! species' own hydrogenic orbit, `(a_B,Si:P / a_B)^3` with
//! `a_B = e^2 / (8 pi eps E_dop0)` (effective-mass theory, common practice),
//! and keep c = 2, d = 2.3. For GaAs:Si this puts the transition near 2e16
//! cm^-3 (measured Mott density of n-GaAs ~ 1.5e16, common practice).
//!
//! Degeneracy factors: g_D = 2, g_A = 4 for every species (common practice;
//! Altermatt uses the same).
//!
//! # Pairing with mobility (read before combining with a mobility model)
//! Masetti, Arora and Klaassen mobility fits are parametrised by the *total*
//! chemical dopant density and were derived as `mu = 1/(q N rho)`, i.e.
//! assuming complete ionization at 300 K. This module reports a neutral
//! fraction at 300 K (up to ~22 % for Si:P and ~27 % for Si:B near 2e18
//! cm^-3), so combining the published mobility with our `n`, `p` would count
//! the missing carriers twice. Rules for any consumer:
//! - scattering centres are `donors_total_cm3 + acceptors_total_cm3`, never
//!   the ionized densities;
//! - undo the fit's full-ionization convention once, at the fit temperature
//!   (the mobility module multiplies by `N / N_ion,300K(N)` computed from
//!   this model), so the neutral fraction enters the resistivity only
//!   through `n`/`p`;
//! - add no neutral-impurity scattering term for the neutral fraction.
//!
//! Near the metal-insulator transition (1e18-1e19 cm^-3) the localised
//! fraction b(N) drops and ionization is near-complete again (> 98 % at
//! 1e20), as Altermatt's measurements require; a model without b(N) would
//! freeze out most carriers there and must not be paired with these fits.

use super::material::Material;

/// Whether a species gives electrons (donor) or holes (acceptor).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum DopantKind {
    /// Donor (group V in Si).
    Donor,
    /// Acceptor (group III in Si).
    Acceptor,
}

impl DopantKind {
    /// "donor" or "acceptor".
    pub fn name(self) -> &'static str {
        match self {
            DopantKind::Donor => "donor",
            DopantKind::Acceptor => "acceptor",
        }
    }

    /// Ground-state degeneracy factor (g_D = 2, g_A = 4; common practice).
    pub fn degeneracy(self) -> f64 {
        match self {
            DopantKind::Donor => 2.0,
            DopantKind::Acceptor => 4.0,
        }
    }
}

impl std::fmt::Display for DopantKind {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.name())
    }
}

/// A chemical dopant species (symbol as on the command line: `P`, `As`, `B`, ...).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, serde::Serialize, serde::Deserialize)]
pub enum Species {
    /// Phosphorus.
    P,
    /// Arsenic.
    As,
    /// Antimony.
    Sb,
    /// Boron.
    B,
    /// Aluminium.
    Al,
    /// Gallium.
    Ga,
    /// Indium.
    In,
    /// Nitrogen (donor in 4H-SiC).
    N,
    /// Silicon (donor in GaAs).
    Si,
    /// Tellurium (donor in III-V).
    Te,
    /// Zinc (acceptor in III-V).
    Zn,
    /// Beryllium (acceptor in GaAs).
    Be,
    /// Carbon (acceptor in GaAs).
    C,
}

impl Species {
    /// All species, in declaration order.
    pub const ALL: [Species; 13] = [
        Species::P,
        Species::As,
        Species::Sb,
        Species::B,
        Species::Al,
        Species::Ga,
        Species::In,
        Species::N,
        Species::Si,
        Species::Te,
        Species::Zn,
        Species::Be,
        Species::C,
    ];

    /// Chemical symbol as written on the command line (`P`, `As`, ...).
    pub fn symbol(self) -> &'static str {
        match self {
            Species::P => "P",
            Species::As => "As",
            Species::Sb => "Sb",
            Species::B => "B",
            Species::Al => "Al",
            Species::Ga => "Ga",
            Species::In => "In",
            Species::N => "N",
            Species::Si => "Si",
            Species::Te => "Te",
            Species::Zn => "Zn",
            Species::Be => "Be",
            Species::C => "C",
        }
    }

    /// Parses a chemical symbol, case-insensitively (`p`, `AS`, `b`).
    pub fn from_symbol(s: &str) -> Option<Species> {
        Species::ALL
            .into_iter()
            .find(|sp| sp.symbol().eq_ignore_ascii_case(s))
    }
}

impl std::fmt::Display for Species {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.symbol())
    }
}

/// One dopant species at a density.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Dopant {
    /// Species.
    pub species: Species,
    /// Chemical (total) density in cm^-3.
    pub density_cm3: f64,
}

/// The level of one species in one material, with its doping dependence.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct DopantLevel {
    /// Donor or acceptor in this material.
    pub kind: DopantKind,
    /// Isolated-dopant ionization energy E_dop0 in eV (from the band edge).
    pub e0_ev: f64,
    /// N_ref of E_dop(N) in cm^-3.
    pub n_ref_cm3: f64,
    /// Exponent c of E_dop(N).
    pub c: f64,
    /// N_b of the localised fraction b(N) in cm^-3.
    pub n_b_cm3: f64,
    /// Exponent d of b(N).
    pub d: f64,
    /// Where E_dop0 and the doping dependence come from.
    pub source: &'static str,
}

impl DopantLevel {
    /// Ionization energy E_dop(N) in eV at the species' own density `n_cm3`.
    pub fn ionization_energy_ev(&self, n_cm3: f64) -> f64 {
        self.e0_ev / (1.0 + (n_cm3 / self.n_ref_cm3).powf(self.c))
    }

    /// Fraction b(N) of dopant states that are localised and can bind a carrier.
    pub fn localized_fraction(&self, n_cm3: f64) -> f64 {
        1.0 / (1.0 + (n_cm3 / self.n_b_cm3).powf(self.d))
    }

    /// Fraction 1 - b(N) of dopant states merged into the band (always ionized), computed without cancellation.
    pub fn delocalized_fraction(&self, n_cm3: f64) -> f64 {
        let x = (n_cm3 / self.n_b_cm3).powf(self.d);
        x / (1.0 + x)
    }

    /// (b(N), 1 - b(N)) with one power evaluation, both without cancellation.
    pub fn localized_split(&self, n_cm3: f64) -> (f64, f64) {
        let x = (n_cm3 / self.n_b_cm3).powf(self.d);
        (1.0 / (1.0 + x), x / (1.0 + x))
    }

    /// Ground-state degeneracy factor.
    pub fn degeneracy(&self) -> f64 {
        self.kind.degeneracy()
    }
}

// Altermatt et al. 2006 II, Table 3.
const ALT_P: (f64, f64, f64, f64) = (2.2e18, 2.0, 6.0e18, 2.3);
const ALT_AS: (f64, f64, f64, f64) = (3.0e18, 1.5, 9.0e18, 1.8);
const ALT_B: (f64, f64, f64, f64) = (1.3e18, 1.4, 4.5e18, 2.4);
/// Si:P isolated ionization energy (Altermatt 2006 II Table 3), for the Mott scaling.
const SI_P_E0_EV: f64 = 0.0455;
const SI_EPS_R: f64 = 11.7;

const SRC_ALT: &str = "Altermatt et al. 2006 II Table 3";
const SRC_SI_EXT: &str =
    "E0 Sze & Ng 2007 Ch.1 Fig.12; N dependence: Altermatt 2006 form, our extension";
const SRC_HANDBOOK_EXT: &str = "E0 Sze & Ng 2007 Ch.1 Fig.12 / Levinshtein handbooks (recalled from memory); N dependence: Mott-scaled Altermatt form, our extension";

fn level(
    kind: DopantKind,
    e0_ev: f64,
    p: (f64, f64, f64, f64),
    source: &'static str,
) -> DopantLevel {
    DopantLevel {
        kind,
        e0_ev,
        n_ref_cm3: p.0,
        c: p.1,
        n_b_cm3: p.2,
        d: p.3,
        source,
    }
}

/// Altermatt's Si:P parameters rescaled to the Mott density of a hydrogenic
/// level of energy `e0_ev` in a host of permittivity `eps_r` (our extension).
fn mott_scaled(kind: DopantKind, e0_ev: f64, eps_r: f64) -> DopantLevel {
    // a_B ∝ 1/(eps E0); N_Mott ∝ a_B^-3.
    let scale = (eps_r * e0_ev / (SI_EPS_R * SI_P_E0_EV)).powi(3);
    level(
        kind,
        e0_ev,
        (ALT_P.0 * scale, ALT_P.1, ALT_P.2 * scale, ALT_P.3),
        SRC_HANDBOOK_EXT,
    )
}

/// Hydrogenic donor energy 13.606 eV m*/eps_r^2 (effective-mass theory,
/// common practice) for the narrow-gap III-Vs, whose shallow donors
/// handbooks list as hydrogenic.
fn hydrogenic_ev(m_eff: f64, eps_r: f64) -> f64 {
    13.606 * m_eff / (eps_r * eps_r)
}

/// The level of `species` in `material`, or `None` if the model does not know it as a dopant there.
///
/// ```
/// use host_tools::physics::{Material, Species, DopantKind};
/// use host_tools::physics::dopant::dopant_level;
/// let p = dopant_level(Material::Si, Species::P).unwrap();
/// assert_eq!(p.kind, DopantKind::Donor);
/// assert!((p.e0_ev - 0.0455).abs() < 1e-12);
/// assert!(dopant_level(Material::Si, Species::Zn).is_none());
/// ```
pub fn dopant_level(material: Material, species: Species) -> Option<DopantLevel> {
    use DopantKind::{Acceptor, Donor};
    let eps = material.eps_r();
    Some(match (material, species) {
        // Silicon: Altermatt 2006 for P, As, B; Sze & Ng 2007 E0 for the rest.
        (Material::Si, Species::P) => level(Donor, 0.0455, ALT_P, SRC_ALT),
        (Material::Si, Species::As) => level(Donor, 0.0537, ALT_AS, SRC_ALT),
        (Material::Si, Species::B) => level(Acceptor, 0.04439, ALT_B, SRC_ALT),
        (Material::Si, Species::Sb) => level(Donor, 0.039, ALT_P, SRC_SI_EXT),
        (Material::Si, Species::Al) => level(Acceptor, 0.067, ALT_B, SRC_SI_EXT),
        (Material::Si, Species::Ga) => level(Acceptor, 0.072, ALT_B, SRC_SI_EXT),
        (Material::Si, Species::In) => level(Acceptor, 0.16, ALT_B, SRC_SI_EXT),
        // Germanium, Sze & Ng 2007 Ch. 1 Fig. 12.
        (Material::Ge, Species::P) => mott_scaled(Donor, 0.0120, eps),
        (Material::Ge, Species::As) => mott_scaled(Donor, 0.0127, eps),
        (Material::Ge, Species::Sb) => mott_scaled(Donor, 0.0096, eps),
        // Table: one ionisation energy per material and species, so the rows share their shape.
        (Material::Ge, Species::B) => mott_scaled(Acceptor, 0.0104, eps),
        (Material::Ge, Species::Al) => mott_scaled(Acceptor, 0.0102, eps),
        (Material::Ge, Species::Ga) => mott_scaled(Acceptor, 0.0108, eps),
        (Material::Ge, Species::In) => mott_scaled(Acceptor, 0.0112, eps),
        // GaAs, Sze & Ng 2007 Ch. 1 Fig. 12.
        (Material::GaAs, Species::Si) => mott_scaled(Donor, 0.0058, eps),
        (Material::GaAs, Species::Te) => mott_scaled(Donor, 0.0058, eps),
        (Material::GaAs, Species::Zn) => mott_scaled(Acceptor, 0.031, eps),
        (Material::GaAs, Species::Be) => mott_scaled(Acceptor, 0.028, eps),
        (Material::GaAs, Species::C) => mott_scaled(Acceptor, 0.026, eps),
        // InSb: hydrogenic donors (m* = 0.0135, Vurgaftman 2001); Zn acceptor
        // ~10 meV (Levinshtein 1996 Vol. 2, recalled from memory).
        (Material::InSb, Species::Te) => mott_scaled(Donor, hydrogenic_ev(0.0135, eps), eps),
        (Material::InSb, Species::Zn) => mott_scaled(Acceptor, 0.010, eps),
        // InAs: hydrogenic donors (m* = 0.026, Vurgaftman 2001); Zn acceptor
        // ~10 meV (Levinshtein 1996 Vol. 2, recalled from memory).
        (Material::InAs, Species::Te) => mott_scaled(Donor, hydrogenic_ev(0.026, eps), eps),
        (Material::InAs, Species::Si) => mott_scaled(Donor, hydrogenic_ev(0.026, eps), eps),
        (Material::InAs, Species::Zn) => mott_scaled(Acceptor, 0.010, eps),
        // 4H-SiC (Levinshtein 2001, recalled from memory): one level per
        // species, the hexagonal-site value (shallower of the two sites).
        (Material::Sic4H, Species::N) => mott_scaled(Donor, 0.061, eps),
        (Material::Sic4H, Species::P) => mott_scaled(Donor, 0.053, eps),
        (Material::Sic4H, Species::Al) => mott_scaled(Acceptor, 0.19, eps),
        (Material::Sic4H, Species::B) => mott_scaled(Acceptor, 0.285, eps),
        (Material::Sic4H, Species::Ga) => mott_scaled(Acceptor, 0.267, eps),
        _ => return None,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Table of isolated ionization energies vs Sze & Ng 2007 Ch. 1 Fig. 12
    /// (Si: P 45, As 54, Sb 39, B 45, Al 67, Ga 72, In 160 meV). Altermatt's
    /// refined P, As, B values differ from Sze's rounded ones by < 1 meV.
    #[test]
    fn si_energies_vs_sze() {
        let rows = [
            (Species::P, 0.045),
            (Species::As, 0.054),
            (Species::Sb, 0.039),
            (Species::B, 0.045),
            (Species::Al, 0.067),
            (Species::Ga, 0.072),
            (Species::In, 0.16),
        ];
        for (sp, e) in rows {
            let l = dopant_level(Material::Si, sp).unwrap();
            assert!(
                (l.e0_ev - e).abs() < 1e-3,
                "{sp}: got {} expected {e}",
                l.e0_ev
            );
        }
    }

    /// Altermatt 2006 II: at N = N_ref the energy halves; b(N_b) = 1/2; both
    /// tend to 1 of their low-density limit (exact algebra, 1e-12).
    #[test]
    fn altermatt_form() {
        let p = dopant_level(Material::Si, Species::P).unwrap();
        assert!((p.ionization_energy_ev(2.2e18) - 0.0455 / 2.0).abs() < 1e-12);
        assert!((p.localized_fraction(6e18) - 0.5).abs() < 1e-12);
        assert!((p.ionization_energy_ev(1e10) - 0.0455).abs() < 1e-12);
        assert!(p.localized_fraction(1e21) < 1e-5);
    }

    /// Mott scaling lands GaAs:Si near the measured n-GaAs transition
    /// (~1.5e16 cm^-3, common practice): within a factor 2.
    #[test]
    fn gaas_mott_density() {
        let l = dopant_level(Material::GaAs, Species::Si).unwrap();
        assert!(
            l.n_b_cm3 > 0.75e16 && l.n_b_cm3 < 6e16,
            "N_b {:e}",
            l.n_b_cm3
        );
    }

    /// Every material has at least one donor and one acceptor; symbols round trip.
    #[test]
    fn species_coverage_and_symbols() {
        for m in Material::ALL {
            let kinds: Vec<_> = Species::ALL
                .into_iter()
                .filter_map(|s| dopant_level(m, s).map(|l| l.kind))
                .collect();
            assert!(kinds.contains(&DopantKind::Donor), "{m} has no donor");
            assert!(kinds.contains(&DopantKind::Acceptor), "{m} has no acceptor");
        }
        for s in Species::ALL {
            assert_eq!(Species::from_symbol(&s.symbol().to_lowercase()), Some(s));
        }
        assert_eq!(Species::from_symbol("Xx"), None);
    }
}
