//! f32 interpolation kernels: linear, monotone cubic Hermite, bilinear.

use super::{Nodes, Position};

/// Linear interpolation at `p`; exact at nodes, never outside the two
/// neighbouring node values (the form `v0 + t (v1 - v0)` is monotone in `t`
/// under correctly rounded arithmetic).
#[inline]
pub fn linear<N: Nodes<Value = f32>>(nodes: &N, p: Position) -> f32 {
    if p.frac == 0.0 {
        return nodes.node(p.index);
    }
    let (v0, v1) = nodes.pair(p.index);
    v0 + p.frac * (v1 - v0)
}

/// Fritsch–Carlson tangent at node `k` (value per node step).
///
/// Interior: harmonic mean of the neighbouring secants when they share a
/// sign, else zero (Fritsch & Butland 1984, SIAM J. Sci. Stat. Comput. 5(2)
/// 300-304, eq. 5). Ends: the one-sided secant. Both keep
/// `alpha = m/d` and `beta` in `[0, 2]`, inside the monotonicity square
/// `[0, 3]^2` of Fritsch & Carlson 1980 (SIAM J. Numer. Anal. 17(2) 238-246,
/// section 4).
#[inline]
fn tangent<N: Nodes<Value = f32>>(nodes: &N, k: usize) -> f32 {
    let n = nodes.len();
    let last = n.saturating_sub(1);
    if k == 0 {
        return nodes.node(1) - nodes.node(0);
    }
    if k >= last {
        return nodes.node(last) - nodes.node(last.saturating_sub(1));
    }
    let a = nodes.node(k) - nodes.node(k - 1);
    let b = nodes.node(k + 1) - nodes.node(k);
    if a * b <= 0.0 {
        return 0.0;
    }
    // a/(a+b) and b are finite and a+b != 0 because a and b share a sign;
    // written as 2 b (a/(a+b)) to avoid overflow of a*b.
    2.0 * b * (a / (a + b))
}

/// Monotone piecewise-cubic Hermite interpolation at `p`; exact at nodes,
/// C1, and monotone wherever the node values are.
#[inline]
pub fn cubic_monotone<N: Nodes<Value = f32>>(nodes: &N, p: Position) -> f32 {
    let v0 = nodes.node(p.index);
    if p.frac == 0.0 {
        return v0;
    }
    let k1 = p.index.wrapping_add(1);
    let v1 = nodes.node(k1);
    let m0 = tangent(nodes, p.index);
    let m1 = tangent(nodes, k1);
    let d = v1 - v0;
    let t = p.frac;
    // Hermite form in powers of t: v0 + m0 t + c2 t^2 + c3 t^3.
    let c2 = 3.0 * d - 2.0 * m0 - m1;
    let c3 = m0 + m1 - 2.0 * d;
    v0 + t * (m0 + t * (c2 + t * c3))
}

/// Bilinear interpolation on a row-major grid (`rows` nodes along the first
/// axis, `cols` along the second), at row position `r` and column position
/// `c`. Exact at grid nodes.
#[inline]
pub fn bilinear<N: Nodes<Value = f32>>(nodes: &N, cols: usize, r: Position, c: Position) -> f32 {
    let base = r.index.wrapping_mul(cols).wrapping_add(c.index);
    let at = |i: usize| {
        let v0 = nodes.node(i);
        if c.frac == 0.0 {
            v0
        } else {
            v0 + c.frac * (nodes.node(i.wrapping_add(1)) - v0)
        }
    };
    let w0 = at(base);
    if r.frac == 0.0 {
        return w0;
    }
    let w1 = at(base.wrapping_add(cols));
    w0 + r.frac * (w1 - w0)
}

#[cfg(test)]
mod tests {
    use super::super::Axis;
    use super::*;

    const AXIS: Axis = Axis {
        start: 0.0,
        step: 1.0,
        len: 5,
    };

    #[test]
    fn linear_table() {
        let v = [0.0f32, 10.0, 30.0, 30.0, -10.0];
        // (x, expected); exact binary fractions so equality is exact.
        let cases = [
            (0.0, 0.0),
            (0.5, 5.0),
            (1.25, 15.0),
            (2.5, 30.0),
            (3.75, 0.0),
            (4.0, -10.0),
            (9.0, -10.0),
        ];
        for (x, want) in cases {
            let got = linear(&v, AXIS.locate(x));
            assert_eq!(got, want, "linear({x}) = {got}, expected {want}");
        }
    }

    #[test]
    fn cubic_reproduces_a_line_and_flattens_at_extrema() {
        // On a line all tangents equal the secant, so the cubic is the line.
        let line = [1.0f32, 3.0, 5.0, 7.0, 9.0];
        for i in 0..=16 {
            let x = i as f32 / 4.0;
            let got = cubic_monotone(&line, AXIS.locate(x));
            let want = 1.0 + 2.0 * x;
            // 4 ulp at 9: one rounding per Horner step.
            assert!(
                (got - want).abs() <= 4.0 * f32::EPSILON * 9.0,
                "x={x}: got {got}, expected {want}"
            );
        }
        // A local maximum at node 2: tangent zero, no overshoot above 30.
        let peak = [0.0f32, 20.0, 30.0, 20.0, 0.0];
        for i in 0..=40 {
            let x = i as f32 / 10.0;
            let got = cubic_monotone(&peak, AXIS.locate(x));
            assert!(got <= 30.0, "x={x}: {got} overshoots the data maximum 30");
        }
    }

    #[test]
    fn bilinear_table() {
        // 2 x 3 grid, f(r, c) = 10 r + c is reproduced exactly (bilinear).
        let g = [0.0f32, 1.0, 2.0, 10.0, 11.0, 12.0];
        let ra = Axis {
            start: 0.0,
            step: 1.0,
            len: 2,
        };
        let ca = Axis {
            start: 0.0,
            step: 1.0,
            len: 3,
        };
        for (r, c) in [(0.0, 0.0), (1.0, 2.0), (0.5, 1.5), (0.25, 0.75), (1.0, 0.5)] {
            let got = bilinear(&g, 3, ra.locate(r), ca.locate(c));
            let want = 10.0 * r + c;
            assert!(
                (got - want).abs() <= 1e-6,
                "({r},{c}): got {got}, expected {want}"
            );
        }
    }
}
