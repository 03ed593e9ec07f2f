//! Designs: what a qualification lot of one design teaches the station, and
//! production calibration on it.
//!
//! No element is the textbook model: process, implant profile and packaging
//! move it. A qualification lot (parts of the design measured at many
//! temperatures and stimuli) decides how far each curve departs from the
//! full model's shapes and in which few shapes parts differ ([`learn`]); a
//! production part measured at a few temperatures is then fitted on those
//! curves ([`calibrate`]), and the lot's leave-one-part-out error for the
//! production plan is the model-error term tables and verification budget.

pub mod basis;
pub mod calibrate;
pub mod file;
pub mod learn;
pub mod model;
pub mod reduce;

pub use file::{DesignFile, DesignFileError, OutlierLimits};
pub use learn::{ProductionPlan, QualifyError};

use super::chamber::ChamberData;

use super::curves::ShapeCurves;
use super::scenario::Scenario;

/// How many lot standard deviations a production part's coefficient may sit
/// from the qualification lot's mean before the part is reported as an
/// outlier. Screening limits of 3..6 sigma are common practice; 8 leaves
/// room for a production lot somewhat wider than a small qualification lot
/// (with 10 parts the standard deviation itself is uncertain by ~25 %)
/// while a cracked die or another design's part lands far beyond it.
pub const OUTLIER_SIGMA: f64 = 8.0;

/// Production-fit residual limit as a multiple of the qualification lot's
/// largest one (see [`OUTLIER_SIGMA`] for the reasoning).
pub const OUTLIER_RESIDUAL_FACTOR: f64 = 4.0;

/// Learns a design from `data` (read from `file`) for production `plan` and
/// returns the design file.
pub fn qualify(
    scenario: &Scenario,
    curves: &ShapeCurves,
    data: &ChamberData,
    file: &str,
    plan: &ProductionPlan,
) -> Result<DesignFile, QualifyError> {
    let learned = learn::learn(scenario, curves, data, file, plan)?;
    // The residual floor: ten times the output noise, so that a noise-free
    // qualification lot does not make every production part an outlier.
    let noise_ppm = scenario.output_adc.noise_rms.max(scenario.output_adc.lsb())
        / learned.core.span_scale
        * 1e6;
    let outlier = OutlierLimits {
        max_sigma: OUTLIER_SIGMA,
        max_residual_ppm: (OUTLIER_RESIDUAL_FACTOR * learned.plan_error.residual_max_ppm)
            .max(10.0 * noise_ppm),
    };
    Ok(DesignFile::new(scenario, learned, file, outlier))
}

/// Production plans of three chamber temperatures among the qualification
/// lot's, each cross-validated on the lot: the coldest within 15 K above
/// the operating range's start, the hottest within 15 K below its end, any
/// one between. Sorted by the worst error inside the operating range, then
/// everywhere; at most `keep` plans. Costs one qualification per plan.
pub fn suggest_plans(
    scenario: &Scenario,
    curves: &ShapeCurves,
    data: &ChamberData,
    file: &str,
    stimuli: &[f64],
    keep: usize,
) -> Vec<learn::PlanError> {
    use rayon::prelude::*;
    let mut temps: Vec<f64> = data.rows.iter().map(|r| r.chamber_c).collect();
    temps.sort_by(f64::total_cmp);
    temps.dedup_by(|a, b| (*a - *b).abs() <= reduce::SAME_STEP_K);
    let (lo, hi) = scenario.range_c;
    let mut plans = Vec::new();
    for (i, &a) in temps.iter().enumerate() {
        for (j, &b) in temps.iter().enumerate().skip(i + 1) {
            for &c in temps.iter().skip(j + 1) {
                if a <= lo + 15.0 && c >= hi - 15.0 {
                    plans.push(ProductionPlan {
                        temps_c: vec![a, b, c],
                        stimuli: stimuli.to_vec(),
                    });
                }
            }
        }
    }
    let mut out: Vec<learn::PlanError> = plans
        .par_iter()
        .filter_map(|p| learn::learn(scenario, curves, data, file, p).ok())
        .map(|l| l.plan_error)
        .collect();
    out.sort_by(|x, y| {
        x.operating_range_ppm
            .total_cmp(&y.operating_range_ppm)
            .then(x.all_ppm.total_cmp(&y.all_ppm))
    });
    out.truncate(keep);
    out
}
