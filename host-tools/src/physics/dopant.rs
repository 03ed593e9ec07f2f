//! Dopant species, their ionization energies, degeneracy factors and the
//! doping dependence of the ionization energy.
//! SKELETON: helper "carriers" owns this file.

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

/// One dopant species at a density.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Dopant {
    /// Species.
    pub species: Species,
    /// Chemical (total) density in cm^-3.
    pub density_cm3: f64,
}

#[allow(dead_code)]
fn _uses(_: Material) {}
