//! What an element gives at one temperature and stimulus, and how it is driven.

use super::spec::{ExcitationMode, ExcitationSpec};
use serde::Serialize;

/// The drive of an element: a constant voltage or a constant current.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Excitation {
    /// Constant voltage across the element, in volts.
    VoltageV(f64),
    /// Constant current through the element, in amperes.
    CurrentA(f64),
}

impl Excitation {
    /// The drive a checked spec asks for.
    pub fn from_spec(spec: &ExcitationSpec) -> Excitation {
        match spec.mode {
            ExcitationMode::Voltage => Excitation::VoltageV(spec.voltage_v.unwrap_or(0.0)),
            ExcitationMode::Current => Excitation::CurrentA(spec.current_a.unwrap_or(0.0)),
        }
    }

    /// The mode of this drive.
    pub fn mode(self) -> ExcitationMode {
        match self {
            Excitation::VoltageV(_) => ExcitationMode::Voltage,
            Excitation::CurrentA(_) => ExcitationMode::Current,
        }
    }

    /// Voltage across and current through an element of input resistance
    /// `resistance_ohm` under this drive, as (volts, amperes).
    pub fn operating_point(self, resistance_ohm: f64) -> (f64, f64) {
        match self {
            Excitation::VoltageV(v) => (v, v / resistance_ohm),
            Excitation::CurrentA(a) => (a * resistance_ohm, a),
        }
    }

    /// The drive of the other mode that gives the same operating point on an
    /// element of input resistance `resistance_ohm` (used to compare modes at
    /// the reference temperature).
    pub fn equivalent(self, mode: ExcitationMode, resistance_ohm: f64) -> Excitation {
        let (v, a) = self.operating_point(resistance_ohm);
        match mode {
            ExcitationMode::Voltage => Excitation::VoltageV(v),
            ExcitationMode::Current => Excitation::CurrentA(a),
        }
    }
}

/// The element's electrical output at one temperature, stimulus and drive.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct ElementOutput {
    /// Temperature in degrees Celsius.
    pub t_c: f64,
    /// Stimulus in the spec's unit.
    pub stimulus: f64,
    /// Output voltage in volts.
    pub output_v: f64,
    /// Output over excitation voltage (V/V; the ratiometric reading).
    pub output_ratio: f64,
    /// Voltage across the element's excitation terminals in volts.
    pub excitation_v: f64,
    /// Current through the element in amperes.
    pub excitation_a: f64,
    /// Input resistance seen by the excitation, in ohms (the thermometer).
    pub resistance_ohm: f64,
}
