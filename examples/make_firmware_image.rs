//! Writes the table images and the simulated sample stream that the
//! bare-metal firmware in `examples/firmware/` embeds, by running the
//! calibration station chain on a simulated well-level logger part:
//!
//! ```text
//! semidrift simulate well-logger --parts 1 --seed 42 --out cal.csv --write-spec well.toml
//! semidrift calibrate well.toml cal.csv --out-dir parts --quiet
//! semidrift table parts/WELL-0001.part.json --format bin --budget 100 \
//!     --number-format f32 --interpolation linear --signal-unit adc-code \
//!     --channel-axis signal --out f32.bin
//! semidrift table parts/WELL-0001.part.json --format bin --budget 100 \
//!     --number-format q --interpolation linear --signal-unit adc-code \
//!     --channel-axis signal --out q.bin
//! semidrift table parts/WELL-0001.part.json --format bin --budget 33 \
//!     --number-format f32 --interpolation linear --signal-unit adc-code \
//!     --channel-axis signal --out f32_fine.bin
//! ```
//!
//! (the same steps through the library: `simulate::measure`,
//! `lot::calibrate_lot`, `pipeline::build_table_with`), then records a stream from the same simulated part (`host_tools::station::
//! simulate`, the code behind `simulate`):
//!
//! - `examples/firmware/data/well_level_f32.bin`: f32 table image (Cortex-M4F path),
//! - `examples/firmware/data/well_level_q.bin`: Q-format table image (integer path),
//! - `examples/firmware/data/well_level_stream.csv`: 120 simulated samples,
//! - `examples/firmware/data/well_level_poly.rs`: the benchmark's polynomial
//!   baseline, fitted to the same calibrated part at the lowest degree whose
//!   dense error is at or below the table images' own
//!   (`host_tools::station::poly_baseline`), and every degree up to
//!   [`SWEEP_MAX_DEGREE`] with its error (`host_tools::station::poly_sweep`),
//! - `examples/firmware/data/well_level_f32_fine.bin`: a finer f32 image
//!   (`--budget 30`, as accurate as the polynomial at the crossover degree),
//!   so the benchmark shows that the update's cost does not grow with the
//!   node count.
//!
//! Scenario (invented data, the README's demo scenario): a well-level logger's 0-10 bar gauge
//! silicon die, p-type piezoresistive bridge read by a 24-bit ADC, the
//! bridge's own resistance as the thermometer (read by a second 24-bit ADC),
//! -20..85 C, budget 0.05 % FS of which the table gets 0.01 %. The images take the temperature signal as
//! whole ADC codes (`--signal-unit adc-code`), as the firmware reads them,
//! so the same stream drives both paths. Interpolation is forced to linear:
//! the chooser's least-flash pick for this part is a 3-node monotone cubic
//! table, whose temperature update costs about twice the instructions of
//! the linear kernel (README "Performance", per-update targets); linear needs a few more
//! nodes and bytes. The channels are tabulated over the temperature signal
//! (`--channel-axis signal`): the chooser's least-flash pick would be a
//! thermometer map followed by channels over temperature (256 bytes against
//! 364), but over the signal a temperature update is one look-up instead of
//! two, which is what a firmware updating the temperature often wants.
//!
//! `cargo run --example make_firmware_image` rewrites the files (atomically);
//! `cargo run --example make_firmware_image -- --check` fails if they differ
//! from what this program produces. The test `tests/firmware_qemu.rs` makes
//! the same check.

use host_tools::station::chamber::ChamberRow;
use host_tools::station::scenario::Scenario;
use host_tools::station::simulate::{Plan, draw_parts, measure};
use std::path::{Path, PathBuf};

use host_tools::station::part_file::PartFile;
use host_tools::station::part_model::PartModel;
use host_tools::station::pipeline::{DENSE_STIMULI, DENSE_TEMPS};
use host_tools::station::pipeline::{VerifyReport, dense_counts, part_curves, plan_of, verify};
use host_tools::station::poly_baseline::{
    Baseline, FIT_TEMPS, MAX_CONDITION, equal_accuracy, grid_points,
};
use host_tools::station::poly_sweep::{SweepDegree, SweepEnd, degree_sweep};
use host_tools::station::table::{SignalUnit, TableFrame};

/// Seed of the simulated lot (`simulate --seed`).
pub const SEED: u64 = 42;
/// Seed of the simulated stream's noise and die-temperature error.
pub const STREAM_SEED: u64 = 4242;
/// Simulated samples in the stream (a ramp, then four fault samples).
pub const STREAM_LEN: usize = 120;
/// Full scale of the 0-10 bar gauge, in bar (the images' unit).
pub const FULL_SCALE_BAR: f64 = 10.0;
/// Budget given to `table`, ppm of span: a fifth of the data sheet's
/// 500 ppm, so the table's error stays small beside the fitted model's own
/// error against the part (the full 500 ppm gives a 2-node table that uses
/// up the budget by itself).
pub const TABLE_BUDGET_PPM: &str = "100";
/// Budget of the finer f32 image the benchmark times beside the demo image
/// (`well_level_f32_fine.bin`), ppm of span: the largest whole budget whose
/// table's dense error is at or below the f32 polynomial's at the Cortex-M4F
/// crossover (degree [`FINE_MATCH_DEGREE`], 14.33 ppm; budget 34 gives
/// 15.11 ppm). The budget also covers the fit residual (12.05 ppm) and the
/// temperature-signal term (5.08 ppm), which the dense check against the
/// fitted model does not see, so the table gets about 13.9 ppm of it.
pub const FINE_TABLE_BUDGET_PPM: &str = "33";
/// The lowest degree whose checked f32 temperature update the benchmark
/// measures above our look-up's on the Cortex-M4F (`poly_crossover_degree`);
/// the finer image must be at least as accurate as this degree.
pub const FINE_MATCH_DEGREE: usize = 5;
/// Operating range of the scenario, C.
const RANGE_C: (f64, f64) = (-20.0, 85.0);

/// The three files, in memory.
pub struct FirmwareData {
    /// f32 table image.
    pub f32_image: Vec<u8>,
    // Documented fields read alike across structs (arrhenius.rs, design/learn.rs); each is its own.
    /// Q-format table image.
    pub q_image: Vec<u8>,
    /// The finer f32 table image ([`FINE_TABLE_BUDGET_PPM`]).
    pub f32_fine_image: Vec<u8>,
    /// Simulated stream, CSV text.
    pub stream_csv: String,
    /// The polynomial baseline as Rust source (`well_level_poly.rs`).
    pub poly_rs: String,
    /// The calibrated part the images and the polynomial are made from.
    pub part: PartFile,
    /// The polynomial baseline `poly_rs` holds.
    pub poly: Baseline,
}

/// Powers of the raw code in the polynomial baseline: the part has no bow
/// and its table corrects offset and gain only, so the like-for-like
/// polynomial is linear in the raw code (a quadratic term would add cost and
/// no accuracy).
pub const POLY_RAW_TERMS: usize = 2;

/// Highest degree of the accuracy sweep written beside the baseline
/// (`SWEEP_*` in `well_level_poly.rs`): three times the chosen degree, far
/// enough for the polynomial's update to cost more than the table's on the
/// Cortex-M4F (the benchmark's crossover), still well conditioned (the
/// sweep stops earlier if not, see `poly_sweep`).
pub const SWEEP_MAX_DEGREE: usize = 12;

/// Dense verification of `image` against `part` (`semidrift verify`).
pub fn verify_image(image: &[u8], part: &PartFile) -> VerifyReport {
    let curves = part_curves(part).expect("the part's scenario has model shapes");
    let view = compensate::TableView::parse(image).expect("the station's image parses");
    let (n_t, n_s) = dense_counts(&plan_of(&view));
    let budget: f64 = TABLE_BUDGET_PPM.parse().expect("budget is a number");
    verify(image, part, &curves, budget, n_t, n_s).expect("the station's image verifies")
}

/// Hundredths of a ppm, rounded (the firmware prints them without floats).
fn centi(ppm: f64) -> u64 {
    (ppm * 100.0).round() as u64
}

/// The polynomial baseline fitted to `part` at the accuracy of its images,
/// and it as the Rust source the firmware compiles in.
fn poly_source(part: &PartFile, f32_image: &[u8], q_image: &[u8]) -> (Baseline, String) {
    let table_f32 = verify_image(f32_image, part).max_error_ppm;
    let table_q = verify_image(q_image, part).max_error_ppm;
    let curves = part_curves(part).expect("the part's scenario has model shapes");
    let model = PartModel {
        curves: &curves,
        params: part.params.expect("physics part file"),
    };
    let frame = TableFrame::new(part, model)
        .expect("the part's thermometer is monotone")
        .with_signal_unit(SignalUnit::AdcCode);
    let (b, below): (Baseline, Option<Baseline>) =
        equal_accuracy(&frame, table_f32, table_q, POLY_RAW_TERMS)
            .unwrap_or_else(|e| panic!("polynomial baseline of {}: {e}", part.serial));
    let degree = b.fit.degree();
    let (below_f32, below_q) = below.as_ref().map_or((f64::NAN, f64::NAN), |l| {
        (l.f32_error.max_error_ppm, l.q_error.max_error_ppm)
    });
    let (f, q) = (&b.f32_form, &b.q_form);
    let rows_f32 = rust_rows(&f.rows, |c| format!("{c:?}"));
    let rows_q = rust_rows(&q.rows, |c| c.to_string());
    let (fe, qe) = (b.f32_error.max_error_ppm, b.q_error.max_error_ppm);
    let fit_points = grid_points(&frame, FIT_TEMPS, DENSE_STIMULI);
    let dense = grid_points(&frame, DENSE_TEMPS, DENSE_STIMULI);
    let (sweep, end) = degree_sweep(
        &frame,
        &fit_points,
        &dense,
        SWEEP_MAX_DEGREE,
        POLY_RAW_TERMS,
    );
    let source = format!(
        "//! The benchmark's polynomial baseline for the well-level demo part ({serial}, seed {SEED}):\n\
         //! `reading = p0(u) + p1(u) raw`, each `p_i` of degree {degree} in\n\
         //! `u = (temperature-signal code - CENTRE_CODE) / 2^U_SHIFT`, least-squares fitted\n\
         //! to the same calibrated part model as the table images; the lowest degree whose\n\
         //! dense maximum error (the grid and metric of `semidrift verify`: 20001\n\
         //! temperatures x 6 stimuli, ppm of span) is at or below the table's:\n\
         //!\n\
         //! | form | polynomial, degree {degree} | table image | polynomial, degree {below_degree} |\n\
         //! |---|---|---|---|\n\
         //! | f32 | {fe:.2} ppm | {table_f32:.2} ppm | {below_f32:.2} ppm |\n\
         //! | Q | {qe:.2} ppm | {table_q:.2} ppm | {below_q:.2} ppm |\n\
         //!\n\
         //! Generated by examples/make_firmware_image.rs (host_tools::station::poly_baseline);\n\
         //! do not edit. Regenerate from the repository root with\n\
         //! `cargo run --example make_firmware_image`.\n\
         \n\
         /// Degree of each `p_i` in `u`.\n\
         pub const DEGREE: usize = {degree};\n\
         /// Coefficients per `p_i` (`DEGREE + 1`).\n\
         pub const TERMS: usize = {terms};\n\
         /// Powers of the raw code (`p0`, `p1`).\n\
         pub const RAW_TERMS: usize = {raw_terms};\n\
         /// Temperature-signal code at `u = 0`.\n\
         pub const CENTRE_CODE: i32 = {centre};\n\
         /// `u = (code - CENTRE_CODE) / 2^U_SHIFT`, |u| <= 1 over -20..85 C.\n\
         pub const U_SHIFT: u32 = {u_shift};\n\
         /// Shift of the integer form's Horner step in the raw code.\n\
         pub const X_SHIFT: u32 = {x_shift};\n\
         /// Fraction bits of the integer form's reading (bar).\n\
         pub const OUT_BITS: u32 = {out_bits};\n\
         /// `COEFFS_F32[i][j]`: coefficient of `u^j raw^i`, bar per code^i.\n\
         pub const COEFFS_F32: [[f32; TERMS]; RAW_TERMS] = [\n{rows_f32}];\n\
         /// `COEFFS_Q[i][j]`: the same in Q(`OUT_BITS + i X_SHIFT`).\n\
         pub const COEFFS_Q: [[i32; TERMS]; RAW_TERMS] = [\n{rows_q}];\n\
         /// Dense maximum error of the f32 form, hundredths of a ppm of span.\n\
         pub const POLY_ERROR_F32_CENTI_PPM: u64 = {fe_c};\n\
         /// Dense maximum error of the integer form, hundredths of a ppm of span.\n\
         pub const POLY_ERROR_Q_CENTI_PPM: u64 = {qe_c};\n\
         /// Dense maximum error of the f32 table image, hundredths of a ppm of span.\n\
         pub const TABLE_ERROR_F32_CENTI_PPM: u64 = {tf_c};\n\
         /// Dense maximum error of the Q table image, hundredths of a ppm of span.\n\
         pub const TABLE_ERROR_Q_CENTI_PPM: u64 = {tq_c};\n",
        serial = part.serial,
        below_degree = degree.saturating_sub(1),
        terms = degree + 1,
        raw_terms = POLY_RAW_TERMS,
        centre = q.centre,
        u_shift = q.u_shift,
        x_shift = q.x_shift,
        out_bits = q.out_bits,
        rows_f32 = rows_f32.concat(),
        rows_q = rows_q.concat(),
        fe_c = centi(fe),
        qe_c = centi(qe),
        tf_c = centi(table_f32),
        tq_c = centi(table_q),
    ) + &sweep_source(&sweep, end);
    (b, source)
}

/// The finer image's constants of `well_level_poly.rs`: its dense error
/// (`semidrift verify`) and the degree it is sized against.
fn fine_source(part: &PartFile, fine: &[u8]) -> String {
    let e = verify_image(fine, part).max_error_ppm;
    format!(
        "/// Dense maximum error of the finer f32 table image (`well_level_f32_fine.bin`, budget\n\
         /// {FINE_TABLE_BUDGET_PPM}), hundredths of a ppm of span: {e:.2} ppm.\n\
         pub const TABLE_FINE_ERROR_F32_CENTI_PPM: u64 = {c};\n\
         /// The degree whose f32 error the finer image matches (the Cortex-M4F crossover).\n\
         pub const FINE_MATCH_DEGREE: usize = {FINE_MATCH_DEGREE};\n",
        c = centi(e),
    )
}

/// Hundredths of a ppm of a Q error, `u64::MAX` without a Q form.
fn centi_q(d: &SweepDegree) -> u64 {
    d.q_error
        .as_ref()
        .map_or(u64::MAX, |e| centi(e.max_error_ppm))
}

/// The `SWEEP_*` constants of `well_level_poly.rs`: every degree's dense
/// error and coefficients.
fn sweep_source(sweep: &[SweepDegree], end: SweepEnd) -> String {
    let end_text = match end {
        SweepEnd::MaxDegree => format!("it reaches degree {SWEEP_MAX_DEGREE}"),
        SweepEnd::IllConditioned { degree, condition } => {
            format!("degree {degree} has condition {condition:.1e}")
        }
    };
    let ppm = |e: Option<f64>| e.map_or("-".to_string(), |e| format!("{e:.2} ppm"));
    let table: String = sweep
        .iter()
        .map(|d| {
            format!(
                "/// | {} | {} | {} | {} | {:.1e} |\n",
                d.degree,
                ppm(Some(d.f32_error.max_error_ppm)),
                ppm(d.q_error.as_ref().map(|e| e.max_error_ppm)),
                ppm(Some(d.f64_error.max_error_ppm)),
                d.condition
            )
        })
        .collect();
    let list = |v: Vec<String>| v.join(", ");
    let f32_errors = list(
        sweep
            .iter()
            .map(|d| centi(d.f32_error.max_error_ppm).to_string())
            .collect(),
    );
    let q_errors = list(sweep.iter().map(|d| centi_q(d).to_string()).collect());
    let mut out = format!(
        "/// Degrees of the accuracy sweep: 1..=SWEEP_DEGREES, each fitted and measured as\n\
         /// `DEGREE` is (least squares to the part model; dense maximum error on the grid and\n\
         /// metric of `semidrift verify`). It stops before a degree whose scaled design matrix\n\
         /// has a condition number above {MAX_CONDITION:.0e} (the fit's SVD cutoff would drop a\n\
         /// singular value) or at degree {SWEEP_MAX_DEGREE}; {end_text}.\n\
         pub const SWEEP_DEGREES: usize = {n};\n\
         /// `SWEEP_ERROR_F32_CENTI_PPM[d - 1]`: dense maximum error of the degree-`d` f32 form,\n\
         /// hundredths of a ppm of span. Per degree (f64 fit: the fit's own error, without f32\n\
         /// rounding; condition: of the fit's scaled design matrix):\n\
         ///\n\
         /// | degree | f32 | Q | f64 fit | condition |\n\
         /// |---|---|---|---|---|\n\
         {table}\
         pub const SWEEP_ERROR_F32_CENTI_PPM: [u64; SWEEP_DEGREES] = [{f32_errors}];\n\
         /// The same for the integer form (`u64::MAX`: no Q form fits i32).\n\
         pub const SWEEP_ERROR_Q_CENTI_PPM: [u64; SWEEP_DEGREES] = [{q_errors}];\n",
        n = sweep.len(),
    );
    for d in sweep {
        let k = d.degree + 1;
        let rows_f32 = rust_rows(&d.f32_form.rows, |c| format!("{c:?}"));
        out += &format!(
            "/// Degree-{deg} coefficients, f32, as `COEFFS_F32`.\n\
             pub const SWEEP_COEFFS_F32_{deg}: [[f32; {k}]; RAW_TERMS] = [\n{rows}];\n",
            deg = d.degree,
            rows = rows_f32.concat(),
        );
        if let Some(q) = &d.q_form {
            let rows_q = rust_rows(&q.rows, |c| c.to_string());
            out += &format!(
                "/// Degree-{deg} coefficients, integer, as `COEFFS_Q` with shift `SWEEP_X_SHIFT_{deg}`.\n\
                 pub const SWEEP_COEFFS_Q_{deg}: [[i32; {k}]; RAW_TERMS] = [\n{rows}];\n\
                 /// Shift of the degree-{deg} integer form's Horner step in the raw code.\n\
                 pub const SWEEP_X_SHIFT_{deg}: u32 = {xs};\n",
                deg = d.degree,
                rows = rows_q.concat(),
                xs = q.x_shift,
            );
        }
    }
    out
}

/// Pressure in bar and chamber temperature in degrees Celsius of simulated
/// sample `i` of the ramp (`i < STREAM_LEN - 4`): a chamber-style ramp from
/// -20 C to 85 C and back while the pressure cycles over the range.
pub fn ramp_truth(i: usize) -> (f64, f64) {
    let ramp = STREAM_LEN - 4;
    let phase = i as f64 / (ramp - 1) as f64;
    // Triangle: up for the first half, down for the second.
    let tri = 1.0 - (2.0 * phase - 1.0).abs();
    let t_c = RANGE_C.0 + (RANGE_C.1 - RANGE_C.0) * tri;
    let x = 0.5 - 0.45 * (i as f64 * 0.37).cos();
    (x * FULL_SCALE_BAR, t_c)
}

/// One reading of the simulated part at `t_c` and `bar`, as (output code,
/// temperature-signal code): the station's simulated die, chamber error,
/// ADC noise and quantization.
fn record(scenario: &Scenario, t_c: f64, bar: f64, k: usize) -> (i64, i64) {
    let parts = draw_parts(scenario, 1, SEED);
    let plan = Plan {
        temps_c: vec![t_c],
        stimuli: vec![bar],
    };
    let rows: Vec<ChamberRow> = measure(scenario, &parts, &plan, STREAM_SEED ^ k as u64)
        .unwrap_or_else(|e| panic!("simulated part at {t_c} C, {bar} bar: {e}"));
    let r = &rows[0];
    (
        (r.output / scenario.output_adc.lsb()).round() as i64,
        (r.temp_signal / scenario.signal_adc.lsb()).round() as i64,
    )
}

/// The simulated stream: the ramp of [`ramp_truth`] read from the simulated
/// part, then four fault samples (open bridge at the upper rail, thermometer
/// signal beyond its plausible range, a code above the calibrated range, a
/// code below it).
fn stream(scenario: &Scenario, q_image: &[u8]) -> String {
    // The header's first word stays as committed in
    // `examples/firmware/data/well_level_stream.csv` (the firmware test
    // compares the files byte for byte); the stream is simulated, as the
    // same line says.
    let mut out = String::from(
        "# Recorded stream of the well-level logger demo (simulated part WELL-0001, seed 42),\n\
         # made by examples/make_firmware_image.rs: bridge output code, temperature-signal code.\n\
         raw_code,temp_code\n",
    );
    for i in 0..STREAM_LEN - 4 {
        let (bar, t_c) = ramp_truth(i);
        let (raw, temp) = record(scenario, t_c, bar, i);
        out.push_str(&format!("{raw},{temp}\n"));
    }
    let limits = compensate::TableView::parse(q_image)
        .expect("the station's Q image parses")
        .raw_limits();
    let (mid, t25) = record(scenario, 25.0, 5.0, STREAM_LEN);
    let (_, hot) = record(scenario, 125.0, 5.0, STREAM_LEN + 1);
    for (raw, temp) in [
        (i64::from(limits.rail_hi), t25),
        (mid, hot),
        (i64::from(limits.raw_hi) + 100_000, t25),
        (i64::from(limits.raw_lo) - 30_000, t25),
    ] {
        out.push_str(&format!("{raw},{temp}\n"));
    }
    out
}

/// Runs the station chain through the library (the steps `semidrift
/// simulate`, `calibrate` and `table --signal-unit adc-code --channel-axis
/// signal --interpolation linear` take) and returns the files
/// (deterministic).
pub fn build() -> FirmwareData {
    use host_tools::station::chamber::ChamberData;
    use host_tools::station::choose::Restrict;
    use host_tools::station::lot::{Silent, calibrate_lot};
    use host_tools::station::pipeline::build_table_with;
    use host_tools::station::table::{AxisKind, InterpKind, NumFormat};
    // The scenario file `simulate --write-spec` writes: the built-in one,
    // marked simulated.
    let scenario = Scenario::well_logger().marked_simulated();
    let plan = Plan {
        temps_c: scenario.cal_temps_c.clone(),
        stimuli: scenario.stimuli.clone(),
    };
    let parts = draw_parts(&scenario, 1, SEED);
    let data = ChamberData::from(
        measure(&scenario, &parts, &plan, SEED).unwrap_or_else(|e| panic!("simulate: {e}")),
    );
    let curves = part_shapes(&scenario);
    let mut fitted = calibrate_lot(&scenario, &curves, &data, &Silent);
    let part = fitted.remove(0);
    assert!(part.is_ok(), "calibrate: {}", part.status);
    let image = |format: NumFormat, budget: &str| {
        let restrict = Restrict {
            interpolation: Some(InterpKind::Linear),
            format: Some(format),
            axis: Some(AxisKind::Signal),
        };
        let budget: f64 = budget.parse().expect("budget is a number");
        build_table_with(&part, &curves, budget, restrict, SignalUnit::AdcCode)
            .unwrap_or_else(|e| panic!("table {format:?} at {budget} ppm: {e}"))
            .image
    };
    let f32_image = image(NumFormat::F32, TABLE_BUDGET_PPM);
    let q_image = image(NumFormat::Q, TABLE_BUDGET_PPM);
    let f32_fine_image = image(NumFormat::F32, FINE_TABLE_BUDGET_PPM);
    let stream_csv = stream(&Scenario::well_logger(), &q_image);
    let (poly, mut poly_rs) = poly_source(&part, &f32_image, &q_image);
    poly_rs += &fine_source(&part, &f32_fine_image);
    FirmwareData {
        f32_image,
        q_image,
        f32_fine_image,
        stream_csv,
        poly_rs,
        part,
        poly,
    }
}

/// The full model's shapes for `scenario`.
fn part_shapes(scenario: &Scenario) -> host_tools::station::curves::ShapeCurves {
    host_tools::station::model_shapes::shapes_for(scenario)
        .unwrap_or_else(|e| panic!("full model: {e}"))
}

/// Folder the firmware embeds its data from.
pub fn data_dir() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("examples/firmware/data")
}

/// File names and contents, in a fixed order.
pub fn files(data: &FirmwareData) -> [(&'static str, &[u8]); 5] {
    [
        ("well_level_f32.bin", &data.f32_image),
        ("well_level_q.bin", &data.q_image),
        ("well_level_f32_fine.bin", &data.f32_fine_image),
        ("well_level_stream.csv", data.stream_csv.as_bytes()),
        ("well_level_poly.rs", data.poly_rs.as_bytes()),
    ]
}

/// Names of the files that differ from (or are missing in) `dir`.
pub fn stale_files(dir: &Path, data: &FirmwareData) -> Vec<&'static str> {
    files(data)
        .into_iter()
        .filter(|(name, bytes)| std::fs::read(dir.join(name)).ok().as_deref() != Some(*bytes))
        .map(|(name, _)| name)
        .collect()
}

#[allow(dead_code)]
fn main() {
    let check = std::env::args().any(|a| a == "--check");
    let data = build();
    let dir = data_dir();
    if check {
        let stale = stale_files(&dir, &data);
        if stale.is_empty() {
            println!("firmware data in {} is up to date", dir.display());
            return;
        }
        eprintln!(
            "error: {}: {} out of date; run `cargo run --example make_firmware_image`",
            dir.display(),
            stale.join(", ")
        );
        std::process::exit(1);
    }
    for (name, bytes) in files(&data) {
        let path = dir.join(name);
        let tmp = dir.join(format!(".{name}.tmp"));
        let write = std::fs::write(&tmp, bytes).and_then(|()| std::fs::rename(&tmp, &path));
        if let Err(e) = write {
            let _ = std::fs::remove_file(&tmp);
            eprintln!("error: {}: cannot write: {e}", path.display());
            std::process::exit(2);
        }
        println!("wrote {} ({} bytes)", path.display(), bytes.len());
    }
}

/// Rows of a coefficient matrix as lines of a Rust array literal, each
/// number written by `fmt`.
fn rust_rows<T>(rows: &[Vec<T>], fmt: impl Fn(&T) -> String) -> Vec<String> {
    rows.iter()
        .map(|r| {
            let v: Vec<String> = r.iter().map(&fmt).collect();
            format!("    [{}],\n", v.join(", "))
        })
        .collect()
}
