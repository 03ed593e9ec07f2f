//! What a design stores to calibrate a part on it ([`DesignCore`]), the
//! per-part fit on the design's curves ([`fit_part`]) and the fitted part's
//! model ([`DesignPartModel`]).
//!
//! Each family's curve of a part is `reference + mean(T) + sum_k c_k
//! mode_k(T)`: the lot's mean curve, the lot's first modes of part-to-part
//! variation, and the part's own reference value and mode coefficients.
//! Every curve is a weighted sum of the family's basis
//! ([`super::basis::BasisSpec`]), zero at the reference temperature. The fit
//! is linear least squares, so it is fast, has no iteration that could fail
//! to end, and is exact through the chamber points whenever it can be.

use super::super::chamber::ChamberRow;
use super::super::curves::ShapeCurves;
use super::basis::{BasisSpec, Family, MAX_BASIS, dot};
use super::reduce::{ReadFrame, Step, reduce, reduce_read};
use nalgebra::{DMatrix, DVector};

/// Most variation modes a design keeps per family.
pub const MAX_MODES: usize = 6;

/// `modes_used` value meaning every mode, each with the lot's spread of
/// its scores as a Gaussian prior: the best linear unbiased prediction of
/// the part's curve from its few chamber points (the lot's covariance
/// decides how the points bend the curve between and beyond them).
pub const ALL_MODES: usize = usize::MAX;

/// One family's learned curves.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct FamilyCurves {
    /// Which family.
    pub family: Family,
    /// Basis weights of the lot's mean curve.
    pub mean: Vec<f64>,
    /// Basis weights of the variation modes, largest first; each mode's
    /// curve has unit rms over the qualification range.
    pub modes: Vec<Vec<f64>>,
    /// Modes a part fit uses (chosen by the production-plan
    /// cross-validation); [`ALL_MODES`] for every mode under its prior.
    pub modes_used: usize,
    /// Ridge weight of the roughness penalty (chosen by leave-one-temperature-out
    /// cross-validation), in units of the family's data scale squared.
    pub lambda: f64,
    /// Lot mean of each part coefficient `[reference, c_1, ...]` from the
    /// production-plan fits of the qualification parts.
    pub coef_mean: Vec<f64>,
    /// Lot standard deviation of each coefficient.
    pub coef_sd: Vec<f64>,
    /// Lot standard deviation of the parts' scores on each mode.
    #[serde(default)]
    pub mode_sd: Vec<f64>,
    /// How the curve bends with the part's thermometer mode coefficients:
    /// basis weights per thermometer mode (least squares over the lot).
    /// Doping moves the thermometer and the output curves together, so the
    /// thermometer's coefficients predict part of every other curve and
    /// leave the family's own modes for what they cannot predict.
    #[serde(default)]
    pub coupling: Vec<Vec<f64>>,
    /// Lot mean of the thermometer coefficients the coupling is centred on.
    #[serde(default)]
    pub coupling_center: Vec<f64>,
    /// Noise of one reading of this family's value (what the smoothed
    /// per-part curves leave), in the family's units; with `mode_sd` it
    /// makes the part fit a ridge regression towards the lot's mean curve
    /// (0: plain least squares).
    #[serde(default)]
    pub noise_sd: f64,
}

/// Everything needed to fit a part on the design and evaluate it.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct DesignCore {
    /// The basis of every family.
    pub basis: BasisSpec,
    /// Full-scale stimulus range of the design.
    pub stimulus_fs: (f64, f64),
    /// Output units per offset-family unit: the lot's median span at the
    /// reference temperature.
    pub span_scale: f64,
    /// Sign of the sensitivity.
    pub sens_sign: f64,
    /// Whether the output's nonlinearity is part of the model (the
    /// qualification lot had three or more stimuli per temperature).
    pub bow: bool,
    /// The families, in [`Family::ALL`] order.
    pub families: Vec<FamilyCurves>,
}

/// A part's coefficients of one family: `[reference, c_1, ..., c_k]`.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct FamilyFit {
    /// Which family.
    pub family: Family,
    /// Reference value and mode coefficients.
    pub values: Vec<f64>,
}

/// The per-part outcome of [`fit_part`].
#[derive(Debug, Clone, PartialEq)]
pub struct PartFit {
    /// Coefficients per family, in [`Family::ALL`] order (an inactive bow
    /// family holds the lot mean reference only).
    pub families: Vec<FamilyFit>,
    /// The steps used, with the temperature each one's signal reads on the
    /// fitted thermometer.
    pub steps: Vec<(Step, f64)>,
    /// Steps left out and why (chamber temperature, reason).
    pub skipped: Vec<(f64, String)>,
    /// Largest condition number of the family fits.
    pub condition: f64,
}

/// Why a part could not be fitted on a design.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum DesignFitError {
    /// Fewer usable chamber temperatures than a curve needs.
    #[error("too few points: {temperatures} usable chamber temperatures (need at least {needed})")]
    TooFewTemperatures {
        /// Usable temperatures.
        temperatures: usize,
        /// Needed.
        needed: usize,
    },
    /// A value that must be positive is not (signal, sensitivity sign).
    #[error("{0}")]
    BadData(String),
}

impl DesignCore {
    /// The family's curves.
    pub fn family(&self, f: Family) -> &FamilyCurves {
        &self.families[f.index()]
    }

    /// Value of a weight vector's curve at `t_c`.
    pub fn curve(&self, curves: &ShapeCurves, f: Family, weights: &[f64], t_c: f64) -> f64 {
        let mut b = [0.0; MAX_BASIS];
        self.basis.eval(curves, f, t_c, &mut b);
        dot(weights, &b)
    }

    /// Fewest chamber temperatures a part needs: one more than the most
    /// modes any used family fits, and at least two.
    pub fn min_temperatures(&self) -> usize {
        self.families
            .iter()
            .map(|f| f.modes_used.min(2) + 1)
            .max()
            .unwrap_or(1)
            .max(2)
    }
}

/// Least squares `y - mean(x) = r + sum c_k mode_k(x)` with the first `k`
/// modes (fewer when there are too few points); returns `[r, c...]` and the
/// condition number of the column-scaled matrix.
fn fit_family(
    core: &DesignCore,
    curves: &ShapeCurves,
    f: Family,
    points: &[(f64, f64)],
    k: usize,
    therm: &[f64],
) -> (Vec<f64>, f64) {
    let fam = core.family(f);
    let base = base_weights(fam, therm);
    // With a noise and mode spread known, each mode coefficient gets a
    // prior row noise/sd * c = 0: the maximum a posteriori fit for Gaussian
    // noise and part scores (ridge regression towards the lot mean), which
    // keeps a chamber's set-point error from bending the curve and lets
    // more modes than points be fitted.
    let prior_ok = fam.noise_sd > 0.0;
    let k = if k == ALL_MODES && prior_ok {
        fam.modes.len().min(fam.mode_sd.len())
    } else {
        k.min(fam.modes.len()).min(points.len().saturating_sub(1))
    };
    let n = points.len();
    let prior = prior_ok && fam.mode_sd.len() >= k;
    let rows = n + if prior { k } else { 0 };
    let mut a = DMatrix::zeros(rows, k + 1);
    let mut b = DVector::zeros(rows);
    if prior {
        for j in 0..k {
            a[(n + j, j + 1)] = fam.noise_sd / fam.mode_sd[j].max(f64::MIN_POSITIVE);
        }
    }
    let mut basis = [0.0; MAX_BASIS];
    for (i, &(x, y)) in points.iter().enumerate() {
        core.basis.eval(curves, f, x, &mut basis);
        a[(i, 0)] = 1.0;
        for j in 0..k {
            a[(i, j + 1)] = dot(&fam.modes[j], &basis);
        }
        b[i] = y - dot(&base, &basis);
    }
    if n == 0 {
        return (vec![0.0], f64::INFINITY);
    }
    // Column scaling for the condition number (common practice).
    let norms: Vec<f64> = (0..=k)
        .map(|j| a.column(j).norm().max(f64::MIN_POSITIVE))
        .collect();
    let mut scaled = a.clone();
    for (j, s) in norms.iter().enumerate() {
        scaled.column_mut(j).scale_mut(1.0 / s);
    }
    let Some(svd) = crate::station::linalg::svd_bounded(scaled, true, true) else {
        return (vec![f64::NAN; k + 1], f64::INFINITY);
    };
    let smax = svd.singular_values.max();
    let smin = svd.singular_values.min();
    // Relative singular-value cutoff 1e-12 (common practice).
    let x = svd
        .solve(&b, 1e-12 * smax)
        .unwrap_or_else(|_| DVector::from_element(k + 1, f64::NAN));
    let values = (0..=k).map(|j| x[j] / norms[j]).collect();
    let condition = if smin > 0.0 {
        smax / smin
    } else {
        f64::INFINITY
    };
    (values, condition)
}

/// Fits one part's rows with the design's own mode counts.
pub fn fit_part(
    core: &DesignCore,
    curves: &ShapeCurves,
    rows: &[&ChamberRow],
) -> Result<PartFit, DesignFitError> {
    fit_part_with(core, curves, rows, core.modes_used())
}

impl DesignCore {
    /// Each family's mode count, in [`Family::ALL`] order.
    pub fn modes_used(&self) -> [usize; 4] {
        let mut m = [0; 4];
        for (k, f) in self.families.iter().enumerate() {
            m[k] = f.modes_used;
        }
        m
    }
}

/// Slopes of the design's curves before a part's own modes (lot mean plus
/// the coupling to the part's thermometer coefficients `therm`) at `t_c`:
/// d offset/dT in output units per K, d ln|sens|/dT and d bow/dT per K
/// (central differences over +/-0.25 K, half the shapes' 0.5 K grid step).
fn base_slopes(core: &DesignCore, curves: &ShapeCurves, therm: &[f64], t_c: f64) -> [f64; 3] {
    let h = 0.25;
    let slope = |f: Family| {
        let w = base_weights(core.family(f), therm);
        (core.curve(curves, f, &w, t_c + h) - core.curve(curves, f, &w, t_c - h)) / (2.0 * h)
    };
    [
        core.span_scale * slope(Family::Offset),
        slope(Family::Span),
        if core.bow { slope(Family::Bow) } else { 0.0 },
    ]
}

/// Fits one part's rows on the design; `modes` overrides each family's
/// mode count (the cross-validation tries several). The thermometer comes
/// from the steps' mid-scale signals, then the output curves from steps
/// reduced in the read-temperature frame of that thermometer (see
/// [`super::reduce`]).
pub fn fit_part_with(
    core: &DesignCore,
    curves: &ShapeCurves,
    rows: &[&ChamberRow],
    modes: [usize; 4],
) -> Result<PartFit, DesignFitError> {
    let (steps, skipped) = reduce(rows, core.stimulus_fs);
    if steps.len() < 2 {
        return Err(DesignFitError::TooFewTemperatures {
            temperatures: steps.len(),
            needed: 2,
        });
    }
    if steps.iter().any(|s| s.signal.is_nan() || s.signal <= 0.0) {
        return Err(DesignFitError::BadData(
            "temperature signal not positive".into(),
        ));
    }
    if steps.iter().any(|s| s.sens.signum() != core.sens_sign) {
        return Err(DesignFitError::BadData(format!(
            "sensitivity of the wrong sign (the design's is {})",
            if core.sens_sign > 0.0 { "+" } else { "-" }
        )));
    }
    let (provisional, c0) = fit_thermometer_cond(core, curves, &steps, modes[0]);
    let therm = provisional.values.get(1..).unwrap_or(&[]).to_vec();
    let frame = ReadFrame {
        t_of_signal: &|s| thermometer_reading(core, curves, &provisional, s),
        slopes: &|t| base_slopes(core, curves, &therm, t),
    };
    let (framed, framed_skipped) = reduce_read(rows, core.stimulus_fs, Some(&frame));
    // The frame moves outputs only; the same steps come back.
    let (steps, skipped) = if framed.len() == steps.len() {
        (framed, framed_skipped)
    } else {
        (steps, skipped)
    };
    let read: Vec<f64> = steps
        .iter()
        .map(|s| thermometer_reading(core, curves, &provisional, s.signal))
        .collect();
    // Same steps-to-points closure as in learn.rs's cross-validation, on the provisional fit.
    let pts = |g: &dyn Fn(&Step) -> Option<f64>| -> Vec<(f64, f64)> {
        steps
            .iter()
            .zip(&read)
            .filter_map(|(s, &t)| g(s).map(|y| (t, y)))
            .collect()
    };
    let (offset, c1) = fit_family(
        core,
        curves,
        Family::Offset,
        &pts(&|s| Some(s.offset / core.span_scale)),
        modes[1],
        &therm,
    );
    let (span, c2) = fit_family(
        core,
        curves,
        Family::Span,
        &pts(&|s| Some(s.sens.abs().ln())),
        modes[2],
        &therm,
    );
    let bow_pts = pts(&|s| s.bow);
    let (bow, c3) = if core.bow && !bow_pts.is_empty() {
        fit_family(core, curves, Family::Bow, &bow_pts, modes[3], &therm)
    } else {
        // No nonlinearity measured: the lot's mean reference.
        (
            vec![
                core.family(Family::Bow)
                    .coef_mean
                    .first()
                    .copied()
                    .unwrap_or(0.0),
            ],
            1.0,
        )
    };
    let families = vec![
        provisional,
        FamilyFit {
            family: Family::Offset,
            values: offset,
        },
        FamilyFit {
            family: Family::Span,
            values: span,
        },
        FamilyFit {
            family: Family::Bow,
            values: bow,
        },
    ];
    if families
        .iter()
        .any(|f| f.values.iter().any(|v| !v.is_finite()))
    {
        return Err(DesignFitError::BadData(
            "the design's curves cannot fit these readings (singular)".into(),
        ));
    }
    Ok(PartFit {
        families,
        steps: steps.into_iter().zip(read).collect(),
        skipped,
        condition: c0.max(c1).max(c2).max(c3),
    })
}

/// The thermometer family fitted on `steps` (chamber temperature, ln
/// signal) with `k` modes.
pub(super) fn fit_thermometer(
    core: &DesignCore,
    curves: &ShapeCurves,
    steps: &[Step],
    k: usize,
) -> FamilyFit {
    fit_thermometer_cond(core, curves, steps, k).0
}

fn fit_thermometer_cond(
    core: &DesignCore,
    curves: &ShapeCurves,
    steps: &[Step],
    k: usize,
) -> (FamilyFit, f64) {
    let pts: Vec<(f64, f64)> = steps.iter().map(|s| (s.chamber_c, s.signal.ln())).collect();
    let (values, c) = fit_family(core, curves, Family::Thermometer, &pts, k, &[]);
    (
        FamilyFit {
            family: Family::Thermometer,
            values,
        },
        c,
    )
}

/// Combined basis weights of a part's family curve: mean + sum c_k mode_k.
/// The family's curve before the part's own modes: the lot mean plus the
/// coupling to the part's thermometer coefficients `therm`.
fn base_weights(fam: &FamilyCurves, therm: &[f64]) -> [f64; MAX_BASIS] {
    let mut w = [0.0; MAX_BASIS];
    for (o, m) in w.iter_mut().zip(&fam.mean) {
        *o = *m;
    }
    for ((g, c), center) in fam.coupling.iter().zip(therm).zip(&fam.coupling_center) {
        for (o, x) in w.iter_mut().zip(g) {
            *o += (c - center) * x;
        }
    }
    w
}

fn combined(core: &DesignCore, fit: &FamilyFit, therm: &[f64]) -> [f64; MAX_BASIS] {
    let fam = core.family(fit.family);
    let mut w = base_weights(fam, therm);
    for (c, mode) in fit.values.iter().skip(1).zip(&fam.modes) {
        for (o, m) in w.iter_mut().zip(mode) {
            *o += c * m;
        }
    }
    w
}

/// Temperature the part's thermometer reads from `signal` (bisection over
/// the shapes' grid, started anywhere; `_hint_c` kept for callers that know
/// a nearby temperature).
pub(super) fn thermometer_reading(
    core: &DesignCore,
    curves: &ShapeCurves,
    fit: &FamilyFit,
    signal: f64,
) -> f64 {
    let w = combined(core, fit, &[]);
    let r = fit.values[0];
    let f = |t: f64| {
        let mut b = [0.0; MAX_BASIS];
        core.basis.eval(curves, Family::Thermometer, t, &mut b);
        r + dot(&w, &b) - signal.ln()
    };
    bisect(&f, curves.t0_c, curves.t_max_c())
}

/// Root of `f` on `[lo, hi]` by 60 halvings (below f64 spacing of a ~220 K
/// bracket); the nearer end when `f` does not change sign there.
pub fn bisect(f: &dyn Fn(f64) -> f64, lo: f64, hi: f64) -> f64 {
    let (mut lo, mut hi) = (lo, hi);
    let (flo, fhi) = (f(lo), f(hi));
    if flo.is_nan() || fhi.is_nan() {
        return f64::NAN;
    }
    if flo.signum() == fhi.signum() {
        return if flo.abs() < fhi.abs() { lo } else { hi };
    }
    for _ in 0..60 {
        let mid = 0.5 * (lo + hi);
        if f(mid).signum() == flo.signum() {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    0.5 * (lo + hi)
}

/// A part fitted on a design, evaluated like the physics part model.
#[derive(Debug, Clone, Copy)]
pub struct DesignPartModel<'a> {
    curves: &'a ShapeCurves,
    basis: BasisSpec,
    weights: [[f64; MAX_BASIS]; 4],
    refs: [f64; 4],
    /// Each family's weighted basis at the reference temperature (subtracted
    /// from every evaluation, computed once).
    at_ref: [f64; 4],
    span_scale: f64,
    sens_sign: f64,
    bow: bool,
}

impl<'a> DesignPartModel<'a> {
    /// The model of a part with `fits` (in [`Family::ALL`] order) on `core`.
    pub fn new(core: &DesignCore, curves: &'a ShapeCurves, fits: &[FamilyFit]) -> Self {
        let mut weights = [[0.0; MAX_BASIS]; 4];
        let mut refs = [0.0; 4];
        let therm: Vec<f64> = fits
            .iter()
            .find(|f| f.family == Family::Thermometer)
            .and_then(|f| f.values.get(1..))
            .unwrap_or(&[])
            .to_vec();
        for fit in fits {
            let k = fit.family.index();
            let coupled = if fit.family == Family::Thermometer {
                &[][..]
            } else {
                &therm[..]
            };
            weights[k] = combined(core, fit, coupled);
            refs[k] = fit.values.first().copied().unwrap_or(0.0);
        }
        let mut at_ref = [0.0; 4];
        for f in Family::ALL {
            let mut b = [0.0; MAX_BASIS];
            core.basis.raw(curves, f, core.basis.t_ref_c, &mut b);
            at_ref[f.index()] = dot(&weights[f.index()][..core.basis.len(f)], &b);
        }
        DesignPartModel {
            curves,
            basis: core.basis,
            weights,
            refs,
            at_ref,
            span_scale: core.span_scale,
            sens_sign: core.sens_sign,
            bow: core.bow,
        }
    }

    /// The full model's shapes the basis uses.
    pub fn curves(&self) -> &'a ShapeCurves {
        self.curves
    }

    fn family(&self, f: Family, t_c: f64) -> f64 {
        let mut b = [0.0; MAX_BASIS];
        self.basis.raw(self.curves, f, t_c, &mut b);
        let k = f.index();
        self.refs[k] + dot(&self.weights[k][..self.basis.len(f)], &b) - self.at_ref[k]
    }

    /// Temperature signal at `t_c`.
    pub fn signal(&self, t_c: f64) -> f64 {
        self.family(Family::Thermometer, t_c).exp()
    }

    /// Offset (terminal line at zero stimulus) at `t_c`.
    pub fn offset(&self, t_c: f64) -> f64 {
        self.span_scale * self.family(Family::Offset, t_c)
    }

    /// Sensitivity (terminal-line slope) at `t_c`.
    pub fn sensitivity(&self, t_c: f64) -> f64 {
        self.sens_sign * self.family(Family::Span, t_c).exp()
    }

    /// Mid-scale nonlinearity at `t_c`, fraction of span (`None`: linear).
    pub fn bow_mid(&self, t_c: f64) -> Option<f64> {
        self.bow.then(|| self.family(Family::Bow, t_c))
    }

    /// Temperature whose signal equals `signal` (bisection on the shapes'
    /// grid; the nearer end outside it).
    pub fn temperature(&self, signal: f64) -> f64 {
        let target = signal.ln();
        let f = |t: f64| self.family(Family::Thermometer, t) - target;
        let (lo, hi) = (self.curves.t0_c, self.curves.t_max_c());
        // Newton from the reference temperature with a central-difference
        // slope; it converges in a few steps on these smooth monotone
        // curves. Bisection takes over if a step leaves the grid or 20
        // steps do not reach 1e-9 K.
        let mut t = self.basis.t_ref_c;
        for _ in 0..20 {
            let h = 1e-3;
            let slope = (f(t + h) - f(t - h)) / (2.0 * h);
            let step = f(t) / slope;
            if !step.is_finite() {
                break;
            }
            let next = t - step;
            if !(lo..=hi).contains(&next) {
                break;
            }
            if (next - t).abs() < 1e-9 {
                return next;
            }
            t = next;
        }
        bisect(&f, lo, hi)
    }

    /// d(signal)/dT at `t_c`, per kelvin (central difference, 1 mK step:
    /// truncation ~1e-7 relative for these smooth curves).
    pub fn signal_slope(&self, t_c: f64) -> f64 {
        let h = 1e-3;
        (self.signal(t_c + h) - self.signal(t_c - h)) / (2.0 * h)
    }
}
