//! [`ElementModel`]: a checked spec of either kind, evaluated at a
//! temperature into an [`ElementState`] that answers any stimulus and drive
//! with circuit algebra only.

use super::bridge::{BridgeModel, BridgeState};
use super::error::ElementError;
use super::hall::{HallModel, HallState};
use super::output::{ElementOutput, Excitation};
use super::spec::{AdcSpec, ElementSpec, TemperatureSpec};
use crate::physics::constants::ZERO_C_K;

/// A checked element spec, ready to evaluate.
// Built once per part and kept: the size difference of the variants costs
// nothing measurable, and boxing would only add an allocation.
#[allow(clippy::large_enum_variant)]
#[derive(Debug, Clone, PartialEq)]
pub enum ElementModel {
    /// Piezoresistive bridge.
    Bridge(BridgeModel),
    /// Hall plate.
    Hall(HallModel),
}

/// The element at one temperature.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum ElementState {
    /// Piezoresistive bridge.
    Bridge(BridgeState),
    /// Hall plate.
    Hall(HallState),
}

impl ElementModel {
    /// Checks the spec and prepares the model.
    pub fn new(spec: &ElementSpec) -> Result<ElementModel, ElementError> {
        Ok(match spec {
            ElementSpec::Bridge(b) => ElementModel::Bridge(BridgeModel::new(b)?),
            ElementSpec::Hall(h) => ElementModel::Hall(HallModel::new(h)?),
        })
    }

    /// The drive the spec asks for.
    pub fn excitation(&self) -> Excitation {
        match self {
            ElementModel::Bridge(b) => Excitation::from_spec(&b.spec().excitation),
            ElementModel::Hall(h) => Excitation::from_spec(&h.spec().excitation),
        }
    }

    /// The converter of the spec (turn an output into a code with [`AdcSpec::code`]).
    pub fn adc(&self) -> &AdcSpec {
        match self {
            ElementModel::Bridge(b) => &b.spec().adc,
            ElementModel::Hall(h) => &h.spec().adc,
        }
    }

    /// Temperature range and reference of the spec.
    pub fn temperature(&self) -> &TemperatureSpec {
        match self {
            ElementModel::Bridge(b) => &b.spec().temperature,
            ElementModel::Hall(h) => &h.spec().temperature,
        }
    }

    /// Full-scale stimulus in the spec's unit.
    pub fn full_scale(&self) -> f64 {
        match self {
            ElementModel::Bridge(b) => b.spec().stimulus.full_scale,
            ElementModel::Hall(h) => h.spec().stimulus.full_scale,
        }
    }

    /// The element at `t_c` degrees Celsius (full-model evaluations, memoized).
    pub fn state(&self, t_c: f64) -> Result<ElementState, ElementError> {
        if !t_c.is_finite() {
            return Err(ElementError::NotFinite {
                what: "temperature",
            });
        }
        let t_k = t_c + ZERO_C_K;
        Ok(match self {
            ElementModel::Bridge(b) => ElementState::Bridge(b.state_at_k(t_k)?),
            ElementModel::Hall(h) => ElementState::Hall(h.state_at_k(t_k)?),
        })
    }

    /// Output at `t_c` and `stimulus` under the spec's own drive.
    pub fn response(&self, t_c: f64, stimulus: f64) -> Result<ElementOutput, ElementError> {
        if !stimulus.is_finite() {
            return Err(ElementError::NotFinite { what: "stimulus" });
        }
        Ok(self.state(t_c)?.response(stimulus, self.excitation()))
    }
}

impl ElementState {
    /// Output at `stimulus` under `excitation`.
    pub fn response(&self, stimulus: f64, excitation: Excitation) -> ElementOutput {
        match self {
            ElementState::Bridge(b) => b.response(stimulus, excitation),
            ElementState::Hall(h) => h.response(stimulus, excitation),
        }
    }

    /// Input resistance at zero stimulus, in ohms.
    pub fn resistance_ohm(&self) -> f64 {
        match self {
            ElementState::Bridge(b) => b.input_resistance_ohm(0.0),
            ElementState::Hall(h) => h.resistance_ohm,
        }
    }
}

/// Output of the element described by `spec` at `t_c` and `stimulus` under
/// the spec's own drive (checks the spec on every call; build an
/// [`ElementModel`] once to simulate many points).
pub fn response(
    spec: &ElementSpec,
    t_c: f64,
    stimulus: f64,
) -> Result<ElementOutput, ElementError> {
    ElementModel::new(spec)?.response(t_c, stimulus)
}
