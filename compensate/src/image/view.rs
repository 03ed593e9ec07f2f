//! Zero-copy, validated view of a table image: [`TableView::parse`].

use super::bytes::{f32_at, i32_at, u8_at, u16_at, u32_at, word};
use super::column::{ColumnF32, ColumnQ};
use super::error::{ImageError, Section};
use super::layout::{
    self, AXIS_LEN, CRC_LEN, ChannelAxis, FLAG_RATIOMETRIC, FLAG_SIGNAL_AXIS, FLAG_SIMULATED,
    FLAGS_KNOWN, HEADER_LEN, MAGIC, NumberFormat, QFormat, RawLimits, SERIAL_LEN, SignalKind, Unit,
    VERSION, WORD, off,
};
use super::tables::{TablesF32, TablesQ};
use super::validate::{check_frac, f32_axis_ok};
use crate::crc::crc32;
use crate::interp::{Axis, AxisQ, Interpolation};

/// Exponent bits of an f32: a value with all of them set is infinite or NaN.
const F32_EXP_MASK: u32 = 0x7F80_0000;

/// A validated table image borrowed from flash or RAM.
///
/// Only [`TableView::parse`] creates one, and it checks everything first:
/// a `TableView` is never partly trusted.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct TableView<'a> {
    bytes: &'a [u8],
    format: NumberFormat,
    interpolation: Interpolation,
    signal_kind: SignalKind,
    unit: Unit,
    ratiometric: bool,
    simulated: bool,
    channel_axis: ChannelAxis,
    q: QFormat,
    full_scale: f32,
    limits: RawLimits,
    n_t: usize,
    n_ch: usize,
    n_sig: usize,
    n_raw: usize,
}

/// Section geometry: byte offsets of each section's axis.
struct Offsets {
    therm: usize,
    chan: usize,
    grid: usize,
}

impl Offsets {
    fn new(n_t: usize, n_ch: usize, n_sig: usize) -> Self {
        // Only called once `layout::image_len` succeeded for these counts,
        // so none of the sums below can overflow. Wrapping, not
        // saturating: the exact result either way, and ARMv6-M (no
        // widening multiply) then links no 64-bit multiply to test the
        // product for overflow.
        let therm = HEADER_LEN;
        let chan = if n_sig == 0 {
            therm
        } else {
            therm
                .wrapping_add(AXIS_LEN)
                .wrapping_add(n_sig.wrapping_mul(WORD))
        };
        let grid = chan
            .wrapping_add(AXIS_LEN)
            .wrapping_add(n_ch.wrapping_mul(n_t).wrapping_mul(WORD));
        Self { therm, chan, grid }
    }
}

impl<'a> TableView<'a> {
    /// Length an image declares in its header, to cut it out of a larger
    /// flash region before [`TableView::parse`]. Checks magic and version.
    ///
    /// # Errors
    /// [`ImageError::Truncated`], [`ImageError::BadMagic`],
    /// [`ImageError::UnsupportedVersion`].
    pub fn declared_len(bytes: &[u8]) -> Result<usize, ImageError> {
        if bytes.len() < HEADER_LEN {
            return Err(ImageError::Truncated {
                needed: HEADER_LEN,
                got: bytes.len(),
            });
        }
        if word(bytes, off::MAGIC) != MAGIC {
            return Err(ImageError::BadMagic);
        }
        let version = u16_at(bytes, off::VERSION);
        if version != VERSION {
            return Err(ImageError::UnsupportedVersion(version));
        }
        Ok(u32_at(bytes, off::TOTAL_LEN) as usize)
    }

    /// Validates `bytes` as a complete table image and returns a view of it.
    ///
    /// Checks, in order: length, magic, version, header length, declared
    /// length, CRC-32, codes and reserved fields, counts, fractional bits,
    /// section lengths, limits, axes, finiteness of every number.
    ///
    /// # Errors
    /// One [`ImageError`] variant per kind of defect; never panics. Built
    /// without the `cubic` feature, a cubic image gives
    /// [`ImageError::InterpolationNotCompiled`].
    #[cfg_attr(feature = "inline-parse", inline(always))]
    pub fn parse(bytes: &'a [u8]) -> Result<Self, ImageError> {
        Self::parse_as::<false>(bytes)
    }

    /// [`Self::parse`] for firmware that runs Q images only (a part without
    /// FPU): the same checks, but an f32 image is rejected right after its
    /// CRC, so the f32 validation (soft-float routines on such a part) is
    /// not linked.
    ///
    /// # Errors
    /// [`ImageError::FormatNotAccepted`] for a valid-so-far f32 image;
    /// otherwise as [`Self::parse`].
    #[cfg_attr(feature = "inline-parse", inline(always))]
    pub fn parse_q(bytes: &'a [u8]) -> Result<Self, ImageError> {
        Self::parse_as::<true>(bytes)
    }

    /// [`Self::parse`] with `Q_ONLY`: the format is a constant after its
    /// check, so the optimiser drops every f32 branch.
    #[cfg_attr(feature = "inline-parse", inline(always))]
    fn parse_as<const Q_ONLY: bool>(bytes: &'a [u8]) -> Result<Self, ImageError> {
        let total = Self::declared_len(bytes)?;
        let header_len = u16_at(bytes, off::HEADER_LEN);
        if usize::from(header_len) != HEADER_LEN {
            return Err(ImageError::BadHeaderLength(header_len));
        }
        if bytes.len() < total {
            return Err(ImageError::Truncated {
                needed: total,
                got: bytes.len(),
            });
        }
        if bytes.len() > total {
            return Err(ImageError::TrailingBytes {
                declared: total,
                got: bytes.len(),
            });
        }
        let min_len = HEADER_LEN + AXIS_LEN + CRC_LEN;
        if total < min_len {
            return Err(ImageError::LengthMismatch {
                declared: total,
                expected: min_len,
            });
        }
        let body_len = total - CRC_LEN;
        let stored = u32_at(bytes, body_len);
        let computed = crc32(bytes.get(..body_len).unwrap_or(&[]));
        if stored != computed {
            return Err(ImageError::CrcMismatch { stored, computed });
        }

        let format_code = u8_at(bytes, off::FORMAT);
        let format =
            NumberFormat::from_code(format_code).ok_or(ImageError::UnknownFormat(format_code))?;
        let format = if Q_ONLY {
            if format != NumberFormat::Q {
                return Err(ImageError::FormatNotAccepted {
                    expected: NumberFormat::Q,
                    found: format,
                });
            }
            NumberFormat::Q
        } else {
            format
        };
        let interp_code = u8_at(bytes, off::INTERP);
        let interpolation = Interpolation::from_code(interp_code)
            .ok_or(ImageError::UnknownInterpolation(interp_code))?;
        if !cfg!(feature = "cubic") && interpolation != Interpolation::Linear {
            return Err(ImageError::InterpolationNotCompiled(interpolation));
        }
        let kind_code = u8_at(bytes, off::SIGNAL_KIND);
        let signal_kind =
            SignalKind::from_code(kind_code).ok_or(ImageError::UnknownSignalKind(kind_code))?;
        let unit_code = u8_at(bytes, off::UNIT);
        let unit = Unit::from_code(unit_code).ok_or(ImageError::UnknownUnit(unit_code))?;
        let flags = u8_at(bytes, off::FLAGS);
        if flags & !FLAGS_KNOWN != 0 {
            return Err(ImageError::ReservedNotZero { offset: off::FLAGS });
        }
        if u16_at(bytes, off::RESERVED_A) != 0 {
            return Err(ImageError::ReservedNotZero {
                offset: off::RESERVED_A,
            });
        }
        if u32_at(bytes, off::RESERVED_B) != 0 {
            return Err(ImageError::ReservedNotZero {
                offset: off::RESERVED_B,
            });
        }

        let n_t = usize::from(u16_at(bytes, off::N_T));
        let n_sig = usize::from(u16_at(bytes, off::N_SIG));
        let n_raw = usize::from(u16_at(bytes, off::N_RAW));
        let n_ch = usize::from(u8_at(bytes, off::N_CH));
        if n_t < 2 {
            return Err(ImageError::BadCount {
                field: "n_t",
                value: n_t,
            });
        }
        if n_sig == 1 || (n_sig == 0 && signal_kind != SignalKind::Celsius) {
            return Err(ImageError::BadCount {
                field: "n_sig",
                value: n_sig,
            });
        }
        let channel_axis = if flags & FLAG_SIGNAL_AXIS != 0 {
            ChannelAxis::Signal
        } else {
            ChannelAxis::Temperature
        };
        // Over the signal, the thermometer column sits on the channels'
        // nodes (its axis is compared below, once the length is known).
        if channel_axis == ChannelAxis::Signal && n_sig != n_t {
            return Err(ImageError::BadCount {
                field: "n_sig",
                value: n_sig,
            });
        }
        if n_raw == 1 {
            return Err(ImageError::BadCount {
                field: "n_raw",
                value: n_raw,
            });
        }
        if !(2..=3).contains(&n_ch) {
            return Err(ImageError::BadCount {
                field: "n_ch",
                value: n_ch,
            });
        }
        let expected = layout::image_len(n_t, n_ch, n_sig, n_raw).unwrap_or(0);
        if expected != total {
            return Err(ImageError::LengthMismatch {
                declared: total,
                expected,
            });
        }

        let mut frac = [0u8; 6];
        for (i, f) in frac.iter_mut().enumerate() {
            *f = u8_at(bytes, off::FRAC + i);
        }
        let q = QFormat::from_bytes(frac);
        let limits = RawLimits {
            rail_lo: i32_at(bytes, off::RAIL_LO),
            raw_lo: i32_at(bytes, off::RAW_LO),
            raw_hi: i32_at(bytes, off::RAW_HI),
            rail_hi: i32_at(bytes, off::RAIL_HI),
        };
        check_frac(format, q, n_ch, limits)?;

        // Positive and finite, tested on the bits (no float compare, which
        // is a library call on a part without FPU): sign 0, exponent below
        // all-ones, not +0. Subnormals count as positive, as `> 0.0` would.
        let full_scale_bits = u32_at(bytes, off::FULL_SCALE);
        if !(full_scale_bits > 0 && full_scale_bits < F32_EXP_MASK) {
            return Err(ImageError::BadLimits {
                field: "full_scale",
            });
        }
        if !(limits.rail_lo < limits.raw_lo
            && limits.raw_lo < limits.raw_hi
            && limits.raw_hi < limits.rail_hi)
        {
            return Err(ImageError::BadLimits { field: "raw" });
        }
        let sig_ok = match format {
            NumberFormat::F32 => {
                let (lo, hi) = (f32_at(bytes, off::SIG_LO), f32_at(bytes, off::SIG_HI));
                lo.is_finite() && hi.is_finite() && lo < hi
            }
            NumberFormat::Q => i32_at(bytes, off::SIG_LO) < i32_at(bytes, off::SIG_HI),
        };
        if !sig_ok {
            return Err(ImageError::BadLimits { field: "signal" });
        }

        let view = Self {
            bytes,
            format,
            interpolation,
            signal_kind,
            unit,
            ratiometric: flags & FLAG_RATIOMETRIC != 0,
            simulated: flags & FLAG_SIMULATED != 0,
            channel_axis,
            q,
            full_scale: f32::from_bits(full_scale_bits),
            limits,
            n_t,
            n_ch,
            n_sig,
            n_raw,
        };
        view.check_sections::<Q_ONLY>()?;
        if channel_axis == ChannelAxis::Signal {
            let o = Offsets::new(n_t, n_ch, n_sig);
            if bytes.get(o.therm..o.therm + AXIS_LEN) != bytes.get(o.chan..o.chan + AXIS_LEN) {
                return Err(ImageError::BadAxis {
                    section: Section::Thermometer,
                });
            }
        }
        Ok(view)
    }

    /// Axes strictly increasing and every number finite (`Q_ONLY`: the
    /// view is known to hold a Q image).
    fn check_sections<const Q_ONLY: bool>(&self) -> Result<(), ImageError> {
        self.check_section::<Q_ONLY>(Section::Thermometer)?;
        self.check_section::<Q_ONLY>(Section::Channels)?;
        self.check_section::<Q_ONLY>(Section::Grid)
    }

    /// One section of [`Self::check_sections`]: its axis (none without
    /// nodes: no section), then (f32) its values.
    // Out of line, with the section as the only argument: one copy serves
    // the three sections (inlined, each cost about 200 bytes of ARMv6-M
    // flash for its unaligned word reads and the axis test).
    #[inline(never)]
    fn check_section<const Q_ONLY: bool>(&self, section: Section) -> Result<(), ImageError> {
        let o = Offsets::new(self.n_t, self.n_ch, self.n_sig);
        // Only called once `layout::image_len` succeeded for these counts:
        // the products cannot wrap (wrapping, not saturating, so that
        // ARMv6-M links no 64-bit multiply to detect an overflow).
        let (at, nodes, values) = match section {
            Section::Thermometer => (o.therm, self.n_sig, self.n_sig),
            Section::Channels => (o.chan, self.n_t, self.n_t.wrapping_mul(self.n_ch)),
            _ => (o.grid, self.n_raw, self.n_raw.wrapping_mul(self.n_t)),
        };
        if nodes == 0 {
            return Ok(());
        }
        let format = if Q_ONLY { NumberFormat::Q } else { self.format };
        // A Q grid's raw axis is in integer codes; every other Q axis uses
        // the fractional bits of its own quantity, which do not matter for
        // monotonicity.
        let ok = match format {
            NumberFormat::F32 => {
                f32_axis_ok(f32_at(self.bytes, at), f32_at(self.bytes, at + WORD), nodes)
            }
            NumberFormat::Q => {
                AxisQ::span(i32_at(self.bytes, at), i32_at(self.bytes, at + WORD), nodes).is_some()
            }
        };
        if !ok {
            return Err(ImageError::BadAxis { section });
        }
        if format == NumberFormat::F32 {
            let data = at + AXIS_LEN;
            for index in 0..values {
                if !f32_at(self.bytes, data.saturating_add(index.saturating_mul(WORD))).is_finite()
                {
                    return Err(ImageError::NonFinite { section, index });
                }
            }
        }
        Ok(())
    }

    /// Number format of the stored numbers.
    #[must_use]
    pub const fn format(&self) -> NumberFormat {
        self.format
    }

    /// Interpolation method between nodes.
    #[must_use]
    pub const fn interpolation(&self) -> Interpolation {
        self.interpolation
    }

    /// What the temperature signal is.
    #[must_use]
    pub const fn signal_kind(&self) -> SignalKind {
        self.signal_kind
    }

    /// Unit of the compensated measurand.
    #[must_use]
    pub const fn unit(&self) -> Unit {
        self.unit
    }

    /// `true` when the raw signal is ratiometric to the excitation.
    #[must_use]
    pub const fn ratiometric(&self) -> bool {
        self.ratiometric
    }

    /// `true` when the image was built from simulated data (flag
    /// [`layout::FLAG_SIMULATED`]): never flash it where a reading protects
    /// people or property.
    #[must_use]
    pub const fn simulated(&self) -> bool {
        self.simulated
    }

    /// What the correction channels are tabulated over.
    #[must_use]
    pub const fn channel_axis(&self) -> ChannelAxis {
        self.channel_axis
    }

    /// Fractional bits of each quantity (all zero for f32 images).
    #[must_use]
    pub const fn q_format(&self) -> QFormat {
        self.q
    }

    /// Full scale of the measurand, in [`Self::unit`].
    #[must_use]
    pub const fn full_scale(&self) -> f32 {
        self.full_scale
    }

    /// Raw-input limits (rails and calibrated range), in ADC codes.
    #[must_use]
    pub const fn raw_limits(&self) -> RawLimits {
        self.limits
    }

    /// Temperature nodes per channel.
    #[must_use]
    pub const fn temperature_nodes(&self) -> usize {
        self.n_t
    }

    /// Correction channels (2: offset and gain; 3: plus quadratic).
    #[must_use]
    pub const fn channel_count(&self) -> usize {
        self.n_ch
    }

    /// Nodes of the thermometer section, 0 if absent.
    #[must_use]
    pub const fn thermometer_nodes(&self) -> usize {
        self.n_sig
    }

    /// Raw-axis nodes of the 2-D correction, 0 if absent.
    #[must_use]
    pub const fn grid_raw_nodes(&self) -> usize {
        self.n_raw
    }

    /// The opaque serial / metadata field.
    #[must_use]
    pub fn serial(&self) -> [u8; SERIAL_LEN] {
        let mut s = [0u8; SERIAL_LEN];
        if let Some(src) = self.bytes.get(off::SERIAL..off::SERIAL + SERIAL_LEN) {
            s.copy_from_slice(src);
        }
        s
    }

    /// The CRC-32 stored at the end of the image.
    #[must_use]
    pub fn crc(&self) -> u32 {
        u32_at(self.bytes, self.bytes.len().saturating_sub(CRC_LEN))
    }

    /// The whole image.
    #[must_use]
    pub const fn as_bytes(&self) -> &'a [u8] {
        self.bytes
    }

    /// The Q axis of `len` nodes whose first node and step are the words
    /// at byte `at`.
    // Out of line: [`Self::tables_q`] builds up to three axes, and each
    // inlined copy of the unaligned word reads cost ARMv6-M flash.
    #[inline(never)]
    fn axis_q(&self, at: usize, len: usize) -> Option<AxisQ> {
        AxisQ::new(i32_at(self.bytes, at), i32_at(self.bytes, at + WORD), len)
    }

    /// Words `start..start + count` of the image as a byte slice.
    // Out of line on ARMv6-M (`narrow_mul`: the small parts), where the
    // five inlined copies in `tables_q` cost about 50 bytes more flash;
    // inlined elsewhere, where it is the smaller choice.
    #[cfg_attr(narrow_mul, inline(never))]
    fn words(&self, start: usize, count: usize) -> &'a [u8] {
        let end = start.saturating_add(count.saturating_mul(WORD));
        self.bytes.get(start..end).unwrap_or(&[])
    }

    /// The offset column followed by the gain column, `2 n_t` words (the
    /// two are adjacent in every image), for the compensators' short
    /// temperature updates: one bounds check on this block covers the
    /// reads of both channels.
    pub(crate) fn offset_gain_words(&self) -> &'a [[u8; 4]] {
        let o = Offsets::new(self.n_t, self.n_ch, self.n_sig);
        self.words(o.chan + AXIS_LEN, 2 * self.n_t)
            .as_chunks::<4>()
            .0
    }

    /// The tables of an f32 image; `None` for a Q image.
    #[must_use]
    #[cfg_attr(feature = "inline-parse", inline(always))]
    pub fn tables_f32(&self) -> Option<TablesF32<'a>> {
        if self.format != NumberFormat::F32 {
            return None;
        }
        let o = Offsets::new(self.n_t, self.n_ch, self.n_sig);
        let axis = |at: usize, len: usize| Axis {
            start: f32_at(self.bytes, at),
            step: f32_at(self.bytes, at + WORD),
            len,
        };
        let chan = |c: usize| {
            ColumnF32::new(self.words(o.chan + AXIS_LEN + c * self.n_t * WORD, self.n_t))
        };
        Some(TablesF32 {
            temperature: axis(o.chan, self.n_t),
            offset: chan(0),
            gain: chan(1),
            quadratic: (self.n_ch > 2).then(|| chan(2)),
            thermometer: (self.n_sig > 0).then(|| {
                (
                    axis(o.therm, self.n_sig),
                    ColumnF32::new(self.words(o.therm + AXIS_LEN, self.n_sig)),
                )
            }),
            grid: (self.n_raw > 0).then(|| {
                (
                    axis(o.grid, self.n_raw),
                    ColumnF32::new(self.words(o.grid + AXIS_LEN, self.n_raw * self.n_t)),
                )
            }),
            signal_lo: f32_at(self.bytes, off::SIG_LO),
            signal_hi: f32_at(self.bytes, off::SIG_HI),
        })
    }

    // Same shape as tables_f32 above: the Q tables carry other axis and value types.
    /// The tables of a Q image; `None` for an f32 image.
    #[must_use]
    #[cfg_attr(feature = "inline-parse", inline(always))]
    pub fn tables_q(&self) -> Option<TablesQ<'a>> {
        if self.format != NumberFormat::Q {
            return None;
        }
        let o = Offsets::new(self.n_t, self.n_ch, self.n_sig);
        let axis = |at: usize, len: usize| self.axis_q(at, len);
        let chan =
            |c: usize| ColumnQ::new(self.words(o.chan + AXIS_LEN + c * self.n_t * WORD, self.n_t));
        let thermometer = if self.n_sig > 0 {
            Some((
                axis(o.therm, self.n_sig)?,
                ColumnQ::new(self.words(o.therm + AXIS_LEN, self.n_sig)),
            ))
        } else {
            None
        };
        let grid = if self.n_raw > 0 {
            Some((
                axis(o.grid, self.n_raw)?,
                ColumnQ::new(self.words(o.grid + AXIS_LEN, self.n_raw * self.n_t)),
            ))
        } else {
            None
        };
        Some(TablesQ {
            temperature: axis(o.chan, self.n_t)?,
            offset: chan(0),
            gain: chan(1),
            quadratic: (self.n_ch > 2).then(|| chan(2)),
            thermometer,
            grid,
            signal_lo: i32_at(self.bytes, off::SIG_LO),
            signal_hi: i32_at(self.bytes, off::SIG_HI),
            q: self.q,
        })
    }
}
