//! Hall factor of each carrier: published silicon data where they exist,
//! the scattering theory of [`super::transport`] for every other material.
//!
//! # Silicon
//! The theory (Herring's anisotropy factor times `<tau^2>/<tau>^2` with
//! acoustic and impurity scattering) gives 0.91 for electrons and 1.06 for
//! holes in lightly doped Si at 300 K. Published values are about 1.15 and
//! 0.7..0.8: intervalley phonons lengthen the spread of electron relaxation
//! times (Ohta & Sakata 1978), and the warped, non-parabolic valence bands
//! pull the hole factor below 1 (Lin, Li, Linares & Teng 1981). Neither
//! effect is in a scalar relaxation-time model, so Si uses the published
//! temperature curves of lightly doped material instead:
//! - electrons: [`SI_ELECTRONS_R_H`], Ohta & Sakata, Jpn. J. Appl. Phys. 17,
//!   1795 (1978), Hall factor of low-compensated P-doped Si against
//!   temperature, measured up to 300 K (nearly independent of the donor
//!   density in their series); 1.15 at 300 K as quoted by R. S. Popovic,
//!   Hall Effect Devices, 2nd ed., 2004, ch. 3;
//! - holes: [`SI_HOLES_R_H`], Lin, Li, Linares & Teng, Solid-State Electron.
//!   24, 827 (1981), combined-band Hall factor of p-Si, and F. Szmulowicz,
//!   Phys. Rev. B 34, 4031 (1986): 0.7..0.8 at 300 K, rising toward low
//!   temperature.
//!
//! Both tables are recalled from memory (node values read from the
//! published figures as remembered, uncertain by about +-0.03 for electrons
//! and +-0.05 for holes); they are the best figures available to this
//! project, not a transcription.
//!
//! Between nodes the factor is interpolated linearly in T; outside the
//! table it is held at the end values (the published curves are flat
//! there to within the stated uncertainty).
//!
//! # Degenerate carriers
//! The tables describe non-degenerate carriers. When the carrier gas
//! degenerates only the Fermi surface conducts and every Hall factor tends
//! to 1 (Look 1989, ch. 1). The published value is pulled toward 1 by the
//! theory's own degeneracy reduction of lattice scattering,
//! `g(eta) = (r_S(eta) - 1) / (3π/8 - 1)` (1 for `eta <= -4`, 0 when fully
//! degenerate): `r = 1 + (r_table(T) - 1) g(eta)`.

use super::material::Material;
use super::transport::{Carrier, anisotropy_factor, hall_scattering_factor};

/// Where a Hall factor comes from.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum HallFactorSource {
    /// Si electrons: Ohta & Sakata 1978 temperature curve (recalled from memory).
    OhtaSakata1978,
    /// Si holes: Lin, Li, Linares & Teng 1981 and Szmulowicz 1986 (recalled from memory).
    LinEtAl1981,
    /// Scattering theory: Herring anisotropy times `<tau^2>/<tau>^2`.
    Theory,
}

impl HallFactorSource {
    /// A one-line citation for output and plots.
    pub fn citation(self) -> &'static str {
        match self {
            HallFactorSource::OhtaSakata1978 => {
                "Si electrons, published r_H(T): Ohta & Sakata, Jpn. J. Appl. Phys. 17, 1795 (1978) (recalled from memory)"
            }
            HallFactorSource::LinEtAl1981 => {
                "Si holes, published r_H(T): Lin, Li, Linares & Teng, Solid-State Electron. 24, 827 (1981); Szmulowicz, Phys. Rev. B 34, 4031 (1986) (recalled from memory)"
            }
            HallFactorSource::Theory => {
                "theory: Herring (1955) anisotropy times <tau^2>/<tau>^2 for lattice and ionized-impurity scattering"
            }
        }
    }

    /// Short key (the JSON value).
    pub fn key(self) -> &'static str {
        match self {
            HallFactorSource::OhtaSakata1978 => "ohta-sakata-1978",
            HallFactorSource::LinEtAl1981 => "lin-et-al-1981",
            HallFactorSource::Theory => "theory",
        }
    }
}

impl serde::Serialize for HallFactorSource {
    fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        s.serialize_str(self.key())
    }
}

/// Hall factor of lightly doped P-doped Si electrons against temperature,
/// `(t_k, r_H)`: Ohta & Sakata 1978 (recalled from memory, module docs).
/// Below 100 K the curve approaches the acoustic-phonon value with Herring's
/// anisotropy, `0.871 * 3π/8 = 1.03`; 1.15 at 300 K (Popovic 2004, ch. 3).
pub const SI_ELECTRONS_R_H: [(f64, f64); 9] = [
    (77.0, 1.03),
    (100.0, 1.04),
    (150.0, 1.07),
    (200.0, 1.10),
    (250.0, 1.13),
    (300.0, 1.15),
    (350.0, 1.16),
    (400.0, 1.165),
    (500.0, 1.17),
];

/// Hall factor of lightly doped B-doped Si holes against temperature,
/// `(t_k, r_H)`: Lin et al. 1981, Szmulowicz 1986 (recalled from memory,
/// module docs); 0.75 at 300 K, the middle of the published 0.7..0.8.
pub const SI_HOLES_R_H: [(f64, f64); 7] = [
    (77.0, 1.00),
    (100.0, 0.95),
    (150.0, 0.88),
    (200.0, 0.82),
    (300.0, 0.75),
    (400.0, 0.72),
    (500.0, 0.70),
];

/// Linear interpolation in a `(t_k, value)` table, held at the ends.
pub fn interpolate_table(table: &[(f64, f64)], t_k: f64) -> f64 {
    let (Some(&(t0, first)), Some(&(t1, last))) = (table.first(), table.last()) else {
        return f64::NAN;
    };
    if t_k.is_nan() || t_k <= t0 {
        return first;
    }
    if t_k >= t1 {
        return last;
    }
    for pair in table.windows(2) {
        let [(ta, ra), (tb, rb)] = [pair[0], pair[1]];
        if t_k <= tb {
            return ra + (rb - ra) * (t_k - ta) / (tb - ta);
        }
    }
    last
}

/// The Maxwellian (non-degenerate) pure-lattice scattering factor `3π/8`.
const R_S_LATTICE_MAXWELL: f64 = 3.0 * std::f64::consts::PI / 8.0;

/// Reduced Fermi level below which the degeneracy reduction is 1 (the
/// theory's own switch to Maxwellian weights, `transport::ETA_DEGENERATE`).
const ETA_NON_DEGENERATE: f64 = -4.0;

/// Share of `r - 1` that survives degeneracy at reduced Fermi level `eta`:
/// 1 for a non-degenerate carrier, toward 0 when degenerate (module docs).
pub fn degeneracy_share(eta: f64) -> f64 {
    if eta <= ETA_NON_DEGENERATE {
        return 1.0;
    }
    let r_s = hall_scattering_factor(1.0, 1.0, eta);
    ((r_s - 1.0) / (R_S_LATTICE_MAXWELL - 1.0)).clamp(0.0, 1.0)
}

/// Hall factor of `carrier` in `material` at `t_k`, with the scattering
/// theory's inputs (`mu`, `mu_lattice`, reduced Fermi level `eta`) for the
/// materials without published data; returns the factor and its source.
pub fn hall_factor(
    material: Material,
    carrier: Carrier,
    t_k: f64,
    mu_cm2_vs: f64,
    mu_lattice_cm2_vs: f64,
    eta: f64,
) -> (f64, HallFactorSource) {
    let published = match (material, carrier) {
        (Material::Si, Carrier::Electron) => Some((
            interpolate_table(&SI_ELECTRONS_R_H, t_k),
            HallFactorSource::OhtaSakata1978,
        )),
        (Material::Si, Carrier::Hole) => Some((
            interpolate_table(&SI_HOLES_R_H, t_k),
            HallFactorSource::LinEtAl1981,
        )),
        _ => None,
    };
    match published {
        Some((r, source)) => (1.0 + (r - 1.0) * degeneracy_share(eta), source),
        None => (
            anisotropy_factor(material, carrier)
                * hall_scattering_factor(mu_cm2_vs, mu_lattice_cm2_vs, eta),
            HallFactorSource::Theory,
        ),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::physics::check::check_rel;

    /// The tables hit their nodes exactly, interpolate linearly between
    /// them and hold their end values (definition of the interpolation).
    #[test]
    fn table_interpolation() {
        assert_eq!(interpolate_table(&SI_ELECTRONS_R_H, 300.0), 1.15);
        check_rel(
            "midpoint 275 K",
            interpolate_table(&SI_ELECTRONS_R_H, 275.0),
            1.14,
            1e-12,
        )
        .unwrap();
        assert_eq!(interpolate_table(&SI_HOLES_R_H, 20.0), 1.00);
        assert_eq!(interpolate_table(&SI_HOLES_R_H, 900.0), 0.70);
        assert!(interpolate_table(&[], 300.0).is_nan());
    }

    /// Tables sorted by temperature (the interpolation relies on it).
    #[test]
    fn tables_are_sorted() {
        for table in [&SI_ELECTRONS_R_H[..], &SI_HOLES_R_H[..]] {
            assert!(table.windows(2).all(|w| w[0].0 < w[1].0), "{table:?}");
        }
    }

    /// Non-degenerate: the share is exactly 1; degenerate (eta = 40): the
    /// theory's r_S is within 1e-2 of 1 (transport tests), so the share is
    /// below 0.1; monotone in between.
    #[test]
    fn degeneracy_share_limits() {
        assert_eq!(degeneracy_share(-10.0), 1.0);
        assert!(degeneracy_share(40.0) < 0.1, "{}", degeneracy_share(40.0));
        let mut last = 1.0;
        for k in 0..=40 {
            let g = degeneracy_share(-4.0 + f64::from(k) * 0.5);
            assert!(
                g <= last + 1e-9,
                "eta {}: {g} after {last}",
                -4.0 + f64::from(k) * 0.5
            );
            last = g;
        }
    }

    /// Other materials keep the theory; Si takes the tables.
    #[test]
    fn sources_per_material() {
        let (_, s) = hall_factor(
            Material::GaAs,
            Carrier::Electron,
            300.0,
            5000.0,
            9000.0,
            -10.0,
        );
        assert_eq!(s, HallFactorSource::Theory);
        let (r, s) = hall_factor(Material::Si, Carrier::Hole, 300.0, 400.0, 470.0, -10.0);
        assert_eq!(s, HallFactorSource::LinEtAl1981);
        assert_eq!(r, 0.75);
    }
}
