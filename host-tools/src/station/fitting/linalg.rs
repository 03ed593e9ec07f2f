//! Bounded linear algebra for the station's fits.
//!
//! nalgebra's plain `svd` iterates until it converges, and on non-finite,
//! subnormal or absurdly scaled data it never does: one degenerate part would
//! hang a whole lot. Every decomposition in the station goes through
//! [`svd_bounded`], which refuses non-finite input and caps the sweeps.

use nalgebra::{DMatrix, DVector, Dyn, SVD};

/// Largest magnitude an entry may have: beyond it products of two entries
/// overflow f64 and the rotations lose all meaning.
const MAX_ENTRY: f64 = 1e150;

/// Singular value decomposition with a bounded number of iterations: `None`
/// when an entry is non-finite or beyond 1e150 in magnitude, or when it does
/// not converge, so a degenerate part is reported instead of hanging the lot.
pub fn svd_bounded(m: DMatrix<f64>, u: bool, v: bool) -> Option<SVD<f64, Dyn, Dyn>> {
    if m.iter().any(|x| !x.is_finite() || x.abs() > MAX_ENTRY) {
        return None;
    }
    // Subnormal entries make the Givens rotations crawl: flush them to zero
    // (they are below any measurement's resolution by 290 decades).
    let m = m.map(|x| if x.is_subnormal() { 0.0 } else { x });
    // 1 000 sweeps: a well-posed matrix of the station's sizes converges in tens.
    m.try_svd(u, v, f64::EPSILON, 1000)
}

/// Singular values only, bounded as [`svd_bounded`].
pub fn singular_values(m: DMatrix<f64>) -> Option<DVector<f64>> {
    svd_bounded(m, false, false).map(|s| s.singular_values)
}

/// Least squares `a x = b` by SVD with singular values below 1e-12 of the
/// largest dropped (a relative cutoff near 1e4 eps is common practice):
/// `None` when the decomposition fails or the data are not finite.
pub fn lstsq(a: DMatrix<f64>, b: &DVector<f64>) -> Option<DVector<f64>> {
    if b.iter().any(|x| !x.is_finite()) {
        return None;
    }
    let svd = svd_bounded(a, true, true)?;
    let smax = svd.singular_values.max();
    let x = svd.solve(b, 1e-12 * smax).ok()?;
    x.iter().all(|v| v.is_finite()).then_some(x)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn bounded_svd_refuses_non_finite_and_solves_the_rest() {
        // (matrix, expect a decomposition)
        let table = [
            (DMatrix::from_row_slice(2, 2, &[2.0, 0.0, 0.0, 3.0]), true),
            (
                DMatrix::from_row_slice(2, 2, &[f64::NAN, 0.0, 0.0, 1.0]),
                false,
            ),
            (
                DMatrix::from_row_slice(2, 2, &[f64::INFINITY, 1.0, 1.0, 1.0]),
                false,
            ),
            (
                DMatrix::from_row_slice(2, 2, &[1e200, 1.0, 1.0, 1.0]),
                false,
            ),
        ];
        for (m, ok) in table {
            let got = svd_bounded(m.clone(), true, true);
            assert_eq!(got.is_some(), ok, "{m}");
            if let Some(svd) = got {
                // Diagonal 2, 3: singular values exactly {3, 2} up to rounding.
                let mut s: Vec<f64> = svd.singular_values.iter().copied().collect();
                s.sort_by(f64::total_cmp);
                assert!(
                    (s[0] - 2.0).abs() < 1e-12 && (s[1] - 3.0).abs() < 1e-12,
                    "{s:?}"
                );
            }
        }
    }

    #[test]
    fn subnormal_and_zero_matrices_finish() {
        // The matrices that hung the unbounded SVD: all zeros, and a column
        // of subnormals beside normal entries. Each must come back (finite
        // singular values), whatever they are.
        let zeros = DMatrix::<f64>::zeros(9, 4);
        let mut tiny = DMatrix::from_fn(9, 3, |i, j| 1.0 + (i * 3 + j) as f64);
        tiny.column_mut(1).fill(1e-320);
        for m in [zeros, tiny] {
            let s = singular_values(m.clone()).expect("decomposes");
            assert!(s.iter().all(|v| v.is_finite()), "{m}");
        }
    }

    #[test]
    fn least_squares_recovers_a_line() {
        // y = 2 + 3 x exactly on 4 points: the solution is exact to rounding.
        let a = DMatrix::from_fn(4, 2, |i, j| if j == 0 { 1.0 } else { i as f64 });
        let b = DVector::from_fn(4, |i, _| 2.0 + 3.0 * i as f64);
        let x = lstsq(a.clone(), &b).unwrap();
        assert!(
            (x[0] - 2.0).abs() < 1e-12 && (x[1] - 3.0).abs() < 1e-12,
            "{x}"
        );
        let mut bad = b.clone();
        bad[0] = f64::NAN;
        assert!(lstsq(a, &bad).is_none());
    }
}
