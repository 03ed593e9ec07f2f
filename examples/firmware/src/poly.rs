//! The baseline the benchmark compares against: the polynomial correction
//! most sensor products use (common practice), fitted to the same part as
//! the table images at the lowest degree that is as accurate as they are.
//!
//! The output is a polynomial in the raw code `x` whose coefficients are
//! polynomials in the normalised temperature signal,
//! `y = sum_i p_i(u) x^i`, `u = (code - centre) / 2^U_SHIFT`. A temperature
//! update evaluates every `p_i(u)` with Horner's rule and caches them; a
//! sample evaluates the polynomial in `x` from the cache. That is the same
//! split into a temperature update and a per-sample step that the compensate
//! crate uses, so the two are compared like for like.
//!
//! The coefficients come from `data/well_level_poly.rs`, which
//! `examples/make_firmware_image.rs` generates on the host
//! (`host_tools::station::poly_baseline`: least squares to the calibrated
//! part model, degree chosen so the dense error is at or below the table
//! images'; the file's header states both errors). That module computes
//! exactly this file's arithmetic, and `tests/firmware_poly_baseline.rs`
//! checks the two agree bit for bit on the dense grid.
//!
//! `PolyF32` is the Cortex-M4F form (f32, plain multiply and add as the
//! compensate crate's f32 path). `PolyQ` is the Cortex-M0 form: i32
//! coefficients, exact 32x32->64-bit products shifted back by compile-time
//! amounts, rounding half up, saturating to i32 between steps, the same
//! arithmetic style as compensate's integer kernels.

/// The fitted coefficients and their measured accuracy (generated; left
/// as the generator writes it, so its up-to-date check compares bytes).
#[rustfmt::skip]
#[path = "../data/well_level_poly.rs"]
pub mod fitted;

/// Polynomial correction in f32 with `X` terms in the raw code (degree
/// `X - 1`) and `K` coefficients per polynomial in `u` (degree `K - 1`).
#[derive(Clone, Debug)]
pub struct PolyF32<const X: usize, const K: usize> {
    /// Temperature-signal code at `u = 0`.
    pub centre: f32,
    /// `2^-U_SHIFT`: `u = (signal - centre) * u_scale`, exact in f32.
    pub u_scale: f32,
    /// `coeffs[i][j]`: coefficient of `x^i u^j`.
    pub coeffs: [[f32; K]; X],
    /// `p_i(u)` at the last temperature update.
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

impl<const X: usize, const K: usize> PolyF32<X, K> {
    /// Number of stored coefficients.
    pub const STORED: usize = X * K;

    /// Evaluates every `p_i(u)` for a temperature signal and caches them;
    /// returns `u`.
    #[inline(always)]
    pub fn update_temperature(&mut self, signal: f32) -> f32 {
        let u = self.normalised(signal);
        self.cache_at(u);
        u
    }

    /// The polynomials' variable `u` for a temperature signal.
    #[inline(always)]
    pub fn normalised(&self, signal: f32) -> f32 {
        (signal - self.centre) * self.u_scale
    }

    /// Evaluates every `p_i(u)` and caches them.
    #[inline(always)]
    pub fn cache_at(&mut self, u: f32) {
        for (p, c) in self.cached.iter_mut().zip(self.coeffs.iter()) {
            *p = horner_f32(c, u);
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
/// `s` fixed at compile time: `US` for the polynomials in the temperature
/// signal (variable: signal minus centre, so `v / 2^US = u`), `XS` for the
/// raw-code polynomial; results saturate to i32.
#[derive(Clone, Debug)]
pub struct PolyQ<const X: usize, const K: usize, const US: u32, const XS: u32> {
    /// Temperature-signal code at `u = 0`.
    pub centre: i32,
    /// `coeffs[i][j]`: coefficient of `x^i u^j` in Q(`out + i XS`), `out`
    /// the fraction bits of the result.
    pub coeffs: [[i32; K]; X],
    /// `p_i(u)` at the last temperature update.
    pub cached: [i32; X],
}

/// Exact signed 32x32 -> 64-bit product, cheap on every target: SMULL on
/// ARMv7-M, [`mul_wide_soft`] on ARMv6-M (32-bit MULS only) instead of the
/// generic 64x64 library multiply. The compensate crate's integer path does
/// the same, so the baseline is optimised as far as ours.
///
/// The `armv6m` cfg comes from build.rs (by target name): on stable Rust,
/// `cfg(target_feature = "v7")` is never set for thumb targets, so it cannot
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

/// Signed 32x32 -> 64-bit product from three 16x16 -> 32-bit products, as
/// the compensate crate's integer sample path forms its product on ARMv6-M
/// (Karatsuba on signed 16-bit halves), so the baseline is optimised as
/// far as ours.
///
/// `a = ah 2^16 + al` with `al` in [-2^15, 2^15) and `ah` in
/// [-2^15, 2^15] (`ah = floor((floor(a / 2^15) + 1) / 2)`, which does not
/// wrap at `ah = 2^15`), the same for `b`; then
/// `a b = hh 2^32 + mid 2^16 + ll` with `ll = al bl`, `hh = ah bh` (both
/// within +-2^30) and `mid = al bh + ah bl` in [-2^31, 2^31 - 2^15]
/// (each cross product within +-2^30, and both at their top only if
/// `al = ah = -2^15`, which `ah`'s range excludes for `al = -2^15`), so
/// `mid` fits in i32 and `(al - ah)(bh - bl) + ll + hh`, taken mod 2^32,
/// is `mid` exactly.
#[inline(always)]
pub fn mul_wide_soft(a: i32, b: i32) -> i64 {
    let (al, ah) = (i32::from(a as i16), (a >> 15).wrapping_add(1) >> 1);
    let (bl, bh) = (i32::from(b as i16), (b >> 15).wrapping_add(1) >> 1);
    let ll = al.wrapping_mul(bl);
    let hh = ah.wrapping_mul(bh);
    let mid = al
        .wrapping_sub(ah)
        .wrapping_mul(bh.wrapping_sub(bl))
        .wrapping_add(ll)
        .wrapping_add(hh);
    (i64::from(hh) << 32) + (i64::from(mid) << 16) + i64::from(ll)
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

impl<const X: usize, const K: usize, const US: u32, const XS: u32> PolyQ<X, K, US, XS> {
    /// Number of stored coefficients.
    pub const STORED: usize = X * K;

    /// Evaluates every `p_i(u)` and caches them; returns the signal minus
    /// the centre.
    #[inline(always)]
    pub fn update_temperature(&mut self, signal: i32) -> i32 {
        let v = signal.wrapping_sub(self.centre);
        for (p, c) in self.cached.iter_mut().zip(self.coeffs.iter()) {
            *p = horner_q::<K, US>(c, v);
        }
        v
    }

    /// Corrects one raw sample with the cached coefficients.
    #[inline(always)]
    pub fn sample(&self, x: i32) -> i32 {
        horner_q::<X, XS>(&self.cached, x)
    }
}

/// The benchmark's f32 baseline: linear in the raw code, degree
/// [`fitted::DEGREE`] in `u` ([`fitted::RAW_TERMS`] x [`fitted::TERMS`]
/// coefficients).
pub type PolyF32Bench = PolyF32<{ fitted::RAW_TERMS }, { fitted::TERMS }>;

/// The benchmark's integer baseline, same shape as [`PolyF32Bench`].
pub type PolyQBench =
    PolyQ<{ fitted::RAW_TERMS }, { fitted::TERMS }, { fitted::U_SHIFT }, { fitted::X_SHIFT }>;

/// The fitted f32 baseline (reading in bar). A `const fn`, so the
/// coefficients are constants in flash as in a product.
pub const fn fitted_f32() -> PolyF32Bench {
    PolyF32 {
        centre: fitted::CENTRE_CODE as f32,
        u_scale: 1.0 / (1u32 << fitted::U_SHIFT) as f32,
        coeffs: fitted::COEFFS_F32,
        cached: [0.0; fitted::RAW_TERMS],
    }
}

/// The fitted integer baseline (reading in Q(`fitted::OUT_BITS`) bar), with
/// no float code at run time.
pub const fn fitted_q() -> PolyQBench {
    PolyQ {
        centre: fitted::CENTRE_CODE,
        coeffs: fitted::COEFFS_Q,
        cached: [0; fitted::RAW_TERMS],
    }
}

/// [`fitted_f32`] evaluated at compile time.
pub const FITTED_F32: PolyF32Bench = fitted_f32();

/// [`fitted_q`] evaluated at compile time.
pub const FITTED_Q: PolyQBench = fitted_q();
