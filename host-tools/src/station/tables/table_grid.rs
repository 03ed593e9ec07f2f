//! The part of a table frame that concerns the element's bow: the model's
//! output and its exact inverse with the bow included, and the 2-D
//! correction (temperature x raw code) that a bilinear grid stores.

use crate::station::bow::Bow;
use crate::station::table::{TableFrame, TablePlan};

impl TableFrame<'_> {
    /// Mid-scale nonlinearity at `t_c`, fraction of span: the part's own
    /// (fitted on a design) or else the scenario's.
    pub fn bow_mid(&self, t_c: f64) -> Option<f64> {
        self.model
            .bow_mid(t_c)
            .or_else(|| self.bow.map(|b| b.mid_at(t_c, self.t_ref_c)))
    }

    /// Largest mid-scale nonlinearity over the frame's range, ppm of span (0
    /// without one): what a table without a 2-D correction misses at least.
    pub fn nonlinearity_ppm(&self) -> f64 {
        (0..=100)
            .filter_map(|k| {
                self.bow_mid(self.t_lo_c + (self.t_hi_c - self.t_lo_c) * k as f64 / 100.0)
            })
            .fold(0.0f64, |m, b| m.max(b.abs()))
            * 1e6
    }

    /// Whether the output has a nonlinearity a 2-D correction could take out.
    pub fn has_bow(&self) -> bool {
        self.bow_mid(self.t_ref_c).is_some()
    }

    /// Raw output at `t_c` and `stimulus`, the element's bow included.
    pub fn output(&self, t_c: f64, stimulus: f64) -> f64 {
        self.at(t_c).output(stimulus)
    }

    /// The stimulus that gives `output` at `t_c` (the exact compensation).
    pub fn stimulus(&self, output: f64, t_c: f64) -> f64 {
        self.at(t_c).stimulus(output)
    }

    /// What the 2-D correction adds at `t_c` and raw code `raw` (stimulus
    /// units): the exact stimulus minus the terminal line's.
    pub fn grid_correction(&self, t_c: f64, raw: f64) -> f64 {
        self.at(t_c).grid_correction(raw * self.lsb)
    }

    /// The frame at one temperature: the model's terms there, evaluated
    /// once for any number of stimuli or outputs.
    pub fn at(&self, t_c: f64) -> FrameAt {
        FrameAt {
            t_c,
            offset: self.model.offset(t_c),
            sensitivity: self.model.sensitivity(t_c),
            bow: self.bow_mid(t_c).map(Bow::constant),
            fs: (self.fs_lo, self.fs_hi),
        }
    }

    /// Raw axis of a 2-D correction with `n_raw` nodes over the calibrated
    /// codes: integer start and step (codes), the last node at or beyond
    /// the calibrated range's end.
    pub fn raw_axis(&self, n_raw: usize) -> (i32, i32) {
        let l = self.raw_limits();
        let step = ((f64::from(l.raw_hi) - f64::from(l.raw_lo)) / (n_raw.max(2) - 1) as f64)
            .ceil()
            .max(1.0);
        (l.raw_lo, step as i32)
    }

    /// Row-major 2-D correction values of `plan` (stimulus units): one row
    /// of `n_raw` per temperature node; empty without a 2-D correction.
    pub(super) fn grid_values(
        &self,
        plan: &TablePlan,
        t_node: &dyn Fn(usize) -> f64,
        raw_start: i32,
        raw_step: i32,
    ) -> Vec<f64> {
        if plan.n_raw == 0 {
            return Vec::new();
        }
        let mut v = Vec::with_capacity(plan.n_t.max(2) * plan.n_raw);
        for i in 0..plan.n_t.max(2) {
            let at = self.at(t_node(i));
            for j in 0..plan.n_raw {
                let raw = f64::from(raw_start) + f64::from(raw_step) * j as f64;
                v.push(at.grid_correction(raw * self.lsb));
            }
        }
        v
    }
}

/// A [`TableFrame`] at one temperature ([`TableFrame::at`]): the terminal
/// line's offset and sensitivity and the element's bow there, so that a
/// row of stimuli costs no model evaluation each. Its results are those of
/// [`TableFrame::output`] and [`TableFrame::stimulus`] (which use it).
#[derive(Debug, Clone, Copy)]
pub struct FrameAt {
    t_c: f64,
    offset: f64,
    sensitivity: f64,
    bow: Option<Bow>,
    fs: (f64, f64),
}

impl FrameAt {
    /// Raw output at `stimulus`, the element's bow included.
    pub fn output(&self, stimulus: f64) -> f64 {
        let apparent = match self.bow {
            Some(b) => b.apparent(stimulus, self.t_c, self.t_c, self.fs),
            None => stimulus,
        };
        self.offset + self.sensitivity * apparent
    }

    /// The stimulus that gives `output` (the exact compensation).
    pub fn stimulus(&self, output: f64) -> f64 {
        let apparent = self.line_stimulus(output);
        match self.bow {
            Some(b) => b.true_stimulus(apparent, self.t_c, self.t_c, self.fs),
            None => apparent,
        }
    }

    /// What the 2-D correction adds at `output`: the exact stimulus minus
    /// the terminal line's.
    pub fn grid_correction(&self, output: f64) -> f64 {
        self.stimulus(output) - self.line_stimulus(output)
    }

    /// The terminal line's stimulus at `output` (the model's, bow left out).
    fn line_stimulus(&self, output: f64) -> f64 {
        (output - self.offset) / self.sensitivity
    }
}
