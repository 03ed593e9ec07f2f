//! The usual polynomial correction of sensor signals (common practice), fitted to a part's
//! model and sized to the accuracy of the part's table image: the baseline
//! the firmware benchmark compares the table path with.
//!
//! Form (common practice): `reading = sum_i p_i(u) raw^i`, the raw code's
//! powers weighted by polynomials in the normalised temperature signal
//! `u = (code - centre) / 2^u_shift`, each `p_i` evaluated with Horner's
//! rule. This sum form rather than `(raw - off(u)) * gain(u)`: it is the
//! usual form of a signal conditioner's correction (a polynomial in the raw
//! signal with temperature-dependent coefficients; common practice), it is linear
//! in its coefficients (one least-squares solve, straight on the error the
//! firmware makes), a bow in the stimulus is one more term rather than a new
//! structure, and per sample it costs the same multiply and add as the
//! product form. `u` comes from the temperature signal's whole ADC codes, as
//! the firmware receives them; no separate thermometer polynomial, since a
//! polynomial of a polynomial in the code is itself one (cheaper to evaluate
//! at equal degree of freedom).
//!
//! The f32 and Q-format evaluations here are the arithmetic of
//! `examples/firmware/src/poly.rs`, step for step (the firmware package is
//! bare-metal and cannot be a host dependency); `tests/firmware_poly_baseline.rs`
//! runs the firmware's own source on the host and requires bit-identical
//! results on the dense grid.

use crate::station::image_eval::{ErrorStats, linspace};
use crate::station::pipeline::{DENSE_STIMULI, DENSE_TEMPS};
use crate::station::table::{SignalUnit, TableFrame};
use nalgebra::{DMatrix, DVector};
use rayon::prelude::*;

/// Temperatures of the fit grid: 0.1 K steps over the well-logger's 105 K,
/// a fine sampling of the model for a least-squares fit of degree <= 8.
pub const FIT_TEMPS: usize = 1051;
/// Highest degree in `u` [`equal_accuracy`] tries.
pub const MAX_DEGREE: usize = 8;
/// Reciprocal of the SVD solve's relative singular-value cutoff (1e-12,
/// common practice for f64 least squares): a design matrix with a larger
/// condition number loses a singular value to the cutoff.
pub const MAX_CONDITION: f64 = 1e12;

/// One point of a grid: what the firmware receives and what it should output.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Point {
    /// Temperature, C.
    pub t_c: f64,
    /// Stimulus applied.
    pub stimulus: f64,
    /// Temperature-signal ADC code (whole codes).
    pub code: i32,
    /// Output ADC code (whole codes).
    pub raw: i32,
    /// The stimulus the part model maps `raw` to at `t_c` (as `verify`: ADC
    /// quantization is not counted as error).
    pub reference: f64,
}

/// The grid `n_temps` x `n_stimuli` over the frame's range, built exactly as
/// `semidrift verify` builds its points (image_eval.rs), with the
/// temperature signal in whole ADC codes.
pub fn grid_points(frame: &TableFrame<'_>, n_temps: usize, n_stimuli: usize) -> Vec<Point> {
    let frame = frame.with_signal_unit(SignalUnit::AdcCode);
    let stimuli = linspace(frame.fs_lo, frame.fs_hi, n_stimuli);
    linspace(frame.t_lo_c, frame.t_hi_c, n_temps)
        .par_iter()
        .flat_map_iter(|&t_c| {
            let code = frame.image_signal(t_c) as i32;
            let at = frame.at(t_c);
            stimuli.iter().map(move |&stimulus| {
                let raw = (at.output(stimulus) / frame.lsb).round();
                Point {
                    t_c,
                    stimulus,
                    code,
                    raw: raw as i32,
                    reference: at.stimulus(raw * frame.lsb),
                }
            })
        })
        .collect()
}

/// Largest and RMS |got - reference| over `points`, in ppm of `span`.
pub fn error_stats(points: &[Point], span: f64, got: impl Fn(&Point) -> f64) -> ErrorStats {
    let to_ppm = 1e6 / span;
    let mut s = ErrorStats {
        max_error_ppm: 0.0,
        rms_error_ppm: 0.0,
        worst_t_c: f64::NAN,
        worst_stimulus: f64::NAN,
        points: points.len(),
    };
    let mut sum2 = 0.0;
    for p in points {
        let e = (got(p) - p.reference) * to_ppm;
        // NaN counts as the worst possible error (as image_eval.rs).
        let a = if e.is_nan() { f64::INFINITY } else { e.abs() };
        if a > s.max_error_ppm || s.worst_t_c.is_nan() {
            (s.max_error_ppm, s.worst_t_c, s.worst_stimulus) = (a, p.t_c, p.stimulus);
        }
        sum2 += e * e;
    }
    s.rms_error_ppm = (sum2 / points.len().max(1) as f64).sqrt();
    s
}

/// A fitted correction in f64: `rows[i][j]` is the coefficient of
/// `u^j raw^i`.
#[derive(Debug, Clone, PartialEq)]
pub struct PolyFit {
    /// Temperature-signal code at `u = 0`.
    pub centre_code: i32,
    /// `u = (code - centre_code) / 2^u_shift`; |u| <= 1 over the fit's codes.
    pub u_shift: u32,
    /// Coefficients, one row per power of the raw code.
    pub rows: Vec<Vec<f64>>,
}

impl PolyFit {
    /// Least-squares fit of degree `degree` in `u` and `raw_terms` powers of
    /// the raw code (SVD, relative singular-value cutoff 1e-12, common
    /// practice), to `points`; with no points every coefficient is NaN
    /// (which [`PolyFit::q_form`] refuses and any error measure reports).
    pub fn fit(points: &[Point], degree: usize, raw_terms: usize) -> PolyFit {
        Self::fit_with_condition(points, degree, raw_terms).0
    }

    /// [`PolyFit::fit`] and the condition number of its scaled design
    /// matrix (largest over smallest singular value; infinite with no
    /// points or a zero singular value). Above [`MAX_CONDITION`] the solve's
    /// cutoff drops a singular value, so the result is no longer the
    /// least-squares fit of that degree.
    pub fn fit_with_condition(points: &[Point], degree: usize, raw_terms: usize) -> (PolyFit, f64) {
        if points.is_empty() {
            let fit = PolyFit {
                centre_code: 0,
                u_shift: 0,
                rows: vec![vec![f64::NAN; degree + 1]; raw_terms],
            };
            return (fit, f64::INFINITY);
        }
        let (lo, hi) = points.iter().fold((i32::MAX, i32::MIN), |(lo, hi), p| {
            (lo.min(p.code), hi.max(p.code))
        });
        let centre_code = ((i64::from(lo) + i64::from(hi) + 1) / 2) as i32;
        let half =
            (i64::from(hi) - i64::from(centre_code)).max(i64::from(centre_code) - i64::from(lo));
        // Smallest power of two >= half: the same exact scaling in f32 and Q.
        let u_shift = 64 - (half.max(1) as u64 - 1).leading_zeros();
        let k = degree + 1;
        // Raw codes scaled to |r| <= 1 for the solve's conditioning.
        let raw_scale = points
            .iter()
            .map(|p| f64::from(p.raw).abs())
            .fold(1.0, f64::max);
        let mut a = DMatrix::zeros(points.len(), k * raw_terms);
        let mut b = DVector::zeros(points.len());
        for (n, p) in points.iter().enumerate() {
            let u = f64::from(p.code - centre_code) / 2f64.powi(u_shift as i32);
            let r = f64::from(p.raw) / raw_scale;
            for i in 0..raw_terms {
                for j in 0..k {
                    a[(n, i * k + j)] = u.powi(j as i32) * r.powi(i as i32);
                }
            }
            b[n] = p.reference;
        }
        let (c, condition) = match crate::station::linalg::svd_bounded(a, true, true) {
            Some(svd) => {
                let condition = svd.singular_values.max() / svd.singular_values.min();
                let cutoff = 1e-12 * svd.singular_values.max();
                let c = svd
                    .solve(&b, cutoff)
                    .unwrap_or_else(|_| DVector::from_element(k * raw_terms, f64::NAN));
                (c, condition)
            }
            None => (
                DVector::from_element(k * raw_terms, f64::NAN),
                f64::INFINITY,
            ),
        };
        let rows = (0..raw_terms)
            .map(|i| {
                (0..k)
                    .map(|j| c[i * k + j] / raw_scale.powi(i as i32))
                    .collect()
            })
            .collect();
        let fit = PolyFit {
            centre_code,
            u_shift,
            rows,
        };
        (fit, condition)
    }

    /// Degree in `u`.
    pub fn degree(&self) -> usize {
        self.rows.first().map_or(0, |r| r.len().saturating_sub(1))
    }

    /// The f32 form the Cortex-M4F runs.
    pub fn f32_form(&self) -> PolyF32Form {
        PolyF32Form {
            centre: self.centre_code as f32,
            u_scale: 2f32.powi(-(self.u_shift as i32)),
            rows: self
                .rows
                .iter()
                .map(|r| r.iter().map(|&c| c as f32).collect())
                .collect(),
        }
    }

    /// The Q-format form the Cortex-M0 runs, its output in Q(`out_bits`)
    /// stimulus units: row `i` in Q(`out_bits + i x_shift`), `x_shift` the
    /// largest that keeps every partial Horner sum of every row within
    /// 2^30 for |u| <= 1 (a factor 2 below i32's range, for the rounding of
    /// each step); row 0 is checked against the same bound.
    pub fn q_form(&self, out_bits: u32) -> Result<PolyQForm, PolyBaselineError> {
        // Partial Horner sums are bounded by sum |c_j| when |u| <= 1.
        let bound = |r: &Vec<f64>| r.iter().map(|c| c.abs()).sum::<f64>();
        let limit = 2f64.powi(30);
        let mut x_shift = 62u32;
        for (i, row) in self.rows.iter().enumerate().skip(1) {
            let room = 30.0 - f64::from(out_bits) - bound(row).max(1e-300).log2();
            x_shift = x_shift.min((room / i as f64).floor().clamp(0.0, 62.0) as u32);
        }
        let mut rows = Vec::with_capacity(self.rows.len());
        for (i, row) in self.rows.iter().enumerate() {
            let scale = 2f64.powi((out_bits + i as u32 * x_shift) as i32);
            // NaN coefficients (a failed solve) are refused too.
            let fits = bound(row) * scale < limit;
            if !fits {
                return Err(PolyBaselineError::Headroom {
                    row: i,
                    bound: bound(row),
                    bits: out_bits + i as u32 * x_shift,
                });
            }
            rows.push(row.iter().map(|&c| (c * scale).round() as i32).collect());
        }
        Ok(PolyQForm {
            centre: self.centre_code,
            u_shift: self.u_shift,
            x_shift,
            out_bits,
            rows,
        })
    }
}

/// Horner's rule in f32 as `poly.rs` runs it: highest coefficient last,
/// `acc = acc * x + c` (two roundings a step; Rust never fuses them).
fn horner_f32(c: &[f32], x: f32) -> f32 {
    let Some((&last, rest)) = c.split_last() else {
        return 0.0;
    };
    rest.iter().rev().fold(last, |acc, &ci| acc * x + ci)
}

/// Horner's rule in Q arithmetic as `poly.rs` runs it: exact 64-bit
/// product, `+ 2^(s-1)`, arithmetic shift right by `s`, plus the next
/// coefficient, saturated to i32.
fn horner_q(c: &[i32], v: i32, s: u32) -> i32 {
    let Some((&last, rest)) = c.split_last() else {
        return 0;
    };
    let round = (1i64 << s) >> 1;
    rest.iter().rev().fold(last, |acc, &ci| {
        let step = ((i64::from(acc) * i64::from(v) + round) >> s) + i64::from(ci);
        step.clamp(i64::from(i32::MIN), i64::from(i32::MAX)) as i32
    })
}

/// The f32 correction: `u = (code - centre) * u_scale`, then Horner.
#[derive(Debug, Clone, PartialEq)]
pub struct PolyF32Form {
    /// Centre code as f32 (exact below 2^24).
    pub centre: f32,
    /// 2^-u_shift (so the scaling is exact).
    pub u_scale: f32,
    /// `rows[i][j]`: coefficient of `u^j raw^i`.
    pub rows: Vec<Vec<f32>>,
}

impl PolyF32Form {
    /// The reading for a temperature-signal code and a raw code, as the
    /// firmware computes it (temperature update, then sample).
    pub fn reading(&self, code: f32, raw: f32) -> f32 {
        let u = (code - self.centre) * self.u_scale;
        let cached: Vec<f32> = self.rows.iter().map(|r| horner_f32(r, u)).collect();
        horner_f32(&cached, raw)
    }
}

/// The Q-format correction: `v = code - centre`, rows by Horner with shift
/// `u_shift`, then the raw-code polynomial with shift `x_shift`.
#[derive(Debug, Clone, PartialEq)]
pub struct PolyQForm {
    /// Centre code.
    pub centre: i32,
    /// Shift of each Horner step in the temperature signal.
    pub u_shift: u32,
    /// Shift of each Horner step in the raw code.
    pub x_shift: u32,
    /// Fraction bits of the reading.
    pub out_bits: u32,
    /// `rows[i][j]`: coefficient of `u^j raw^i` in Q(`out_bits + i x_shift`).
    pub rows: Vec<Vec<i32>>,
}

impl PolyQForm {
    /// The reading in Q(`out_bits`), bit-exact as the firmware computes it.
    pub fn reading_q(&self, code: i32, raw: i32) -> i32 {
        let v = code.wrapping_sub(self.centre);
        let cached: Vec<i32> = self
            .rows
            .iter()
            .map(|r| horner_q(r, v, self.u_shift))
            .collect();
        horner_q(&cached, raw, self.x_shift)
    }

    /// The reading in stimulus units.
    pub fn reading(&self, code: i32, raw: i32) -> f64 {
        f64::from(self.reading_q(code, raw)) * 2f64.powi(-(self.out_bits as i32))
    }
}

/// Why no baseline could be made.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum PolyBaselineError {
    /// A Q row does not fit i32 with the required headroom.
    #[error("Q form: row {row} (coefficient sum {bound:e}) does not fit 2^30 in Q{bits}")]
    Headroom {
        /// Power of the raw code.
        row: usize,
        /// Sum of the row's |coefficients|.
        bound: f64,
        /// Fraction bits the row needs.
        bits: u32,
    },
    /// No degree up to [`MAX_DEGREE`] reaches the targets.
    #[error(
        "no degree up to {max_degree} reaches the table's accuracy (f32 {target_f32_ppm:.1} ppm, Q {target_q_ppm:.1} ppm); best f32 {best_f32_ppm:.1} ppm, Q {best_q_ppm:.1} ppm"
    )]
    Unreachable {
        /// Highest degree tried.
        max_degree: usize,
        /// Target of the f32 form.
        target_f32_ppm: f64,
        /// Target of the Q form.
        target_q_ppm: f64,
        /// Error of the f32 form at `max_degree`.
        best_f32_ppm: f64,
        /// Error of the Q form at `max_degree`.
        best_q_ppm: f64,
    },
}

/// A fitted baseline with its dense errors, ppm of span.
#[derive(Debug, Clone, PartialEq)]
pub struct Baseline {
    /// The fit in f64.
    pub fit: PolyFit,
    /// Its f32 form.
    pub f32_form: PolyF32Form,
    /// Its Q form.
    pub q_form: PolyQForm,
    /// Dense error of the f32 form.
    pub f32_error: ErrorStats,
    /// Dense error of the Q form.
    pub q_error: ErrorStats,
}

/// Fraction bits of the Q reading: the largest with four times the largest
/// full-scale stimulus below 2^30, the headroom the table's Q output has.
pub fn out_bits(frame: &TableFrame<'_>) -> u32 {
    let max_out = 4.0 * frame.fs_lo.abs().max(frame.fs_hi.abs());
    (30 - max_out.max(1e-30).log2().ceil() as i32).clamp(0, 30) as u32
}

/// Fits `degree` on the fit grid and measures both forms on `dense`.
pub fn baseline_of_degree(
    frame: &TableFrame<'_>,
    fit_points: &[Point],
    dense: &[Point],
    degree: usize,
    raw_terms: usize,
) -> Result<Baseline, PolyBaselineError> {
    let fit = PolyFit::fit(fit_points, degree, raw_terms);
    let f32_form = fit.f32_form();
    let q_form = fit.q_form(out_bits(frame))?;
    let span = frame.fs_hi - frame.fs_lo;
    let f32_error = error_stats(dense, span, |p| {
        f64::from(f32_form.reading(p.code as f32, p.raw as f32))
    });
    let q_error = error_stats(dense, span, |p| q_form.reading(p.code, p.raw));
    Ok(Baseline {
        fit,
        f32_form,
        q_form,
        f32_error,
        q_error,
    })
}

/// The lowest-degree baseline whose dense maximum error (the grid and
/// metric of `semidrift verify`: [`DENSE_TEMPS`] x [`DENSE_STIMULI`]) is at
/// or below `target_f32_ppm` in f32 and `target_q_ppm` in Q, with
/// `raw_terms` powers of the raw code; also the baseline one degree lower
/// (`None` at degree 0), which misses a target.
pub fn equal_accuracy(
    frame: &TableFrame<'_>,
    target_f32_ppm: f64,
    target_q_ppm: f64,
    raw_terms: usize,
) -> Result<(Baseline, Option<Baseline>), PolyBaselineError> {
    let fit_points = grid_points(frame, FIT_TEMPS, DENSE_STIMULI);
    let dense = grid_points(frame, DENSE_TEMPS, DENSE_STIMULI);
    let mut below = None;
    for degree in 0..=MAX_DEGREE {
        let b = baseline_of_degree(frame, &fit_points, &dense, degree, raw_terms)?;
        if b.f32_error.max_error_ppm <= target_f32_ppm && b.q_error.max_error_ppm <= target_q_ppm {
            return Ok((b, below));
        }
        below = Some(b);
    }
    let best = below.as_ref();
    Err(PolyBaselineError::Unreachable {
        max_degree: MAX_DEGREE,
        target_f32_ppm,
        target_q_ppm,
        best_f32_ppm: best.map_or(f64::NAN, |b| b.f32_error.max_error_ppm),
        best_q_ppm: best.map_or(f64::NAN, |b| b.q_error.max_error_ppm),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A correction the form represents exactly: degree 2 in u, linear in raw.
    fn truth(u: f64, raw: f64) -> f64 {
        (0.3 - 0.02 * u + 0.004 * u * u) + raw * (1.2e-6 + 3e-8 * u - 2e-9 * u * u)
    }

    /// Points on codes 3.9e6..4.6e6 (u_shift 19 about the centre) and raw
    /// codes -1e5..8e6, with the exact reference of [`truth`].
    fn synthetic() -> Vec<Point> {
        let mut v = Vec::new();
        for k in 0..=40 {
            let code = 3_900_000 + 17_500 * k;
            for raw in [-100_000, 1_000_000, 4_000_000, 8_000_000] {
                let u = f64::from(code - 4_250_000) / 2f64.powi(19);
                v.push(Point {
                    t_c: k as f64,
                    stimulus: f64::from(raw),
                    code,
                    raw,
                    reference: truth(u, f64::from(raw)),
                });
            }
        }
        v
    }

    #[test]
    fn fit_recovers_a_representable_correction() {
        let pts = synthetic();
        let fit = PolyFit::fit(&pts, 2, 2);
        assert_eq!((fit.centre_code, fit.u_shift), (4_250_000, 19));
        let want: [[f64; 3]; 2] = [[0.3, -0.02, 0.004], [1.2e-6, 3e-8, -2e-9]];
        for (i, row) in want.iter().enumerate() {
            for (j, &w) in row.iter().enumerate() {
                let got = fit.rows[i][j];
                // Exact data, 6 columns scaled to |.| <= 1, 164 rows: only
                // rounding, 1e-9 of the row's leading coefficient.
                let tol = 1e-9 * row[0].abs();
                assert!(
                    (got - w).abs() <= tol,
                    "c[{i}][{j}]: got {got:e}, expected {w:e}"
                );
            }
        }
    }

    /// (form, code, raw): the f32 and Q forms against an f64 evaluation.
    #[test]
    fn forms_agree_with_the_f64_fit() {
        let pts = synthetic();
        let fit = PolyFit::fit(&pts, 2, 2);
        let f = fit.f32_form();
        let q = fit.q_form(24).unwrap();
        // Readings reach ~10 units: f32 rounds each of ~6 operations to
        // 2^-24 relative of up to ~10.3, so 1e-5 absolute; Q rounds the
        // coefficients to 2^-24 (row 0) and 2^-(24 + x_shift) x 8e6 (row 1),
        // each Horner step to 2^-25: 1e-6 absolute. A wrong shift or
        // coefficient order moves the result by >= 1e-3.
        for p in &pts {
            let want = p.reference;
            let got_f = f64::from(f.reading(p.code as f32, p.raw as f32));
            let got_q = q.reading(p.code, p.raw);
            assert!((got_f - want).abs() <= 1e-5, "f32 {p:?}: got {got_f}");
            assert!((got_q - want).abs() <= 1e-6, "Q {p:?}: got {got_q}");
        }
        // The largest shift with row 1's coefficient sum 1.232e-6 below 2^30
        // in Q(24 + s): 2^49 x 1.232e-6 = 6.9e8 < 2^30 = 1.07e9 < 2^50 x 1.232e-6.
        assert_eq!(q.x_shift, 25);
    }

    /// The condition number grows with the degree, and a degree the data
    /// cannot determine (more coefficients in `u` than distinct codes) is
    /// above `MAX_CONDITION`, which the sweep stops at.
    #[test]
    fn condition_flags_an_undetermined_fit() {
        let pts = synthetic();
        let (_, c2) = PolyFit::fit_with_condition(&pts, 2, 2);
        let (_, c4) = PolyFit::fit_with_condition(&pts, 4, 2);
        // Degree 2 on 41 codes over |u| <= 0.67: well conditioned.
        assert!(c2 > 1.0 && c2 < 1e4, "degree 2: condition {c2:e}");
        assert!(c4 > c2, "degree 4 {c4:e} should exceed degree 2 {c2:e}");
        // Three distinct codes cannot determine five coefficients per row:
        // the smallest singular values are rounding, ~1e-16 of the largest.
        let three: Vec<Point> = pts.iter().filter(|p| p.t_c <= 2.0).copied().collect();
        let (_, c) = PolyFit::fit_with_condition(&three, 4, 2);
        assert!(
            c.is_nan() || c > MAX_CONDITION,
            "3 codes, degree 4: condition {c:e}"
        );
        let (_, c) = PolyFit::fit_with_condition(&[], 1, 2);
        assert_eq!(c, f64::INFINITY);
    }

    #[test]
    fn no_points_give_a_refused_fit() {
        let fit = PolyFit::fit(&[], 2, 2);
        assert!(fit.rows.iter().flatten().all(|c| c.is_nan()), "{fit:?}");
        assert!(matches!(
            fit.q_form(24),
            Err(PolyBaselineError::Headroom { row: 0, .. })
        ));
    }

    #[test]
    fn error_stats_finds_the_worst_point_and_can_fail() {
        let pts = synthetic();
        let exact = error_stats(&pts, 10.0, |p| p.reference);
        assert_eq!(exact.max_error_ppm, 0.0);
        // One point off by 1e-4 of a 10-unit span: 10 ppm, found where it is.
        let off = pts[7];
        let s = error_stats(&pts, 10.0, |p| {
            p.reference + if p == &off { 1e-4 } else { 0.0 }
        });
        assert!((s.max_error_ppm - 10.0).abs() < 1e-6, "{s:?}");
        assert_eq!((s.worst_t_c, s.worst_stimulus), (off.t_c, off.stimulus));
        let nan = error_stats(&pts, 10.0, |_| f64::NAN);
        assert_eq!(nan.max_error_ppm, f64::INFINITY);
    }

    #[test]
    fn horner_steps_match_hand_values() {
        // 1 + 2 v + 3 v^2 at v = 2^9 / 2^10 = 0.5: 3 v = 1.5 rounds half up
        // to 2, + 2 = 4; 4 v = 2, + 1 = 3 (the exact 2.75 rounded by steps).
        assert_eq!(horner_q(&[1, 2, 3], 1 << 9, 10), 3);
        assert_eq!(horner_q(&[], 5, 3), 0);
        assert_eq!(horner_q(&[i32::MAX, i32::MAX], 1 << 4, 3), i32::MAX);
        assert_eq!(horner_f32(&[1.0, 2.0, 3.0], 0.5), 2.75);
        assert_eq!(horner_f32(&[], 0.5), 0.0);
    }
}
