//! The piezoresistive bridge model: four arms through the full model, the
//! Wheatstone circuit, and the bridge's output under either drive.
//!
//! Each arm: R = (rho(N, T) / x_j) * (L / W) (sheet resistance times squares)
//! and dR/R = pi * stress, where pi is Smith's longitudinal or transverse
//! coefficient for the die direction, scaled by Kanda's P(N, T) (see
//! [`super::kanda`]). Arm-to-arm doping mismatch acts through the doping
//! dependence of rho(T) and P(N, T), which is where offset drift comes from.
//! Neglected (stated, not hidden): second-order piezoresistance, stress
//! normal to the die, geometric (dimensional) gauge effect (about 2 against
//! gauge factors near 100), temperature dependence of the stress gain.

use super::bridge_spec::{BridgeSpec, Orientation};
use super::cache::evaluate_cached;
use super::error::ElementError;
use super::kanda::smith_scale;
use super::output::{ElementOutput, Excitation};
use super::sample::{dopant_kind, region_sample};
use super::smith::{Carrier, Direction, smith_row};
use crate::physics::constants::ZERO_C_K;
use crate::physics::{DopantKind, Sample};

/// One arm at one temperature.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ArmState {
    /// Resistance without stress in ohms.
    pub resistance_ohm: f64,
    /// Relative resistance change per pascal of principal stress, dR/R/Pa.
    pub gauge_per_pa: f64,
    /// Resistivity in ohm cm.
    pub rho_ohm_cm: f64,
    /// Kanda's P(N, T) from the full model.
    pub piezo_factor: f64,
}

impl ArmState {
    /// Resistance under `stress_pa` (linear piezoresistance).
    pub fn resistance_at(&self, stress_pa: f64) -> f64 {
        self.resistance_ohm * (1.0 + self.gauge_per_pa * stress_pa)
    }
}

/// Bridge output over excitation voltage, R2/(R1+R2) - R3/(R3+R4).
pub fn bridge_ratio(r: [f64; 4]) -> f64 {
    r[1] / (r[0] + r[1]) - r[2] / (r[2] + r[3])
}

/// Input resistance of the bridge, (R1+R2) || (R3+R4).
pub fn bridge_input_resistance(r: [f64; 4]) -> f64 {
    let (left, right) = (r[0] + r[1], r[2] + r[3]);
    left * right / (left + right)
}

/// The bridge at one temperature: everything the stimulus and drive need.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BridgeState {
    /// Temperature in kelvin.
    pub t_k: f64,
    /// The four arms in bridge positions 1..4.
    pub arms: [ArmState; 4],
    /// Principal stress per unit stimulus in Pa.
    pub stress_pa_per_unit: f64,
}

impl BridgeState {
    /// Arm resistances at `stimulus` (spec units), in ohms.
    pub fn arm_resistances(&self, stimulus: f64) -> [f64; 4] {
        let stress = stimulus * self.stress_pa_per_unit;
        self.arms.map(|a| a.resistance_at(stress))
    }

    /// Input resistance at `stimulus`, in ohms.
    pub fn input_resistance_ohm(&self, stimulus: f64) -> f64 {
        bridge_input_resistance(self.arm_resistances(stimulus))
    }

    /// Output at `stimulus` under `excitation`.
    pub fn response(&self, stimulus: f64, excitation: Excitation) -> ElementOutput {
        let r = self.arm_resistances(stimulus);
        let ratio = bridge_ratio(r);
        let resistance_ohm = bridge_input_resistance(r);
        let (excitation_v, excitation_a) = excitation.operating_point(resistance_ohm);
        ElementOutput {
            t_c: self.t_k - ZERO_C_K,
            stimulus,
            output_v: ratio * excitation_v,
            output_ratio: ratio,
            excitation_v,
            excitation_a,
            resistance_ohm,
        }
    }
}

/// A checked bridge spec, ready to evaluate at any temperature.
#[derive(Debug, Clone, PartialEq)]
pub struct BridgeModel {
    spec: BridgeSpec,
    samples: [Sample; 4],
    carriers: [Carrier; 4],
    /// Smith's pi_l or pi_t of each arm at the reference doping, in 1/Pa.
    pi_smith_per_pa: [f64; 4],
    /// Squares over junction depth of each arm, in 1/cm (R = rho * this).
    shape_per_cm: [f64; 4],
}

impl BridgeModel {
    /// Checks the spec and prepares the four arms.
    pub fn new(spec: &BridgeSpec) -> Result<BridgeModel, ElementError> {
        spec.check().map_err(|e| e.located(None))?;
        let die = &spec.die;
        let arm = |i: usize| &spec.arm[i];
        let samples = std::array::from_fn(|i| {
            region_sample(
                die.material,
                arm(i).dopant,
                arm(i).density_cm3,
                die.background(),
            )
        });
        let carriers: [Carrier; 4] =
            std::array::from_fn(|i| arm_carrier(&spec.arm[i], die.background(), die));
        let pi_smith_per_pa = std::array::from_fn(|i| {
            let pi = smith_row(carriers[i]).pi;
            match arm(i).orientation {
                Orientation::Longitudinal => pi.longitudinal(die.direction),
                Orientation::Transverse => pi.transverse(die.direction),
            }
        });
        let shape_per_cm =
            std::array::from_fn(|i| arm(i).squares() / (die.junction_depth_um * 1e-4));
        Ok(BridgeModel {
            spec: spec.clone(),
            samples,
            carriers,
            pi_smith_per_pa,
            shape_per_cm,
        })
    }

    /// The spec this model was built from.
    pub fn spec(&self) -> &BridgeSpec {
        &self.spec
    }

    /// The crystal direction of the resistors.
    pub fn direction(&self) -> Direction {
        self.spec.die.direction
    }

    /// The bridge at `t_k`: four full-model evaluations (memoized).
    pub fn state_at_k(&self, t_k: f64) -> Result<BridgeState, ElementError> {
        if !t_k.is_finite() {
            return Err(ElementError::NotFinite {
                what: "temperature",
            });
        }
        let mut arms = [ArmState {
            resistance_ohm: 0.0,
            gauge_per_pa: 0.0,
            rho_ohm_cm: 0.0,
            piezo_factor: 0.0,
        }; 4];
        for (i, arm) in arms.iter_mut().enumerate() {
            let part = format!("arm[{}]", i + 1);
            let point =
                evaluate_cached(&self.samples[i], t_k).map_err(|source| ElementError::Model {
                    part: part.clone(),
                    t_k,
                    source,
                })?;
            let piezo_factor = point
                .piezo_factor
                .ok_or(ElementError::NoPiezoFactor { part })?;
            *arm = ArmState {
                resistance_ohm: point.rho_ohm_cm * self.shape_per_cm[i],
                gauge_per_pa: self.pi_smith_per_pa[i]
                    * smith_scale(self.carriers[i], piezo_factor)?,
                rho_ohm_cm: point.rho_ohm_cm,
                piezo_factor,
            };
        }
        Ok(BridgeState {
            t_k,
            arms,
            stress_pa_per_unit: self.spec.die.stress_pa_per_unit,
        })
    }
}

/// Majority carrier of an arm: the kind with the larger total density.
fn arm_carrier(
    arm: &super::bridge_spec::ArmSpec,
    background: Option<(crate::physics::Species, f64)>,
    die: &super::bridge_spec::DieSpec,
) -> Carrier {
    let mut net_donor = 0.0;
    for (s, d) in std::iter::once((arm.dopant, arm.density_cm3)).chain(background) {
        match dopant_kind(die.material, s) {
            Some(DopantKind::Donor) => net_donor += d,
            Some(DopantKind::Acceptor) => net_donor -= d,
            None => {}
        }
    }
    if net_donor > 0.0 {
        Carrier::N
    } else {
        Carrier::P
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Relative closeness; `rel` is stated per test.
    fn near(got: f64, want: f64, rel: f64) -> bool {
        (got - want).abs() <= rel * want.abs()
    }

    #[test]
    fn near_can_fail() {
        assert!(!near(1.0, 1.01, 1e-3));
    }

    fn arm(r: f64, g: f64) -> ArmState {
        ArmState {
            resistance_ohm: r,
            gauge_per_pa: g,
            rho_ohm_cm: 0.0,
            piezo_factor: 1.0,
        }
    }

    #[test]
    fn circuit_identities_of_a_hand_made_bridge() {
        // Hand-made arms (not from the physics model): 5 kohm arms, gauge
        // +/-7e-10 /Pa (p-type <110>-like), stress 1e7 Pa at stimulus 1.
        // Expected values worked by hand: dR/R = +/-0.007, so
        // ratio = 1.007/2 - 0.993/2 = 0.007 (exact for a symmetric bridge),
        // R_in = 5000 (each half sums to 10 000 ohm).
        let g = 7e-10;
        let s = BridgeState {
            t_k: 300.0,
            arms: [
                arm(5000.0, -g),
                arm(5000.0, g),
                arm(5000.0, -g),
                arm(5000.0, g),
            ],
            stress_pa_per_unit: 1e7,
        };
        // (stimulus, drive, expected output_v, expected resistance) ; 1e-12: rounding only.
        let table = [
            (0.0, Excitation::VoltageV(3.3), 0.0, 5000.0),
            (1.0, Excitation::VoltageV(3.3), 0.007 * 3.3, 5000.0),
            (1.0, Excitation::CurrentA(1e-3), 0.007 * 5.0, 5000.0),
            (-1.0, Excitation::CurrentA(1e-3), -0.007 * 5.0, 5000.0),
        ];
        for (stim, drive, want_v, want_r) in table {
            let out = s.response(stim, drive);
            assert!(
                (out.output_v - want_v).abs() <= 1e-12 && near(out.resistance_ohm, want_r, 1e-12),
                "stimulus {stim} {drive:?}: got {} V {} ohm, expected {want_v} V {want_r} ohm",
                out.output_v,
                out.resistance_ohm
            );
        }
    }

    #[test]
    fn one_mismatched_arm_gives_the_quarter_bridge_offset() {
        // Arm 2 high by 1e-3: ratio = 1.001/2.001 - 1/2 = 2.4988e-4 (exact
        // expression by hand); the small-signal rule of thumb is delta/4.
        let s = BridgeState {
            t_k: 300.0,
            arms: [
                arm(1000.0, 0.0),
                arm(1001.0, 0.0),
                arm(1000.0, 0.0),
                arm(1000.0, 0.0),
            ],
            stress_pa_per_unit: 1.0,
        };
        let got = s.response(0.0, Excitation::VoltageV(1.0)).output_ratio;
        let want = 1.001 / 2.001 - 0.5;
        assert!(near(got, want, 1e-12), "got {got}, expected {want}");
        assert!(
            near(got, 0.25e-3, 1e-3),
            "got {got}, quarter rule 2.5e-4 within 0.1 %"
        );
    }

    #[test]
    fn current_drive_adds_the_resistance_drift_to_the_span_drift() {
        // Circuit identity: under constant current the span is I * R_in * ratio,
        // so span_cc(T2)/span_cc(T1) = span_cv ratio * R_in ratio. Hand-made
        // states: resistance +10 %, gauge -20 % between the two temperatures.
        let mk = |r: f64, g: f64| BridgeState {
            t_k: 300.0,
            arms: [arm(r, -g), arm(r, g), arm(r, -g), arm(r, g)],
            stress_pa_per_unit: 1e7,
        };
        let (cold, hot) = (mk(1000.0, 7e-10), mk(1100.0, 5.6e-10));
        let span = |s: &BridgeState, d| s.response(1.0, d).output_v - s.response(0.0, d).output_v;
        let cv = span(&hot, Excitation::VoltageV(1.0)) / span(&cold, Excitation::VoltageV(1.0));
        let cc = span(&hot, Excitation::CurrentA(1e-3)) / span(&cold, Excitation::CurrentA(1e-3));
        // 1e-12: the symmetric bridge keeps R_in independent of stress exactly.
        assert!(near(cv, 0.8, 1e-12), "cv span ratio got {cv}, expected 0.8");
        assert!(
            near(cc, 0.88, 1e-12),
            "cc span ratio got {cc}, expected 0.8 * 1.1 = 0.88"
        );
    }
}
