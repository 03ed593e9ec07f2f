//! The polynomial baseline with the input checks and status of the
//! compensate crate's f32 path, so the benchmark can show what those
//! checks cost on their own.
//!
//! [`crate::poly::PolyF32`] checks nothing and returns a bare number. A
//! compensate `Compensator` also tests every sample against the calibrated
//! range, the rails and NaN, and every temperature update against NaN, the
//! plausible signal range and the calibrated temperature span, and returns
//! a `Status`. [`PolyF32Checked`] adds exactly those tests, written the
//! same way (one pair of compares on the common path of a sample and of a
//! temperature update, everything else out of line), around the same
//! polynomial. The compensator clamps the signal
//! to its thermometer axis and the temperature to its temperature axis, both
//! the calibrated span; the polynomial's variable is the signal itself, so
//! its one clamp, of the signal to the same thermometer axis, is both.

use compensate::{Reading, ReadingQ, Status, TableView};

use crate::poly::{PolyF32, PolyQ};

/// [`PolyF32`] with input checks and a status on every call.
#[derive(Clone, Debug)]
pub struct PolyF32Checked<const X: usize, const K: usize> {
    /// The bare polynomial.
    pub poly: PolyF32<X, K>,
    /// Lowest and highest calibrated raw code.
    pub raw_lo: f32,
    /// See `raw_lo`.
    pub raw_hi: f32,
    /// Rail codes: a raw value at or beyond one is a sensor fault.
    pub rail_lo: f32,
    /// See `rail_lo`.
    pub rail_hi: f32,
    /// Plausible temperature-signal range; outside it is a sensor fault.
    pub signal_lo: f32,
    /// See `signal_lo`.
    pub signal_hi: f32,
    /// Calibrated span of the temperature signal (the image's thermometer
    /// axis); outside it the signal is clamped (a fit is not trusted beyond
    /// its data).
    pub clamp_lo: f32,
    /// See `clamp_lo`.
    pub clamp_hi: f32,
    /// The short update applies from this signal on: the larger of
    /// `signal_lo` and `clamp_lo` (inside both ranges no status is raised
    /// and nothing is clamped), as compensate's short f32 update.
    pub short_lo: f32,
    /// The short update applies up to this signal: the smaller of
    /// `signal_hi` and `clamp_hi`.
    pub short_hi: f32,
    /// Status of the last temperature update, carried by every sample.
    pub temp_status: Status,
}

impl<const X: usize, const K: usize> PolyF32Checked<X, K> {
    /// Checks the signal, clamps it to the calibrated span and caches the
    /// coefficients; as
    /// `Compensator::update_temperature`, a NaN or infinite signal keeps the
    /// old coefficients and sets [`Status::NAN_INPUT`].
    ///
    /// Inside both the plausible range and the calibrated span (the common
    /// case) one pair of compares and the polynomial, as compensate's short
    /// f32 update; everything else out of line.
    #[inline(always)]
    pub fn update_temperature(&mut self, signal: f32) -> Status {
        // False for NaN.
        if signal >= self.short_lo && signal <= self.short_hi {
            self.poly.update_temperature(signal);
            self.temp_status = Status::OK;
            return Status::OK;
        }
        self.update_general(signal)
    }

    /// Every case of [`Self::update_temperature`].
    #[inline(never)]
    fn update_general(&mut self, signal: f32) -> Status {
        if !signal.is_finite() {
            self.temp_status = Status::NAN_INPUT;
            return self.temp_status;
        }
        let mut status = Status::OK;
        if signal < self.signal_lo || signal > self.signal_hi {
            status |= Status::SENSOR_FAULT;
        }
        let mut s = signal;
        if s < self.clamp_lo {
            s = self.clamp_lo;
            status |= Status::TEMPERATURE_CLAMPED;
        } else if s > self.clamp_hi {
            s = self.clamp_hi;
            status |= Status::TEMPERATURE_CLAMPED;
        }
        self.poly.update_temperature(s);
        self.temp_status = status;
        status
    }

    /// Corrects one raw sample; inside the calibrated range one pair of
    /// compares and the polynomial, else the out-of-line general path.
    #[inline(always)]
    pub fn sample(&self, raw: f32) -> Reading {
        // False for NaN, so NaN takes the general path.
        if raw >= self.raw_lo && raw <= self.raw_hi {
            return Reading {
                value: self.poly.sample(raw),
                status: self.temp_status,
            };
        }
        self.sample_general(raw)
    }

    /// Out-of-range, rail and NaN inputs, with the statuses
    /// `Compensator::compensate_sample` gives them.
    #[inline(never)]
    #[cold]
    fn sample_general(&self, raw: f32) -> Reading {
        if !raw.is_finite() {
            return Reading {
                value: 0.0,
                status: self.temp_status | Status::NAN_INPUT,
            };
        }
        let mut status = self.temp_status | Status::INPUT_OUT_OF_RANGE;
        if raw <= self.rail_lo || raw >= self.rail_hi {
            status |= Status::SENSOR_FAULT;
        }
        Reading {
            value: self.poly.sample(raw),
            status,
        }
    }
}

/// [`PolyQ`] with the input checks and status of compensate's integer
/// path (`FixedCompensator`), written the same way: one pair of compares
/// on the common path of a sample and of a temperature update, everything
/// else out of line.
#[derive(Clone, Debug)]
pub struct PolyQChecked<const X: usize, const K: usize, const US: u32, const XS: u32> {
    /// The bare polynomial.
    pub poly: PolyQ<X, K, US, XS>,
    /// Lowest and highest calibrated raw code.
    pub raw_lo: i32,
    /// See `raw_lo`.
    pub raw_hi: i32,
    /// Rail codes: a raw value at or beyond one is a sensor fault.
    pub rail_lo: i32,
    /// See `rail_lo`.
    pub rail_hi: i32,
    /// Plausible temperature-signal range (codes); outside it is a sensor
    /// fault.
    pub signal_lo: i32,
    /// See `signal_lo`.
    pub signal_hi: i32,
    /// Calibrated span of the temperature signal (the Q image's
    /// thermometer axis); outside it the signal is clamped.
    pub clamp_lo: i32,
    /// See `clamp_lo`.
    pub clamp_hi: i32,
    /// The larger of `signal_lo` and `clamp_lo`: from here on an update
    /// raises no status and clamps nothing.
    pub short_lo: i32,
    /// The smaller of `signal_hi` and `clamp_hi`.
    pub short_hi: i32,
    /// Status of the last temperature update, carried by every sample.
    pub temp_status: Status,
}

impl<const X: usize, const K: usize, const US: u32, const XS: u32> PolyQChecked<X, K, US, XS> {
    /// Checks the signal, clamps it to the calibrated span and caches the
    /// coefficients, with `FixedCompensator::update_temperature`'s
    /// statuses.
    #[inline(always)]
    pub fn update_temperature(&mut self, signal: i32) -> Status {
        if signal >= self.short_lo && signal <= self.short_hi {
            self.poly.update_temperature(signal);
            self.temp_status = Status::OK;
            return Status::OK;
        }
        self.update_general(signal)
    }

    /// Every case of [`Self::update_temperature`].
    #[inline(never)]
    fn update_general(&mut self, signal: i32) -> Status {
        let mut status = Status::OK;
        if signal < self.signal_lo || signal > self.signal_hi {
            status |= Status::SENSOR_FAULT;
        }
        let s = signal.clamp(self.clamp_lo, self.clamp_hi.max(self.clamp_lo));
        if s != signal {
            status |= Status::TEMPERATURE_CLAMPED;
        }
        self.poly.update_temperature(s);
        self.temp_status = status;
        status
    }

    /// Corrects one raw code; inside the calibrated range one pair of
    /// compares and the polynomial, else the out-of-line general path.
    #[inline(always)]
    pub fn sample(&self, raw: i32) -> ReadingQ {
        if raw >= self.raw_lo && raw <= self.raw_hi {
            return ReadingQ {
                value: self.poly.sample(raw),
                status: self.temp_status,
            };
        }
        self.sample_general(raw)
    }

    /// Out-of-range and rail codes, with the statuses
    /// `FixedCompensator::compensate_sample` gives them.
    #[inline(never)]
    #[cold]
    fn sample_general(&self, raw: i32) -> ReadingQ {
        let mut status = self.temp_status | Status::INPUT_OUT_OF_RANGE;
        if raw <= self.rail_lo || raw >= self.rail_hi {
            status |= Status::SENSOR_FAULT;
        }
        ReadingQ {
            value: self.poly.sample(raw),
            status,
        }
    }
}

/// `poly` with the limits of the f32 image `view`: its raw limits,
/// plausible signal range and thermometer axis (the signal span the table
/// was calibrated over), so both sides check the same inputs; `None` if the
/// image has no f32 thermometer.
pub fn checked_f32<const X: usize, const K: usize>(
    view: &TableView<'_>,
    poly: PolyF32<X, K>,
) -> Option<PolyF32Checked<X, K>> {
    let t = view.tables_f32()?;
    let (axis, _) = t.thermometer?;
    let l = view.raw_limits();
    Some(PolyF32Checked {
        poly,
        raw_lo: l.raw_lo as f32,
        raw_hi: l.raw_hi as f32,
        rail_lo: l.rail_lo as f32,
        rail_hi: l.rail_hi as f32,
        signal_lo: t.signal_lo,
        signal_hi: t.signal_hi,
        clamp_lo: axis.start,
        clamp_hi: axis.end(),
        short_lo: t.signal_lo.max(axis.start),
        short_hi: t.signal_hi.min(axis.end()),
        temp_status: Status::NO_TEMPERATURE,
    })
}

/// `poly` with the limits of the Q image `view` (whole codes: the images
/// take the signal in ADC codes); `None` if it has no Q thermometer.
pub fn checked_q<const X: usize, const K: usize, const US: u32, const XS: u32>(
    view: &TableView<'_>,
    poly: PolyQ<X, K, US, XS>,
) -> Option<PolyQChecked<X, K, US, XS>> {
    let t = view.tables_q()?;
    let (axis, _) = t.thermometer?;
    let l = view.raw_limits();
    let clamp_hi = axis
        .start()
        .saturating_add(axis.step().saturating_mul(axis.len() as i32 - 1));
    Some(PolyQChecked {
        poly,
        raw_lo: l.raw_lo,
        raw_hi: l.raw_hi,
        rail_lo: l.rail_lo,
        rail_hi: l.rail_hi,
        signal_lo: t.signal_lo,
        signal_hi: t.signal_hi,
        clamp_lo: axis.start(),
        clamp_hi,
        short_lo: t.signal_lo.max(axis.start()),
        short_hi: t.signal_hi.min(clamp_hi),
        temp_status: Status::NO_TEMPERATURE,
    })
}
