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
//! coefficients, exact 32x32->64-bit products shifted back by compile-time
//! amounts, rounding half up, saturating to i32 between steps, the same
//! arithmetic style as compensate's integer kernels.

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
        let t = self.thermometer(signal);
        self.cache_at(t);
        t
    }

    /// The thermometer polynomial: the temperature variable of `coeffs`
    /// for a temperature signal.
    #[inline(always)]
    pub fn thermometer(&self, signal: f32) -> f32 {
        horner_f32(&self.therm, signal - self.therm_centre)
    }

    /// Evaluates every `p_i(t)` and caches them.
    #[inline(always)]
    pub fn cache_at(&mut self, t: f32) {
        for (p, c) in self.cached.iter_mut().zip(self.coeffs.iter()) {
            *p = horner_f32(c, t);
        }
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
/// `s` fixed at compile time: `TS` for the thermometer (variable: signal
/// minus centre), 16 for the temperature polynomials (variable: T in Q16),
/// `XS` for the raw-code polynomial; results saturate to i32.
#[derive(Clone, Debug)]
pub struct PolyQ<const M: usize, const X: usize, const K: usize, const TS: u32, const XS: u32> {
    /// Thermometer coefficients in `signal - therm_centre`; the result is
    /// the temperature variable of `coeffs` in Q16.
    pub therm: [i32; M],
    /// Signal value the thermometer polynomial is centred on.
    pub therm_centre: i32,
    /// `coeffs[i][j]`: coefficient of `x^i T^j`, T the thermometer's result
    /// (in Q16).
    pub coeffs: [[i32; K]; X],
    /// `p_i(T)` at the last temperature update.
    pub cached: [i32; X],
}

/// Exact signed 32x32 -> 64-bit product, cheap on every target: SMULL on
/// ARMv7-M, [`mul_wide_soft`] on ARMv6-M (32-bit MULS only) instead of the
/// generic 64x64 library multiply. The compensate crate's integer path does
/// the same, so the baseline is optimised as far as ours.
///
/// The `armv6m` cfg comes from build.rs (by target name): on stable Rust,
/// `cfg(target_feature = "v7")` is never set for ARM targets, so it cannot
/// tell the two architectures apart.
#[inline(always)]
pub fn mul_wide(a: i32, b: i32) -> i64 {
    #[cfg(armv6m)]
    {
        mul_wide_soft(a, b)
    }
    #[cfg(not(armv6m))]
    {
        i64::from(a) * i64::from(b)
    }
}

/// Signed 32x32 -> 64-bit product from four 16x16 -> 32-bit products:
/// `a b = ah bh 2^32 + (ah bl + al bh) 2^16 + al bl`, with `al`, `bl` the
/// unsigned low halves and `ah`, `bh` the signed high halves.
#[inline(always)]
pub fn mul_wide_soft(a: i32, b: i32) -> i64 {
    let (al, ah) = ((a & 0xFFFF) as u32, a >> 16);
    let (bl, bh) = ((b & 0xFFFF) as u32, b >> 16);
    // al bl < 2^32; |ah bl|, |al bh| < 2^31; |ah bh| <= 2^30.
    let lo = i64::from(al.wrapping_mul(bl));
    let mid = i64::from(ah.wrapping_mul(bl as i32)) + i64::from((al as i32).wrapping_mul(bh));
    let hi = i64::from(ah.wrapping_mul(bh));
    (hi << 32) + (mid << 16) + lo
}

/// Horner's rule in Q arithmetic with a compile-time shift `S` (as a
/// hand-written product would fix its Q formats), highest coefficient last.
#[inline(always)]
fn horner_q<const N: usize, const S: u32>(c: &[i32; N], v: i32) -> i32 {
    let Some((&last, rest)) = c.split_last() else {
        return 0;
    };
    let round = (1i64 << S) >> 1;
    let mut acc = last;
    for &ci in rest.iter().rev() {
        // |acc v| <= 2^62, so adding the rounding term cannot overflow.
        let step = ((mul_wide(acc, v) + round) >> S) + i64::from(ci);
        // Saturate to i32 between steps, so the next product stays exact.
        acc = step.clamp(i64::from(i32::MIN), i64::from(i32::MAX)) as i32;
    }
    acc
}

impl<const M: usize, const X: usize, const K: usize, const TS: u32, const XS: u32>
    PolyQ<M, X, K, TS, XS>
{
    /// Number of stored coefficients.
    pub const STORED: usize = M + X * K;

    /// Evaluates the thermometer and every `p_i(T)` and caches them;
    /// returns T in Q16.
    #[inline(always)]
    pub fn update_temperature(&mut self, signal: i32) -> i32 {
        let t_q16 = horner_q::<M, TS>(&self.therm, signal.wrapping_sub(self.therm_centre));
        for (p, c) in self.cached.iter_mut().zip(self.coeffs.iter()) {
            *p = horner_q::<K, 16>(c, t_q16);
        }
        t_q16
    }

    /// Corrects one raw sample with the cached coefficients.
    #[inline(always)]
    pub fn sample(&self, x: i32) -> i32 {
        horner_q::<X, XS>(&self.cached, x)
    }
}

/// The benchmark's f32 baseline: quadratic thermometer, output cubic in
/// temperature for each power of the raw code up to 2 (15 coefficients).
pub type PolyF32Bench = PolyF32<3, 3, 4>;

/// The benchmark's integer baseline, same shape as [`PolyF32Bench`].
pub type PolyQBench = PolyQ<3, 3, 4, 20, 20>;

/// Centre of the temperature-signal codes of the demo part (2^22, the code
/// at 25 C): the thermometer polynomial is evaluated in
/// `code - SIGNAL_CENTRE`, as a well-conditioned fit would be.
pub const SIGNAL_CENTRE: i32 = 4_194_304;

/// The demo polynomials' temperature variable `tn = (T - 25 C) / 64 C`
/// for a temperature in degrees Celsius (see [`demo_f32`]).
pub fn normalised_temperature(t_c: f32) -> f32 {
    (t_c - 25.0) / 64.0
}

/// Baseline coefficients of the magnitudes of a well-level bridge part (taken
/// from the invented drift model the firmware embedded before its images came
/// from the station chain; the count does not depend on them), in normalised temperature
/// `tn = (T - 25 C) / 64 C` (|tn| < 1 over -20..85 C keeps Horner's rule
/// well conditioned; a product's fit would do the same): thermometer
/// 6711 codes/C with its curvature, offset -1.29e4 Pa drifting 34 Pa/C,
/// gain 0.25 Pa/code rising 0.21 %/K, a 0.08 % FS bow. Horner in f32 has no
/// data-dependent branch, so the values do not change the count.
pub const fn demo_f32() -> PolyF32Bench {
    PolyF32 {
        // tn = (1.49e-4 u - 5.5e-11 u^2) / 64, u = code - SIGNAL_CENTRE.
        therm: [0.0, 2.328e-6, -8.6e-13],
        therm_centre: SIGNAL_CENTRE as f32,
        coeffs: [
            // Offset, Pa: -1.29e4 + 34 T' - 0.15 T'^2 + 2e-4 T'^3, T' = 64 tn.
            [-1.29e4, 2176.0, -614.4, 52.43],
            // Gain, Pa/code: 0.25 + 5.3e-4 T' + 1.1e-6 T'^2 - 2e-9 T'^3.
            [0.25, 0.03392, 4.506e-3, -5.243e-4],
            // Bow, Pa/code^2: 5e-11 - 1e-13 T' + 4e-16 T'^2.
            [5.0e-11, -6.4e-12, 1.638e-12, 0.0],
        ],
        cached: [0.0; 3],
    }
}

/// Rounds half away from zero to i32 (core has no `f64::round` without std).
const fn round_i32(x: f64) -> i32 {
    (if x >= 0.0 { x + 0.5 } else { x - 0.5 }) as i32
}

/// The integer form of [`demo_f32`]: `tn` in Q16 from a thermometer with a
/// 20-bit shift per power of the signal (coefficients in Q36 and Q56, so
/// their rounding moves the output by well under 1 Pa), output in Q8 Pa; the
/// offset row in Q8, the gain row in Q(8 + 20), the bow row in Q(8 + 40),
/// so that the 20-bit shift per power of the raw code lands in Q8. The i32
/// clamps in Horner's rule are the only data-dependent branches and these
/// inputs never reach them. A `const fn`, so the coefficients are constants
/// in flash as in a product, with no float code at run time.
pub const fn demo_q() -> PolyQBench {
    let f = demo_f32();
    let therm_bits = [16u32, 36, 56];
    let row_bits = [8u32, 28, 48];
    let mut therm = [0i32; 3];
    let mut coeffs = [[0i32; 4]; 3];
    let mut i = 0;
    while i < 3 {
        therm[i] = round_i32(f.therm[i] as f64 * (1u64 << therm_bits[i]) as f64);
        let mut j = 0;
        while j < 4 {
            coeffs[i][j] = round_i32(f.coeffs[i][j] as f64 * (1u64 << row_bits[i]) as f64);
            j += 1;
        }
        i += 1;
    }
    PolyQ {
        therm,
        therm_centre: SIGNAL_CENTRE,
        coeffs,
        cached: [0; 3],
    }
}

/// [`demo_f32`] evaluated at compile time.
pub const DEMO_F32: PolyF32Bench = demo_f32();

/// [`demo_q`] evaluated at compile time.
pub const DEMO_Q: PolyQBench = demo_q();
