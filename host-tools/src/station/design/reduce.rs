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
//!
//! **The read-temperature frame.** A self-thermometer's signal moves a
//! little with the stimulus (a bridge's resistance changes with pressure
//! when its arms are not matched or its longitudinal and transverse
//! coefficients differ; a Hall plate's resistance with the field), so at
//! one chamber temperature each reading's signal reads a slightly different
//! temperature, and the runtime compensates each reading at the temperature
//! its own signal reads. The step's signal is therefore the fitted signal
//! at mid-scale (the same whatever the plan's stimuli), and with a
//! [`ReadFrame`] each output is first moved to the step's read temperature
//! along the part's curves, `y_i - (T_i - T_step) dy/dT`, before the fit:
//! the step's offset, span and nonlinearity are then those of the output as
//! a function of the *read* temperature, which is what a table inverts. On
//! a 2 % arm mismatch the readings spread over ~0.1..0.2 K (a few tens of
//! ppm of span at full scale on a bridge drifting ~2 700 ppm/K).

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
    /// Temperature signal at mid-scale stimulus, from a fit of its logarithm
    /// in the stimulus like the output's (spec units).
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

/// How a part reads its temperature and how its output moves with it, for
/// [`reduce_read`].
pub struct ReadFrame<'a> {
    /// Temperature (C) the part's thermometer reads from a signal.
    pub t_of_signal: &'a dyn Fn(f64) -> f64,
    /// Slopes of the part's curves at a read temperature (C): d offset/dT
    /// (output units per K), d ln|sens|/dT (1/K), d bow/dT (1/K).
    pub slopes: &'a dyn Fn(f64) -> [f64; 3],
}

/// Reduces one part's rows (any order) to ascending steps. A step with fewer
/// than two distinct stimuli, or with non-finite values, is left out and
/// named in the error list as `(chamber_c, reason)`.
pub fn reduce(rows: &[&ChamberRow], fs: (f64, f64)) -> (Vec<Step>, Vec<(f64, String)>) {
    reduce_read(rows, fs, None)
}

/// Least squares of `b` on `a` (relative singular-value cutoff 1e-12,
/// common practice); `None` when the matrix is out of any sensible range.
fn solve(a: &DMatrix<f64>, b: &DVector<f64>) -> Option<DVector<f64>> {
    let svd = crate::station::linalg::svd_bounded(a.clone(), true, true)?;
    let smax = svd.singular_values.max();
    svd.solve(b, 1e-12 * smax).ok()
}

/// [`reduce`], with each step's outputs moved to the step's read
/// temperature in `frame` (see the module docs) when one is given.
pub fn reduce_read(
    rows: &[&ChamberRow],
    fs: (f64, f64),
    frame: Option<&ReadFrame<'_>>,
) -> (Vec<Step>, Vec<(f64, String)>) {
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
        let mut b = DVector::from_iterator(at.len(), at.iter().map(|r| r.output));
        let ln_sig = DVector::from_iterator(at.len(), at.iter().map(|r| r.temp_signal.ln()));
        let (Some(mut x), Some(g)) = (solve(&a, &b), solve(&a, &ln_sig)) else {
            skipped.push((t, "readings out of any sensible range".into()));
            continue;
        };
        let mid = 0.5 * (fs.0 + fs.1);
        let signal = (g[0]
            + g[1] * mid
            + if with_bow {
                g[2] * parabola(mid, fs)
            } else {
                0.0
            })
        .exp();
        if let Some(frame) = frame {
            // Each output moved to the step's read temperature along the
            // part's curves: y = o + k (x + bow q(x)), so dy/dT = o' +
            // k L' x + k (L' bow + bow') q(x) with L = ln|k|.
            let t_step = (frame.t_of_signal)(signal);
            let [d_o, d_l, d_b] = (frame.slopes)(t_step);
            let (k, bow) = (x[1], if with_bow { x[2] / x[1] } else { 0.0 });
            let mut moved = b.clone();
            for (i, r) in at.iter().enumerate() {
                let dt = (frame.t_of_signal)(r.temp_signal) - t_step;
                let dy_dt =
                    d_o + k * d_l * r.stimulus + k * (d_l * bow + d_b) * parabola(r.stimulus, fs);
                moved[i] -= dt * dy_dt;
            }
            // A frame that cannot read these signals leaves the step as measured.
            if moved.iter().all(|v| v.is_finite())
                && let Some(y) = solve(&a, &moved)
            {
                b = moved;
                x = y;
            }
        }
        if !x.iter().all(|v| v.is_finite()) {
            skipped.push((t, "singular stimulus fit".into()));
            continue;
        }
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
            signal,
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
            // The signal is the same at every stimulus: its fit returns it
            // up to rounding.
            assert!(st.residual_rel < 1e-10 && (st.signal / (1000.0 + t) - 1.0).abs() < 1e-12);
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

    #[test]
    fn read_frame_moves_outputs_to_the_step_read_temperature() {
        // A thermometer ln S = ln 1000 + alpha T whose signal also rises by
        // `a` (in ln S) from zero to full stimulus, and an output that is
        // linear in the stimulus in the read-temperature frame:
        // F(T, x) = o0 + o1 T + k0 exp(l1 T) x. At die temperature 40 C the
        // readings' signals read 40 + a u / alpha C.
        let fs = (0.0, 10.0);
        let (alpha, a) = (1.2e-3, 2.4e-4); // a / alpha = 0.2 K at full scale
        let (o0, o1, k0, l1) = (1e-3, 2e-5, 1e-3, -2.5e-3);
        let f = |t: f64, x: f64| o0 + o1 * t + k0 * (l1 * t).exp() * x;
        let t_of = |sig: f64| (sig / 1000.0).ln() / alpha;
        let rows: Vec<ChamberRow> = (0..5)
            .map(|k| {
                let x = 2.5 * k as f64;
                let sig = 1000.0 * (alpha * 40.0 + a * x / 10.0).exp();
                row(40.0, x, f(t_of(sig), x), sig)
            })
            .collect();
        let refs: Vec<&ChamberRow> = rows.iter().collect();
        let slopes = |t: f64| [o1, l1, 0.0 * t];
        let frame = ReadFrame {
            t_of_signal: &t_of,
            slopes: &slopes,
        };
        let (framed, _) = reduce_read(&refs, fs, Some(&frame));
        let (plain, _) = reduce(&refs, fs);
        let st = framed[0];
        // The step reads the mid-scale signal: 40 C + 0.1 K.
        let t_step = t_of(st.signal);
        assert!((t_step - 40.1).abs() < 1e-9, "{t_step}");
        // In the frame the step is F at its read temperature. What is left
        // is second order in the readings' +/-0.1 K spread around it: the
        // span's curvature l1^2 (0.1 K)^2 / 2 ~ 3e-8, and the unframed
        // span's 1e-4 error times the 2.5e-4 correction ~ 3e-8 (relative);
        // 1e-6 leaves a margin and is still 100x below the unframed miss.
        let span = k0 * (l1 * t_step).exp();
        assert!(
            (st.offset - f(t_step, 0.0)).abs() < 1e-6 * span * 10.0,
            "{st:?}"
        );
        assert!((st.sens / span - 1.0).abs() < 1e-6, "{st:?}");
        assert!(st.bow.unwrap().abs() < 1e-6, "{st:?}");
        // Without the frame the readings' spread shows as a span error:
        // the offset slope o1 over 0.2 K against a span of 9e-3 is 4.4e-4.
        assert!((plain[0].sens / span - 1.0).abs() > 1e-4, "{:?}", plain[0]);
    }
}
