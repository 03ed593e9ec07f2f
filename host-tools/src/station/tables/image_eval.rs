//! Running a table image with the runtime crate's own code (the arithmetic the
//! firmware runs; bit-exact for Q images) against the fitted part model on a
//! grid of temperatures and stimuli.
//!
//! Per grid point: the model gives the ADC code of the stimulus (rounded to
//! an integer, as the firmware receives it; the element's bow included) and
//! the temperature signal; the reference is the stimulus the model maps that
//! same integer code to, so ADC quantization is not counted as table
//! error, while everything the image and its arithmetic add is.

use crate::station::table::TableFrame;
use compensate::image::NumberFormat;
use compensate::{Compensator, FixedCompensator, ImageError, TableView};
use rayon::prelude::*;

/// Error statistics of an image on a grid, in ppm of span.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct ErrorStats {
    /// Largest |error|.
    pub max_error_ppm: f64,
    /// Root mean square error.
    pub rms_error_ppm: f64,
    /// Temperature of the largest error, C.
    pub worst_t_c: f64,
    /// Stimulus of the largest error.
    pub worst_stimulus: f64,
    /// Grid points evaluated.
    pub points: usize,
}

/// Why an image could not be evaluated.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum EvalError {
    /// The runtime parser rejected the image.
    #[error("table image rejected by the runtime parser: {0}")]
    Image(ImageError),
    /// The compensator refused the image.
    #[error("compensator: {0}")]
    Compensator(String),
}

/// `n` points from `lo` to `hi` inclusive.
pub fn linspace(lo: f64, hi: f64, n: usize) -> Vec<f64> {
    if n < 2 {
        return vec![lo];
    }
    (0..n)
        .map(|k| lo + (hi - lo) * k as f64 / (n - 1) as f64)
        .collect()
}

#[derive(Clone, Copy)]
struct Acc {
    max: f64,
    sum2: f64,
    worst_t: f64,
    worst_s: f64,
    n: usize,
}

impl Acc {
    const EMPTY: Acc = Acc {
        max: -1.0,
        sum2: 0.0,
        worst_t: f64::NAN,
        worst_s: f64::NAN,
        n: 0,
    };
    fn add(&mut self, e: f64, t: f64, s: f64) {
        // NaN counts as the worst possible error.
        let a = if e.is_nan() { f64::INFINITY } else { e.abs() };
        if a > self.max {
            self.max = a;
            self.worst_t = t;
            self.worst_s = s;
        }
        self.sum2 += e * e;
        self.n += 1;
    }
    /// Merge keeping the earlier point on ties: deterministic in grid order.
    fn merge(self, other: Acc) -> Acc {
        let mut out = if other.max > self.max { other } else { self };
        out.sum2 = self.sum2 + other.sum2;
        out.n = self.n + other.n;
        out
    }
}

/// Evaluates `image` on `temps` x `stimuli` against the frame's model.
pub fn evaluate(
    image: &[u8],
    frame: &TableFrame<'_>,
    temps: &[f64],
    stimuli: &[f64],
) -> Result<ErrorStats, EvalError> {
    let view = TableView::parse(image).map_err(EvalError::Image)?;
    let fs = frame.fs_hi - frame.fs_lo;
    let to_ppm = 1e6 / fs;
    let lsb = frame.lsb;
    let per_row: Vec<Acc> = match view.format() {
        NumberFormat::Q => {
            let base =
                FixedCompensator::new(&view).map_err(|e| EvalError::Compensator(e.to_string()))?;
            let q = view.q_format();
            let sq = 2f64.powi(i32::from(q.signal));
            let frame = frame.for_view(&view);
            let oq = 2f64.powi(-i32::from(q.output));
            temps
                .par_iter()
                .map(|&t| {
                    let mut c = base;
                    let mut acc = Acc::EMPTY;
                    c.update_temperature((frame.image_signal(t) * sq).round() as i32);
                    let at = frame.at(t);
                    for &s in stimuli {
                        let raw = (at.output(s) / lsb).round();
                        let reference = at.stimulus(raw * lsb);
                        let got = f64::from(c.compensate_sample(raw as i32).value) * oq;
                        acc.add((got - reference) * to_ppm, t, s);
                    }
                    acc
                })
                .collect()
        }
        _ => {
            let base =
                Compensator::new(&view).map_err(|e| EvalError::Compensator(e.to_string()))?;
            let frame = frame.for_view(&view);
            temps
                .par_iter()
                .map(|&t| {
                    let mut c = base;
                    let mut acc = Acc::EMPTY;
                    c.update_temperature(frame.image_signal(t) as f32);
                    let at = frame.at(t);
                    for &s in stimuli {
                        let raw = (at.output(s) / lsb).round();
                        let reference = at.stimulus(raw * lsb);
                        let got = f64::from(c.compensate_sample(raw as f32).value);
                        acc.add((got - reference) * to_ppm, t, s);
                    }
                    acc
                })
                .collect()
        }
    };
    let acc = per_row.into_iter().fold(Acc::EMPTY, Acc::merge);
    Ok(ErrorStats {
        max_error_ppm: acc.max.max(0.0),
        rms_error_ppm: (acc.sum2 / acc.n.max(1) as f64).sqrt(),
        worst_t_c: acc.worst_t,
        worst_stimulus: acc.worst_s,
        points: acc.n,
    })
}

/// Largest |error| at each temperature of `temps` over `stimuli` (for plots).
pub fn per_temperature(
    image: &[u8],
    frame: &TableFrame<'_>,
    temps: &[f64],
    stimuli: &[f64],
) -> Result<Vec<(f64, f64)>, EvalError> {
    temps
        .iter()
        .map(|&t| evaluate(image, frame, &[t], stimuli).map(|s| (t, s.max_error_ppm)))
        .collect()
}
