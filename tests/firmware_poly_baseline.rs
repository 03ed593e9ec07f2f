//! The benchmark's polynomial baseline (examples/firmware/src/poly.rs) is a
//! correct polynomial correction, so the instruction counts compare two
//! working implementations: Horner results against a direct f64 evaluation
//! of the same coefficients, and the ARMv6-M widening multiply against i128.

// `armv6m` is a cfg of the firmware's build script, unset on the host.
#[allow(unexpected_cfgs)]
#[path = "../examples/firmware/src/poly.rs"]
mod poly;

use poly::{PolyF32, PolyQ, mul_wide_soft};

/// `sum_j c[j] v^j` in f64.
fn direct(c: &[f64], v: f64) -> f64 {
    c.iter()
        .enumerate()
        .map(|(j, cj)| cj * v.powi(j as i32))
        .sum()
}

#[test]
fn mul_wide_soft_is_exact() {
    let edge = [
        0,
        1,
        -1,
        0xFFFF,
        0x1_0000,
        -0x1_0000,
        0x7FFF_FFFF,
        i32::MIN,
        i32::MAX,
        -0x8000,
        12_345_678,
        -987_654_321,
    ];
    for &a in &edge {
        for &b in &edge {
            let got = mul_wide_soft(a, b);
            let want = i128::from(a) * i128::from(b);
            assert_eq!(
                i128::from(got),
                want,
                "mul_wide_soft({a}, {b}) = {got}, expected {want}"
            );
        }
    }
}

/// The comparison helper can fail: a wrong product is caught.
#[test]
fn exactness_check_can_fail() {
    assert_ne!(i128::from(mul_wide_soft(3, 5)), 16);
}

/// (temperature-signal code, raw code): -20 C near zero pressure, 25 C at
/// mid-scale, beyond 85 C near full scale.
const CASES: [(i32, i32); 3] = [
    (3_926_288, 269_121),
    (4_194_304, 2_000_000),
    (4_600_000, 4_300_000),
];

#[test]
fn f32_baseline_matches_direct_evaluation() {
    let mut p = poly::demo_f32();
    let centre = f64::from(p.therm_centre);
    let f64s = |c: &[f32]| c.iter().map(|&x| f64::from(x)).collect::<Vec<_>>();
    for (signal, raw) in CASES {
        let got_t = p.update_temperature(signal as f32);
        let got = p.sample(raw as f32);
        let t = direct(&f64s(&p.therm), f64::from(signal) - centre);
        // The rest from the f32 temperature, so only Horner's own rounding is compared.
        let cached: Vec<f64> = p
            .coeffs
            .iter()
            .map(|row| direct(&f64s(row), f64::from(got_t)))
            .collect();
        let want = direct(&cached, f64::from(raw));
        // A few f32 roundings per Horner step: 1e-5 of the largest term
        // (|tn| < 1, so the constant term; the raw-code terms reach ~1.1e6 Pa)
        // bounds them with margin and still catches a wrong coefficient order
        // or a missing term, which move the result by 1e2..1e6 Pa.
        assert!(
            (f64::from(got_t) - t).abs() <= 1e-5,
            "tn({signal}) = {got_t}, expected {t}"
        );
        assert!(
            (f64::from(got) - want).abs() <= 1e-5 * 1.2e6,
            "y({signal}, {raw}) = {got}, expected {want}"
        );
    }
}

#[test]
fn q_baseline_matches_direct_evaluation() {
    let mut p = poly::demo_q();
    for (signal, raw) in CASES {
        let got_t = p.update_temperature(signal);
        let got = p.sample(raw);
        // tn_q16 = c0 + c1 v / 2^20 + c2 v^2 / 2^40 (20-bit shift per power).
        let v = f64::from(signal - p.therm_centre);
        let t = f64::from(p.therm[0])
            + f64::from(p.therm[1]) * v / 2f64.powi(20)
            + f64::from(p.therm[2]) * v * v / 2f64.powi(40);
        // Coefficient rows in tn = T_q16 / 2^16, from the integer temperature.
        let tn = f64::from(got_t) / 65536.0;
        let cached: Vec<f64> = p
            .coeffs
            .iter()
            .map(|row| direct(&row.iter().map(|&c| f64::from(c)).collect::<Vec<_>>(), tn))
            .collect();
        let x = f64::from(raw) / 2f64.powi(20);
        let want = cached[0] + cached[1] * x + cached[2] * x * x;
        // Each Horner step rounds to nearest (0.5 LSB), later steps multiply
        // earlier errors by the variable: |v| / 2^20 < 0.4 for the thermometer
        // (0.5 (1 + 0.4) = 0.7 LSB, 1 allowed), |tn| < 1.1 for the rows (1.7 LSB) and
        // |x| < 4.2 for the output (0.5 (1 + 4.2) + 1.7 (1 + 4.2 + 17.6) =
        // 42 LSB). A wrong shift or coefficient order is off by far more.
        assert!(
            (f64::from(got_t) - t).abs() <= 4.0,
            "tn_q16({signal}) = {got_t}, expected {t}"
        );
        assert!(
            (f64::from(got) - want).abs() <= 42.0,
            "y_q({signal}, {raw}) = {got}, expected {want}"
        );
        // Both forms describe the same correction: within 1 Pa, the sum of
        // the Q rounding of the coefficients (thermometer 0.6 Pa through the
        // gain's temperature slope, rows 0.1 Pa), the 42-LSB Horner bound
        // (0.16 Pa) and the f32 roundings of the ~1e6 Pa result (0.1 Pa).
        let mut f = poly::demo_f32();
        f.update_temperature(signal as f32);
        let y_f32 = f64::from(f.sample(raw as f32));
        assert!(
            (f64::from(got) / 256.0 - y_f32).abs() <= 1.0,
            "Q {} Pa vs f32 {y_f32} Pa",
            f64::from(got) / 256.0
        );
    }
}

#[test]
fn baselines_store_fifteen_coefficients() {
    assert_eq!(PolyF32::<3, 3, 4>::STORED, 15);
    assert_eq!(PolyQ::<3, 3, 4, 16, 20>::STORED, 15);
}

/// The compile-time constants the flash probe embeds are the same baseline.
#[test]
fn compile_time_constants_match_the_constructors() {
    let (c, r) = (poly::DEMO_Q, poly::demo_q());
    assert_eq!(
        (c.therm, c.therm_centre, c.coeffs),
        (r.therm, r.therm_centre, r.coeffs)
    );
    let (c, r) = (poly::DEMO_F32, poly::demo_f32());
    assert_eq!(
        (c.therm, c.therm_centre, c.coeffs),
        (r.therm, r.therm_centre, r.coeffs)
    );
}

#[test]
fn normalised_temperature_keeps_the_demo_span_inside_unit_interval() {
    // poly.rs: `tn = (T - 25 C) / 64 C`, |tn| < 1 over the demo part's
    // -20..85 C (Horner's rule stays well conditioned); poly_checked clamps
    // to this span. Exact values: the divisions by 64 are exact in f32.
    let cases = [
        (25.0f32, 0.0f32),
        (89.0, 1.0),
        (-20.0, -0.703_125),
        (85.0, 0.937_5),
    ];
    for (t_c, want) in cases {
        let got = poly::normalised_temperature(t_c);
        assert_eq!(got, want, "T {t_c} C: got {got}, expected {want}");
        assert!(t_c == 89.0 || got.abs() < 1.0, "T {t_c} C: |tn| = {got}");
    }
}
