//! Sense-element models: piezoresistive bridges and Hall plates, from doping
//! and geometry to span, offset and resistance over temperature.
//!
//! Data flow: element spec (TOML, [`parse_spec`]) --> [`ElementModel`]
//! (checked, per-region physics samples) --[`ElementModel::state`] at a
//! temperature: full-model points, memoized]--> [`ElementState`]
//! --[`ElementState::response`] at a stimulus and drive: circuit algebra
//! only]--> [`ElementOutput`]; [`drift_curve`] sweeps temperature and gives
//! [`DriftRow`]s and the [`DriftSummary`] of temperature coefficients.
//!
//! Library API for simulating parts (e.g. on the calibration station):
//! - [`parse_spec`]`(text) -> Result<`[`ElementSpec`]`, `[`SpecError`]`>`;
//!   [`ElementSpec`] is `Bridge(`[`BridgeSpec`]`)` or `Hall(`[`HallSpec`]`)`,
//!   plain serde structs with public fields (vary densities, geometry or
//!   gains per simulated part, then call [`ElementSpec::check`]).
//! - [`response`]`(&spec, t_c, stimulus) -> `[`ElementOutput`] `{ output_v,
//!   output_ratio, excitation_v, excitation_a, resistance_ohm, .. }` under the
//!   spec's own drive.
//! - Faster for many points: `let m = ElementModel::new(&spec)?;` then
//!   `m.response(t_c, stimulus)` or `m.state(t_c)?.response(stimulus,
//!   Excitation::VoltageV(3.3))`; full-model points are memoized per
//!   (doping, temperature), so each chamber temperature is solved once.
//! - [`drift_curve`]`(&spec, &temps_c) -> `[`DriftCurve`] `{ rows, summary }`.
//! - [`AdcSpec::code`] turns a voltage into the spec's ADC code
//!   (`model.adc().code(out.output_v)`); `model.temperature()` gives the
//!   spec's range and reference.
//!
//! Example:
//! ```no_run
//! use host_tools::element::{ElementKind, example_spec, response};
//! let spec = example_spec(ElementKind::Bridge);
//! let out = response(&spec, 25.0, 10.0)?;
//! println!("{} V at 10 bar, bridge {} ohm", out.output_v, out.resistance_ohm);
//! # Ok::<(), host_tools::element::ElementError>(())
//! ```

pub mod bridge;
pub mod bridge_spec;
pub mod cache;
pub mod drift;
pub mod error;
pub mod examples;
pub mod hall;
pub mod hall_spec;
pub mod kanda;
pub mod locate;
pub mod model;
pub mod output;
pub mod sample;
pub mod smith;
pub mod spec;

pub use bridge::{ArmState, BridgeModel, BridgeState, bridge_input_resistance, bridge_ratio};
pub use bridge_spec::{ArmSpec, BridgeSpec, DieSpec, Orientation};
pub use drift::{DriftCurve, DriftRow, DriftSummary, drift_curve, drift_curve_of};
pub use error::{ElementError, SpecError};
pub use examples::{example_spec, example_text};
pub use hall::{HallModel, HallState};
pub use hall_spec::{HallSpec, PlateSpec};
pub use model::{ElementModel, ElementState, response};
pub use output::{ElementOutput, Excitation};
pub use smith::{Carrier, Direction};
pub use spec::{
    AdcSpec, ElementKind, ElementSpec, ExcitationMode, ExcitationSpec, OutputUnit, SignalsSpec,
    StimulusSpec, TempSignal, TemperatureSpec, parse_spec,
};
