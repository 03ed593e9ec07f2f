//! The f32 math backend, chosen at compile time by cargo feature.
//!
//! Every transcendental function in this crate goes through this module and
//! is called *by path* (`libm::expf(x)`, `micromath::F32(x).exp()`), never as
//! a method on `f32`: on the host, std's inherent methods would silently
//! shadow the code the firmware runs (micromath's documentation warns of the
//! same trap).
//!
//! Selection is deterministic:
//! - `libm` enabled (default), with or without `micromath`: libm, because the
//!   accurate backend is the safe choice when a dependency graph unifies both.
//! - only `micromath` enabled: micromath.
//! - neither: this module and `crate::model` are not compiled; tables,
//!   images and compensators need no transcendental function.

/// Name of the selected backend, for reports and benchmarks.
#[cfg(feature = "libm")]
pub const BACKEND: &str = "libm";
/// Name of the selected backend, for reports and benchmarks.
#[cfg(all(feature = "micromath", not(feature = "libm")))]
pub const BACKEND: &str = "micromath";

/// Relative error bound of [`exp`], [`ln`], [`powf`] and [`sqrt`] of the
/// selected backend over the arguments the runtime model uses.
///
/// libm's f32 functions are correctly rounded or within 1 ulp (libm
/// `expf.rs`, `logf.rs`, `powf.rs` headers); 2 ulp is stated to leave margin
/// for double rounding of composed calls. micromath documents no bound; the
/// value here is measured by this module's tests over the model's domain
/// (exp arguments -60..0, ln/powf over 1e-3..1e3).
#[cfg(feature = "libm")]
pub const BACKEND_REL_ERROR: f32 = 2.5e-7;
/// Relative error bound of [`exp`], [`ln`], [`powf`] and [`sqrt`] of the
/// selected backend over the arguments the runtime model uses.
///
/// micromath documents no bound; this value is the worst relative error of
/// its exp measured by `print_worst_errors` over -60..0 (2.39e-3), rounded
/// up. ln and sqrt are refined here (Newton / Heron steps) to this level.
#[cfg(all(feature = "micromath", not(feature = "libm")))]
pub const BACKEND_REL_ERROR: f32 = 2.5e-3;

/// `e^x`: relative error at most [`BACKEND_REL_ERROR`] for `x` in -60..=0.
#[inline]
pub fn exp(x: f32) -> f32 {
    #[cfg(feature = "libm")]
    {
        libm::expf(x)
    }
    #[cfg(all(feature = "micromath", not(feature = "libm")))]
    {
        micromath::F32(x).exp().0
    }
}

/// Natural logarithm: error at most [`BACKEND_REL_ERROR`] times
/// `max(|ln x|, 1)` for `x` in 1e-3..=1e3.
#[inline]
pub fn ln(x: f32) -> f32 {
    #[cfg(feature = "libm")]
    {
        libm::logf(x)
    }
    #[cfg(all(feature = "micromath", not(feature = "libm")))]
    {
        // micromath's ln alone is off by up to 0.12 (measured by
        // `print_worst_errors`); two Newton steps on exp(y) = x (quadratic
        // convergence: 0.12 -> 7e-3 -> 3e-5) leave the error of
        // micromath's exp.
        let mut y = micromath::F32(x).ln().0;
        y = y + x * exp(-y) - 1.0;
        y + x * exp(-y) - 1.0
    }
}

/// `x^y` for `x > 0`: relative error at most [`BACKEND_REL_ERROR`] times
/// `(1 + 2 |y|)` for `x` in 1e-3..=1e3 and `|y ln x| <= 60`.
#[inline]
pub fn powf(x: f32, y: f32) -> f32 {
    #[cfg(feature = "libm")]
    {
        libm::powf(x, y)
    }
    #[cfg(all(feature = "micromath", not(feature = "libm")))]
    {
        // micromath's powf is off by up to 16 % here; exp(y ln x) with the
        // refined ln inherits the exp error plus |y| times the ln error.
        exp(y * ln(x))
    }
}

/// Square root: relative error at most [`BACKEND_REL_ERROR`] for `x` in
/// 1e-3..=1e3.
#[inline]
pub fn sqrt(x: f32) -> f32 {
    #[cfg(feature = "libm")]
    {
        libm::sqrtf(x)
    }
    #[cfg(all(feature = "micromath", not(feature = "libm")))]
    {
        // micromath's estimate is within 6.1 % (measured); two Heron steps
        // square the relative error twice: 6e-2 -> 2e-3 -> 2e-6.
        let mut r = micromath::F32(x).sqrt().0;
        r = 0.5 * (r + x / r);
        0.5 * (r + x / r)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// f64 references from std (correctly rounded to well below f32 ulp).
    fn rel(got: f32, want: f64) -> f64 {
        ((f64::from(got) - want) / want).abs()
    }

    #[test]
    #[ignore = "measurement aid: prints worst errors per function"]
    fn print_worst_errors() {
        let mut w = [0.0f64; 4];
        for i in 0..=6000 {
            let x = -60.0 + 0.01 * i as f32;
            w[0] = w[0].max(rel(exp(x), f64::from(x).exp()));
        }
        for i in 0..=6000 {
            let x = 10f32.powf(-3.0 + 0.001 * i as f32);
            let xd = f64::from(x);
            w[1] = w[1].max((f64::from(ln(x)) - xd.ln()).abs() / xd.ln().abs().max(1.0));
            w[2] = w[2].max(rel(powf(x, 1.5), xd.powf(1.5)));
            w[3] = w[3].max(rel(sqrt(x), xd.sqrt()));
        }
        std::println!(
            "{BACKEND}: exp {:e} ln {:e} powf {:e} sqrt {:e}",
            w[0],
            w[1],
            w[2],
            w[3]
        );
    }

    #[test]
    fn backend_within_stated_bound() {
        let bound = f64::from(BACKEND_REL_ERROR);
        let mut worst = 0.0f64;
        for i in 0..=600 {
            let x = -60.0 + 0.1 * i as f32;
            let e = rel(exp(x), f64::from(x).exp());
            assert!(e <= bound, "exp({x}) rel err {e} > {bound}");
            worst = worst.max(e);
        }
        for i in 0..=600 {
            // 1e-3 .. 1e3, log-spaced
            let x = 10f32.powf(-3.0 + 0.01 * i as f32);
            let xd = f64::from(x);
            // ln near 1 has tiny absolute values: compare absolute error there
            let e = (f64::from(ln(x)) - xd.ln()).abs() / xd.ln().abs().max(1.0);
            assert!(e <= bound, "ln({x}) err {e} > {bound}");
            let e = rel(powf(x, 1.5), xd.powf(1.5));
            assert!(e <= 4.0 * bound, "powf({x}, 1.5) rel err {e} > 4 x {bound}");
            let e = rel(sqrt(x), xd.sqrt());
            assert!(e <= bound, "sqrt({x}) rel err {e} > {bound}");
            worst = worst.max(e);
        }
        assert!(worst.is_finite());
    }
}
