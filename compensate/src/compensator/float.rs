//! The f32 compensator, for parts with an FPU (Cortex-M4F and up).
//!
//! It has the integer compensator's structure (short update, interval
//! cache, general update) but not its code: the two differ in every
//! arithmetic step and in field layout (the integer one is laid out for
//! ARMv6-M load reach), so a generic form would cost both hot paths.

use super::CompensatorError;
use crate::Status;
use crate::image::{ChannelAxis, ColumnF32, NumberFormat, TableView, TablesF32};
use crate::interp::{Axis, Interpolation, Nodes, Position, bilinear, cubic_monotone, linear};

/// One compensated sample in engineering units.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Reading {
    /// Measurand in the image's unit (0 when the input was NaN or the table
    /// is invalid).
    pub value: f32,
    /// Conditions of this sample, including those of the last temperature
    /// update.
    pub status: Status,
}

/// f32 compensator running on a parsed f32 [`TableView`].
///
/// Call [`Compensator::update_temperature`] whenever a new temperature
/// signal arrives (it caches offset, gain and the 2-D row position), and
/// [`Compensator::compensate_sample`] for every raw sample.
///
/// `PartialEq` compares the whole state, including what the update keeps
/// for the next one (the node interval of a linear image, the row position
/// of an image without 2-D correction): two compensators whose every
/// public read agrees can still differ there.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Compensator<'a> {
    tables: Option<TablesF32<'a>>,
    interpolation: Interpolation,
    grid: Option<(Axis, ColumnF32<'a>)>,
    rail_lo: f32,
    rail_hi: f32,
    raw_lo: f32,
    raw_hi: f32,
    /// Lower end of the short sample path's range: `raw_lo` for an image
    /// without quadratic channel and 2-D correction, else `+inf` (an empty
    /// range), so one pair of compares decides.
    fast_lo: f32,
    /// Upper end of the short sample path's range (see `fast_lo`).
    fast_hi: f32,
    /// Degrees Celsius after the thermometer map; on an image over the
    /// signal axis, the signal itself (see [`Compensator::temperature_c`]).
    temperature_c: f32,
    offset: f32,
    gain: f32,
    quadratic: f32,
    /// Row position of the 2-D correction, written by the general update
    /// (the short update serves images without one and leaves it alone).
    row: Position,
    temp_status: Status,
    /// With [`ChannelAxis::Signal`], the thermometer values on the
    /// channels' nodes, read only by [`Compensator::temperature_c`]
    /// (`tables` then has no thermometer, so an update is one look-up).
    temperature_map: Option<ColumnF32<'a>>,
    /// The short temperature update (see [`ShortUpdate`]).
    short: ShortUpdate<'a>,
    /// The node interval of the last short update (see [`Interval`]);
    /// empty whenever `temp_status` is not [`Status::OK`].
    interval: Interval,
}

/// What the short temperature update needs, copied out of the image when
/// the compensator is made: the channels' axis and node words.
///
/// The short update applies to a linear image whose update is one look-up
/// (channels over the signal axis, or a degrees-Celsius signal without a
/// thermometer) and has neither a quadratic channel nor a 2-D correction,
/// and to a signal inside both the plausible range and the channels' axis
/// (`lo <= signal < hi`), where no status is raised and no clamping
/// happens. There it computes exactly what the general update computes and
/// caches only what such an image reads later: the signal, offset, gain
/// and status (the quadratic coefficient of such an image stays 0; the
/// temperature is interpolated from the signal when asked for). One pair
/// of compares is in front and one bounds check covers all four reads.
/// It also keeps the node interval it landed in ([`Interval`]), so that
/// the next update in the same interval needs neither. Every other case
/// takes [`Compensator::update_general`].
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
struct ShortUpdate<'a> {
    /// Lowest signal of the short update; `+inf` when it never applies.
    lo: f32,
    /// The short update applies below this signal; `-inf` when it never
    /// applies.
    hi: f32,
    /// First node of the channels' axis.
    start: f32,
    /// Node spacing of the channels' axis.
    step: f32,
    /// Nodes per channel, `n`. A `u16`, so `n + 2` cannot wrap and the
    /// compiler sees that the window of `n + 2` words holds words `n` and
    /// `n + 1`.
    nodes: u16,
    /// The offset column followed by the gain column, `2 n` words.
    channels: &'a [[u8; 4]],
}

impl ShortUpdate<'_> {
    /// An update that never applies.
    const NEVER: Self = Self {
        lo: f32::INFINITY,
        hi: f32::NEG_INFINITY,
        start: 0.0,
        step: 1.0,
        nodes: 0,
        channels: &[],
    };

    /// Position of `signal` on the channels' axis, in node steps from the
    /// first node: [`Axis::locate`]'s arithmetic.
    #[inline(always)]
    fn position(&self, signal: f32) -> f32 {
        (signal - self.start) / self.step
    }
}

/// The node interval the last short update read, with its first node's
/// offset and gain and their steps to the next node.
///
/// A temperature signal moves slowly compared with the update rate (a
/// sensor package's thermal time constant is seconds to minutes; common
/// practice), so most updates land in the interval of the one before. The
/// short update locates every signal anyway (it needs the fraction); when
/// the located index is the interval's, the words it would read are those
/// cached here (they depend on the image and the index only), and
/// `v0 + frac (v1 - v0)` from the cached `v0` and `v1 - v0` is its result
/// bit for bit, without the bounds check and the reads.
///
/// A filled interval also means that the temperature status is OK:
/// filling it writes that status, and the only other writer of the status
/// ([`Compensator::update_general`]) empties it first, as does every
/// constructor, so an update from the cache writes no status.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
struct Interval {
    /// Node index of the interval; `usize::MAX` when empty (a located
    /// index inside the short update's range is below 2^16).
    index: usize,
    /// Offset at node `index`.
    offset: f32,
    /// Offset at node `index + 1` minus `offset`.
    offset_step: f32,
    /// Gain at node `index`.
    gain: f32,
    /// Gain at node `index + 1` minus `gain`.
    gain_step: f32,
}

impl Interval {
    /// No interval: every located index misses.
    const EMPTY: Self = Self {
        index: usize::MAX,
        offset: 0.0,
        offset_step: 0.0,
        gain: 0.0,
        gain_step: 0.0,
    };
}

/// The larger of two finite values: a compare and a select, where
/// `f32::max` would be a library call on parts without `VMAXNM`.
#[inline(always)]
fn larger(a: f32, b: f32) -> f32 {
    if a > b { a } else { b }
}

/// The smaller of two finite values (see [`larger`]).
#[inline(always)]
fn smaller(a: f32, b: f32) -> f32 {
    if a < b { a } else { b }
}

/// `(v0, v1 - v0)` of two little-endian words, for [`linear`]'s formula
/// `v0 + frac (v1 - v0)`.
#[inline(always)]
fn base_and_step(w0: [u8; 4], w1: [u8; 4]) -> (f32, f32) {
    let v0 = f32::from_le_bytes(w0);
    (v0, f32::from_le_bytes(w1) - v0)
}

/// Interpolates with the image's method: the linear kernel inline, the
/// cubic one out of line.
#[inline(always)]
// Same shape as `interp` in fixed.rs: a generic form would change benchmarked code.
fn interp<N: Nodes<Value = f32>>(method: Interpolation, nodes: &N, p: Position) -> f32 {
    if method.runs_linear() {
        linear(nodes, p)
    } else {
        interp_cubic(nodes, p)
    }
}

/// The monotone cubic kernel, kept out of line.
#[inline(never)]
fn interp_cubic<N: Nodes<Value = f32>>(nodes: &N, p: Position) -> f32 {
    cubic_monotone(nodes, p)
}

/// Position on the temperature axis and `(offset, gain, quadratic)` at
/// `t_c`.
#[inline(always)]
fn at_temperature(
    method: Interpolation,
    tables: &TablesF32<'_>,
    t_c: f32,
) -> (Position, (f32, f32, f32)) {
    let p = tables.temperature.locate_nonempty(t_c);
    let c = if method.runs_linear() {
        channels_linear(tables, p)
    } else {
        channels_cubic(tables, p)
    };
    (p, c)
}

/// `(offset, gain, quadratic)` at `p` by linear interpolation, with the
/// node test (`frac == 0`) made once for the three channels instead of
/// once per channel; identical to [`linear`] on each.
#[inline(always)]
fn channels_linear(t: &TablesF32<'_>, p: Position) -> (f32, f32, f32) {
    if p.frac == 0.0 {
        let q = match &t.quadratic {
            Some(q) => q.node(p.index),
            None => 0.0,
        };
        return (t.offset.node(p.index), t.gain.node(p.index), q);
    }
    let lerp = |c: &ColumnF32<'_>| {
        let (v0, v1) = c.pair(p.index);
        v0 + p.frac * (v1 - v0)
    };
    let q = match &t.quadratic {
        Some(q) => lerp(q),
        None => 0.0,
    };
    (lerp(&t.offset), lerp(&t.gain), q)
}

/// `(offset, gain, quadratic)` at `p` by monotone cubic interpolation,
/// out of line so the linear update stays short; shares the one
/// out-of-line cubic kernel with the thermometer.
#[inline(never)]
fn channels_cubic(t: &TablesF32<'_>, p: Position) -> (f32, f32, f32) {
    let q = match &t.quadratic {
        Some(q) => interp_cubic(q, p),
        None => 0.0,
    };
    (interp_cubic(&t.offset, p), interp_cubic(&t.gain, p), q)
}

/// The short update of `tables` (from `view`, without the thermometer
/// when the channels lie over the signal axis; see [`ShortUpdate`]), or
/// one that never applies.
fn short_update<'a>(view: &TableView<'a>, tables: &TablesF32<'a>) -> ShortUpdate<'a> {
    let axis = tables.temperature;
    let channels = view.offset_gain_words();
    let Ok(nodes) = u16::try_from(axis.len) else {
        return ShortUpdate::NEVER;
    };
    if tables.thermometer.is_some()
        || tables.quadratic.is_some()
        || tables.grid.is_some()
        || !view.interpolation().runs_linear()
        || channels.len() != 2 * axis.len
    {
        return ShortUpdate::NEVER;
    }
    let (lo, hi) = (
        larger(axis.start, tables.signal_lo),
        smaller(axis.end(), tables.signal_hi),
    );
    // Also true for a NaN limit, which the parser never lets through.
    #[allow(clippy::neg_cmp_op_on_partial_ord)]
    if !(lo < hi) {
        return ShortUpdate::NEVER;
    }
    ShortUpdate {
        lo,
        hi,
        start: axis.start,
        step: axis.step,
        nodes,
        channels,
    }
}

impl<'a> Compensator<'a> {
    /// A compensator without a table: every sample reads 0 with
    /// [`Status::TABLE_INVALID`]. Use it when an image fails to parse so the
    /// firmware keeps running and reports the fault.
    #[must_use]
    pub const fn unconfigured() -> Self {
        Self {
            tables: None,
            interpolation: Interpolation::Linear,
            grid: None,
            rail_lo: f32::NEG_INFINITY,
            rail_hi: f32::INFINITY,
            raw_lo: f32::NEG_INFINITY,
            raw_hi: f32::INFINITY,
            fast_lo: f32::NEG_INFINITY,
            fast_hi: f32::INFINITY,
            temperature_c: 0.0,
            offset: 0.0,
            gain: 0.0,
            quadratic: 0.0,
            row: Position {
                index: 0,
                frac: 0.0,
                clamped: false,
            },
            temp_status: Status::TABLE_INVALID,
            temperature_map: None,
            short: ShortUpdate::NEVER,
            interval: Interval::EMPTY,
        }
    }

    /// A compensator on an f32 image. Until the first
    /// [`Self::update_temperature`] the coefficients are those of the first
    /// temperature node and samples carry [`Status::NO_TEMPERATURE`].
    ///
    /// # Errors
    /// [`CompensatorError::WrongFormat`] for a Q-format image.
    pub fn new(view: &TableView<'a>) -> Result<Self, CompensatorError> {
        let mut tables = view.tables_f32().ok_or(CompensatorError::WrongFormat {
            expected: NumberFormat::F32,
            found: view.format(),
        })?;
        // Over the signal axis the update locates the signal directly and
        // the thermometer waits until the temperature is asked for.
        let temperature_map = match view.channel_axis() {
            ChannelAxis::Signal => tables.thermometer.take().map(|(_, values)| values),
            ChannelAxis::Temperature => None,
        };
        let l = view.raw_limits();
        // The short sample path leaves out the quadratic term and the 2-D
        // correction, so only images without either take it.
        let short_sample = tables.grid.is_none() && tables.quadratic.is_none();
        let mut c = Self {
            tables: Some(tables),
            interpolation: view.interpolation(),
            grid: tables.grid,
            rail_lo: l.rail_lo as f32,
            rail_hi: l.rail_hi as f32,
            raw_lo: l.raw_lo as f32,
            raw_hi: l.raw_hi as f32,
            fast_lo: if short_sample {
                l.raw_lo as f32
            } else {
                f32::INFINITY
            },
            fast_hi: if short_sample {
                l.raw_hi as f32
            } else {
                f32::NEG_INFINITY
            },
            temperature_map,
            short: short_update(view, &tables),
            ..Self::unconfigured()
        };
        c.set_temperature_c(&tables, tables.temperature.start);
        c.temp_status = Status::NO_TEMPERATURE;
        Ok(c)
    }

    /// Caches the coefficients at `t_c` degrees Celsius; returns whether
    /// `t_c` was clamped to the table axis.
    #[inline]
    fn set_temperature_c(&mut self, tables: &TablesF32<'a>, t_c: f32) -> Status {
        let (p, coefficients) = at_temperature(self.interpolation, tables, t_c);
        self.temperature_c = t_c;
        self.row = p;
        (self.offset, self.gain, self.quadratic) = coefficients;
        if p.clamped {
            Status::TEMPERATURE_CLAMPED
        } else {
            Status::OK
        }
    }

    /// Takes a new temperature signal (degrees Celsius, or the thermometer
    /// quantity the image maps to temperature) and caches the coefficients.
    ///
    /// A NaN or infinite signal keeps the previous coefficients and flags
    /// every following sample with [`Status::NAN_INPUT`] until a valid update.
    /// A signal outside the image's plausible range flags
    /// [`Status::SENSOR_FAULT`] (and is clamped).
    #[inline]
    pub fn update_temperature(&mut self, signal: f32) -> Status {
        if self.update_temperature_short(signal) {
            return Status::OK;
        }
        self.update_general(signal)
    }

    /// The short update of [`Self::update_temperature`] alone: `true` when
    /// it applied (status OK), `false`, with nothing changed, where the
    /// general update must run ([`Self::update_temperature`] runs it).
    /// For a caller that keeps its general path out of line, as the C API
    /// does, so that its short path needs no stack frame.
    #[inline(always)]
    pub fn update_temperature_short(&mut self, signal: f32) -> bool {
        let s = &self.short;
        // False for NaN and whenever the short update does not apply.
        if signal >= s.lo && signal < s.hi {
            // signal >= start, so pos >= 0 and the cast is a floor, as in
            // `Axis::locate`; a pos rounded up to the last node fails the
            // bounds check in `fill_interval` and takes the general update.
            let pos = s.position(signal);
            let index = pos as usize;
            let frac = pos - index as f32;
            // The interval's words are those of `index`, and the status is
            // already OK (see `Interval`).
            if index == self.interval.index || self.fill_interval(index) {
                let i = &self.interval;
                // At a node (frac == 0) `v0 + 0 (v1 - v0)` is v0 exactly,
                // as the general update's node read (the parser accepts
                // finite values only, and their difference is finite
                // unless both are beyond 1.7e38).
                self.temperature_c = signal;
                self.offset = i.offset + frac * i.offset_step;
                self.gain = i.gain + frac * i.gain_step;
                return true;
            }
        }
        false
    }

    /// Reads the node words of interval `index` into the cached interval
    /// and sets the status OK; `false` (nothing written) where the general
    /// update must run.
    #[inline]
    fn fill_interval(&mut self, index: usize) -> bool {
        let s = &self.short;
        let n = usize::from(s.nodes);
        // Offset words `index`, `index + 1` and gain words `n + index`,
        // `n + index + 1`: inside the block exactly when
        // `index + n + 2 <= 2 n`, which this one check tests.
        if let Some(w) = s.channels.get(index..index.wrapping_add(n + 2))
            && let (Some(&o0), Some(&o1), Some(&g0), Some(&g1)) =
                (w.first(), w.get(1), w.get(n), w.get(n + 1))
        {
            let (offset, offset_step) = base_and_step(o0, o1);
            let (gain, gain_step) = base_and_step(g0, g1);
            self.interval = Interval {
                index,
                offset,
                offset_step,
                gain,
                gain_step,
            };
            self.temp_status = Status::OK;
            return true;
        }
        false
    }

    /// Every case of [`Self::update_temperature`]; what a caller of
    /// [`Self::update_temperature_short`] runs where that returns `false`.
    #[inline(never)]
    pub fn update_general(&mut self, signal: f32) -> Status {
        // Keeps "a filled interval means status OK" (see `Interval`).
        self.interval.index = Interval::EMPTY.index;
        // Borrowed, not copied: the whole update reads the tables in place
        // and writes the cache once at the end (fewer registers to spill).
        let Some(tables) = &self.tables else {
            return Status::TABLE_INVALID;
        };
        if !signal.is_finite() {
            self.temp_status = Status::NAN_INPUT;
            return self.temp_status;
        }
        let mut status = Status::OK;
        if signal < tables.signal_lo || signal > tables.signal_hi {
            status |= Status::SENSOR_FAULT;
        }
        let t_c = match &tables.thermometer {
            Some((axis, values)) => {
                let p = axis.locate_nonempty(signal);
                if p.clamped {
                    status |= Status::TEMPERATURE_CLAMPED;
                }
                interp(self.interpolation, values, p)
            }
            None => signal,
        };
        let (p, coefficients) = at_temperature(self.interpolation, tables, t_c);
        if p.clamped {
            status |= Status::TEMPERATURE_CLAMPED;
        }
        self.temperature_c = t_c;
        self.row = p;
        (self.offset, self.gain, self.quadratic) = coefficients;
        self.temp_status = status;
        status
    }

    /// Temperature of the cached coefficients, degrees Celsius (after the
    /// thermometer map, before clamping to the table axis).
    ///
    /// On an image over the signal axis ([`ChannelAxis::Signal`]) this
    /// locates the cached signal and interpolates the thermometer column
    /// there, the temperature clamped to the table's ends; it costs one
    /// look-up per call, so call it when the temperature is wanted, not per
    /// sample.
    #[must_use]
    pub fn temperature_c(&self) -> f32 {
        match (&self.temperature_map, &self.tables) {
            (Some(values), Some(t)) => {
                let p = t.temperature.locate_nonempty(self.temperature_c);
                interp(self.interpolation, values, p)
            }
            _ => self.temperature_c,
        }
    }

    /// Cached `(offset, gain, quadratic)` at the current temperature.
    #[must_use]
    pub const fn coefficients(&self) -> (f32, f32, f32) {
        (self.offset, self.gain, self.quadratic)
    }

    /// Compensates one raw sample (ADC codes, or any value on the same scale
    /// as the image's offset channel).
    ///
    /// Value: `d (gain + quadratic d)` with `d = raw - offset`, plus the 2-D
    /// correction if the image has one. Codes at or beyond a rail give
    /// [`Status::SENSOR_FAULT`]; outside the calibrated range,
    /// [`Status::INPUT_OUT_OF_RANGE`] (the value is extrapolated).
    ///
    /// The common case (input in the calibrated range, an image without
    /// quadratic channel and 2-D correction) is a short path with no stack
    /// frame: two compares, a subtraction and a multiplication, identical
    /// to the general formula with `quadratic = 0`; everything else goes to
    /// an out-of-line function.
    #[inline]
    pub fn compensate_sample(&self, raw: f32) -> Reading {
        match self.compensate_sample_short(raw) {
            Some(r) => r,
            None => self.compensate_general(raw),
        }
    }

    /// The short path of [`Self::compensate_sample`] alone: `None` where
    /// the general path must run ([`Self::compensate_sample`] runs it).
    /// For a caller that keeps its general path out of line (the C API).
    #[inline(always)]
    pub fn compensate_sample_short(&self, raw: f32) -> Option<Reading> {
        // False for NaN, so NaN takes the general path.
        // `fast_lo..=fast_hi` is the calibrated range of an image without
        // quadratic channel and 2-D correction, else empty.
        if raw >= self.fast_lo && raw <= self.fast_hi {
            let d = raw - self.offset;
            return Some(Reading {
                value: d * self.gain,
                status: self.temp_status,
            });
        }
        None
    }

    /// Every case of [`Self::compensate_sample`]: statuses, NaN, 2-D
    /// correction; what a caller of [`Self::compensate_sample_short`] runs
    /// where that returns `None`.
    #[inline(never)]
    pub fn compensate_general(&self, raw: f32) -> Reading {
        let mut status = if raw >= self.raw_lo && raw <= self.raw_hi {
            self.temp_status
        } else {
            match self.classify_raw(raw) {
                Some(s) => s,
                None => {
                    return Reading {
                        value: 0.0,
                        status: self.temp_status | Status::NAN_INPUT,
                    };
                }
            }
        };
        let d = raw - self.offset;
        let mut value = d * (self.gain + self.quadratic * d);
        if let Some((axis, values)) = &self.grid {
            let c = axis.locate(raw);
            if c.clamped {
                status |= Status::INPUT_OUT_OF_RANGE;
            }
            value += bilinear(values, axis.len, self.row, c);
        }
        Reading { value, status }
    }

    /// Status of a raw value outside the calibrated range; `None` for NaN
    /// or infinity.
    #[cold]
    fn classify_raw(&self, raw: f32) -> Option<Status> {
        if !raw.is_finite() {
            return None;
        }
        let mut status = self.temp_status | Status::INPUT_OUT_OF_RANGE;
        if raw <= self.rail_lo || raw >= self.rail_hi {
            status |= Status::SENSOR_FAULT;
        }
        Some(status)
    }

    /// Compensates a raw sample taken at an excitation that differs from the
    /// calibration excitation by `excitation_ratio` (measured / nominal):
    /// the raw value is divided by the ratio first, which undoes the
    /// proportional dependence of a bridge or Hall output on excitation.
    ///
    /// A ratio that is not positive and finite gives value 0 with
    /// [`Status::NAN_INPUT`].
    #[inline]
    pub fn compensate_ratiometric(&self, raw: f32, excitation_ratio: f32) -> Reading {
        if !(excitation_ratio > 0.0 && excitation_ratio.is_finite()) {
            return Reading {
                value: 0.0,
                status: self.temp_status | Status::NAN_INPUT,
            };
        }
        self.compensate_sample(raw / excitation_ratio)
    }
}
