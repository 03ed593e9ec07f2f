//! Per-part calibration: the thermometer map, then the output model, each a
//! Levenberg-Marquardt fit of the part's physical parameters on the chamber
//! points; the polynomial baseline through the same points rides along.
//!
//! 1. Thermometer: `signal = signal_ref * exp(beta * L(T))` on the pairs
//!    (chamber temperature, temperature signal). `beta` absorbs a model TCR
//!    that is off by a few percent; the residual is reported in kelvin.
//! 2. Output: offset and sensitivity shapes of the full model (see
//!    [`super::part_model`]) against the temperature the fitted thermometer
//!    reads from each row's own signal, the same temperature the firmware
//!    will see, so chamber set-point errors do not enter the fit.

use super::chamber::ChamberRow;
use super::curves::ShapeCurves;
use super::fit::{FitOptions, FitProblem, FitResult, FitStatus, fit};
use super::part_file::{FitPoint, PART_FORMAT, PartFile, finite};
use super::part_model::{PARAM_NAMES, PartModel, PartParams};
use super::polynomial::PolyCal;
use super::scenario::{ElementKind, Scenario};

/// The output parameters fitted per element kind (indices into offset_ref,
/// mismatch, offset_tc_per_k, sens_ref, doping_shift, span_tc_per_k); the
/// others stay 0. Five each, so with the thermometer's three a part stores
/// 8 numbers, as many as the usual polynomial (2 + 3 + 3).
/// - Bridge: the offset needs the packaging term beside the mismatch shape
///   (the model's d ln(rho)/d ln(N) is the least certain shape); the span
///   keeps the nominal doping's P(N, T) shape plus a packaging slope.
/// - Hall plate: the offset follows the plate resistance, already fitted by
///   the thermometer, so the freed parameter goes to the effective doping
///   that bends the Hall-coefficient shape.
pub fn output_free(kind: ElementKind) -> &'static [usize] {
    match kind {
        ElementKind::Bridge => &[0, 1, 2, 3, 5],
        ElementKind::HallPlate => &[0, 1, 3, 4, 5],
    }
}

/// Thermometer fit: relative residual of the signal.
struct ThermoProblem<'a> {
    curves: &'a ShapeCurves,
    points: Vec<(f64, f64)>,
}

impl FitProblem for ThermoProblem<'_> {
    fn param_names(&self) -> &[&'static str] {
        &PARAM_NAMES[0..3]
    }
    fn n_residuals(&self) -> usize {
        self.points.len()
    }
    fn residuals(&self, p: &[f64], out: &mut [f64]) {
        let model = PartModel {
            curves: self.curves,
            params: PartParams::from_slice(&[p[0], p[1], p[2], 0.0, 0.0, 0.0, 1.0, 0.0, 0.0]),
        };
        for (o, &(t_c, sig)) in out.iter_mut().zip(&self.points) {
            *o = (model.signal(t_c) - sig) / sig;
        }
    }
    fn scales(&self) -> Vec<f64> {
        vec![self.points.first().map_or(1.0, |p| p.1.abs()), 1.0, 100.0]
    }
}

/// Output fit: residual in units of the initial full-scale span.
struct OutputProblem<'a> {
    curves: &'a ShapeCurves,
    thermo: [f64; 3],
    /// (temperature read by the thermometer, stimulus, output).
    points: Vec<(f64, f64, f64)>,
    span_scale: f64,
    /// Which output parameters are fitted (indices after the thermometer's).
    free: &'static [usize],
    names: Vec<&'static str>,
}

impl OutputProblem<'_> {
    fn params(&self, p: &[f64]) -> PartParams {
        let t = &self.thermo;
        let mut v = [t[0], t[1], t[2], 0.0, 0.0, 0.0, 0.0, 0.0, 0.0];
        for (&k, &x) in self.free.iter().zip(p) {
            v[3 + k] = x;
        }
        PartParams::from_slice(&v)
    }
}

impl FitProblem for OutputProblem<'_> {
    fn param_names(&self) -> &[&'static str] {
        &self.names
    }
    fn n_residuals(&self) -> usize {
        self.points.len()
    }
    fn residuals(&self, p: &[f64], out: &mut [f64]) {
        let model = PartModel {
            curves: self.curves,
            params: self.params(p),
        };
        for (o, &(t_c, s, y)) in out.iter_mut().zip(&self.points) {
            *o = (model.output(t_c, s) - y) / self.span_scale;
        }
    }
    fn scales(&self) -> Vec<f64> {
        let all = [
            self.span_scale,
            self.span_scale,
            self.span_scale * 1e-3,
            self.span_scale,
            0.1,
            1e-4,
        ];
        self.free.iter().map(|&k| all[k]).collect()
    }
}

fn distinct(mut v: Vec<f64>) -> usize {
    v.sort_by(f64::total_cmp);
    v.dedup_by(|a, b| (*a - *b).abs() <= 1e-9 * b.abs().max(1.0));
    v.len()
}

/// Straight line `y = a + b x` by least squares (for starting values).
fn line(points: &[(f64, f64)]) -> (f64, f64) {
    let n = points.len() as f64;
    let mx = points.iter().map(|p| p.0).sum::<f64>() / n;
    let my = points.iter().map(|p| p.1).sum::<f64>() / n;
    let sxx: f64 = points.iter().map(|p| (p.0 - mx).powi(2)).sum();
    let sxy: f64 = points.iter().map(|p| (p.0 - mx) * (p.1 - my)).sum();
    let b = if sxx > 0.0 { sxy / sxx } else { 0.0 };
    (my - b * mx, b)
}

fn status_text(thermo: &FitResult, output: &FitResult) -> String {
    match (&thermo.status, &output.status) {
        (FitStatus::Ok, FitStatus::Ok) => "ok".into(),
        (FitStatus::Ok, s) => format!("output fit {s}"),
        (s, _) => format!("thermometer fit {s}"),
    }
}

/// Calibrates one part from its rows (at least one row).
pub fn calibrate_part(
    scenario: &Scenario,
    curves: &ShapeCurves,
    serial: &str,
    rows: &[&ChamberRow],
) -> PartFile {
    let temps = distinct(rows.iter().map(|r| r.chamber_c).collect());
    let stimuli = distinct(rows.iter().map(|r| r.stimulus).collect());
    let t_ref = scenario.t_ref_c;

    // Starting values from the chamber step nearest the reference temperature.
    let nearest = rows
        .iter()
        .map(|r| r.chamber_c)
        .min_by(|a, b| (a - t_ref).abs().total_cmp(&(b - t_ref).abs()))
        .unwrap_or(t_ref);
    let at_ref: Vec<(f64, f64)> = rows
        .iter()
        .filter(|r| r.chamber_c == nearest)
        .map(|r| (r.stimulus, r.output))
        .collect();
    let (off0, sens0) = line(&at_ref);
    let sig0 = rows
        .iter()
        .filter(|r| r.chamber_c == nearest)
        .map(|r| r.temp_signal)
        .sum::<f64>()
        / at_ref.len().max(1) as f64;

    let thermo_problem = ThermoProblem {
        curves,
        points: rows.iter().map(|r| (r.chamber_c, r.temp_signal)).collect(),
    };
    let options = FitOptions::default();
    let thermo = fit(&thermo_problem, &[sig0, 1.0, 0.0], options);
    let th = [thermo.params[0], thermo.params[1], thermo.params[2]];
    let thermo_model = PartModel {
        curves,
        params: PartParams::from_slice(&[th[0], th[1], th[2], 0.0, 0.0, 0.0, 1.0, 0.0, 0.0]),
    };

    let free = output_free(scenario.kind);
    let fs = scenario.fs_width();
    let span_scale = (sens0 * fs).abs().max(f64::MIN_POSITIVE);
    let output_problem = OutputProblem {
        curves,
        thermo: th,
        points: rows
            .iter()
            .map(|r| {
                (
                    thermo_model.temperature(r.temp_signal),
                    r.stimulus,
                    r.output,
                )
            })
            .collect(),
        span_scale,
        free,
        names: free.iter().map(|&k| PARAM_NAMES[3 + k]).collect(),
    };
    let start_all = [off0, 0.0, 0.0, sens0, 0.0, 0.0];
    let start: Vec<f64> = free.iter().map(|&k| start_all[k]).collect();
    let output = fit(&output_problem, &start, options);
    let params = output_problem.params(&output.params);
    let model = PartModel { curves, params };
    let span = (params.sens_ref * fs).abs();

    let mut status = status_text(&thermo, &output);
    if temps < 3 || stimuli < 2 {
        status = format!(
            "too few points: {temps} distinct temperatures and {stimuli} distinct stimuli (need 3 and 2)"
        );
    }
    let points: Vec<FitPoint> = rows
        .iter()
        .map(|r| {
            let t_est = thermo_model.temperature(r.temp_signal);
            FitPoint {
                chamber_c: r.chamber_c,
                stimulus: r.stimulus,
                output: r.output,
                temp_signal: r.temp_signal,
                t_est_c: t_est,
                thermometer_residual_k: t_est - r.chamber_c,
                residual_ppm: (r.output - model.output(t_est, r.stimulus)) / span * 1e6,
            }
        })
        .collect();
    let rms = |v: &mut dyn Iterator<Item = f64>| {
        let (s, n) = v.fold((0.0, 0usize), |(s, n), x| (s + x * x, n + 1));
        (s / n.max(1) as f64).sqrt()
    };
    let max_abs = |v: &mut dyn Iterator<Item = f64>| v.fold(0.0f64, |m, x| m.max(x.abs()));

    let mut covariance = vec![vec![Some(0.0); 9]; 9];
    for (row, src) in covariance.iter_mut().zip(&thermo.covariance) {
        for (dst, &v) in row.iter_mut().zip(src) {
            *dst = finite(v);
        }
    }
    for (i, &ki) in free.iter().enumerate() {
        for (j, &kj) in free.iter().enumerate() {
            covariance[3 + ki][3 + kj] = finite(output.covariance[i][j]);
        }
    }
    let std_errors = (0..9)
        .map(|k| covariance[k][k].map(|v| v.max(0.0).sqrt()))
        .collect();
    let slope_ref = model.signal_slope(t_ref).abs();
    PartFile {
        format: PART_FORMAT.into(),
        serial: serial.into(),
        status,
        scenario: scenario.clone(),
        params,
        param_names: PARAM_NAMES.iter().map(|s| s.to_string()).collect(),
        std_errors,
        covariance,
        condition: thermo.condition.max(output.condition),
        thermometer_rms_k: rms(&mut points.iter().map(|p| p.thermometer_residual_k)),
        thermometer_max_k: max_abs(&mut points.iter().map(|p| p.thermometer_residual_k)),
        signal_noise_k: scenario.signal_adc.noise_rms / slope_ref,
        fit_rms_ppm: rms(&mut points.iter().map(|p| p.residual_ppm)),
        fit_max_ppm: max_abs(&mut points.iter().map(|p| p.residual_ppm)),
        points,
        polynomial: PolyCal::fit(rows).ok(),
    }
}

#[cfg(test)]
mod tests {
    use super::super::model_shapes::shapes_for;
    use super::super::simulate::{Plan, draw_parts, measure};
    use super::*;

    #[test]
    fn three_temperatures_fit_and_two_are_reported_ill_conditioned() {
        let sc = Scenario::well_logger();
        let curves = shapes_for(&sc).unwrap();
        let parts = draw_parts(&sc, 2, 11);
        // (temperatures, expect ok)
        let table: [(&[f64], bool); 2] = [(&[-20.0, 25.0, 85.0], true), (&[-20.0, 85.0], false)];
        for (temps, ok) in table {
            let plan = Plan {
                temps_c: temps.to_vec(),
                stimuli: sc.stimuli.clone(),
            };
            let rows = measure(&sc, &parts, &plan, 11).unwrap();
            let refs: Vec<&ChamberRow> = rows
                .iter()
                .filter(|r| r.serial == parts[0].serial)
                .collect();
            let part = calibrate_part(&sc, &curves, &parts[0].serial, &refs);
            assert_eq!(part.is_ok(), ok, "temps {temps:?}: status {}", part.status);
            if ok {
                // 8 parameters for 6 independent (offset, span) values and 3
                // thermometer points: the thermometer is exact up to ADC noise
                // (2 mohm on ~5 kohm with ~5 ohm/K: ~0.5 mK; chamber error
                // 0.03 K is absorbed by reading T from the signal), the output
                // residual is ADC noise (80 nV on 33 mV: ~3 ppm); 10x margins.
                assert!(
                    part.thermometer_max_k < 0.01,
                    "thermometer {} K",
                    part.thermometer_max_k
                );
                assert!(
                    part.fit_max_ppm < 30.0,
                    "fit residual {} ppm",
                    part.fit_max_ppm
                );
                assert!(part.polynomial.is_some());
            } else {
                assert!(
                    part.status.contains("too few") || part.status.contains("ill-conditioned"),
                    "{}",
                    part.status
                );
            }
        }
    }
}
