//! Temperature-drift compensation for semiconductor sense elements, in fixed
//! memory and bounded time, for microcontrollers with and without an FPU.
//!
//! # API in brief
//!
//! | you want to | use |
//! |---|---|
//! | check and open a table image from flash | [`TableView::parse`] `(&[u8]) -> Result<TableView, ImageError>` |
//! | the same on a part without FPU (Q images only, no f32 checks linked) | [`TableView::parse_q`] |
//! | compensate with an FPU (f32 image) | [`Compensator::new`], [`Compensator::update_temperature`], [`Compensator::compensate_sample`] |
//! | compensate without an FPU (Q image, bit-exact on host) | [`FixedCompensator`] (same three calls, i32 in and out) |
//! | keep the rare cases of those calls out of line in your own wrapper (as the C API does) | `update_temperature_short` / `compensate_sample_short` of either compensator (integer: `compensate_sample_short_map` packs the reading where it is made), then `update_general` / `compensate_general` where they decline |
//! | know whether a sample is trustworthy | [`Status`] beside every value |
//! | write an image (host, tests) | [`ImageBuilder::encode`] into a `&mut [u8]` |
//! | interpolate your own const tables | [`table`] (`Table1d`, `Table1dQ`, `Table2d`), [`interp`] kernels |
//! | smooth the temperature signal | [`smoothing::MovingAverage`], [`smoothing::MovingAverageQ`] |
//! | read a 24-bit front end over I2C | [`frontend::FrontEnd`] (`new`, `read`, `release`) |
//! | estimate drift from physics on the MCU | [`model::Model`] |
//!
//! **Caution.** Where a reading protects people or property, act on every
//! [`Status`] flag, never ignore one: a [`Status::SENSOR_FAULT`],
//! [`Status::TABLE_INVALID`], [`Status::NAN_INPUT`] or
//! [`Status::NO_TEMPERATURE`] sample must put the device into its safe
//! state (or at least be reported as invalid), not be used as a reading. A
//! table image is only as good as the calibration it came from: one made
//! from simulated data is never for a product, and a design must be
//! qualified on real parts under the standards that apply.
//!
//! Nothing allocates, nothing panics (crate-wide clippy denies on
//! `unwrap`, `expect`, `panic` and indexing; integer modules also deny
//! unchecked arithmetic), every loop is bounded by a table size.
//!
//! # Example
//!
//! Build an image with the encoder, parse it, and compensate a sample:
//!
//! ```
//! use compensate::image::{AxisSpec, ChannelAxis, QFormat, RawLimits, SignalKind, Unit};
//! use compensate::interp::Interpolation;
//! use compensate::{Compensator, ImageBuilder, Status, TableView};
//!
//! // Offset (codes) and gain (bar per code) at -20, 20, 60 C.
//! let offset = [40.0f32, 10.0, -15.0];
//! let gain = [1.0e-4f32, 1.1e-4, 1.2e-4];
//! let builder = ImageBuilder {
//!     interpolation: Interpolation::Linear,
//!     q_format: QFormat::F32,
//!     signal_kind: SignalKind::Celsius,
//!     unit: Unit::Bar,
//!     ratiometric: false,
//!     full_scale: 10.0,
//!     raw_limits: RawLimits { rail_lo: -32768, raw_lo: -30000, raw_hi: 30000, rail_hi: 32767 },
//!     signal_lo: -60.0,
//!     signal_hi: 150.0,
//!     serial: *b"demo-part-000001",
//!     thermometer: None,
//!     channel_axis: ChannelAxis::Temperature,
//!     temperature_axis: AxisSpec { start: -20.0, step: 40.0 },
//!     offset: &offset,
//!     gain: &gain,
//!     quadratic: None,
//!     grid: None,
//! };
//! let mut buf = [0u8; 256];
//! let len = builder.encode(&mut buf)?;
//!
//! let view = TableView::parse(&buf[..len])?;
//! let mut comp = Compensator::new(&view)?;
//! assert_eq!(comp.update_temperature(40.0), Status::OK);
//! let r = comp.compensate_sample(20_000.0);
//! // At 40 C: offset -2.5 codes, gain 1.15e-4 bar/code.
//! assert!((r.value - (20_000.0 + 2.5) * 1.15e-4).abs() < 1e-5);
//! assert!(r.status.is_ok());
//! # Ok::<(), Box<dyn core::error::Error>>(())
//! ```
//!
//! # Table image layout (version 1)
//!
//! All multi-byte fields are little-endian. "num" is an f32 (IEEE 754
//! binary32) in an f32 image, or an i32 in Q format in a Q image, with the
//! fractional bits of its quantity (header bytes 24..30).
//!
//! | offset | size | type | field |
//! |---:|---:|---|---|
//! | 0 | 4 | bytes | magic `b"SDRT"` |
//! | 4 | 2 | u16 | layout version, 1 |
//! | 6 | 2 | u16 | header length, 80 |
//! | 8 | 4 | u32 | total image length in bytes, including the CRC |
//! | 12 | 1 | u8 | number format: 0 f32, 1 Q-format i32 |
//! | 13 | 1 | u8 | interpolation: 0 linear, 1 monotone cubic |
//! | 14 | 1 | u8 | temperature signal: 0 degrees C, 1 ohm, 2 ADC code |
//! | 15 | 1 | u8 | flags: bit 0 ratiometric; bit 1 channels over the temperature signal ([`image::ChannelAxis::Signal`]: the channel axis is in signal units and the thermometer must have the same axis and `n_sig = n_t`); bit 2 built from simulated data ([`TableView::simulated`]: never flash it where a reading protects people or property); other bits 0 |
//! | 16 | 2 | u16 | `n_t`: temperature nodes (>= 2) |
//! | 18 | 2 | u16 | `n_sig`: thermometer nodes (0 = none, else >= 2; required unless signal is degrees C) |
//! | 20 | 2 | u16 | `n_raw`: raw-axis nodes of the 2-D correction (0 = none, else >= 2) |
//! | 22 | 1 | u8 | `n_ch`: correction channels, 2 (offset, gain) or 3 (+ quadratic) |
//! | 23 | 1 | u8 | unit: 0 none, 1 Pa, 2 bar, 3 T, 4 mT, 5 A, 6 N |
//! | 24 | 6 | u8 x 6 | fractional bits of temperature, signal, output, offset (each 0..=30), gain, quadratic (each 0..=62); all 0 for f32 (see [`image::QFormat`]) |
//! | 30 | 2 | u16 | reserved, 0 |
//! | 32 | 4 | f32 | full scale in the unit (always f32) |
//! | 36 | 4 | i32 | lower rail code (raw <= rail: sensor fault) |
//! | 40 | 4 | i32 | upper rail code (raw >= rail: sensor fault) |
//! | 44 | 4 | i32 | lowest calibrated raw code |
//! | 48 | 4 | i32 | highest calibrated raw code |
//! | 52 | 4 | num | lowest plausible temperature signal |
//! | 56 | 4 | num | highest plausible temperature signal |
//! | 60 | 16 | bytes | serial number / metadata, opaque |
//! | 76 | 4 | u32 | reserved, 0 |
//! | 80 | 8 + 4 `n_sig` | num | thermometer (if `n_sig > 0`): signal axis start, step; `n_sig` temperatures |
//! | ... | 8 + 4 `n_ch n_t` | num | channels: temperature (or, with flag bit 1, signal) axis start, step; offset column, gain column\[, quadratic column\] (each `n_t` values) |
//! | ... | 8 + 4 `n_raw n_t` | num | 2-D correction (if `n_raw > 0`): raw axis start, step (integer codes in Q images); `n_t` rows of `n_raw` values in output units |
//! | end - 4 | 4 | u32 | CRC-32 (IEEE 802.3) of every preceding byte |
//!
//! The measurand is `d (gain + quadratic d) + grid(T, raw)` with
//! `d = raw - offset`, all at the current temperature `T`. In a Q image the
//! output is an i32 with the `output` fractional bits. Every axis is uniform
//! and strictly increasing; every f32 number is finite; reserved bytes are
//! zero. The parser rejects anything else with its own [`ImageError`].
//!
//! # Error budget terms
//!
//! The budget of a compensated part (stated in ppm of full-scale span) adds
//! five terms; the host tools report each separately.
//!
//! ## Table interpolation
//! Between nodes the table replaces the calibrated curve by a line or a
//! monotone cubic; for a curve with second derivative `f''` the linear
//! error is at most `h^2 |f''| / 8` for node spacing `h` (common practice,
//! the standard bound of linear interpolation). The host sizes `n_t` so
//! this term fits the budget.
//!
//! ## Number-format quantization
//! In a Q image with `fo`, `fg`, `fy` fractional bits for offset, gain and
//! output, and `|d| <= D` codes, `|gain| <= G`, each term below is an
//! upper bound in output units:
//! - stored offset (rounded to `2^-fo` codes, then interpolated with one
//!   more 0.5 LSB rounding): `G 2^-fo`;
//! - stored and interpolated gain: `D 2^-fg`;
//! - interpolation position (within 1 LSB of `2^-16` of a node step, see
//!   [`interp::PositionQ::frac_q16`]): `(G |Δoffset| + D |Δgain|) 2^-16`
//!   with `Δ` the largest change between neighbouring nodes;
//! - output rounding: `2^-(fy+1)`, plus `2^-fy` for a 2-D correction.
//!
//! Dividing by the full scale gives ppm. The test
//! `fixed_point_agrees_with_f32_within_quantization_bound` works this sum
//! out for its example format and checks it against the f32 path. f32
//! images add only f32 rounding (about 6e-8 relative per operation).
//!
//! ## Runtime-model deviation
//! The [`model`] module's closed forms (Boltzmann statistics, one effective
//! dopant level, Caughey-Thomas mobility) deviate from the host's full f64
//! model; each function documents its bound and domain as a named constant.
//! Only firmware that evaluates the model at runtime pays this term; table
//! images do not.
//!
//! ## Calibration fit residual
//! The residual of the station's fit at the chamber points, carried into
//! the image unchanged; the station reports it.
//!
//! ## Temperature-signal error times drift slope
//! A temperature error `dT` moves offset and gain along their drift curves:
//! the output error is about `dT * (d offset/dT * gain + d gain/dT * d)`.
//! Smoothing the temperature signal ([`smoothing`]) reduces noise but adds
//! lag during temperature ramps.
//!
//! # Cost
//!
//! Per sample, on an image without 2-D section (and, for the integer path,
//! without a non-zero quadratic term) and an input inside the calibrated
//! range, the f32 path (an image without quadratic channel) is two
//! compares, a subtraction and a multiplication with no stack frame, and
//! the integer path is one 32x32->64 multiply (on ARMv6-M, where a 64x64
//! library multiply costs several times more, three 16x16 products:
//! Karatsuba on signed 16-bit halves, with the rounding split over two
//! partial sums so that no 64-bit add is needed) and a rounding add,
//! shifted back in two 32-bit words by an amount typed as 1..=31.
//! Everything else (out-of-range inputs, NaN, saturation, the quadratic
//! term, the 2-D correction) takes an out-of-line general path with
//! identical results. A temperature update locates the signal on two axes
//! (the integer axis with one 32-bit multiply and the high word of a 32x32
//! product, no division) and interpolates four columns; on an image over
//! the signal axis ([`image::ChannelAxis::Signal`]) it locates the signal
//! once and interpolates the channels only, and the thermometer column is
//! read when [`Compensator::temperature_c`] is called. On such an image
//! (or a degrees-Celsius one without thermometer), linear and without
//! quadratic channel or 2-D section, both updates have a short path for a
//! signal inside the plausible range and the axis: one pair of compares,
//! the look-up, one bounds check for the four words read and a cache of
//! signal, offset, gain and status, with the same results as the general
//! path. Both keep the node interval they read, so that the next update
//! in the same interval (the usual case: temperature moves slowly compared
//! with the update rate) reads no image word and needs no bounds check.
//!
//! Measured with the firmware example's benchmark (QEMU, executed
//! instructions per call beyond an empty call, opt-level 3, fat LTO; the
//! well-level demo image that `semidrift table` builds for the firmware
//! example: linear, 39 stored numbers over temperature, 66 over the signal;
//! firmware built without the `cubic` feature):
//!
//! | call | Cortex-M4F (f32) | Cortex-M0 (integer) |
//! |---|---:|---:|
//! | `compensate_sample` | 12 | 48 |
//! | `update_temperature`, channels over temperature (thermometer + 3 channels) | 123 | 306 |
//! | `update_temperature`, channels over the signal (offset and gain; the thermometer on demand), the demo's steep simulated ramp | 37 | 97 |
//! | the same, a slow drift (the same node interval as the update before) | 27 | 69 |
//! | the same, every update in a new node interval | 53 | 146 |
//!
//! (The over-temperature row was measured before the latest sample-path
//! changes, on the image the firmware embedded then.)
//!
//! Instructions are not cycles (a `VDIV.F32` counts 1, takes 14 cycles;
//! recalled from memory of the processor's reference manual).
//! On the M0 about 40 of an interval change's instructions are byte-wise
//! loads of the image's four words (an image needs no alignment).
//!
//! # Cargo features
//! - `libm` (default): accurate f32 math backend for [`model`].
//! - `micromath`: fast approximations; used only when `libm` is off.
//!   With both on, libm wins; with neither, [`model`] is not compiled.
//! - `defmt`: `defmt::Format` on public types.
//! - `cubic` (default): images may ask for monotone cubic interpolation.
//!   Without it the parser rejects them with
//!   [`ImageError::InterpolationNotCompiled`] and the compensators link
//!   only the linear kernel (the [`table`] and [`interp`] kernels stay
//!   available either way).
#![cfg_attr(not(test), no_std)]
#![forbid(unsafe_code)]
#![deny(missing_docs)]
#![deny(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::panic,
    clippy::indexing_slicing
)]

pub mod compensator;
pub mod crc;
pub mod frontend;
pub mod image;
pub mod interp;
#[cfg(any(feature = "libm", feature = "micromath"))]
pub mod math;
#[cfg(any(feature = "libm", feature = "micromath"))]
pub mod model;
pub mod smoothing;
mod status;
pub mod table;
mod widemul;

pub use compensator::{Compensator, CompensatorError, FixedCompensator, Reading, ReadingQ};
pub use image::{ImageBuilder, ImageError, TableView};
pub use status::Status;
