//! The polynomial baseline with the input checks and status of the
//! compensate crate's paths, so the benchmark can show what those checks
//! cost on their own.
//!
//! [`crate::poly::PolyF32`] and [`crate::poly::PolyQ`] check nothing and
//! return a bare number. A compensate `Compensator` (`FixedCompensator`)
//! also tests every sample against the calibrated range, the rails and (in
//! f32) NaN, and every temperature update against NaN (f32), the plausible
//! signal range and the calibrated temperature span, and returns a
//! `Status`. [`Checked`] adds exactly those tests, written the same way
//! (one pair of compares on the common path of a sample and of a
//! temperature update, everything else out of line), around the same
//! polynomial, in either arithmetic. The compensator clamps the signal to
//! its thermometer axis and the temperature to its temperature axis, both
//! the calibrated span; the polynomial's variable is the signal itself, so
//! its one clamp, of the signal to the same thermometer axis, is both.

use compensate::{Reading, ReadingQ, Status, TableView};

use crate::poly::{PolyF32, PolyQ};

/// What [`Checked`] needs of a polynomial form: its number type, its
/// temperature update and sample, and the reading type of the matching
/// compensate path.
pub trait Form {
    /// f32 or i32 (ADC codes, Q output).
    type Num: Copy + PartialOrd;
    /// `compensate::Reading` or `ReadingQ`.
    type Reading;
    /// The value of a NaN reading.
    const ZERO: Self::Num;
    /// Caches the polynomial's coefficients at a temperature signal.
    fn update(&mut self, signal: Self::Num);
    /// The polynomial at a raw code, from the cache.
    fn eval(&self, raw: Self::Num) -> Self::Num;
    /// `false` for NaN and infinity (always `true` for integers).
    fn finite(x: Self::Num) -> bool;
    /// A reading of `value` with `status`.
    fn reading(value: Self::Num, status: Status) -> Self::Reading;
}

impl<const X: usize, const K: usize> Form for PolyF32<X, K> {
    type Num = f32;
    type Reading = Reading;
    const ZERO: f32 = 0.0;
    #[inline(always)]
    fn update(&mut self, signal: f32) {
        self.update_temperature(signal);
    }
    #[inline(always)]
    fn eval(&self, raw: f32) -> f32 {
        self.sample(raw)
    }
    #[inline(always)]
    fn finite(x: f32) -> bool {
        x.is_finite()
    }
    #[inline(always)]
    fn reading(value: f32, status: Status) -> Reading {
        Reading { value, status }
    }
}

// Same shape as PolyF32's Form: i32 arithmetic with its own scales.
impl<const X: usize, const K: usize, const US: u32, const XS: u32> Form for PolyQ<X, K, US, XS> {
    type Num = i32;
    type Reading = ReadingQ;
    const ZERO: i32 = 0;
    #[inline(always)]
    fn update(&mut self, signal: i32) {
        self.update_temperature(signal);
    }
    #[inline(always)]
    fn eval(&self, raw: i32) -> i32 {
        self.sample(raw)
    }
    #[inline(always)]
    fn finite(_: i32) -> bool {
        true
    }
    #[inline(always)]
    fn reading(value: i32, status: Status) -> ReadingQ {
        ReadingQ { value, status }
    }
}

/// A polynomial form with input checks and a status on every call.
#[derive(Clone, Debug)]
pub struct Checked<P: Form> {
    /// The bare polynomial.
    pub poly: P,
    /// Lowest and highest calibrated raw code.
    pub raw_lo: P::Num,
    /// See `raw_lo`.
    pub raw_hi: P::Num,
    /// Rail codes: a raw value at or beyond one is a sensor fault.
    pub rail_lo: P::Num,
    /// See `rail_lo`.
    pub rail_hi: P::Num,
    /// Plausible temperature-signal range; outside it is a sensor fault.
    pub signal_lo: P::Num,
    /// See `signal_lo`.
    pub signal_hi: P::Num,
    /// Calibrated span of the temperature signal (the image's thermometer
    /// axis); outside it the signal is clamped (a fit is not trusted beyond
    /// its data).
    pub clamp_lo: P::Num,
    /// See `clamp_lo`.
    pub clamp_hi: P::Num,
    /// The short update applies from this signal on: the larger of
    /// `signal_lo` and `clamp_lo` (inside both ranges no status is raised
    /// and nothing is clamped), as compensate's short update.
    pub short_lo: P::Num,
    /// The short update applies up to this signal: the smaller of
    /// `signal_hi` and `clamp_hi`.
    pub short_hi: P::Num,
    /// Status of the last temperature update, carried by every sample.
    pub temp_status: Status,
}

/// [`PolyF32`] with the checks of compensate's f32 path.
pub type PolyF32Checked<const X: usize, const K: usize> = Checked<PolyF32<X, K>>;

/// [`PolyQ`] with the checks of compensate's integer path.
pub type PolyQChecked<const X: usize, const K: usize, const US: u32, const XS: u32> =
    Checked<PolyQ<X, K, US, XS>>;

impl<P: Form> Checked<P> {
    /// Checks the signal, clamps it to the calibrated span and caches the
    /// coefficients, with the statuses of the compensator's update; in f32
    /// a NaN or infinite signal keeps the old coefficients and sets
    /// [`Status::NAN_INPUT`].
    ///
    /// Inside both the plausible range and the calibrated span (the common
    /// case) one pair of compares and the polynomial, as compensate's short
    /// update; everything else out of line.
    #[inline(always)]
    pub fn update_temperature(&mut self, signal: P::Num) -> Status {
        // False for NaN.
        if signal >= self.short_lo && signal <= self.short_hi {
            self.poly.update(signal);
            self.temp_status = Status::OK;
            return Status::OK;
        }
        self.update_general(signal)
    }

    /// Every case of [`Self::update_temperature`].
    #[inline(never)]
    fn update_general(&mut self, signal: P::Num) -> Status {
        if !P::finite(signal) {
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
        self.poly.update(s);
        self.temp_status = status;
        status
    }

    /// Corrects one raw sample; inside the calibrated range one pair of
    /// compares and the polynomial, else the out-of-line general path.
    #[inline(always)]
    pub fn sample(&self, raw: P::Num) -> P::Reading {
        // False for NaN, so NaN takes the general path.
        if raw >= self.raw_lo && raw <= self.raw_hi {
            return P::reading(self.poly.eval(raw), self.temp_status);
        }
        self.sample_general(raw)
    }

    /// Out-of-range, rail and (f32) NaN inputs, with the statuses the
    /// compensator's sample gives them.
    #[inline(never)]
    #[cold]
    fn sample_general(&self, raw: P::Num) -> P::Reading {
        if !P::finite(raw) {
            return P::reading(P::ZERO, self.temp_status | Status::NAN_INPUT);
        }
        let mut status = self.temp_status | Status::INPUT_OUT_OF_RANGE;
        if raw <= self.rail_lo || raw >= self.rail_hi {
            status |= Status::SENSOR_FAULT;
        }
        P::reading(self.poly.eval(raw), status)
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
    Some(Checked {
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
    Some(Checked {
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
