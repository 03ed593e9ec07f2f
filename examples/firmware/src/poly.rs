//! The baseline the benchmark compares against: the polynomial correction
//! most sensor products use (common practice).
//!
//! The output is a polynomial in the raw signal `x` whose coefficients are
//! polynomials in temperature, `y = sum_i p_i(T) x^i`, with `T` itself a
//! polynomial in the temperature signal. A temperature update evaluates the
//! thermometer polynomial and every `p_i(T)` with Horner's rule and caches the
//! `p_i`; a sample evaluates the polynomial in `x` from the cache. That is the
//! same split into a slow temperature update and a fast per-sample step that
//! the compensate crate uses, so the two are compared like for like.
//!
//! `PolyF32` is the Cortex-M4F form (f32, plain multiply and add as the
//! compensate crate's f32 path). `PolyQ` is the Cortex-M0 form: i32
//! coefficients, i64 products shifted back, rounding half up, saturating at
//! the end, the same arithmetic style as compensate's integer kernels.

/// Polynomial correction in f32 with `K` coefficients per temperature
/// polynomial (degree `K - 1` in T), `X` terms in the raw signal (degree
/// `X - 1`) and a thermometer polynomial of `M` coefficients.
#[derive(Clone, Debug)]
pub struct PolyF32<const M: usize, const X: usize, const K: usize> {
    /// Thermometer: `T = sum_j therm[j] s^j`, `s` the temperature signal
    /// minus `therm_centre`.
    pub therm: [f32; M],
    /// Signal value the thermometer polynomial is centred on.
    pub therm_centre: f32,
    /// `coeffs[i][j]`: coefficient of `x^i T^j`.
    pub coeffs: [[f32; K]; X],
    /// `p_i(T)` at the last temperature update.
    pub cached: [f32; X],
}

/// Horner's rule, highest coefficient last in `c`.
#[inline(always)]
fn horner_f32<const N: usize>(c: &[f32; N], x: f32) -> f32 {
    let Some((&last, rest)) = c.split_last() else {
        return 0.0;
    };
    let mut acc = last;
    for &ci in rest.iter().rev() {
        acc = acc * x + ci;
    }
    acc
}

impl<const M: usize, const X: usize, const K: usize> PolyF32<M, X, K> {
    /// Number of stored coefficients.
    pub const STORED: usize = M + X * K;

    /// Evaluates the thermometer and every `p_i(T)` and caches them.
    #[inline(always)]
    pub fn update_temperature(&mut self, signal: f32) -> f32 {
        let t = horner_f32(&self.therm, signal - self.therm_centre);
        for (p, c) in self.cached.iter_mut().zip(self.coeffs.iter()) {
            *p = horner_f32(c, t);
        }
        t
    }

    /// Corrects one raw sample with the cached coefficients.
    #[inline(always)]
    pub fn sample(&self, x: f32) -> f32 {
        horner_f32(&self.cached, x)
    }
}

/// Polynomial correction in Q-format integers.
///
/// Every Horner step is `acc = (acc * v + 2^(s-1)) >> s + c` in i64, with
/// `v` the variable in Q(`s`) (so the coefficients share one Q format per
/// polynomial); the result saturates to i32.
#[derive(Clone, Debug)]
pub struct PolyQ<const M: usize, const X: usize, const K: usize> {
    /// Thermometer coefficients in `signal - therm_centre`; the result is T
    /// in Q16.16 degrees Celsius.
    pub therm: [i32; M],
    /// Signal value the thermometer polynomial is centred on.
    pub therm_centre: i32,
    /// Fraction bits of the temperature signal as the thermometer's variable.
    pub therm_shift: u32,
    /// `coeffs[i][j]`: coefficient of `x^i T^j`, T in Q16.16.
    pub coeffs: [[i32; K]; X],
    /// Fraction bits of the raw signal as the sample polynomial's variable.
    pub x_shift: u32,
    /// `p_i(T)` at the last temperature update.
    pub cached: [i32; X],
}

/// Horner's rule in Q arithmetic, highest coefficient last in `c`.
#[inline(always)]
fn horner_q<const N: usize>(c: &[i32; N], v: i32, shift: u32) -> i32 {
    let round = (1i64 << shift) >> 1;
    let Some((&last, rest)) = c.split_last() else {
        return 0;
    };
    let mut acc = i64::from(last);
    for &ci in rest.iter().rev() {
        acc = (acc.wrapping_mul(i64::from(v)).wrapping_add(round) >> shift)
            .wrapping_add(i64::from(ci));
        // Keep the accumulator in i32 range between steps, as a product of
        // two i32 must fit i64.
        acc = acc.clamp(i64::from(i32::MIN), i64::from(i32::MAX));
    }
    acc as i32
}

impl<const M: usize, const X: usize, const K: usize> PolyQ<M, X, K> {
    /// Number of stored coefficients.
    pub const STORED: usize = M + X * K;

    /// Evaluates the thermometer and every `p_i(T)` and caches them;
    /// returns T in Q16.16 degrees Celsius.
    #[inline(always)]
    pub fn update_temperature(&mut self, signal: i32) -> i32 {
        let t_q16 = horner_q(
            &self.therm,
            signal.wrapping_sub(self.therm_centre),
            self.therm_shift,
        );
        for (p, c) in self.cached.iter_mut().zip(self.coeffs.iter()) {
            *p = horner_q(c, t_q16, 16);
        }
        t_q16
    }

    /// Corrects one raw sample with the cached coefficients.
    #[inline(always)]
    pub fn sample(&self, x: i32) -> i32 {
        horner_q(&self.cached, x, self.x_shift)
    }
}

/// The benchmark's f32 baseline: quadratic thermometer, output cubic in
/// temperature for each power of the raw code up to 2 (15 coefficients).
pub type PolyF32Bench = PolyF32<3, 3, 4>;

/// The benchmark's integer baseline, same shape as [`PolyF32Bench`].
pub type PolyQBench = PolyQ<3, 3, 4>;

/// Centre of the temperature-signal codes of the demo part (2^22): the
/// thermometer polynomial is evaluated in `code - SIGNAL_CENTRE`, as a
/// well-conditioned fit would be.
pub const SIGNAL_CENTRE: i32 = 4_194_304;

/// Baseline coefficients with the magnitudes a fit to the demo part gives
/// (offset about -1.3e4 Pa, 0.25 Pa/code, a 0.08 % FS bow). Horner in f32
/// has no data-dependent branch, so the values do not change the count.
pub fn demo_f32() -> PolyF32Bench {
    PolyF32 {
        therm: [25.0, 7.45e-4, -5.6e-12],
        therm_centre: SIGNAL_CENTRE as f32,
        coeffs: [
            [-1.29e4, 34.0, -0.15, 2.0e-4],
            [0.25, 5.3e-4, 1.1e-6, -2.0e-9],
            [5.0e-11, -1.0e-13, 4.0e-16, 0.0],
        ],
        cached: [0.0; 3],
    }
}

/// The integer form of [`demo_f32`]: T in Q16 C, output in Q8 Pa, raw
/// codes with a 20-bit shift. The i32 clamps in Horner's rule are the only
/// data-dependent branches and these inputs never reach them.
pub fn demo_q() -> PolyQBench {
    PolyQ {
        therm: [1_638_400, 3_200_000, -2_400],
        therm_centre: SIGNAL_CENTRE,
        therm_shift: 16,
        coeffs: [
            [-3_300_000, 9_000, -40, 1],
            [67_108_864, -140_000, 300, -1],
            [14_000, -20, 1, 0],
        ],
        x_shift: 20,
        cached: [0; 3],
    }
}
