//! The error budget of a compensated part, term by term (the terms `table`
//! prints, docs/station.md), all in ppm of full-scale span.

use crate::station::part_file::PartFile;
use crate::station::table::TableFrame;

/// Coverage factor applied to the temperature-signal uncertainty: 3 sigma
/// makes the term a near-worst case for Gaussian noise (common practice).
pub const COVERAGE_K: f64 = 3.0;

/// Calibration temperatures from which the leave-one-temperature-out error
/// is budgeted. With three, each refit has one parameter fewer per curve than
/// the fit that ships, so the hold-out error describes a weaker model: on
/// the well-logger demo lot it read up to 1 420 ppm where the held-out
/// check showed at most 366 ppm, overstated on 43 of 50 parts and
/// correlated only 0.4 with the real error. From four temperatures on, each
/// refit keeps the shipped model's parameters and the term is a fair
/// estimate of model error between chamber points.
pub const MIN_TEMPERATURES_TO_BUDGET_HOLDOUT: usize = 4;

/// The terms that do not depend on the table.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct PartTerms {
    /// Largest calibration fit residual at the chamber points or, from
    /// [`MIN_TEMPERATURES_TO_BUDGET_HOLDOUT`] calibration temperatures on, at
    /// a left-out chamber temperature (cross-validation), whichever is larger.
    pub fit_residual_ppm: f64,
    /// Worst error at an interior left-out calibration temperature, reported
    /// even when too few temperatures make it a poor estimate (0 when absent).
    pub cross_validation_ppm: f64,
    /// Whether `cross_validation_ppm` is counted in `fit_residual_ppm`.
    pub cross_validation_budgeted: bool,
    /// Temperature-signal uncertainty (k = 3) times the worst drift slope.
    pub temperature_ppm: f64,
    /// The temperature uncertainty used, K (one sigma).
    pub temperature_sigma_k: f64,
    /// Worst drift slope of the uncompensated reading over the range, ppm/K.
    pub drift_slope_ppm_per_k: f64,
    /// Deviation of the runtime crate's closed-form model: 0, a table image
    /// does not evaluate that model on the microcontroller.
    pub runtime_model_ppm: f64,
}

/// Every term of a table image's budget.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct BudgetTerms {
    /// Table interpolation.
    pub interpolation_ppm: f64,
    /// Number-format quantization.
    pub quantization_ppm: f64,
    /// Runtime-model deviation.
    pub runtime_model_ppm: f64,
    /// Calibration fit residual.
    pub fit_residual_ppm: f64,
    /// Worst interior leave-one-temperature-out error (reported always).
    pub cross_validation_ppm: f64,
    /// Whether `cross_validation_ppm` is part of `fit_residual_ppm`.
    pub cross_validation_budgeted: bool,
    /// Temperature-signal uncertainty times drift slope.
    pub temperature_ppm: f64,
    /// Linear sum of the five terms (a conservative total).
    pub total_ppm: f64,
    /// The budget.
    pub budget_ppm: f64,
}

/// The fit-residual term from the residual at the chamber points, the worst
/// interior hold-out error, the number of calibration temperatures and the
/// scenario's qualification-lot model error; also says whether the hold-out
/// error was counted (otherwise the model error, when stated, is).
fn fit_residual(
    fit_max_ppm: f64,
    holdout_ppm: f64,
    temperatures: usize,
    model_error_ppm: Option<f64>,
) -> (f64, bool) {
    if temperatures >= MIN_TEMPERATURES_TO_BUDGET_HOLDOUT {
        (fit_max_ppm.max(holdout_ppm), true)
    } else {
        (fit_max_ppm.max(model_error_ppm.unwrap_or(0.0)), false)
    }
}

impl PartTerms {
    /// Computes the table-independent terms of a part over its range.
    pub fn of(part: &PartFile, frame: &TableFrame<'_>) -> PartTerms {
        let fs = frame.fs_hi - frame.fs_lo;
        let mut slope: f64 = 0.0;
        let n = 400;
        for k in 0..=n {
            let t = frame.t_lo_c + (frame.t_hi_c - frame.t_lo_c) * k as f64 / n as f64;
            let h = 0.01;
            let (at, at_up, at_down) = (frame.at(t), frame.at(t + h), frame.at(t - h));
            for s in [frame.fs_lo, frame.fs_hi] {
                // Reading error per kelvin of temperature error at a fixed raw output.
                let y = at.output(s);
                let up = at_up.stimulus(y);
                let down = at_down.stimulus(y);
                slope = slope.max(((up - down) / (2.0 * h) / fs * 1e6).abs());
            }
        }
        // A part fitted on a design: its thermometer's misses at the chamber
        // points (set-point errors, shape) are inside the design's measured
        // model error, which ran the same fit; only the signal noise adds.
        let sigma_k = if part.design.is_some() {
            part.signal_noise_k
        } else {
            part.thermometer_rms_k.hypot(part.signal_noise_k)
        };
        // Model error between chamber points (leave-one-temperature-out),
        // budgeted only where the refits keep the shipped model's shape.
        let cross_validation_ppm = part.holdout_max_ppm.unwrap_or(0.0);
        let (fit_residual_ppm, cross_validation_budgeted) = fit_residual(
            part.fit_max_ppm,
            cross_validation_ppm,
            part.holdouts.len(),
            // A design's measured model error replaces the scenario's stated one.
            part.design
                .as_ref()
                .map(|d| d.model_error_ppm)
                .or(part.scenario.model_error_ppm),
        );
        PartTerms {
            fit_residual_ppm,
            cross_validation_ppm,
            cross_validation_budgeted,
            temperature_ppm: COVERAGE_K * sigma_k * slope,
            temperature_sigma_k: sigma_k,
            drift_slope_ppm_per_k: slope,
            runtime_model_ppm: 0.0,
        }
    }

    /// What is left of `budget_ppm` for the table (interpolation + quantization).
    pub fn table_allowance(&self, budget_ppm: f64) -> f64 {
        budget_ppm - self.fit_residual_ppm - self.temperature_ppm - self.runtime_model_ppm
    }

    /// The full budget with the table's two terms.
    pub fn with_table(
        &self,
        interpolation_ppm: f64,
        quantization_ppm: f64,
        budget_ppm: f64,
    ) -> BudgetTerms {
        BudgetTerms {
            interpolation_ppm,
            quantization_ppm,
            runtime_model_ppm: self.runtime_model_ppm,
            fit_residual_ppm: self.fit_residual_ppm,
            cross_validation_ppm: self.cross_validation_ppm,
            cross_validation_budgeted: self.cross_validation_budgeted,
            temperature_ppm: self.temperature_ppm,
            total_ppm: interpolation_ppm
                + quantization_ppm
                + self.runtime_model_ppm
                + self.fit_residual_ppm
                + self.temperature_ppm,
            budget_ppm,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::station::curves::{OffsetShape, ShapeCurves};
    use crate::station::part_file::{HoldOut, PART_FORMAT};
    use crate::station::part_model::{PartModel, PartParams};
    use crate::station::scenario::Scenario;
    use crate::station::table::SignalUnit;

    /// Shapes that are zero at every temperature: the part model reduces to
    /// `offset = offset_tc * (T - 25)` and
    /// `sensitivity = sens_ref * (1 + span_tc * (T - 25))`, whose drift slope
    /// has a closed form (see `part_terms_known_answers`).
    fn flat_curves() -> ShapeCurves {
        let zeros = vec![0.0; 3];
        ShapeCurves {
            t0_c: -60.0,
            step_k: 110.0,
            t_ref_c: 25.0,
            offset_kind: OffsetShape::DopingSensitivity,
            ln_rho_rel: zeros.clone(),
            offset_shape: zeros.clone(),
            ln_gain_rel: zeros.clone(),
            ln_gain_dlnn: zeros,
        }
    }

    /// One hand-computed case of [`PartTerms::of`] and
    /// [`PartTerms::table_allowance`].
    struct Case {
        /// Offset drift, output units per K.
        offset_tc: f64,
        /// Span drift, 1/K.
        span_tc: f64,
        /// Full-scale stimulus range.
        fs: (f64, f64),
        /// Thermometer residual rms, K.
        thermometer_rms_k: f64,
        /// Signal noise, K.
        signal_noise_k: f64,
        /// Largest fit residual, ppm.
        fit_max_ppm: f64,
        /// Worst interior hold-out error, ppm.
        holdout_max_ppm: Option<f64>,
        /// Number of hold-out refits (= calibration temperatures).
        holdouts: usize,
        /// The scenario's stated model error, ppm.
        model_error_ppm: Option<f64>,
        /// Total budget, ppm.
        budget_ppm: f64,
        /// Expected drift slope, ppm/K.
        slope: f64,
        /// Expected temperature sigma, K.
        sigma_k: f64,
        /// Expected temperature term, ppm.
        temperature_ppm: f64,
        /// Expected fit term, ppm.
        fit_residual_ppm: f64,
        /// Expected: hold-out counted in the fit term.
        budgeted: bool,
        /// Expected table allowance, ppm.
        allowance_ppm: f64,
    }

    fn part_for(case: &Case) -> PartFile {
        let mut scenario = Scenario::well_logger();
        scenario.model_error_ppm = case.model_error_ppm;
        let hold = HoldOut {
            chamber_c: 25.0,
            interior: true,
            max_error_ppm: case.holdout_max_ppm.unwrap_or(0.0),
            thermometer_error_k: 0.0,
        };
        PartFile {
            format: PART_FORMAT.into(),
            serial: "KAT-1".into(),
            status: "ok".into(),
            scenario,
            params: Some(PartParams {
                signal_ref: 1000.0,
                signal_beta: 1.0,
                offset_tc_per_k: case.offset_tc,
                sens_ref: 1e-3,
                span_tc_per_k: case.span_tc,
                ..PartParams::default()
            }),
            param_names: Vec::new(),
            std_errors: Vec::new(),
            covariance: Vec::new(),
            condition: 1.0,
            thermometer_rms_k: case.thermometer_rms_k,
            thermometer_max_k: case.thermometer_rms_k,
            signal_noise_k: case.signal_noise_k,
            fit_rms_ppm: case.fit_max_ppm / 2.0,
            fit_max_ppm: case.fit_max_ppm,
            points: Vec::new(),
            polynomial: None,
            holdout_max_ppm: case.holdout_max_ppm,
            holdout_thermometer_max_k: None,
            holdouts: vec![hold; case.holdouts],
            model_error: String::new(),
            design: None,
        }
    }

    fn frame_for<'c>(part: &PartFile, curves: &'c ShapeCurves, fs: (f64, f64)) -> TableFrame<'c> {
        TableFrame {
            model: PartModel {
                curves,
                params: part.params.unwrap_or_default(),
            }
            .into(),
            t_lo_c: -40.0,
            t_hi_c: 125.0,
            sig_lo: 900.0,
            sig_hi: 1100.0,
            lsb: 1e-6,
            bits: 24,
            fs_lo: fs.0,
            fs_hi: fs.1,
            t_ref_c: 25.0,
            bow: None,
            signal_unit: SignalUnit::Ohm,
            signal_lsb: 0.01,
        }
    }

    /// Relative tolerance of the hand-computed terms: `of` differentiates
    /// the compensation `(y - off(T')) / sens(T')` by a central difference
    /// with h = 0.01 K. That function is linear over linear in T', so the
    /// truncation error is about (span_tc * h)^2 ~ 4e-12 relative; the
    /// rounding of `up - down` (stimulus ~ 12, difference ~ 1e-4) is about
    /// 12 * 2.2e-16 / 1e-4 ~ 3e-11 relative; the expected values are written
    /// to 15 significant digits (5e-15). 1e-9 leaves 30x margin and is far
    /// finer than the smallest change one wrong operator makes in the cases
    /// below (a missed range end: 0.4 %).
    const REL_TOL: f64 = 1e-9;

    fn near(got: f64, expected: f64) -> bool {
        (got - expected).abs() <= REL_TOL * expected.abs()
    }

    #[test]
    fn near_can_fail() {
        assert!(near(221.439_355_812_783, 221.439_355_812_783));
        assert!(!near(221.44, 221.439_355_812_783));
        assert!(!near(-1.0, 1.0));
    }

    #[test]
    fn part_terms_known_answers() {
        // With flat shapes, output y = c (T - 25) + s0 (1 + a (T - 25)) s
        // (c offset drift, a span drift, s0 = 1e-3 sensitivity at 25 C).
        // The compensation at a wrong temperature T' is
        // s' = (y - c (T' - 25)) / (s0 (1 + a (T' - 25))), so at T' = T
        //   ds'/dT' = -(c + s0 a s) / (s0 (1 + a (T - 25))),
        // and the slope term is |ds'/dT'| / (fs_hi - fs_lo) * 1e6 ppm/K,
        // largest at one stimulus end and one range end (-40 or 125 C).
        let cases = [
            // A: c = 1e-6, a = +1e-4, fs 2..12. At s = 12:
            // c + s0 a s = 1e-6 + 1.2e-6 = 2.2e-6 (s = 2: 1.2e-6); the
            // denominator is smallest at -40 C: 1 + 1e-4 * (-65) = 0.9935.
            // slope = 2.2e-6 / (1e-3 * 0.9935) / 10 * 1e6 = 220 / 0.9935
            //       = 221.439 355 812 783 ppm/K.
            // sigma = hypot(0.03, 0.04) = 0.05 K (no design);
            // temperature = 3 * 0.05 * 221.439 355 8 = 33.215 903 371 917 ppm.
            // Three hold-outs (< 4): fit term = max(40, model 120) = 120,
            // hold-out not counted.
            // allowance = 500 - 120 - 33.215 903 371 917 - 0 = 346.784 096 628 083.
            Case {
                offset_tc: 1e-6,
                span_tc: 1e-4,
                fs: (2.0, 12.0),
                thermometer_rms_k: 0.03,
                signal_noise_k: 0.04,
                fit_max_ppm: 40.0,
                holdout_max_ppm: Some(900.0),
                holdouts: 3,
                model_error_ppm: Some(120.0),
                budget_ppm: 500.0,
                slope: 221.439_355_812_783,
                sigma_k: 0.05,
                temperature_ppm: 33.215_903_371_917,
                fit_residual_ppm: 120.0,
                budgeted: false,
                allowance_ppm: 346.784_096_628_083,
            },
            // B: c = -3e-6, a = -2e-4, fs -5..5. At s = 5:
            // -3e-6 - 1e-3 * 2e-4 * 5 = -4e-6 (s = -5: -2e-6); the
            // denominator is smallest at 125 C: 1 - 2e-4 * 100 = 0.98.
            // slope = 4e-6 / 0.98e-3 / 10 * 1e6 = 400 / 0.98
            //       = 408.163 265 306 122 ppm/K.
            // sigma = hypot(0.12, 0.05) = 0.13 K;
            // temperature = 3 * 0.13 * 408.163 265 3 = 159.183 673 469 388 ppm.
            // Five hold-outs: fit term = max(60, 75) = 75, counted.
            // allowance = 800 - 75 - 159.183 673 469 388 = 565.816 326 530 612.
            Case {
                offset_tc: -3e-6,
                span_tc: -2e-4,
                fs: (-5.0, 5.0),
                thermometer_rms_k: 0.12,
                signal_noise_k: 0.05,
                fit_max_ppm: 60.0,
                holdout_max_ppm: Some(75.0),
                holdouts: 5,
                model_error_ppm: Some(300.0),
                budget_ppm: 800.0,
                slope: 408.163_265_306_122,
                sigma_k: 0.13,
                temperature_ppm: 159.183_673_469_388,
                fit_residual_ppm: 75.0,
                budgeted: true,
                allowance_ppm: 565.816_326_530_612,
            },
            // C: the two drifts oppose: c = 2e-6, a = -1e-4, fs 2..12. At
            // s = 2: 2e-6 - 0.2e-6 = 1.8e-6, larger than at s = 12
            // (2e-6 - 1.2e-6 = 0.8e-6), so the low stimulus end decides;
            // the denominator is smallest at 125 C: 1 - 1e-4 * 100 = 0.99.
            // slope = 1.8e-6 / 0.99e-3 / 10 * 1e6 = 180 / 0.99
            //       = 181.818 181 818 182 ppm/K.
            // sigma = hypot(0, 0.02) = 0.02 K;
            // temperature = 3 * 0.02 * 181.818 181 8 = 10.909 090 909 091 ppm.
            // No hold-outs, no stated model error: fit term = 33.
            // allowance = 250 - 33 - 10.909 090 909 091 = 206.090 909 090 909.
            Case {
                offset_tc: 2e-6,
                span_tc: -1e-4,
                fs: (2.0, 12.0),
                thermometer_rms_k: 0.0,
                signal_noise_k: 0.02,
                fit_max_ppm: 33.0,
                holdout_max_ppm: None,
                holdouts: 0,
                model_error_ppm: None,
                budget_ppm: 250.0,
                slope: 181.818_181_818_182,
                sigma_k: 0.02,
                temperature_ppm: 10.909_090_909_091,
                fit_residual_ppm: 33.0,
                budgeted: false,
                allowance_ppm: 206.090_909_090_909,
            },
        ];
        let curves = flat_curves();
        for (i, case) in cases.iter().enumerate() {
            let part = part_for(case);
            let frame = frame_for(&part, &curves, case.fs);
            let t = PartTerms::of(&part, &frame);
            let got = [
                t.drift_slope_ppm_per_k,
                t.temperature_sigma_k,
                t.temperature_ppm,
                t.fit_residual_ppm,
                t.table_allowance(case.budget_ppm),
            ];
            let expected = [
                case.slope,
                case.sigma_k,
                case.temperature_ppm,
                case.fit_residual_ppm,
                case.allowance_ppm,
            ];
            let names = ["slope", "sigma", "temperature", "fit", "allowance"];
            for ((name, g), e) in names.iter().zip(got).zip(expected) {
                assert!(
                    near(g, e),
                    "case {i}: {name} got {g}, expected {e} (hand-computed)"
                );
            }
            assert_eq!(t.cross_validation_budgeted, case.budgeted, "case {i}");
            assert_eq!(
                t.cross_validation_ppm,
                case.holdout_max_ppm.unwrap_or(0.0),
                "case {i}: the hold-out error is reported as read"
            );
            assert_eq!(t.runtime_model_ppm, 0.0, "case {i}");
        }
    }

    #[test]
    fn allowance_and_total_known_answers() {
        // Every term distinct, so any swapped sign or dropped term shows:
        // allowance = 500 - 120 - 33 - 7 = 340;
        // total = 100 + 3 + 7 + 120 + 33 = 263 (cross-validation is inside
        // the fit term and never added on its own).
        let t = PartTerms {
            fit_residual_ppm: 120.0,
            cross_validation_ppm: 900.0,
            cross_validation_budgeted: false,
            temperature_ppm: 33.0,
            temperature_sigma_k: 0.05,
            drift_slope_ppm_per_k: 220.0,
            runtime_model_ppm: 7.0,
        };
        // Exact: sums and differences of small integers are exact in f64.
        assert_eq!(t.table_allowance(500.0), 340.0);
        assert_eq!(t.table_allowance(100.0), -60.0);
        let b = t.with_table(100.0, 3.0, 500.0);
        assert_eq!(b.total_ppm, 263.0);
        assert_eq!(
            (b.interpolation_ppm, b.quantization_ppm, b.budget_ppm),
            (100.0, 3.0, 500.0)
        );
        assert_eq!(
            (b.fit_residual_ppm, b.temperature_ppm, b.runtime_model_ppm),
            (120.0, 33.0, 7.0)
        );
        assert_eq!(
            (b.cross_validation_ppm, b.cross_validation_budgeted),
            (900.0, false)
        );
    }

    #[test]
    fn hold_out_is_budgeted_from_four_temperatures() {
        // (fit residual, hold-out, temperatures, qualification model error)
        // -> (term, hold-out counted); exact values: the function only
        // selects, it does not compute.
        let table = [
            ((40.0, 900.0, 3, None), (40.0, false)),
            ((40.0, 900.0, 3, Some(300.0)), (300.0, false)),
            ((400.0, 900.0, 3, Some(300.0)), (400.0, false)),
            ((40.0, 900.0, 4, Some(300.0)), (900.0, true)),
            ((950.0, 900.0, 5, None), (950.0, true)),
            ((40.0, 0.0, 0, None), (40.0, false)),
        ];
        for ((fit, hold, n, model), expected) in table {
            let got = fit_residual(fit, hold, n, model);
            assert_eq!(
                got, expected,
                "fit {fit}, hold-out {hold}, {n} temperatures, model {model:?}"
            );
        }
    }
}
