//! The Hall plate model: sensitivity, offset and input resistance over
//! temperature from the full model's two-carrier Hall coefficient (with the
//! Hall scattering factor r_H) and resistivity.
//!
//! Current bias: V_H = G * R_H * I * B / t, so S_I = G * R_H / t follows
//! r_H / n in the extrinsic range and falls once intrinsic carriers matter;
//! r_H(T) is the model's Hall factor (published temperature curves for Si,
//! `physics::hall_factor`), and its source is part of the state and output.
//! Voltage bias: I = V / R_in with R_in = rho * (L / W) / t, so
//! V_H = G * (R_H / rho) * (W / L) * V * B: S_V = G * mu_H * W / L follows the
//! Hall mobility mu_H = |R_H| / rho (standard Hall-plate relations, e.g.
//! R. S. Popovic, Hall Effect Devices, 2nd ed. 2004, ch. 4; common practice).
//! Offset: the sense contacts sit a misalignment resistance
//! R_off = f * R_in apart on the bias current path, so V_off = I * R_off =
//! f * V_plate. Neglected: magnetoresistance, junction-field effect of a
//! well, piezo-Hall effect, contact resistance.

use super::cache::evaluate_cached;
use super::error::ElementError;
use super::hall_spec::HallSpec;
use super::output::{ElementOutput, Excitation};
use super::sample::{dopant_kind, region_sample};
use crate::physics::constants::ZERO_C_K;
use crate::physics::{DopantKind, HallFactorSource, Sample};

/// The plate at one temperature.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct HallState {
    /// Temperature in kelvin.
    pub t_k: f64,
    /// Resistivity in ohm cm.
    pub rho_ohm_cm: f64,
    /// Hall coefficient in cm^3/C (negative for electron conduction).
    pub hall_coefficient_cm3_c: f64,
    /// Hall mobility |R_H| / rho in cm^2/(V s).
    pub hall_mobility_cm2_vs: f64,
    /// Hall factor of the majority carrier (dimensionless).
    pub hall_factor: f64,
    /// Where that Hall factor comes from (published data or theory).
    pub hall_factor_source: HallFactorSource,
    /// Input resistance between the bias contacts in ohms.
    pub resistance_ohm: f64,
    /// Current-bias sensitivity S_I = G R_H / t in V/(A T), sign set so that
    /// the majority carrier gives a positive output.
    pub sensitivity_i_v_per_a_t: f64,
    /// Voltage-bias sensitivity S_V = G mu_H W / L in 1/T (V per V per tesla),
    /// same sign convention.
    pub sensitivity_v_per_t: f64,
    /// Flux density per unit stimulus in tesla.
    pub field_t_per_unit: f64,
    /// Misalignment resistance as a fraction of the plate resistance.
    pub offset_fraction: f64,
}

impl HallState {
    /// Output at `stimulus` under `excitation`: Hall voltage plus the
    /// misalignment offset.
    pub fn response(&self, stimulus: f64, excitation: Excitation) -> ElementOutput {
        let (excitation_v, excitation_a) = excitation.operating_point(self.resistance_ohm);
        let field_t = stimulus * self.field_t_per_unit;
        let hall_v = self.sensitivity_i_v_per_a_t * excitation_a * field_t;
        let output_v = hall_v + self.offset_fraction * excitation_v;
        ElementOutput {
            t_c: self.t_k - ZERO_C_K,
            stimulus,
            output_v,
            output_ratio: output_v / excitation_v,
            excitation_v,
            excitation_a,
            resistance_ohm: self.resistance_ohm,
        }
    }
}

/// A checked Hall spec, ready to evaluate at any temperature.
#[derive(Debug, Clone, PartialEq)]
pub struct HallModel {
    spec: HallSpec,
    sample: Sample,
    /// +1 for a p-type plate, -1 for n-type: makes the majority output positive.
    polarity: f64,
}

impl HallModel {
    /// Checks the spec and prepares the plate's sample.
    pub fn new(spec: &HallSpec) -> Result<HallModel, ElementError> {
        spec.check().map_err(|e| e.located(None))?;
        let p = &spec.plate;
        let sample = region_sample(p.material, p.dopant, p.density_cm3, p.background());
        let mut net_acceptor = 0.0;
        for (s, d) in std::iter::once((p.dopant, p.density_cm3)).chain(p.background()) {
            match dopant_kind(p.material, s) {
                Some(DopantKind::Acceptor) => net_acceptor += d,
                Some(DopantKind::Donor) => net_acceptor -= d,
                None => {}
            }
        }
        let polarity = if net_acceptor >= 0.0 { 1.0 } else { -1.0 };
        Ok(HallModel {
            spec: spec.clone(),
            sample,
            polarity,
        })
    }

    /// The spec this model was built from.
    pub fn spec(&self) -> &HallSpec {
        &self.spec
    }

    /// The plate at `t_k` (one memoized full-model evaluation).
    pub fn state_at_k(&self, t_k: f64) -> Result<HallState, ElementError> {
        if !t_k.is_finite() {
            return Err(ElementError::NotFinite {
                what: "temperature",
            });
        }
        let point = evaluate_cached(&self.sample, t_k).map_err(|source| ElementError::Model {
            part: "plate".to_string(),
            t_k,
            source,
        })?;
        let hall_factor = if self.polarity > 0.0 {
            (point.hall_factor_p, point.hall_factor_p_source)
        } else {
            (point.hall_factor_n, point.hall_factor_n_source)
        };
        Ok(plate_state(
            &self.spec,
            self.polarity,
            t_k,
            point.rho_ohm_cm,
            point.hall_coefficient_cm3_c,
            hall_factor,
        ))
    }
}

/// The circuit side of the plate from resistivity and Hall coefficient
/// (`hall_factor`: the majority carrier's factor and its source, carried
/// through for the output).
pub(crate) fn plate_state(
    spec: &HallSpec,
    polarity: f64,
    t_k: f64,
    rho_ohm_cm: f64,
    r_h_cm3_c: f64,
    hall_factor: (f64, HallFactorSource),
) -> HallState {
    let p = &spec.plate;
    let t_cm = p.thickness_um * 1e-4;
    // R_H in cm^3/C -> m^3/C is 1e-6; thickness in m is t_um * 1e-6.
    let s_i = polarity * p.geometry_factor * (r_h_cm3_c * 1e-6) / (p.thickness_um * 1e-6);
    // (R_H / rho) in cm^2/(V s) -> m^2/(V s) is 1e-4.
    let s_v = polarity * p.geometry_factor * (r_h_cm3_c / rho_ohm_cm) * 1e-4 / p.squares();
    HallState {
        t_k,
        rho_ohm_cm,
        hall_coefficient_cm3_c: r_h_cm3_c,
        hall_mobility_cm2_vs: r_h_cm3_c.abs() / rho_ohm_cm,
        hall_factor: hall_factor.0,
        hall_factor_source: hall_factor.1,
        resistance_ohm: rho_ohm_cm * p.squares() / t_cm,
        sensitivity_i_v_per_a_t: s_i,
        sensitivity_v_per_t: s_v,
        field_t_per_unit: p.field_t_per_unit,
        offset_fraction: p.offset_resistance_fraction,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::element::examples::example_spec;
    use crate::element::spec::ElementSpec;

    fn hall_example() -> HallSpec {
        match example_spec(crate::element::spec::ElementKind::Hall) {
            ElementSpec::Hall(h) => h,
            ElementSpec::Bridge(_) => unreachable!("the hall example is a Hall spec"),
        }
    }

    #[test]
    fn both_bias_modes_agree_at_the_same_operating_point() {
        // Hand-made plate values (not from the physics model): rho = 1 ohm cm,
        // R_H = -625 cm^3/C (n = 1e16 cm^-3, r_H = 1). Circuit identity: the same
        // plate at the same current gives the same Hall voltage whichever
        // source sets that current; 1e-12 allows rounding only.
        let spec = hall_example();
        let s = plate_state(
            &spec,
            -1.0,
            300.0,
            1.0,
            -625.0,
            (1.0, HallFactorSource::Theory),
        );
        let r = s.resistance_ohm;
        let by_i = s.response(100.0, Excitation::CurrentA(1e-3));
        let by_v = s.response(100.0, Excitation::VoltageV(1e-3 * r));
        assert!(
            (by_i.output_v - by_v.output_v).abs() <= 1e-12 * by_i.output_v.abs(),
            "current {} V vs voltage {} V",
            by_i.output_v,
            by_v.output_v
        );
        // S_V = S_I / R_in (since V_H = S_I I B = S_I (V / R_in) B).
        let want = s.sensitivity_i_v_per_a_t / r;
        assert!(
            (s.sensitivity_v_per_t - want).abs() <= 1e-12 * want.abs(),
            "S_V got {}, expected S_I / R_in = {want}",
            s.sensitivity_v_per_t
        );
        assert!(
            by_i.output_v > 0.0,
            "n-type plate output must be positive for positive field"
        );
    }

    #[test]
    fn current_bias_sensitivity_by_hand() {
        // S_I = G |R_H| / t = 0.7 * 625e-6 m^3/C / 5e-6 m = 87.5 V/(A T) for a
        // plate with G = 0.7 and t = 5 um (values set here, not the example's).
        let mut spec = hall_example();
        spec.plate.geometry_factor = 0.7;
        spec.plate.thickness_um = 5.0;
        // Same plate_state call as the test above, on a plate with another geometry.
        let s = plate_state(
            &spec,
            -1.0,
            300.0,
            1.0,
            -625.0,
            (1.0, HallFactorSource::Theory),
        );
        let got = s.sensitivity_i_v_per_a_t;
        assert!(
            (got - 87.5).abs() <= 1e-12 * 87.5,
            "S_I got {got}, expected 87.5 V/(A T)"
        );
    }
}
