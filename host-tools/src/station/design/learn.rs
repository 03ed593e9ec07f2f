//! Learning a design from a qualification lot: parts of one design measured
//! at many temperatures and stimuli.
//!
//! 1. Each part's rows are reduced to steps ([`super::reduce`]).
//! 2. Each part's thermometer, offset, span and nonlinearity curves are
//!    fitted on the family basis (physics shapes + Legendre correction) by
//!    ridge regression; the ridge weight is the one that predicts a left-out
//!    qualification temperature best, summed over parts and temperatures.
//!    Output curves are taken against the temperature the part's own
//!    smoothed thermometer reads, as in production.
//! 3. Functional principal components: the lot's mean curve and the modes in
//!    which parts differ (singular vectors of the parts' deviations on a 1 K
//!    grid over the qualification range).
//! 4. Production-plan cross-validation: each qualification part in turn is
//!    left out, the mean and modes are learned from the others, the part is
//!    calibrated with the production plan's temperatures and stimuli only,
//!    and its error is measured at every other reading. The mode count of
//!    each family is chosen to minimise the rms of those errors inside the
//!    operating range (a tenth of the mean square outside keeps the
//!    extrapolation sane); their worst case is the plan's model error.

use super::super::bow::Bow;
use super::super::chamber::{ChamberData, ChamberRow};
use super::super::curves::ShapeCurves;
use super::super::scenario::Scenario;
use super::basis::{BasisSpec, Family, MAX_BASIS, dot};
use super::model::{
    ALL_MODES, DesignCore, DesignPartModel, FamilyCurves, FamilyFit, MAX_MODES, PartFit,
    fit_part_with, fit_thermometer, thermometer_reading,
};
use super::reduce::{ReadFrame, SAME_STEP_K, Step, reduce, reduce_read};
use nalgebra::{DMatrix, DVector};

/// Fewest parts a qualification lot may have (modes and cross-validation
/// need several parts; 10 or more is a good plan).
pub const MIN_PARTS: usize = 5;
/// Fewest chamber temperatures per part (8 or more, beyond the operating
/// range on both sides, is a good plan).
pub const MIN_TEMPERATURES: usize = 6;
/// Fewest distinct stimuli per temperature (5 is a good plan; 3 are the
/// least that show a nonlinearity).
pub const MIN_STIMULI: usize = 3;
/// Highest Legendre degree of the correction; lower when there are few
/// temperatures (degree = temperatures - 4, at most this).
pub const DEGREE_CAP: usize = 6;
/// Ridge weights tried, relative to the family's data scale squared.
const LAMBDAS: [f64; 11] = [
    1e-9, 1e-8, 1e-7, 1e-6, 1e-5, 1e-4, 1e-3, 1e-2, 1e-1, 1.0, 10.0,
];
/// Step of the grid the principal components are taken on, K.
const GRID_STEP_K: f64 = 1.0;

/// Why a qualification lot cannot be learned from.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum QualifyError {
    /// Too few parts.
    #[error(
        "{file}: too few parts: {found} with usable data (need at least {min}; 10 or more is a good plan)"
    )]
    TooFewParts {
        /// File.
        file: String,
        /// Parts found.
        found: usize,
        /// Least allowed.
        min: usize,
    },
    /// A part has too few temperatures.
    #[error(
        "{file}:{line}: field 'chamber_c': part {serial} has {found} usable chamber temperatures (need at least {min}; 8 or more spanning the operating range and beyond is a good plan)"
    )]
    TooFewTemperatures {
        /// File.
        file: String,
        /// First line of the part.
        line: usize,
        /// Serial.
        serial: String,
        /// Found.
        found: usize,
        /// Least allowed.
        min: usize,
    },
    /// A step has too few stimuli.
    #[error(
        "{file}:{line}: field 'stimulus': part {serial} has {found} distinct stimuli at {chamber_c} C (need at least {min} at every temperature; 5 is a good plan)"
    )]
    TooFewStimuli {
        /// File.
        file: String,
        /// First line of the step.
        line: usize,
        /// Serial.
        serial: String,
        /// Chamber temperature.
        chamber_c: f64,
        /// Found.
        found: usize,
        /// Least allowed.
        min: usize,
    },
    /// The production plan does not fit the qualification data.
    #[error("production plan: {0}")]
    Plan(String),
    /// Something else in the data.
    #[error("{file}: {message}")]
    Data {
        /// File.
        file: String,
        /// What.
        message: String,
    },
}

/// The production plan the model error is measured for.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct ProductionPlan {
    /// Chamber temperatures of production calibration, C.
    pub temps_c: Vec<f64>,
    /// Stimuli at each temperature.
    pub stimuli: Vec<f64>,
}

/// Worst held-out errors of the production plan over the qualification lot.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct PlanError {
    /// The plan as requested.
    pub plan: ProductionPlan,
    /// The qualification temperatures that stood in for the plan's (nearest).
    pub used_temps_c: Vec<f64>,
    /// The qualification stimuli that stood in for the plan's (nearest).
    pub used_stimuli: Vec<f64>,
    /// Worst |error| at held-out readings inside the plan's temperature span, ppm of span.
    pub inside_plan_ppm: f64,
    /// Worst |error| inside the operating range, ppm of span: the model-error
    /// term `table` and `verify` budget for parts calibrated on this design.
    pub operating_range_ppm: f64,
    /// Worst |error| at every held-out reading, ppm of span.
    pub all_ppm: f64,
    /// The mode choice's criterion, ppm of span: rms of the held-out errors
    /// inside the operating range with a tenth of the mean square outside.
    pub rms_ppm: f64,
    /// Worst |error| per qualification temperature over the lot: `[t_c, ppm]`.
    pub by_temperature: Vec<[f64; 2]>,
    /// Worst |error| per qualification part: (serial, ppm).
    pub by_part: Vec<(String, f64)>,
    /// Largest production-fit residual of a qualification part at the plan's
    /// own readings, ppm of span (an outlier's residual is far above it).
    pub residual_max_ppm: f64,
}

/// How far the data moved a family's mean curve from the physics.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Movement {
    /// Family.
    pub family: Family,
    /// Largest difference over the qualification range between the learned
    /// mean curve and the closest curve of the physics shapes alone.
    pub max: f64,
    /// Unit of `max` (`K` for the thermometer, `ppm of span` otherwise).
    pub unit: String,
    /// Ridge weight chosen.
    pub lambda: f64,
    /// Share of the parts' variance the kept modes explain.
    pub explained: f64,
}

/// What a qualification lot gave.
#[derive(Debug, Clone, PartialEq)]
pub struct Learned {
    /// The design's curves.
    pub core: DesignCore,
    // Plain documented structs read alike (design/file.rs, tables/remainder.rs, fitting/curves.rs).
    /// Model error of the production plan.
    pub plan_error: PlanError,
    /// Movement from the physics per family.
    pub movement: Vec<Movement>,
    /// Serials of the qualification parts.
    pub serials: Vec<String>,
    /// Qualification temperatures, C.
    pub temps_c: Vec<f64>,
    /// Qualification stimuli.
    pub stimuli: Vec<f64>,
}

fn distinct(mut v: Vec<f64>, tol: f64) -> Vec<f64> {
    v.sort_by(f64::total_cmp);
    v.dedup_by(|a, b| (*a - *b).abs() <= tol);
    v
}

/// Ridge fit `y = r + sum w_b B_b(x)` with penalty `lambda * pen_b * w_b^2`
/// (on data divided by `scale`); returns (r, w) in data units.
fn ridge(
    basis: &BasisSpec,
    curves: &ShapeCurves,
    f: Family,
    pts: &[(f64, f64)],
    lambda: f64,
    scale: f64,
) -> (f64, Vec<f64>) {
    let nb = basis.len(f);
    let pen = basis.penalty(f);
    let n = pts.len();
    let mut a = DMatrix::zeros(n + nb, nb + 1);
    let mut y = DVector::zeros(n + nb);
    let mut b = [0.0; MAX_BASIS];
    for (i, &(x, v)) in pts.iter().enumerate() {
        basis.eval(curves, f, x, &mut b);
        a[(i, 0)] = 1.0;
        for j in 0..nb {
            a[(i, j + 1)] = b[j];
        }
        y[i] = v / scale;
    }
    for j in 0..nb {
        a[(n + j, j + 1)] = (lambda * pen[j] * n as f64).sqrt();
    }
    let Some(svd) = crate::station::linalg::svd_bounded(a, true, true) else {
        return (f64::NAN, vec![f64::NAN; nb]);
    };
    let smax = svd.singular_values.max();
    // Relative singular-value cutoff 1e-12 (common practice).
    let x = svd
        .solve(&y, 1e-12 * smax)
        .unwrap_or_else(|_| DVector::from_element(nb + 1, f64::NAN));
    (x[0] * scale, (1..=nb).map(|j| x[j] * scale).collect())
}

/// The ridge weight that predicts left-out temperatures best (sum over parts).
fn choose_lambda(
    basis: &BasisSpec,
    curves: &ShapeCurves,
    f: Family,
    parts: &[Vec<(f64, f64)>],
    scale: f64,
) -> f64 {
    use rayon::prelude::*;
    let mut best = (f64::INFINITY, LAMBDAS[LAMBDAS.len() - 1]);
    for &lambda in &LAMBDAS {
        // Per part in parallel, summed in order (the same bits every run).
        let per_part: Vec<f64> = parts
            .par_iter()
            .map(|pts| part_loo_sse(basis, curves, f, pts, lambda, scale))
            .collect();
        let sse: f64 = per_part.iter().sum();
        if sse < best.0 {
            best = (sse, lambda);
        }
    }
    best.1
}

// Same parameters as `ridge` above, which it calls once per left-out temperature.
/// Sum of squared leave-one-temperature-out errors of one part's ridge fit.
fn part_loo_sse(
    basis: &BasisSpec,
    curves: &ShapeCurves,
    f: Family,
    pts: &[(f64, f64)],
    lambda: f64,
    scale: f64,
) -> f64 {
    let mut sse = 0.0;
    for k in 0..pts.len() {
        let rest: Vec<(f64, f64)> = pts
            .iter()
            .enumerate()
            .filter(|(i, _)| *i != k)
            .map(|(_, p)| *p)
            .collect();
        let (r, w) = ridge(basis, curves, f, &rest, lambda, scale);
        let mut b = [0.0; MAX_BASIS];
        basis.eval(curves, f, pts[k].0, &mut b);
        let e = (r + dot(&w, &b) - pts[k].1) / scale;
        sse += if e.is_finite() { e * e } else { f64::INFINITY };
    }
    sse
}

/// Mean weights, mode weights, and (variance share, score sd) per mode.
type Components = (Vec<f64>, Vec<Vec<f64>>, Vec<(f64, f64)>);

/// Mean and modes (unit rms over the grid) of parts' basis weights; the
/// share of variance the first `MAX_MODES` modes explain.
fn components(
    basis: &BasisSpec,
    curves: &ShapeCurves,
    f: Family,
    weights: &[&Vec<f64>],
    grid: &[f64],
) -> Components {
    let nb = basis.len(f);
    let p = weights.len();
    let mut mean = vec![0.0; nb];
    for w in weights {
        for (m, x) in mean.iter_mut().zip(w.iter()) {
            *m += x / p as f64;
        }
    }
    if nb == 0 || p < 2 {
        return (mean, Vec::new(), Vec::new());
    }
    let bmat = DMatrix::from_fn(grid.len(), nb, |i, j| {
        let mut b = [0.0; MAX_BASIS];
        basis.eval(curves, f, grid[i], &mut b);
        b[j]
    });
    let dev = DMatrix::from_fn(p, nb, |i, j| weights[i][j] - mean[j]);
    let x = &dev * bmat.transpose();
    let Some(svd) = crate::station::linalg::svd_bounded(x, true, false) else {
        return (mean, Vec::new(), Vec::new());
    };
    let Some(u) = svd.u else {
        return (mean, Vec::new(), Vec::new());
    };
    let s = &svd.singular_values;
    // Singular values sorted descending (nalgebra does not promise an order).
    let mut order: Vec<usize> = (0..s.len()).collect();
    order.sort_by(|&a, &b| s[b].total_cmp(&s[a]));
    let total: f64 = s.iter().map(|v| v * v).sum();
    let smax = s.max();
    let mut modes = Vec::new();
    let mut shares = Vec::new();
    for &k in order.iter().take(MAX_MODES) {
        // Modes below 1e-9 of the largest are rounding, not variation.
        if s[k] <= 1e-9 * smax || s[k] == 0.0 {
            break;
        }
        let coef = u.column(k) / s[k];
        let mut w: Vec<f64> = (0..nb).map(|j| dev.column(j).dot(&coef)).collect();
        // Unit rms over the grid, and a deterministic sign: the curve's
        // largest excursion positive.
        let curve = &bmat * DVector::from_column_slice(&w);
        let rms = (curve.norm_squared() / grid.len() as f64).sqrt();
        let peak = curve
            .iter()
            .copied()
            .fold(0.0f64, |m, v| if v.abs() > m.abs() { v } else { m });
        let sign = if peak < 0.0 { -1.0 } else { 1.0 };
        if rms > 0.0 {
            for v in &mut w {
                *v *= sign / rms;
            }
        }
        modes.push(w);
        // Scores on a unit-rms mode have sd s_k / sqrt(grid points * (parts - 1)).
        shares.push((
            if total > 0.0 {
                s[k] * s[k] / total
            } else {
                0.0
            },
            s[k] / ((grid.len() * (p - 1)) as f64).sqrt(),
        ));
    }
    (mean, modes, shares)
}

/// One qualification part, reduced.
struct QualPart<'a> {
    serial: String,
    rows: Vec<&'a ChamberRow>,
    steps: Vec<Step>,
}

/// The family's data scale: rms deviation of the parts' values from each
/// part's own mean (1 when there is no spread at all).
fn data_scale(parts: &[Vec<(f64, f64)>]) -> f64 {
    let (mut s, mut n) = (0.0, 0usize);
    for pts in parts {
        if pts.is_empty() {
            continue;
        }
        let m = pts.iter().map(|p| p.1).sum::<f64>() / pts.len() as f64;
        for p in pts {
            s += (p.1 - m).powi(2);
            n += 1;
        }
    }
    let v = (s / n.max(1) as f64).sqrt();
    if v > 0.0 && v.is_finite() { v } else { 1.0 }
}

/// Nearest value of `pool` to each of `wanted` (ascending pool).
fn nearest(pool: &[f64], wanted: &[f64]) -> Vec<f64> {
    wanted
        .iter()
        .map(|&w| {
            pool.iter()
                .copied()
                .min_by(|a, b| (a - w).abs().total_cmp(&(b - w).abs()))
                .unwrap_or(w)
        })
        .collect()
}

/// Compensated-stimulus error of a reading on a part model, ppm of span.
pub fn reading_error_ppm(
    model: &DesignPartModel<'_>,
    fs: (f64, f64),
    output: f64,
    signal: f64,
    stimulus: f64,
) -> f64 {
    let t = model.temperature(signal);
    let apparent = (output - model.offset(t)) / model.sensitivity(t);
    let s = match model.bow_mid(t) {
        Some(mid) => Bow {
            mid_rel: mid,
            mid_rel_per_k: 0.0,
        }
        .true_stimulus(apparent, t, t, fs),
        None => apparent,
    };
    (s - stimulus) / (fs.1 - fs.0) * 1e6
}

/// Results of every part of one cross-validation: held-out errors
/// (temperature, ppm), residual at the plan's readings, the fit.
type CvResults = Vec<(Vec<(f64, f64)>, f64, Option<PartFit>)>;

/// Per-part basis weights of every family, the ridge weights, and each
/// part's thermometer mode coefficients.
type PartWeights = (Vec<[Vec<f64>; 4]>, [f64; 4], Vec<Vec<f64>>, [f64; 4]);

/// One choice of the thermometer's mode count, cross-validated.
struct AxisRun {
    score: f64,
    modes: [usize; 4],
    results: CvResults,
    weights: Vec<[Vec<f64>; 4]>,
    lambdas: [f64; 4],
    therm: Vec<Vec<f64>>,
    noise: [f64; 4],
}

/// The reduced qualification lot and what every run shares.
struct Lot<'a> {
    basis: BasisSpec,
    curves: &'a ShapeCurves,
    parts: &'a [QualPart<'a>],
    grid: &'a [f64],
    span_scale: f64,
    sens_sign: f64,
    fs: (f64, f64),
    therm_w: &'a [Vec<f64>],
    lam_t: f64,
    therm_noise: f64,
    range_c: (f64, f64),
    used_temps: &'a [f64],
    used_stimuli: &'a [f64],
}

impl Lot<'_> {
    fn is_plan_t(&self, t: f64) -> bool {
        self.used_temps.iter().any(|u| (t - u).abs() <= SAME_STEP_K)
    }

    fn in_plan(&self, r: &ChamberRow) -> bool {
        let w = (self.fs.1 - self.fs.0).abs().max(1.0);
        self.is_plan_t(r.chamber_c)
            && self
                .used_stimuli
                .iter()
                .any(|s| (r.stimulus - s).abs() <= 1e-9 * w)
    }

    /// The design from every part but `skip`, with each family's per-part
    /// basis weights `weights` and ridge weights `lambdas`.
    fn core_from(
        &self,
        skip: Option<usize>,
        weights: &[[Vec<f64>; 4]],
        lambdas: [f64; 4],
        therm: &[Vec<f64>],
        noise: [f64; 4],
    ) -> (DesignCore, [Vec<f64>; 4]) {
        let mut families = Vec::new();
        let mut shares: [Vec<f64>; 4] = Default::default();
        for f in Family::ALL {
            let k = f.index();
            // The thermometer is learned from every part even when one is
            // held out: the held-out part's production thermometer and the
            // other curves' coupling must share its modes.
            let skip = if f == Family::Thermometer { None } else { skip };
            let kept: Vec<usize> = (0..weights.len()).filter(|i| Some(*i) != skip).collect();
            let mut ws: Vec<Vec<f64>> = kept.iter().map(|&i| weights[i][k].clone()).collect();
            let nb = self.basis.len(f);
            let n_t = therm.first().map_or(0, Vec::len);
            let mut coupling = Vec::new();
            let mut center = Vec::new();
            if f != Family::Thermometer
                && n_t > 0
                && kept.len() > n_t + 1
                && ws.iter().all(|w| w.len() == nb)
            {
                // Least squares of each weight on the centred thermometer
                // coefficients; the residual weights go on to the modes.
                center = (0..n_t)
                    .map(|j| kept.iter().map(|&i| therm[i][j]).sum::<f64>() / kept.len() as f64)
                    .collect();
                let x = DMatrix::from_fn(kept.len(), n_t, |r, j| therm[kept[r]][j] - center[j]);
                let y = DMatrix::from_fn(kept.len(), nb, |r, j| ws[r][j]);
                let solved =
                    crate::station::linalg::svd_bounded(x.clone(), true, true).and_then(|svd| {
                        let smax = svd.singular_values.max();
                        // Relative singular-value cutoff 1e-12 (common practice).
                        svd.solve(&y, 1e-12 * smax).ok()
                    });
                if let Some(g) = solved {
                    let fitted = &x * &g;
                    for (r, w) in ws.iter_mut().enumerate() {
                        for (j, v) in w.iter_mut().enumerate() {
                            *v -= fitted[(r, j)];
                        }
                    }
                    coupling = (0..n_t)
                        .map(|j| g.row(j).iter().copied().collect())
                        .collect();
                } else {
                    center.clear();
                }
            }
            let refs: Vec<&Vec<f64>> = ws.iter().collect();
            let (mean, modes, sh) = if refs.iter().all(|w| w.len() == nb) {
                components(&self.basis, self.curves, f, &refs, self.grid)
            } else {
                (vec![0.0; nb], Vec::new(), Vec::new())
            };
            shares[k] = sh.iter().map(|v| v.0).collect();
            families.push(FamilyCurves {
                family: f,
                mean,
                modes,
                modes_used: 0,
                lambda: lambdas[k],
                coef_mean: Vec::new(),
                coef_sd: Vec::new(),
                mode_sd: sh.iter().map(|v| v.1).collect(),
                coupling,
                coupling_center: center,
                noise_sd: if f == Family::Thermometer {
                    self.therm_noise
                } else {
                    noise[k]
                },
            });
        }
        (
            DesignCore {
                basis: self.basis,
                stimulus_fs: self.fs,
                span_scale: self.span_scale,
                sens_sign: self.sens_sign,
                bow: true,
                families,
            },
            shares,
        )
    }

    /// Per-part basis weights of every family and the ridge weights, with
    /// output curves taken against the thermometer production would fit
    /// (`k_axis` modes, reference and modes from the plan's temperatures).
    /// Two passes: the first takes each step's outputs as measured; the
    /// second moves them to the step's read temperature along the part's
    /// first-pass curves ([`super::reduce::reduce_read`]), as production does.
    fn part_weights(&self, k_axis: usize) -> PartWeights {
        let mut weights: Vec<[Vec<f64>; 4]> = self
            .therm_w
            .iter()
            .map(|w| [w.clone(), Vec::new(), Vec::new(), Vec::new()])
            .collect();
        let mut lambdas = [self.lam_t, 0.0, 0.0, 0.0];
        let mut noise = [self.therm_noise, 0.0, 0.0, 0.0];
        let (mut tcore, _) = self.core_from(None, &weights, lambdas, &[], noise);
        tcore.families[0].modes_used = k_axis;
        let therm_fits: Vec<FamilyFit> = self
            .parts
            .iter()
            .map(|p| {
                let at_plan: Vec<Step> = p
                    .steps
                    .iter()
                    .copied()
                    .filter(|s| self.is_plan_t(s.chamber_c))
                    .collect();
                fit_thermometer(&tcore, self.curves, &at_plan, k_axis)
            })
            .collect();
        let therm: Vec<Vec<f64>> = therm_fits
            .iter()
            .map(|f| f.values.get(1..).unwrap_or(&[]).to_vec())
            .collect();
        // A part's offset, span and nonlinearity points against its read
        // temperature.
        let points_of = |steps: &[Step], fit: &FamilyFit| -> [Vec<(f64, f64)>; 3] {
            let t_read: Vec<f64> = steps
                .iter()
                .map(|s| thermometer_reading(&tcore, self.curves, fit, s.signal))
                .collect();
            let on = |g: &dyn Fn(&Step) -> Option<f64>| -> Vec<(f64, f64)> {
                steps
                    .iter()
                    .zip(&t_read)
                    .filter_map(|(s, &t)| g(s).map(|y| (t, y)))
                    .collect()
            };
            [
                on(&|s| Some(s.offset / self.span_scale)),
                on(&|s| Some(s.sens.abs().ln())),
                on(&|s| s.bow),
            ]
        };
        let first: Vec<[Vec<(f64, f64)>; 3]> = self
            .parts
            .iter()
            .zip(&therm_fits)
            .map(|(p, fit)| points_of(&p.steps, fit))
            .collect();
        // First pass: each part's curves from its steps as measured.
        let mut curves_1: Vec<[(f64, Vec<f64>); 3]> = vec![Default::default(); first.len()];
        for f in [Family::Offset, Family::Span, Family::Bow] {
            let k = f.index() - 1;
            let pts: Vec<Vec<(f64, f64)>> = first.iter().map(|p| p[k].clone()).collect();
            let scale = data_scale(&pts);
            let lam = choose_lambda(&self.basis, self.curves, f, &pts, scale);
            lambdas[f.index()] = lam;
            for (c, p) in curves_1.iter_mut().zip(&pts) {
                c[k] = ridge(&self.basis, self.curves, f, p, lam, scale);
            }
        }
        // Second pass: steps in the read-temperature frame.
        let points: Vec<[Vec<(f64, f64)>; 3]> = self
            .parts
            .iter()
            .zip(&therm_fits)
            .zip(&curves_1)
            .map(|((p, fit), c1)| {
                let slope = |f: Family, t: f64| {
                    let w = &c1[f.index() - 1].1;
                    if w.len() != self.basis.len(f) {
                        return 0.0;
                    }
                    let h = 0.25;
                    let mut b = [0.0; MAX_BASIS];
                    self.basis.eval(self.curves, f, t + h, &mut b);
                    let hi = dot(w, &b);
                    self.basis.eval(self.curves, f, t - h, &mut b);
                    (hi - dot(w, &b)) / (2.0 * h)
                };
                let frame = ReadFrame {
                    t_of_signal: &|s| thermometer_reading(&tcore, self.curves, fit, s),
                    slopes: &|t| {
                        [
                            self.span_scale * slope(Family::Offset, t),
                            slope(Family::Span, t),
                            slope(Family::Bow, t),
                        ]
                    },
                };
                let (steps, _) = reduce_read(&p.rows, self.fs, Some(&frame));
                if steps.len() == p.steps.len() {
                    points_of(&steps, fit)
                } else {
                    points_of(&p.steps, fit)
                }
            })
            .collect();
        for f in [Family::Offset, Family::Span, Family::Bow] {
            let k = f.index();
            let pts: Vec<Vec<(f64, f64)>> = points.iter().map(|p| p[k - 1].clone()).collect();
            let scale = data_scale(&pts);
            // The first pass's ridge weight: the frame moves the points by
            // a few ppm of span, far less than what tells the weights apart.
            let lam = lambdas[k];
            let (mut sse, mut cnt) = (0.0, 0usize);
            for (w, p) in weights.iter_mut().zip(&pts) {
                let (r, fitted) = ridge(&self.basis, self.curves, f, p, lam, scale);
                for &(t, y) in p {
                    let mut b = [0.0; MAX_BASIS];
                    self.basis.eval(self.curves, f, t, &mut b);
                    sse += (y - r - dot(&fitted, &b)).powi(2);
                    cnt += 1;
                }
                w[k] = fitted;
            }
            // Noise of one reading: what the smoothed per-part curves leave,
            // with the degrees of freedom they used; a floor of 1e-9 of the
            // data scale keeps the prior rows finite on noise-free data.
            let dof = cnt
                .saturating_sub(pts.len() * (self.basis.len(f) + 1))
                .max(1);
            noise[k] = (sse / dof as f64).sqrt().max(1e-9 * scale);
        }
        (weights, lambdas, therm, noise)
    }

    /// Leave-one-part-out production fits with `modes` per family.
    fn evaluate(&self, loo: &[DesignCore], modes: [usize; 4]) -> CvResults {
        self.parts
            .iter()
            .zip(loo)
            .map(|(p, core)| {
                let prod: Vec<&ChamberRow> =
                    p.rows.iter().copied().filter(|r| self.in_plan(r)).collect();
                let Ok(fit) = fit_part_with(core, self.curves, &prod, modes) else {
                    return (Vec::new(), f64::INFINITY, None);
                };
                let model = DesignPartModel::new(core, self.curves, &fit.families);
                let err = |r: &ChamberRow| {
                    reading_error_ppm(&model, self.fs, r.output, r.temp_signal, r.stimulus)
                };
                let errs: Vec<(f64, f64)> = p
                    .rows
                    .iter()
                    .filter(|r| !self.in_plan(r))
                    .map(|r| (r.chamber_c, err(r)))
                    .collect();
                let resid = prod.iter().map(|r| err(r).abs()).fold(0.0f64, f64::max);
                if std::env::var_os("SEMIDRIFT_DEBUG_DESIGN").is_some() {
                    for st in &p.steps {
                        if self.is_plan_t(st.chamber_c) {
                            continue;
                        }
                        let t = model.temperature(st.signal);
                        let eo = (model.offset(t) - st.offset) / self.span_scale * 1e6;
                        let es = (model.sensitivity(t) / st.sens - 1.0) * 1e6;
                        let eb = (model.bow_mid(t).unwrap_or(0.0) - st.bow.unwrap_or(0.0)) * 1e6;
                        eprintln!(
                            "DBG {} {:.0} offset {:.1} span {:.1} bow {:.1} t_err {:.3}",
                            p.serial,
                            st.chamber_c,
                            eo,
                            es,
                            eb,
                            t - st.chamber_c
                        );
                    }
                }
                (errs, resid, Some(fit))
            })
            .collect()
    }

    /// Cross-validates thermometer mode count `k_axis`, choosing the other
    /// families' mode counts by coordinate descent on the rms error.
    fn run(&self, k_axis: usize, coupled: bool, pw: &PartWeights) -> AxisRun {
        let (weights, lambdas, mut therm, noise) = pw.clone();
        if !coupled {
            therm.iter_mut().for_each(Vec::clear);
        }
        let loo: Vec<DesignCore> = (0..self.parts.len())
            .map(|i| self.core_from(Some(i), &weights, lambdas, &therm, noise).0)
            .collect();
        let plan_n = self.used_temps.len();
        let max_modes = |f: Family| {
            if f == Family::Thermometer {
                return k_axis;
            }
            loo.iter()
                .map(|c| c.family(f).modes.len())
                .min()
                .unwrap_or(0)
                .min(plan_n - 1)
        };
        let mut modes = [0usize; 4];
        for f in Family::ALL {
            modes[f.index()] = max_modes(f).min(2);
        }
        modes[0] = k_axis;
        let mut best = score(&self.evaluate(&loo, modes), self.range_c);
        for f in [Family::Span, Family::Offset, Family::Bow] {
            let k = f.index();
            let options: Vec<usize> = (0..=max_modes(f)).chain([ALL_MODES]).collect();
            for m in options {
                if m == modes[k] {
                    continue;
                }
                let mut trial = modes;
                trial[k] = m;
                let s = score(&self.evaluate(&loo, trial), self.range_c);
                // A mode more (or every mode under its prior) must earn its
                // keep: 1 % better.
                if s < best * if m > modes[k] { 0.99 } else { 1.0 } {
                    best = s;
                    modes = trial;
                }
            }
        }
        AxisRun {
            score: best,
            modes,
            results: self.evaluate(&loo, modes),
            weights,
            lambdas,
            therm,
            noise,
        }
    }
}

/// The choice criterion: rms of the held-out errors inside the operating
/// range `op` plus a tenth of the mean square outside it (a part is
/// specified inside its range; outside, the criterion only keeps the
/// extrapolation sane). Infinite when a part could not be fitted.
fn score(res: &CvResults, op: (f64, f64)) -> f64 {
    let (mut s, mut n, mut so, mut no) = (0.0, 0usize, 0.0, 0usize);
    for (errs, _, fit) in res {
        if fit.is_none() {
            return f64::INFINITY;
        }
        for &(t, e) in errs {
            if t >= op.0 - 1e-9 && t <= op.1 + 1e-9 {
                s += e * e;
                n += 1;
            } else {
                so += e * e;
                no += 1;
            }
        }
    }
    if n + no == 0 {
        return f64::INFINITY;
    }
    let v = (s / n.max(1) as f64 + 0.1 * so / no.max(1) as f64).sqrt();
    if v.is_finite() { v } else { f64::INFINITY }
}

/// Learns a design from a qualification lot `data` (read from `file`) of
/// `scenario`'s element, for production `plan`.
pub fn learn(
    scenario: &Scenario,
    curves: &ShapeCurves,
    data: &ChamberData,
    file: &str,
    plan: &ProductionPlan,
) -> Result<Learned, QualifyError> {
    let fs = scenario.stimulus_fs;
    let width = fs.1 - fs.0;
    let mut parts: Vec<QualPart<'_>> = Vec::new();
    for (serial, rows) in data.by_serial() {
        // Readings on the ADC's rails say nothing about the part.
        let rows: Vec<&ChamberRow> = rows
            .into_iter()
            .filter(|r| !scenario.output_adc.at_rail(r.output))
            .collect();
        let (steps, _) = reduce(&rows, fs);
        let line = rows.iter().map(|r| r.line).min().unwrap_or(1);
        if steps.len() < MIN_TEMPERATURES {
            return Err(QualifyError::TooFewTemperatures {
                file: file.into(),
                line,
                serial: serial.into(),
                found: steps.len(),
                min: MIN_TEMPERATURES,
            });
        }
        if let Some(st) = steps.iter().find(|s| s.stimuli < MIN_STIMULI) {
            let line = rows
                .iter()
                .filter(|r| (r.chamber_c - st.chamber_c).abs() <= SAME_STEP_K)
                .map(|r| r.line)
                .min()
                .unwrap_or(line);
            return Err(QualifyError::TooFewStimuli {
                file: file.into(),
                line,
                serial: serial.into(),
                chamber_c: st.chamber_c,
                found: st.stimuli,
                min: MIN_STIMULI,
            });
        }
        if steps.iter().any(|s| s.signal.is_nan() || s.signal <= 0.0) {
            return Err(QualifyError::Data {
                file: file.into(),
                message: format!("part {serial}: temperature signal not positive"),
            });
        }
        parts.push(QualPart {
            serial: serial.to_string(),
            rows,
            steps,
        });
    }
    if parts.len() < MIN_PARTS {
        return Err(QualifyError::TooFewParts {
            file: file.into(),
            found: parts.len(),
            min: MIN_PARTS,
        });
    }
    let temps_c = distinct(
        parts
            .iter()
            .flat_map(|p| p.steps.iter().map(|s| s.chamber_c))
            .collect(),
        SAME_STEP_K,
    );
    let stimuli = distinct(
        parts
            .iter()
            .flat_map(|p| p.rows.iter().map(|r| r.stimulus))
            .collect(),
        1e-9 * width.abs(),
    );
    let min_steps = parts.iter().map(|p| p.steps.len()).min().unwrap_or(0);
    let t_lo = temps_c[0];
    let t_hi = temps_c[temps_c.len() - 1];
    let basis = BasisSpec {
        t_lo_c: t_lo,
        t_hi_c: t_hi,
        t_ref_c: scenario.t_ref_c,
        degree: min_steps.saturating_sub(4).min(DEGREE_CAP),
    };
    // The design's nominal span and its sign: medians over the lot at the
    // step nearest the reference temperature.
    let mut ref_sens: Vec<f64> = parts
        .iter()
        .filter_map(|p| {
            p.steps
                .iter()
                .min_by(|a, b| {
                    (a.chamber_c - scenario.t_ref_c)
                        .abs()
                        .total_cmp(&(b.chamber_c - scenario.t_ref_c).abs())
                })
                .map(|s| s.sens)
        })
        .collect();
    ref_sens.sort_by(f64::total_cmp);
    let med = ref_sens[ref_sens.len() / 2];
    let sens_sign = if med < 0.0 { -1.0 } else { 1.0 };
    if parts
        .iter()
        .any(|p| p.steps.iter().any(|s| s.sens.signum() != sens_sign))
    {
        return Err(QualifyError::Data {
            file: file.into(),
            message: "the sensitivity changes sign between parts or temperatures".into(),
        });
    }
    let span_scale = (med * width).abs();

    // The production plan's temperatures among the qualification ones.
    if plan.temps_c.is_empty() || plan.stimuli.len() < 2 {
        return Err(QualifyError::Plan(
            "needs at least one temperature and two stimuli".into(),
        ));
    }
    let used_temps = distinct(nearest(&temps_c, &plan.temps_c), SAME_STEP_K);
    let used_stimuli = distinct(nearest(&stimuli, &plan.stimuli), 1e-9 * width.abs());
    if used_temps.len() < 2 {
        return Err(QualifyError::Plan(format!(
            "{:?} C map to {} distinct qualification temperature(s); a plan needs two or more",
            plan.temps_c,
            used_temps.len()
        )));
    }

    // Thermometer: each part's smoothed curve; the lot's mean and modes.
    let therm_pts: Vec<Vec<(f64, f64)>> = parts
        .iter()
        .map(|p| {
            p.steps
                .iter()
                .map(|s| (s.chamber_c, s.signal.ln()))
                .collect()
        })
        .collect();
    let scale_t = data_scale(&therm_pts);
    let lam_t = choose_lambda(&basis, curves, Family::Thermometer, &therm_pts, scale_t);
    let therm_w: Vec<Vec<f64>> = therm_pts
        .iter()
        .map(|tp| ridge(&basis, curves, Family::Thermometer, tp, lam_t, scale_t).1)
        .collect();
    // Noise of one thermometer reading: rms residual of the smoothed
    // per-part curves, with the degrees of freedom the fits used.
    let therm_noise = {
        let (mut sse, mut n) = (0.0, 0usize);
        for (tp, w) in therm_pts.iter().zip(&therm_w) {
            let r = tp
                .iter()
                .map(|(t, y)| {
                    let mut b = [0.0; MAX_BASIS];
                    basis.eval(curves, Family::Thermometer, *t, &mut b);
                    y - dot(w, &b)
                })
                .collect::<Vec<f64>>();
            let m = r.iter().sum::<f64>() / r.len().max(1) as f64;
            sse += r.iter().map(|x| (x - m).powi(2)).sum::<f64>();
            n += r.len();
        }
        let dof = n.saturating_sub(parts.len() * (basis.len(Family::Thermometer) + 1));
        (sse / dof.max(1) as f64).sqrt()
    };
    let grid: Vec<f64> = {
        let n = ((t_hi - t_lo) / GRID_STEP_K).ceil().max(1.0) as usize;
        (0..=n)
            .map(|k| t_lo + (t_hi - t_lo) * k as f64 / n as f64)
            .collect()
    };
    let lot = Lot {
        basis,
        curves,
        parts: &parts,
        grid: &grid,
        span_scale,
        sens_sign,
        fs,
        therm_w: &therm_w,
        lam_t,
        therm_noise,
        range_c: scenario.range_c,
        used_temps: &used_temps,
        used_stimuli: &used_stimuli,
    };
    // The thermometer's mode count decides the axis every output curve is
    // learned against (the reading production computes), so each choice is
    // a run of its own; the best rms wins, a mode more must gain 1 %.
    let plan_n = used_temps.len();
    let t_modes_avail = {
        let refs: Vec<&Vec<f64>> = therm_w.iter().collect();
        components(&basis, curves, Family::Thermometer, &refs, &grid)
            .1
            .len()
    };
    let mut run = lot.run(0, false, &lot.part_weights(0));
    for k in 1..=t_modes_avail.min(plan_n - 1).min(2) {
        // Each thermometer mode count alone, then with the other curves
        // coupled to its coefficients; a choice must gain 1 % to replace
        // the simpler one.
        let pw = lot.part_weights(k);
        for coupled in [false, true] {
            let r = lot.run(k, coupled, &pw);
            if r.score < run.score * 0.99 {
                run = r;
            }
        }
    }
    let AxisRun {
        score: best,
        modes,
        results,
        weights: part_weights,
        lambdas,
        therm,
        noise,
    } = run;
    if !best.is_finite() {
        return Err(QualifyError::Data {
            file: file.into(),
            message: "no qualification part could be calibrated with the production plan".into(),
        });
    }

    let (lo_plan, hi_plan) = (used_temps[0], used_temps[plan_n - 1]);
    let (lo_op, hi_op) = scenario.range_c;
    let mut inside_plan: f64 = 0.0;
    let mut op: f64 = 0.0;
    let mut all: f64 = 0.0;
    let mut by_t: std::collections::BTreeMap<u64, [f64; 2]> = Default::default();
    let mut by_part = Vec::new();
    let mut residual_max: f64 = 0.0;
    for ((errs, resid, _), p) in results.iter().zip(&parts) {
        let mut worst: f64 = 0.0;
        for &(t, e) in errs {
            let e = e.abs();
            worst = worst.max(e);
            all = all.max(e);
            if t >= lo_plan - 1e-9 && t <= hi_plan + 1e-9 {
                inside_plan = inside_plan.max(e);
            }
            if t >= lo_op - 1e-9 && t <= hi_op + 1e-9 {
                op = op.max(e);
            }
            let slot = by_t.entry((t + 1000.0).to_bits()).or_insert([t, 0.0]);
            slot[1] = slot[1].max(e);
        }
        residual_max = residual_max.max(*resid);
        by_part.push((p.serial.clone(), worst));
    }

    // The final design: every part; coefficient statistics from the
    // held-out fits (what a new part of the lot looks like).
    let (mut core, shares) = lot.core_from(None, &part_weights, lambdas, &therm, noise);
    for f in Family::ALL {
        let k = f.index();
        let fam = &mut core.families[k];
        fam.modes_used = modes[k];
        let vals: Vec<&Vec<f64>> = results
            .iter()
            .filter_map(|(_, _, fit)| fit.as_ref().map(|x| &x.families[k].values))
            .collect();
        let n = vals.iter().map(|v| v.len()).min().unwrap_or(0);
        let cnt = vals.len().max(1) as f64;
        fam.coef_mean = (0..n)
            .map(|j| vals.iter().map(|v| v[j]).sum::<f64>() / cnt)
            .collect();
        fam.coef_sd = (0..n)
            .map(|j| {
                let m = fam.coef_mean[j];
                (vals.iter().map(|v| (v[j] - m).powi(2)).sum::<f64>() / (cnt - 1.0).max(1.0)).sqrt()
            })
            .collect();
    }

    // Movement: learned mean curve against the closest physics-only curve.
    let movement = Family::ALL
        .iter()
        .map(|&f| {
            let fam = core.family(f);
            let mean_at = |t: f64| core.curve(curves, f, &fam.mean, t);
            let phys = BasisSpec { degree: 0, ..basis };
            let (r, w) = if f.physics_shapes() > 0 {
                let pts: Vec<(f64, f64)> = grid.iter().map(|&t| (t, mean_at(t))).collect();
                ridge(&phys, curves, f, &pts, 0.0, 1.0)
            } else {
                (0.0, Vec::new())
            };
            let mut dmax: f64 = 0.0;
            for &t in &grid {
                let mut b = [0.0; MAX_BASIS];
                phys.eval(curves, f, t, &mut b);
                let d = mean_at(t) - (r + dot(&w, &b));
                let d = match f {
                    Family::Thermometer => {
                        let h = 0.01;
                        let slope = (mean_at(t + h) - mean_at(t - h)) / (2.0 * h);
                        d / slope
                    }
                    _ => d * 1e6,
                };
                dmax = dmax.max(d.abs());
            }
            Movement {
                family: f,
                max: dmax,
                unit: if f == Family::Thermometer {
                    "K".into()
                } else {
                    "ppm of span".into()
                },
                lambda: fam.lambda,
                explained: shares[f.index()].iter().take(fam.modes_used).sum(),
            }
        })
        .collect();

    Ok(Learned {
        core,
        plan_error: PlanError {
            plan: plan.clone(),
            used_temps_c: used_temps,
            used_stimuli,
            inside_plan_ppm: inside_plan,
            operating_range_ppm: op,
            all_ppm: all,
            rms_ppm: best,
            by_temperature: by_t.into_values().collect(),
            by_part,
            residual_max_ppm: residual_max,
        },
        movement,
        serials: parts.iter().map(|p| p.serial.clone()).collect(),
        temps_c,
        stimuli,
    })
}
