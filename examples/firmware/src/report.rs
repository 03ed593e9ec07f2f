//! The lines the `main` firmware prints for each replayed sample (the
//! compensators' results, then the polynomial baseline's). The host
//! test (tests/firmware_qemu.rs, which includes this file) formats its own
//! results with the same type, so the comparison is of values computed on
//! each side, never of two hand-kept format strings.

use core::fmt;

use compensate::{Compensator, FixedCompensator, Reading, ReadingQ, Status};

use crate::stream::Sample;

/// The f32 path's part of a sample line (Cortex-M4F only).
#[derive(Clone, Copy, Debug)]
pub struct FloatResult {
    /// Temperature of the cached coefficients, degrees Celsius.
    pub t_c: f32,
    /// Compensated value.
    pub value: f32,
    /// Status bits of the sample.
    pub status: u8,
    /// Status bits of the temperature update.
    pub temp_status: u8,
}

/// One replayed sample: inputs, the f32 result if the target has an FPU,
/// and the integer result.
#[derive(Clone, Copy, Debug)]
pub struct SampleLine {
    /// Index in the simulated stream.
    pub index: usize,
    /// Raw code.
    pub raw: i32,
    /// Temperature-signal code.
    pub temp: i32,
    /// The f32 path's result, `None` on a part without FPU.
    pub float: Option<FloatResult>,
    /// Temperature of the cached coefficients in its Q format.
    pub t_q: i32,
    /// Compensated value in the output's Q format.
    pub q: i32,
    /// Status bits of the sample.
    pub q_status: u8,
    /// Status bits of the temperature update.
    pub q_temp_status: u8,
}

impl FloatResult {
    /// The result of `c` after an update that returned `temp_status` and a
    /// sample that returned `r`.
    pub fn new(c: &Compensator<'_>, r: Reading, temp_status: Status) -> Self {
        Self {
            t_c: c.temperature_c(),
            value: r.value,
            status: r.status.bits(),
            temp_status: temp_status.bits(),
        }
    }
}

impl SampleLine {
    /// The line of stream sample `index`, `s`, after `fixed` returned
    /// `temp_status` for its update and `q` for its sample.
    pub fn new(
        index: usize,
        s: Sample,
        float: Option<FloatResult>,
        fixed: &FixedCompensator<'_>,
        q: ReadingQ,
        temp_status: Status,
    ) -> Self {
        Self {
            index,
            raw: s.raw_code,
            temp: s.temp_code,
            float,
            t_q: fixed.temperature_q(),
            q: q.value,
            q_status: q.status.bits(),
            q_temp_status: temp_status.bits(),
        }
    }
}

impl fmt::Display for SampleLine {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(
            f,
            "sample {} raw={} temp={}",
            self.index, self.raw, self.temp
        )?;
        // f32 values as exact bit patterns (and the value in decimal for a
        // reader), so the comparison is bit for bit.
        match self.float {
            Some(r) => write!(
                f,
                " t_c={:#010x} t_q={} f32={:#010x} {} f32_status={} f32_temp_status={}",
                r.t_c.to_bits(),
                self.t_q,
                r.value.to_bits(),
                r.value,
                r.status,
                r.temp_status
            )?,
            None => write!(f, " t_q={}", self.t_q)?,
        }
        write!(
            f,
            " q={} q_status={} q_temp_status={}",
            self.q, self.q_status, self.q_temp_status
        )
    }
}

/// The polynomial baseline's reading of one replayed sample (`poly.rs`,
/// temperature update then sample), so the host test can check the
/// firmware computes what the host's accuracy figures were measured with.
#[derive(Clone, Copy, Debug)]
pub struct PolyLine {
    /// Index in the simulated stream.
    pub index: usize,
    /// The f32 form's reading (bar), `None` on a part without FPU.
    pub f32_value: Option<f32>,
    /// The integer form's reading in Q(`poly::fitted::OUT_BITS`) bar.
    pub q: i32,
}

impl fmt::Display for PolyLine {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "poly {}", self.index)?;
        if let Some(v) = self.f32_value {
            write!(f, " f32={:#010x} {}", v.to_bits(), v)?;
        }
        write!(f, " q={}", self.q)
    }
}
