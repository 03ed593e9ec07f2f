//! The Hall plate spec: material, doping, geometry, bias.

use super::spec::{
    AdcSpec, ElementKind, ExcitationSpec, Invalid, SignalsSpec, StimulusSpec, TemperatureSpec,
    nonzero, positive,
};
use crate::physics::{Material, Species};
use serde::{Deserialize, Serialize};

/// A Hall plate biased by constant current or constant voltage.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct HallSpec {
    /// Always `hall`.
    pub kind: ElementKind,
    /// Free-text name of the part.
    pub name: String,
    /// `[stimulus]`: unit and full scale.
    pub stimulus: StimulusSpec,
    /// `[temperature]`: range and reference.
    pub temperature: TemperatureSpec,
    /// `[plate]`: material, doping, geometry, field gain, misalignment.
    pub plate: PlateSpec,
    /// `[excitation]`: bias by constant current or constant voltage.
    pub excitation: ExcitationSpec,
    /// `[adc]`: converter.
    pub adc: AdcSpec,
    /// `[signals]`: chamber CSV units.
    pub signals: SignalsSpec,
}

/// `[plate]`: the Hall plate itself.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct PlateSpec {
    /// Plate material: `si`, `gaas`, `insb`, `inas` (any the full model knows).
    pub material: Material,
    // Documented spec fields read alike (bridge_spec.rs, scenario.rs); each is its own.
    /// Dopant species of the plate.
    pub dopant: Species,
    /// Dopant density in cm^-3.
    pub density_cm3: f64,
    /// Optional background dopant (e.g. the substrate doping under a well).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub background_dopant: Option<Species>,
    /// Background density in cm^-3 (with `background_dopant`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub background_density_cm3: Option<f64>,
    /// Plate thickness in micrometres (the Hall voltage scales as 1/thickness).
    pub thickness_um: f64,
    /// Length between the bias contacts in micrometres.
    pub length_um: f64,
    /// Width across the bias current in micrometres.
    pub width_um: f64,
    /// Geometry factor G (0 < G <= 1): the Hall voltage lost to the shorting
    /// of the bias contacts and the finite size of the sense contacts.
    pub geometry_factor: f64,
    /// Magnetic flux density at the plate per unit stimulus, in tesla per
    /// stimulus unit (e.g. the coupling of a bus bar and concentrator, T/A).
    pub field_t_per_unit: f64,
    /// Misalignment of the sense contacts as a resistance, as a fraction of
    /// the plate resistance (gives the offset; e.g. 1e-4).
    pub offset_resistance_fraction: f64,
}

impl PlateSpec {
    /// The background dopant and density, if given.
    pub fn background(&self) -> Option<(Species, f64)> {
        self.background_dopant.zip(self.background_density_cm3)
    }

    /// Bias-contact distance over width, L / W (number of squares).
    pub fn squares(&self) -> f64 {
        self.length_um / self.width_um
    }
}

impl HallSpec {
    /// Checks every value for physical sense.
    pub fn check(&self) -> Result<(), Invalid> {
        if self.kind != ElementKind::Hall {
            return Err(Invalid::new("kind", "a Hall spec must say kind = \"hall\""));
        }
        self.stimulus.check()?;
        self.temperature.check()?;
        self.excitation.check()?;
        self.adc.check()?;
        let p = &self.plate;
        super::sample::check_region(
            p.material,
            "plate.dopant",
            p.dopant,
            "plate.density_cm3",
            p.density_cm3,
            ("plate", p.background_dopant, p.background_density_cm3),
        )?;
        positive("plate.thickness_um", p.thickness_um, "um")?;
        positive("plate.length_um", p.length_um, "um")?;
        positive("plate.width_um", p.width_um, "um")?;
        if !(p.geometry_factor.is_finite() && p.geometry_factor > 0.0 && p.geometry_factor <= 1.0) {
            return Err(Invalid::new(
                "plate.geometry_factor",
                format!("must be in (0, 1], got {}", p.geometry_factor),
            ));
        }
        nonzero("plate.field_t_per_unit", p.field_t_per_unit)?;
        if !(p.offset_resistance_fraction.is_finite() && p.offset_resistance_fraction.abs() < 0.5) {
            return Err(Invalid::new(
                "plate.offset_resistance_fraction",
                format!(
                    "must be finite with magnitude below 0.5, got {}",
                    p.offset_resistance_fraction
                ),
            ));
        }
        Ok(())
    }
}
