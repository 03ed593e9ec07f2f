//! Checking a table image and reading its header, without a compensator.

use compensate::TableView;
use compensate::image::ChannelAxis;

use crate::state::image_bytes;
use crate::status::{SD_OK, SdStatus, image_status};

/// What a valid table image declares (see the image layout in the
/// `compensate` crate docs; codes are the header's).
#[repr(C)]
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct SdImageInfo {
    /// Number format: 0 f32 (use `sd_f32_*`), 1 Q-format int32 (`sd_q_*`).
    pub format: u8,
    /// Interpolation: 0 linear, 1 monotone cubic.
    pub interpolation: u8,
    /// Temperature signal: 0 degrees Celsius, 1 ohm, 2 ADC code.
    pub signal_kind: u8,
    /// Measurand unit: 0 none, 1 Pa, 2 bar, 3 T, 4 mT, 5 A, 6 N.
    pub unit: u8,
    /// 1 when the output is ratiometric to the excitation.
    pub ratiometric: u8,
    /// 1 when built from simulated data: never for a product.
    pub simulated: u8,
    /// 1 when the channels are tabulated over the temperature signal, 0
    /// over temperature.
    pub channels_over_signal: u8,
    /// Correction channels: 2 (offset, gain) or 3 (with quadratic).
    pub channels: u8,
    /// Temperature nodes (>= 2).
    pub temperature_nodes: u16,
    /// Thermometer nodes (0 = none).
    pub thermometer_nodes: u16,
    /// Raw-axis nodes of the 2-D correction (0 = none).
    pub grid_raw_nodes: u16,
    /// Fractional bits of the temperature in degrees Celsius (Q images; 0
    /// for f32).
    pub frac_temperature: u8,
    /// Fractional bits of the temperature signal.
    pub frac_signal: u8,
    /// Fractional bits of the measurand output (`sd_sample_q_value`).
    pub frac_output: u8,
    /// Fractional bits of the offset channel.
    pub frac_offset: u8,
    /// Fractional bits of the gain channel.
    pub frac_gain: u8,
    /// Fractional bits of the quadratic channel.
    pub frac_quadratic: u8,
    /// Full scale in the measurand unit.
    pub full_scale: f32,
    /// Raw codes at or below this are a sensor fault.
    pub rail_lo: i32,
    /// Lowest calibrated raw code.
    pub raw_lo: i32,
    /// Highest calibrated raw code.
    pub raw_hi: i32,
    /// Raw codes at or above this are a sensor fault.
    pub rail_hi: i32,
    /// The image's stored CRC-32.
    pub crc: u32,
}

impl SdImageInfo {
    fn of(v: &TableView<'_>) -> Self {
        let q = v.q_format();
        let l = v.raw_limits();
        // Node counts are u16 fields of the header and the channel count
        // is 2 or 3, so the narrowing never saturates.
        let narrow = |n: usize| u16::try_from(n).unwrap_or(u16::MAX);
        Self {
            format: v.format().code(),
            interpolation: v.interpolation().code(),
            signal_kind: v.signal_kind().code(),
            unit: v.unit().code(),
            ratiometric: u8::from(v.ratiometric()),
            simulated: u8::from(v.simulated()),
            channels_over_signal: u8::from(v.channel_axis() == ChannelAxis::Signal),
            channels: u8::try_from(v.channel_count()).unwrap_or(u8::MAX),
            temperature_nodes: narrow(v.temperature_nodes()),
            thermometer_nodes: narrow(v.thermometer_nodes()),
            grid_raw_nodes: narrow(v.grid_raw_nodes()),
            frac_temperature: q.temperature,
            frac_signal: q.signal,
            frac_output: q.output,
            frac_offset: q.offset,
            frac_gain: q.gain,
            frac_quadratic: q.quadratic,
            full_scale: v.full_scale(),
            rail_lo: l.rail_lo,
            raw_lo: l.raw_lo,
            raw_hi: l.raw_hi,
            rail_hi: l.rail_hi,
            crc: v.crc(),
        }
    }
}

/// Checks a table image of either number format (CRC, layout, every
/// stored number) and, if `info` is not NULL, writes what it declares.
///
/// Returns `SD_OK`, `SD_ERR_NULL_POINTER` (image), `SD_ERR_LENGTH_RANGE`,
/// `SD_ERR_SHORT_BUFFER`, `SD_ERR_CORRUPT_IMAGE`, `SD_ERR_INVALID_IMAGE`
/// or `SD_ERR_UNSUPPORTED`; `info` is written only on `SD_OK`.
///
/// # Safety
/// `image` (if non-null) must point to `image_len` readable bytes; `info`
/// (if non-null) to a writable `sd_image_info`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn sd_image_check(
    image: *const u8,
    image_len: usize,
    info: *mut SdImageInfo,
) -> SdStatus {
    // SAFETY: the caller's contract above.
    unsafe { check(image, image_len, info, false) }
}

/// As `sd_image_check`, but accepts Q-format images only
/// (`SD_ERR_WRONG_FORMAT` for an f32 image), so that a part without FPU
/// links no f32 check.
///
/// # Safety
/// As `sd_image_check`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn sd_image_check_q(
    image: *const u8,
    image_len: usize,
    info: *mut SdImageInfo,
) -> SdStatus {
    // SAFETY: the caller's contract above.
    unsafe { check(image, image_len, info, true) }
}

/// Parses (Q images only when `q_only`) and writes the info.
///
/// # Safety
/// As `sd_image_check`.
unsafe fn check(
    image: *const u8,
    image_len: usize,
    info: *mut SdImageInfo,
    q_only: bool,
) -> SdStatus {
    // SAFETY: the caller's contract; the bytes are only read during the call.
    let bytes = match unsafe { image_bytes(image, image_len) } {
        Ok(b) => b,
        Err(e) => return e,
    };
    let parsed = if q_only {
        TableView::parse_q(bytes)
    } else {
        TableView::parse(bytes)
    };
    match parsed {
        Ok(view) => {
            if !info.is_null() {
                // SAFETY: non-null and writable by the caller's contract.
                unsafe { info.write(SdImageInfo::of(&view)) };
            }
            SD_OK
        }
        Err(e) => image_status(e),
    }
}
