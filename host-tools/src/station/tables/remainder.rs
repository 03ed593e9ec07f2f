//! Remainder bounds of the runtime crate's 1-D interpolation on a uniform
//! axis, per node interval, for a tabulated function f known everywhere
//! (the fitted part model).
//!
//! The part model is not C2: the full model's mobility pairing factor is
//! interpolated bilinearly on a 10 K grid (physics/mobility.rs), so the
//! slope of ln rho and of its doping derivative kinks every 10 K (by up to
//! ~9 % of the offset shape's slope), smoothed over ~1 K by the 0.5 K shape
//! table. A bound built on max|f''| or max|f''''| from difference quotients
//! is then either wrong (step wider than the kink) or absurd (step narrower).
//! So the remainder is written in Peano-kernel form, which needs only f' of
//! bounded variation (Peano kernel theorem; de Boor, "A Practical Guide to
//! Splines", Springer 1978, ch. I and III, chapters recalled from memory):
//!
//! - Linear, spacing h: `f(x) - p(x) = -int K1(x,s) f''(s) ds` with
//!   `K1 = (x-x0)(x1-s)/h` for s >= x and `(s-x0)(x1-x)/h` for s <= x, K1 >= 0
//!   and `int K1 ds = (x-x0)(x1-x)/2`; so |e| <= int K1 |df'|, which is
//!   h^2 max|f''| / 8 for a C2 function and exact where f'' keeps its sign.
//! - Cubic Hermite with exact slopes (it reproduces cubics, hence lines):
//!   `R(x) = int K2(x,s) f''(s) ds`, K2 the remainder of the ramp
//!   (y - s)_+ (closed form in [`hermite_kernel`], int |K2| ds <= h^2/16);
//!   and where f is smooth, also |R| <= h^4 max|f''''| / 384 (the Hermite
//!   remainder f''''(xi)(x-x0)^2(x-x1)^2/4!); per interval the smaller.
//!   The runtime's slopes m_k differ from f'(x_k); the Hermite form is
//!   linear in the slopes, so they add exactly
//!   `h (d0 t (1-t)^2 - d1 t^2 (1-t))` with `d_k = f'(x_k) - m_k`,
//!   t = (x-x0)/h, bounded by `h t (1-t) (|d0| (1-t) + |d1| t)`.
//!
//! The slope errors d_k are computed, not estimated: the runtime's tangents
//! (compensate/src/interp: one-sided secant at the two end nodes, the
//! Fritsch-Butland harmonic mean of the neighbouring secants inside, zero
//! where they differ in sign; Fritsch & Butland 1984, SIAM J. Sci. Stat.
//! Comput. 5, 300, eq. 5; Fritsch & Carlson 1980, SIAM J. Numer. Anal. 17,
//! 238) from the node values, against the model's derivative. Where the
//! limiter acts (a secant sign change, or a harmonic mean far from the
//! arithmetic one near a flat stretch) d_k is O(h) and the method only
//! second order; the bound carries exactly that, with no assumption of the
//! O(h^3) slope accuracy of smooth monotone data.

use crate::station::table::InterpKind;

/// What the bound needs of one tabulated function on a uniform node axis.
#[derive(Debug, Clone, PartialEq)]
pub struct Column {
    // Plain documented structs read alike (stationdb/run.rs, design/file.rs); each is its own.
    /// First node.
    pub x0: f64,
    /// Node spacing (function argument units).
    pub h: f64,
    /// Function values at the nodes.
    pub values: Vec<f64>,
    /// The function's derivative at the nodes.
    pub slopes: Vec<f64>,
    /// Variation of f' on fine cells covering the nodes' span:
    /// (one end, other end, |f'(end) - f'(other end)|), any order.
    pub curvature: Vec<(f64, f64, f64)>,
    /// Largest |f''''| of the smooth function over each interval
    /// (`values.len() - 1` entries; infinite where unknown).
    pub m4: Vec<f64>,
}

/// Positions per interval at which the kernel bounds are maximised.
const KERNEL_POINTS: usize = 64;

/// The runtime's tangents (per unit argument) for node values `v` on
/// spacing `h`: see the module docs.
pub fn runtime_tangents(v: &[f64], h: f64) -> Vec<f64> {
    let n = v.len();
    (0..n)
        .map(|k| {
            if n < 2 {
                0.0
            } else if k == 0 {
                (v[1] - v[0]) / h
            } else if k == n - 1 {
                (v[n - 1] - v[n - 2]) / h
            } else {
                let (a, b) = (v[k] - v[k - 1], v[k + 1] - v[k]);
                if a * b <= 0.0 {
                    0.0
                } else {
                    2.0 * b * (a / (a + b)) / h
                }
            }
        })
        .collect()
}

/// Peano kernel K2(x, s) of cubic Hermite interpolation with exact slopes
/// on one interval of length `h`, at t = (x-x0)/h and sigma = (s-x0)/h: the
/// ramp's value minus its Hermite interpolant (ramp values 0 and h(1-sigma),
/// slopes 0 and 1).
pub fn hermite_kernel(h: f64, t: f64, sigma: f64) -> f64 {
    let ramp = (t - sigma).max(0.0);
    h * (ramp - (1.0 - sigma) * (3.0 * t * t - 2.0 * t * t * t) - (t * t * t - t * t))
}

/// Linear-interpolation Peano kernel K1(x, s) at t and sigma (>= 0).
pub fn linear_kernel(h: f64, t: f64, sigma: f64) -> f64 {
    if sigma >= t {
        h * t * (1.0 - sigma)
    } else {
        h * sigma * (1.0 - t)
    }
}

impl Column {
    /// Largest over each interval of `int |kernel(x, s)| |df'(s)|`. Both
    /// kernels are linear in s on either side of s = x, so over a cell
    /// their modulus peaks at a cell end or at s = x: taking that peak
    /// makes the sum an upper bound wherever in the cell f' varies.
    fn kernel_bounds(&self, kernel: &dyn Fn(f64, f64, f64) -> f64) -> Vec<f64> {
        let k = self.values.len().saturating_sub(1);
        let mut cells: Vec<Vec<(f64, f64, f64)>> = vec![Vec::new(); k];
        for &(a, b, w) in &self.curvature {
            let (sa, sb) = ((a - self.x0) / self.h, (b - self.x0) / self.h);
            let (lo, hi) = (sa.min(sb), sa.max(sb));
            if hi < 0.0 || lo > k as f64 {
                continue;
            }
            let first = (lo.max(0.0).floor() as usize).min(k - 1);
            let last = (hi.floor().max(0.0) as usize).min(k - 1);
            for (i, c) in cells.iter_mut().enumerate().take(last + 1).skip(first) {
                let x = i as f64;
                c.push(((lo - x).max(0.0), (hi - x).min(1.0), w));
            }
        }
        cells
            .iter()
            .map(|c| {
                (1..KERNEL_POINTS)
                    .map(|j| {
                        let t = j as f64 / KERNEL_POINTS as f64;
                        c.iter()
                            .map(|&(lo, hi, w)| {
                                let mut peak =
                                    kernel(self.h, t, lo).abs().max(kernel(self.h, t, hi).abs());
                                if lo < t && t < hi {
                                    peak = peak.max(kernel(self.h, t, t).abs());
                                }
                                peak * w
                            })
                            .sum::<f64>()
                    })
                    .fold(0.0, f64::max)
            })
            .collect()
    }

    /// Bound of |f - p| on each interval for `kind` (the 2-D plan's columns
    /// are linear).
    pub fn interval_bounds(&self, kind: InterpKind) -> Vec<f64> {
        match kind {
            InterpKind::Linear | InterpKind::Bilinear2d => self.kernel_bounds(&linear_kernel),
            InterpKind::MonotoneCubic => {
                let h = self.h;
                let m = runtime_tangents(&self.values, h);
                let d: Vec<f64> = m
                    .iter()
                    .zip(&self.slopes)
                    .map(|(m, f)| (f - m).abs())
                    .collect();
                self.kernel_bounds(&hermite_kernel)
                    .iter()
                    .enumerate()
                    .map(|(i, &kern)| {
                        let smooth = h.powi(4) * self.m4[i] / 384.0;
                        kern.min(smooth) + h * hermite_slope_weight(d[i], d[i + 1])
                    })
                    .collect()
            }
        }
    }
}

/// max over t in [0, 1] of `t (1-t) (a (1-t) + b t)` for a, b >= 0: zero at
/// both ends, so the maximum sits where the derivative
/// `a + 2 (b - 2a) t - 3 (b - a) t^2` vanishes.
pub fn hermite_slope_weight(a: f64, b: f64) -> f64 {
    let g = |t: f64| t * (1.0 - t) * (a * (1.0 - t) + b * t);
    let d = b - a;
    let mut best = g(0.5);
    if d.abs() > 1e-12 * (a + b) {
        let (qa, qb, qc) = (3.0 * d, -2.0 * (d - a), -a);
        let disc = (qb * qb - 4.0 * qa * qc).max(0.0).sqrt();
        for t in [(-qb + disc) / (2.0 * qa), (-qb - disc) / (2.0 * qa)] {
            if (0.0..=1.0).contains(&t) {
                best = best.max(g(t));
            }
        }
    }
    best
}

/// Central differences of orders 1 to 4 of `f` at `x` with step `step`
/// (binomial weights, truncation error O(step^2); common practice).
pub fn central_differences(f: &dyn Fn(f64) -> f64, x: f64, step: f64) -> [f64; 4] {
    let v = [-2.0, -1.0, 0.0, 1.0, 2.0].map(|m| f(x + m * step));
    let d1 = (v[3] - v[1]) / (2.0 * step);
    let d2 = (v[3] - 2.0 * v[2] + v[1]) / (step * step);
    let d3 = (v[4] - 2.0 * v[3] + 2.0 * v[1] - v[0]) / (2.0 * step.powi(3));
    let d4 = (v[4] - 4.0 * v[3] + 6.0 * v[2] - 4.0 * v[1] + v[0]) / step.powi(4);
    [d1, d2, d3, d4]
}

/// Derivatives 2..4 of the inverse function x(y) from derivatives 1..4 of
/// y(x) (reversion of the Taylor series; Abramowitz & Stegun 1964, Handbook
/// of Mathematical Functions, 3.6.25, number recalled from memory; the test
/// checks the forms on an exact inverse pair):
/// x'' = -y''/y'^3, x''' = (3y''^2 - y'y''')/y'^5,
/// x'''' = (-15y''^3 + 10y'y''y''' - y'^2 y'''')/y'^7.
pub fn inverse_derivatives(d: [f64; 4]) -> [f64; 3] {
    let [y1, y2, y3, y4] = d;
    [
        -y2 / y1.powi(3),
        (3.0 * y2 * y2 - y1 * y3) / y1.powi(5),
        (-15.0 * y2.powi(3) + 10.0 * y1 * y2 * y3 - y1 * y1 * y4) / y1.powi(7),
    ]
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn slope_weight_matches_brute_force() {
        // (a, b): the closed form against 1e5 samples of t; the sampled
        // maximum is below the true one by at most ~(1e-5)^2 relative.
        for (a, b) in [(1.0, 0.0), (0.0, 1.0), (1.0, 1.0), (0.3, 2.0), (5.0, 0.1)] {
            let got = hermite_slope_weight(a, b);
            let brute = (0..=100_000)
                .map(|k| {
                    let t = k as f64 / 1e5;
                    t * (1.0 - t) * (a * (1.0 - t) + b * t)
                })
                .fold(0.0, f64::max);
            assert!(
                got >= brute && got - brute < 1e-9,
                "a {a} b {b}: got {got}, brute force {brute}"
            );
        }
        // Both slopes off by the same amount: at most a quarter (t = 1/2).
        assert!((hermite_slope_weight(1.0, 1.0) - 0.25).abs() < 1e-15);
    }

    #[test]
    fn inverse_derivatives_of_exp_and_log() {
        // y = exp(x/50) has inverse x = 50 ln y: x'' = -50/y^2,
        // x''' = 100/y^3, x'''' = -300/y^4 (exact derivatives).
        for x in [-20.0, 0.0, 60.0] {
            let y = f64::exp(x / 50.0);
            let d = [1.0, 2.0, 3.0, 4.0].map(|k: f64| y / 50f64.powf(k));
            let got = inverse_derivatives(d);
            let want = [-50.0 / (y * y), 100.0 / y.powi(3), -300.0 / y.powi(4)];
            for (g, w) in got.iter().zip(want) {
                // Closed forms, rounding only.
                assert!(
                    (g - w).abs() < 1e-12 * w.abs(),
                    "x {x}: got {g}, expected {w}"
                );
            }
        }
    }

    #[test]
    fn bounds_hold_and_are_attained_for_a_quadratic_and_a_kink() {
        // f = x^2 on 0..4 with 5 nodes (f'' = 2) and g = |x - 1.5| (a kink of
        // slope jump 2 inside interval 1), f' variation on 4000 cells.
        let cells = |fp: &dyn Fn(f64) -> f64| -> Vec<(f64, f64, f64)> {
            (0..4000)
                .map(|j| {
                    let (a, b) = (j as f64 / 1000.0, (j + 1) as f64 / 1000.0);
                    (a, b, (fp(b) - fp(a)).abs())
                })
                .collect()
        };
        let quad = |x: f64| x * x;
        let kink = |x: f64| (x - 1.5f64).abs();
        type F<'a> = &'a dyn Fn(f64) -> f64;
        // (f, f', max|f''''|: infinite where f is not smooth)
        let cases: [(F, F, f64); 2] = [
            (&quad, &|x| 2.0 * x, 0.0),
            (&kink, &|x: f64| (x - 1.5).signum(), f64::INFINITY),
        ];
        for (k, (f, fp, m4)) in cases.into_iter().enumerate() {
            let values: Vec<f64> = (0..5).map(|i| f(i as f64)).collect();
            let slopes: Vec<f64> = (0..5).map(|i| fp(i as f64)).collect();
            let col = Column {
                x0: 0.0,
                h: 1.0,
                values: values.clone(),
                slopes,
                curvature: cells(fp),
                m4: vec![m4; 4],
            };
            for kind in [InterpKind::Linear, InterpKind::MonotoneCubic] {
                let bounds = col.interval_bounds(kind);
                let tangents = runtime_tangents(&values, 1.0);
                for (i, bound) in bounds.iter().enumerate() {
                    // The runtime kernels' arithmetic in f64, sampled finely.
                    let (v0, v1) = (values[i], values[i + 1]);
                    let (m0, m1) = (tangents[i], tangents[i + 1]);
                    let worst = (0..=1000)
                        .map(|j| {
                            let t = j as f64 / 1000.0;
                            let d = v1 - v0;
                            let p = match kind {
                                InterpKind::MonotoneCubic => {
                                    v0 + t
                                        * (m0
                                            + t * ((3.0 * d - 2.0 * m0 - m1)
                                                + t * (m0 + m1 - 2.0 * d)))
                                }
                                _ => v0 + t * d,
                            };
                            (p - f(i as f64 + t)).abs()
                        })
                        .fold(0.0, f64::max);
                    // The bound holds (1e-9: rounding of 4000 cell sums and
                    // the 64-point maximisation of a piecewise-linear kernel);
                    // linear on x^2 is attained (h^2 f''/8 = 0.25); else
                    // within 3x: the slope term's weight t(1-t)(...) can
                    // reach 1/4 against the 4/27 of a one-sided error.
                    let tight = if k == 0 && kind == InterpKind::Linear {
                        1.01
                    } else {
                        3.0
                    };
                    assert!(
                        worst <= bound + 1e-9 && (*bound <= tight * worst || *bound < 1e-12),
                        "case {k} {kind:?} interval {i}: worst {worst}, bound {bound}"
                    );
                }
            }
        }
    }
}
