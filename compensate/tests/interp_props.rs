//! Property tests of the interpolation kernels and the Q/f32 agreement.

use compensate::interp::{Axis, AxisQ, cubic_monotone, cubic_monotone_q, linear, linear_q};
use proptest::prelude::*;

/// Steps whose multiples and quotients are exact in f32 (dyadic or small
/// integers), so node abscissae are hit exactly.
const STEPS: [f32; 7] = [0.25, 0.5, 1.0, 2.0, 2.5, 5.0, 10.0];

fn table() -> impl Strategy<Value = (f32, f32, Vec<f32>)> {
    (
        -100i32..100,
        0usize..STEPS.len(),
        prop::collection::vec(-1.0e4f32..1.0e4, 2..40),
    )
        .prop_map(|(s, k, v)| (s as f32, STEPS[k], v))
}

fn axis(start: f32, step: f32, n: usize) -> Axis {
    Axis {
        start,
        step,
        len: n,
    }
}

proptest! {
    #[test]
    fn nodes_are_reproduced_exactly((start, step, v) in table()) {
        let a = axis(start, step, v.len());
        let nodes = v.as_slice();
        for (k, &want) in v.iter().enumerate() {
            let x = start + step * k as f32;
            prop_assert_eq!(linear(&nodes, a.locate(x)), want, "linear node {}", k);
            prop_assert_eq!(cubic_monotone(&nodes, a.locate(x)), want, "cubic node {}", k);
        }
    }

    #[test]
    fn interpolants_are_continuous((start, step, v) in table(), u in 0.0f32..1.0, h in 1e-4f32..1e-2) {
        let a = axis(start, step, v.len());
        let nodes = v.as_slice();
        let max_secant = v.windows(2).map(|w| (w[1] - w[0]).abs()).fold(0.0f32, f32::max) / step;
        let max_abs = v.iter().fold(0.0f32, |m, x| m.max(x.abs()));
        let x = start + u * step * (v.len() - 1) as f32;
        let x2 = x + h * step;
        // The step actually taken, plus the rounding of the position
        // (x - start) / step at both ends (one ulp of x each, at most).
        let dx = (x2 - x) + 2.0 * f32::EPSILON * x.abs().max(x2.abs()).max(start.abs());
        // Lipschitz bounds: linear slope <= max secant; the monotone cubic's
        // derivative <= 1.5|d| + |m0| + |m1| <= 5.5 max secant (tangents are
        // at most twice the smaller secant), 6 used. Plus 8 f32 roundings
        // of values up to max_abs.
        let slack = 8.0 * f32::EPSILON * max_abs;
        let dl = (linear(&nodes, a.locate(x2)) - linear(&nodes, a.locate(x))).abs();
        prop_assert!(dl <= max_secant * dx + slack, "linear jump {} at x={}", dl, x);
        let dc = (cubic_monotone(&nodes, a.locate(x2)) - cubic_monotone(&nodes, a.locate(x))).abs();
        prop_assert!(dc <= 6.0 * max_secant * dx + slack, "cubic jump {} at x={}", dc, x);
    }

    #[test]
    fn monotone_data_stays_monotone((start, step, mut v) in table(), mut xs in prop::collection::vec(0.0f32..1.0, 2..64)) {
        v.sort_by(f32::total_cmp);
        xs.sort_by(f32::total_cmp);
        let a = axis(start, step, v.len());
        let nodes = v.as_slice();
        let max_abs = v.iter().fold(0.0f32, |m, x| m.max(x.abs()));
        // Rounding of the Horner evaluation may wobble by a few ulp of the
        // largest value (4 roundings), never by more.
        let slack = 4.0 * f32::EPSILON * max_abs;
        let span = step * (v.len() - 1) as f32;
        let mut prev = f32::NEG_INFINITY;
        for u in xs {
            let y = cubic_monotone(&nodes, a.locate(start + u * span));
            prop_assert!(y >= prev - slack, "decrease {} -> {} at u={}", prev, y, u);
            prop_assert!(y >= v[0] - slack && y <= v[v.len() - 1] + slack, "overshoot {}", y);
            prev = prev.max(y);
        }
    }

    #[test]
    fn q_linear_agrees_with_exact_within_quantization_bound(
        start in -1_000_000i32..1_000_000,
        step in 1i32..5_000_000,
        v in prop::collection::vec(-100_000_000i32..100_000_000, 2..20),
        u in 0.0f64..1.0,
    ) {
        let a = AxisQ::new(start, step, v.len()).unwrap();
        let span = i64::from(step) * (v.len() as i64 - 1);
        let x = (i64::from(start) + (u * span as f64) as i64) as i32;
        let got = linear_q(&v.as_slice(), a.locate(x));
        // Exact reference in f64.
        let pos = f64::from(x - start) / f64::from(step);
        let k = (pos.floor() as usize).min(v.len() - 2);
        let t = pos - k as f64;
        let exact = f64::from(v[k]) + t * (f64::from(v[k + 1]) - f64::from(v[k]));
        // Bound: 0.5 LSB rounding + position error < 1/65536 of the node
        // step times |dv| (PositionQ::frac_q16) + 1e-9 relative f64 slack.
        let dv = (f64::from(v[k + 1]) - f64::from(v[k])).abs();
        let bound = 0.5 + dv / 65536.0 + 1e-9 * exact.abs();
        prop_assert!((f64::from(got) - exact).abs() <= bound, "x={} got {} exact {} bound {}", x, got, exact, bound);
        // The same data through the f32 kernel: values < 1e8 round to 8
        // (3 roundings), and the position (x - start) / step carries about
        // 4 ulp relative to max(|x|, |start|) / step plus 2 ulp of itself,
        // which the node difference dv multiplies.
        let vf: Vec<f32> = v.iter().map(|&y| y as f32).collect();
        let af = Axis { start: start as f32, step: step as f32, len: v.len() };
        let yf = linear(&vf.as_slice(), af.locate(x as f32));
        let eps = f64::from(f32::EPSILON);
        let pos_err = 4.0 * eps * (f64::from(x.abs().max(start.abs())) / f64::from(step) + 1.0);
        let bound_f = 3.0 * 8.0 + pos_err * dv;
        prop_assert!((f64::from(yf) - exact).abs() <= bound_f, "f32 {} exact {} bound {}", yf, exact, bound_f);
    }

    #[test]
    fn q_cubic_monotone_and_exact_at_nodes(
        mut v in prop::collection::vec(-1_000_000i32..1_000_000, 2..20),
        fracs in prop::collection::vec(0u32..65536, 1..32),
    ) {
        v.sort_unstable();
        let step = 1 << 16;
        let a = AxisQ::new(0, step, v.len()).unwrap();
        for (k, &want) in v.iter().enumerate() {
            prop_assert_eq!(cubic_monotone_q(&v.as_slice(), a.locate(k as i32 * step)), want);
        }
        let mut xs: Vec<i32> = fracs.iter().map(|&f| ((u64::from(f) * (v.len() as u64 - 1) * step as u64) >> 16) as i32).collect();
        xs.sort_unstable();
        let mut prev = i32::MIN;
        for x in xs {
            let y = cubic_monotone_q(&v.as_slice(), a.locate(x));
            // Three Horner roundings of 0.5 LSB can each go either way.
            prop_assert!(i64::from(y) >= i64::from(prev) - 2, "decrease {} -> {} at {}", prev, y, x);
            prev = prev.max(y);
        }
    }
}
