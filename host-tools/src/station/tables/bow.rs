//! Nonlinearity of an element's output in its stimulus ("bow"), as the
//! element's characterisation states it: terminal-based (zero at both ends of
//! the full-scale range), parabolic in the stimulus, with a mid-scale
//! deviation that changes linearly with temperature.
//!
//! A piezoresistive bridge bows because the membrane's stress is not exactly
//! linear in pressure at large deflection and the piezoresistance
//! coefficients fall with stress; both change with temperature (common
//! practice). A table image corrects a bow only with a 2-D correction over
//! temperature and raw signal: its 1-D offset and gain columns give the
//! terminal line alone.

/// The bow of an element's output.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Bow {
    /// Deviation from the terminal line at mid-scale at the reference
    /// temperature, fraction of full-scale span (positive: output above the line).
    pub mid_rel: f64,
    /// Change of the mid-scale deviation per kelvin, fraction of span per K.
    pub mid_rel_per_k: f64,
}

impl Bow {
    /// A bow of mid-scale deviation `mid_rel` at every temperature.
    pub fn constant(mid_rel: f64) -> Bow {
        Bow {
            mid_rel,
            mid_rel_per_k: 0.0,
        }
    }

    /// Mid-scale deviation at `t_c`, fraction of span.
    pub fn mid_at(&self, t_c: f64, t_ref_c: f64) -> f64 {
        self.mid_rel + self.mid_rel_per_k * (t_c - t_ref_c)
    }

    /// The stimulus the terminal line sees for `stimulus` at `t_c`, i.e.
    /// `s + 4 b fs x (1 - x)` with `x` the position in the full-scale range.
    pub fn apparent(&self, stimulus: f64, t_c: f64, t_ref_c: f64, fs: (f64, f64)) -> f64 {
        let width = fs.1 - fs.0;
        let x = (stimulus - fs.0) / width;
        stimulus + 4.0 * self.mid_at(t_c, t_ref_c) * width * x * (1.0 - x)
    }

    /// Inverse of [`Bow::apparent`]: the stimulus whose apparent value is
    /// `apparent`. With `v` the apparent position, `x` solves
    /// `-4b x^2 + (1 + 4b) x - v = 0`; the root near `v` in the form
    /// `2v / ((1 + 4b) + sqrt((1 + 4b)^2 - 16 b v))` has no cancellation as
    /// b goes to 0 (Press et al., Numerical Recipes, 2nd ed. 1992, eq. 5.6.4).
    pub fn true_stimulus(&self, apparent: f64, t_c: f64, t_ref_c: f64, fs: (f64, f64)) -> f64 {
        let width = fs.1 - fs.0;
        let v = (apparent - fs.0) / width;
        let a = 1.0 + 4.0 * self.mid_at(t_c, t_ref_c);
        let disc = (a * a - 16.0 * self.mid_at(t_c, t_ref_c) * v).max(0.0);
        fs.0 + width * 2.0 * v / (a + disc.sqrt())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn bow_is_terminal_based_and_inverts() {
        let b = Bow {
            mid_rel: 8e-4,
            mid_rel_per_k: -4e-6,
        };
        // (fs range, t_c): ends are on the terminal line; mid-scale is off by
        // b(t) * span exactly; the inverse recovers the stimulus.
        for (fs, t_c) in [
            ((0.0, 10.0), 25.0),
            ((-200.0, 200.0), 85.0),
            ((0.0, 10.0), -20.0),
        ] {
            let width = fs.1 - fs.0;
            for s in [fs.0, fs.1] {
                let got = b.apparent(s, t_c, 25.0, fs);
                // Only rounding: 1e-12 of the span.
                assert!(
                    (got - s).abs() < 1e-12 * width,
                    "end {s} at {t_c}: got {got}"
                );
            }
            let mid = 0.5 * (fs.0 + fs.1);
            let dev = b.apparent(mid, t_c, 25.0, fs) - mid;
            let expected = b.mid_at(t_c, 25.0) * width;
            assert!(
                (dev - expected).abs() < 1e-12 * width,
                "mid at {t_c}: got {dev}, expected {expected}"
            );
            for k in 0..=20 {
                let s = fs.0 + width * k as f64 / 20.0;
                let back = b.true_stimulus(b.apparent(s, t_c, 25.0, fs), t_c, 25.0, fs);
                // Closed-form root: rounding only, 1e-12 of the span.
                assert!(
                    (back - s).abs() < 1e-12 * width,
                    "s {s} at {t_c}: got {back}"
                );
            }
        }
        // The check can fail: a bow of 0.08 % moves mid-scale by 0.8 % of 10 bar.
        assert!((b.apparent(5.0, 25.0, 25.0, (0.0, 10.0)) - 5.0).abs() > 1e-3);
    }
}
