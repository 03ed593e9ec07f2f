//! The piezoresistive bridge spec: die, four arms, excitation.
//!
//! Topology (arms numbered as listed in the file, `[[arm]]` 1 to 4):
//! ```text
//!        +excitation
//!        /         \
//!     arm 1       arm 4
//!       |           |
//!    out+ o       o out-
//!       |           |
//!     arm 2       arm 3
//!        \         /
//!          ground
//! ```
//! output = V_exc * (R2/(R1+R2) - R3/(R3+R4)); input resistance
//! (R1+R2) || (R3+R4). With p-type <110> resistors, longitudinal arms at
//! positions 2 and 4 and transverse arms at 1 and 3 give a positive output
//! for positive stress.

use super::smith::Direction;
use super::spec::{
    AdcSpec, ElementKind, ExcitationSpec, Invalid, SignalsSpec, StimulusSpec, TemperatureSpec,
    nonzero, positive,
};
use crate::physics::{Material, Species};
use serde::{Deserialize, Serialize};

/// A piezoresistive Wheatstone bridge on a (100) silicon die.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct BridgeSpec {
    /// Always `bridge`.
    pub kind: ElementKind,
    /// Free-text name of the part.
    pub name: String,
    /// `[stimulus]`: unit and full scale.
    pub stimulus: StimulusSpec,
    /// `[temperature]`: range and reference.
    pub temperature: TemperatureSpec,
    /// `[die]`: material, crystal direction, diffusion depth, stress gain.
    pub die: DieSpec,
    /// `[excitation]`: constant voltage or current.
    pub excitation: ExcitationSpec,
    /// `[adc]`: converter.
    pub adc: AdcSpec,
    /// `[signals]`: chamber CSV units.
    pub signals: SignalsSpec,
    /// `[[arm]]`: exactly four arms, in bridge positions 1..4.
    pub arm: Vec<ArmSpec>,
}

/// `[die]`: what all four arms share.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct DieSpec {
    /// Die material; the bridge model needs Kanda's P(N,T), so only `si`.
    pub material: Material,
    /// In-plane direction of the resistors on the (100) surface: `"110"` or `"100"`.
    pub direction: Direction,
    // Documented spec fields read alike (hall_spec.rs, scenario.rs); each is its own.
    /// Junction depth (thickness of the diffused layer) in micrometres;
    /// sheet resistance = rho / junction depth.
    pub junction_depth_um: f64,
    /// Stress at the resistors per unit stimulus, in Pa per stimulus unit:
    /// the one mechanical gain of the model (set by diaphragm size and
    /// thickness; e.g. 1e6..1e7 Pa/bar for thin silicon diaphragms).
    /// Each arm sees this stress along the principal direction.
    pub stress_pa_per_unit: f64,
    /// Optional background dopant of the layer the arms are diffused into.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub background_dopant: Option<Species>,
    /// Background density in cm^-3 (with `background_dopant`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub background_density_cm3: Option<f64>,
}

/// How an arm's current runs relative to the principal stress.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum Orientation {
    /// Current parallel to the stress: dR/R = pi_l * stress.
    Longitudinal,
    /// Current perpendicular to the stress: dR/R = pi_t * stress.
    Transverse,
}

/// `[[arm]]`: one piezoresistor.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ArmSpec {
    /// Current direction relative to the stress.
    pub orientation: Orientation,
    /// Dopant species of the resistor (`B` for p-type, `P`/`As` for n-type).
    pub dopant: Species,
    /// Dopant density in cm^-3 (arms may differ slightly: that mismatch is
    /// what makes the offset drift).
    pub density_cm3: f64,
    /// Resistor length in micrometres (along the current).
    pub length_um: f64,
    /// Resistor width in micrometres.
    pub width_um: f64,
}

impl ArmSpec {
    /// Number of squares, length / width.
    pub fn squares(&self) -> f64 {
        self.length_um / self.width_um
    }
}

impl DieSpec {
    /// The background dopant and density, if given.
    pub fn background(&self) -> Option<(Species, f64)> {
        self.background_dopant.zip(self.background_density_cm3)
    }
}

impl BridgeSpec {
    /// Checks every value for physical sense.
    pub fn check(&self) -> Result<(), Invalid> {
        if self.kind != ElementKind::Bridge {
            return Err(Invalid::new(
                "kind",
                "a bridge spec must say kind = \"bridge\"",
            ));
        }
        self.stimulus.check()?;
        self.temperature.check()?;
        self.excitation.check()?;
        self.adc.check()?;
        if self.die.material != Material::Si {
            return Err(Invalid::new(
                "die.material",
                format!(
                    "{} has no piezoresistance model (Smith/Kanda); use \"si\"",
                    self.die.material
                ),
            ));
        }
        positive("die.junction_depth_um", self.die.junction_depth_um, "um")?;
        nonzero("die.stress_pa_per_unit", self.die.stress_pa_per_unit)?;
        if self.arm.len() != 4 {
            return Err(Invalid::new(
                "arm",
                format!(
                    "a bridge has exactly 4 [[arm]] tables, got {}",
                    self.arm.len()
                ),
            ));
        }
        for (i, arm) in self.arm.iter().enumerate() {
            let prefix = format!("arm[{}]", i + 1);
            super::sample::check_region(
                self.die.material,
                &format!("{prefix}.dopant"),
                arm.dopant,
                &format!("{prefix}.density_cm3"),
                arm.density_cm3,
                (
                    "die",
                    self.die.background_dopant,
                    self.die.background_density_cm3,
                ),
            )?;
            positive(&format!("{prefix}.length_um"), arm.length_um, "um")?;
            positive(&format!("{prefix}.width_um"), arm.width_um, "um")?;
        }
        Ok(())
    }
}
