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
    /// Thermometer: `T = sum_j therm[j] s^j`, `s` the temperature signal.
    pub therm: [f32; M],
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
        let t = horner_f32(&self.therm, signal);
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
    /// Thermometer coefficients; the result is T in Q16.16 degrees Celsius.
    pub therm: [i32; M],
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
        let t_q16 = horner_q(&self.therm, signal, self.therm_shift);
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
