//! The no_std image encoder: writes a table image into a caller's buffer.
//!
//! Host tools and tests use this encoder, so the layout has exactly one
//! definition ([`super::layout`]) and every written image is checked by
//! [`TableView::parse`] before the encoder reports success.

use super::error::{EncodeError, ImageError};
use super::layout::{
    self, ChannelAxis, FLAG_RATIOMETRIC, FLAG_SIGNAL_AXIS, HEADER_LEN, MAGIC, NumberFormat,
    QFormat, RawLimits, SERIAL_LEN, SignalKind, Unit, VERSION,
};
use super::view::TableView;
use crate::crc::crc32;
use crate::interp::Interpolation;

mod sealed {
    pub trait Sealed {}
    impl Sealed for f32 {}
    impl Sealed for i32 {}
}

/// A number type an image can store: `f32` or Q-format `i32`.
pub trait Number: Copy + sealed::Sealed {
    /// The image format of this type.
    const FORMAT: NumberFormat;
    /// Little-endian bytes.
    fn to_le(self) -> [u8; 4];
}

impl Number for f32 {
    const FORMAT: NumberFormat = NumberFormat::F32;
    fn to_le(self) -> [u8; 4] {
        self.to_le_bytes()
    }
}

impl Number for i32 {
    const FORMAT: NumberFormat = NumberFormat::Q;
    fn to_le(self) -> [u8; 4] {
        self.to_le_bytes()
    }
}

/// A uniform axis to write: nodes at `start + k * step`.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct AxisSpec<V> {
    /// First node.
    pub start: V,
    /// Node spacing, positive.
    pub step: V,
}

/// A 1-D map to write: axis plus one value per node.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct MapSpec<'a, V> {
    /// Input axis.
    pub axis: AxisSpec<V>,
    /// One value per node.
    pub values: &'a [V],
}

/// A 2-D correction to write over temperature x raw signal.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct GridSpec<'a, V> {
    /// Raw-signal axis (ADC codes; integer codes for Q images).
    pub raw_axis: AxisSpec<V>,
    /// Raw-axis nodes per temperature row.
    pub raw_len: usize,
    /// Row-major values: one row of `raw_len` per temperature node, in
    /// output units, added to the compensated output.
    pub values: &'a [V],
}

/// Description of a table image; [`ImageBuilder::encode`] writes it.
///
/// `V` is `f32` for an f32 image and `i32` for a Q-format image (then
/// [`ImageBuilder::q_format`] gives the binary point of each quantity).
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct ImageBuilder<'a, V> {
    /// Interpolation method.
    pub interpolation: Interpolation,
    /// Fractional bits per quantity; [`QFormat::F32`] for f32 images.
    pub q_format: QFormat,
    /// What the temperature signal is.
    pub signal_kind: SignalKind,
    /// Measurand unit.
    pub unit: Unit,
    /// Raw signal is ratiometric to the excitation.
    pub ratiometric: bool,
    /// Full scale in `unit`.
    pub full_scale: f32,
    /// Rails and calibrated range of the raw signal, ADC codes.
    pub raw_limits: RawLimits,
    /// Plausible temperature-signal range (outside: sensor fault).
    pub signal_lo: V,
    /// Upper end of the plausible temperature-signal range.
    pub signal_hi: V,
    /// Part serial number or other metadata, opaque.
    pub serial: [u8; SERIAL_LEN],
    /// Optional map from temperature signal to degrees Celsius (required
    /// unless `signal_kind` is [`SignalKind::Celsius`]).
    pub thermometer: Option<MapSpec<'a, V>>,
    /// What the correction channels are tabulated over: degrees Celsius,
    /// or the temperature signal itself ([`ChannelAxis::Signal`]; the
    /// thermometer must then have exactly `temperature_axis` and one value
    /// per channel node).
    pub channel_axis: ChannelAxis,
    /// Axis of the correction channels: degrees Celsius, or the
    /// temperature signal's unit with [`ChannelAxis::Signal`].
    pub temperature_axis: AxisSpec<V>,
    /// Offset channel (raw codes), one value per temperature node.
    pub offset: &'a [V],
    /// Gain channel (output units per raw code), one value per node.
    pub gain: &'a [V],
    /// Optional quadratic channel: output = d (gain + quadratic d) with
    /// d = raw - offset.
    pub quadratic: Option<&'a [V]>,
    /// Optional 2-D correction added to the output.
    pub grid: Option<GridSpec<'a, V>>,
}

/// Writes `bytes` at the cursor, failing on overflow of the buffer.
struct Cursor<'b> {
    out: &'b mut [u8],
    at: usize,
}

impl Cursor<'_> {
    fn put(&mut self, bytes: &[u8]) {
        let end = self.at.saturating_add(bytes.len());
        if let Some(dst) = self.out.get_mut(self.at..end) {
            dst.copy_from_slice(bytes);
        }
        self.at = end;
    }
    fn put_at(&mut self, offset: usize, bytes: &[u8]) {
        let end = offset.saturating_add(bytes.len());
        if let Some(dst) = self.out.get_mut(offset..end) {
            dst.copy_from_slice(bytes);
        }
    }
    fn values<V: Number>(&mut self, values: &[V]) {
        for v in values {
            self.put(&v.to_le());
        }
    }
}

impl<V: Number> ImageBuilder<'_, V> {
    /// Temperature nodes (the length of the offset channel).
    #[must_use]
    pub fn temperature_nodes(&self) -> usize {
        self.offset.len()
    }

    /// Checks column lengths; returns `(n_t, n_ch, n_sig, n_raw)`.
    fn counts(&self) -> Result<(usize, usize, usize, usize), EncodeError> {
        let n_t = self.offset.len();
        let check = |column: &'static str, got: usize, expected: usize| {
            if got == expected {
                Ok(())
            } else {
                Err(EncodeError::ColumnLength {
                    column,
                    got,
                    expected,
                })
            }
        };
        check("gain", self.gain.len(), n_t)?;
        if let Some(q) = self.quadratic {
            check("quadratic", q.len(), n_t)?;
        }
        let n_raw = match self.grid {
            Some(g) => {
                check("grid", g.values.len(), g.raw_len.saturating_mul(n_t))?;
                g.raw_len
            }
            None => 0,
        };
        let n_sig = self.thermometer.map_or(0, |t| t.values.len());
        let n_ch = if self.quadratic.is_some() { 3 } else { 2 };
        for (field, value) in [("n_t", n_t), ("n_sig", n_sig), ("n_raw", n_raw)] {
            if value > layout::MAX_NODES {
                return Err(ImageError::BadCount { field, value }.into());
            }
        }
        Ok((n_t, n_ch, n_sig, n_raw))
    }

    /// Length of the encoded image in bytes.
    ///
    /// # Errors
    /// [`EncodeError::ColumnLength`] or [`EncodeError::Invalid`] with
    /// [`ImageError::BadCount`] when counts are inconsistent or too large.
    pub fn encoded_len(&self) -> Result<usize, EncodeError> {
        let (n_t, n_ch, n_sig, n_raw) = self.counts()?;
        layout::image_len(n_t, n_ch, n_sig, n_raw).ok_or(EncodeError::Invalid(
            ImageError::BadCount {
                field: "n_t",
                value: n_t,
            },
        ))
    }

    /// Writes the image to the front of `out` and returns its length.
    ///
    /// The written image is validated with [`TableView::parse`]; on any
    /// error the bytes written so far are cleared to zero, so no
    /// plausible-looking partial image is ever left behind.
    ///
    /// # Errors
    /// [`EncodeError::BufferTooSmall`], [`EncodeError::ColumnLength`], or
    /// [`EncodeError::Invalid`] with the reason the image would not parse.
    pub fn encode(&self, out: &mut [u8]) -> Result<usize, EncodeError> {
        let (n_t, n_ch, n_sig, n_raw) = self.counts()?;
        let total = self.encoded_len()?;
        if out.len() < total {
            return Err(EncodeError::BufferTooSmall {
                needed: total,
                got: out.len(),
            });
        }
        let (image, _) = out.split_at_mut(total);
        image.fill(0);
        let mut c = Cursor { out: image, at: 0 };
        c.put(&MAGIC);
        c.put(&VERSION.to_le_bytes());
        c.put(&(HEADER_LEN as u16).to_le_bytes());
        c.put(&(total as u32).to_le_bytes());
        c.put(&[
            V::FORMAT.code(),
            self.interpolation.code(),
            self.signal_kind.code(),
            (if self.ratiometric {
                FLAG_RATIOMETRIC
            } else {
                0
            }) | match self.channel_axis {
                ChannelAxis::Temperature => 0,
                ChannelAxis::Signal => FLAG_SIGNAL_AXIS,
            },
        ]);
        // Counts were checked against u16::MAX / 3 above.
        c.put(&(n_t as u16).to_le_bytes());
        c.put(&(n_sig as u16).to_le_bytes());
        c.put(&(n_raw as u16).to_le_bytes());
        c.put(&[n_ch as u8, self.unit.code()]);
        c.put(&self.q_format.to_bytes());
        c.put(&[0, 0]);
        c.put(&self.full_scale.to_le_bytes());
        let l = self.raw_limits;
        for v in [l.rail_lo, l.rail_hi, l.raw_lo, l.raw_hi] {
            c.put(&v.to_le_bytes());
        }
        c.put(&self.signal_lo.to_le());
        c.put(&self.signal_hi.to_le());
        c.put(&self.serial);
        c.put(&[0; 4]);
        if let Some(t) = self.thermometer {
            c.put(&t.axis.start.to_le());
            c.put(&t.axis.step.to_le());
            c.values(t.values);
        }
        c.put(&self.temperature_axis.start.to_le());
        c.put(&self.temperature_axis.step.to_le());
        c.values(self.offset);
        c.values(self.gain);
        if let Some(q) = self.quadratic {
            c.values(q);
        }
        if let Some(g) = self.grid {
            c.put(&g.raw_axis.start.to_le());
            c.put(&g.raw_axis.step.to_le());
            c.values(g.values);
        }
        let body = total.saturating_sub(layout::CRC_LEN);
        let crc = crc32(c.out.get(..body).unwrap_or(&[]));
        c.put_at(body, &crc.to_le_bytes());
        match TableView::parse(image) {
            Ok(_) => Ok(total),
            Err(e) => {
                image.fill(0);
                Err(EncodeError::Invalid(e))
            }
        }
    }
}
