//! Production calibration of one part on a design: the linear fit of
//! [`super::model::fit_part`], the outlier screen against the qualification
//! lot, and the part file.

use super::super::calibrate::{max_abs, rms};
use super::super::chamber::ChamberRow;
use super::super::curves::ShapeCurves;
use super::super::part_file::{FitPoint, PART_FORMAT, PartDesign, PartFile};
use super::super::polynomial::PolyCal;
use super::super::scenario::Scenario;
use super::file::DesignFile;
use super::learn::reading_error_ppm;
use super::model::{DesignPartModel, PartFit, fit_part};

/// Largest |coefficient - lot mean| / lot sd over every family and
/// coefficient, with the coefficient's name.
fn worst_sigma(design: &DesignFile, fit: &PartFit) -> (f64, String) {
    let mut worst = (0.0f64, String::new());
    for f in &fit.families {
        let fam = design.core.family(f.family);
        for (j, v) in f.values.iter().enumerate() {
            let (Some(m), Some(sd)) = (fam.coef_mean.get(j), fam.coef_sd.get(j)) else {
                continue;
            };
            // A coefficient the lot did not spread at all (sd 0) is judged
            // against 1e-12 of its mean, i.e. it must match to rounding.
            let sd = sd.max(1e-12 * m.abs()).max(f64::MIN_POSITIVE);
            let z = ((v - m) / sd).abs();
            if z > worst.0 || !z.is_finite() {
                let what = if j == 0 {
                    format!("{} reference", f.family.name())
                } else {
                    format!("{} mode {j}", f.family.name())
                };
                worst = (z, what);
            }
        }
    }
    worst
}

/// Calibrates one part on `design` (whose scenario check the caller did).
pub fn calibrate_on_design(
    scenario: &Scenario,
    curves: &ShapeCurves,
    design: &DesignFile,
    serial: &str,
    rows: &[&ChamberRow],
) -> PartFile {
    let fs = scenario.stimulus_fs;
    let core = &design.core;
    // Readings on the ADC's rails say nothing about the part.
    let rows: Vec<&ChamberRow> = rows
        .iter()
        .copied()
        .filter(|r| !scenario.output_adc.at_rail(r.output))
        .collect();
    let rows = &rows[..];
    let polynomial = PolyCal::fit_with_bow(rows, fs).ok();
    let mut part = PartFile {
        format: PART_FORMAT.into(),
        serial: serial.into(),
        status: String::new(),
        scenario: scenario.clone(),
        params: None,
        param_names: Vec::new(),
        std_errors: Vec::new(),
        covariance: Vec::new(),
        condition: f64::INFINITY,
        thermometer_rms_k: f64::NAN,
        thermometer_max_k: f64::NAN,
        signal_noise_k: f64::NAN,
        fit_rms_ppm: f64::NAN,
        fit_max_ppm: f64::NAN,
        points: Vec::new(),
        polynomial,
        holdout_max_ppm: None,
        holdout_thermometer_max_k: None,
        holdouts: Vec::new(),
        model_error: format!(
            "measured: {:.1} ppm of span inside the operating range, worst held-out error of the production plan on the {}-part qualification lot of design {}",
            design.plan_error.operating_range_ppm,
            design.qualification.parts,
            &design.hash[..16]
        ),
        design: None,
    };
    let fit = match fit_part(core, curves, rows) {
        Ok(f) => f,
        Err(e) => {
            part.status = e.to_string();
            return finish(part);
        }
    };
    let temps = fit.steps.len();
    if temps < core.min_temperatures() {
        part.status = format!(
            "too few points: {temps} usable chamber temperatures (the design's curves need {})",
            core.min_temperatures()
        );
    }
    let model = DesignPartModel::new(core, curves, &fit.families);
    let points: Vec<FitPoint> = rows
        .iter()
        .map(|r| {
            let residual_ppm = -reading_error_ppm(&model, fs, r.output, r.temp_signal, r.stimulus);
            FitPoint::of(r, model.temperature(r.temp_signal), residual_ppm)
        })
        .collect();
    part.thermometer_rms_k = rms(&mut points.iter().map(|p| p.thermometer_residual_k));
    part.thermometer_max_k = max_abs(&mut points.iter().map(|p| p.thermometer_residual_k));
    part.fit_rms_ppm = rms(&mut points.iter().map(|p| p.residual_ppm));
    part.fit_max_ppm = max_abs(&mut points.iter().map(|p| p.residual_ppm));
    part.signal_noise_k =
        scenario.signal_adc.noise_rms / model.signal_slope(scenario.t_ref_c).abs();
    part.condition = fit.condition;
    part.points = points;
    let (sigma, what) = worst_sigma(design, &fit);
    if part.status.is_empty() {
        part.status = if sigma.is_nan() || sigma > design.outlier.max_sigma {
            format!(
                "outlier: {what} is {sigma:.1} lot standard deviations from the qualification lot's mean (limit {})",
                design.outlier.max_sigma
            )
        } else if part.fit_max_ppm.is_nan() || part.fit_max_ppm > design.outlier.max_residual_ppm {
            format!(
                "outlier: fit residual {:.1} ppm of span (qualification lot limit {:.1} ppm)",
                part.fit_max_ppm, design.outlier.max_residual_ppm
            )
        } else if !fit.skipped.is_empty() {
            format!(
                "unusable chamber step at {} C: {}",
                fit.skipped[0].0, fit.skipped[0].1
            )
        } else {
            "ok".into()
        };
    }
    part.design = Some(PartDesign {
        design_hash: design.hash.clone(),
        model_error_ppm: design.plan_error.operating_range_ppm,
        outlier_sigma: sigma,
        core: core.clone(),
        fit: fit.families,
    });
    finish(part)
}

/// Non-finite figures of a failed fit are written as 0 with the status
/// saying why (the part file stays readable JSON).
fn finish(mut part: PartFile) -> PartFile {
    for x in [
        &mut part.thermometer_rms_k,
        &mut part.thermometer_max_k,
        &mut part.signal_noise_k,
        &mut part.fit_rms_ppm,
        &mut part.fit_max_ppm,
    ] {
        if !x.is_finite() {
            *x = 0.0;
        }
    }
    part
}
