//! The usual practice this project is compared with: a polynomial calibration
//! fitted through the same chamber points.
//!
//! Temperature from a straight line through (temperature signal, chamber
//! temperature); offset and sensitivity each quadratic in that temperature;
//! 8 stored coefficients per part (2 + 3 + 3). Solved by linear least squares
//! (SVD), so it is exact through the points whenever it can be.

use crate::station::chamber::ChamberRow;
use nalgebra::{DMatrix, DVector};

/// Temperature about which the polynomials are centred (conditioning only).
const T_CENTER_C: f64 = 25.0;

/// A fitted polynomial calibration of one part.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct PolyCal {
    /// Temperature = `thermo[0] + thermo[1] * signal`.
    pub thermo: [f64; 2],
    /// Offset = `offset[0] + offset[1] u + offset[2] u^2`, u = T - 25 C.
    pub offset: [f64; 3],
    /// Sensitivity = `sens[0] + sens[1] u + sens[2] u^2`.
    pub sens: [f64; 3],
    /// Nonlinearity in the stimulus (absent: linear), 2 more numbers.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub bow: Option<PolyBow>,
}

/// The polynomial's nonlinearity: a terminal-based parabola in the stimulus
/// (as [`crate::station::bow::Bow`]) whose mid-scale deviation is linear in
/// temperature, `mid[0] + mid[1] u`.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct PolyBow {
    /// Mid-scale deviation, fraction of span: constant and per-K terms.
    pub mid: [f64; 2],
    /// Full-scale stimulus range (a design constant, not a fitted number).
    pub fs: (f64, f64),
}

/// Why a polynomial could not be fitted.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[non_exhaustive]
pub enum PolyError {
    /// Too few distinct temperatures or stimuli for the coefficients.
    #[error(
        "need at least 3 distinct temperatures and 2 distinct stimuli, got {temperatures} and {stimuli}"
    )]
    TooFewPoints {
        /// Distinct chamber temperatures.
        temperatures: usize,
        /// Distinct stimuli.
        stimuli: usize,
    },
}

fn distinct(values: impl Iterator<Item = f64>) -> usize {
    let mut v: Vec<f64> = values.collect();
    v.sort_by(f64::total_cmp);
    v.dedup_by(|a, b| (*a - *b).abs() <= 1e-9 * b.abs().max(1.0));
    v.len()
}

fn lstsq(a: DMatrix<f64>, b: DVector<f64>) -> DVector<f64> {
    let n = a.ncols();
    crate::station::linalg::lstsq(a, &b).unwrap_or_else(|| DVector::from_element(n, f64::NAN))
}

impl PolyCal {
    /// Fits the polynomial to one part's rows.
    pub fn fit(rows: &[&ChamberRow]) -> Result<PolyCal, PolyError> {
        let temperatures = distinct(rows.iter().map(|r| r.chamber_c));
        let stimuli = distinct(rows.iter().map(|r| r.stimulus));
        if temperatures < 3 || stimuli < 2 {
            return Err(PolyError::TooFewPoints {
                temperatures,
                stimuli,
            });
        }
        let n = rows.len();
        let mut a = DMatrix::zeros(n, 2);
        let mut b = DVector::zeros(n);
        for (k, r) in rows.iter().enumerate() {
            a[(k, 0)] = 1.0;
            a[(k, 1)] = r.temp_signal;
            b[k] = r.chamber_c;
        }
        let t = lstsq(a, b);
        let mut a = DMatrix::zeros(n, 6);
        let mut b = DVector::zeros(n);
        for (k, r) in rows.iter().enumerate() {
            let u = r.chamber_c - T_CENTER_C;
            for (j, pw) in [1.0, u, u * u].into_iter().enumerate() {
                a[(k, j)] = pw;
                a[(k, 3 + j)] = pw * r.stimulus;
            }
            b[k] = r.output;
        }
        let c = lstsq(a, b);
        Ok(PolyCal {
            thermo: [t[0], t[1]],
            offset: [c[0], c[1], c[2]],
            sens: [c[3], c[4], c[5]],
            bow: None,
        })
    }

    /// The same polynomial plus a nonlinearity linear in temperature, from
    /// the mid-scale deviation at each chamber temperature (3 stimuli or
    /// more); 10 stored numbers. Without 3 stimuli anywhere, [`PolyCal::fit`].
    pub fn fit_with_bow(rows: &[&ChamberRow], fs: (f64, f64)) -> Result<PolyCal, PolyError> {
        let (steps, _) = crate::station::design::reduce::reduce(rows, fs);
        let pts: Vec<(f64, f64)> = steps
            .iter()
            .filter_map(|s| s.bow.map(|b| (s.chamber_c - T_CENTER_C, b)))
            .collect();
        if pts.len() < 2 {
            return Self::fit(rows);
        }
        let n = pts.len();
        let a = DMatrix::from_fn(n, 2, |i, j| if j == 0 { 1.0 } else { pts[i].0 });
        let b = DVector::from_iterator(n, pts.iter().map(|p| p.1));
        let m = lstsq(a, b);
        let bow = PolyBow {
            mid: [m[0], m[1]],
            fs,
        };
        // Offset and sensitivity against the apparent stimulus.
        let apparent: Vec<ChamberRow> = rows
            .iter()
            .map(|r| ChamberRow {
                stimulus: bow.apparent(r.stimulus, r.chamber_c),
                ..(*r).clone()
            })
            .collect();
        let refs: Vec<&ChamberRow> = apparent.iter().collect();
        let mut p = Self::fit(&refs)?;
        p.bow = Some(bow);
        Ok(p)
    }

    /// Number of stored numbers.
    pub fn coefficients(&self) -> usize {
        8 + if self.bow.is_some() { 2 } else { 0 }
    }

    /// Temperature estimated from the temperature signal.
    pub fn temperature(&self, signal: f64) -> f64 {
        self.thermo[0] + self.thermo[1] * signal
    }

    /// Compensated stimulus from a raw output and temperature signal.
    pub fn stimulus(&self, output: f64, signal: f64) -> f64 {
        let u = self.temperature(signal) - T_CENTER_C;
        let off = self.offset[0] + u * (self.offset[1] + u * self.offset[2]);
        let sens = self.sens[0] + u * (self.sens[1] + u * self.sens[2]);
        let apparent = (output - off) / sens;
        match self.bow {
            Some(b) => b.true_stimulus(apparent, u + T_CENTER_C),
            None => apparent,
        }
    }
}

impl PolyBow {
    fn at(&self, t_c: f64) -> crate::station::bow::Bow {
        crate::station::bow::Bow::constant(self.mid[0] + self.mid[1] * (t_c - T_CENTER_C))
    }

    /// The stimulus the terminal line sees at `t_c`.
    pub fn apparent(&self, stimulus: f64, t_c: f64) -> f64 {
        self.at(t_c).apparent(stimulus, t_c, t_c, self.fs)
    }

    /// Inverse of [`PolyBow::apparent`].
    pub fn true_stimulus(&self, apparent: f64, t_c: f64) -> f64 {
        self.at(t_c).true_stimulus(apparent, t_c, t_c, self.fs)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn row(t: f64, s: f64, out: f64, sig: f64) -> ChamberRow {
        ChamberRow {
            serial: "P".into(),
            chamber_c: t,
            stimulus: s,
            output: out,
            temp_signal: sig,
            line: 0,
        }
    }

    #[test]
    fn exact_on_data_it_can_represent() {
        // Linear thermometer, quadratic offset and sensitivity: recovered exactly.
        let truth = |t: f64, s: f64| {
            let u = t - 25.0;
            (1e-3 + 2e-6 * u - 3e-9 * u * u) + s * (2e-3 - 4e-6 * u + 1e-8 * u * u)
        };
        let mut rows = Vec::new();
        for t in [-20.0, 25.0, 85.0] {
            for s in [0.0, 5.0, 10.0] {
                rows.push(row(t, s, truth(t, s), 5000.0 + 10.0 * t));
            }
        }
        let refs: Vec<&ChamberRow> = rows.iter().collect();
        let p = PolyCal::fit(&refs).unwrap();
        for (t, s) in [(-40.0, 2.0), (0.0, 9.0), (125.0, 5.0)] {
            let got = p.stimulus(truth(t, s), 5000.0 + 10.0 * t);
            // Representable data, well-conditioned 6x9 system: rounding only.
            assert!((got - s).abs() < 1e-8, "t {t} s {s}: got {got}");
        }
    }

    #[test]
    fn too_few_temperatures_is_an_error() {
        let rows = [
            row(25.0, 0.0, 0.0, 1.0),
            row(25.0, 1.0, 1.0, 1.0),
            row(85.0, 0.0, 0.0, 2.0),
        ];
        let refs: Vec<&ChamberRow> = rows.iter().collect();
        assert_eq!(
            PolyCal::fit(&refs),
            Err(PolyError::TooFewPoints {
                temperatures: 2,
                stimuli: 2
            })
        );
    }
}
