//! The integer fixed-point compensator, for parts without an FPU
//! (Cortex-M0/M0+, RV32IMC). Pure integer arithmetic: bit-exact on every
//! target, so the host reproduces the firmware's output exactly.
//!
//! It has the f32 compensator's structure (short update, interval cache,
//! general update) but not its code: every arithmetic step differs (Q
//! formats, rounding, saturation) and its fields are laid out for ARMv6-M
//! load reach, so a generic form would cost both hot paths.
#![deny(clippy::arithmetic_side_effects)]

use super::CompensatorError;
use crate::Status;
use crate::image::{ChannelAxis, ColumnQ, NumberFormat, TableView, TablesQ};
use crate::interp::{
    AxisQ, InsideQ, Interpolation, Nodes, PositionQ, bilinear_q, cubic_monotone_q, lerp_q,
    lerp_q_diff, linear_q,
};
use crate::widemul::mul_wide;

mod short_scale;

use short_scale::ShortScale;

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

// The ARMv6-M load-reach limits the layout comments rely on, checked at
// compile time where the layout is the firmware's (32-bit targets; the
// cross builds of the test command compile them): byte loads reach offsets
// 0..=31, halfword loads 0..=62, word loads 0..=124 from the base register.
// The sample's byte fields end within 24 bytes, so that they stay within a
// byte load's reach from a base 8 bytes before the compensator (the C
// API's state block, `compensate-ffi`, puts two key words first).
#[cfg(target_pointer_width = "32")]
// Sums of a few small offsets, evaluated at compile time (an overflow
// there is a compile error, not a runtime effect).
#[allow(clippy::arithmetic_side_effects)]
const _: () = {
    use core::mem::{offset_of, size_of};
    type C = FixedCompensator<'static>;
    assert!(offset_of!(C, temp_status) + size_of::<Status>() <= 24);
    assert!(offset_of!(C, short_scale) + short_scale::SHORT_SCALE_BYTES_END <= 24);
    assert!(offset_of!(C, short) + offset_of!(ShortUpdateQ<'static>, nodes) <= 62);
    assert!(offset_of!(C, short) + size_of::<ShortUpdateQ<'static>>() <= 128);
    assert!(offset_of!(C, cell) + size_of::<CellQ>() <= 128);
};

/// Integer compensator running on a parsed Q-format [`TableView`].
// `repr(C)` with the per-sample fields first, then those of the short
// temperature update: ARMv6-M word loads reach only 124 bytes past a base
// register (byte loads 31, halfword loads 62), so the hot paths' fields
// must come early.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[repr(C)]
pub struct FixedCompensator<'a> {
    /// Lower end of the short path's raw range (the calibrated range's).
    fast_lo: i32,
    /// Codes in the short path's raw range from `fast_lo` up: the
    /// calibrated range's `raw_hi - raw_lo + 1` when the short path
    /// applies at the current temperature (no quadratic term, no 2-D
    /// correction), else 0, so that one unsigned compare decides.
    fast_span: u32,
    offset: i32,
    gain: i32,
    /// Within the first 24 bytes (see the layout assertions).
    temp_status: Status,
    /// The short path's output shift and rounding (its shift bytes also
    /// within the first 24 bytes); meaningful only when `out_shift` is in
    /// 1..=31, the only shifts the short path runs.
    short_scale: ShortScale,
    /// `2^offset_bits`: raw codes times this are in the offset's Q format
    /// (a multiply needs no shift-amount mask on ARMv6-M).
    offset_scale: i32,
    /// Q(`temperature`) degrees Celsius; on an image over the signal axis,
    /// the signal itself (see [`FixedCompensator::temperature_q`]).
    temperature_q: i32,
    /// The short temperature update (see [`ShortUpdateQ`]).
    short: ShortUpdateQ<'a>,
    /// The node interval of the last short temperature update (see
    /// [`CellQ`]); after `short`, whose halfword `nodes` must stay within
    /// 62 bytes of the base.
    cell: CellQ,
    /// `offset + gain - output` fractional bits, at most 62.
    out_shift: u32,
    /// Half an LSB of the output before the shift (round half up).
    out_round: i64,
    quadratic: i32,
    /// Fractional bits of the offset channel: raw codes are shifted by this.
    offset_shift: u32,
    raw_lo: i32,
    raw_hi: i32,
    rail_lo: i32,
    rail_hi: i32,
    /// `quadratic + offset - gain` fractional bits.
    quad_shift: u32,
    grid: Option<(AxisQ, ColumnQ<'a>)>,
    /// The short sample path can apply: no 2-D correction and `out_shift`
    /// in 1..=31 (it also needs a zero quadratic term, checked per update).
    short_ok: bool,
    /// Row position of the 2-D correction, written by the general update
    /// (the short update serves images without one and leaves it alone).
    row: PositionQ,
    interpolation: Interpolation,
    tables: Option<TablesQ<'a>>,
    /// With [`ChannelAxis::Signal`], the thermometer values on the
    /// channels' nodes, read only by [`FixedCompensator::temperature_q`]
    /// (`tables` then has no thermometer, so an update is one look-up).
    temperature_map: Option<ColumnQ<'a>>,
}

/// What the short temperature update needs, copied out of the image when
/// the compensator is made: the signal range it serves, the channels'
/// first node and reciprocal step, and their node words.
///
/// The short update applies to a linear image whose update is one look-up
/// (channels over the signal axis, or a degrees-Celsius signal without a
/// thermometer) and has neither a quadratic channel nor a 2-D correction,
/// and to a signal inside both the plausible range and the channels' axis
/// (`lo <= signal <= hi`, `hi` one LSB below the last node), where no
/// status is raised and no clamping happens. There it computes exactly
/// what the general update computes, with the same position arithmetic
/// ([`InsideQ::locate`], which [`AxisQ::locate`] runs inside the axis) and
/// the same rounding (`lerp_q_narrow`, which [`linear_q`] runs between
/// nodes whose difference fits in i32; wider ones take the general
/// update), and caches only what such an image reads later: the signal,
/// offset, gain and status (the quadratic coefficient of such an image
/// stays 0 and with it the short sample range; the row position serves
/// only a 2-D correction; the temperature is interpolated from the signal
/// when asked for). One pair of compares is in front and one bounds check
/// covers all four reads. Every other case takes
/// [`FixedCompensator::update_general`].
///
/// A short update also keeps what it read in a [`CellQ`]; a later signal
/// that locates to the same node interval (the temperature moves slowly
/// against the update rate) interpolates from the cached node values and
/// differences with the same arithmetic, without the bounds check and the
/// image reads.
// `repr(C)`: the halfword `nodes` within ARMv6-M's halfword-load reach of
// the compensator's base (see there).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[repr(C)]
struct ShortUpdateQ<'a> {
    /// Lowest signal of the short update; `i32::MAX` when it never
    /// applies.
    lo: i32,
    /// Highest signal of the short update (inclusive); `i32::MIN` when it
    /// never applies.
    hi: i32,
    /// Nodes per channel, `n`. A `u16`, so `n + 2` cannot wrap and the
    /// compiler sees that the window of `n + 2` words holds words `n` and
    /// `n + 1`.
    nodes: u16,
    /// First node and reciprocal step of the channels' axis.
    inside: InsideQ,
    /// The offset column followed by the gain column, `2 n` words.
    channels: &'a [[u8; 4]],
}

/// The interval cache of the short temperature update: the node interval
/// `index` of the channels' axis where the last short update looked up
/// the node words, with the first node values and node differences of the
/// offset and gain channels there.
///
/// The short update locates every signal in its range anyway (it needs
/// the fraction); when the located index equals the cell's, the words it
/// would read are those the cell holds: their bounds check passed and both
/// differences fit in i32 (the case `lerp_q_narrow` serves) when the
/// cell was filled, so [`lerp_q_diff`] on the cached values gives the
/// short update's result bit for bit. The words depend only on the image
/// and the index, never on the history of updates, and no located index
/// equals that of the empty cell.
///
/// A filled cell also means that the temperature status is OK: filling it
/// writes that status, and the only other writers empty it
/// ([`FixedCompensator::update_general`]) or start empty
/// ([`FixedCompensator::new`]), so a cached update writes no status.
// `repr(C)`: within ARMv6-M's word-load reach of the compensator's base.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[repr(C)]
struct CellQ {
    /// Node interval of the cached words; `usize::MAX` when empty (a
    /// located index inside the short update's range is below 2^16).
    index: usize,
    /// Offset on the interval's first node.
    offset0: i32,
    /// Offset difference to the next node.
    offset_diff: i32,
    /// Gain on the interval's first node.
    gain0: i32,
    /// Gain difference to the next node.
    gain_diff: i32,
}

impl CellQ {
    /// A cell that serves no signal.
    const EMPTY: Self = Self {
        index: usize::MAX,
        offset0: 0,
        offset_diff: 0,
        gain0: 0,
        gain_diff: 0,
    };
}

impl ShortUpdateQ<'_> {
    /// An update that never applies.
    const NEVER: Self = Self {
        lo: i32::MAX,
        hi: i32::MIN,
        nodes: 0,
        inside: InsideQ::UNIT_STEP,
        channels: &[],
    };
}

/// The short update of `tables` (from `view`, without the thermometer
/// when the channels lie over the signal axis; see [`ShortUpdateQ`]), or
/// one that never applies.
fn short_update_q<'a>(view: &TableView<'a>, tables: &TablesQ<'a>) -> ShortUpdateQ<'a> {
    let axis = tables.temperature;
    let channels = view.offset_gain_words();
    let Ok(nodes) = u16::try_from(axis.len()) else {
        return ShortUpdateQ::NEVER;
    };
    if tables.thermometer.is_some()
        || tables.quadratic.is_some()
        || tables.grid.is_some()
        || !view.interpolation().runs_linear()
        // n < 2^16: the doubling cannot wrap.
        || channels.len() != usize::from(nodes).wrapping_mul(2)
    {
        return ShortUpdateQ::NEVER;
    }
    // The last node is above the first (`AxisQ::new` asks for a positive
    // step and two nodes), so one below it does not wrap. Disjoint ranges
    // give `lo > hi`, an empty range: no test needed.
    let (lo, hi) = (
        axis.start().max(tables.signal_lo),
        axis.end().wrapping_sub(1).min(tables.signal_hi),
    );
    ShortUpdateQ {
        lo,
        hi,
        nodes,
        inside: axis.inside(),
        channels,
    }
}

/// Interpolates with the image's method: the linear kernel inline, the
/// cubic one out of line, so the common linear update stays short (four or
/// more interpolations per temperature update).
#[inline(always)]
fn interp<N: Nodes<Value = i32>>(method: Interpolation, nodes: &N, p: PositionQ) -> i32 {
    if method.runs_linear() {
        linear_q(nodes, p)
    } else {
        interp_cubic(nodes, p)
    }
}

/// The monotone cubic kernel, kept out of line.
#[inline(never)]
fn interp_cubic<N: Nodes<Value = i32>>(nodes: &N, p: PositionQ) -> i32 {
    cubic_monotone_q(nodes, p)
}

/// Position on the temperature axis and `(offset, gain, quadratic)` at
/// `t_q`.
#[inline(always)]
fn at_temperature_q(
    method: Interpolation,
    tables: &TablesQ<'_>,
    t_q: i32,
) -> (PositionQ, (i32, i32, i32)) {
    let p = tables.temperature.locate(t_q);
    let c = if method.runs_linear() {
        channels_linear_q(tables, p)
    } else {
        channels_cubic_q(tables, p)
    };
    (p, c)
}

/// `(offset, gain, quadratic)` at `p` by [`lerp_q`] on each channel's
/// node pair, with no node test: at a node (`frac == 0`) `lerp_q` gives
/// the first word exactly, and `ColumnQ::pair`'s first value is node
/// `index` also on the last node (where the second is 0), so each result
/// equals [`linear_q`]'s bit for bit.
#[inline(always)]
fn channels_linear_q(t: &TablesQ<'_>, p: PositionQ) -> (i32, i32, i32) {
    let lerp = |c: &ColumnQ<'_>| {
        let (v0, v1) = c.pair(p.index);
        lerp_q(v0, v1, p.frac_q16)
    };
    let q = match &t.quadratic {
        Some(q) => lerp(q),
        None => 0,
    };
    (lerp(&t.offset), lerp(&t.gain), q)
}

/// `(offset, gain, quadratic)` at `p` by [`cubic_monotone_q`], out of
/// line so the linear update stays short; shares the one out-of-line
/// cubic kernel with the thermometer.
#[inline(never)]
fn channels_cubic_q(t: &TablesQ<'_>, p: PositionQ) -> (i32, i32, i32) {
    let q = match &t.quadratic {
        Some(q) => interp_cubic(q, p),
        None => 0,
    };
    (interp_cubic(&t.offset, p), interp_cubic(&t.gain, p), q)
}

/// `p >> s` (arithmetic) if the result fits in i32, for `s` in 1..=31 and
/// `sc = 32 - s`: the short path's shift before [`ShortScale`], kept as
/// the reference its tests compare with. The low word of the result takes
/// bits `s..32` of `p`'s low word and bits `0..s` of its high word; the
/// result fits in i32 exactly when the remaining high bits are the sign
/// extension of that word.
#[cfg(test)]
fn shr_1_31_to_i32(p: i64, s: u32, sc: u32) -> Option<i32> {
    let hi = (p >> 32) as i32;
    let lo = p as u32;
    let res_lo = lo.wrapping_shr(s) | (hi as u32).wrapping_shl(sc);
    let res_hi = hi.wrapping_shr(s);
    (res_hi == (res_lo as i32) >> 31).then_some(res_lo as i32)
}

/// i64 to i32 with saturation; the flag says whether it saturated.
// A range test and a sign choice, not `clamp`: two 64-bit compares and
// selects cost about 60 bytes of ARMv6-M flash per use (three uses in
// `compensate_general`), the test whether the high word is the low word's
// sign extension far less.
#[inline]
fn saturate(v: i64) -> (i32, bool) {
    match i32::try_from(v) {
        Ok(x) => (x, false),
        Err(_) if v < 0 => (i32::MIN, true),
        Err(_) => (i32::MAX, true),
    }
}

impl<'a> FixedCompensator<'a> {
    /// A compensator without a table: every sample reads 0 with
    /// [`Status::TABLE_INVALID`].
    #[must_use]
    pub const fn unconfigured() -> Self {
        Self {
            tables: None,
            temperature_map: None,
            interpolation: Interpolation::Linear,
            grid: None,
            rail_lo: i32::MIN,
            rail_hi: i32::MAX,
            raw_lo: i32::MIN,
            raw_hi: i32::MAX,
            fast_lo: 0,
            fast_span: 0,
            offset_scale: 1,
            offset_shift: 0,
            out_shift: 0,
            short_scale: ShortScale::UNUSED,
            out_round: 0,
            quad_shift: 0,
            temperature_q: 0,
            short: ShortUpdateQ::NEVER,
            cell: CellQ::EMPTY,
            short_ok: false,
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
        let mut tables = view.tables_q().ok_or(CompensatorError::WrongFormat {
            expected: NumberFormat::Q,
            found: view.format(),
        })?;
        // Over the signal axis the update locates the signal directly and
        // the thermometer waits until the temperature is asked for.
        let temperature_map = match view.channel_axis() {
            ChannelAxis::Signal => tables.thermometer.take().map(|(_, values)| values),
            ChannelAxis::Temperature => None,
        };
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
        let short_scale = ShortScale::new(out_shift, out_round);
        let mut c = Self {
            tables: Some(tables),
            interpolation: view.interpolation(),
            grid: tables.grid,
            rail_lo: l.rail_lo,
            rail_hi: l.rail_hi,
            raw_lo: l.raw_lo,
            raw_hi: l.raw_hi,
            // The parser limits the offset's fractional bits to 0..=30.
            offset_scale: 1i32.wrapping_shl(u32::from(q.offset)),
            offset_shift: u32::from(q.offset),
            out_shift,
            short_ok: tables.grid.is_none() && short_scale.is_some(),
            short_scale: short_scale.unwrap_or(ShortScale::UNUSED),
            out_round,
            quad_shift,
            temperature_map,
            short: short_update_q(view, &tables),
            ..Self::unconfigured()
        };
        // What `at_temperature_q` gives at the first node, read directly
        // (no second copy of the look-up code): the first node locates to
        // index 0, fraction 0, unclamped, and every kernel returns the
        // node value at fraction 0.
        let first = PositionQ {
            index: 0,
            frac_q16: 0,
            clamped: false,
        };
        let quadratic = tables.quadratic.as_ref().map_or(0, |q| q.node(0));
        c.store(
            tables.temperature.start(),
            first,
            (tables.offset.node(0), tables.gain.node(0), quadratic),
        );
        c.temp_status = Status::NO_TEMPERATURE;
        Ok(c)
    }

    /// Caches the coefficients at a located temperature and opens or closes
    /// the short sample path (closed while the quadratic term is non-zero).
    #[inline(always)]
    fn store(&mut self, t_q: i32, p: PositionQ, (offset, gain, quadratic): (i32, i32, i32)) {
        self.temperature_q = t_q;
        self.row = p;
        self.offset = offset;
        self.gain = gain;
        self.quadratic = quadratic;
        // rail_lo < raw_lo <= raw_hi < rail_hi (checked by the parser): the
        // span is below 2^32 and does not wrap.
        self.fast_lo = self.raw_lo;
        self.fast_span = if self.short_ok && quadratic == 0 {
            self.raw_hi.wrapping_sub(self.raw_lo).wrapping_add(1) as u32
        } else {
            0
        };
    }

    /// Takes a new temperature signal in Q(`signal`) (degrees Celsius in
    /// Q(`temperature`) when the image has no thermometer section) and
    /// caches the coefficients.
    ///
    /// A signal outside the image's plausible range flags
    /// [`Status::SENSOR_FAULT`] (and is clamped).
    #[inline]
    pub fn update_temperature(&mut self, signal_q: i32) -> Status {
        if self.update_temperature_short(signal_q) {
            return Status::OK;
        }
        self.update_general(signal_q)
    }

    /// The short update of [`Self::update_temperature`] alone: `true` when
    /// it applied (status OK), `false`, with nothing changed, where the
    /// general update must run ([`Self::update_temperature`] runs it).
    /// For a caller that keeps its general path out of line, as the C API
    /// does, so that its short path needs no stack frame.
    #[inline(always)]
    pub fn update_temperature_short(&mut self, signal_q: i32) -> bool {
        let s = &self.short;
        // False whenever the short update does not apply.
        if signal_q >= s.lo && signal_q <= s.hi {
            // start <= signal < end: `AxisQ::locate`'s arithmetic without
            // its clamping tests. An index on the last node (within one
            // LSB of it) fails the bounds check in `fill_cell` and takes
            // the general update, as do all clamped signals.
            let (index, frac_q16) = s.inside.locate(signal_q);
            // The cell's words are those of `index`, and the status is
            // already OK (see `CellQ`).
            if index == self.cell.index || self.fill_cell(index) {
                let c = &self.cell;
                self.temperature_q = signal_q;
                self.offset = lerp_q_diff(c.offset0, c.offset_diff, frac_q16);
                self.gain = lerp_q_diff(c.gain0, c.gain_diff, frac_q16);
                return true;
            }
        }
        false
    }

    /// Reads the node words of interval `index` into the cell and sets the
    /// status OK; `false` (nothing written) where the general update must
    /// run.
    #[inline]
    fn fill_cell(&mut self, index: usize) -> bool {
        let s = &self.short;
        let n = usize::from(s.nodes);
        // Offset words `index`, `index + 1` and gain words `n + index`,
        // `n + index + 1`: inside the block exactly when
        // `index + n + 2 <= 2 n`, which this one check tests. index and
        // n are below 2^16: no sum wraps.
        //
        // `lerp_q_narrow`'s difference: at a node (frac == 0) the result
        // is v0 exactly, as the general update's node read. A node
        // difference beyond the i32 range takes the general update, which
        // runs `lerp_q`'s i64 case: no call here, so no register to save.
        if let Some(w) = s.channels.get(index..index.wrapping_add(n.wrapping_add(2)))
            && let (Some(&o0), Some(&o1), Some(&g0), Some(&g1)) =
                (w.first(), w.get(1), w.get(n), w.get(n.wrapping_add(1)))
            && let (offset0, gain0) = (i32::from_le_bytes(o0), i32::from_le_bytes(g0))
            && let (Some(offset_diff), Some(gain_diff)) = (
                i32::from_le_bytes(o1).checked_sub(offset0),
                i32::from_le_bytes(g1).checked_sub(gain0),
            )
        {
            self.cell = CellQ {
                index,
                offset0,
                offset_diff,
                gain0,
                gain_diff,
            };
            self.temp_status = Status::OK;
            return true;
        }
        false
    }

    /// Every case of [`Self::update_temperature`].
    // Out of line, the short update's prologue saves only the registers it
    // uses: 9 instructions less per update on the Cortex-M4F. On ARMv6-M
    // (`narrow_mul`: the small parts) that gains 2 instructions, while
    // inlining saves about 130 bytes of flash, where the compensation code
    // has to fit in 8 KiB (out of line it had 12 bytes to spare).
    #[cfg_attr(narrow_mul, inline)]
    #[cfg_attr(not(narrow_mul), inline(never))]
    pub fn update_general(&mut self, signal_q: i32) -> Status {
        // Borrowed, not copied: the update reads the tables in place and
        // writes the cache once at the end (fewer registers to spill).
        // Keeps "a filled cell means status OK" (see `CellQ`).
        self.cell.index = CellQ::EMPTY.index;
        let Some(tables) = &self.tables else {
            return Status::TABLE_INVALID;
        };
        let mut status = Status::OK;
        if signal_q < tables.signal_lo || signal_q > tables.signal_hi {
            status |= Status::SENSOR_FAULT;
        }
        let t_q = match &tables.thermometer {
            Some((axis, values)) => {
                let p = axis.locate(signal_q);
                if p.clamped {
                    status |= Status::TEMPERATURE_CLAMPED;
                }
                interp(self.interpolation, values, p)
            }
            None => signal_q,
        };
        let (p, coefficients) = at_temperature_q(self.interpolation, tables, t_q);
        if p.clamped {
            status |= Status::TEMPERATURE_CLAMPED;
        }
        self.store(t_q, p, coefficients);
        self.temp_status = status;
        status
    }

    /// Temperature of the cached coefficients in Q(`temperature`) degrees
    /// Celsius (before clamping to the table axis).
    ///
    /// On an image over the signal axis ([`ChannelAxis::Signal`]) this
    /// locates the cached signal and interpolates the thermometer column
    /// there, the temperature clamped to the table's ends; it costs one
    /// look-up per call, so call it when the temperature is wanted, not per
    /// sample.
    #[must_use]
    pub fn temperature_q(&self) -> i32 {
        match (&self.temperature_map, &self.tables) {
            (Some(values), Some(t)) => {
                let p = t.temperature.locate(self.temperature_q);
                interp(self.interpolation, values, p)
            }
            _ => self.temperature_q,
        }
    }

    /// Cached `(offset, gain, quadratic)` at the current temperature, each
    /// in its own Q format.
    #[must_use]
    pub const fn coefficients(&self) -> (i32, i32, i32) {
        (self.offset, self.gain, self.quadratic)
    }

    /// Status of a raw code outside the calibrated range.
    #[cold]
    #[inline(never)]
    fn classify_raw(&self, raw: i32) -> Status {
        let mut status = self.temp_status | Status::INPUT_OUT_OF_RANGE;
        if raw <= self.rail_lo || raw >= self.rail_hi {
            status |= Status::SENSOR_FAULT;
        }
        status
    }

    /// Compensates one raw sample in integer ADC codes.
    ///
    /// `d = (raw << offset_bits) - offset` (saturated to i32), then
    /// `value = (d * g + half) >> (offset + gain - output)` with
    /// `g = gain + (quadratic * d >> (quadratic + offset - gain))`, plus the
    /// 2-D correction if present. Every product is i32 x i32 into i64, so
    /// nothing overflows; saturation at the i32 range is flagged.
    ///
    /// The common case (input in the calibrated range, no quadratic term,
    /// no 2-D correction, no saturation) takes a short path: one 32x32->64
    /// multiply, a rounding add and a shift. Both paths give identical
    /// results (tested).
    #[inline]
    pub fn compensate_sample(&self, raw: i32) -> ReadingQ {
        match self.compensate_sample_short(raw) {
            Some(r) => r,
            None => self.compensate_general(raw),
        }
    }

    /// The short path of [`Self::compensate_sample`] alone: `None` where
    /// the general path must run ([`Self::compensate_sample`] runs it).
    /// For a caller that keeps its general path out of line (the C API).
    #[inline(always)]
    pub fn compensate_sample_short(&self, raw: i32) -> Option<ReadingQ> {
        self.compensate_sample_short_map(raw, |r| r)
    }

    /// [`Self::compensate_sample_short`] with the reading passed through
    /// `f` where it is made: `f` runs in each of the short path's two
    /// endings (in range, saturated) rather than once after they merge.
    /// For a caller that packs the reading into a wider word (the C API):
    /// each ending then widens the status byte it has just loaded, which
    /// costs no instruction, where a widening after the merge costs one.
    #[inline(always)]
    pub fn compensate_sample_short_map<R>(
        &self,
        raw: i32,
        f: impl FnOnce(ReadingQ) -> R,
    ) -> Option<R> {
        // `raw - fast_lo` wraps below `fast_lo` to at least
        // `2^32 - (fast_lo - i32::MIN)`, beyond any span: one compare
        // tests both ends of the calibrated range, or fails always when
        // the span is 0.
        if (raw.wrapping_sub(self.fast_lo) as u32) < self.fast_span {
            // The parser checked that rail codes shifted by the offset's
            // fractional bits fit in i32, and the calibrated range lies
            // inside the rails: the product (a shift) cannot overflow.
            let shifted = raw.wrapping_mul(self.offset_scale);
            if let Some(d) = shifted.checked_sub(self.offset) {
                #[cfg(narrow_mul)]
                let value = self.short_scale.narrow(d, self.gain);
                // |d * gain| <= 2^62, out_round <= 2^30 here: no overflow.
                #[cfg(not(narrow_mul))]
                let value = self
                    .short_scale
                    .wide(mul_wide(d, self.gain).wrapping_add(self.out_round));
                return Some(match value {
                    Ok(value) => f(ReadingQ {
                        value,
                        status: self.temp_status,
                    }),
                    Err(hi) => f(self.saturated(hi)),
                });
            }
        }
        None
    }

    /// What [`Self::compensate_general`] gives for a raw code in the short
    /// path's range whose output leaves i32, from the sign of the high
    /// word of `d g + half`: there the status is the temperature status
    /// (raw in the calibrated range, `d` fits, no quadratic term, no 2-D
    /// correction) plus the saturation, and the value the i32 end of that
    /// sign. Answering here, the short path needs no raw code after the
    /// multiply: one register fewer, so no spill on ARMv6-M.
    #[inline(always)]
    fn saturated(&self, hi: i32) -> ReadingQ {
        ReadingQ {
            // i32::MAX for hi >= 0, its complement i32::MIN for hi < 0,
            // without a branch.
            value: (hi >> 31) ^ i32::MAX,
            status: self.temp_status | Status::SATURATED,
        }
    }

    /// Compensates a raw code taken at an excitation that differs from the
    /// calibration excitation by `excitation_ratio_q16` (measured / nominal
    /// in Q16.16): the code is first scaled by `2^16 / ratio`, rounded to
    /// nearest (ties away from zero), which undoes the proportional
    /// dependence of a bridge or Hall output on excitation.
    ///
    /// A zero ratio (no excitation: open supply) gives value 0 with
    /// [`Status::SENSOR_FAULT`]. Costs one 64-by-32-bit division.
    #[inline]
    pub fn compensate_ratiometric(&self, raw: i32, excitation_ratio_q16: u32) -> ReadingQ {
        if excitation_ratio_q16 == 0 {
            return ReadingQ {
                value: 0,
                status: self.temp_status | Status::SENSOR_FAULT,
            };
        }
        let ratio = i64::from(excitation_ratio_q16);
        // |raw << 16| < 2^47 and ratio < 2^32: no overflow; the division
        // by a non-zero divisor cannot fail.
        let num = i64::from(raw).wrapping_shl(16);
        let half = ratio.wrapping_div(2);
        let adj = if num >= 0 {
            num.wrapping_add(half)
        } else {
            num.wrapping_sub(half)
        };
        let scaled = adj.checked_div(ratio).unwrap_or(0);
        let (raw_scaled, sat) = saturate(scaled);
        let mut r = self.compensate_sample(raw_scaled);
        if sat {
            r.status |= Status::SATURATED;
        }
        r
    }

    /// Every case of [`Self::compensate_sample`]: statuses, saturation,
    /// quadratic term, 2-D correction; what a caller of
    /// [`Self::compensate_sample_short`] runs where that returns `None`.
    #[inline(never)]
    pub fn compensate_general(&self, raw: i32) -> ReadingQ {
        let mut status = if raw >= self.raw_lo && raw <= self.raw_hi {
            self.temp_status
        } else {
            self.classify_raw(raw)
        };
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
            let q = mul_wide(self.quadratic, d).wrapping_shr(self.quad_shift);
            (g, sat_g) = saturate(i64::from(g).wrapping_add(q));
        }
        // |d * g| <= 2^62 and out_round <= 2^61: the sum stays below 2^63.
        let y = mul_wide(d, g)
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

#[cfg(test)]
mod interval_cache_tests;

#[cfg(test)]
mod tests {
    use super::*;
    use crate::ImageBuilder;
    use crate::image::{AxisSpec, ChannelAxis, QFormat, RawLimits, SignalKind, Unit};

    #[test]
    fn soft_multiply_is_exact() {
        use crate::widemul::mul_wide_soft;
        let edge = [
            0,
            1,
            -1,
            2,
            0xFFFF,
            0x1_0000,
            -0x1_0000,
            12345,
            -987_654_321,
            i32::MAX,
            i32::MIN,
            i32::MIN + 1,
        ];
        let mut x: u32 = 0x1234_5678;
        let mut vals: std::vec::Vec<i32> = edge.to_vec();
        for _ in 0..2000 {
            // xorshift32: deterministic spread over the whole range.
            x ^= x << 13;
            x ^= x >> 17;
            x ^= x << 5;
            vals.push(x as i32);
        }
        for &a in &vals {
            for &b in edge.iter().chain(vals.iter().take(64)) {
                let want = i64::from(a) * i64::from(b);
                assert_eq!(mul_wide_soft(a, b), want, "{a} * {b}");
            }
        }
    }

    #[test]
    fn saturate_matches_clamp() {
        let edges = [
            0i64,
            1,
            -1,
            i64::from(i32::MAX),
            i64::from(i32::MAX) + 1,
            i64::from(i32::MIN),
            i64::from(i32::MIN) - 1,
            1 << 32,
            -(1 << 32),
            (1 << 32) + 5,
            i64::MAX,
            i64::MIN,
        ];
        for v in edges {
            let c = v.clamp(i64::from(i32::MIN), i64::from(i32::MAX));
            let want = (c as i32, c != v);
            let got = saturate(v);
            assert_eq!(got, want, "saturate({v}): got {got:?}, expected {want:?}");
        }
    }

    #[test]
    fn soft_shift_matches_native() {
        let mut x: u64 = 0x9E37_79B9_7F4A_7C15;
        for i in 0..20_000u32 {
            // xorshift64, plus values near the i32 boundaries.
            x ^= x << 13;
            x ^= x >> 7;
            x ^= x << 17;
            let p = match i % 4 {
                0 => x as i64,
                1 => (x as i64) >> 20,
                2 => i64::from(i32::MAX) << (i % 31),
                _ => i64::from(i32::MIN) << (i % 31),
            };
            let s = 1 + i % 31;
            let want = i32::try_from(p >> s).ok();
            let got = shr_1_31_to_i32(p, s, 32 - s);
            assert_eq!(got, want, "{p} >> {s}");
        }
    }

    /// A Celsius image without thermometer over `axis` (Q16.16 degrees):
    /// offset Q8 codes, gain Q20, output Q12, plausible range -60..200 C.
    /// Also the base of the interval-cache tests' images.
    pub(super) fn celsius_builder<'a>(
        axis: AxisSpec<i32>,
        offset: &'a [i32],
        gain: &'a [i32],
    ) -> ImageBuilder<'a, i32> {
        ImageBuilder {
            interpolation: crate::interp::Interpolation::Linear,
            q_format: QFormat {
                temperature: 16,
                signal: 16,
                output: 12,
                offset: 8,
                gain: 20,
                quadratic: 0,
            },
            signal_kind: SignalKind::Celsius,
            unit: Unit::None,
            ratiometric: false,
            full_scale: 1.0,
            raw_limits: RawLimits {
                rail_lo: -8_388_608,
                raw_lo: -8_000_000,
                raw_hi: 8_000_000,
                rail_hi: 8_388_607,
            },
            signal_lo: -60 << 16,
            signal_hi: 200 << 16,
            serial: [0; 16],
            thermometer: None,
            channel_axis: ChannelAxis::Temperature,
            temperature_axis: axis,
            offset,
            gain,
            quadratic: None,
            grid: None,
        }
    }

    /// A compensator on `b`'s image, encoded into `buf`.
    pub(super) fn compensator<'a>(
        b: &ImageBuilder<'_, i32>,
        buf: &'a mut [u8],
    ) -> Result<FixedCompensator<'a>, &'static str> {
        let n = b.encode(buf).map_err(|_| "the image encodes")?;
        let view = TableView::parse(buf.get(..n).ok_or("encoded length")?)
            .map_err(|_| "the image parses")?;
        FixedCompensator::new(&view).map_err(|_| "a Q image")
    }

    #[test]
    fn fast_and_general_paths_agree() -> Result<(), &'static str> {
        let offset = [100 << 8, -50 << 8];
        let gain = [3 << 20, 5 << 20];
        let axis = AxisSpec {
            start: 0,
            step: 100 << 16,
        };
        let mut buf = [0u8; 256];
        let mut c = compensator(&celsius_builder(axis, &offset, &gain), &mut buf)?;
        c.update_temperature(37 << 16);
        let mut x: u32 = 99;
        for i in 0..5000 {
            x ^= x << 13;
            x ^= x >> 17;
            x ^= x << 5;
            // Mostly in range, some beyond, a few at the extremes.
            let raw = match i % 50 {
                0 => i32::MIN,
                1 => i32::MAX,
                _ => (x as i32) >> 8,
            };
            let fast = c.compensate_sample(raw);
            let general = c.compensate_general(raw);
            assert_eq!(fast, general, "raw {raw}");
        }
        Ok(())
    }

    /// The short path answers saturated outputs itself (`saturated`) with
    /// what the general path gives, mapped or not; both kinds of sample
    /// occur.
    #[test]
    fn short_path_saturation_matches_general() -> Result<(), &'static str> {
        let offset = [100 << 8, -50 << 8];
        let gain = [3 << 20, -(5 << 20)];
        let axis = AxisSpec {
            start: 0,
            step: 100 << 16,
        };
        let mut buf = [0u8; 256];
        let mut c = compensator(&celsius_builder(axis, &offset, &gain), &mut buf)?;
        let (mut saturated, mut plain) = (0, 0);
        let mut x: u32 = 7;
        for t in [10, 60, 95] {
            c.update_temperature(t << 16);
            for _ in 0..3000 {
                x ^= x << 13;
                x ^= x >> 17;
                x ^= x << 5;
                // |d g| >> 16 leaves i32 from |raw| of about 2^17 up.
                let raw = (x as i32) >> (9 + x % 8);
                let fast = c.compensate_sample(raw);
                assert_eq!(fast, c.compensate_general(raw), "t {t} C, raw {raw}");
                // The mapped short path hands each ending's reading to the
                // map unchanged (the C API packs it there).
                let pack = |r: ReadingQ| (i64::from(r.value) << 8) | i64::from(r.status.bits());
                assert_eq!(
                    c.compensate_sample_short_map(raw, pack),
                    c.compensate_sample_short(raw).map(pack),
                    "t {t} C, raw {raw}: mapped short path"
                );
                if fast.status.contains(Status::SATURATED) {
                    saturated += 1;
                } else {
                    plain += 1;
                }
            }
        }
        assert!(
            saturated > 1000 && plain > 1000,
            "{saturated} saturated, {plain} plain samples"
        );
        Ok(())
    }

    /// Everything a caller can read after a temperature update.
    fn observed(
        c: &FixedCompensator<'_>,
        status: Status,
    ) -> (Status, (i32, i32, i32), i32, Status) {
        (
            status,
            c.coefficients(),
            c.temperature_q(),
            c.compensate_sample(12_345).status,
        )
    }

    #[test]
    fn short_and_general_updates_agree() -> Result<(), &'static str> {
        // Six nodes from -40 C every 12.345 C (an awkward step, so the
        // reciprocal rounds), the plausible range starting inside the axis
        // (-60..200 C moved to -30..200 C) and ending beyond it. Gain nodes
        // 0 and 1 differ by more than the i32 range (the wide rounding
        // path), the others by ordinary amounts of both signs.
        let start = -40 << 16;
        let step = 809_042;
        let axis = AxisSpec { start, step };
        let offset = [100 << 8, -50 << 8, 7, -7, 123_456, -98_765];
        let gain = [i32::MAX, i32::MIN, 3 << 20, (5 << 20) + 1, -1, 0];
        let mut b = celsius_builder(axis, &offset, &gain);
        b.signal_lo = -30 << 16;
        let mut buf = [0u8; 256];
        let c = compensator(&b, &mut buf)?;
        let end = start + 5 * step;
        // The short update serves the plausible range up to one LSB below
        // the last node, so the signals below exercise both updates.
        assert_eq!(
            (c.short.lo, c.short.hi),
            (b.signal_lo, end - 1),
            "short update range"
        );
        let mut signals = vec![
            i32::MIN,
            i32::MAX,
            start - 1,
            start,
            start + 1,
            b.signal_lo - 1,
            b.signal_lo,
            b.signal_lo + 1,
            end - 1,
            end,
            end + 1,
            b.signal_hi,
            b.signal_hi + 1,
        ];
        for k in 0..6 {
            let node = start + k * step;
            signals.extend([node - 1, node, node + 1, node + step / 2]);
        }
        let mut x: u32 = 0x2468_ACE1;
        for _ in 0..4000 {
            x ^= x << 13;
            x ^= x >> 17;
            x ^= x << 5;
            // Spread over the axis and one step beyond either end.
            signals.push(start - step + (x % (7 * step as u32)) as i32);
        }
        let mut short_signals = 0;
        for s in signals {
            let (mut short, mut general) = (c, c);
            let got = short.update_temperature(s);
            let want = general.update_general(s);
            assert_eq!(
                observed(&short, got),
                observed(&general, want),
                "signal {s}: update_temperature (left) vs update_general (right)"
            );
            if (c.short.lo..=c.short.hi).contains(&s) {
                short_signals += 1;
            }
        }
        // Most signals lie where the short update applies.
        assert!(short_signals > 2000, "{short_signals} short-path signals");
        Ok(())
    }

    #[test]
    fn short_update_only_for_one_lookup_images() -> Result<(), &'static str> {
        let axis = AxisSpec {
            start: 0,
            step: 100 << 16,
        };
        let (offset, gain, quadratic) = ([1, 2], [3 << 20, 4 << 20], [5, 6]);
        let therm = [0, 100 << 16];
        let grid = [0; 4];
        let plain = celsius_builder(axis, &offset, &gain);
        let mut with_quadratic = plain;
        with_quadratic.quadratic = Some(&quadratic);
        with_quadratic.q_format.quadratic = 40;
        let mut with_grid = plain;
        with_grid.grid = Some(crate::image::GridSpec {
            raw_axis: AxisSpec {
                start: -1000,
                step: 2000,
            },
            raw_len: 2,
            values: &grid,
        });
        let therm_map = crate::image::MapSpec {
            axis,
            values: &therm,
        };
        let mut over_temperature = plain;
        over_temperature.signal_kind = SignalKind::Ohm;
        over_temperature.thermometer = Some(therm_map);
        let mut over_signal = over_temperature;
        over_signal.channel_axis = ChannelAxis::Signal;
        let mut disjoint = plain;
        disjoint.signal_lo = (100 << 16) + 1;
        // (case, image, short range, or None for one that never applies)
        let mut cases = vec![
            ("celsius, no thermometer", plain, Some((0, (100 << 16) - 1))),
            ("quadratic channel", with_quadratic, None),
            ("2-D correction", with_grid, None),
            (
                "thermometer, channels over temperature",
                over_temperature,
                None,
            ),
            (
                "channels over the signal",
                over_signal,
                Some((0, (100 << 16) - 1)),
            ),
            // Plausible range beyond the axis: an empty range.
            (
                "disjoint ranges",
                disjoint,
                Some(((100 << 16) + 1, (100 << 16) - 1)),
            ),
        ];
        if cfg!(feature = "cubic") {
            let mut cubic = plain;
            cubic.interpolation = crate::interp::Interpolation::MonotoneCubic;
            cases.push(("monotone cubic", cubic, None));
        }
        let never = (ShortUpdateQ::NEVER.lo, ShortUpdateQ::NEVER.hi);
        for (case, b, want) in cases {
            let mut buf = [0u8; 256];
            let c = compensator(&b, &mut buf)?;
            let got = (c.short.lo, c.short.hi);
            let want = want.unwrap_or(never);
            assert_eq!(got, want, "{case}: got {got:?}, expected {want:?}");
        }
        assert!(never.0 > never.1, "NEVER is an empty range");
        Ok(())
    }
}
