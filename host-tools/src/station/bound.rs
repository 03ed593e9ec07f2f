//! Analytic interpolation-error bound of a table plan, from the standard
//! remainder formulas, to report beside the dense sampling.
//!
//! Linear interpolation on spacing h: |e| <= h^2 max|f''| / 8 (common
//! practice). Cubic Hermite with slopes from three-point differences (slope
//! error h^2 |f'''| / 6, weighted by the Hermite slope basis, at most 4h/27):
//! |e| <= 2 h^3 max|f'''| / 81 + h^4 max|f''''| / 384. At the two end
//! intervals the slopes are one-sided (error h |f''| / 2), giving
//! 2 h^2 max|f''| / 27 + h^4 max|f''''| / 384; the larger of the two is
//! reported. This holds for smooth monotone data, where the Fritsch-Carlson
//! limiter of the monotone cubic leaves the slopes alone.
//!
//! A 2-D correction interpolated bilinearly on spacings h_t, h_r: |e| <=
//! h_t^2 max|g_tt| / 8 + h_r^2 max|g_rr| / 8 (the linear remainder applied
//! along each axis in turn; common practice). An element's bow that a 1-D
//! table leaves uncorrected enters the bound whole.

use super::table::{InterpKind, TableFrame, TablePlan};

/// Largest |k-th derivative| of `f` on [lo, hi], by finite differences on
/// 400 sub-intervals.
fn max_derivative(f: &dyn Fn(f64) -> f64, lo: f64, hi: f64, k: u32) -> f64 {
    let n = 400;
    let h = (hi - lo) / n as f64;
    let d = |x: f64| -> f64 {
        // Central differences of order k with step h (binomial weights).
        let mut acc = 0.0;
        let mut binom = 1.0;
        for j in 0..=k {
            let sign = if j % 2 == 0 { 1.0 } else { -1.0 };
            acc += sign * binom * f(x + (k as f64 / 2.0 - j as f64) * h);
            binom = binom * (k - j) as f64 / (j + 1) as f64;
        }
        acc / h.powi(k as i32)
    };
    let margin = k as f64 * h;
    (0..=n)
        .map(|i| d((lo + margin + (hi - lo - 2.0 * margin) * i as f64 / n as f64).clamp(lo, hi)))
        .fold(0.0, |m: f64, v| m.max(v.abs()))
}

fn interp_bound(f: &dyn Fn(f64) -> f64, lo: f64, hi: f64, n: usize, kind: InterpKind) -> f64 {
    let h = (hi - lo) / (n.max(2) - 1) as f64;
    let linear = h * h * max_derivative(f, lo, hi, 2) / 8.0;
    match kind {
        InterpKind::Linear | InterpKind::Bilinear2d => linear,
        InterpKind::MonotoneCubic => {
            let f2 = max_derivative(f, lo, hi, 2);
            let f4_term = h.powi(4) * max_derivative(f, lo, hi, 4) / 384.0;
            let interior = 2.0 * h.powi(3) * max_derivative(f, lo, hi, 3) / 81.0 + f4_term;
            let ends = 2.0 * h * h * f2 / 27.0 + f4_term;
            interior.max(ends)
        }
    }
}

/// The bound in ppm of span: offset, gain and thermometer errors carried to
/// the reading and added.
pub fn interpolation_bound_ppm(
    frame: &TableFrame<'_>,
    plan: &TablePlan,
    drift_slope_ppm_per_k: f64,
) -> f64 {
    let fs = frame.fs_hi - frame.fs_lo;
    let (lo, hi) = (frame.t_lo_c, frame.t_hi_c);
    let e_off = interp_bound(
        &|t| frame.offset_codes(t),
        lo,
        hi,
        plan.n_t,
        plan.interpolation,
    );
    let e_gain = interp_bound(
        &|t| frame.gain_per_code(t),
        lo,
        hi,
        plan.n_t,
        plan.interpolation,
    );
    let m = frame.model;
    let e_t = interp_bound(
        &|s| m.temperature(s),
        frame.sig_lo,
        frame.sig_hi,
        plan.n_sig,
        plan.interpolation,
    );
    let limits = frame.raw_limits();
    let mut max_gain: f64 = 0.0;
    let mut max_d: f64 = 0.0;
    for k in 0..=200 {
        let t = lo + (hi - lo) * k as f64 / 200.0;
        max_gain = max_gain.max(frame.gain_per_code(t).abs());
        let off = frame.offset_codes(t);
        max_d = max_d
            .max((f64::from(limits.raw_lo) - off).abs())
            .max((f64::from(limits.raw_hi) - off).abs());
    }
    (e_off * max_gain + e_gain * max_d) / fs * 1e6
        + e_t * drift_slope_ppm_per_k
        + correction_bound(frame, plan) / fs * 1e6
}

/// Samples per axis of the 2-D correction when its derivatives are bounded.
const GRID_SAMPLES: usize = 80;

/// What the 2-D correction (or its absence) adds, stimulus units: the
/// bilinear remainder for a plan with one, the whole bow for one without.
fn correction_bound(frame: &TableFrame<'_>, plan: &TablePlan) -> f64 {
    if frame.bow.is_none() {
        return 0.0;
    }
    let limits = frame.raw_limits();
    let (r_lo, r_hi) = (f64::from(limits.raw_lo), f64::from(limits.raw_hi));
    let (t_lo, t_hi) = (frame.t_lo_c, frame.t_hi_c);
    let g = |t: f64, r: f64| frame.grid_correction(t, r);
    let n = GRID_SAMPLES;
    let (dt, dr) = ((t_hi - t_lo) / n as f64, (r_hi - r_lo) / n as f64);
    let (mut g_max, mut g_tt, mut g_rr): (f64, f64, f64) = (0.0, 0.0, 0.0);
    for i in 0..=n {
        let t = t_lo + dt * i as f64;
        for j in 0..=n {
            let r = r_lo + dr * j as f64;
            g_max = g_max.max(g(t, r).abs());
            // Central second differences inside, one step in from the edges.
            let tc = t.clamp(t_lo + dt, t_hi - dt);
            let rc = r.clamp(r_lo + dr, r_hi - dr);
            g_tt = g_tt.max(((g(tc + dt, r) - 2.0 * g(tc, r) + g(tc - dt, r)) / (dt * dt)).abs());
            g_rr = g_rr.max(((g(t, rc + dr) - 2.0 * g(t, rc) + g(t, rc - dr)) / (dr * dr)).abs());
        }
    }
    if plan.n_raw == 0 {
        return g_max;
    }
    let h_t = (t_hi - t_lo) / (plan.n_t.max(2) - 1) as f64;
    let (_, step_codes) = frame.raw_axis(plan.n_raw);
    let h_r = f64::from(step_codes);
    h_t * h_t * g_tt / 8.0 + h_r * h_r * g_rr / 8.0
}
