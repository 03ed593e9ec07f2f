//! Writes the table images and the recorded sample stream that the
//! bare-metal firmware in `examples/firmware/` embeds:
//!
//! - `examples/firmware/data/well_level_f32.bin`: f32 table image (Cortex-M4F path),
//! - `examples/firmware/data/well_level_q.bin`: Q-format table image (integer path),
//! - `examples/firmware/data/well_level_stream.csv`: 120 recorded samples.
//!
//! Scenario (invented data, DESIGN.md): a well-level logger's 0-10 bar gauge
//! silicon die, p-type piezoresistive bridge read by a 24-bit ADC, the
//! bridge's own resistance as the thermometer, -20..85 C. The part below is
//! a simple invented drift model with round coefficients; it stands in for a
//! calibrated part until the station's table command produces these images.
//!
//! `cargo run --example make_firmware_image` rewrites the files (atomically);
//! `cargo run --example make_firmware_image -- --check` fails if they differ
//! from what this program produces. The test `tests/firmware_qemu.rs` makes
//! the same check.

use compensate::ImageBuilder;
use compensate::image::{AxisSpec, MapSpec, QFormat, RawLimits, SignalKind, Unit};
use compensate::interp::Interpolation;
use std::path::{Path, PathBuf};

/// Temperature axis of the correction channels: -20..85 C in 7 C steps.
const T_START_C: f64 = -20.0;
const T_STEP_C: f64 = 7.0;
const T_NODES: usize = 16;
/// Thermometer nodes, evenly spaced in temperature-signal code.
const SIG_NODES: usize = 16;
/// Full scale: 10 bar gauge, in pascal.
pub const FULL_SCALE_PA: f64 = 1.0e6;
/// Reference temperature of the drift coefficients.
const T_REF_C: f64 = 25.0;
/// Recorded samples in the stream.
pub const STREAM_LEN: usize = 120;

/// Q formats of the integer image: temperature in Q16 C, temperature signal
/// in integer codes, output in Q8 Pa (1/256 Pa, far below the 500 Pa budget
/// of 0.05 % FS), offset in Q6 codes (raw << 6 stays below 2^30), gain in
/// Q30 Pa/code (0.25 Pa/code gives about 28 significant bits) and the
/// quadratic channel at the largest fraction the format allows.
///
/// Known limitation of layout version 1: the quadratic channel of this part
/// is about 5e-11 Pa/code^2, which needs about 45 fraction bits; at the
/// format's maximum of 30 it rounds to zero, so the integer path leaves the
/// bow (and the bow's share of the gain) uncorrected, about 0.3 % FS at full
/// scale. The f32 image is unaffected.
pub const Q_FORMAT: QFormat = QFormat {
    temperature: 16,
    signal: 0,
    output: 8,
    offset: 6,
    gain: 30,
    quadratic: 30,
};

/// The invented part (recalled-from-memory magnitudes for a boron-doped
/// bridge near 2e18 cm^-3, not a measured device): bridge resistance
/// temperature coefficient about +0.16 %/K, span falling about 0.21 %/K
/// under constant-voltage excitation, an offset that creeps with
/// temperature, and a 0.08 % FS bow.
pub mod part {
    use super::T_REF_C;

    /// Bridge resistance in ohms at `t_c`.
    pub fn resistance_ohm(t_c: f64) -> f64 {
        let dt = t_c - T_REF_C;
        5000.0 * (1.0 + 1.6e-3 * dt + 4.0e-6 * dt * dt)
    }

    /// Temperature-signal ADC code: the bridge resistance measured against
    /// a 10 kOhm reference by the 24-bit ADC (full scale 2^23).
    pub fn temp_code(t_c: f64) -> f64 {
        resistance_ohm(t_c) / 10_000.0 * 8_388_608.0
    }

    /// Span (codes from 0 to 10 bar) at `t_c`.
    pub fn span_codes(t_c: f64) -> f64 {
        let dt = t_c - T_REF_C;
        4.0e6 * (1.0 - 2.1e-3 * dt + 5.0e-6 * dt * dt)
    }

    /// Zero-pressure output code at `t_c`.
    pub fn offset_codes(t_c: f64) -> f64 {
        let dt = t_c - T_REF_C;
        52_000.0 + 140.0 * dt + 0.9 * dt * dt
    }

    /// Terminal-based bow as a fraction of span (negative: sags at mid-scale).
    pub const BOW: f64 = -8.0e-4;

    /// Raw output code at pressure fraction `x` (0..1 of 10 bar) and `t_c`.
    pub fn raw_code(x: f64, t_c: f64) -> f64 {
        let s = span_codes(t_c);
        offset_codes(t_c) + s * x + 4.0 * BOW * s * x * (x - 1.0)
    }

    /// Temperature at which the signal code equals `code` (inverse of
    /// [`temp_code`] by the quadratic formula).
    pub fn t_from_code(code: f64) -> f64 {
        let r = code / 8_388_608.0 * 10_000.0 / 5000.0;
        // 4e-6 dt^2 + 1.6e-3 dt + (1 - r) = 0, the root near dt = 0.
        let (a, b, c) = (4.0e-6, 1.6e-3, 1.0 - r);
        T_REF_C + (-b + (b * b - 4.0 * a * c).sqrt()) / (2.0 * a)
    }
}

/// Correction channels at temperature `t_c`: `(offset, gain, quadratic)` so
/// that `p = d (gain + quadratic d)`, `d = raw - offset`, inverts
/// [`part::raw_code`] to second order in the bow.
fn channels(t_c: f64) -> (f64, f64, f64) {
    let s = part::span_codes(t_c);
    let b = 4.0 * part::BOW;
    // d = s (1 - b) x + b s x^2, so x = d / s1 - b s d^2 / s1^3 + O(b^2).
    let s1 = s * (1.0 - b);
    let gain = FULL_SCALE_PA / s1;
    let quadratic = -FULL_SCALE_PA * b * s / (s1 * s1 * s1);
    (part::offset_codes(t_c), gain, quadratic)
}

fn q(v: f64, bits: u8) -> i32 {
    let scaled = (v * f64::from(1u32 << bits)).round();
    assert!(scaled.abs() < 2f64.powi(31), "{v} does not fit Q{bits}");
    scaled as i32
}

/// The three files, in memory.
pub struct FirmwareData {
    /// f32 table image.
    pub f32_image: Vec<u8>,
    /// Q-format table image.
    pub q_image: Vec<u8>,
    /// Recorded stream, CSV text.
    pub stream_csv: String,
}

/// Raw-code limits: rails near the 24-bit ends, calibrated range from a
/// little below the lowest zero-pressure code to a little above full scale.
const RAW_LIMITS: RawLimits = RawLimits {
    rail_lo: -8_388_000,
    raw_lo: 0,
    raw_hi: 4_400_000,
    rail_hi: 8_388_000,
};

/// Builds the images and the stream (deterministic).
pub fn build() -> FirmwareData {
    let t_nodes: Vec<f64> = (0..T_NODES)
        .map(|k| T_START_C + T_STEP_C * k as f64)
        .collect();
    let t_end = t_nodes[T_NODES - 1];
    let (offset, gain, quadratic): (Vec<f64>, Vec<f64>, Vec<f64>) = {
        let ch: Vec<_> = t_nodes.iter().map(|&t| channels(t)).collect();
        (
            ch.iter().map(|c| c.0).collect(),
            ch.iter().map(|c| c.1).collect(),
            ch.iter().map(|c| c.2).collect(),
        )
    };
    // Thermometer: integer signal codes, so the same axis serves both images.
    let sig_start = part::temp_code(T_START_C).round();
    let sig_end = part::temp_code(t_end).round();
    let sig_step = ((sig_end - sig_start) / (SIG_NODES - 1) as f64).ceil();
    let sig_codes: Vec<f64> = (0..SIG_NODES)
        .map(|k| sig_start + sig_step * k as f64)
        .collect();
    let therm_t: Vec<f64> = sig_codes.iter().map(|&c| part::t_from_code(c)).collect();
    let signal_lo = part::temp_code(-40.0).round();
    let signal_hi = part::temp_code(125.0).round();
    let mut serial = [0u8; 16];
    serial[..14].copy_from_slice(b"WLL-DEMO-00042");

    let f = |v: &[f64]| v.iter().map(|&x| x as f32).collect::<Vec<f32>>();
    let (therm_f, offset_f, gain_f, quad_f) = (f(&therm_t), f(&offset), f(&gain), f(&quadratic));
    let image_f32 = ImageBuilder::<f32> {
        interpolation: Interpolation::Linear,
        q_format: QFormat::F32,
        signal_kind: SignalKind::AdcCode,
        unit: Unit::Pascal,
        ratiometric: true,
        full_scale: FULL_SCALE_PA as f32,
        raw_limits: RAW_LIMITS,
        signal_lo: signal_lo as f32,
        signal_hi: signal_hi as f32,
        serial,
        thermometer: Some(MapSpec {
            axis: AxisSpec {
                start: sig_start as f32,
                step: sig_step as f32,
            },
            values: &therm_f,
        }),
        temperature_axis: AxisSpec {
            start: T_START_C as f32,
            step: T_STEP_C as f32,
        },
        offset: &offset_f,
        gain: &gain_f,
        quadratic: Some(&quad_f),
        grid: None,
    };

    let qf = Q_FORMAT;
    let qv = |v: &[f64], bits: u8| v.iter().map(|&x| q(x, bits)).collect::<Vec<i32>>();
    let (therm_q, offset_q, gain_q, quad_q) = (
        qv(&therm_t, qf.temperature),
        qv(&offset, qf.offset),
        qv(&gain, qf.gain),
        qv(&quadratic, qf.quadratic),
    );
    let image_q = ImageBuilder::<i32> {
        interpolation: Interpolation::Linear,
        q_format: qf,
        signal_kind: SignalKind::AdcCode,
        unit: Unit::Pascal,
        ratiometric: true,
        full_scale: FULL_SCALE_PA as f32,
        raw_limits: RAW_LIMITS,
        signal_lo: q(signal_lo, qf.signal),
        signal_hi: q(signal_hi, qf.signal),
        serial,
        thermometer: Some(MapSpec {
            axis: AxisSpec {
                start: q(sig_start, qf.signal),
                step: q(sig_step, qf.signal),
            },
            values: &therm_q,
        }),
        temperature_axis: AxisSpec {
            start: q(T_START_C, qf.temperature),
            step: q(T_STEP_C, qf.temperature),
        },
        offset: &offset_q,
        gain: &gain_q,
        quadratic: Some(&quad_q),
        grid: None,
    };

    let encode =
        |len: Result<usize, _>,
         enc: &dyn Fn(&mut [u8]) -> Result<usize, compensate::image::EncodeError>| {
            let len: usize = len.unwrap_or_else(|e| panic!("image length: {e}"));
            let mut buf = vec![0u8; len];
            let n = enc(&mut buf).unwrap_or_else(|e| panic!("encode: {e}"));
            buf.truncate(n);
            buf
        };
    let f32_image = encode(image_f32.encoded_len(), &|b| image_f32.encode(b));
    let q_image = encode(image_q.encoded_len(), &|b| image_q.encode(b));
    FirmwareData {
        f32_image,
        q_image,
        stream_csv: stream(),
    }
}

/// Pressure in pascal and temperature in degrees Celsius of recorded sample
/// `i` of the temperature ramp (`i < STREAM_LEN - 4`): a chamber-style ramp
/// from -20 C to 85 C and back while the pressure cycles over the range.
pub fn ramp_truth(i: usize) -> (f64, f64) {
    let ramp = STREAM_LEN - 4;
    let phase = i as f64 / (ramp - 1) as f64;
    // Triangle: up for the first half, down for the second.
    let tri = 1.0 - (2.0 * phase - 1.0).abs();
    let t_c = T_START_C + (85.0 - T_START_C) * tri;
    let x = 0.5 - 0.45 * (i as f64 * 0.37).cos();
    (x * FULL_SCALE_PA, t_c)
}

/// Largest ADC noise added to a recorded code, in codes.
pub const NOISE_CODES: f64 = 3.5;

/// The recorded stream: the ramp of [`ramp_truth`] with a few codes of
/// deterministic ADC noise, then four fault samples (open bridge at the
/// upper rail, thermometer signal beyond its plausible range, a code above
/// the calibrated range, a code below it).
fn stream() -> String {
    let mut out = String::from(
        "# Recorded stream of the well-level logger demo (invented data), made by\n\
         # examples/make_firmware_image.rs: bridge output code, temperature-signal code.\n\
         raw_code,temp_code\n",
    );
    // Numerical Recipes' 32-bit LCG constants (Press et al., Numerical
    // Recipes, 2nd ed. 1992, sec. 7.1): deterministic noise, same on every run.
    let mut state: u32 = 20_251_201;
    let mut noise = || {
        state = state.wrapping_mul(1_664_525).wrapping_add(1_013_904_223);
        f64::from(state >> 29) - NOISE_CODES
    };
    for i in 0..STREAM_LEN - 4 {
        let (p_pa, t_c) = ramp_truth(i);
        let raw = (part::raw_code(p_pa / FULL_SCALE_PA, t_c) + noise()).round() as i32;
        let temp = (part::temp_code(t_c) + noise()).round() as i32;
        out.push_str(&format!("{raw},{temp}\n"));
    }
    let t25 = part::temp_code(25.0).round() as i32;
    let mid = part::raw_code(0.5, 25.0).round() as i32;
    for (raw, temp) in [
        (RAW_LIMITS.rail_hi, t25),
        (mid, part::temp_code(150.0).round() as i32),
        (RAW_LIMITS.raw_hi + 100_000, t25),
        (RAW_LIMITS.raw_lo - 30_000, t25),
    ] {
        out.push_str(&format!("{raw},{temp}\n"));
    }
    out
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
