//! Deviation bounds of the runtime model against the host's full f64 model,
//! relative, over -55..175 C, for silicon doped 1e14..2e18 cm^-3 (n, p and
//! compensated), with the per-part parameters a station fits (DOS exponent
//! and scale, effective dopant level, majority mobility scale and lattice
//! exponent, piezo exponent). The repository's
//! `tests/runtime_model_deviation.rs` fits them and asserts these bounds for
//! both math backends; the values are the measured worst cases rounded up
//! (measured with libm: ni 2.9 %, majority 0.9 %, mobility 4.1 %,
//! sigma ratio 5.3 %, Hall ratios 6.1 %, piezo ratio 0.13 %; micromath
//! within 0.2 % of these). The sigma ratio grew from 4.0 % when the full
//! model's Si mobility began to follow Arora's fitted temperature trend with
//! the ionized fraction at each temperature (host physics/mobility.rs): the
//! runtime model's power-law mobility on top of its own incomplete
//! ionization follows that to 5.3 % at 1e18 cm^-3 n-type.
//!
//! With the micromath backend add 8 x [`crate::math::BACKEND_REL_ERROR`]
//! (at most 8 chained exp/powf calls per quantity).
//!
//! Outside the documented range the model degrades: at 1e19 cm^-3 the
//! Boltzmann statistics put the majority density off by 34..48 % and the
//! conductivity ratio by 6..9 % (measured; the test asserts both); use a
//! table there.

/// Intrinsic density (Boltzmann, power-law DOS vs Fermi–Dirac, Pässler gap
/// and the full DOS model).
pub const NI_REL: f32 = 0.035;
/// Majority-carrier density.
pub const MAJORITY_REL: f32 = 0.015;
/// Majority drift mobility (needs the fitted mobility scale: the full model
/// pairs Masetti's mobility with incomplete ionization, which moves Si
/// mobility at 1e18 cm^-3 by up to 50 % from Arora's published values).
pub const MOBILITY_REL: f32 = 0.05;
/// Conductivity ratio to 25 C.
pub const CONDUCTIVITY_RATIO_REL: f32 = 0.06;
/// Hall-sensitivity ratios to 25 C (current and voltage bias), n-type up to
/// 1e17 cm^-3 (the Hall plates' range; the constant Hall factor is the
/// limit).
pub const HALL_RATIO_REL: f32 = 0.08;
/// Piezoresistance-factor ratio to 25 C, up to 1e18 cm^-3.
pub const PIEZO_RATIO_REL: f32 = 0.005;
