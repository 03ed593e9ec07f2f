//! Complete Fermi-Dirac integrals of order 1/2 and -1/2, and the inverse of
//! order 1/2.
//!
//! # Normalisation
//! We use the normalised integrals of Blakemore (Solid-State Electron. 25,
//! 1067, 1982), the convention Kanda (IEEE Trans. Electron Devices 29, 64,
//! 1982) writes his piezoresistance factor in:
//!
//! ```text
//! F_j(eta) = 1/Gamma(j+1) * integral_0^inf x^j / (1 + exp(x - eta)) dx
//! ```
//!
//! so that `F_j(eta) -> exp(eta)` for `eta -> -inf` (Boltzmann limit) and
//! `dF_j/deta = F_{j-1}`. Band densities are then `n = Nc F_{1/2}(eta_n)`.
//!
//! # Method and accuracy
//! Antia (1993), ApJS 84, 101, "Rational function approximations for
//! Fermi-Dirac integrals", Tables 2 and 3 (the highest-accuracy rows):
//! for `eta < 2`, `I_j = e^eta R(e^eta)`; for `eta >= 2`,
//! `I_j = eta^(j+1) R(1/eta^2)`, with `I_j` the unnormalised integral. Antia
//! states a maximum relative error of 5.47e-13 for j = 1/2 (our scan against
//! mpmath over eta = -12..120: 5.45e-13 at eta = 87) and 1.23e-12 for j = -1/2;
//! with the published 15-digit coefficients we measure up to 2.81e-12 for
//! j = -1/2 (eta = 33), so we state 3e-12 ([`F_HALF_REL_ERROR`],
//! [`F_MINUS_HALF_REL_ERROR`]). `tests/reference_mpmath.rs` checks both. The inverse uses Antia's Table 8 rational function
//! (stated relative error 4.19e-9 in eta) refined by one Newton step.
//!
//! Every function is finite for every finite `eta`: the `eta < 2` branch never
//! forms `exp(eta)` alone in the logarithmic variants, so `ln F_{1/2}(-2000)`
//! is exact while `F_{1/2}(-2000)` underflows to 0 as it must.

/// Maximum relative error of [`f_half`] stated by Antia (1993), Table 2 row for j = 1/2.
pub const F_HALF_REL_ERROR: f64 = 5.47e-13;
/// Maximum relative error of [`f_minus_half`]: Antia (1993) states 1.23e-12; measured against mpmath with the published coefficients, 2.81e-12 (eta = 33).
pub const F_MINUS_HALF_REL_ERROR: f64 = 3.0e-12;

/// Gamma(3/2) = sqrt(pi)/2, the normaliser of F_{1/2}.
const GAMMA_3_2: f64 = 0.886_226_925_452_758;
/// Gamma(1/2) = sqrt(pi), the normaliser of F_{-1/2}.
const GAMMA_1_2: f64 = 1.772_453_850_905_516;

// Antia (1993) coefficients, j = 1/2, eta < 2 (m1 = k1 = 7), lowest order first.
const A1_HALF: [f64; 8] = [
    5.758_341_529_954_65e6,
    1.309_648_803_558_83e7,
    1.076_086_322_490_13e7,
    3.935_364_218_930_14e6,
    6.424_932_337_156_40e5,
    4.160_319_092_457_77e4,
    7.772_386_785_396_48e2,
    1.0,
];
const B1_HALF: [f64; 8] = [
    6.497_592_619_422_69e6,
    1.707_505_016_257_75e7,
    1.692_881_348_561_60e7,
    7.951_926_477_560_86e6,
    1.831_674_245_545_05e6,
    1.951_559_483_268_32e5,
    8.179_221_066_445_47e3,
    9.021_291_366_421_57e1,
];
// j = 1/2, eta >= 2 (m2 = 10, k2 = 11).
const A2_HALF: [f64; 11] = [
    4.853_783_811_734_15e-14,
    1.644_291_130_307_38e-11,
    3.767_949_422_778_06e-9,
    4.692_338_839_006_44e-7,
    3.406_798_458_031_44e-5,
    1.322_129_959_377_96e-3,
    2.607_683_989_739_13e-2,
    2.486_532_162_662_27e-1,
    1.080_378_619_214_88,
    1.912_475_287_796_76,
    1.0,
];
const B2_HALF: [f64; 12] = [
    7.280_675_717_605_18e-14,
    2.457_454_521_675_85e-11,
    5.621_528_943_752_77e-9,
    6.968_886_345_496_49e-7,
    5.023_600_151_863_94e-5,
    1.920_401_367_565_92e-3,
    3.668_878_080_028_74e-2,
    3.240_952_264_864_68e-1,
    1.164_348_712_001_31,
    1.349_812_440_605_49,
    2.013_118_369_759_30e-1,
    -2.145_624_347_827_59e-2,
];
// j = -1/2, eta < 2 (m1 = k1 = 7).
const A1_MHALF: [f64; 8] = [
    1.714_463_747_044_54e7,
    3.881_483_023_240_68e7,
    3.167_433_853_049_62e7,
    1.145_876_091_921_51e7,
    1.836_963_707_561_53e6,
    1.149_809_981_868_74e5,
    1.982_768_899_247_68e3,
    1.0,
];
const B1_MHALF: [f64; 8] = [
    9.672_825_874_528_99e6,
    2.873_864_367_317_85e7,
    3.260_701_307_341_58e7,
    1.776_570_278_463_67e7,
    4.816_480_222_678_31e6,
    6.137_095_693_332_07e5,
    3.135_958_543_321_14e4,
    4.350_617_250_807_55e2,
];
// j = -1/2, eta >= 2 (m2 = k2 = 11).
const A2_MHALF: [f64; 12] = [
    -4.466_203_419_249_42e-15,
    -1.586_549_911_462_36e-12,
    -4.444_676_270_422_32e-10,
    -6.847_387_916_217_45e-8,
    -6.649_322_385_281_05e-6,
    -3.699_761_701_939_42e-4,
    -1.122_953_936_870_06e-2,
    -1.609_261_021_244_42e-1,
    -8.524_086_128_774_47e-1,
    -7.455_199_537_639_28e-1,
    2.984_352_074_663_72,
    1.0,
];
const B2_MHALF: [f64; 12] = [
    -2.233_101_709_623_69e-15,
    -7.941_932_820_714_64e-13,
    -2.225_643_769_562_28e-10,
    -3.432_994_310_798_45e-8,
    -3.339_196_126_789_07e-6,
    -1.864_322_121_870_88e-4,
    -5.697_644_368_805_29e-3,
    -8.349_045_930_671_94e-2,
    -4.787_708_440_094_40e-1,
    -4.997_592_503_741_48e-1,
    1.867_959_649_930_52,
    4.164_859_704_952_88e-1,
];
// Inverse of the unnormalised I_{1/2}, Antia (1993) Table 8: for f < 4,
// eta = ln(f R(f)); for f >= 4, eta = R(f^(-2/3)) / f^(-2/3).
const INV_A1: [f64; 5] = [
    1.999_266_880_833e4,
    5.702_479_099_336e3,
    6.610_132_843_877e2,
    3.818_838_129_486e1,
    1.0,
];
const INV_B1: [f64; 4] = [
    1.771_804_140_488e4,
    -2.014_785_161_019e3,
    9.130_355_392_717e1,
    -1.670_718_177_489,
];
const INV_A2: [f64; 7] = [
    -1.277_060_388_085e-2,
    7.187_946_804_945e-2,
    -4.262_314_235_106e-1,
    4.997_559_426_872e-1,
    -1.285_579_118_012,
    -3.930_805_454_272e-1,
    1.0,
];
const INV_B2: [f64; 6] = [
    -9.745_794_806_288e-3,
    5.485_432_756_838e-2,
    -3.299_466_243_260e-1,
    4.077_841_975_923e-1,
    -1.145_531_476_975,
    -6.067_091_689_181e-2,
];

/// Evaluates a polynomial with coefficients lowest order first (Horner).
#[inline]
fn poly<const N: usize>(c: &[f64; N], x: f64) -> f64 {
    c.iter().rev().fold(0.0, |acc, &ci| acc * x + ci)
}

/// Normalised F_{1/2}(eta) (Blakemore) for every finite eta, relative error below [`F_HALF_REL_ERROR`].
///
/// ```
/// use host_tools::physics::fermi::f_half;
/// // Boltzmann limit: F_{1/2}(eta) -> exp(eta).
/// assert!((f_half(-30.0) / (-30.0f64).exp() - 1.0).abs() < 1e-12);
/// ```
pub fn f_half(eta: f64) -> f64 {
    if eta < 2.0 {
        let t = eta.exp();
        t * poly(&A1_HALF, t) / poly(&B1_HALF, t) / GAMMA_3_2
    } else {
        let y = 1.0 / (eta * eta);
        eta * eta.sqrt() * poly(&A2_HALF, y) / poly(&B2_HALF, y) / GAMMA_3_2
    }
}

/// Normalised F_{-1/2}(eta) = dF_{1/2}/deta (Blakemore) for every finite eta, relative error below [`F_MINUS_HALF_REL_ERROR`].
///
/// ```
/// use host_tools::physics::fermi::f_minus_half;
/// assert!((f_minus_half(-30.0) / (-30.0f64).exp() - 1.0).abs() < 1e-12);
/// ```
// Same rational-fit form as f_half above, with its own coefficients.
pub fn f_minus_half(eta: f64) -> f64 {
    if eta < 2.0 {
        let t = eta.exp();
        t * poly(&A1_MHALF, t) / poly(&B1_MHALF, t) / GAMMA_1_2
    } else {
        let y = 1.0 / (eta * eta);
        eta.sqrt() * poly(&A2_MHALF, y) / poly(&B2_MHALF, y) / GAMMA_1_2
    }
}

/// Natural logarithm of F_{1/2}(eta) and the slope d ln F_{1/2}/d eta = F_{-1/2}/F_{1/2}, finite for every finite eta.
///
/// This is what the neutrality solver works with: it never underflows (at
/// `eta = -2000` it returns `(-2000 + ln 1, 1)` up to Antia's error).
///
/// ```
/// use host_tools::physics::fermi::{ln_f_half_and_slope, f_half, f_minus_half};
/// let (ln_f, slope) = ln_f_half_and_slope(1.0);
/// assert!((ln_f - f_half(1.0).ln()).abs() < 1e-13);
/// assert!((slope - f_minus_half(1.0) / f_half(1.0)).abs() < 1e-12);
/// ```
#[inline]
pub fn ln_f_half_and_slope(eta: f64) -> (f64, f64) {
    if eta < 2.0 {
        let t = eta.exp();
        let r_half = poly(&A1_HALF, t) / poly(&B1_HALF, t) / GAMMA_3_2;
        let r_mhalf = poly(&A1_MHALF, t) / poly(&B1_MHALF, t) / GAMMA_1_2;
        (eta + r_half.ln(), r_mhalf / r_half)
    } else {
        let y = 1.0 / (eta * eta);
        let r_half = poly(&A2_HALF, y) / poly(&B2_HALF, y) / GAMMA_3_2;
        let r_mhalf = poly(&A2_MHALF, y) / poly(&B2_MHALF, y) / GAMMA_1_2;
        (1.5 * eta.ln() + r_half.ln(), r_mhalf / (eta * r_half))
    }
}

/// Natural logarithm of F_{1/2}(eta), finite for every finite eta.
pub fn ln_f_half(eta: f64) -> f64 {
    ln_f_half_and_slope(eta).0
}

/// Inverse of the normalised F_{1/2}: the eta with `f_half(eta) == y`, for `y > 0`; relative error of F at the result below 1e-12.
///
/// Returns NaN for `y <= 0` or NaN (no real solution). Antia's Table 8 start
/// (error 4.19e-9 in eta) is refined by one Newton step on ln F.
///
/// ```
/// use host_tools::physics::fermi::{f_half, inv_f_half};
/// for eta in [-50.0, -1.0, 0.0, 3.0, 40.0] {
///     assert!((inv_f_half(f_half(eta)) - eta).abs() < 1e-9 * (1.0 + eta.abs()));
/// }
/// ```
pub fn inv_f_half(y: f64) -> f64 {
    if y.is_nan() || y <= 0.0 {
        return f64::NAN;
    }
    // Antia's variable is the unnormalised integral.
    let f = y * GAMMA_3_2;
    let eta0 = if f < 4.0 {
        // ln(f R(f)) written as ln f + ln R(f) so tiny f cannot underflow.
        f.ln() + (poly(&INV_A1, f) / poly(&INV_B1, f)).ln()
    } else {
        let ff = f.powf(-2.0 / 3.0);
        poly(&INV_A2, ff) / (poly(&INV_B2, ff) * ff)
    };
    let (ln_f, slope) = ln_f_half_and_slope(eta0);
    eta0 - (ln_f - y.ln()) / slope
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::physics::check::rel;

    #[test]
    fn rel_helper_can_fail() {
        assert!(rel(1.0, 1.0 + 1e-9) > 1e-10);
    }

    /// Closed forms: F_{-1/2}'s Boltzmann series and the Sommerfeld limit.
    /// Series: F_j(eta) = sum_k (-1)^(k+1) e^(k eta)/k^(j+1) (Blakemore 1982
    /// eq. 2.5), converging for eta < 0; 60 terms at eta <= -1 leave < e^-60.
    #[test]
    fn matches_series_for_negative_eta() {
        for eta in [-40.0, -10.0, -3.0, -1.0] {
            let (mut s_half, mut s_mhalf) = (0.0, 0.0);
            for k in 1..=60 {
                let kf = k as f64;
                let sign = if k % 2 == 1 { 1.0 } else { -1.0 };
                s_half += sign * (kf * eta).exp() / kf.powf(1.5);
                s_mhalf += sign * (kf * eta).exp() / kf.powf(0.5);
            }
            // Tolerance: 2x Antia's stated maximum error; the series is exact to
            // rounding (~1e-16) after 60 terms.
            assert!(
                rel(f_half(eta), s_half) < 2.0 * F_HALF_REL_ERROR,
                "F1/2({eta}): got {} expected {}",
                f_half(eta),
                s_half
            );
            assert!(
                rel(f_minus_half(eta), s_mhalf) < 2.0 * F_MINUS_HALF_REL_ERROR,
                "F-1/2({eta}): got {} expected {}",
                f_minus_half(eta),
                s_mhalf
            );
        }
    }

    /// F_{-1/2} is the derivative of F_{1/2}; central difference with h = 1e-4
    /// has truncation error ~ h^2 F'''/6 ~ 2e-9 relative, hence 1e-7.
    #[test]
    fn minus_half_is_derivative() {
        for eta in [-5.0, -0.5, 1.9, 2.1, 8.0, 60.0] {
            let h = 1e-4;
            let d = (f_half(eta + h) - f_half(eta - h)) / (2.0 * h);
            assert!(rel(d, f_minus_half(eta)) < 1e-7, "eta {eta}: got {d}");
        }
    }

    /// Continuity across Antia's branch point eta = 2: both sides are within
    /// the stated error of the true value, so they agree to 2x that error.
    #[test]
    fn continuous_at_branch_point() {
        let lo = 2.0f64.next_down();
        assert!(rel(f_half(lo), f_half(2.0)) < 2.0 * F_HALF_REL_ERROR + 1e-15);
        assert!(rel(f_minus_half(lo), f_minus_half(2.0)) < 2.0 * F_MINUS_HALF_REL_ERROR + 1e-15);
    }

    /// Logarithmic form stays finite where F itself underflows.
    #[test]
    fn log_form_never_underflows() {
        let (l, s) = ln_f_half_and_slope(-2500.0);
        assert!(rel(l, -2500.0 + 1.0f64.ln()) < 1e-15 && rel(s, 1.0) < 1e-12);
        let (l, s) = ln_f_half_and_slope(5000.0);
        // Sommerfeld: F_{1/2} -> eta^1.5/Gamma(5/2); slope -> 1.5/eta. The first
        // correction is pi^2/8 eta^-2 ~ 5e-8 relative, hence the tolerances.
        let expect = 1.5 * 5000.0f64.ln() - (0.75 * GAMMA_1_2).ln();
        assert!((l - expect).abs() < 1e-7, "ln F: got {l} expected {expect}");
        assert!(rel(s, 1.5 / 5000.0) < 1e-6, "slope: got {s}");
    }

    /// Round trip of the inverse over the whole range the solver uses.
    #[test]
    fn inverse_round_trip() {
        let mut eta = -700.0;
        while eta < 2000.0 {
            let back = inv_f_half(f_half(eta));
            // One Newton step from 4e-9 leaves ~1e-17 + rounding of ln F.
            assert!(
                (back - eta).abs() < 1e-11 * (1.0 + eta.abs()),
                "eta {eta}: back {back}"
            );
            eta += 13.7;
        }
        assert!(inv_f_half(0.0).is_nan() && inv_f_half(-1.0).is_nan());
    }
}
