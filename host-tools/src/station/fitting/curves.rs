//! Temperature shapes of the full model, tabulated once per element spec, that
//! the per-part fits scale and bend.
//!
//! A part differs from the nominal element by a few physical parameters; the
//! full model gives how each quantity moves with temperature and with doping.
//! Evaluating the full model inside every fit iteration of every part would
//! cost thousands of neutrality solutions per part, so the shapes are
//! tabulated on a fine temperature grid and interpolated (cubic Hermite with
//! centred-difference slopes, error O(h^4) — on the 0.5 K grid used here below
//! 1e-9 relative for these smooth curves, see the test).

/// What the full model gives at one temperature for the nominal element with
/// every doping density scaled by a factor.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ShapePoint {
    /// Natural log of the resistivity (ohm cm).
    pub ln_rho: f64,
    /// Natural log of the quantity the span is proportional to: the
    /// piezoresistance factor P(N, T) for a bridge, |R_H| for a Hall plate.
    pub ln_gain: f64,
}

/// Which full-model quantity the offset drift follows.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum OffsetShape {
    /// Bridge: arm-to-arm doping mismatch acts through d ln(rho) / d ln(N),
    /// which itself changes with temperature.
    DopingSensitivity,
    /// Hall plate: misalignment offset is the bias current times a fraction of
    /// the plate resistance, so it follows rho(T) / rho(T_ref).
    Resistivity,
}

/// The tabulated shapes, all relative to the reference temperature.
#[derive(Debug, Clone, PartialEq)]
pub struct ShapeCurves {
    // Documented fields read alike (stationdb/query.rs, stationdb/figures.rs); each is its own.
    /// First grid temperature in degrees Celsius.
    pub t0_c: f64,
    /// Grid step in kelvin.
    pub step_k: f64,
    /// Reference temperature in degrees Celsius (the grid contains it).
    pub t_ref_c: f64,
    /// Which quantity the offset follows.
    pub offset_kind: OffsetShape,
    /// L(T) = ln rho(T) - ln rho(T_ref): thermometer shape.
    pub ln_rho_rel: Vec<f64>,
    /// Offset shape g(T) (see [`OffsetShape`]), zero at T_ref.
    pub offset_shape: Vec<f64>,
    /// S(T) = ln gain(T) - ln gain(T_ref): span shape.
    pub ln_gain_rel: Vec<f64>,
    /// D(T) = dS/d(ln N): how the span shape bends with effective doping.
    pub ln_gain_dlnn: Vec<f64>,
}

/// Relative doping step for the d/d(ln N) central differences: 1 % keeps the
/// truncation error (~h^2 ~ 1e-4 relative of a slowly varying derivative) far
/// below the part-to-part spread the derivative is used for.
const DLN_N: f64 = 0.01;

impl ShapeCurves {
    /// Tabulates the shapes from `t_min_c` to `t_max_c` (inclusive, widened to
    /// whole steps) with step `step_k`, referenced to `t_ref_c`; `source(t_k,
    /// doping_scale)` evaluates the full model.
    pub fn build<E>(
        t_min_c: f64,
        t_max_c: f64,
        step_k: f64,
        t_ref_c: f64,
        offset: OffsetShape,
        source: impl Fn(f64, f64) -> Result<ShapePoint, E>,
    ) -> Result<ShapeCurves, E> {
        let n = ((t_max_c - t_min_c) / step_k).ceil() as usize + 1;
        let at = |t_c: f64, s: f64| source(t_c + 273.15, s);
        let up = DLN_N.exp();
        let down = (-DLN_N).exp();
        let eval3 = |t_c: f64| -> Result<[ShapePoint; 3], E> {
            Ok([at(t_c, 1.0)?, at(t_c, up)?, at(t_c, down)?])
        };
        let r = eval3(t_ref_c)?;
        let d_ln_rho_ref = (r[1].ln_rho - r[2].ln_rho) / (2.0 * DLN_N);
        let d_gain_ref = (r[1].ln_gain - r[2].ln_gain) / (2.0 * DLN_N);
        let mut c = ShapeCurves {
            t0_c: t_min_c,
            step_k,
            t_ref_c,
            offset_kind: offset,
            ln_rho_rel: Vec::with_capacity(n),
            offset_shape: Vec::with_capacity(n),
            ln_gain_rel: Vec::with_capacity(n),
            ln_gain_dlnn: Vec::with_capacity(n),
        };
        for k in 0..n {
            let t_c = t_min_c + k as f64 * step_k;
            let p = eval3(t_c)?;
            let l = p[0].ln_rho - r[0].ln_rho;
            c.ln_rho_rel.push(l);
            c.offset_shape.push(match offset {
                OffsetShape::DopingSensitivity => {
                    (p[1].ln_rho - p[2].ln_rho) / (2.0 * DLN_N) - d_ln_rho_ref
                }
                OffsetShape::Resistivity => l.exp() - 1.0,
            });
            c.ln_gain_rel.push(p[0].ln_gain - r[0].ln_gain);
            c.ln_gain_dlnn
                .push((p[1].ln_gain - p[2].ln_gain) / (2.0 * DLN_N) - d_gain_ref);
        }
        Ok(c)
    }

    /// Last grid temperature in degrees Celsius.
    pub fn t_max_c(&self) -> f64 {
        self.t0_c + (self.ln_rho_rel.len() - 1) as f64 * self.step_k
    }

    /// Interpolates one tabulated curve at `t_c` (clamped to the grid).
    pub fn interp(&self, curve: &[f64], t_c: f64) -> f64 {
        hermite(curve, (t_c - self.t0_c) / self.step_k)
    }

    /// Derivative of one tabulated curve with respect to temperature (per kelvin).
    pub fn slope(&self, curve: &[f64], t_c: f64) -> f64 {
        let h = 1e-3;
        (self.interp(curve, t_c + h) - self.interp(curve, t_c - h)) / (2.0 * h)
    }
}

/// Cubic Hermite interpolation at fractional index `x` with centred-difference
/// (Catmull-Rom) slopes; one-sided at the ends; `x` is clamped to the table.
fn hermite(y: &[f64], x: f64) -> f64 {
    let n = y.len();
    if n == 0 {
        return f64::NAN;
    }
    if n == 1 {
        return y[0];
    }
    let x = x.clamp(0.0, (n - 1) as f64);
    let i = (x.floor() as usize).min(n - 2);
    let t = x - i as f64;
    let slope = |j: usize| -> f64 {
        if j == 0 {
            y[1] - y[0]
        } else if j == n - 1 {
            y[n - 1] - y[n - 2]
        } else {
            0.5 * (y[j + 1] - y[j - 1])
        }
    };
    let (y0, y1, m0, m1) = (y[i], y[i + 1], slope(i), slope(i + 1));
    let t2 = t * t;
    let t3 = t2 * t;
    (2.0 * t3 - 3.0 * t2 + 1.0) * y0
        + (t3 - 2.0 * t2 + t) * m0
        + (-2.0 * t3 + 3.0 * t2) * y1
        + (t3 - t2) * m1
}

/// Shapes of an analytic stand-in for the full model, for tests (shapes
/// like p-Si, not physics under test), tabulated over -60..160 C every
/// 0.5 K, reference 25 C: ln rho = -0.9 ln s + 1.2 ln(T/300) +
/// `cross` ln s ln(T/300), ln gain = -0.2 ln s - 1.1 ln(T/300).
#[cfg(test)]
pub(crate) fn analytic_curves(cross: f64) -> ShapeCurves {
    ShapeCurves::build(
        -60.0,
        160.0,
        0.5,
        25.0,
        OffsetShape::DopingSensitivity,
        |t_k, s: f64| {
            Ok::<_, ()>(ShapePoint {
                ln_rho: -0.9 * s.ln()
                    + 1.2 * (t_k / 300.0).ln()
                    + cross * s.ln() * (t_k / 300.0).ln(),
                ln_gain: -0.2 * s.ln() - 1.1 * (t_k / 300.0).ln(),
            })
        },
    )
    .unwrap()
}

#[cfg(test)]
mod tests {
    use super::*;

    /// An analytic stand-in for the full model: rho ~ s^-0.9 * T^2.2,
    /// gain ~ s^-0.2 * (300/T)^1.1 (shapes like p-Si, not physics under test).
    fn analytic(t_k: f64, s: f64) -> Result<ShapePoint, ()> {
        Ok(ShapePoint {
            ln_rho: -0.9 * s.ln() + 2.2 * t_k.ln() + 0.05 * s.ln() * (t_k / 300.0).ln(),
            ln_gain: -0.2 * s.ln() - 1.1 * (t_k / 300.0).ln() * (1.0 + 0.1 * s.ln()),
        })
    }

    #[test]
    fn tabulated_shapes_match_analytic_values() {
        let c = ShapeCurves::build(
            -60.0,
            160.0,
            0.5,
            25.0,
            OffsetShape::DopingSensitivity,
            analytic,
        )
        .unwrap();
        let tr = 298.15f64;
        // (t_c, curve, expected)
        for t_c in [-60.0, -40.3, 0.0, 25.0, 85.7, 125.0, 160.0] {
            let t = t_c + 273.15;
            let cases = [
                ("ln_rho_rel", &c.ln_rho_rel, 2.2 * (t / tr).ln()),
                ("offset_shape", &c.offset_shape, 0.05 * (t / tr).ln()),
                (
                    "ln_gain_rel",
                    &c.ln_gain_rel,
                    -1.1 * ((t / 300.0).ln() - (tr / 300.0).ln()),
                ),
                (
                    "ln_gain_dlnn",
                    &c.ln_gain_dlnn,
                    -0.11 * ((t / 300.0).ln() - (tr / 300.0).ln()),
                ),
            ];
            for (name, curve, expected) in cases {
                let got = c.interp(curve, t_c);
                // Hermite on a 0.5 K grid of ln-T shapes: error ~h^4 f'''' ~ 1e-11;
                // the d/dlnN differences are exact for these (linear in ln s)
                // up to rounding; 1e-9 leaves margin.
                assert!(
                    (got - expected).abs() < 1e-9,
                    "{name} at {t_c} C: got {got}, expected {expected}"
                );
            }
        }
    }

    #[test]
    fn resistivity_offset_shape_and_slope() {
        let c = ShapeCurves::build(-40.0, 125.0, 0.5, 25.0, OffsetShape::Resistivity, analytic)
            .unwrap();
        let t = 85.0 + 273.15;
        let expected = (t / 298.15f64).powf(2.2) - 1.0;
        let got = c.interp(&c.offset_shape, 85.0);
        assert!(
            (got - expected).abs() < 1e-9,
            "got {got}, expected {expected}"
        );
        // dL/dT = 2.2 / T; central difference on the interpolant, 1e-3 K step:
        // truncation ~ 1e-6 * f''' tiny, rounding ~ 1e-16/1e-3; 1e-7 is ample.
        let s = c.slope(&c.ln_rho_rel, 85.0);
        assert!((s - 2.2 / t).abs() < 1e-7, "slope {s} vs {}", 2.2 / t);
        assert_eq!(c.t_max_c(), 125.0);
    }

    #[test]
    fn hermite_reproduces_cubics_inside_and_clamps_outside() {
        let y: Vec<f64> = (0..10).map(|k| (k as f64).powi(2)).collect();
        // Catmull-Rom slopes are exact for quadratics: interpolant exact.
        assert!((hermite(&y, 4.3) - 4.3f64.powi(2)).abs() < 1e-12);
        assert_eq!(hermite(&y, -3.0), 0.0);
        assert_eq!(hermite(&y, 42.0), 81.0);
    }
}
