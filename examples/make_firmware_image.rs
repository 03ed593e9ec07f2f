//! Writes the table images and the recorded sample stream that the
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
//! ```
//!
//! (run in-process through `host_tools::cli`, in a temporary folder), then
//! records a stream from the same simulated part (`host_tools::station::
//! simulate`, the code behind `simulate`):
//!
//! - `examples/firmware/data/well_level_f32.bin`: f32 table image (Cortex-M4F path),
//! - `examples/firmware/data/well_level_q.bin`: Q-format table image (integer path),
//! - `examples/firmware/data/well_level_stream.csv`: 120 recorded samples.
//!
//! Scenario (invented data, DESIGN.md): a well-level logger's 0-10 bar gauge
//! silicon die, p-type piezoresistive bridge read by a 24-bit ADC, the
//! bridge's own resistance as the thermometer (read by a second 24-bit ADC),
//! -20..85 C, budget 0.05 % FS of which the table gets 0.01 %. The images take the temperature signal as
//! whole ADC codes (`--signal-unit adc-code`), as the firmware reads them,
//! so the same stream drives both paths. Interpolation is forced to linear:
//! the chooser's least-flash pick for this part is a 3-node monotone cubic
//! table, whose temperature update costs about twice the instructions of
//! the linear kernel (issue 6's per-update targets); linear needs a few more
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

/// Seed of the simulated lot (`simulate --seed`).
pub const SEED: u64 = 42;
/// Seed of the recorded stream's noise and die-temperature error.
pub const STREAM_SEED: u64 = 4242;
/// Recorded samples in the stream (a ramp, then four fault samples).
pub const STREAM_LEN: usize = 120;
/// Full scale of the 0-10 bar gauge, in bar (the images' unit).
pub const FULL_SCALE_BAR: f64 = 10.0;
/// Budget given to `table`, ppm of span: a fifth of the data sheet's
/// 500 ppm, so the table's error stays small beside the fitted model's own
/// error against the part (the full 500 ppm gives a 2-node table that uses
/// up the budget by itself).
pub const TABLE_BUDGET_PPM: &str = "100";
/// Operating range of the scenario, C.
const RANGE_C: (f64, f64) = (-20.0, 85.0);

/// The three files, in memory.
pub struct FirmwareData {
    /// f32 table image.
    pub f32_image: Vec<u8>,
    /// Q-format table image.
    pub q_image: Vec<u8>,
    /// Recorded stream, CSV text.
    pub stream_csv: String,
}

/// Runs one `semidrift` command in-process; panics with its message on failure.
fn semidrift(args: &[&str]) -> String {
    let mut out = Vec::new();
    let mut argv = vec!["semidrift"];
    argv.extend_from_slice(args);
    let code = host_tools::cli::run_with_args(argv, &mut out);
    assert_eq!(code, 0, "semidrift {args:?} failed (exit {code})");
    String::from_utf8_lossy(&out).into_owned()
}

/// Pressure in bar and chamber temperature in degrees Celsius of recorded
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

/// The recorded stream: the ramp of [`ramp_truth`] read from the simulated
/// part, then four fault samples (open bridge at the upper rail, thermometer
/// signal beyond its plausible range, a code above the calibrated range, a
/// code below it).
fn stream(scenario: &Scenario, q_image: &[u8]) -> String {
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

/// Runs the chain in a temporary folder and returns the files (deterministic).
pub fn build() -> FirmwareData {
    let dir = tempfile::tempdir().expect("temporary folder");
    let p = |name: &str| dir.path().join(name).display().to_string();
    let seed = SEED.to_string();
    semidrift(&[
        "simulate",
        "well-logger",
        "--parts",
        "1",
        "--seed",
        &seed,
        "--out",
        &p("cal.csv"),
        "--write-spec",
        &p("well.toml"),
    ]);
    semidrift(&[
        "calibrate",
        &p("well.toml"),
        &p("cal.csv"),
        "--out-dir",
        &p("parts"),
        "--quiet",
    ]);
    let part = p("parts/WELL-0001.part.json");
    for format in ["f32", "q"] {
        semidrift(&[
            "table",
            &part,
            "--format",
            "bin",
            "--budget",
            TABLE_BUDGET_PPM,
            "--number-format",
            format,
            "--interpolation",
            "linear",
            "--signal-unit",
            "adc-code",
            "--channel-axis",
            "signal",
            "--out",
            &p(&format!("{format}.bin")),
        ]);
    }
    let read = |name: &str| std::fs::read(p(name)).unwrap_or_else(|e| panic!("{name}: {e}"));
    let (f32_image, q_image) = (read("f32.bin"), read("q.bin"));
    let stream_csv = stream(&Scenario::well_logger(), &q_image);
    FirmwareData {
        f32_image,
        q_image,
        stream_csv,
    }
}

/// Folder the firmware embeds its data from.
pub fn data_dir() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("examples/firmware/data")
}

/// File names and contents, in a fixed order.
pub fn files(data: &FirmwareData) -> [(&'static str, &[u8]); 3] {
    [
        ("well_level_f32.bin", &data.f32_image),
        ("well_level_q.bin", &data.q_image),
        ("well_level_stream.csv", data.stream_csv.as_bytes()),
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
