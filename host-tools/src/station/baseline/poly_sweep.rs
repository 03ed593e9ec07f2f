//! The polynomial baseline's accuracy at every degree in `u`, so the
//! firmware benchmark can put an instruction count per degree beside the
//! accuracy that degree buys, and find where a table's look-up (whose cost
//! does not grow with its node count) overtakes the polynomial's update.
//!
//! Each degree is fitted and measured exactly as [`equal_accuracy`] fits and
//! measures the degree it picks ([`baseline_of_degree`]'s f32 form on the
//! same fit and dense grids, `semidrift verify`'s metric); the f64 fit's own
//! error is measured too, so the rounding of the f32 form shows apart from
//! the fit. The Q form is made when its coefficients fit i32 and measured
//! bit-exactly as the integer firmware runs it.
//!
//! [`equal_accuracy`]: crate::station::poly_baseline::equal_accuracy
//! [`baseline_of_degree`]: crate::station::poly_baseline::baseline_of_degree

use crate::station::image_eval::ErrorStats;
use crate::station::poly_baseline::{
    MAX_CONDITION, Point, PolyF32Form, PolyFit, PolyQForm, error_stats, out_bits,
};
use crate::station::table::TableFrame;

/// One degree of a sweep.
#[derive(Debug, Clone, PartialEq)]
pub struct SweepDegree {
    /// Degree of each `p_i` in `u`.
    pub degree: usize,
    /// Condition number of the fit's scaled design matrix (at most
    /// [`MAX_CONDITION`] in a sweep).
    pub condition: f64,
    /// The fit in f64.
    pub fit: PolyFit,
    /// Its f32 form.
    pub f32_form: PolyF32Form,
    /// Its Q form, if every row fits i32 with the headroom `q_form` needs.
    pub q_form: Option<PolyQForm>,
    /// Dense error of the f64 fit (no rounding of coefficients or steps).
    pub f64_error: ErrorStats,
    /// Dense error of the f32 form.
    pub f32_error: ErrorStats,
    /// Dense error of the Q form, when there is one.
    pub q_error: Option<ErrorStats>,
}

/// Why a sweep ended.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum SweepEnd {
    /// Every degree up to the requested maximum was fitted.
    MaxDegree,
    /// The next degree's design matrix has a condition number above
    /// [`MAX_CONDITION`]: its least-squares solve would drop a singular
    /// value, so that degree and all above it are left out.
    IllConditioned {
        /// The degree left out.
        degree: usize,
        /// Its condition number.
        condition: f64,
    },
}

/// The f64 fit's reading (Horner in f64, the same order as the forms).
fn reading_f64(fit: &PolyFit, code: i32, raw: i32) -> f64 {
    let u = f64::from(code - fit.centre_code) * 2f64.powi(-(fit.u_shift as i32));
    let horner = |c: &[f64], x: f64| c.iter().rev().fold(0.0, |acc, &ci| acc * x + ci);
    let cached: Vec<f64> = fit.rows.iter().map(|r| horner(r, u)).collect();
    horner(&cached, f64::from(raw))
}

/// Fits degrees 1..=`max_degree` on `fit_points` and measures each on
/// `dense`, stopping before the first degree whose design matrix is
/// ill-conditioned (condition number above [`MAX_CONDITION`]).
pub fn degree_sweep(
    frame: &TableFrame<'_>,
    fit_points: &[Point],
    dense: &[Point],
    max_degree: usize,
    raw_terms: usize,
) -> (Vec<SweepDegree>, SweepEnd) {
    let span = frame.fs_hi - frame.fs_lo;
    let bits = out_bits(frame);
    let mut sweep = Vec::with_capacity(max_degree);
    for degree in 1..=max_degree {
        let (fit, condition) = PolyFit::fit_with_condition(fit_points, degree, raw_terms);
        // NaN (no points) counts as ill-conditioned too.
        if condition.is_nan() || condition > MAX_CONDITION {
            return (sweep, SweepEnd::IllConditioned { degree, condition });
        }
        let f32_form = fit.f32_form();
        let q_form = fit.q_form(bits).ok();
        let f64_error = error_stats(dense, span, |p| reading_f64(&fit, p.code, p.raw));
        // As baseline_of_degree measures the f32 form.
        let f32_error = error_stats(dense, span, |p| {
            f64::from(f32_form.reading(p.code as f32, p.raw as f32))
        });
        let q_error = q_form
            .as_ref()
            .map(|q| error_stats(dense, span, |p| q.reading(p.code, p.raw)));
        sweep.push(SweepDegree {
            degree,
            condition,
            fit,
            f32_form,
            q_form,
            f64_error,
            f32_error,
            q_error,
        });
    }
    (sweep, SweepEnd::MaxDegree)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A fit with known rows: `reading_f64` is plain Horner in `u` and raw.
    #[test]
    fn reading_f64_matches_hand_values() {
        let fit = PolyFit {
            centre_code: 1000,
            u_shift: 3,
            rows: vec![vec![1.0, 2.0, 3.0], vec![0.5, 0.25, 0.0]],
        };
        // code 1004: u = 0.5; p0 = 1 + 1 + 0.75 = 2.75, p1 = 0.5 + 0.125.
        // Reading at raw 8: 2.75 + 0.625 x 8 = 7.75 (exact in binary).
        let cases = [
            (1004, 8, 7.75),
            (1000, 0, 1.0),
            (996, 4, 1.0 - 1.0 + 0.75 + 4.0 * 0.375),
        ];
        for (code, raw, want) in cases {
            let got = reading_f64(&fit, code, raw);
            // Every value above is a short dyadic fraction: exact in f64.
            assert_eq!(
                got, want,
                "code {code} raw {raw}: got {got}, expected {want}"
            );
        }
        assert_ne!(reading_f64(&fit, 1004, 8), 7.5, "the comparison can fail");
    }
}
