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

use compensate::{Status, TableView};

use crate::poly::fitted::{CENTRE_CODE, RAW_TERMS, U_SHIFT};
use crate::poly::{PolyF32, PolyQ};
use crate::poly_checked::{PolyF32Checked, PolyQChecked};

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
    Some(PolyF32Checked {
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
    Some(PolyQChecked {
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

/// The lowest degree (1-based index into `costs_centi`, one entry per
/// degree from 1) whose cost is above `ours_centi`, if any.
pub fn crossover_degree(costs_centi: &[u64], ours_centi: u64) -> Option<usize> {
    costs_centi
        .iter()
        .position(|&c| c > ours_centi)
        .map(|i| i + 1)
}
