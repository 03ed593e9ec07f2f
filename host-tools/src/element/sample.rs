//! Building the full model's [`Sample`] for one doped region of an element
//! (a bridge arm or a Hall plate), with an optional background doping of
//! either kind (the well or epitaxial layer the region sits in).

use super::spec::{Invalid, density};
use crate::physics::{Dopant, DopantKind, Material, Sample, Species};

/// Whether `species` is a donor or an acceptor in `material`; `None` when it
/// is not a usual dopant there (common practice: group V donors and group III
/// acceptors in Si and Ge; group VI / group IV-on-group-III donors and group
/// II / group IV-on-group-V acceptors in III-V compounds; N and Al in SiC).
pub fn dopant_kind(material: Material, species: Species) -> Option<DopantKind> {
    use DopantKind::{Acceptor, Donor};
    use Species as S;
    match material {
        Material::Si | Material::Ge => match species {
            S::P | S::As | S::Sb => Some(Donor),
            S::B | S::Al | S::Ga | S::In => Some(Acceptor),
            _ => None,
        },
        Material::GaAs | Material::InSb | Material::InAs => match species {
            S::Si | S::Te => Some(Donor),
            S::Zn | S::Be | S::C => Some(Acceptor),
            _ => None,
        },
        Material::Sic4H => match species {
            S::N | S::P => Some(Donor),
            S::Al | S::B => Some(Acceptor),
            _ => None,
        },
    }
}

/// Checks a region's dopant against the material, its density and the
/// background; `prefix` is the table's dotted key (e.g. `arm[2]`).
pub(crate) fn check_region(
    material: Material,
    dopant_field: &str,
    species: Species,
    density_field: &str,
    density_cm3: f64,
    background: (&str, Option<Species>, Option<f64>),
) -> Result<(), Invalid> {
    if dopant_kind(material, species).is_none() {
        return Err(Invalid::new(
            dopant_field,
            format!("{species:?} is not a known dopant of {material}"),
        ));
    }
    density(density_field, density_cm3)?;
    let (prefix, bg_species, bg_density) = background;
    match (bg_species, bg_density) {
        (None, None) => Ok(()),
        (Some(s), Some(d)) => {
            if dopant_kind(material, s).is_none() {
                return Err(Invalid::new(
                    format!("{prefix}.background_dopant"),
                    format!("{s:?} is not a known dopant of {material}"),
                ));
            }
            density(&format!("{prefix}.background_density_cm3"), d)
        }
        (Some(_), None) => Err(Invalid::new(
            format!("{prefix}.background_density_cm3"),
            "required when background_dopant is given",
        )),
        (None, Some(_)) => Err(Invalid::new(
            format!("{prefix}.background_dopant"),
            "required when background_density_cm3 is given",
        )),
    }
}

/// The full model's sample for a region doped with `species` at
/// `density_cm3` on an optional background. Unknown species are skipped here
/// (the spec check refuses them first).
pub fn region_sample(
    material: Material,
    species: Species,
    density_cm3: f64,
    background: Option<(Species, f64)>,
) -> Sample {
    let mut sample = Sample {
        material,
        donors: Vec::new(),
        acceptors: Vec::new(),
    };
    let mut add = |s: Species, d: f64| match dopant_kind(material, s) {
        Some(DopantKind::Donor) => sample.donors.push(Dopant {
            species: s,
            density_cm3: d,
        }),
        Some(DopantKind::Acceptor) => sample.acceptors.push(Dopant {
            species: s,
            density_cm3: d,
        }),
        None => {}
    };
    add(species, density_cm3);
    if let Some((s, d)) = background {
        add(s, d);
    }
    sample
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn kinds_follow_the_periodic_table() {
        // (material, species, expected kind): group III/V rule in Si, II/VI in III-V.
        let table = [
            (Material::Si, Species::B, Some(DopantKind::Acceptor)),
            (Material::Si, Species::P, Some(DopantKind::Donor)),
            (Material::Si, Species::Zn, None),
            (Material::GaAs, Species::Si, Some(DopantKind::Donor)),
            (Material::InSb, Species::Te, Some(DopantKind::Donor)),
            (Material::InAs, Species::Zn, Some(DopantKind::Acceptor)),
        ];
        for (m, s, want) in table {
            assert_eq!(dopant_kind(m, s), want, "{m} {s:?}");
        }
    }

    #[test]
    fn background_of_other_kind_goes_to_the_other_list() {
        let s = region_sample(Material::Si, Species::B, 2e18, Some((Species::P, 1e15)));
        assert_eq!(s.acceptors.len(), 1, "{s:?}");
        assert_eq!(s.donors.len(), 1, "{s:?}");
        assert_eq!(s.donors[0].density_cm3, 1e15);
    }

    #[test]
    fn half_a_background_is_refused() {
        let r = check_region(
            Material::Si,
            "d",
            Species::B,
            "n",
            1e18,
            ("arm[1]", Some(Species::P), None),
        );
        assert_eq!(
            r.map_err(|e| e.field),
            Err("arm[1].background_density_cm3".to_string())
        );
        let r = check_region(
            Material::Si,
            "d",
            Species::B,
            "n",
            1e22,
            ("arm[1]", None, None),
        );
        assert_eq!(r.map_err(|e| e.field), Err("n".to_string()));
    }
}
