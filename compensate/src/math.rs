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

/// An f32 math backend: the four functions the runtime model needs.
pub trait Backend {
    /// Backend name for reports.
    const NAME: &'static str;
    /// Relative error bound over the model's domain (see [`BACKEND_REL_ERROR`]).
    const REL_ERROR: f32;
    /// `e^x`.
    fn exp(x: f32) -> f32;
    /// Natural logarithm.
    fn ln(x: f32) -> f32;
    /// `x^y` for `x > 0`.
    fn powf(x: f32, y: f32) -> f32;
    /// Square root.
    fn sqrt(x: f32) -> f32;
}

/// The libm backend: correctly rounded or within 1 ulp (libm `expf.rs`,
/// `logf.rs`, `powf.rs` headers); 2.5e-7 leaves margin for double rounding.
#[cfg(feature = "libm")]
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Libm;

#[cfg(feature = "libm")]
impl Backend for Libm {
    const NAME: &'static str = "libm";
    const REL_ERROR: f32 = 2.5e-7;
    #[inline]
    fn exp(x: f32) -> f32 {
        libm::expf(x)
    }
    #[inline]
    fn ln(x: f32) -> f32 {
        libm::logf(x)
    }
    #[inline]
    fn powf(x: f32, y: f32) -> f32 {
        libm::powf(x, y)
    }
    #[inline]
    fn sqrt(x: f32) -> f32 {
        libm::sqrtf(x)
    }
}

/// The micromath backend, with refinement steps where its raw
/// approximations are too coarse for the model.
///
/// micromath documents no bound; `REL_ERROR` is the worst relative error of
/// its exp measured by `print_worst_errors` over -60..0 (2.39e-3), rounded
/// up. Its ln (raw error up to 0.12) gets two Newton steps on exp(y) = x,
/// its sqrt (raw error 6.1 %) two Heron steps, and powf is exp(y ln x)
/// (raw powf error up to 16 % here).
// Same derives as Libm above: each backend is its own zero-sized type.
#[cfg(feature = "micromath")]
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Micromath;

// micromath's kernels do integer arithmetic on the float bits; some of it
// overflows (a panic in debug builds, e.g. `inv` inside `ln` for x <= 0 or
// NaN), so every special input is answered here before it reaches them.
#[cfg(feature = "micromath")]
impl Backend for Micromath {
    const NAME: &'static str = "micromath";
    const REL_ERROR: f32 = 2.5e-3;
    #[inline]
    fn exp(x: f32) -> f32 {
        if x.is_nan() {
            return f32::NAN;
        }
        // Outside these limits f32 exp is 0 or infinite anyway.
        if x < -104.0 {
            return 0.0;
        }
        if x > 89.0 {
            return f32::INFINITY;
        }
        micromath::F32(x).exp().0
    }
    #[inline]
    fn ln(x: f32) -> f32 {
        if x.is_nan() || x < 0.0 {
            return f32::NAN;
        }
        if x == 0.0 {
            return f32::NEG_INFINITY;
        }
        if x == f32::INFINITY {
            return f32::INFINITY;
        }
        // Quadratic convergence: 0.12 -> 7e-3 -> 3e-5, then exp's error.
        let mut y = micromath::F32(x).ln().0;
        y = y + x * Self::exp(-y) - 1.0;
        y + x * Self::exp(-y) - 1.0
    }
    #[inline]
    fn powf(x: f32, y: f32) -> f32 {
        Self::exp(y * Self::ln(x))
    }
    #[inline]
    fn sqrt(x: f32) -> f32 {
        if x.is_nan() || x < 0.0 {
            return f32::NAN;
        }
        if x == 0.0 || x == f32::INFINITY {
            return x;
        }
        // Two Heron steps: 6e-2 -> 2e-3 -> 2e-6.
        let mut r = micromath::F32(x).sqrt().0;
        r = 0.5 * (r + x / r);
        0.5 * (r + x / r)
    }
}

/// The backend selected by cargo features (libm when enabled).
#[cfg(feature = "libm")]
pub type Selected = Libm;
/// The backend selected by cargo features (libm when enabled).
#[cfg(all(feature = "micromath", not(feature = "libm")))]
pub type Selected = Micromath;

/// Name of the selected backend, for reports and benchmarks.
pub const BACKEND: &str = Selected::NAME;

/// Relative error bound of [`exp`], [`ln`], [`powf`] and [`sqrt`] of the
/// selected backend over the arguments the runtime model uses: exp over
/// -60..=0; ln (absolute error over `max(|ln x|, 1)`), sqrt over
/// 1e-3..=1e3; powf within `(1 + 2|y|)` times this bound.
pub const BACKEND_REL_ERROR: f32 = Selected::REL_ERROR;

/// `e^x` with the selected backend: relative error at most
/// [`BACKEND_REL_ERROR`] for `x` in -60..=0.
#[inline]
pub fn exp(x: f32) -> f32 {
    Selected::exp(x)
}

/// Natural logarithm with the selected backend: error at most
/// [`BACKEND_REL_ERROR`] times `max(|ln x|, 1)` for `x` in 1e-3..=1e3.
#[inline]
pub fn ln(x: f32) -> f32 {
    Selected::ln(x)
}

/// `x^y` for `x > 0` with the selected backend: relative error at most
/// [`BACKEND_REL_ERROR`] times `(1 + 2 |y|)` for `x` in 1e-3..=1e3.
#[inline]
pub fn powf(x: f32, y: f32) -> f32 {
    Selected::powf(x, y)
}

/// Square root with the selected backend: relative error at most
/// [`BACKEND_REL_ERROR`] for `x` in 1e-3..=1e3.
#[inline]
pub fn sqrt(x: f32) -> f32 {
    Selected::sqrt(x)
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
    fn special_inputs_never_panic() {
        // (input, expected class) for each function; checked for the
        // selected backend (run the suite once per feature set).
        for x in [
            f32::NAN,
            -1.0,
            0.0,
            -0.0,
            f32::INFINITY,
            f32::NEG_INFINITY,
            f32::MAX,
            f32::MIN_POSITIVE,
        ] {
            let _ = (exp(x), ln(x), sqrt(x), powf(x, 1.5), powf(2.0, x));
        }
        assert!(ln(-1.0).is_nan() && sqrt(-1.0).is_nan() && exp(f32::NAN).is_nan());
        assert_eq!(ln(0.0), f32::NEG_INFINITY);
        assert_eq!(exp(-200.0), 0.0);
        assert_eq!(exp(200.0), f32::INFINITY);
        assert_eq!(sqrt(0.0), 0.0);
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
