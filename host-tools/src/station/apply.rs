//! Compensating recorded raw rows the way the firmware does, and the error of
//! each row against its reference stimulus in ppm of span.

use super::chamber::ChamberRow;
use super::curves::ShapeCurves;
use super::part_file::PartFile;
use super::part_model::PartModel;

/// One compensated row.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct AppliedRow {
    /// Serial number.
    pub serial: String,
    /// Chamber set point, C.
    pub chamber_c: f64,
    /// Reference stimulus.
    pub stimulus: f64,
    /// Temperature read from the temperature signal, C.
    pub t_est_c: f64,
    /// Compensated stimulus.
    pub compensated: f64,
    /// Error (compensated minus reference), ppm of span.
    pub error_ppm: f64,
    /// Uncompensated error: raw output read with the reference-temperature
    /// offset and sensitivity only, ppm of span.
    pub raw_error_ppm: f64,
}

/// A compensation method: raw (output, temperature signal) to (stimulus, temperature).
pub trait Compensation {
    /// Compensated stimulus and the temperature used, from raw readings.
    fn compensate(&self, output: f64, temp_signal: f64) -> (f64, f64);
}

/// The physics fit of a part, evaluated in f64 (what the table approximates).
pub struct ModelCompensation<'a> {
    /// The fitted part model.
    pub model: PartModel<'a>,
}

impl Compensation for ModelCompensation<'_> {
    fn compensate(&self, output: f64, temp_signal: f64) -> (f64, f64) {
        let t = self.model.temperature(temp_signal);
        (self.model.stimulus(output, t), t)
    }
}

/// The usual-practice polynomial stored in the part file.
pub struct PolyCompensation(pub super::polynomial::PolyCal);

impl Compensation for PolyCompensation {
    fn compensate(&self, output: f64, temp_signal: f64) -> (f64, f64) {
        (
            self.0.stimulus(output, temp_signal),
            self.0.temperature(temp_signal),
        )
    }
}

/// Applies a compensation to rows of one part.
pub fn apply_rows(
    part: &PartFile,
    curves: &ShapeCurves,
    method: &dyn Compensation,
    rows: &[&ChamberRow],
) -> Vec<AppliedRow> {
    let fs = part.scenario.fs_width();
    let model = PartModel {
        curves,
        params: part.params,
    };
    let t_ref = part.scenario.t_ref_c;
    rows.iter()
        .map(|r| {
            let (s, t) = method.compensate(r.output, r.temp_signal);
            let raw = (r.output - model.offset(t_ref)) / model.sensitivity(t_ref);
            AppliedRow {
                serial: r.serial.clone(),
                chamber_c: r.chamber_c,
                stimulus: r.stimulus,
                t_est_c: t,
                compensated: s,
                error_ppm: (s - r.stimulus) / fs * 1e6,
                raw_error_ppm: (raw - r.stimulus) / fs * 1e6,
            }
        })
        .collect()
}
