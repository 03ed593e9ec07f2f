//! The station steps as library calls, shared by the CLI and the demo:
//! table building to a budget and verification of an image against a part.

use crate::station::bound::interpolation_bound_ppm;
use crate::station::budget::{BudgetTerms, PartTerms};
use crate::station::choose::{Candidate, ChooseError, Restrict, candidates, try_plan};
use crate::station::curves::ShapeCurves;
use crate::station::image_eval::{ErrorStats, EvalError, evaluate, linspace, per_temperature};
use crate::station::model_shapes::shapes_for;
use crate::station::part_file::PartFile;
use crate::station::table::{
    AxisKind, InterpKind, NumFormat, SignalUnit, TableError, TableFrame, TablePlan,
};
use compensate::TableView;
use compensate::image::ChannelAxis;
use compensate::image::NumberFormat;
use compensate::interp::Interpolation;

/// Dense verification grid: temperatures x stimuli (20001 x 6 = 120006 points).
pub const DENSE_TEMPS: usize = 20001;
/// Stimuli of the dense verification grid.
pub const DENSE_STIMULI: usize = 6;
/// Dense grid of an image with a 2-D correction: temperatures...
pub const DENSE_2D_TEMPS: usize = 1001;
/// ...x raw signals (stimuli), 1001 x 101 = 101101 points, so the raw axis
/// is sampled between its nodes as densely as temperature is.
pub const DENSE_2D_STIMULI: usize = 101;

/// Dense grid size (temperatures, stimuli) for verifying a plan: at least
/// 1e5 points, spread over raw signal too when the image has a 2-D correction.
pub fn dense_counts(plan: &TablePlan) -> (usize, usize) {
    if plan.n_raw > 0 {
        (DENSE_2D_TEMPS, DENSE_2D_STIMULI)
    } else {
        (DENSE_TEMPS, DENSE_STIMULI)
    }
}

/// The dense grid of `plan` over the frame's range.
fn dense_grid(frame: &TableFrame<'_>, plan: &TablePlan) -> (Vec<f64>, Vec<f64>) {
    let (n_t, n_s) = dense_counts(plan);
    (
        linspace(frame.t_lo_c, frame.t_hi_c, n_t),
        linspace(frame.fs_lo, frame.fs_hi, n_s),
    )
}

/// Why a step failed.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum StepError {
    /// The part's fit is not usable.
    #[error("part {serial}: fit not usable ({status})")]
    PartNotOk {
        /// Serial.
        serial: String,
        /// Status text.
        status: String,
    },
    /// The full model failed while tabulating the part's shapes.
    #[error("full model: {0}")]
    Model(String),
    /// The budget leaves nothing for the table.
    #[error(
        "budget {budget_ppm} ppm is used up before the table: fit residual {fit_ppm:.1} ppm + temperature term {temperature_ppm:.1} ppm"
    )]
    BudgetExhausted {
        /// Budget.
        budget_ppm: f64,
        /// Fit residual term.
        fit_ppm: f64,
        /// Temperature term.
        temperature_ppm: f64,
    },
    /// Table building failed.
    #[error(transparent)]
    Table(#[from] TableError),
    /// Choosing failed.
    #[error(transparent)]
    Choose(#[from] ChooseError),
    /// Running the image failed.
    #[error(transparent)]
    Eval(#[from] EvalError),
    /// The image was not built for this part (serial or header differs).
    #[error("field '{field}': {message}")]
    NotThisPart {
        /// Image header field that differs.
        field: &'static str,
        /// What differs.
        message: String,
    },
}

/// Sets an image's simulated flag (`compensate::image::layout::FLAG_SIMULATED`)
/// and re-signs it (CRC-32 over everything before the CRC). The flag changes
/// no computation; it lets a station see, before flashing, that the image
/// was made from invented data.
pub fn mark_simulated(image: &mut [u8]) {
    use compensate::image::layout::{CRC_LEN, FLAG_SIMULATED, HEADER_LEN, off};
    if image.len() < HEADER_LEN + CRC_LEN {
        return;
    }
    image[off::FLAGS] |= FLAG_SIMULATED;
    let body = image.len() - CRC_LEN;
    let crc = compensate::crc::crc32(&image[..body]);
    image[body..].copy_from_slice(&crc.to_le_bytes());
}

/// Checks that `view` is an image the station builds for `part`, before
/// anything is evaluated: the serial field (the part's serial, zero-padded
/// or cut to the image's 16 bytes), the measurand unit, the full scale
/// (the span of `stimulus_fs` as f32), the simulated flag (set exactly when
/// the part was fitted to simulated data), the ratiometric flag (the
/// station never sets it) and the temperature-signal kind (ohm or ADC code).
pub fn check_image_for_part(view: &TableView<'_>, part: &PartFile) -> Result<(), StepError> {
    let mismatch = |field, message| Err(StepError::NotThisPart { field, message });
    let mut want = [0u8; compensate::image::layout::SERIAL_LEN];
    for (d, s) in want.iter_mut().zip(part.serial.bytes()) {
        *d = s;
    }
    let got = view.serial();
    if got != want {
        let shown = String::from_utf8_lossy(&got)
            .trim_end_matches('\0')
            .to_string();
        return mismatch(
            "serial",
            format!(
                "image is for part '{}', not for part '{}'",
                shown.escape_debug(),
                part.serial
            ),
        );
    }
    let unit = crate::station::table::unit(&part.scenario.stimulus_unit);
    if view.unit() != unit {
        return mismatch(
            "unit",
            format!(
                "image measures in {:?}, the part in '{}' ({unit:?})",
                view.unit(),
                part.scenario.stimulus_unit
            ),
        );
    }
    // Same mismatch report as the unit check above, for the full scale.
    let fs = part.scenario.stimulus_fs;
    let want_fs = (fs.1 - fs.0) as f32;
    if view.full_scale() != want_fs {
        return mismatch(
            "full_scale",
            format!(
                "image full scale {} {}, the part's {} {}",
                view.full_scale(),
                part.scenario.stimulus_unit,
                want_fs,
                part.scenario.stimulus_unit
            ),
        );
    }
    if view.simulated() != part.scenario.simulated {
        return mismatch(
            "flags",
            if part.scenario.simulated {
                "the part was fitted to simulated data but the image lacks the simulated flag"
                    .to_string()
            } else {
                "the image carries the simulated flag but the part was fitted to measured data"
                    .to_string()
            },
        );
    }
    if view.ratiometric() {
        return mismatch(
            "flags",
            "image is ratiometric; the station's images never are".to_string(),
        );
    }
    if !matches!(
        view.signal_kind(),
        compensate::image::SignalKind::Ohm | compensate::image::SignalKind::AdcCode
    ) {
        return mismatch(
            "signal_kind",
            format!(
                "image takes a {:?} temperature signal; the part's is its resistance (ohm or ADC code)",
                view.signal_kind()
            ),
        );
    }
    Ok(())
}

/// The full model's shapes for a part's scenario.
pub fn part_curves(part: &PartFile) -> Result<ShapeCurves, StepError> {
    shapes_for(&part.scenario).map_err(|e| StepError::Model(e.to_string()))
}

/// The outcome of building a part's table.
#[derive(Debug, Clone, serde::Serialize)]
pub struct TableOutcome {
    /// Serial.
    pub serial: String,
    /// Chosen plan.
    pub plan: TablePlan,
    /// Image size, bytes.
    pub bytes: usize,
    /// Every interpolation/format at its smallest size (least flash first).
    pub candidates: Vec<Candidate>,
    /// What the budget left for the table.
    pub table_allowance_ppm: f64,
    /// Budget terms.
    pub terms: BudgetTerms,
    /// Dense verification of the chosen image.
    pub dense: ErrorStats,
    /// Analytic interpolation bound of the chosen plan.
    pub analytic_bound_ppm: f64,
    /// Whether the part was fitted to simulated data (its scenario's `simulated`).
    pub simulated: bool,
    /// Caution ([`crate::station::output::caution_for`]).
    pub caution: String,
    /// The image.
    #[serde(skip)]
    pub image: Vec<u8>,
}

/// f32 rounding of the compensation arithmetic, ppm of span: a few
/// operations at 2^-24 relative each on values up to the full-scale stimulus.
fn f32_rounding_ppm(frame: &TableFrame<'_>) -> f64 {
    let fs = frame.fs_hi - frame.fs_lo;
    4.0 * 2f64.powi(-24) * frame.fs_lo.abs().max(frame.fs_hi.abs()) / fs * 1e6
}

/// Splits a plan's measured table error into interpolation and quantization:
/// the f32 image of the same plan measures interpolation (plus f32 rounding);
/// a Q image adds what the integer format costs beyond that.
fn split_terms(
    frame: &TableFrame<'_>,
    plan: &TablePlan,
    serial: &str,
    unit: &str,
    measured_ppm: f64,
) -> Result<(f64, f64), StepError> {
    match plan.format {
        NumFormat::F32 => {
            let q = f32_rounding_ppm(frame);
            Ok(((measured_ppm - q).max(0.0), q))
        }
        NumFormat::Q => {
            let f = TablePlan {
                format: NumFormat::F32,
                ..*plan
            };
            let grid = dense_grid(frame, plan);
            let (_, stats) = try_plan(frame, &f, serial, unit, &grid)?;
            Ok((
                stats.max_error_ppm,
                (measured_ppm - stats.max_error_ppm).max(0.0),
            ))
        }
    }
}

/// Builds the least-flash table of a part meeting `budget_ppm` in total.
pub fn build_table(
    part: &PartFile,
    curves: &ShapeCurves,
    budget_ppm: f64,
) -> Result<TableOutcome, StepError> {
    build_table_with(
        part,
        curves,
        budget_ppm,
        Restrict::default(),
        SignalUnit::Ohm,
    )
}

/// [`build_table`] with the choice limited by `restrict` and the image's
/// temperature signal in `signal_unit`.
pub fn build_table_with(
    part: &PartFile,
    curves: &ShapeCurves,
    budget_ppm: f64,
    restrict: Restrict,
    signal_unit: SignalUnit,
) -> Result<TableOutcome, StepError> {
    if !part.is_ok() {
        return Err(StepError::PartNotOk {
            serial: part.serial.clone(),
            status: part.status.clone(),
        });
    }
    let model = part.model(curves);
    let frame = TableFrame::new(part, model)?.with_signal_unit(signal_unit);
    let terms = PartTerms::of(part, &frame);
    let allowance = terms.table_allowance(budget_ppm);
    if allowance <= 0.0 {
        return Err(StepError::BudgetExhausted {
            budget_ppm,
            fit_ppm: terms.fit_residual_ppm,
            temperature_ppm: terms.temperature_ppm,
        });
    }
    build_table_for_allowance_with(part, &frame, &terms, allowance, budget_ppm, restrict)
}

/// Builds the least-flash table whose own error stays within `allowance_ppm`.
pub fn build_table_for_allowance(
    part: &PartFile,
    frame: &TableFrame<'_>,
    terms: &PartTerms,
    allowance_ppm: f64,
    budget_ppm: f64,
) -> Result<TableOutcome, StepError> {
    build_table_for_allowance_with(
        part,
        frame,
        terms,
        allowance_ppm,
        budget_ppm,
        Restrict::default(),
    )
}

/// [`build_table_for_allowance`] with the choice limited by `restrict`.
pub fn build_table_for_allowance_with(
    part: &PartFile,
    frame: &TableFrame<'_>,
    terms: &PartTerms,
    allowance_ppm: f64,
    budget_ppm: f64,
    restrict: Restrict,
) -> Result<TableOutcome, StepError> {
    let unit = part.scenario.stimulus_unit.as_str();
    let serial = part.serial.as_str();
    let list = candidates(frame, allowance_ppm, serial, unit, restrict)?;
    // The dense grid may find a point a little worse than the search grid:
    // grow the chosen plan by 10 % until the dense check passes too.
    let mut plan = list[0].plan;
    let grid = dense_grid(frame, &plan);
    let (mut image, mut dense) = try_plan(frame, &plan, serial, unit, &grid)?;
    while dense.max_error_ppm > allowance_ppm && plan.n_t < crate::station::choose::MAX_NODES {
        plan.n_t += plan.n_t.div_ceil(10);
        plan.n_sig += plan.n_sig.div_ceil(10);
        plan.n_raw += plan.n_raw.div_ceil(10);
        (image, dense) = try_plan(frame, &plan, serial, unit, &grid)?;
    }
    let (interp, quant) = split_terms(frame, &plan, serial, unit, dense.max_error_ppm)?;
    if part.scenario.simulated {
        mark_simulated(&mut image);
    }
    Ok(TableOutcome {
        serial: serial.to_string(),
        plan,
        bytes: image.len(),
        candidates: list,
        table_allowance_ppm: allowance_ppm,
        terms: terms.with_table(interp, quant, budget_ppm),
        dense,
        analytic_bound_ppm: interpolation_bound_ppm(frame, &plan),
        simulated: part.scenario.simulated,
        caution: crate::station::output::caution_for(part.scenario.simulated),
        image,
    })
}

/// The verification report (`verify --json`).
#[derive(Debug, Clone, serde::Serialize)]
pub struct VerifyReport {
    /// Serial of the part file.
    pub serial: String,
    /// Largest |table - model| on the dense grid, ppm of span.
    pub max_error_ppm: f64,
    /// RMS of the same, ppm of span.
    pub rms_error_ppm: f64,
    /// Temperature of the largest error, C.
    pub worst_t_c: f64,
    /// Stimulus of the largest error.
    pub worst_stimulus: f64,
    /// Grid points evaluated.
    pub points: usize,
    /// Total error budget, ppm of span.
    pub budget_ppm: f64,
    /// What the budget leaves for the table after the part's own terms.
    pub table_allowance_ppm: f64,
    /// Analytic interpolation bound of the image's plan.
    pub analytic_bound_ppm: f64,
    /// Budget terms (interpolation + quantization = the dense maximum).
    pub terms: BudgetTerms,
    /// The image's plan as read from its header.
    pub plan: TablePlan,
    /// Image size, bytes.
    pub bytes: usize,
    /// True when the dense maximum is within the table allowance (so the
    /// total of all terms is within the budget). Against the part's fitted
    /// model, not against the part itself.
    pub pass: bool,
    /// Whether the part was fitted to simulated data (its scenario's `simulated`).
    pub simulated: bool,
    /// Caution ([`crate::station::output::caution_for`]).
    pub caution: String,
}

/// Reads an image's plan from its header.
pub fn plan_of(view: &TableView<'_>) -> TablePlan {
    let n_raw = view.grid_raw_nodes();
    let interpolation = match view.interpolation() {
        _ if n_raw > 0 => InterpKind::Bilinear2d,
        Interpolation::MonotoneCubic => InterpKind::MonotoneCubic,
        _ => InterpKind::Linear,
    };
    let (format, n_t, n_sig) = match view.format() {
        NumberFormat::Q => {
            let t = view.tables_q();
            (
                NumFormat::Q,
                t.map_or(0, |t| t.temperature.len()),
                t.and_then(|t| t.thermometer).map_or(0, |(a, _)| a.len()),
            )
        }
        _ => {
            let t = view.tables_f32();
            (
                NumFormat::F32,
                t.map_or(0, |t| t.temperature.len),
                t.and_then(|t| t.thermometer).map_or(0, |(a, _)| a.len),
            )
        }
    };
    TablePlan {
        interpolation,
        format,
        n_t,
        n_sig,
        n_raw,
        axis: match view.channel_axis() {
            ChannelAxis::Signal => AxisKind::Signal,
            _ => AxisKind::Temperature,
        },
    }
}

/// Temperatures of a table's error curve (plots): 0.25 K steps over the
/// well-logger's 105 K range, fine enough to show every node interval.
pub const CURVE_TEMPS: usize = 421;

/// Largest |error| of `image` at each of [`CURVE_TEMPS`] temperatures over
/// the part's range, across the dense grid's stimuli ([`dense_counts`]),
/// in ppm of span.
pub fn table_error_curve(
    image: &[u8],
    part: &PartFile,
    curves: &ShapeCurves,
) -> Result<Vec<(f64, f64)>, StepError> {
    let model = part.model(curves);
    let frame = TableFrame::new(part, model)?;
    let view = TableView::parse(image).map_err(|e| StepError::Eval(EvalError::Image(e)))?;
    // A 2-D image is sampled between its raw nodes too.
    let (_, n_stimuli) = dense_counts(&plan_of(&view));
    let temps = linspace(frame.t_lo_c, frame.t_hi_c, CURVE_TEMPS);
    let stimuli = linspace(frame.fs_lo, frame.fs_hi, n_stimuli);
    Ok(per_temperature(image, &frame, &temps, &stimuli)?)
}

/// Verifies `image` against `part` on `n_temps` x `n_stimuli` points
/// ([`dense_counts`] gives the usual sizes).
pub fn verify(
    image: &[u8],
    part: &PartFile,
    curves: &ShapeCurves,
    budget_ppm: f64,
    n_temps: usize,
    n_stimuli: usize,
) -> Result<VerifyReport, StepError> {
    let view = TableView::parse(image).map_err(|e| StepError::Eval(EvalError::Image(e)))?;
    check_image_for_part(&view, part)?;
    let plan = plan_of(&view);
    let model = part.model(curves);
    let frame = TableFrame::new(part, model)?.for_view(&view);
    let terms = PartTerms::of(part, &frame);
    let temps = linspace(frame.t_lo_c, frame.t_hi_c, n_temps);
    let stimuli = linspace(frame.fs_lo, frame.fs_hi, n_stimuli);
    let dense = evaluate(image, &frame, &temps, &stimuli)?;
    let allowance = terms.table_allowance(budget_ppm);
    let (interp, quant) = match plan.format {
        NumFormat::F32 => {
            let q = f32_rounding_ppm(&frame);
            ((dense.max_error_ppm - q).max(0.0), q)
        }
        NumFormat::Q => (dense.max_error_ppm, 0.0),
    };
    Ok(VerifyReport {
        serial: part.serial.clone(),
        max_error_ppm: dense.max_error_ppm,
        rms_error_ppm: dense.rms_error_ppm,
        worst_t_c: dense.worst_t_c,
        worst_stimulus: dense.worst_stimulus,
        points: dense.points,
        budget_ppm,
        table_allowance_ppm: allowance,
        analytic_bound_ppm: interpolation_bound_ppm(&frame, &plan),
        terms: terms.with_table(interp, quant, budget_ppm),
        plan,
        bytes: image.len(),
        pass: dense.max_error_ppm <= allowance,
        simulated: part.scenario.simulated,
        caution: crate::station::output::caution_for(part.scenario.simulated),
    })
}
