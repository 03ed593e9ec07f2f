//! Byte offsets, sizes and codes of the table image (layout version 1).
//!
//! The byte-by-byte description lives in the crate documentation; this file
//! is the single definition both [`super::TableView::parse`] and
//! [`super::ImageBuilder::encode`] use.

/// Magic at offset 0: "SemiDRift Table".
pub const MAGIC: [u8; 4] = *b"SDRT";
/// Layout version this crate reads and writes.
pub const VERSION: u16 = 1;
/// Header length of layout version 1, in bytes.
pub const HEADER_LEN: usize = 80;
/// Length of the trailing CRC-32.
pub const CRC_LEN: usize = 4;
/// Length of the opaque serial/metadata field.
pub const SERIAL_LEN: usize = 16;
/// Bytes of one stored number (f32 or i32).
pub const WORD: usize = 4;
/// Bytes of an axis description (start and step).
pub const AXIS_LEN: usize = 2 * WORD;
/// Largest number of nodes on any axis (the counts are u16).
pub const MAX_NODES: usize = u16::MAX as usize;
/// Largest fractional-bit count of a Q-format input or output quantity
/// (temperature, signal, output, offset).
pub const MAX_FRAC_BITS: u8 = 30;
/// Largest fractional-bit count of the gain and quadratic coefficients.
pub const MAX_COEFF_FRAC_BITS: u8 = 62;
/// Largest right shift the integer compensator applies to an i64 product
/// (keeps the rounding offset `2^(shift-1)` plus a product below `2^62`
/// under `2^63`).
pub const MAX_SHIFT: u8 = 62;
/// Flag bit 0: the raw signal is ratiometric to the excitation.
pub const FLAG_RATIOMETRIC: u8 = 1 << 0;
/// Flag bit 1: the channels' axis is the temperature signal itself
/// ([`ChannelAxis::Signal`]); the thermometer section then has the same
/// axis and node count as the channels.
pub const FLAG_SIGNAL_AXIS: u8 = 1 << 1;
/// Flag bit 2: the image was built from simulated (invented) data, never a
/// measurement. The runtime computes with it as with any image; a station
/// must refuse to flash it into a part whose reading protects people or
/// property ([`crate::TableView::simulated`]).
pub const FLAG_SIMULATED: u8 = 1 << 2;
/// Every flag bit this layout version defines; the others must be zero.
pub const FLAGS_KNOWN: u8 = FLAG_RATIOMETRIC | FLAG_SIGNAL_AXIS | FLAG_SIMULATED;

/// Header field offsets.
pub mod off {
    /// Magic, 4 bytes.
    pub const MAGIC: usize = 0;
    /// Layout version, u16.
    pub const VERSION: usize = 4;
    /// Header length, u16.
    pub const HEADER_LEN: usize = 6;
    /// Total image length including the CRC, u32.
    pub const TOTAL_LEN: usize = 8;
    /// Number format code, u8.
    pub const FORMAT: usize = 12;
    /// Interpolation code, u8.
    pub const INTERP: usize = 13;
    /// Temperature-signal kind code, u8.
    pub const SIGNAL_KIND: usize = 14;
    /// Flags, u8.
    pub const FLAGS: usize = 15;
    /// Temperature nodes, u16.
    pub const N_T: usize = 16;
    /// Thermometer nodes, u16.
    pub const N_SIG: usize = 18;
    /// Raw-axis nodes of the 2-D correction, u16.
    pub const N_RAW: usize = 20;
    /// Correction channels, u8.
    pub const N_CH: usize = 22;
    /// Measurand unit code, u8.
    pub const UNIT: usize = 23;
    /// Six fractional-bit counts, u8 each: temperature, signal, output,
    /// offset, gain, quadratic.
    pub const FRAC: usize = 24;
    /// Reserved u16, zero.
    pub const RESERVED_A: usize = 30;
    /// Full scale, f32.
    pub const FULL_SCALE: usize = 32;
    /// Lower rail code, i32.
    pub const RAIL_LO: usize = 36;
    /// Upper rail code, i32.
    pub const RAIL_HI: usize = 40;
    /// Lowest calibrated raw code, i32.
    pub const RAW_LO: usize = 44;
    /// Highest calibrated raw code, i32.
    pub const RAW_HI: usize = 48;
    /// Lowest plausible temperature signal, number.
    pub const SIG_LO: usize = 52;
    /// Highest plausible temperature signal, number.
    pub const SIG_HI: usize = 56;
    /// Serial / metadata, 16 bytes.
    pub const SERIAL: usize = 60;
    /// Reserved u32, zero.
    pub const RESERVED_B: usize = 76;
}

/// Number format of every stored table number.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum NumberFormat {
    /// IEEE 754 binary32, little-endian.
    F32,
    /// Two's-complement i32, little-endian, fixed binary point per quantity
    /// (see [`QFormat`]).
    Q,
}

impl NumberFormat {
    /// Image code.
    #[must_use]
    pub const fn code(self) -> u8 {
        match self {
            Self::F32 => 0,
            Self::Q => 1,
        }
    }
    /// Format for an image code.
    #[must_use]
    pub const fn from_code(code: u8) -> Option<Self> {
        match code {
            0 => Some(Self::F32),
            1 => Some(Self::Q),
            _ => None,
        }
    }
}

/// What the correction channels (offset, gain, quadratic, 2-D rows) are
/// tabulated over.
///
/// With [`ChannelAxis::Temperature`] a temperature update runs the
/// thermometer map (signal to degrees Celsius) and then looks the
/// temperature up on the channels' axis: two look-ups. With
/// [`ChannelAxis::Signal`] the station has composed the two, tabulating
/// each channel directly over the temperature signal, so an update is one
/// look-up; the thermometer column, on the same nodes, is then read only
/// when the firmware asks for the temperature.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Hash)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum ChannelAxis {
    /// Channels over degrees Celsius (after the thermometer map).
    #[default]
    Temperature,
    /// Channels over the temperature signal (flag [`FLAG_SIGNAL_AXIS`]).
    Signal,
}

/// What the temperature signal fed to `update_temperature` is.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum SignalKind {
    /// Degrees Celsius from an external sensor (no thermometer section).
    Celsius,
    /// A resistance in ohms, e.g. the bridge's own input resistance.
    Ohm,
    /// An ADC code proportional to the thermometer quantity.
    AdcCode,
}

impl SignalKind {
    /// Image code.
    #[must_use]
    pub const fn code(self) -> u8 {
        match self {
            Self::Celsius => 0,
            Self::Ohm => 1,
            Self::AdcCode => 2,
        }
    }
    /// Kind for an image code.
    #[must_use]
    pub const fn from_code(code: u8) -> Option<Self> {
        match code {
            0 => Some(Self::Celsius),
            1 => Some(Self::Ohm),
            2 => Some(Self::AdcCode),
            _ => None,
        }
    }
}

/// Engineering unit of the compensated measurand.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum Unit {
    /// Dimensionless (e.g. fraction of full scale).
    None,
    /// Pascal.
    Pascal,
    /// Bar.
    Bar,
    /// Tesla.
    Tesla,
    /// Millitesla.
    Millitesla,
    /// Ampere.
    Ampere,
    /// Newton.
    Newton,
}

impl Unit {
    /// Image code.
    #[must_use]
    pub const fn code(self) -> u8 {
        match self {
            Self::None => 0,
            Self::Pascal => 1,
            Self::Bar => 2,
            Self::Tesla => 3,
            Self::Millitesla => 4,
            Self::Ampere => 5,
            Self::Newton => 6,
        }
    }
    /// Unit for an image code.
    #[must_use]
    pub const fn from_code(code: u8) -> Option<Self> {
        match code {
            0 => Some(Self::None),
            1 => Some(Self::Pascal),
            2 => Some(Self::Bar),
            3 => Some(Self::Tesla),
            4 => Some(Self::Millitesla),
            5 => Some(Self::Ampere),
            6 => Some(Self::Newton),
            _ => None,
        }
    }
    /// SI symbol, for display.
    #[must_use]
    pub const fn symbol(self) -> &'static str {
        match self {
            Self::None => "",
            Self::Pascal => "Pa",
            Self::Bar => "bar",
            Self::Tesla => "T",
            Self::Millitesla => "mT",
            Self::Ampere => "A",
            Self::Newton => "N",
        }
    }
}

/// Fractional bits of each quantity in a Q-format image (all zero for f32).
///
/// Values are `round(x * 2^bits)` stored as i32. Limits checked by the
/// parser: temperature, signal, output and offset at most
/// [`MAX_FRAC_BITS`] (30); gain and quadratic at most
/// [`MAX_COEFF_FRAC_BITS`] (62, because they are tiny numbers per raw
/// code); `offset + gain - output` and `quadratic + offset - gain` in
/// `0..=`[`MAX_SHIFT`]; the rail codes shifted left by `offset` fit in i32.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Hash)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct QFormat {
    /// Temperature in degrees Celsius: temperature axis and thermometer values.
    pub temperature: u8,
    /// Temperature signal: thermometer axis and plausibility limits.
    pub signal: u8,
    /// Measurand output and 2-D correction values.
    pub output: u8,
    /// Offset channel, in raw codes.
    pub offset: u8,
    /// Gain channel, in output units per raw code (up to 62 bits).
    pub gain: u8,
    /// Quadratic channel, in gain units per raw code (up to 62 bits; 0
    /// without the channel). A bow of 5e-11 output units per code^2 needs
    /// about 45 bits for 16 significant bits.
    pub quadratic: u8,
}

impl QFormat {
    /// The (all-zero) description of an f32 image.
    pub const F32: Self = Self {
        temperature: 0,
        signal: 0,
        output: 0,
        offset: 0,
        gain: 0,
        quadratic: 0,
    };

    /// As stored in the header, in header order.
    #[must_use]
    pub const fn to_bytes(self) -> [u8; 6] {
        [
            self.temperature,
            self.signal,
            self.output,
            self.offset,
            self.gain,
            self.quadratic,
        ]
    }

    /// From the six header bytes.
    #[must_use]
    pub const fn from_bytes(b: [u8; 6]) -> Self {
        Self {
            temperature: b[0],
            signal: b[1],
            output: b[2],
            offset: b[3],
            gain: b[4],
            quadratic: b[5],
        }
    }
}

/// Raw-input limits of a part, in ADC codes.
///
/// Codes at or beyond a rail mean an open or shorted element; codes between
/// a rail and the calibrated range are out of range but still compensated.
/// Required: `rail_lo < raw_lo < raw_hi < rail_hi`.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct RawLimits {
    /// Codes `<= rail_lo` are a sensor fault.
    pub rail_lo: i32,
    /// Lowest calibrated code.
    pub raw_lo: i32,
    /// Highest calibrated code.
    pub raw_hi: i32,
    /// Codes `>= rail_hi` are a sensor fault.
    pub rail_hi: i32,
}

/// Total image length for the given counts, `None` on overflow.
#[must_use]
pub const fn image_len(n_t: usize, n_ch: usize, n_sig: usize, n_raw: usize) -> Option<usize> {
    // All counts are at most u16::MAX, so the products below fit in usize
    // on 32-bit targets: 65535 * 65535 * 4 < 2^34 does not, hence checked.
    let therm = if n_sig == 0 {
        0
    } else {
        match n_sig.checked_mul(WORD) {
            Some(v) => AXIS_LEN + v,
            None => return None,
        }
    };
    let channels = match n_ch.checked_mul(n_t) {
        Some(v) => match v.checked_mul(WORD) {
            Some(v) => v,
            None => return None,
        },
        None => return None,
    };
    let grid = if n_raw == 0 {
        0
    } else {
        match n_raw.checked_mul(n_t) {
            Some(v) => match v.checked_mul(WORD) {
                Some(v) => match v.checked_add(AXIS_LEN) {
                    Some(v) => v,
                    None => return None,
                },
                None => return None,
            },
            None => return None,
        }
    };
    let total = HEADER_LEN + therm + AXIS_LEN + CRC_LEN;
    match total.checked_add(channels) {
        Some(t) => t.checked_add(grid),
        None => None,
    }
}
