//! The benchmark's polynomial baseline (examples/firmware/src/poly.rs with
//! the generated examples/firmware/data/well_level_poly.rs) is the usual
//! polynomial correction at the table's accuracy: neither sandbagged nor
//! over-sized, so the instruction counts compare equally accurate
//! corrections.
//!
//! - The firmware's own source, compiled here for the host, computes
//!   bit for bit what `host_tools::station::poly_baseline` computes (the
//!   module the degree was chosen with), on every point of the dense grid.
//! - The committed polynomial's dense maximum error, in f32 and in Q, is at
//!   or below the committed table images' (`semidrift verify`'s grid and
//!   metric), and one degree less is not.
//! - The ARMv6-M widening multiply is exact.
//! - The accuracy sweep (`SWEEP_*`: every degree's coefficients and dense
//!   error) is what `host_tools::station::poly_sweep` computes afresh, and
//!   the firmware's code with those coefficients has exactly those errors.

// `armv6m` is a cfg of the firmware's build script, unset on the host.
#[allow(unexpected_cfgs)]
#[path = "../examples/firmware/src/poly.rs"]
mod poly;

// The firmware's sweep constructors and crossover rule (and the checked
// wrappers they return), run on the host; the image limits are not used.
#[allow(dead_code)]
#[path = "../examples/firmware/src/poly_checked.rs"]
mod poly_checked;
#[allow(dead_code)]
#[path = "../examples/firmware/src/sweep.rs"]
mod sweep;

#[allow(dead_code)]
#[path = "../examples/make_firmware_image.rs"]
mod make_firmware_image;

use host_tools::station::image_eval::ErrorStats;
use host_tools::station::part_model::PartModel;
use host_tools::station::pipeline::{DENSE_STIMULI, DENSE_TEMPS, part_curves};
use host_tools::station::poly_baseline::{
    FIT_TEMPS, Point, PolyF32Form, PolyQForm, baseline_of_degree, error_stats, grid_points,
};
use host_tools::station::poly_sweep::degree_sweep;
use host_tools::station::table::{SignalUnit, TableFrame};
use poly::{fitted, mul_wide_soft};

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
        // Signed low halves at -2^15 and high halves at +-2^15: the ends
        // of the Karatsuba form's ranges.
        0x8000,
        -0x8001,
        0x7FFF,
        0x7FFF_8000,
        0x7FFF_7FFF,
        -0x7FFF_8000,
        i32::MIN + 0x8000,
        i32::MIN + 0x7FFF,
    ];
    let check = |a: i32, b: i32| {
        let got = mul_wide_soft(a, b);
        let want = i128::from(a) * i128::from(b);
        assert_eq!(
            i128::from(got),
            want,
            "mul_wide_soft({a}, {b}) = {got}, expected {want}"
        );
    };
    for &a in &edge {
        for &b in &edge {
            check(a, b);
        }
    }
    // 200 000 pseudo-random pairs (xorshift32, fixed seed), spread over
    // every magnitude by a random shift.
    let mut x: u32 = 0x2545_F491;
    let mut next = || {
        x ^= x << 13;
        x ^= x >> 17;
        x ^= x << 5;
        (x as i32) >> (x % 24)
    };
    for _ in 0..200_000 {
        let (a, b) = (next(), next());
        check(a, b);
    }
}

/// The comparison helper can fail: a wrong product is caught.
#[test]
fn exactness_check_can_fail() {
    assert_ne!(i128::from(mul_wide_soft(3, 5)), 16);
}

/// The compile-time constants the flash probe embeds are the same baseline.
#[test]
fn compile_time_constants_match_the_constructors() {
    let (c, r) = (poly::FITTED_Q, poly::fitted_q());
    assert_eq!((c.centre, c.coeffs), (r.centre, r.coeffs));
    let (c, r) = (poly::FITTED_F32, poly::fitted_f32());
    assert_eq!(
        (c.centre, c.u_scale, c.coeffs),
        (r.centre, r.u_scale, r.coeffs)
    );
    let stored = fitted::RAW_TERMS * (fitted::DEGREE + 1);
    assert_eq!(poly::PolyQBench::STORED, stored);
    assert_eq!(poly::PolyF32Bench::STORED, stored);
}

/// The firmware's f32 correction for one point: temperature update, sample.
fn firmware_f32(p: &Point) -> f32 {
    let mut f = poly::fitted_f32();
    f.update_temperature(p.code as f32);
    f.sample(p.raw as f32)
}

/// The firmware's integer correction for one point, Q(`OUT_BITS`).
fn firmware_q(p: &Point) -> i32 {
    let mut q = poly::fitted_q();
    q.update_temperature(p.code);
    q.sample(p.raw)
}

fn q_to_f64(v: i32) -> f64 {
    f64::from(v) * 2f64.powi(-(fitted::OUT_BITS as i32))
}

/// Everything the checks need, built once per test.
struct Setup {
    part: host_tools::station::part_file::PartFile,
    curves: host_tools::station::curves::ShapeCurves,
}

fn setup() -> Setup {
    let data = make_firmware_image::build();
    let curves = part_curves(&data.part).expect("model shapes of the demo part");
    Setup {
        part: data.part,
        curves,
    }
}

impl Setup {
    fn frame(&self) -> TableFrame<'_> {
        let model = PartModel {
            curves: &self.curves,
            params: self.part.params.expect("physics part file"),
        };
        TableFrame::new(&self.part, model)
            .expect("monotone thermometer")
            .with_signal_unit(SignalUnit::AdcCode)
    }
}

/// Tolerance: none. Both sides run the same IEEE 754 single-precision
/// subtract, multiply and add in the same order (correctly rounded, never
/// fused by Rust), and the same i64 integer steps; the generated f32
/// literals are shortest round-trip representations, so the host form built
/// from them holds the same bits.
#[test]
fn firmware_source_computes_what_the_host_module_computes() {
    let s = setup();
    let frame = s.frame();
    let dense = grid_points(&frame, DENSE_TEMPS, DENSE_STIMULI);
    let host_f32 = PolyF32Form {
        centre: fitted::CENTRE_CODE as f32,
        u_scale: 2f32.powi(-(fitted::U_SHIFT as i32)),
        rows: fitted::COEFFS_F32.iter().map(|r| r.to_vec()).collect(),
    };
    let host_q = PolyQForm {
        centre: fitted::CENTRE_CODE,
        u_shift: fitted::U_SHIFT,
        x_shift: fitted::X_SHIFT,
        out_bits: fitted::OUT_BITS,
        rows: fitted::COEFFS_Q.iter().map(|r| r.to_vec()).collect(),
    };
    for p in &dense {
        let (got, want) = (
            firmware_f32(p),
            host_f32.reading(p.code as f32, p.raw as f32),
        );
        assert_eq!(
            got.to_bits(),
            want.to_bits(),
            "f32 at code {} raw {}: firmware {got}, host {want}",
            p.code,
            p.raw
        );
        let (got, want) = (firmware_q(p), host_q.reading_q(p.code, p.raw));
        assert_eq!(
            got, want,
            "Q at code {} raw {}: firmware {got}, host {want}",
            p.code, p.raw
        );
    }
}

/// Hundredths of a ppm, as the generated file states them.
fn centi(s: &ErrorStats) -> u64 {
    (s.max_error_ppm * 100.0).round() as u64
}

/// Tolerances: none. Every error here is a deterministic computation on
/// the same grid (`semidrift verify`'s 20001 temperatures x 6 stimuli,
/// `verify`'s reference), so "at or below" is an exact comparison; the
/// stated figures must equal the measured ones to the hundredth of a ppm
/// they are written with.
#[test]
fn committed_polynomial_is_as_accurate_as_the_table_and_no_larger() {
    let s = setup();
    let frame = s.frame();
    let dense = grid_points(&frame, DENSE_TEMPS, DENSE_STIMULI);
    let span = frame.fs_hi - frame.fs_lo;
    let dir = make_firmware_image::data_dir();
    let read = |name: &str| {
        std::fs::read(dir.join(name))
            .unwrap_or_else(|e| panic!("{}: {e}", dir.join(name).display()))
    };
    let table_f32 = make_firmware_image::verify_image(&read("well_level_f32.bin"), &s.part);
    let table_q = make_firmware_image::verify_image(&read("well_level_q.bin"), &s.part);

    // The committed coefficients, run by the firmware's own code.
    let poly_f32 = error_stats(&dense, span, |p| f64::from(firmware_f32(p)));
    let poly_q = error_stats(&dense, span, |p| q_to_f64(firmware_q(p)));
    for (form, poly, table) in [
        ("f32", &poly_f32, table_f32.max_error_ppm),
        ("Q", &poly_q, table_q.max_error_ppm),
    ] {
        assert!(
            poly.max_error_ppm <= table,
            "{form}: committed degree-{} polynomial {:.2} ppm (at {:.2} C, {:.3}) exceeds the \
             committed table's {table:.2} ppm; run `cargo run --example make_firmware_image`",
            fitted::DEGREE,
            poly.max_error_ppm,
            poly.worst_t_c,
            poly.worst_stimulus
        );
    }
    let stated = [
        (
            "f32 polynomial",
            fitted::POLY_ERROR_F32_CENTI_PPM,
            centi(&poly_f32),
        ),
        (
            "Q polynomial",
            fitted::POLY_ERROR_Q_CENTI_PPM,
            centi(&poly_q),
        ),
        (
            "f32 table",
            fitted::TABLE_ERROR_F32_CENTI_PPM,
            (table_f32.max_error_ppm * 100.0).round() as u64,
        ),
        (
            "Q table",
            fitted::TABLE_ERROR_Q_CENTI_PPM,
            (table_q.max_error_ppm * 100.0).round() as u64,
        ),
    ];
    for (what, stated, measured) in stated {
        assert_eq!(
            stated, measured,
            "{what}: well_level_poly.rs states {stated} centi-ppm, measured {measured}"
        );
    }

    // One degree less, fitted the same way, misses the table's accuracy in
    // at least one form (else the baseline would be over-sized).
    // (Degree 0 cannot be over-sized.)
    let Some(lower_degree) = fitted::DEGREE.checked_sub(1) else {
        return;
    };
    let fit_points = grid_points(&frame, FIT_TEMPS, DENSE_STIMULI);
    let lower = baseline_of_degree(&frame, &fit_points, &dense, lower_degree, fitted::RAW_TERMS)
        .expect("the lower degree has a Q form");
    let (lf, lq) = (lower.f32_error.max_error_ppm, lower.q_error.max_error_ppm);
    assert!(
        lf > table_f32.max_error_ppm || lq > table_q.max_error_ppm,
        "degree {lower_degree} already reaches the tables (f32 {lf:.2} <= {:.2} ppm, Q {lq:.2} <= {:.2} ppm): \
         the committed degree {} is larger than needed",
        table_f32.max_error_ppm,
        table_q.max_error_ppm,
        fitted::DEGREE
    );
}

/// One committed degree of the sweep, run by the firmware's own code.
struct Committed {
    f32_rows: Vec<Vec<f32>>,
    q_rows: Vec<Vec<i32>>,
    x_shift: u32,
    f32_error: ErrorStats,
    q_error: ErrorStats,
}

/// The committed degree-`K - 1` coefficients, and their dense errors
/// through `sweep::poly_f32` / `sweep::poly_q` (the constructors the
/// benchmark times) and `poly.rs`'s update and sample.
fn committed<const K: usize, const XS: u32>(
    f: [[f32; K]; fitted::RAW_TERMS],
    q: [[i32; K]; fitted::RAW_TERMS],
    dense: &[Point],
    span: f64,
) -> Committed {
    let f32_error = error_stats(dense, span, |p| {
        let mut m = sweep::poly_f32(f);
        m.update_temperature(p.code as f32);
        f64::from(m.sample(p.raw as f32))
    });
    let q_error = error_stats(dense, span, |p| {
        let mut m = sweep::poly_q::<K, XS>(q);
        m.update_temperature(p.code);
        q_to_f64(m.sample(p.raw))
    });
    Committed {
        f32_rows: f.iter().map(|r| r.to_vec()).collect(),
        q_rows: q.iter().map(|r| r.to_vec()).collect(),
        x_shift: XS,
        f32_error,
        q_error,
    }
}

/// Tolerances: none. The sweep is a deterministic computation (same fit
/// grid, SVD and dense grid as the generator), the coefficients are
/// compared bit for bit and the errors to the hundredth of a ppm they are
/// written with; the firmware's arithmetic is the host module's step for
/// step (see `firmware_source_computes_what_the_host_module_computes`).
#[test]
fn committed_sweep_is_what_the_host_computes() {
    use fitted::*;
    let s = setup();
    let frame = s.frame();
    let fit_points = grid_points(&frame, FIT_TEMPS, DENSE_STIMULI);
    let dense = grid_points(&frame, DENSE_TEMPS, DENSE_STIMULI);
    let span = frame.fs_hi - frame.fs_lo;
    let (fresh, end) = degree_sweep(
        &frame,
        &fit_points,
        &dense,
        make_firmware_image::SWEEP_MAX_DEGREE,
        RAW_TERMS,
    );
    // The list below names each committed degree; the benchmark's too.
    assert_eq!(
        (fresh.len(), SWEEP_DEGREES),
        (12, 12),
        "the host's sweep ({end:?}) and well_level_poly.rs must both reach degree 12; \
         run `cargo run --example make_firmware_image` and update the lists"
    );
    let d = &dense;
    let committed = [
        committed::<2, SWEEP_X_SHIFT_1>(SWEEP_COEFFS_F32_1, SWEEP_COEFFS_Q_1, d, span),
        committed::<3, SWEEP_X_SHIFT_2>(SWEEP_COEFFS_F32_2, SWEEP_COEFFS_Q_2, d, span),
        committed::<4, SWEEP_X_SHIFT_3>(SWEEP_COEFFS_F32_3, SWEEP_COEFFS_Q_3, d, span),
        committed::<5, SWEEP_X_SHIFT_4>(SWEEP_COEFFS_F32_4, SWEEP_COEFFS_Q_4, d, span),
        committed::<6, SWEEP_X_SHIFT_5>(SWEEP_COEFFS_F32_5, SWEEP_COEFFS_Q_5, d, span),
        committed::<7, SWEEP_X_SHIFT_6>(SWEEP_COEFFS_F32_6, SWEEP_COEFFS_Q_6, d, span),
        committed::<8, SWEEP_X_SHIFT_7>(SWEEP_COEFFS_F32_7, SWEEP_COEFFS_Q_7, d, span),
        committed::<9, SWEEP_X_SHIFT_8>(SWEEP_COEFFS_F32_8, SWEEP_COEFFS_Q_8, d, span),
        committed::<10, SWEEP_X_SHIFT_9>(SWEEP_COEFFS_F32_9, SWEEP_COEFFS_Q_9, d, span),
        committed::<11, SWEEP_X_SHIFT_10>(SWEEP_COEFFS_F32_10, SWEEP_COEFFS_Q_10, d, span),
        committed::<12, SWEEP_X_SHIFT_11>(SWEEP_COEFFS_F32_11, SWEEP_COEFFS_Q_11, d, span),
        committed::<13, SWEEP_X_SHIFT_12>(SWEEP_COEFFS_F32_12, SWEEP_COEFFS_Q_12, d, span),
    ];
    let rerun = "run `cargo run --example make_firmware_image`";
    for (i, (c, f)) in committed.iter().zip(&fresh).enumerate() {
        let degree = i + 1;
        assert_eq!(f.degree, degree);
        assert_eq!(
            (f.fit.centre_code, f.fit.u_shift),
            (CENTRE_CODE, U_SHIFT),
            "degree {degree}: the sweep's normalisation differs from the baseline's"
        );
        let bits = |rows: &[Vec<f32>]| -> Vec<Vec<u32>> {
            rows.iter()
                .map(|r| r.iter().map(|c| c.to_bits()).collect())
                .collect()
        };
        assert_eq!(
            bits(&c.f32_rows),
            bits(&f.f32_form.rows),
            "degree {degree}: committed f32 coefficients {:?}, host {:?}; {rerun}",
            c.f32_rows,
            f.f32_form.rows
        );
        let q = f
            .q_form
            .as_ref()
            .expect("every committed degree has a Q form");
        assert_eq!(
            (&c.q_rows, c.x_shift),
            (&q.rows, q.x_shift),
            "degree {degree}: committed Q coefficients and shift differ from the host's; {rerun}"
        );
        let fresh_q = f.q_error.as_ref().expect("a Q form has a Q error");
        for (form, stated, firmware, host) in [
            (
                "f32",
                SWEEP_ERROR_F32_CENTI_PPM[i],
                centi(&c.f32_error),
                centi(&f.f32_error),
            ),
            (
                "Q",
                SWEEP_ERROR_Q_CENTI_PPM[i],
                centi(&c.q_error),
                centi(fresh_q),
            ),
        ] {
            assert_eq!(
                (stated, firmware),
                (host, host),
                "degree {degree} {form}: stated {stated} centi-ppm, firmware code measures \
                 {firmware}, host sweep {host}; {rerun}"
            );
        }
    }
    // The chosen degree is the sweep's entry of that degree.
    let chosen = &committed[DEGREE - 1];
    assert_eq!(
        chosen.f32_rows,
        COEFFS_F32.iter().map(|r| r.to_vec()).collect::<Vec<_>>()
    );
    assert_eq!(
        chosen.q_rows,
        COEFFS_Q.iter().map(|r| r.to_vec()).collect::<Vec<_>>()
    );
    assert_eq!(
        (
            SWEEP_ERROR_F32_CENTI_PPM[DEGREE - 1],
            SWEEP_ERROR_Q_CENTI_PPM[DEGREE - 1]
        ),
        (POLY_ERROR_F32_CENTI_PPM, POLY_ERROR_Q_CENTI_PPM)
    );
}

/// (per-degree costs, ours, expected crossover degree): the benchmark's
/// rule is "the lowest degree that costs strictly more than ours".
#[test]
fn crossover_is_the_first_degree_dearer_than_ours() {
    let cases: [(&[u64], u64, Option<usize>); 6] = [
        // The M4F f32 figures of docs/performance.md, hundredths: degree 5.
        (
            &[
                2217, 2617, 3017, 3417, 3817, 4217, 4617, 5017, 5417, 5817, 6217, 6617,
            ],
            3657,
            Some(5),
        ),
        (&[100, 200, 300], 200, Some(3)),
        (&[100, 200, 300], 50, Some(1)),
        (&[100, 200, 300], 300, None),
        (&[], 10, None),
        // Not monotone: the first dearer degree, not the last cheaper one.
        (&[100, 400, 150, 500], 300, Some(2)),
    ];
    for (costs, ours, want) in cases {
        let got = sweep::crossover_degree(costs, ours);
        assert_eq!(
            got, want,
            "costs {costs:?}, ours {ours}: got {got:?}, expected {want:?}"
        );
    }
}

/// The finer image the benchmark times (`well_level_f32_fine.bin`) is as
/// accurate as the polynomial of the degree it is sized against, and its
/// stated error is what `semidrift verify` measures. Tolerances: none
/// (deterministic dense checks on the same grid, compared to the
/// hundredth of a ppm the file states).
#[test]
fn fine_image_matches_the_crossover_degree() {
    let s = setup();
    let dir = make_firmware_image::data_dir();
    let path = dir.join("well_level_f32_fine.bin");
    let image = std::fs::read(&path).unwrap_or_else(|e| panic!("{}: {e}", path.display()));
    let fine = make_firmware_image::verify_image(&image, &s.part).max_error_ppm;
    let stated = fitted::TABLE_FINE_ERROR_F32_CENTI_PPM;
    assert_eq!(
        stated,
        (fine * 100.0).round() as u64,
        "well_level_poly.rs states {stated} centi-ppm for the fine image, verify measures {fine:.2} ppm"
    );
    assert_eq!(
        fitted::FINE_MATCH_DEGREE,
        make_firmware_image::FINE_MATCH_DEGREE
    );
    let poly = fitted::SWEEP_ERROR_F32_CENTI_PPM[fitted::FINE_MATCH_DEGREE - 1];
    assert!(
        stated <= poly,
        "fine image {stated} centi-ppm is less accurate than the degree-{} polynomial's {poly}",
        fitted::FINE_MATCH_DEGREE
    );
}
