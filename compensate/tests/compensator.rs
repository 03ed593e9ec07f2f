//! Compensators on example images: values, statuses, f32 vs fixed point.

mod common;

use common::*;
use compensate::interp::Interpolation;
use compensate::{Compensator, CompensatorError, FixedCompensator, Status, TableView};

/// Independent f64 evaluation of the example part at `t_c`, `raw`
/// (linear interpolation written out directly from the arrays).
fn reference(t_c: f64, raw: f64, grid: bool) -> f64 {
    let pos = ((t_c - f64::from(T_START_C)) / f64::from(T_STEP_C)).clamp(0.0, (T_NODES - 1) as f64);
    let i = (pos.floor() as usize).min(T_NODES - 2);
    let f = pos - i as f64;
    let lerp = |a: &[f32]| f64::from(a[i]) * (1.0 - f) + f64::from(a[i + 1]) * f;
    let d = raw - lerp(&OFFSET);
    let mut y = d * (lerp(&GAIN) + lerp(&QUAD) * d);
    if grid {
        let c = ((raw + 100_000.0) / 100_000.0).clamp(0.0, 2.0);
        let j = (c.floor() as usize).min(1);
        let g = c - j as f64;
        let at =
            |r: usize| f64::from(GRID[r * 3 + j]) * (1.0 - g) + f64::from(GRID[r * 3 + j + 1]) * g;
        y += at(i) * (1.0 - f) + at(i + 1) * f;
    }
    y
}

/// Ohms giving `t_c` on the example thermometer (linear, 10 ohm/K).
fn ohm(t_c: f64) -> f64 {
    4000.0 + (t_c + 40.0) * 10.0
}

#[test]
fn f32_matches_independent_reference() {
    for grid in [false, true] {
        let img = encode(&if grid {
            f32_grid_builder()
        } else {
            f32_builder()
        });
        let view = parse(&img);
        let mut c = Compensator::new(&view).unwrap();
        for t_c in [-40.0, -25.0, 0.0, 21.5, 85.0, 119.0] {
            let st = c.update_temperature(ohm(t_c) as f32);
            assert_eq!(st, Status::OK, "t={t_c}");
            assert!(
                (f64::from(c.temperature_c()) - t_c).abs() < 1e-3,
                "t={t_c} got {}",
                c.temperature_c()
            );
            for raw in [-100_000.0, -54_321.0, 0.0, 12_345.0, 99_999.0] {
                let r = c.compensate_sample(raw as f32);
                let want = reference(t_c, raw, grid);
                // f32 has 24-bit mantissa: d ~ 1e5 and y ~ 12 lose ~1e-7
                // relative per operation; 1e-5 bar = 1 ppm of the 10 bar
                // full scale, far above f32 rounding (~5e-6 relative to |y|
                // at most) yet far below any calibration error.
                assert!(
                    (f64::from(r.value) - want).abs() < 1e-5 + 5e-6 * want.abs(),
                    "grid={grid} t={t_c} raw={raw}: got {}, expected {want}",
                    r.value
                );
                assert_eq!(r.status, Status::OK);
            }
        }
    }
}

#[test]
fn f32_statuses() {
    let img = encode(&f32_grid_builder());
    let view = parse(&img);
    let mut c = Compensator::new(&view).unwrap();
    // (update signal, raw, expected status)
    let cases = [
        (f32::NAN, 0.0, Status::NAN_INPUT),
        (5000.0, 0.0, Status::OK),
        (5000.0, f32::NAN, Status::NAN_INPUT),
        (5000.0, f32::INFINITY, Status::NAN_INPUT),
        (5000.0, 150_000.0, Status::INPUT_OUT_OF_RANGE),
        (
            5000.0,
            8_388_607.0,
            Status::SENSOR_FAULT | Status::INPUT_OUT_OF_RANGE,
        ),
        (
            5000.0,
            -8_388_608.0,
            Status::SENSOR_FAULT | Status::INPUT_OUT_OF_RANGE,
        ),
        // 3900 ohm: below the thermometer axis (4000) but plausible.
        (3900.0, 0.0, Status::TEMPERATURE_CLAMPED),
        // 2000 ohm: implausible (open/short) and clamped.
        (
            2000.0,
            0.0,
            Status::SENSOR_FAULT | Status::TEMPERATURE_CLAMPED,
        ),
    ];
    for (sig, raw, want) in cases {
        c.update_temperature(sig);
        let got = c.compensate_sample(raw).status;
        assert_eq!(
            got, want,
            "signal {sig}, raw {raw}: got {got}, expected {want}"
        );
    }
    let fresh = Compensator::new(&view).unwrap();
    assert_eq!(fresh.compensate_sample(0.0).status, Status::NO_TEMPERATURE);
    let none = Compensator::unconfigured();
    let r = none.compensate_sample(1000.0);
    assert_eq!((r.value, r.status), (0.0, Status::TABLE_INVALID));
    let qimg = encode(&q_builder(false));
    assert!(matches!(
        Compensator::new(&parse(&qimg)),
        Err(CompensatorError::WrongFormat { .. })
    ));
    assert!(matches!(
        FixedCompensator::new(&view),
        Err(CompensatorError::WrongFormat { .. })
    ));
}

#[test]
fn ratiometric_divides_by_excitation() {
    let img = encode(&f32_builder());
    let mut c = Compensator::new(&parse(&img)).unwrap();
    c.update_temperature(4650.0);
    let a = c.compensate_sample(20_000.0);
    let b = c.compensate_ratiometric(22_000.0, 1.1);
    // Only f32 rounding of the division separates the two (1 ulp of 2e4).
    assert!((a.value - b.value).abs() < 1e-6, "{a:?} vs {b:?}");
    assert_eq!(c.compensate_ratiometric(1.0, 0.0).status, Status::NAN_INPUT);
}

/// Quantization bound of the Q twin against the f32 image, in bar: offset
/// Q.8 (0.5/256 code x gain 1.3e-4 = 2.5e-7 bar), gain Q.30 (0.5 LSB of
/// 2^-30 x |d| 2e5 = 9.3e-5 bar), quadratic Q.50 (0.5 x 2^-50 x d^2 4e10 =
/// 1.8e-5), output rounding 2^-21 = 4.8e-7, temperature Q16.16 position
/// error (<1 LSB of 2^-16 C x slope 2e-5 bar/C per code span ~ 1e-8), the
/// 2-D correction (two 0.5 LSB roundings of 2^-20 = 1e-6) and node
/// quantization of values (same as above): the sum is below 1.2e-4 bar
/// (12 ppm of 10 bar FS); 1.5e-4 leaves margin for f32 rounding of the
/// reference (5e-6 relative of 12 bar = 6e-5).
const Q_VS_F32_BAR: f64 = 1.5e-4;

#[test]
fn fixed_point_agrees_with_f32_within_quantization_bound() {
    for grid in [false, true] {
        let fimg = encode(&if grid {
            f32_grid_builder()
        } else {
            f32_builder()
        });
        let qimg = encode(&q_builder(grid));
        let mut cf = Compensator::new(&parse(&fimg)).unwrap();
        let mut cq = FixedCompensator::new(&parse(&qimg)).unwrap();
        let mut worst = 0.0f64;
        for k in 0..=64 {
            let ohms = 4000.0 + 1600.0 * f64::from(k) / 64.0;
            cf.update_temperature(ohms as f32);
            cq.update_temperature(to_q(ohms as f32, QF.signal));
            for raw in (-100_000..=100_000).step_by(4999) {
                let a = cf.compensate_sample(raw as f32);
                let b = cq.compensate_sample(raw);
                assert_eq!(a.status, b.status, "ohm={ohms} raw={raw}");
                let bq = f64::from(b.value) / f64::from(QF.output).exp2();
                let err = (bq - f64::from(a.value)).abs();
                worst = worst.max(err);
                assert!(
                    err <= Q_VS_F32_BAR,
                    "grid={grid} ohm={ohms} raw={raw}: q {bq} f32 {} err {err}",
                    a.value
                );
            }
        }
        assert!(
            worst > 0.0,
            "paths identical: the comparison proves nothing"
        );
    }
}

#[test]
fn fixed_statuses_and_saturation() {
    let img = encode(&q_builder(true));
    let view = parse(&img);
    let mut c = FixedCompensator::new(&view).unwrap();
    assert_eq!(c.compensate_sample(0).status, Status::NO_TEMPERATURE);
    let cases = [
        (to_q(5000.0, 16), 0, Status::OK),
        (to_q(5000.0, 16), 150_000, Status::INPUT_OUT_OF_RANGE),
        // At the upper rail (2^23 - 1) << 8 minus a negative offset at 60 C
        // exceeds i32: the difference saturates, and says so.
        (
            to_q(5000.0, 16),
            8_388_607,
            Status::SENSOR_FAULT | Status::INPUT_OUT_OF_RANGE | Status::SATURATED,
        ),
        // 2e6 codes: about 640 bar, inside the Q11.20 output range (2048).
        (to_q(5000.0, 16), 2_000_000, Status::INPUT_OUT_OF_RANGE),
        // 8e6 codes: about 7400 bar with the quadratic term, beyond Q11.20.
        (
            to_q(5000.0, 16),
            8_000_000,
            Status::INPUT_OUT_OF_RANGE | Status::SATURATED,
        ),
        (
            to_q(5000.0, 16),
            i32::MIN,
            Status::SENSOR_FAULT | Status::INPUT_OUT_OF_RANGE | Status::SATURATED,
        ),
        (to_q(3900.0, 16), 0, Status::TEMPERATURE_CLAMPED),
        (
            to_q(2000.0, 16),
            0,
            Status::SENSOR_FAULT | Status::TEMPERATURE_CLAMPED,
        ),
    ];
    // Same cases and loop as the f32 test above in Q format: both compensators must flag alike.
    for (sig, raw, want) in cases {
        c.update_temperature(sig);
        let got = c.compensate_sample(raw).status;
        assert_eq!(
            got, want,
            "signal {sig}, raw {raw}: got {got}, expected {want}"
        );
    }
    let none = FixedCompensator::unconfigured();
    assert_eq!(none.compensate_sample(5).status, Status::TABLE_INVALID);
    assert_eq!(none.compensate_sample(5).value, 0);
}

#[test]
#[cfg(feature = "cubic")]
fn monotone_cubic_images_work_in_both_paths() {
    let fb = compensate::ImageBuilder {
        interpolation: Interpolation::MonotoneCubic,
        ..f32_builder()
    };
    let qb = compensate::ImageBuilder {
        interpolation: Interpolation::MonotoneCubic,
        ..q_builder(false)
    };
    let (fi, qi) = (encode(&fb), encode(&qb));
    let (fv, qv) = (
        TableView::parse(&fi).unwrap(),
        TableView::parse(&qi).unwrap(),
    );
    assert_eq!(fv.interpolation(), Interpolation::MonotoneCubic);
    let mut cf = Compensator::new(&fv).unwrap();
    let mut cq = FixedCompensator::new(&qv).unwrap();
    for k in 0..=32 {
        let ohms = 4000.0 + 50.0 * k as f32;
        cf.update_temperature(ohms);
        cq.update_temperature(to_q(ohms, 16));
        let a = f64::from(cf.compensate_sample(80_000.0).value);
        let b = f64::from(cq.compensate_sample(80_000).value) / f64::from(QF.output).exp2();
        // Same bound as the linear path plus the cubic kernel's few-LSB
        // tangent rounding on the gain channel (4 LSB x 2^-30 x 8e4 = 3e-4
        // relative... of 2^-30 scale: 3e-4 bar), see kernel_fixed tests.
        assert!(
            (a - b).abs() <= Q_VS_F32_BAR + 3e-4,
            "ohm={ohms}: f32 {a} q {b}"
        );
    }
}

#[test]
fn ratiometric_paths_agree() {
    let fimg = encode(&f32_builder());
    let qimg = encode(&q_builder(false));
    let mut cf = Compensator::new(&parse(&fimg)).unwrap();
    let mut cq = FixedCompensator::new(&parse(&qimg)).unwrap();
    cf.update_temperature(4650.0);
    cq.update_temperature(to_q(4650.0, QF.signal));
    // (raw, excitation ratio): 10 % high, 5 % low, nominal, negative raw.
    for (raw, ratio) in [(22_000, 1.1f32), (-47_500, 0.95), (50_000, 1.0), (-3, 1.5)] {
        let a = cf.compensate_ratiometric(raw as f32, ratio);
        let b = cq.compensate_ratiometric(raw, to_q(ratio, 16) as u32);
        let bq = f64::from(b.value) / f64::from(QF.output).exp2();
        // Quantization bound of the linear path plus the Q16.16 ratio
        // (relative 2^-17 of a value below 12 bar: 1e-4) and the rounding
        // of the scaled code to an integer (0.5 code x gain 1.2e-4 = 6e-5).
        let bound = Q_VS_F32_BAR + 1e-4 + 6e-5;
        assert!(
            (f64::from(a.value) - bq).abs() <= bound,
            "raw {raw} ratio {ratio}: f32 {} q {bq}",
            a.value
        );
        assert_eq!(a.status, b.status);
    }
    assert_eq!(
        cq.compensate_ratiometric(100, 0).status,
        Status::SENSOR_FAULT
    );
}
