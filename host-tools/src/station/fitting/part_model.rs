//! The model of one fitted part: the full model's temperature shapes
//! ([`ShapeCurves`]) scaled and bent by the part's own physical parameters.
//!
//! - temperature signal:
//!   `signal_ref * exp(beta * L(T) + curv * L(T)^2 + act_k * (1/T_ref - 1/T))`,
//!   L = ln rho(T)/rho(T_ref) of the full model: the part's log-resistance
//!   is a quadratic function of the model's log-resistivity. `beta` absorbs
//!   a model TCR that is off (another published mobility variant: Arora's
//!   own formula and the Masetti/Arora pairing differ by up to 1.6x at
//!   2e18 cm^-3), `curv` the difference in curvature such a variant brings.
//!   The calibration fits `signal_ref, beta, curv`; the Arrhenius term
//!   `act_k` (kelvin; an error in the ionized fraction) stays in the model
//!   and the part file but is held at 0 since the full model's ionization
//!   and mobility were made consistent (physics/mobility.rs): on the
//!   well-logger's simulated lot the quadratic term leaves ~0.01 K between
//!   the chamber points and ~0.1 K at -40 and 125 C where the Arrhenius term
//!   left ~0.17 K and ~1 K;
//! - offset: `offset_ref + mismatch * g(T) + offset_curvature * g(T)^2`, g
//!   the offset shape: the doping sensitivity of rho for a bridge (the
//!   curvature term absorbs the error of the model's least certain shape:
//!   d ln(rho)/d ln(N) against temperature differs by about 2x between the
//!   Masetti/Arora pairing and Arora's own formula at 2e18 cm^-3); for a Hall plate the plate resistance
//!   ratio itself, `signal(T) / signal_ref - 1`, so the thermometer's fitted
//!   TCR also shapes the offset (both are the same resistor); plus a linear
//!   residual term for packaging stress;
//! - sensitivity (output per stimulus unit):
//!   `sens_ref * exp(S(T) + doping_shift * D(T)) * (1 + span_tc_per_k * (T - T_ref))`,
//!   S the piezo-factor (bridge) or Hall-coefficient (plate) shape, D its
//!   doping derivative (effective doping = nominal * exp(doping_shift)), and a
//!   small linear residual term for packaging stress the physics leaves out.

use crate::station::curves::{OffsetShape, ShapeCurves};
use crate::station::design::model::DesignPartModel;
use crate::station::part_file::PartFile;

/// Names of the fitted parameters, in [`PartParams::to_vec`] order.
pub const PARAM_NAMES: [&str; 11] = [
    "signal_ref",
    "signal_beta",
    "signal_act_k",
    "offset_ref",
    "mismatch",
    "offset_tc_per_k",
    "sens_ref",
    "doping_shift",
    "span_tc_per_k",
    "signal_curvature",
    "offset_curvature",
];

/// The per-part parameters of the physical model.
#[derive(Debug, Clone, Copy, PartialEq, Default, serde::Serialize, serde::Deserialize)]
pub struct PartParams {
    /// Temperature signal at the reference temperature (spec units).
    pub signal_ref: f64,
    /// Exponent on the full model's resistivity ratio (1 = model TCR).
    pub signal_beta: f64,
    /// Arrhenius correction of the thermometer, K.
    pub signal_act_k: f64,
    /// Output offset at the reference temperature (output units).
    pub offset_ref: f64,
    /// Amplitude of the offset shape (output units).
    pub mismatch: f64,
    /// Residual linear offset drift (output units per K): packaging stress.
    pub offset_tc_per_k: f64,
    /// Sensitivity at the reference temperature (output units per stimulus unit).
    pub sens_ref: f64,
    /// ln(N_eff / N_nominal) as seen by the span shape.
    pub doping_shift: f64,
    /// Residual linear span drift in 1/K (packaging stress).
    pub span_tc_per_k: f64,
    /// Coefficient of `L(T)^2` in the log of the temperature signal (0 in
    /// part files written before it existed).
    #[serde(default)]
    pub signal_curvature: f64,
    /// Coefficient of `g(T)^2` in the offset, output units (0 in part files
    /// written before it existed).
    #[serde(default)]
    pub offset_curvature: f64,
}

impl PartParams {
    /// The parameters as a vector in [`PARAM_NAMES`] order.
    pub fn to_vec(&self) -> [f64; 11] {
        [
            self.signal_ref,
            self.signal_beta,
            self.signal_act_k,
            self.offset_ref,
            self.mismatch,
            self.offset_tc_per_k,
            self.sens_ref,
            self.doping_shift,
            self.span_tc_per_k,
            self.signal_curvature,
            self.offset_curvature,
        ]
    }

    /// Parameters from a vector in [`PARAM_NAMES`] order.
    pub fn from_slice(v: &[f64; 11]) -> PartParams {
        PartParams {
            signal_ref: v[0],
            signal_beta: v[1],
            signal_act_k: v[2],
            offset_ref: v[3],
            mismatch: v[4],
            offset_tc_per_k: v[5],
            sens_ref: v[6],
            doping_shift: v[7],
            span_tc_per_k: v[8],
            signal_curvature: v[9],
            offset_curvature: v[10],
        }
    }
}

/// A fitted part: parameters plus the element's shapes.
#[derive(Debug, Clone, Copy)]
pub struct PartModel<'a> {
    /// Tabulated full-model shapes of the element.
    pub curves: &'a ShapeCurves,
    /// The part's parameters.
    pub params: PartParams,
}

impl PartModel<'_> {
    /// Temperature signal at `t_c`.
    pub fn signal(&self, t_c: f64) -> f64 {
        let c = self.curves;
        let p = &self.params;
        let arrhenius = 1.0 / (c.t_ref_c + 273.15) - 1.0 / (t_c + 273.15);
        let l = c.interp(&c.ln_rho_rel, t_c);
        p.signal_ref
            * ((p.signal_beta + p.signal_curvature * l) * l + p.signal_act_k * arrhenius).exp()
    }

    /// Offset (output at zero stimulus) at `t_c`.
    pub fn offset(&self, t_c: f64) -> f64 {
        let c = self.curves;
        let g = match c.offset_kind {
            OffsetShape::DopingSensitivity => c.interp(&c.offset_shape, t_c),
            OffsetShape::Resistivity => self.signal(t_c) / self.params.signal_ref - 1.0,
        };
        let p = &self.params;
        p.offset_ref
            + (p.mismatch + p.offset_curvature * g) * g
            + p.offset_tc_per_k * (t_c - c.t_ref_c)
    }

    /// Sensitivity (output per stimulus unit) at `t_c`.
    pub fn sensitivity(&self, t_c: f64) -> f64 {
        let c = self.curves;
        let p = &self.params;
        let shape = c.interp(&c.ln_gain_rel, t_c) + p.doping_shift * c.interp(&c.ln_gain_dlnn, t_c);
        p.sens_ref * shape.exp() * (1.0 + p.span_tc_per_k * (t_c - c.t_ref_c))
    }

    /// Raw output at `t_c` and `stimulus`.
    pub fn output(&self, t_c: f64, stimulus: f64) -> f64 {
        self.offset(t_c) + self.sensitivity(t_c) * stimulus
    }

    /// The stimulus that gives `output` at `t_c` (the compensation itself).
    pub fn stimulus(&self, output: f64, t_c: f64) -> f64 {
        (output - self.offset(t_c)) / self.sensitivity(t_c)
    }

    /// Temperature whose model signal equals `signal`: bisection on the
    /// tabulated range, which the signal must cross monotonically; outside the
    /// range the nearest end is returned (the firmware clamps the same way).
    pub fn temperature(&self, signal: f64) -> f64 {
        let c = self.curves;
        crate::station::design::model::bisect(&|t| self.signal(t) - signal, c.t0_c, c.t_max_c())
    }

    /// d(signal)/dT at `t_c`, per kelvin.
    pub fn signal_slope(&self, t_c: f64) -> f64 {
        let c = self.curves;
        let t_k = t_c + 273.15;
        let l = c.interp(&c.ln_rho_rel, t_c);
        self.signal(t_c)
            * ((self.params.signal_beta + 2.0 * self.params.signal_curvature * l)
                * c.slope(&c.ln_rho_rel, t_c)
                + self.params.signal_act_k / (t_k * t_k))
    }
}

/// A part's fitted model, physics-only or on a design: the one interface
/// tables, verification and `apply` evaluate.
// The design variant carries its combined curve weights (a few hundred
// bytes) so that evaluating it needs no allocation; frames copy the model
// rarely, so boxing would buy nothing.
#[allow(clippy::large_enum_variant)]
#[derive(Debug, Clone, Copy)]
pub enum FittedModel<'a> {
    /// Physics shapes scaled and bent by the part's parameters.
    Physics(PartModel<'a>),
    /// The design's learned curves with the part's coefficients.
    Design(DesignPartModel<'a>),
}

impl<'a> From<PartModel<'a>> for FittedModel<'a> {
    fn from(m: PartModel<'a>) -> Self {
        FittedModel::Physics(m)
    }
}

impl<'a> From<DesignPartModel<'a>> for FittedModel<'a> {
    fn from(m: DesignPartModel<'a>) -> Self {
        FittedModel::Design(m)
    }
}

impl<'a> FittedModel<'a> {
    /// The full model's shapes the model is built on (its grid bounds the
    /// temperatures it can be evaluated at).
    pub fn curves(&self) -> &'a ShapeCurves {
        match self {
            FittedModel::Physics(m) => m.curves,
            FittedModel::Design(m) => m.curves(),
        }
    }

    /// Temperature signal at `t_c`.
    pub fn signal(&self, t_c: f64) -> f64 {
        match self {
            FittedModel::Physics(m) => m.signal(t_c),
            FittedModel::Design(m) => m.signal(t_c),
        }
    }

    /// Offset (terminal line at zero stimulus) at `t_c`.
    pub fn offset(&self, t_c: f64) -> f64 {
        match self {
            FittedModel::Physics(m) => m.offset(t_c),
            FittedModel::Design(m) => m.offset(t_c),
        }
    }

    /// Sensitivity (terminal-line slope) at `t_c`.
    pub fn sensitivity(&self, t_c: f64) -> f64 {
        match self {
            FittedModel::Physics(m) => m.sensitivity(t_c),
            FittedModel::Design(m) => m.sensitivity(t_c),
        }
    }

    /// Raw output of the terminal line at `t_c` and (apparent) `stimulus`.
    pub fn output(&self, t_c: f64, stimulus: f64) -> f64 {
        self.offset(t_c) + self.sensitivity(t_c) * stimulus
    }

    /// The (apparent) stimulus that gives `output` at `t_c`.
    pub fn stimulus(&self, output: f64, t_c: f64) -> f64 {
        (output - self.offset(t_c)) / self.sensitivity(t_c)
    }

    /// Temperature whose signal equals `signal`.
    pub fn temperature(&self, signal: f64) -> f64 {
        match self {
            FittedModel::Physics(m) => m.temperature(signal),
            FittedModel::Design(m) => m.temperature(signal),
        }
    }

    /// d(signal)/dT at `t_c`.
    pub fn signal_slope(&self, t_c: f64) -> f64 {
        match self {
            FittedModel::Physics(m) => m.signal_slope(t_c),
            FittedModel::Design(m) => m.signal_slope(t_c),
        }
    }

    /// The part's own mid-scale nonlinearity at `t_c`, fraction of span
    /// (`None`: the model has none; a scenario may still state one).
    pub fn bow_mid(&self, t_c: f64) -> Option<f64> {
        match self {
            FittedModel::Physics(_) => None,
            FittedModel::Design(m) => m.bow_mid(t_c),
        }
    }
}

impl PartFile {
    /// The part's fitted model on `curves` (the full model's shapes of its
    /// scenario, [`crate::station::model_shapes::shapes_for`]).
    pub fn model<'a>(&'a self, curves: &'a ShapeCurves) -> FittedModel<'a> {
        match &self.design {
            Some(d) => DesignPartModel::new(&d.core, curves, &d.fit).into(),
            None => PartModel {
                curves,
                params: self.params.unwrap_or_default(),
            }
            .into(),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::station::curves::analytic_curves;

    /// With a cross term in ln rho, so that the offset shape is not flat.
    fn curves() -> ShapeCurves {
        analytic_curves(0.05)
    }

    #[test]
    fn stimulus_inverts_output_and_temperature_inverts_signal() {
        let c = curves();
        let m = PartModel {
            curves: &c,
            params: PartParams {
                signal_ref: 5000.0,
                signal_beta: 1.03,
                signal_act_k: 30.0,
                offset_ref: 1.5e-3,
                mismatch: 2e-3,
                offset_tc_per_k: 1e-6,
                sens_ref: 2e-3,
                doping_shift: 0.1,
                span_tc_per_k: 2e-5,
                signal_curvature: 0.3,
                offset_curvature: 0.05,
            },
        };
        // (t_c, stimulus)
        for (t_c, s) in [
            (-40.0, 0.0),
            (-20.0, 3.3),
            (25.0, 10.0),
            (85.0, 7.0),
            (125.0, 1.0),
        ] {
            let out = m.output(t_c, s);
            let back = m.stimulus(out, t_c);
            // Exact algebraic inverse: only rounding (~1e-16 relative of out).
            assert!((back - s).abs() < 1e-9, "t {t_c} s {s}: got {back}");
            let t_back = m.temperature(m.signal(t_c));
            // Bisection to f64 resolution; the signal is monotone here.
            assert!((t_back - t_c).abs() < 1e-9, "t {t_c}: got {t_back}");
        }
        // At the reference temperature every shape is zero by construction.
        assert!((m.offset(25.0) - 1.5e-3).abs() < 1e-15);
        assert!((m.sensitivity(25.0) - 2e-3).abs() < 1e-15);
        assert!((m.signal(25.0) - 5000.0).abs() < 1e-9);
    }
}
