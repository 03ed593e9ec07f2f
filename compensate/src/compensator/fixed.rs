//! The integer fixed-point compensator, for parts without an FPU
//! (Cortex-M0/M0+, RV32IMC). Pure integer arithmetic: bit-exact on every
//! target, so the host reproduces the firmware's output exactly.
#![deny(clippy::arithmetic_side_effects)]

use super::CompensatorError;
use crate::Status;
use crate::image::{ColumnQ, NumberFormat, TableView, TablesQ};
use crate::interp::{
    AxisQ, Interpolation, Nodes, PositionQ, bilinear_q, cubic_monotone_q, linear_q,
};

/// One compensated sample in Q(`output`) engineering units.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct ReadingQ {
    /// Measurand times `2^output` (see [`crate::image::QFormat::output`]);
    /// 0 when the table is invalid.
    pub value: i32,
    /// Conditions of this sample, including those of the last temperature
    /// update.
    pub status: Status,
}

/// Integer compensator running on a parsed Q-format [`TableView`].
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct FixedCompensator<'a> {
    tables: Option<TablesQ<'a>>,
    interpolation: Interpolation,
    grid: Option<(AxisQ, ColumnQ<'a>)>,
    rail_lo: i32,
    rail_hi: i32,
    raw_lo: i32,
    raw_hi: i32,
    /// Fractional bits of the offset channel: raw codes are shifted by this.
    offset_shift: u32,
    /// `offset + gain - output` fractional bits, at most 62.
    out_shift: u32,
    /// Half an LSB of the output before the shift (round half up).
    out_round: i64,
    /// `quadratic + offset - gain` fractional bits.
    quad_shift: u32,
    temperature_q: i32,
    offset: i32,
    gain: i32,
    quadratic: i32,
    row: PositionQ,
    temp_status: Status,
}

/// Interpolates with the image's method.
#[inline]
fn interp<N: Nodes<Value = i32>>(method: Interpolation, nodes: &N, p: PositionQ) -> i32 {
    match method {
        Interpolation::MonotoneCubic => cubic_monotone_q(nodes, p),
        _ => linear_q(nodes, p),
    }
}

/// i64 to i32 with saturation; the flag says whether it saturated.
#[inline]
fn saturate(v: i64) -> (i32, bool) {
    let s = v.clamp(i64::from(i32::MIN), i64::from(i32::MAX));
    (s as i32, s != v)
}

impl<'a> FixedCompensator<'a> {
    /// A compensator without a table: every sample reads 0 with
    /// [`Status::TABLE_INVALID`].
    #[must_use]
    pub const fn unconfigured() -> Self {
        Self {
            tables: None,
            interpolation: Interpolation::Linear,
            grid: None,
            rail_lo: i32::MIN,
            rail_hi: i32::MAX,
            raw_lo: i32::MIN,
            raw_hi: i32::MAX,
            offset_shift: 0,
            out_shift: 0,
            out_round: 0,
            quad_shift: 0,
            temperature_q: 0,
            offset: 0,
            gain: 0,
            quadratic: 0,
            row: PositionQ {
                index: 0,
                frac_q16: 0,
                clamped: false,
            },
            temp_status: Status::TABLE_INVALID,
        }
    }

    /// A compensator on a Q-format image. Until the first
    /// [`Self::update_temperature`] the coefficients are those of the first
    /// temperature node and samples carry [`Status::NO_TEMPERATURE`].
    ///
    /// # Errors
    /// [`CompensatorError::WrongFormat`] for an f32 image.
    pub fn new(view: &TableView<'a>) -> Result<Self, CompensatorError> {
        let tables = view.tables_q().ok_or(CompensatorError::WrongFormat {
            expected: NumberFormat::Q,
            found: view.format(),
        })?;
        let l = view.raw_limits();
        let q = tables.q;
        // The parser guarantees offset + gain - output and (when the
        // quadratic channel exists) quadratic + offset - gain in 0..=62.
        let out_shift = u32::from(q.offset)
            .wrapping_add(u32::from(q.gain))
            .wrapping_sub(u32::from(q.output));
        let quad_shift = u32::from(q.quadratic)
            .wrapping_add(u32::from(q.offset))
            .saturating_sub(u32::from(q.gain));
        let out_round = if out_shift == 0 {
            0
        } else {
            1i64.wrapping_shl(out_shift.wrapping_sub(1))
        };
        let mut c = Self {
            tables: Some(tables),
            interpolation: view.interpolation(),
            grid: tables.grid,
            rail_lo: l.rail_lo,
            rail_hi: l.rail_hi,
            raw_lo: l.raw_lo,
            raw_hi: l.raw_hi,
            offset_shift: u32::from(q.offset),
            out_shift,
            out_round,
            quad_shift,
            ..Self::unconfigured()
        };
        c.set_temperature_q(tables, tables.temperature.start());
        c.temp_status = Status::NO_TEMPERATURE;
        Ok(c)
    }

    #[inline]
    fn set_temperature_q(&mut self, tables: TablesQ<'a>, t_q: i32) -> Status {
        let p = tables.temperature.locate(t_q);
        self.temperature_q = t_q;
        self.row = p;
        self.offset = interp(self.interpolation, &tables.offset, p);
        self.gain = interp(self.interpolation, &tables.gain, p);
        self.quadratic = match tables.quadratic {
            Some(q) => interp(self.interpolation, &q, p),
            None => 0,
        };
        if p.clamped {
            Status::TEMPERATURE_CLAMPED
        } else {
            Status::OK
        }
    }

    /// Takes a new temperature signal in Q(`signal`) (degrees Celsius in
    /// Q(`temperature`) when the image has no thermometer section) and
    /// caches the coefficients.
    ///
    /// A signal outside the image's plausible range flags
    /// [`Status::SENSOR_FAULT`] (and is clamped).
    #[inline]
    pub fn update_temperature(&mut self, signal_q: i32) -> Status {
        let Some(tables) = self.tables else {
            return Status::TABLE_INVALID;
        };
        let mut status = Status::OK;
        if signal_q < tables.signal_lo || signal_q > tables.signal_hi {
            status |= Status::SENSOR_FAULT;
        }
        let t_q = match tables.thermometer {
            Some((axis, values)) => {
                let p = axis.locate(signal_q);
                if p.clamped {
                    status |= Status::TEMPERATURE_CLAMPED;
                }
                interp(self.interpolation, &values, p)
            }
            None => signal_q,
        };
        status |= self.set_temperature_q(tables, t_q);
        self.temp_status = status;
        status
    }

    /// Temperature of the cached coefficients in Q(`temperature`) degrees
    /// Celsius (before clamping to the table axis).
    #[must_use]
    pub const fn temperature_q(&self) -> i32 {
        self.temperature_q
    }

    /// Cached `(offset, gain, quadratic)` at the current temperature, each
    /// in its own Q format.
    #[must_use]
    pub const fn coefficients(&self) -> (i32, i32, i32) {
        (self.offset, self.gain, self.quadratic)
    }

    /// Compensates one raw sample in integer ADC codes.
    ///
    /// `d = (raw << offset_bits) - offset` (saturated to i32), then
    /// `value = (d * g + half) >> (offset + gain - output)` with
    /// `g = gain + (quadratic * d >> (quadratic + offset - gain))`, plus the
    /// 2-D correction if present. Every product is i32 x i32 into i64, so
    /// nothing overflows; saturation at the i32 range is flagged.
    #[inline]
    pub fn compensate_sample(&self, raw: i32) -> ReadingQ {
        let mut status = self.temp_status;
        if raw <= self.rail_lo || raw >= self.rail_hi {
            status |= Status::SENSOR_FAULT;
        } else if raw < self.raw_lo || raw > self.raw_hi {
            status |= Status::INPUT_OUT_OF_RANGE;
        }
        // |raw << 30| < 2^61 and |offset| < 2^31: no i64 overflow.
        let d = i64::from(raw)
            .wrapping_shl(self.offset_shift)
            .wrapping_sub(i64::from(self.offset));
        let (d, sat_d) = saturate(d);
        let mut g = self.gain;
        let mut sat_g = false;
        if self.quadratic != 0 {
            // i32 x i32 < 2^62; arithmetic shift rounds toward -inf, which
            // the host model reproduces exactly.
            let q = i64::from(self.quadratic)
                .wrapping_mul(i64::from(d))
                .wrapping_shr(self.quad_shift);
            (g, sat_g) = saturate(i64::from(g).wrapping_add(q));
        }
        // |d * g| <= 2^62 and out_round <= 2^61: the sum stays below 2^63.
        let y = i64::from(d)
            .wrapping_mul(i64::from(g))
            .wrapping_add(self.out_round)
            .wrapping_shr(self.out_shift);
        let y = match &self.grid {
            Some((axis, values)) => {
                let c = axis.locate(raw);
                if c.clamped {
                    status |= Status::INPUT_OUT_OF_RANGE;
                }
                // |y| < 2^62 before this point only in pathological images;
                // saturating_add keeps it well defined.
                y.saturating_add(i64::from(bilinear_q(values, axis.len(), self.row, c)))
            }
            None => y,
        };
        let (value, sat_y) = saturate(y);
        if sat_d || sat_g || sat_y {
            status |= Status::SATURATED;
        }
        ReadingQ { value, status }
    }
}
