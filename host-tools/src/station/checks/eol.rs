//! The end-of-line check's judgement: the device's results for a part's
//! check rows against the host's `apply` on the same image (the runtime
//! crate's own code) and against the reference stimulus.
//!
//! Agreement. A Q image must agree bit for bit: integer arithmetic has one
//! right answer. An f32 image must agree within f32 rounding: this
//! firmware and the host run the same Rust code in IEEE 754 binary32 with
//! round-to-nearest, and rustc never fuses `a * b + c` unless asked, so the
//! results are expected bit-identical (and were, on both emulated boards);
//! the tolerance is for a part firmware built otherwise (another compiler,
//! fused multiply-add, another order of the interpolation's operations).
//! Such an evaluation may round each of the offset's two interpolation
//! steps differently (half a unit in the last place each, so one unit of
//! the offset, which the subtraction `raw - offset` passes on at full
//! size), and the gain and the product once more each (a unit of the
//! value's magnitude each): `|gain| ulp(max(|raw|, |offset|)) + 2
//! ulp(|value|)`, [`value_tolerance`]. The temperature read interpolates
//! the same way: two units of its own magnitude plus the change one unit
//! of the signal makes, [`F32_TEMPERATURE_ULPS`]. Statuses must be equal.
//! The bound is derived for the offset-gain pipeline (what linear and
//! cubic images without quadratic channel or 2-D correction run); the
//! quadratic and 2-D terms add roundings of small corrections, which a
//! firmware built otherwise could push past it on such images.
//! A changed table byte moves the results past these bounds unless it
//! sits in the lowest bits of a number; any change at all fails the
//! device's own CRC check first, and the test `tests/eol_gdb.rs` changes a
//! byte and its CRC together to show the comparison catching it.
//!
//! Error. The device's value against the row's reference stimulus, in ppm
//! of span as `apply` computes it, judged against the part's budget for
//! rows inside the table's domain (runtime status OK) and off the ADC's
//! rails; other rows are reported, not judged.

use crate::station::apply::{ImageCompensation, RuntimeInput, RuntimeOutput, status_text};
use crate::station::chamber::ChamberRow;
use crate::station::part_file::PartFile;
use compensate::image::NumberFormat;

/// Units in the last place of the temperature that a differently rounded
/// f32 interpolation may move it, besides one unit of the signal: two
/// roundings (product and sum of the linear step), half a unit each, and
/// as much again for the position's own rounding.
pub const F32_TEMPERATURE_ULPS: f32 = 2.0;

/// The distance from `x` to the next f32 away from zero.
pub fn ulp(x: f32) -> f32 {
    let a = x.abs();
    if !a.is_finite() {
        return f32::NAN;
    }
    f32::from_bits(a.to_bits() + 1) - a
}

/// Tolerance on an f32 value: `|gain| ulp(max(|raw|, |offset|)) + 2 ulp(|value|)`.
pub fn value_tolerance(raw: f32, offset: f32, gain: f32, value: f32) -> f32 {
    gain.abs() * ulp(raw.abs().max(offset.abs())) + 2.0 * ulp(value)
}

/// Whether a device's f32 result agrees with the host's: the same bits, or
/// within `tolerance` (never for NaN).
pub fn f32_agrees(device: f32, host: f32, tolerance: f32) -> bool {
    device.to_bits() == host.to_bits() || (device - host).abs() <= tolerance
}

/// One check row, as the device and the host computed it.
#[derive(Debug, Clone, serde::Serialize)]
pub struct EolRow {
    /// 1-based line of the row in the check CSV.
    pub line: usize,
    /// Chamber set point, C.
    pub chamber_c: f64,
    /// Reference stimulus.
    pub stimulus: f64,
    /// The device's compensated value.
    pub device_value: f64,
    /// The host's (`apply`'s) value from the same image.
    pub host_value: f64,
    /// The device's temperature, C.
    pub device_t_c: f64,
    /// The host's temperature, C.
    pub host_t_c: f64,
    /// Value difference, device minus host: Q codes for a Q image, f32
    /// units in the last place (signed distance in representable numbers)
    /// for an f32 image.
    pub value_diff: i64,
    /// The device's runtime status flags (empty when OK).
    #[serde(skip_serializing_if = "String::is_empty")]
    pub device_status: String,
    /// Whether device and host agree (bit for bit, or within the f32 tolerance).
    pub agrees: bool,
    /// Error of the device's value against the stimulus, ppm of span.
    pub error_ppm: f64,
    /// Whether the row is judged against the budget (status OK, off the rails).
    pub judged: bool,
}

/// The end-of-line report (`eol --json`).
#[derive(Debug, Clone, serde::Serialize)]
pub struct EolReport {
    /// Part serial.
    pub serial: String,
    /// `q` or `f32`.
    pub number_format: &'static str,
    /// Rows run.
    pub rows: usize,
    /// Rows where the device and the host disagree.
    pub mismatches: usize,
    /// Largest |value difference| (Q codes or f32 units in the last place).
    pub max_value_diff: i64,
    /// Rows judged against the budget.
    pub judged: usize,
    /// Worst |error| over the judged rows, ppm of span.
    pub max_abs_error_ppm: f64,
    /// The part's budget, ppm of span.
    pub budget_ppm: f64,
    /// No mismatch and every judged row within budget (and at least one judged).
    pub pass: bool,
    /// Every row.
    pub row_results: Vec<EolRow>,
}

/// Position of an f32 in the ordered sequence of f32 values (both zeros
/// at 0): differences are distances in units in the last place.
fn ordered(x: f32) -> i64 {
    let b = i64::from(x.to_bits() as i32);
    if b < 0 { i64::from(i32::MIN) - b } else { b }
}

/// Compares the device's `device` results for `rows` (run with `inputs`)
/// with the host's, and the device's values with the stimulus.
pub fn judge(
    part: &PartFile,
    image: &ImageCompensation,
    rows: &[&ChamberRow],
    inputs: &[RuntimeInput],
    device: &[RuntimeOutput],
) -> EolReport {
    let fs = part.scenario.fs_width();
    let budget = part.scenario.budget_ppm;
    let q = image.format() == NumberFormat::Q;
    let mut out = Vec::with_capacity(rows.len());
    for ((r, input), dev) in rows.iter().zip(inputs).zip(device) {
        let host = image.run(*input);
        let (dv, dt) = image.decode(*dev);
        let (hv, ht, agrees, diff) = match host {
            None => (f64::NAN, f64::NAN, false, i64::MAX),
            Some(h) => {
                let (hv, ht) = image.decode(h);
                if q {
                    let diff = i64::from(dev.value_word as i32) - i64::from(h.value_word as i32);
                    (hv, ht, *dev == h, diff)
                } else {
                    let (dvf, hvf) = (f32::from_bits(dev.value_word), f32::from_bits(h.value_word));
                    let (dtf, htf) = (
                        f32::from_bits(dev.temperature_word),
                        f32::from_bits(h.temperature_word),
                    );
                    let (offset, gain) = image.coefficients(*input);
                    let raw = f32::from_bits(input.raw_word);
                    let t_step = image.temperature_step(*input);
                    let value_ok = f32_agrees(dvf, hvf, value_tolerance(raw, offset, gain, hvf));
                    let t_ok = f32_agrees(dtf, htf, F32_TEMPERATURE_ULPS * ulp(htf) + t_step);
                    let same_status = dev.status_bits == h.status_bits;
                    (
                        hv,
                        ht,
                        value_ok && t_ok && same_status,
                        ordered(dvf) - ordered(hvf),
                    )
                }
            }
        };
        let error_ppm = (dv - r.stimulus) / fs * 1e6;
        let judged = dev.status_bits == 0 && !part.scenario.output_adc.at_rail(r.output);
        out.push(EolRow {
            line: r.line,
            chamber_c: r.chamber_c,
            stimulus: r.stimulus,
            device_value: dv,
            host_value: hv,
            device_t_c: dt,
            host_t_c: ht,
            value_diff: diff,
            device_status: status_text(dev.status_bits),
            agrees,
            error_ppm,
            judged,
        });
    }
    let mismatches = out.iter().filter(|r| !r.agrees).count() + rows.len().abs_diff(device.len());
    let judged: Vec<&EolRow> = out.iter().filter(|r| r.judged).collect();
    let max = judged.iter().fold(0.0f64, |m, r| m.max(r.error_ppm.abs()));
    let pass =
        mismatches == 0 && !judged.is_empty() && judged.iter().all(|r| r.error_ppm.abs() <= budget);
    EolReport {
        serial: part.serial.clone(),
        number_format: if q { "q" } else { "f32" },
        rows: out.len(),
        mismatches,
        max_value_diff: out.iter().map(|r| r.value_diff.abs()).max().unwrap_or(0),
        judged: judged.len(),
        max_abs_error_ppm: max,
        budget_ppm: budget,
        pass,
        row_results: out,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn units_in_the_last_place_and_distances() {
        // (x, ulp(x)) by hand: 2^-23 at 1, 2^-22 at 2 and -2, the smallest
        // subnormal at 0, 1 at 2^23 (where ADC codes of 24 bits live).
        for (x, want) in [
            (1.0f32, f32::EPSILON),
            (2.0, 2.0 * f32::EPSILON),
            (-2.0, 2.0 * f32::EPSILON),
            (0.0, f32::from_bits(1)),
            (8_388_608.0, 1.0),
        ] {
            assert_eq!(ulp(x), want, "ulp({x})");
        }
        assert!(ulp(f32::INFINITY).is_nan());
        // Distances in representable numbers, across zero included.
        assert_eq!(ordered(1.0f32.next_up()) - ordered(1.0), 1);
        assert_eq!(ordered(0.0), ordered(-0.0));
        assert_eq!(ordered(f32::from_bits(1)) - ordered(-f32::from_bits(1)), 2);
        assert_eq!(ordered(2.0) - ordered(1.0), 1 << 23);
    }

    #[test]
    fn f32_agreement_and_its_failures() {
        // Tolerance for raw 8e6 codes, offset 7.9e6, gain 1e-6 bar/code,
        // value 0.1 bar: 1e-6 * ulp(8e6) = 1e-6 * 0.5, plus 2 ulp(0.1).
        let tol = value_tolerance(8.0e6, 7.9e6, 1e-6, 0.1);
        let want = 1e-6 * 0.5 + 2.0 * ulp(0.1);
        assert!((tol - want).abs() <= ulp(want), "{tol} vs {want}");
        // (device, host, tolerance, agrees)
        for (d, h, t, agrees) in [
            (0.1f32, 0.1f32, 0.0f32, true),
            (0.1f32.next_up(), 0.1, tol, true),
            (0.1 + 2.0 * tol, 0.1, tol, false),
            (f32::NAN, 0.1, tol, false),
            (0.1, f32::NAN, f32::INFINITY, false),
            (f32::NAN, f32::NAN, tol, true), // the same bits
        ] {
            assert_eq!(
                f32_agrees(d, h, t),
                agrees,
                "device {d} host {h} tolerance {t}"
            );
        }
    }
}
