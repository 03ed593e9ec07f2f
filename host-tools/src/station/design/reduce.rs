//! One part's chamber rows reduced to one step per chamber temperature:
//! the mean temperature signal, and offset, sensitivity and mid-scale
//! nonlinearity from a linear least-squares fit of output against stimulus.
//!
//! The output at one temperature is `offset + sens * (x + bow * q(x))` with
//! `q(x) = 4 W u (1 - u)`, `u = (x - fs_lo) / W`, `W` the full-scale width:
//! the terminal-based parabola of [`super::super::bow::Bow`]. Offset and
//! `sens` are the terminal line's intercept at zero stimulus and its slope,
//! `bow` the mid-scale deviation in fraction of span. The fit is linear in
//! `(offset, sens, sens * bow)`; with two stimuli the bow is not fitted.

use super::super::chamber::ChamberRow;
use nalgebra::{DMatrix, DVector};

/// Chamber temperatures closer than this are one step, K: a station that
/// logs the chamber's reading instead of its set point still groups each
/// step's rows (steps are several kelvin apart).
pub const SAME_STEP_K: f64 = 0.1;

/// One chamber temperature of one part.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Step {
    /// Chamber set point, C.
    pub chamber_c: f64,
    /// Mean temperature signal (spec units).
    pub signal: f64,
    /// Output at zero stimulus of the terminal line (output units).
    pub offset: f64,
    /// Slope of the terminal line (output units per stimulus unit).
    pub sens: f64,
    /// Mid-scale nonlinearity, fraction of span (`None` with two stimuli).
    pub bow: Option<f64>,
    /// Distinct stimuli at this step.
    pub stimuli: usize,
    /// Rms residual of the step's fit, fraction of span (0 when exact).
    pub residual_rel: f64,
}

/// The terminal-based parabola of stimulus `x` over full scale `fs`.
pub fn parabola(x: f64, fs: (f64, f64)) -> f64 {
    let w = fs.1 - fs.0;
    let u = (x - fs.0) / w;
    4.0 * w * u * (1.0 - u)
}

fn distinct_count(mut v: Vec<f64>) -> usize {
    v.sort_by(f64::total_cmp);
    v.dedup_by(|a, b| (*a - *b).abs() <= 1e-9 * b.abs().max(1.0));
    v.len()
}

/// Reduces one part's rows (any order) to ascending steps. A step with fewer
/// than two distinct stimuli, or with non-finite values, is left out and
/// named in the error list as `(chamber_c, reason)`.
pub fn reduce(rows: &[&ChamberRow], fs: (f64, f64)) -> (Vec<Step>, Vec<(f64, String)>) {
    let mut temps: Vec<f64> = rows.iter().map(|r| r.chamber_c).collect();
    temps.sort_by(f64::total_cmp);
    temps.dedup_by(|a, b| (*a - *b).abs() <= SAME_STEP_K);
    let width = fs.1 - fs.0;
    let mut steps = Vec::with_capacity(temps.len());
    let mut skipped = Vec::new();
    for t in temps {
        let at: Vec<&ChamberRow> = rows
            .iter()
            .copied()
            .filter(|r| (r.chamber_c - t).abs() <= SAME_STEP_K)
            .collect();
        if at
            .iter()
            .any(|r| !(r.output.is_finite() && r.temp_signal.is_finite() && r.stimulus.is_finite()))
        {
            skipped.push((t, "non-finite reading".to_string()));
            continue;
        }
        let stimuli = distinct_count(at.iter().map(|r| r.stimulus).collect());
        if stimuli < 2 {
            skipped.push((t, format!("{stimuli} distinct stimulus (need 2)")));
            continue;
        }
        let with_bow = stimuli >= 3;
        let cols = if with_bow { 3 } else { 2 };
        let a = DMatrix::from_fn(at.len(), cols, |i, j| match j {
            0 => 1.0,
            1 => at[i].stimulus,
            _ => parabola(at[i].stimulus, fs),
        });
        let b = DVector::from_iterator(at.len(), at.iter().map(|r| r.output));
        let Some(svd) = crate::station::linalg::svd_bounded(a.clone(), true, true) else {
            skipped.push((t, "readings out of any sensible range".into()));
            continue;
        };
        let smax = svd.singular_values.max();
        // Relative singular-value cutoff 1e-12 (common practice).
        let Ok(x) = svd.solve(&b, 1e-12 * smax) else {
            skipped.push((t, "singular stimulus fit".into()));
            continue;
        };
        let sens = x[1];
        if !(sens.is_finite() && sens != 0.0) {
            skipped.push((t, "zero or non-finite sensitivity".into()));
            continue;
        }
        let resid = &a * &x - &b;
        let dof = at.len().saturating_sub(cols);
        let residual_rel = if dof > 0 {
            (resid.norm_squared() / at.len() as f64).sqrt() / (sens * width).abs()
        } else {
            0.0
        };
        steps.push(Step {
            chamber_c: at.iter().map(|r| r.chamber_c).sum::<f64>() / at.len() as f64,
            signal: at.iter().map(|r| r.temp_signal).sum::<f64>() / at.len() as f64,
            offset: x[0],
            sens,
            bow: with_bow.then(|| x[2] / sens),
            stimuli,
            residual_rel,
        });
    }
    (steps, skipped)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn row(t: f64, x: f64, y: f64, sig: f64) -> ChamberRow {
        ChamberRow {
            serial: "P".into(),
            chamber_c: t,
            stimulus: x,
            output: y,
            temp_signal: sig,
            line: 0,
        }
    }

    #[test]
    fn recovers_offset_sensitivity_and_bow() {
        let fs = (-200.0, 200.0);
        // (offset, sens, bow) per step; outputs exact, so the fit is exact
        // up to rounding (1e-12 relative).
        let cases = [
            (1e-3, 1.2e-4, 2e-3, 5, 25.0),
            (-4e-4, 0.9e-4, -1e-3, 3, 85.0),
        ];
        let mut rows = Vec::new();
        for &(o, s, b, n, t) in &cases {
            for k in 0..n {
                let x = fs.0 + (fs.1 - fs.0) * k as f64 / (n - 1) as f64;
                rows.push(row(t, x, o + s * (x + b * parabola(x, fs)), 1000.0 + t));
            }
        }
        let refs: Vec<&ChamberRow> = rows.iter().collect();
        let (steps, skipped) = reduce(&refs, fs);
        assert!(skipped.is_empty());
        for (st, &(o, s, b, n, t)) in steps.iter().zip(&cases) {
            assert_eq!((st.chamber_c, st.stimuli), (t, n));
            assert!((st.offset - o).abs() < 1e-12, "{st:?}");
            assert!((st.sens / s - 1.0).abs() < 1e-12, "{st:?}");
            assert!((st.bow.unwrap() - b).abs() < 1e-10, "{st:?}");
            assert!(st.residual_rel < 1e-10 && st.signal == 1000.0 + t);
        }
        // Two stimuli: no bow; one stimulus: the step is skipped and named.
        let two = [
            row(0.0, 0.0, 1.0, 5.0),
            row(0.0, 1.0, 2.0, 5.0),
            row(9.0, 1.0, 2.0, 5.0),
        ];
        let refs: Vec<&ChamberRow> = two.iter().collect();
        let (steps, skipped) = reduce(&refs, (0.0, 1.0));
        assert_eq!(steps.len(), 1);
        assert_eq!(steps[0].bow, None);
        assert_eq!(skipped.len(), 1);
        assert_eq!(skipped[0].0, 9.0);
    }
}
