//! Drift curves: span, offset and resistance over temperature under both
//! drives, and their temperature coefficients at the reference temperature.
//!
//! Span is the output at full-scale stimulus minus the output at zero;
//! `span_rel` is span over span at the reference temperature; offsets are in
//! ppm of the span at the reference temperature. The other drive is compared
//! at the same operating point at the reference temperature (same voltage
//! and current there), so the two columns differ only in how they drift.

use super::error::ElementError;
use super::model::{ElementModel, ElementState};
use super::output::Excitation;
use super::spec::{ElementKind, ElementSpec, ExcitationMode};
use crate::physics::HallFactorSource;
use crate::physics::constants::ZERO_C_K;
use serde::Serialize;

/// Half-width of the central difference of the temperature coefficients, in
/// kelvin: small against the curvature of the drift (third-derivative error
/// below 1 ppm/K for drifts of a few 1000 ppm/K) yet far above rounding.
pub const TC_STEP_K: f64 = 0.5;

/// One temperature of a drift curve.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct DriftRow {
    /// Temperature in degrees Celsius.
    pub t_c: f64,
    /// Temperature in kelvin.
    pub t_k: f64,
    /// Span under the spec's drive, in volts.
    pub span_v: f64,
    /// Span over span at the reference temperature, spec's drive.
    pub span_rel: f64,
    /// Zero-stimulus output under the spec's drive, in volts.
    pub offset_v: f64,
    /// Zero-stimulus output in ppm of the reference span, spec's drive.
    pub offset_ppm_fs: f64,
    /// Input resistance at zero stimulus in ohms.
    pub resistance_ohm: f64,
    /// Resistance over resistance at the reference temperature.
    pub resistance_rel: f64,
    /// Voltage across the element under the spec's drive, in volts.
    pub excitation_v: f64,
    /// Current through the element under the spec's drive, in amperes.
    pub excitation_a: f64,
    /// span_rel under constant voltage.
    pub span_rel_cv: f64,
    /// span_rel under constant current.
    pub span_rel_cc: f64,
    /// offset_ppm_fs under constant voltage.
    pub offset_ppm_fs_cv: f64,
    /// offset_ppm_fs under constant current.
    pub offset_ppm_fs_cc: f64,
    /// Kanda's P(N, T) of arm 1 (bridges only).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub piezo_factor: Option<f64>,
    /// Hall coefficient in cm^3/C (Hall plates only).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub hall_coefficient_cm3_c: Option<f64>,
    /// Hall mobility |R_H|/rho in cm^2/(V s) (Hall plates only).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub hall_mobility_cm2_vs: Option<f64>,
    /// Hall factor of the plate's majority carrier (Hall plates only).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub hall_factor: Option<f64>,
}

/// Temperature coefficients at the reference temperature.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct DriftSummary {
    /// Reference temperature in degrees Celsius.
    pub reference_c: f64,
    /// The spec's drive: `voltage` or `current`.
    pub excitation_mode: ExcitationMode,
    /// Span at the reference temperature under the spec's drive, in volts.
    pub span_ref_v: f64,
    /// Input resistance at the reference temperature in ohms.
    pub resistance_ref_ohm: f64,
    /// Temperature coefficient of span, spec's drive, ppm/K.
    pub tcs_ppm_per_k: f64,
    /// Temperature coefficient of offset, spec's drive, ppm of span per K.
    pub tco_ppm_fs_per_k: f64,
    /// Temperature coefficient of the input resistance, ppm/K.
    pub tcr_ppm_per_k: f64,
    /// TCS under constant voltage, ppm/K.
    pub tcs_cv_ppm_per_k: f64,
    /// TCS under constant current, ppm/K (about TCS_cv + TCR).
    pub tcs_cc_ppm_per_k: f64,
    /// TCO under constant voltage, ppm of span per K.
    pub tco_cv_ppm_fs_per_k: f64,
    /// TCO under constant current, ppm of span per K.
    pub tco_cc_ppm_fs_per_k: f64,
    /// One ADC step in ppm of the reference span (spec's drive).
    pub adc_lsb_ppm_fs: f64,
    /// Source of the Hall factor behind the plate's drift (Hall plates only).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub hall_factor_source: Option<HallFactorSource>,
}

/// A drift curve: rows over temperature and the coefficients at the reference.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct DriftCurve {
    /// `bridge` or `hall`.
    pub kind: ElementKind,
    /// One row per requested temperature.
    pub rows: Vec<DriftRow>,
    /// Temperature coefficients at the reference temperature.
    pub summary: DriftSummary,
}

/// Span and offset at one state under one drive, in volts.
fn span_offset(state: &ElementState, full_scale: f64, drive: Excitation) -> (f64, f64) {
    let zero = state.response(0.0, drive).output_v;
    (state.response(full_scale, drive).output_v - zero, zero)
}

/// The drives compared: (spec's, constant voltage, constant current), the
/// latter two at the spec's operating point at the reference temperature.
struct Drives {
    own: Excitation,
    cv: Excitation,
    cc: Excitation,
}

/// Spans of each drive at the reference temperature, in volts.
struct RefSpans {
    own: f64,
    cv: f64,
    cc: f64,
    resistance_ohm: f64,
}

/// Drift curve of the element described by `spec` at `temps_c` (degrees Celsius).
pub fn drift_curve(spec: &ElementSpec, temps_c: &[f64]) -> Result<DriftCurve, ElementError> {
    let model = ElementModel::new(spec)?;
    let common = spec.common();
    drift_curve_of(
        &model,
        spec.kind(),
        common.temperature.reference_c,
        common.adc.lsb_v(),
        temps_c,
    )
}

/// Drift curve of a prepared model; `reference_c` sets span_rel and the
/// coefficients, `adc_lsb_v` the converter step of the summary.
pub fn drift_curve_of(
    model: &ElementModel,
    kind: ElementKind,
    reference_c: f64,
    adc_lsb_v: f64,
    temps_c: &[f64],
) -> Result<DriftCurve, ElementError> {
    let fs = model.full_scale();
    let reference = model.state(reference_c)?;
    let own = model.excitation();
    let r_ref = reference.resistance_ohm();
    let drives = Drives {
        own,
        cv: own.equivalent(ExcitationMode::Voltage, r_ref),
        cc: own.equivalent(ExcitationMode::Current, r_ref),
    };
    let refs = RefSpans {
        own: span_offset(&reference, fs, drives.own).0,
        cv: span_offset(&reference, fs, drives.cv).0,
        cc: span_offset(&reference, fs, drives.cc).0,
        resistance_ohm: r_ref,
    };
    let rows = temps_c
        .iter()
        .map(|&t_c| Ok(row(&model.state(t_c)?, t_c, fs, &drives, &refs)))
        .collect::<Result<Vec<_>, ElementError>>()?;
    let below = model.state(reference_c - TC_STEP_K)?;
    let above = model.state(reference_c + TC_STEP_K)?;
    let slope = |f: &dyn Fn(&ElementState) -> f64| (f(&above) - f(&below)) / (2.0 * TC_STEP_K);
    let tcs = |d: Excitation, span_ref: f64| 1e6 * slope(&|s| span_offset(s, fs, d).0) / span_ref;
    let tco = |d: Excitation, span_ref: f64| 1e6 * slope(&|s| span_offset(s, fs, d).1) / span_ref;
    let summary = DriftSummary {
        reference_c,
        excitation_mode: own.mode(),
        span_ref_v: refs.own,
        resistance_ref_ohm: r_ref,
        tcs_ppm_per_k: tcs(drives.own, refs.own),
        tco_ppm_fs_per_k: tco(drives.own, refs.own),
        tcr_ppm_per_k: 1e6 * slope(&|s| s.resistance_ohm()) / r_ref,
        tcs_cv_ppm_per_k: tcs(drives.cv, refs.cv),
        tcs_cc_ppm_per_k: tcs(drives.cc, refs.cc),
        tco_cv_ppm_fs_per_k: tco(drives.cv, refs.cv),
        tco_cc_ppm_fs_per_k: tco(drives.cc, refs.cc),
        adc_lsb_ppm_fs: 1e6 * adc_lsb_v / refs.own.abs(),
        hall_factor_source: match &reference {
            ElementState::Hall(h) => Some(h.hall_factor_source),
            ElementState::Bridge(_) => None,
        },
    };
    Ok(DriftCurve {
        kind,
        rows,
        summary,
    })
}

fn row(state: &ElementState, t_c: f64, fs: f64, drives: &Drives, refs: &RefSpans) -> DriftRow {
    let (span_v, offset_v) = span_offset(state, fs, drives.own);
    let (span_cv, offset_cv) = span_offset(state, fs, drives.cv);
    let (span_cc, offset_cc) = span_offset(state, fs, drives.cc);
    let at_zero = state.response(0.0, drives.own);
    let (piezo_factor, hall_coefficient_cm3_c, hall_mobility_cm2_vs, hall_factor) = match state {
        ElementState::Bridge(b) => (Some(b.arms[0].piezo_factor), None, None, None),
        ElementState::Hall(h) => (
            None,
            Some(h.hall_coefficient_cm3_c),
            Some(h.hall_mobility_cm2_vs),
            Some(h.hall_factor),
        ),
    };
    DriftRow {
        t_c,
        t_k: t_c + ZERO_C_K,
        span_v,
        span_rel: span_v / refs.own,
        offset_v,
        offset_ppm_fs: 1e6 * offset_v / refs.own,
        resistance_ohm: at_zero.resistance_ohm,
        resistance_rel: at_zero.resistance_ohm / refs.resistance_ohm,
        excitation_v: at_zero.excitation_v,
        excitation_a: at_zero.excitation_a,
        span_rel_cv: span_cv / refs.cv,
        span_rel_cc: span_cc / refs.cc,
        offset_ppm_fs_cv: 1e6 * offset_cv / refs.cv,
        offset_ppm_fs_cc: 1e6 * offset_cc / refs.cc,
        piezo_factor,
        hall_coefficient_cm3_c,
        hall_mobility_cm2_vs,
        hall_factor,
    }
}
