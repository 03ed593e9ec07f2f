//! The polynomial baseline at every degree of the host's accuracy sweep
//! (`SWEEP_*` in `data/well_level_poly.rs`), with the input checks of our
//! paths, so the benchmark can measure what one more degree costs and at
//! which degree the polynomial's temperature update costs more than the
//! table's look-up.
//!
//! Every degree uses its own fitted coefficients. The instruction count of
//! a Horner update does not depend on them in f32 (straight-line multiply
//! and add, no data-dependent branch), but the integer form saturates
//! between steps, which may branch, so real coefficients keep the integer
//! figures honest.

use crate::poly::fitted::{CENTRE_CODE, RAW_TERMS, U_SHIFT};
use crate::poly::{PolyF32, PolyQ};

/// The f32 polynomial with coefficients `coeffs` (`K` per power of the
/// raw code, degree `K - 1`), the fitted baseline's centre and scale.
pub const fn poly_f32<const K: usize>(coeffs: [[f32; K]; RAW_TERMS]) -> PolyF32<RAW_TERMS, K> {
    PolyF32 {
        centre: CENTRE_CODE as f32,
        u_scale: 1.0 / (1u32 << U_SHIFT) as f32,
        coeffs,
        cached: [0.0; RAW_TERMS],
    }
}

/// The integer polynomial with coefficients `coeffs` and raw-code shift
/// `XS`, the fitted baseline's centre and temperature shift.
pub const fn poly_q<const K: usize, const XS: u32>(
    coeffs: [[i32; K]; RAW_TERMS],
) -> PolyQ<RAW_TERMS, K, U_SHIFT, XS> {
    PolyQ {
        centre: CENTRE_CODE,
        coeffs,
        cached: [0; RAW_TERMS],
    }
}

/// The lowest degree (1-based index into `costs_centi`, one entry per
/// degree from 1) whose cost is above `ours_centi`, if any.
pub fn crossover_degree(costs_centi: &[u64], ours_centi: u64) -> Option<usize> {
    costs_centi
        .iter()
        .position(|&c| c > ours_centi)
        .map(|i| i + 1)
}
