//! Nonlinear least squares for per-part parameters: Levenberg-Marquardt
//! (Moré 1978, via the `levenberg-marquardt` crate), the parameter covariance
//! from the Jacobian at the solution, and a conditioning check that reports
//! fits the data cannot determine instead of accepting them.

use levenberg_marquardt::{LeastSquaresProblem, LevenbergMarquardt};
use nalgebra::storage::Owned;
use nalgebra::{DMatrix, DVector, Dyn};

/// A least-squares problem: residuals as a function of the parameters.
pub trait FitProblem {
    /// Parameter names, in parameter order (used in part files and reports).
    fn param_names(&self) -> &[&'static str];
    /// Number of residuals.
    fn n_residuals(&self) -> usize;
    /// Writes the residuals (model minus data, in the units of the data,
    /// already divided by each point's standard uncertainty if weighted) at
    /// `params` into `out` (length [`FitProblem::n_residuals`]).
    fn residuals(&self, params: &[f64], out: &mut [f64]);
    /// Typical magnitude of each parameter, used for finite-difference steps
    /// and to scale the conditioning check.
    fn scales(&self) -> Vec<f64>;
}

/// Tolerances of [`fit`].
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FitOptions {
    /// Largest accepted condition number of the column-scaled Jacobian.
    pub max_condition: f64,
}

impl Default for FitOptions {
    fn default() -> Self {
        // cond(J) = 1e7 means cond(J^T J) = 1e14, two decades above f64
        // epsilon: the covariance would be noise and some parameter
        // combination is not determined by the data (common practice).
        FitOptions { max_condition: 1e7 }
    }
}

/// Whether a fit can be trusted.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
#[serde(tag = "kind", rename_all = "snake_case")]
pub enum FitStatus {
    /// Converged, determined, well conditioned.
    Ok,
    /// Not more residuals than parameters: nothing left to estimate the noise.
    TooFewPoints {
        /// Number of residuals.
        points: usize,
        /// Number of parameters.
        params: usize,
    },
    /// The data cannot separate some parameter combination (collinear data,
    /// too few distinct temperatures).
    IllConditioned {
        /// Condition number of the column-scaled Jacobian.
        condition: f64,
    },
    /// The optimizer stopped without converging.
    NotConverged {
        /// The optimizer's reason.
        reason: String,
    },
}

impl FitStatus {
    /// True for [`FitStatus::Ok`].
    pub fn is_ok(&self) -> bool {
        matches!(self, FitStatus::Ok)
    }
}

impl std::fmt::Display for FitStatus {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            FitStatus::Ok => f.write_str("ok"),
            FitStatus::TooFewPoints { points, params } => {
                write!(
                    f,
                    "too few points: {points} residuals for {params} parameters"
                )
            }
            FitStatus::IllConditioned { condition } => write!(
                f,
                "ill-conditioned: Jacobian condition number {condition:.3e} (collinear data or too few temperatures)"
            ),
            FitStatus::NotConverged { reason } => write!(f, "did not converge: {reason}"),
        }
    }
}

/// The outcome of a fit.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct FitResult {
    /// Parameter names.
    pub names: Vec<String>,
    /// Fitted parameters.
    pub params: Vec<f64>,
    /// One-sigma standard errors (sqrt of the covariance diagonal).
    pub std_errors: Vec<f64>,
    /// Covariance (J^T J)^-1 s^2, s^2 = sum of squared residuals / degrees of freedom.
    pub covariance: Vec<Vec<f64>>,
    /// Residuals at the solution.
    pub residuals: Vec<f64>,
    /// Root mean square of the residuals.
    pub rms: f64,
    /// Degrees of freedom (residuals minus parameters).
    pub dof: usize,
    /// Condition number of the column-scaled Jacobian.
    pub condition: f64,
    /// Verdict.
    pub status: FitStatus,
}

struct Adapter<'a, P: FitProblem + ?Sized> {
    problem: &'a P,
    params: DVector<f64>,
    steps: Vec<f64>,
}

impl<P: FitProblem + ?Sized> Adapter<'_, P> {
    fn residual_vec(&self, p: &[f64]) -> DVector<f64> {
        let mut r = DVector::zeros(self.problem.n_residuals());
        self.problem.residuals(p, r.as_mut_slice());
        r
    }

    /// Central-difference Jacobian (second-order accurate).
    fn jacobian_at(&self, p: &[f64]) -> DMatrix<f64> {
        let m = self.problem.n_residuals();
        let mut jac = DMatrix::zeros(m, p.len());
        let mut q = p.to_vec();
        for j in 0..p.len() {
            let h = self.steps[j];
            q[j] = p[j] + h;
            let up = self.residual_vec(&q);
            q[j] = p[j] - h;
            let down = self.residual_vec(&q);
            q[j] = p[j];
            jac.set_column(j, &((up - down) / (2.0 * h)));
        }
        jac
    }
}

impl<P: FitProblem + ?Sized> LeastSquaresProblem<f64, Dyn, Dyn> for Adapter<'_, P> {
    type ResidualStorage = Owned<f64, Dyn>;
    type JacobianStorage = Owned<f64, Dyn, Dyn>;
    type ParameterStorage = Owned<f64, Dyn>;

    fn set_params(&mut self, x: &DVector<f64>) {
        self.params.copy_from(x);
    }

    fn params(&self) -> DVector<f64> {
        self.params.clone()
    }

    fn residuals(&self) -> Option<DVector<f64>> {
        let r = self.residual_vec(self.params.as_slice());
        r.iter().all(|v| v.is_finite()).then_some(r)
    }

    fn jacobian(&self) -> Option<DMatrix<f64>> {
        let j = self.jacobian_at(self.params.as_slice());
        j.iter().all(|v| v.is_finite()).then_some(j)
    }
}

/// Fits `problem` from `initial` and judges the result.
pub fn fit<P: FitProblem + ?Sized>(problem: &P, initial: &[f64], options: FitOptions) -> FitResult {
    let n = initial.len();
    let m = problem.n_residuals();
    let scales = problem.scales();
    // Step 1e-6 of the parameter's magnitude: central-difference truncation
    // error ~h^2, rounding ~eps/h, balanced near eps^(1/3) ~ 6e-6 (common practice).
    let steps: Vec<f64> = (0..n)
        .map(|j| 1e-6 * initial[j].abs().max(scales.get(j).copied().unwrap_or(1.0)))
        .collect();
    let adapter = Adapter {
        problem,
        params: DVector::from_column_slice(initial),
        steps,
    };
    let (adapter, report) = LevenbergMarquardt::new()
        .with_patience(200)
        .minimize(adapter);
    let params = adapter.params.as_slice().to_vec();
    let residuals = adapter.residual_vec(&params);
    let jac = adapter.jacobian_at(&params);
    let ssr = residuals.norm_squared();
    let dof = m.saturating_sub(n);
    let rms = if m > 0 { (ssr / m as f64).sqrt() } else { 0.0 };

    // Condition of the Jacobian with unit-norm columns: invariant to the
    // parameters' units, so it measures only collinearity.
    let mut scaled = jac.clone();
    for mut col in scaled.column_iter_mut() {
        let norm = col.norm();
        if norm > 0.0 {
            col /= norm;
        }
    }
    // Bounded: a Jacobian of degenerate data (all-zero outputs, subnormal or
    // huge readings) must give "ill-conditioned", never a hang.
    let condition = match crate::station::linalg::singular_values(scaled) {
        Some(sv) if n > 0 => {
            let smax = sv.iter().copied().fold(0.0, f64::max);
            let smin = sv.iter().copied().fold(f64::INFINITY, f64::min);
            if smin > 0.0 {
                smax / smin
            } else {
                f64::INFINITY
            }
        }
        _ => f64::INFINITY,
    };

    let s2 = if dof > 0 { ssr / dof as f64 } else { f64::NAN };
    let jtj = jac.transpose() * &jac;
    let covariance = match jtj.clone().try_inverse() {
        Some(inv) if condition.is_finite() => inv * s2,
        _ => DMatrix::from_element(n, n, f64::NAN),
    };
    let std_errors = (0..n).map(|j| covariance[(j, j)].max(0.0).sqrt()).collect();

    let status = if m <= n {
        FitStatus::TooFewPoints {
            points: m,
            params: n,
        }
    } else if condition.is_nan() || condition > options.max_condition {
        FitStatus::IllConditioned { condition }
    } else if !report.termination.was_successful() {
        FitStatus::NotConverged {
            reason: format!("{:?}", report.termination),
        }
    } else {
        FitStatus::Ok
    };
    FitResult {
        names: problem
            .param_names()
            .iter()
            .map(|s| s.to_string())
            .collect(),
        params,
        std_errors,
        covariance: (0..n)
            .map(|i| (0..n).map(|j| covariance[(i, j)]).collect())
            .collect(),
        residuals: residuals.as_slice().to_vec(),
        rms,
        dof,
        condition,
        status,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// y = a * exp(b * x) + c on given x with given y.
    struct ExpModel {
        x: Vec<f64>,
        y: Vec<f64>,
    }

    impl FitProblem for ExpModel {
        fn param_names(&self) -> &[&'static str] {
            &["a", "b", "c"]
        }
        fn n_residuals(&self) -> usize {
            self.x.len()
        }
        fn residuals(&self, p: &[f64], out: &mut [f64]) {
            for ((o, x), y) in out.iter_mut().zip(&self.x).zip(&self.y) {
                *o = p[0] * (p[1] * x).exp() + p[2] - y;
            }
        }
        fn scales(&self) -> Vec<f64> {
            vec![1.0, 1.0, 1.0]
        }
    }

    #[test]
    fn recovers_exact_parameters() {
        let truth = [2.5, -0.7, 0.3];
        let x: Vec<f64> = (0..12).map(|k| k as f64 * 0.25).collect();
        let y = x
            .iter()
            .map(|x| truth[0] * (truth[1] * x).exp() + truth[2])
            .collect();
        let r = fit(&ExpModel { x, y }, &[1.0, -0.1, 0.0], FitOptions::default());
        assert!(r.status.is_ok(), "{}", r.status);
        for (k, (got, want)) in r.params.iter().zip(truth).enumerate() {
            // Noise-free data: the solution is exact up to the optimizer's
            // tolerance (1.49e-8 relative in x by default), so 1e-6 is ample.
            assert!(
                (got - want).abs() < 1e-6,
                "param {k}: got {got}, expected {want}"
            );
        }
    }

    #[test]
    fn covariance_matches_linear_regression_formula() {
        // A straight line has a closed-form slope variance to compare with.
        struct Line(Vec<f64>, Vec<f64>);
        impl FitProblem for Line {
            fn param_names(&self) -> &[&'static str] {
                &["k", "d"]
            }
            fn n_residuals(&self) -> usize {
                self.0.len()
            }
            fn residuals(&self, p: &[f64], out: &mut [f64]) {
                for ((o, x), y) in out.iter_mut().zip(&self.0).zip(&self.1) {
                    *o = p[0] * x + p[1] - y;
                }
            }
            fn scales(&self) -> Vec<f64> {
                vec![1.0, 1.0]
            }
        }
        let x = vec![0.0, 1.0, 2.0, 3.0, 4.0];
        let y = vec![0.1, 0.9, 2.2, 2.8, 4.1];
        let r = fit(&Line(x.clone(), y), &[0.0, 0.0], FitOptions::default());
        assert!(r.status.is_ok(), "{}", r.status);
        // Closed form: var(k) = s^2 / Sxx with Sxx = sum (x - mean)^2 = 10.
        let s2: f64 = r.residuals.iter().map(|e| e * e).sum::<f64>() / 3.0;
        let expected = s2 / 10.0;
        let got = r.covariance[0][0];
        // Central differences are exact for a linear model up to rounding.
        assert!(
            (got - expected).abs() < 1e-9 * expected.max(1e-12),
            "var(k) {got} vs {expected}"
        );
    }

    #[test]
    fn collinear_and_underdetermined_fits_are_reported() {
        // All x equal: a*exp(b x) and c cannot be separated.
        let flat = ExpModel {
            x: vec![1.0; 6],
            y: vec![2.0; 6],
        };
        let r = fit(&flat, &[1.0, 0.5, 0.0], FitOptions::default());
        assert!(
            matches!(r.status, FitStatus::IllConditioned { .. }),
            "collinear data accepted: {}",
            r.status
        );
        // Three points for three parameters: nothing left for the noise.
        let tight = ExpModel {
            x: vec![0.0, 1.0, 2.0],
            y: vec![3.0, 2.0, 1.5],
        };
        let r = fit(&tight, &[1.0, -0.5, 1.0], FitOptions::default());
        assert!(
            matches!(
                r.status,
                FitStatus::TooFewPoints {
                    points: 3,
                    params: 3
                }
            ),
            "{}",
            r.status
        );
    }
}
