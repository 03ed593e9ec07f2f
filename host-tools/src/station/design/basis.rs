//! The smooth temperature basis every design curve is built on: the full
//! model's shapes of the curve's family (the physics prior) plus Legendre
//! polynomials over the qualification range (the correction the data may
//! ask for), each taken relative to its value at the reference temperature.
//!
//! Outside the qualification range the polynomials continue along their
//! tangent at the range end: a polynomial correction is only known where it
//! was measured, and a straight continuation is the least it can invent.

use super::super::curves::ShapeCurves;

/// The curve families a design learns.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Family {
    /// ln(temperature signal).
    Thermometer,
    /// Offset (output at zero stimulus) in units of the design's nominal span.
    Offset,
    /// ln|sensitivity| (output per stimulus unit).
    Span,
    /// Mid-scale deviation from the terminal line, fraction of span.
    Bow,
}

impl Family {
    /// Every family, in the order designs and part files store them.
    pub const ALL: [Family; 4] = [
        Family::Thermometer,
        Family::Offset,
        Family::Span,
        Family::Bow,
    ];

    /// Index in [`Family::ALL`].
    pub fn index(self) -> usize {
        match self {
            Family::Thermometer => 0,
            Family::Offset => 1,
            Family::Span => 2,
            Family::Bow => 3,
        }
    }

    /// Name used in reports.
    pub fn name(self) -> &'static str {
        match self {
            Family::Thermometer => "thermometer",
            Family::Offset => "offset",
            Family::Span => "span",
            Family::Bow => "nonlinearity",
        }
    }

    /// Number of full-model shapes in this family's basis.
    pub fn physics_shapes(self) -> usize {
        match self {
            Family::Thermometer | Family::Offset => 1,
            Family::Span => 2,
            Family::Bow => 0,
        }
    }
}

/// Most basis functions of one family (2 physics shapes + 8 polynomials).
pub const MAX_BASIS: usize = 10;

/// Highest Legendre degree a design uses.
pub const MAX_DEGREE: usize = 8;

/// Where the polynomial correction lives and how rich it is.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct BasisSpec {
    /// Coldest qualification temperature, C (polynomial argument -1).
    pub t_lo_c: f64,
    /// Hottest qualification temperature, C (polynomial argument +1).
    pub t_hi_c: f64,
    /// Reference temperature, C: every basis function is zero there.
    pub t_ref_c: f64,
    /// Legendre degree of the correction (0: physics shapes only).
    pub degree: usize,
}

impl BasisSpec {
    /// Number of basis functions of `family`.
    pub fn len(&self, family: Family) -> usize {
        family.physics_shapes() + self.degree.min(MAX_DEGREE)
    }

    /// Whether `family` has no basis function at all.
    pub fn is_empty(&self, family: Family) -> bool {
        self.len(family) == 0
    }

    /// Raw (not reference-subtracted) basis values at `t_c` into `out`.
    pub fn raw(&self, curves: &ShapeCurves, family: Family, t_c: f64, out: &mut [f64; MAX_BASIS]) {
        let mut k = 0;
        match family {
            Family::Thermometer => {
                out[0] = curves.interp(&curves.ln_rho_rel, t_c);
                k = 1;
            }
            Family::Offset => {
                out[0] = curves.interp(&curves.offset_shape, t_c);
                k = 1;
            }
            Family::Span => {
                out[0] = curves.interp(&curves.ln_gain_rel, t_c);
                out[1] = curves.interp(&curves.ln_gain_dlnn, t_c);
                k = 2;
            }
            Family::Bow => {}
        }
        let d = self.degree.min(MAX_DEGREE);
        if d == 0 {
            return;
        }
        let half = 0.5 * (self.t_hi_c - self.t_lo_c);
        let mid = 0.5 * (self.t_hi_c + self.t_lo_c);
        let x = if half > 0.0 { (t_c - mid) / half } else { 0.0 };
        let xc = x.clamp(-1.0, 1.0);
        // Legendre recursion (n+1) P_{n+1} = (2n+1) x P_n - n P_{n-1}, and
        // P'_n(+-1) = (+-1)^(n-1) n (n+1) / 2 for the tangent beyond the range.
        let (mut p_prev, mut p) = (1.0, xc);
        for n in 1..=d {
            let end_slope = if xc > 0.0 {
                (n * (n + 1)) as f64 / 2.0
            } else if n % 2 == 0 {
                -((n * (n + 1)) as f64) / 2.0
            } else {
                (n * (n + 1)) as f64 / 2.0
            };
            out[k] = p + end_slope * (x - xc);
            k += 1;
            let next = ((2 * n + 1) as f64 * xc * p - n as f64 * p_prev) / (n + 1) as f64;
            p_prev = p;
            p = next;
        }
    }

    /// Basis values of `family` at `t_c`, each minus its value at the
    /// reference temperature; returns how many were written.
    pub fn eval(
        &self,
        curves: &ShapeCurves,
        family: Family,
        t_c: f64,
        out: &mut [f64; MAX_BASIS],
    ) -> usize {
        let mut at_ref = [0.0; MAX_BASIS];
        self.raw(curves, family, self.t_ref_c, &mut at_ref);
        self.raw(curves, family, t_c, out);
        let n = self.len(family);
        for (o, r) in out.iter_mut().zip(at_ref).take(n) {
            *o -= r;
        }
        n
    }

    /// Roughness penalty weight of each basis function: 0 for the physics
    /// shapes (the prior is free), `k^4` for the degree-k polynomial (its
    /// curvature energy grows about as k^4), so the ridge pulls the
    /// correction towards the physics and towards straightness.
    pub fn penalty(&self, family: Family) -> Vec<f64> {
        let mut v = vec![0.0; family.physics_shapes()];
        v.extend((1..=self.degree.min(MAX_DEGREE)).map(|k| (k as f64).powi(4)));
        v
    }
}

/// A weighted sum of basis functions.
pub fn dot(weights: &[f64], basis: &[f64; MAX_BASIS]) -> f64 {
    weights.iter().zip(basis).map(|(w, b)| w * b).sum()
}

#[cfg(test)]
mod tests {
    use super::super::super::curves::analytic_curves;
    use super::*;

    fn curves() -> ShapeCurves {
        analytic_curves(0.0)
    }

    #[test]
    fn basis_is_zero_at_reference_and_legendre_inside() {
        let c = curves();
        let spec = BasisSpec {
            t_lo_c: -40.0,
            t_hi_c: 120.0,
            t_ref_c: 25.0,
            degree: 3,
        };
        let mut b = [0.0; MAX_BASIS];
        let n = spec.eval(&c, Family::Span, 25.0, &mut b);
        assert_eq!(n, 5);
        // Every function minus itself at the reference: exactly zero.
        assert!(b[..n].iter().all(|&v| v == 0.0), "{b:?}");
        // At 100 C, x = 0.75: P2 = (3x^2 - 1)/2, P3 = (5x^3 - 3x)/2, minus
        // their values at 25 C (x = -0.1875); rounding only (1e-12).
        spec.eval(&c, Family::Bow, 100.0, &mut b);
        let p2 = |x: f64| 0.5 * (3.0 * x * x - 1.0);
        let p3 = |x: f64| 0.5 * (5.0 * x * x * x - 3.0 * x);
        let expected = [
            0.75 + 0.1875,
            p2(0.75) - p2(-0.1875),
            p3(0.75) - p3(-0.1875),
        ];
        for (k, e) in expected.iter().enumerate() {
            assert!(
                (b[k] - e).abs() < 1e-12,
                "P{} got {}, expected {e}",
                k + 1,
                b[k]
            );
        }
    }

    #[test]
    fn polynomials_continue_along_their_tangent() {
        let c = curves();
        let spec = BasisSpec {
            t_lo_c: 0.0,
            t_hi_c: 100.0,
            t_ref_c: 50.0,
            degree: 2,
        };
        let mut b = [0.0; MAX_BASIS];
        // P2 at x = 1.2 continued: P2(1) + P2'(1) * 0.2 = 1 + 3 * 0.2 = 1.6;
        // at x = -1.2: 1 + (-3) * (-0.2) = 1.6; both minus P2(0) = -0.5.
        for t in [110.0, -10.0] {
            spec.eval(&c, Family::Bow, t, &mut b);
            assert!((b[1] - 2.1).abs() < 1e-12, "t {t}: {}", b[1]);
        }
        // The check can fail: the polynomial itself would give 1.66 at 1.2.
        assert!((b[1] - (0.5 * (3.0 * 1.44 - 1.0) + 0.5)).abs() > 0.05);
    }
}
