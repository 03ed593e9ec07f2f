//! Analytic interpolation-error bound of a table plan, to report beside the
//! dense sampling: the remainder formulas of [`crate::station::remainder`] per node
//! interval, with derivative maxima of the fitted part model, carried to the
//! reading and multiplied by [`SAFETY_FACTOR`].
//!
//! Reading = (raw - offset(T)) * gain(T), T = thermometer(signal). To first
//! order a column error e_off (codes), e_gain (stimulus per code) and a
//! thermometer error e_T (K) move the reading by
//! `|gain| e_off + |raw - offset| e_gain + |d stimulus / dT| e_T`; each term
//! takes the bound of the interval the temperature lies in (or, within the
//! thermometer's own bound of a node, the worse neighbour), and the largest
//! sum over a fine temperature grid is the bound. A signal taken in whole ADC
//! codes adds half a code of thermometer input. A 2-D correction adds the
//! tensor-product linear remainder h_t^2 max|g_tt| / 8 + h_r^2 max|g_rr| / 8
//! (linear interpolation along each axis in turn; common practice); a bow
//! that a 1-D table leaves uncorrected enters whole.
//!
//! The columns' remainders need f' of each column on a fine grid (the
//! kernels sum its variation) and, for the smooth-case cubic term, the
//! fourth derivative, by central differences on the shapes' own 0.5 K knot
//! spacing. The thermometer map T(signal) is the inverse of the fitted
//! signal(T): its slope is 1/signal'(T) and its fourth derivative comes from
//! signal(T)'s by series reversion, so no root finding enters a difference
//! quotient.

use crate::station::curves::ShapeCurves;
use crate::station::remainder::{Column, central_differences, inverse_derivatives};
use crate::station::table::{AxisKind, SignalUnit, TableFrame, TablePlan};

/// Factor on the whole bound. It covers what the first-order composition and
/// the sampled kernels leave out: the kernel maximum between its 64 sample
/// positions per interval (the kernels are Lipschitz with constant h, so the
/// sampled maximum is low by at most 1/64 of h times the variation), f'
/// variation inside a cell counted as its end-to-end change (exact where
/// f'' keeps its sign over the cell), the product e_off * e_gain and the
/// e_T^2 term of the composition (relative size e/value, < 1e-3), and f32
/// storage of node values and axes (2^-24 relative). 10 % is several times
/// their sum (common practice for a stated margin).
pub const SAFETY_FACTOR: f64 = 1.1;

/// Fewest fine cells over a column's node span.
const MIN_CELLS: usize = 2000;

/// Step of the first-derivative quotients, K: 1e-3 K keeps truncation
/// (~1e-7 relative) and rounding (~1e-13 relative) far below the f'
/// variation the kernels sum (as [`crate::station::curves::ShapeCurves::slope`]).
const SLOPE_STEP_K: f64 = 1e-3;

/// One column of the table, parametrised by temperature: node argument
/// `x(T)` and value `y(T)`; `t_of_x` inverts `x`; `d4(T)` is the fourth
/// derivative dy^4/dx^4 of the smooth source at T.
struct Param<'f> {
    x: &'f dyn Fn(f64) -> f64,
    y: &'f dyn Fn(f64) -> f64,
    t_of_x: &'f dyn Fn(f64) -> f64,
    d4: &'f dyn Fn(f64) -> f64,
}

/// The [`Column`] of a function on nodes `x0 + k h`, k < n.
fn column(p: &Param<'_>, x0: f64, h: f64, n: usize) -> Column {
    let slope = |t: f64| {
        let e = SLOPE_STEP_K;
        ((p.y)(t + e) - (p.y)(t - e)) / ((p.x)(t + e) - (p.x)(t - e))
    };
    let node_t: Vec<f64> = (0..n).map(|k| (p.t_of_x)(x0 + h * k as f64)).collect();
    let (ta, tb) = (node_t[0].min(node_t[n - 1]), node_t[0].max(node_t[n - 1]));
    let cells = MIN_CELLS.max(8 * n);
    let dt = (tb - ta) / cells as f64;
    let mut curvature = Vec::with_capacity(cells);
    let mut m4 = vec![0.0f64; n - 1];
    let mut prev = (ta, (p.x)(ta), slope(ta));
    for j in 1..=cells {
        let t = ta + dt * j as f64;
        let (x, fp) = ((p.x)(t), slope(t));
        curvature.push((prev.1, x, (fp - prev.2).abs()));
        // The smooth source's fourth derivative, charged to every interval
        // the cell touches.
        let d4 = (p.d4)(0.5 * (prev.0 + t)).abs();
        let (lo, hi) = ((prev.1.min(x) - x0) / h, (prev.1.max(x) - x0) / h);
        let first = lo.floor().clamp(0.0, (n - 2) as f64) as usize;
        let last = hi.floor().clamp(0.0, (n - 2) as f64) as usize;
        for v in &mut m4[first..=last] {
            *v = v.max(d4);
        }
        prev = (t, x, fp);
    }
    Column {
        x0,
        h,
        values: node_t.iter().map(|&t| (p.y)(t)).collect(),
        slopes: node_t.iter().map(|&t| slope(t)).collect(),
        curvature,
        m4,
    }
}

/// Remainder bounds per node interval of the offset and gain columns.
struct ChannelBounds {
    off: Vec<f64>,
    gain: Vec<f64>,
}

impl ChannelBounds {
    /// Both columns over nodes `x0 + k h`, k < n, with node argument `x(T)`
    /// (inverted by `t_of_x`) and the given fourth derivatives of each.
    #[allow(clippy::too_many_arguments)]
    fn new(
        frame: &TableFrame<'_>,
        plan: &TablePlan,
        x: &dyn Fn(f64) -> f64,
        t_of_x: &dyn Fn(f64) -> f64,
        d4: [&dyn Fn(f64) -> f64; 2],
        x0: f64,
        h: f64,
        n: usize,
    ) -> ChannelBounds {
        let offset = |t: f64| frame.offset_codes(t);
        let gain = |t: f64| frame.gain_per_code(t);
        let bounds = |y: &dyn Fn(f64) -> f64, d4: &dyn Fn(f64) -> f64| {
            column(&Param { x, y, t_of_x, d4 }, x0, h, n).interval_bounds(plan.interpolation)
        };
        ChannelBounds {
            off: bounds(&offset, d4[0]),
            gain: bounds(&gain, d4[1]),
        }
    }

    /// Reading error (stimulus units) at `t_c` from the columns, read
    /// anywhere in node coordinates `lo..=hi`, worst of the calibrated raw
    /// range's ends.
    fn reading_error(&self, frame: &TableFrame<'_>, t_c: f64, lo: f64, hi: f64) -> f64 {
        let limits = frame.raw_limits();
        let (r_lo, r_hi) = (f64::from(limits.raw_lo), f64::from(limits.raw_hi));
        let o = frame.offset_codes(t_c);
        worst_in(&self.off, lo, hi) * frame.gain_per_code(t_c).abs()
            + worst_in(&self.gain, lo, hi) * lever_codes(r_lo, r_hi, o)
    }
}

/// How far a raw code in `r_lo..=r_hi` can lie from the offset `o` (codes):
/// a gain error moves the reading in proportion to it.
fn lever_codes(r_lo: f64, r_hi: f64, o: f64) -> f64 {
    (r_lo - o).abs().max((r_hi - o).abs())
}

/// Largest of the interval bounds `e` over the intervals that node
/// coordinates `lo..=hi` touch (clamped to the table).
fn worst_in(e: &[f64], lo: f64, hi: f64) -> f64 {
    let k = e.len() - 1;
    let first = lo.floor().clamp(0.0, k as f64) as usize;
    let last = hi.floor().clamp(0.0, k as f64) as usize;
    e[first..=last.max(first)]
        .iter()
        .fold(0.0, |x: f64, &y| x.max(y))
}

/// Half a code of temperature-signal input when the image takes ADC codes,
/// in ohm; 0 for an image that takes ohm.
fn input_rounding_ohm(frame: &TableFrame<'_>) -> f64 {
    match frame.signal_unit {
        SignalUnit::Ohm => 0.0,
        SignalUnit::AdcCode => 0.5 * frame.signal_lsb,
    }
}

/// The bound in ppm of span.
pub fn interpolation_bound_ppm(frame: &TableFrame<'_>, plan: &TablePlan) -> f64 {
    if plan.axis == AxisKind::Signal {
        return signal_axis_bound_ppm(frame, plan);
    }
    let m = frame.model;
    // Fourth differences on the shapes' own knot spacing: they see the
    // smooth curve where it is smooth and blow up across the full model's
    // slope kinks, where the kernel bound takes over (see remainder.rs).
    let step = m.curves().step_k;
    let centre = |t: f64| difference_centre(m.curves(), t);
    let [t0, h_t, s0, h_s] = frame.node_axes(plan);
    let (n_t, n_sig) = (plan.n_t.max(2), plan.n_sig.max(2));
    let id = |t: f64| t;
    let channels = ChannelBounds::new(
        frame,
        plan,
        &id,
        &id,
        [
            &|t| central_differences(&|x| frame.offset_codes(x), centre(t), step)[3],
            &|t| central_differences(&|x| frame.gain_per_code(x), centre(t), step)[3],
        ],
        t0,
        h_t,
        n_t,
    );
    let therm = column(
        &Param {
            x: &|t| m.signal(t),
            y: &id,
            t_of_x: &|s| m.temperature(s),
            d4: &|t| inverse_derivatives(central_differences(&|x| m.signal(x), centre(t), step))[2],
        },
        s0,
        h_s,
        n_sig,
    );
    let e_therm = therm.interval_bounds(plan.interpolation);
    let axes = [t0, h_t, s0, h_s];
    let worst = max_over_range(frame, range_samples(n_t), |t| {
        temperature_axis_error(frame, &channels, &e_therm, axes, t)
    });
    bound_ppm(frame, worst + correction_bound(frame, plan))
}

/// First-order reading error at `t_c` (stimulus units) of a plan over
/// temperature with node axes `[t0, h_t, s0, h_s]`: the columns are read at
/// the thermometer's output, within the thermometer's largest bound of
/// `t_c` (the worse interval if that straddles a node), and the
/// thermometer's own error at `t_c` (its interval's bound plus the input
/// rounding) moves the reading along the drift slope.
fn temperature_axis_error(
    frame: &TableFrame<'_>,
    channels: &ChannelBounds,
    e_therm: &[f64],
    [t0, h_t, s0, h_s]: [f64; 4],
    t_c: f64,
) -> f64 {
    let m = frame.model;
    let e_t_max = e_therm.iter().fold(0.0, |x: f64, &y| x.max(y));
    let (lo, hi) = ((t_c - e_t_max - t0) / h_t, (t_c + e_t_max - t0) / h_t);
    let columns = channels.reading_error(frame, t_c, lo, hi);
    let s = (m.signal(t_c) - s0) / h_s;
    let e_t = worst_in(e_therm, s, s) + input_rounding_ohm(frame) / m.signal_slope(t_c).abs();
    columns + e_t * drift_slope(frame, t_c)
}

/// A reading error in stimulus units as the bound: times [`SAFETY_FACTOR`],
/// in ppm of the frame's full scale.
fn bound_ppm(frame: &TableFrame<'_>, error: f64) -> f64 {
    SAFETY_FACTOR * error / (frame.fs_hi - frame.fs_lo) * 1e6
}

/// Where fourth differences on the curves' own knot spacing are taken for
/// temperature `t_c`: clamped two steps inside the grid, so that the
/// five-point stencil reads only tabulated values.
fn difference_centre(curves: &ShapeCurves, t_c: f64) -> f64 {
    let step = curves.step_k;
    t_c.clamp(curves.t0_c + 2.0 * step, curves.t_max_c() - 2.0 * step)
}

/// Temperatures the bound is maximised over for a table of `nodes` along
/// its look-up axis: at least [`MIN_CELLS`], and 4 per node past that.
fn range_samples(nodes: usize) -> usize {
    MIN_CELLS.max(4 * nodes)
}

/// Largest `f(t)` over `samples + 1` evenly spaced temperatures of the
/// frame's range, ends included.
fn max_over_range(frame: &TableFrame<'_>, samples: usize, f: impl Fn(f64) -> f64) -> f64 {
    let dt = (frame.t_hi_c - frame.t_lo_c) / samples as f64;
    (0..=samples)
        .map(|k| f(frame.t_lo_c + dt * k as f64))
        .fold(0.0, f64::max)
}

/// The bound of a plan over the signal axis ([`AxisKind::Signal`]): the
/// offset and gain columns are functions of the signal, read where the
/// signal is, so no thermometer error enters them; only half a code of
/// input rounding (signal in ADC codes) moves the look-up, which is counted
/// both in the columns' window and, through the drift slope, as the
/// temperature error it amounts to.
///
/// The smooth-case cubic term needs the columns' fourth derivative in the
/// signal, which only differencing through the inverted thermometer would
/// give; it is left infinite, so the kernel bound (valid without it)
/// decides for cubic plans too.
fn signal_axis_bound_ppm(frame: &TableFrame<'_>, plan: &TablePlan) -> f64 {
    let m = frame.model;
    let [_, _, s0, h_s] = frame.node_axes(plan);
    let n = plan.nodes_sig();
    let unknown = |_: f64| f64::INFINITY;
    let channels = ChannelBounds::new(
        frame,
        plan,
        &|t| m.signal(t),
        &|s| m.temperature(s),
        [&unknown, &unknown],
        s0,
        h_s,
        n,
    );
    let worst = max_over_range(frame, range_samples(n), |t| {
        signal_axis_error(frame, &channels, s0, h_s, t)
    });
    bound_ppm(frame, worst + correction_bound(frame, plan))
}

/// First-order reading error at `t_c` (stimulus units) of a plan over the
/// signal axis with signal nodes `s0 + k h_s`: the columns are read within
/// the input rounding of the signal, and the rounding moves the reading
/// along the drift slope as the temperature error it amounts to.
fn signal_axis_error(
    frame: &TableFrame<'_>,
    channels: &ChannelBounds,
    s0: f64,
    h_s: f64,
    t_c: f64,
) -> f64 {
    let m = frame.model;
    let rounding_ohm = input_rounding_ohm(frame);
    let s = m.signal(t_c);
    let (lo, hi) = ((s - rounding_ohm - s0) / h_s, (s + rounding_ohm - s0) / h_s);
    let columns = channels.reading_error(frame, t_c, lo, hi);
    let e_t = rounding_ohm / m.signal_slope(t_c).abs();
    columns + e_t * drift_slope(frame, t_c)
}

/// Reading error per kelvin of temperature error at a fixed raw output at
/// `t_c` (stimulus units per K), worst of the full-scale ends: the same
/// quotient as the budget's drift slope.
fn drift_slope(frame: &TableFrame<'_>, t_c: f64) -> f64 {
    let h = 0.01;
    let (at, up, down) = (frame.at(t_c), frame.at(t_c + h), frame.at(t_c - h));
    [frame.fs_lo, frame.fs_hi]
        .iter()
        .map(|&s| {
            let y = at.output(s);
            ((up.stimulus(y) - down.stimulus(y)) / (2.0 * h)).abs()
        })
        .fold(0.0, f64::max)
}

/// Samples per axis of the 2-D correction when its derivatives are bounded.
const GRID_SAMPLES: usize = 80;

/// What the 2-D correction (or its absence) adds, stimulus units: the
/// bilinear remainder for a plan with one, the whole bow for one without.
fn correction_bound(frame: &TableFrame<'_>, plan: &TablePlan) -> f64 {
    if !frame.has_bow() {
        return 0.0;
    }
    let g = grid_extent(frame);
    if plan.n_raw == 0 {
        return g.g_max;
    }
    let (_, step_codes) = frame.raw_axis(plan.n_raw);
    bilinear_remainder(
        row_gap_k(frame, plan),
        g.g_tt,
        f64::from(step_codes),
        g.g_rr,
    )
}

/// Largest |g|, |d2g/dt2| and |d2g/draw2| of the 2-D correction g(t, raw)
/// (stimulus units, per K^2 and per code^2).
#[derive(Debug, Clone, Copy, PartialEq)]
struct GridExtent {
    g_max: f64,
    g_tt: f64,
    g_rr: f64,
}

/// [`GridExtent`] over the frame's temperature range and calibrated raw
/// codes, on [`GRID_SAMPLES`] steps per axis: central second differences,
/// one step in from the edges.
fn grid_extent(frame: &TableFrame<'_>) -> GridExtent {
    let limits = frame.raw_limits();
    extent_of(
        &|t, r| frame.grid_correction(t, r),
        (frame.t_lo_c, frame.t_hi_c),
        (f64::from(limits.raw_lo), f64::from(limits.raw_hi)),
    )
}

/// [`GridExtent`] of any `g(t, r)` over `t_lo..=t_hi` x `r_lo..=r_hi`.
fn extent_of(
    g: &dyn Fn(f64, f64) -> f64,
    (t_lo, t_hi): (f64, f64),
    (r_lo, r_hi): (f64, f64),
) -> GridExtent {
    let n = GRID_SAMPLES;
    let (dt, dr) = ((t_hi - t_lo) / n as f64, (r_hi - r_lo) / n as f64);
    let mut e = GridExtent {
        g_max: 0.0,
        g_tt: 0.0,
        g_rr: 0.0,
    };
    for i in 0..=n {
        let t = t_lo + dt * i as f64;
        for j in 0..=n {
            let r = r_lo + dr * j as f64;
            e.g_max = e.g_max.max(g(t, r).abs());
            let tc = t.clamp(t_lo + dt, t_hi - dt);
            let rc = r.clamp(r_lo + dr, r_hi - dr);
            let tt = (g(tc + dt, r) - 2.0 * g(tc, r) + g(tc - dt, r)) / (dt * dt);
            let rr = (g(t, rc + dr) - 2.0 * g(t, rc) + g(t, rc - dr)) / (dr * dr);
            e.g_tt = e.g_tt.max(tt.abs());
            e.g_rr = e.g_rr.max(rr.abs());
        }
    }
    e
}

/// Widest temperature gap (K) between neighbouring rows of a plan's 2-D
/// correction: even over temperature; over the signal axis the rows sit at
/// the signal nodes, uneven in temperature.
fn row_gap_k(frame: &TableFrame<'_>, plan: &TablePlan) -> f64 {
    match plan.axis {
        AxisKind::Temperature => (frame.t_hi_c - frame.t_lo_c) / (plan.n_t.max(2) - 1) as f64,
        AxisKind::Signal => {
            let [_, _, s0, h_s] = frame.node_axes(plan);
            let t_at = |k: usize| frame.model.temperature(s0 + h_s * k as f64);
            (1..plan.n_t.max(2))
                .map(|k| (t_at(k) - t_at(k - 1)).abs())
                .fold(0.0, f64::max)
        }
    }
}

/// Tensor-product linear remainder: linear interpolation along each axis in
/// turn, h^2 max|f''| / 8 per axis (common practice).
fn bilinear_remainder(h_t: f64, g_tt: f64, h_r: f64, g_rr: f64) -> f64 {
    h_t * h_t * g_tt / 8.0 + h_r * h_r * g_rr / 8.0
}

#[cfg(test)]
pub(super) mod tests {
    use super::*;
    use crate::station::bow::Bow;
    use crate::station::calibrate::calibrate_part;
    use crate::station::chamber::ChamberRow;
    use crate::station::image_eval::{evaluate, linspace};
    use crate::station::model_shapes::shapes_for;
    use crate::station::part_file::PartFile;
    use crate::station::part_model::PartModel;
    use crate::station::pipeline::dense_counts;
    use crate::station::scenario::Scenario;
    use crate::station::simulate::{Plan, draw_parts, measure};
    use crate::station::table::{AxisKind, InterpKind, NumFormat, SignalUnit};

    /// Parts of `scenario` calibrated at its usual three chamber temperatures.
    pub(in super::super) fn parts(scenario: &Scenario, count: usize, seed: u64) -> Vec<PartFile> {
        let curves = shapes_for(scenario).unwrap();
        let truths = draw_parts(scenario, count, seed);
        let plan = Plan {
            temps_c: scenario.cal_temps_c.clone(),
            stimuli: scenario.stimuli.clone(),
        };
        let rows = measure(scenario, &truths, &plan, seed).unwrap();
        truths
            .iter()
            .map(|t| {
                let refs: Vec<&ChamberRow> = rows.iter().filter(|r| r.serial == t.serial).collect();
                calibrate_part(scenario, &curves, &t.serial, &refs)
            })
            .collect()
    }

    /// A frame over the first well-logger part, for the helpers that read
    /// only its range, units and curves.
    fn with_frame(f: impl FnOnce(&TableFrame<'_>)) {
        with_part_frame(&parts(&Scenario::well_logger(), 1, 1).remove(0), f);
    }

    /// The same over `part`.
    fn with_part_frame(part: &PartFile, f: impl FnOnce(&TableFrame<'_>)) {
        let curves = shapes_for(&part.scenario).unwrap();
        let model = PartModel {
            curves: &curves,
            params: part.params.unwrap(),
        };
        f(&TableFrame::new(part, model).unwrap());
    }

    #[test]
    fn frame_at_one_temperature_is_the_model_there() {
        let plain = parts(&Scenario::well_logger(), 1, 1).remove(0);
        let mut bowed = plain.clone();
        bowed.scenario.bow = Some(Bow {
            mid_rel: 2e-3,
            mid_rel_per_k: 1e-5,
        });
        for part in [plain, bowed] {
            with_part_frame(&part, |frame| {
                let m = frame.model;
                for t in [frame.t_lo_c, 25.0, frame.t_hi_c] {
                    let at = frame.at(t);
                    let bow = frame.bow.map(|b| Bow::constant(b.mid_at(t, frame.t_ref_c)));
                    for s in [frame.fs_lo, 0.3 * frame.fs_hi, frame.fs_hi] {
                        // The model's terminal line at the bowed (apparent)
                        // stimulus, composed here from its parts: the same
                        // operations, so bit for bit.
                        let apparent =
                            bow.map_or(s, |b| b.apparent(s, t, t, (frame.fs_lo, frame.fs_hi)));
                        let y = at.output(s);
                        assert_eq!(y.to_bits(), m.output(t, apparent).to_bits(), "t {t}, s {s}");
                        // The exact inverse, to rounding (1e-9 of full
                        // scale: a few hundred ulps of a difference of
                        // outputs).
                        assert!(
                            (at.stimulus(y) - s).abs() <= 1e-9 * frame.fs_hi,
                            "t {t}, s {s}"
                        );
                        // The 2-D correction is what the bow adds to the
                        // terminal line's stimulus: 0 without one, and
                        // with one inside the span (a terminal-based bow
                        // is 0 at its ends).
                        let line = m.stimulus(y, t);
                        let correction = at.grid_correction(y);
                        assert_eq!(correction.to_bits(), (at.stimulus(y) - line).to_bits());
                        let inside = s > frame.fs_lo && s < frame.fs_hi;
                        assert_eq!(correction != 0.0, bow.is_some() && inside, "t {t}, s {s}");
                    }
                }
            });
        }
    }

    #[test]
    fn nonlinearity_is_the_largest_bow_over_the_range() {
        // A bow linear in temperature is largest in magnitude at an end of
        // the range, and both ends are sampled: the figure is that end's
        // |mid-scale deviation| in ppm, to rounding (1e-9 relative).
        let mut part = parts(&Scenario::well_logger(), 1, 1).remove(0);
        part.scenario.bow = Some(Bow {
            mid_rel: 1e-3,
            mid_rel_per_k: 2e-5,
        });
        with_part_frame(&part, |frame| {
            let b = frame.bow.unwrap();
            let want = [frame.t_lo_c, frame.t_hi_c]
                .map(|t| b.mid_at(t, frame.t_ref_c).abs())
                .into_iter()
                .fold(0.0, f64::max)
                * 1e6;
            let got = frame.nonlinearity_ppm();
            assert!((got - want).abs() <= 1e-9 * want, "{got} ppm, want {want}");
            // And a frame without a bow has none.
            let mut plain = *frame;
            plain.bow = None;
            assert_eq!(plain.nonlinearity_ppm(), 0.0);
        });
    }

    #[test]
    fn raw_axis_takes_the_smallest_step_that_reaches_the_range_end() {
        with_frame(|frame| {
            let l = frame.raw_limits();
            let (lo, hi) = (i64::from(l.raw_lo), i64::from(l.raw_hi));
            for n in [2usize, 3, 7, 40] {
                let (start, step) = frame.raw_axis(n);
                let (start, step) = (i64::from(start), i64::from(step));
                let gaps = n as i64 - 1;
                assert_eq!(start, lo, "{n} nodes");
                // The last node at or beyond the calibrated end, and one
                // code less per step would fall short of it.
                assert!(start + step * gaps >= hi, "{n} nodes: step {step}");
                assert!(start + (step - 1) * gaps < hi, "{n} nodes: step {step}");
            }
        });
    }

    #[test]
    fn worst_in_takes_the_touched_intervals_clamped_to_the_table() {
        // Interval bounds of a 5-node table; node coordinates pick them by
        // their floor: 0.5 lies in interval 0, 1.2 in 1, 2.9 in 2.
        let e = [1.0, 5.0, 2.0, 7.0];
        assert_eq!(worst_in(&e, 0.5, 0.5), 1.0);
        assert_eq!(worst_in(&e, 0.5, 1.2), 5.0);
        assert_eq!(worst_in(&e, 1.5, 2.9), 5.0);
        assert_eq!(worst_in(&e, 2.0, 2.0), 2.0);
        assert_eq!(worst_in(&e, 2.5, 3.5), 7.0);
        // Outside the table: the end intervals.
        assert_eq!(worst_in(&e, -3.0, -1.0), 1.0);
        assert_eq!(worst_in(&e, 10.0, 12.0), 7.0);
        assert_eq!(worst_in(&e, -1.0, 12.0), 7.0);
        // A window given high end first reads the low end's interval.
        assert_eq!(worst_in(&e, 2.5, 0.5), 2.0);
    }

    #[test]
    fn column_of_a_parabola_by_hand() {
        // y = t^2 read over x = 2 t (t = x / 2). Node temperatures are
        // k u, u = 0.9765625 K (= 1000 / 1024), so every cell end below is a
        // binary fraction and exact: cells max(2000, 8 * 5) = 2000 over
        // 4 u, dt = 2^-9 K, and the last cell ends exactly on the last
        // node. dy/dx = t (central quotients of a quadratic are exact; 1e-9
        // allows their rounding); each cell carries |d(dy/dx)| = dt. d4(t)
        // = t is charged to every interval a cell touches: interval k's
        // largest is the mid-point of the cell that ends on its upper node,
        // (k + 1) u - dt / 2 (that cell touches interval k + 1 too; the
        // next starts on the node and touches only k + 1).
        let u = 0.9765625;
        let dt = 4.0 * u / 2000.0;
        assert_eq!(dt, 2f64.powi(-9));
        let col = column(
            &Param {
                x: &|t| 2.0 * t,
                y: &|t| t * t,
                t_of_x: &|x| 0.5 * x,
                d4: &|t| t,
            },
            0.0,
            2.0 * u,
            5,
        );
        assert_eq!((col.x0, col.h), (0.0, 2.0 * u));
        let node = |k: usize| k as f64 * u;
        let want: Vec<f64> = (0..5).map(|k| node(k) * node(k)).collect();
        assert_eq!(col.values, want);
        for (k, s) in col.slopes.iter().enumerate() {
            assert!((s - node(k)).abs() < 1e-9, "slope {k}: {s}");
        }
        assert_eq!(col.curvature.len(), 2000);
        for (j, &(a, b, v)) in col.curvature.iter().enumerate() {
            let x_end = 2.0 * dt * (j + 1) as f64;
            assert_eq!((a, b), (x_end - 2.0 * dt, x_end), "cell {j}");
            assert!((v - dt).abs() < 1e-9, "cell {j}: {v}");
        }
        assert_eq!(col.m4.len(), 4);
        for (k, m) in col.m4.iter().enumerate() {
            let want = node(k + 1) - 0.5 * dt;
            assert!((m - want).abs() < 1e-12, "m4[{k}] = {m}, want {want}");
        }
    }

    #[test]
    fn column_over_a_falling_argument() {
        // x = -2 t (a signal that falls with temperature), nodes x = -10,
        // -8, ..., -2: node temperatures 5, 4, 3, 2, 1, and dy/dx = -1.5 t^2
        // for y = t^3 (1e-5: the central quotient's truncation, 1e-6 K^2
        // times the third derivative 6, over dx/dt = -2). The cells cover
        // 1..5 K, dt = 2e-3 K. Node coordinate (x + 10) / 2 = 5 - t, so
        // interval k spans 4 - k..5 - k K and d4(t) = t peaks at its upper
        // end: 5 - k, +/- dt / 2 for the cell straddling that node (the
        // cell ends are rounded here; 1e-9 more).
        let col = column(
            &Param {
                x: &|t| -2.0 * t,
                y: &|t| t * t * t,
                t_of_x: &|x| -0.5 * x,
                d4: &|t| t,
            },
            -10.0,
            2.0,
            5,
        );
        assert_eq!(col.values, [125.0, 64.0, 27.0, 8.0, 1.0]);
        for (s, t) in col.slopes.iter().zip([5.0, 4.0, 3.0, 2.0, 1.0]) {
            assert!((s + 1.5 * t * t).abs() < 1e-5, "slope at {t} K: {s}");
        }
        let dt = 4.0 / 2000.0;
        let (first, last) = (col.curvature[0], col.curvature[1999]);
        assert!((first.0 + 2.0).abs() < 1e-12 && (first.1 + 2.0 + 2.0 * dt).abs() < 1e-12);
        assert!((last.1 + 10.0).abs() < 1e-9);
        // Total variation of dy/dx over 1..5 K: 1.5 * (25 - 1) = 36 (1e-6:
        // a sum of 2000 rounded terms).
        let total: f64 = col.curvature.iter().map(|c| c.2).sum();
        assert!((total - 36.0).abs() < 1e-6, "{total}");
        for (k, m) in col.m4.iter().enumerate() {
            let want = 5.0 - k as f64;
            assert!(
                (m - want).abs() <= 0.5 * dt + 1e-9,
                "m4[{k}] = {m}, want {want}"
            );
        }
        // Past 250 nodes the fine cells grow with the table: 8 per node.
        let many = column(
            &Param {
                x: &|t| t,
                y: &|t| t,
                t_of_x: &|x| x,
                d4: &|_| 0.0,
            },
            0.0,
            0.1,
            301,
        );
        assert_eq!(many.curvature.len(), 8 * 301);
        assert_eq!(many.m4.len(), 300);
    }

    #[test]
    fn reading_error_weights_each_column_by_its_lever() {
        // Offset error in codes moves the reading by |gain| per code; gain
        // error (stimulus per code) by the raw code's distance from the
        // offset, the farther calibrated end. Interval bounds set by hand,
        // one column at a time, read in interval 1 (node coordinates
        // 1.2..1.7) where they are 3 and 5; the other intervals hold 100
        // so that a wrong window shows.
        with_frame(|frame| {
            let t = 40.0;
            let limits = frame.raw_limits();
            let o = frame.offset_codes(t);
            let lever = [limits.raw_lo, limits.raw_hi]
                .map(|r| (f64::from(r) - o).abs())
                .into_iter()
                .fold(0.0, f64::max);
            assert!(lever > 0.0 && o.abs() > 1.0, "lever {lever}, offset {o}");
            let only_off = ChannelBounds {
                off: vec![100.0, 3.0, 100.0],
                gain: vec![0.0; 3],
            };
            let got = only_off.reading_error(frame, t, 1.2, 1.7);
            let want = 3.0 * frame.gain_per_code(t).abs();
            assert!((got - want).abs() <= 1e-12 * want, "{got} vs {want}");
            let only_gain = ChannelBounds {
                off: vec![0.0; 3],
                gain: vec![100.0, 5.0, 100.0],
            };
            let got = only_gain.reading_error(frame, t, 1.2, 1.7);
            assert!(
                (got - 5.0 * lever).abs() <= 1e-12 * lever,
                "{got} vs {}",
                5.0 * lever
            );
        });
    }

    /// Interval bounds that differ from each neighbour in both directions,
    /// so that reading a wrong interval, or one of two, changes the sum.
    /// The first is the largest, so that a window reaching down to the
    /// table's start shows too.
    const ZIGZAG: [f64; 12] = [
        50.0, 1.0, 7.0, 2.0, 9.0, 3.0, 8.0, 4.0, 6.0, 10.0, 11.0, 12.0,
    ];

    fn relative_eq(got: f64, want: f64) -> bool {
        // The same arithmetic in another order: rounding only.
        (got - want).abs() <= 1e-12 * want.abs()
    }

    #[test]
    fn temperature_axis_error_reads_the_right_intervals() {
        // Axes set by hand: temperature nodes every 10 K from the range's
        // start, signal nodes splitting the signal's range in ten.
        with_frame(|frame| {
            let m = frame.model;
            let t0 = frame.t_lo_c;
            let s0 = m.signal(t0);
            let h_s = (m.signal(frame.t_hi_c) - s0) / 10.0;
            let axes = [t0, 10.0, s0, h_s];
            let zeros = vec![0.0; 12];
            let off_only = ChannelBounds {
                off: ZIGZAG.to_vec(),
                gain: zeros.clone(),
            };
            let g = |t: f64| frame.gain_per_code(t).abs();
            // A point look-up (no thermometer error): 2.5 node steps in,
            // interval 2.
            let t = t0 + 25.0;
            let got = temperature_axis_error(frame, &off_only, &zeros, axes, t);
            assert!(relative_eq(got, 7.0 * g(t)), "{got}");
            // Thermometer bound 0.2 K everywhere: the columns' window is
            // t +/- 0.2 K, straddling node 3 (intervals 2 and 3: 7 > 2) and
            // node 4 (intervals 3 and 4: 2 < 9); the thermometer's error
            // moves the reading by 0.2 K of drift.
            let therm = vec![0.2; 10];
            for (t, worse) in [(t0 + 29.9, 7.0), (t0 + 39.9, 9.0)] {
                let got = temperature_axis_error(frame, &off_only, &therm, axes, t);
                let want = worse * g(t) + 0.2 * drift_slope(frame, t);
                assert!(relative_eq(got, want), "{t} C: {got} vs {want}");
            }
            // The gain column, by its lever (the farther raw end).
            let gain_only = ChannelBounds {
                off: zeros.clone(),
                gain: ZIGZAG.to_vec(),
            };
            let t = t0 + 45.0;
            let limits = frame.raw_limits();
            let o = frame.offset_codes(t);
            let lever = (f64::from(limits.raw_lo) - o)
                .abs()
                .max((f64::from(limits.raw_hi) - o).abs());
            let got = temperature_axis_error(frame, &gain_only, &zeros, axes, t);
            assert!(relative_eq(got, 9.0 * lever), "{got}");
            // The thermometer's own interval, found by the signal, and in
            // ADC codes half a code of input on top.
            let none = ChannelBounds {
                off: zeros.clone(),
                gain: zeros.clone(),
            };
            let therm: Vec<f64> = ZIGZAG[..10].iter().map(|v| 0.01 * v).collect();
            let codes = frame.with_signal_unit(SignalUnit::AdcCode);
            for t in [t0 + 3.0, t0 + 52.0, frame.t_hi_c - 4.0] {
                let i = ((m.signal(t) - s0) / h_s).floor() as usize;
                let got = temperature_axis_error(frame, &none, &therm, axes, t);
                let want = therm[i] * drift_slope(frame, t);
                assert!(relative_eq(got, want), "{t} C: {got} vs {want}");
                let rounding_k = 0.5 * codes.signal_lsb / m.signal_slope(t).abs();
                let got = temperature_axis_error(&codes, &none, &therm, axes, t);
                let want = (therm[i] + rounding_k) * drift_slope(frame, t);
                assert!(relative_eq(got, want), "{t} C, codes: {got} vs {want}");
            }
        });
    }

    #[test]
    fn signal_axis_error_reads_within_the_input_rounding() {
        with_frame(|frame| {
            let m = frame.model;
            let g = |t: f64| frame.gain_per_code(t).abs();
            let off_only = ChannelBounds {
                off: ZIGZAG.to_vec(),
                gain: vec![0.0; 12],
            };
            let t = 30.0;
            let s = m.signal(t);
            let h_s = (m.signal(frame.t_hi_c) - m.signal(frame.t_lo_c)) / 10.0;
            // Signal in ohm: a point look-up, no temperature error; nodes
            // set so that the signal lies 2.5 steps in (interval 2).
            let got = signal_axis_error(frame, &off_only, s - 2.5 * h_s, h_s, t);
            assert!(relative_eq(got, 7.0 * g(t)), "{got}");
            // In ADC codes the window is half a code each side: nodes set
            // a quarter code below the signal straddle node 3 (7 > 2) or
            // node 4 (2 < 9); the half code is also a temperature error.
            let codes = frame.with_signal_unit(SignalUnit::AdcCode);
            let r = 0.5 * codes.signal_lsb;
            assert!(r < 0.1 * h_s.abs());
            let rounding = r / m.signal_slope(t).abs() * drift_slope(frame, t);
            for (node, worse) in [(3.0, 7.0), (4.0, 9.0)] {
                let s0 = s - 0.5 * r - node * h_s;
                let got = signal_axis_error(&codes, &off_only, s0, h_s, t);
                let want = worse * g(t) + rounding;
                assert!(relative_eq(got, want), "node {node}: {got} vs {want}");
            }
        });
    }

    /// The first well-logger part of seed 7 with a bow across full scale
    /// that drifts with temperature: what a 2-D correction is for.
    fn bowed_part() -> PartFile {
        let mut part = parts(&Scenario::well_logger(), 1, 7).remove(0);
        part.scenario.bow = Some(Bow {
            mid_rel: 8e-4,
            mid_rel_per_k: -4e-6,
        });
        part
    }

    fn grid_plan(axis: AxisKind, n_t: usize, n_raw: usize) -> TablePlan {
        TablePlan {
            axis,
            interpolation: InterpKind::Bilinear2d,
            format: NumFormat::F32,
            n_t,
            n_sig: n_t,
            n_raw,
        }
    }

    #[test]
    fn lever_is_the_farther_calibrated_end_from_the_offset() {
        // Raw range -100..500 codes: offset 50 -> 450 to the top end;
        // offset 450 -> 550 to the bottom end; offset -150, below the
        // range -> 650 to the top end.
        assert_eq!(lever_codes(-100.0, 500.0, 50.0), 450.0);
        assert_eq!(lever_codes(-100.0, 500.0, 450.0), 550.0);
        assert_eq!(lever_codes(-100.0, 500.0, -150.0), 650.0);
    }

    #[test]
    fn extent_of_a_cubic_by_hand() {
        // g = (t - 2)^3 + (r - 10)^3 over t in 1..3, r in 0..20: 80 steps,
        // dt = 0.025, dr = 0.25. |g| peaks at the corners (1 + 1000);
        // second differences of a cubic are exact: g_tt = 6 (t - 2),
        // largest one step in from either edge, 6 x 0.975 = 5.85; g_rr =
        // 6 (r - 10), 6 x 9.75 = 58.5 (1e-6: rounding of values near 1e3
        // over dt^2 = 6.25e-4).
        let e = extent_of(
            &|t, r| (t - 2.0).powi(3) + (r - 10.0).powi(3),
            (1.0, 3.0),
            (0.0, 20.0),
        );
        assert!((e.g_max - 1001.0).abs() < 1e-9, "{e:?}");
        assert!((e.g_tt - 5.85).abs() < 1e-6, "{e:?}");
        assert!((e.g_rr - 58.5).abs() < 1e-6, "{e:?}");
    }

    #[test]
    fn bilinear_remainder_by_hand() {
        // 2^2 * 3 / 8 + 4^2 * 5 / 8 = 1.5 + 10 = 11.5; each axis alone.
        assert_eq!(bilinear_remainder(2.0, 3.0, 4.0, 5.0), 11.5);
        assert_eq!(bilinear_remainder(2.0, 3.0, 0.0, 5.0), 1.5);
        assert_eq!(bilinear_remainder(0.0, 3.0, 4.0, 5.0), 10.0);
    }

    #[test]
    fn row_gap_is_the_widest_between_neighbouring_rows() {
        with_frame(|frame| {
            let span = frame.t_hi_c - frame.t_lo_c;
            // Even rows over temperature: 5 rows, 4 gaps; one row counts as two.
            let even = row_gap_k(frame, &grid_plan(AxisKind::Temperature, 5, 5));
            assert!((even - span / 4.0).abs() < 1e-12, "{even}");
            let one = row_gap_k(frame, &grid_plan(AxisKind::Temperature, 1, 5));
            assert!((one - span).abs() < 1e-12, "{one}");
            // Over the signal: the rows' temperatures at the signal nodes,
            // sorted, and their widest neighbour gap (1e-9 K: the same
            // thermometer inversions, subtracted in another order).
            let plan = grid_plan(AxisKind::Signal, 12, 5);
            let [_, _, s0, h_s] = frame.node_axes(&plan);
            let mut temps: Vec<f64> = (0..12)
                .map(|k| frame.model.temperature(s0 + h_s * k as f64))
                .collect();
            temps.sort_by(f64::total_cmp);
            let gaps: Vec<f64> = temps.windows(2).map(|w| w[1] - w[0]).collect();
            let widest = gaps.iter().fold(0.0, |a: f64, &b| a.max(b));
            let narrowest = gaps.iter().fold(f64::INFINITY, |a: f64, &b| a.min(b));
            let got = row_gap_k(frame, &plan);
            assert!((got - widest).abs() < 1e-9, "{got} vs {widest}");
            // The rows are uneven (the thermometer bends), so the widest
            // gap is not any gap.
            assert!(widest - narrowest > 1e-6, "{widest} vs {narrowest}");
        });
    }

    #[test]
    fn grid_extent_agrees_with_a_grid_twice_as_fine() {
        // The bow is a parabola across the raw codes, so its second
        // differences do not depend on the step: 1e-3 relative for g_rr
        // (the model's own bend adds a little). g_max on the finer grid can
        // only be larger, and the coarse grid hits the bow's crest within
        // half a step: 1e-3 relative. Over temperature g bends only through
        // the model's drift: the second differences on two steps agree to
        // 10 %.
        let part = bowed_part();
        with_part_frame(&part, |frame| {
            assert!(frame.has_bow());
            let e = grid_extent(frame);
            let limits = frame.raw_limits();
            let (r_lo, r_hi) = (f64::from(limits.raw_lo), f64::from(limits.raw_hi));
            let (t_lo, t_hi) = (frame.t_lo_c, frame.t_hi_c);
            let g = |t: f64, r: f64| frame.grid_correction(t, r);
            let n = 2 * GRID_SAMPLES;
            let (dt, dr) = ((t_hi - t_lo) / n as f64, (r_hi - r_lo) / n as f64);
            let (mut g_max, mut g_tt, mut g_rr) = (0.0f64, 0.0f64, 0.0f64);
            for i in 0..=n {
                let t = t_lo + dt * i as f64;
                for j in 0..=n {
                    let r = r_lo + dr * j as f64;
                    g_max = g_max.max(g(t, r).abs());
                    if i == 0 || j == 0 || i == n || j == n {
                        // Second differences inside only.
                        continue;
                    }
                    g_tt =
                        g_tt.max(((g(t + dt, r) - 2.0 * g(t, r) + g(t - dt, r)) / (dt * dt)).abs());
                    g_rr =
                        g_rr.max(((g(t, r + dr) - 2.0 * g(t, r) + g(t, r - dr)) / (dr * dr)).abs());
                }
            }
            println!("coarse {e:?}, fine {g_max} {g_tt} {g_rr}");
            assert!(
                e.g_max > 0.0
                    && e.g_max <= g_max * (1.0 + 1e-12)
                    && e.g_max >= g_max * (1.0 - 1e-3)
            );
            assert!((e.g_rr - g_rr).abs() <= 1e-3 * g_rr, "{} vs {g_rr}", e.g_rr);
            assert!((e.g_tt - g_tt).abs() <= 0.1 * g_tt, "{} vs {g_tt}", e.g_tt);
        });
    }

    #[test]
    fn correction_bound_covers_the_bilinear_error_it_stands_for() {
        let part = bowed_part();
        with_part_frame(&part, |frame| {
            let e = grid_extent(frame);
            // A 1-D table leaves the whole bow.
            let flat = grid_plan(AxisKind::Temperature, 6, 0);
            assert_eq!(correction_bound(frame, &flat), e.g_max);
            // A 6 x 5 grid: the remainder of its row gap and raw step.
            let plan = grid_plan(AxisKind::Temperature, 6, 5);
            let (raw0, step) = frame.raw_axis(5);
            let h_t = row_gap_k(frame, &plan);
            let bound = correction_bound(frame, &plan);
            let want = bilinear_remainder(h_t, e.g_tt, f64::from(step), e.g_rr);
            assert_eq!(bound, want);
            // Independently: bilinear interpolation of g between the grid's
            // nodes, worst at the cells' centres and edge mid-points, stays
            // within the bound, and the bound is not loose by more than
            // the t-term and the sampling allow (2x).
            let g = |t: f64, r: f64| frame.grid_correction(t, r);
            let mut worst = 0.0f64;
            for i in 0..5 {
                let (ta, tb) = (
                    frame.t_lo_c + h_t * i as f64,
                    frame.t_lo_c + h_t * (i + 1) as f64,
                );
                for j in 0..4 {
                    let ra = f64::from(raw0) + f64::from(step) * j as f64;
                    let rb = ra + f64::from(step);
                    for (u, v) in [(0.5, 0.5), (0.0, 0.5), (0.5, 0.0)] {
                        let (t, r) = (ta + u * (tb - ta), ra + v * (rb - ra));
                        let lin = (1.0 - u) * (1.0 - v) * g(ta, ra)
                            + u * (1.0 - v) * g(tb, ra)
                            + (1.0 - u) * v * g(ta, rb)
                            + u * v * g(tb, rb);
                        worst = worst.max((g(t, r) - lin).abs());
                    }
                }
            }
            println!("bilinear error {worst}, bound {bound}");
            assert!(
                worst > 0.0 && bound >= worst && bound <= 2.0 * worst,
                "{worst} vs {bound}"
            );
        });
        // No bow: nothing for a 2-D correction to add.
        with_frame(|frame| {
            assert!(!frame.has_bow());
            assert_eq!(
                correction_bound(frame, &grid_plan(AxisKind::Temperature, 6, 5)),
                0.0
            );
        });
    }

    #[test]
    fn fourth_differences_stay_on_the_curves_grid() {
        // The five-point stencil at the clamped centre reads t +/- 2 steps:
        // all of it on the grid, the ends reached exactly at the clamps,
        // and an inner temperature left where it is.
        let part = parts(&Scenario::well_logger(), 1, 1).remove(0);
        let curves = shapes_for(&part.scenario).unwrap();
        let (lo, hi, step) = (curves.t0_c, curves.t_max_c(), curves.step_k);
        assert!(step > 0.0 && hi - lo > 8.0 * step);
        for t in [
            lo - 50.0,
            lo,
            lo + step,
            0.5 * (lo + hi),
            hi - step,
            hi,
            hi + 50.0,
        ] {
            let c = difference_centre(&curves, t);
            let stencil = [c - 2.0 * step, c + 2.0 * step];
            assert!(
                stencil[0] >= lo - 1e-9 && stencil[1] <= hi + 1e-9,
                "{t} C -> {c}"
            );
            if t <= lo + 2.0 * step {
                assert!((stencil[0] - lo).abs() < 1e-9, "{t} C -> {c}");
            } else if t >= hi - 2.0 * step {
                assert!((stencil[1] - hi).abs() < 1e-9, "{t} C -> {c}");
            } else {
                assert_eq!(c, t);
            }
        }
    }

    #[test]
    fn bound_is_the_error_times_the_safety_factor_in_ppm_of_span() {
        // 1.5e-3 of the span is 1 500 ppm; times 1.1: 1 650 ppm (1e-9:
        // rounding of the scale).
        with_frame(|frame| {
            let span = frame.fs_hi - frame.fs_lo;
            assert!(span > 0.0 && span != 1.0);
            let got = bound_ppm(frame, 1.5e-3 * span);
            assert!((got - 1650.0).abs() < 1e-9, "{got}");
        });
    }

    #[test]
    fn range_samples_grow_past_500_nodes() {
        // 2000 up to 500 nodes, 4 per node after.
        assert_eq!(range_samples(2), 2000);
        assert_eq!(range_samples(500), 2000);
        assert_eq!(range_samples(501), 2004);
        assert_eq!(range_samples(1000), 4000);
    }

    #[test]
    fn max_over_range_samples_both_ends_evenly() {
        with_frame(|frame| {
            let (lo, hi) = (frame.t_lo_c, frame.t_hi_c);
            let seen = std::cell::RefCell::new(Vec::new());
            let top = max_over_range(frame, 4, |t| {
                seen.borrow_mut().push(t);
                // Peaks at the middle one of five samples, negative far
                // from it: the fold must start at 0 and keep the peak.
                1.0 - (t - 0.5 * (lo + hi)).powi(2)
            });
            let seen = seen.into_inner();
            assert_eq!(seen.len(), 5);
            for (k, t) in seen.iter().enumerate() {
                let want = lo + (hi - lo) * k as f64 / 4.0;
                assert!((t - want).abs() < 1e-9, "sample {k}: {t}, want {want}");
            }
            assert!((top - 1.0).abs() < 1e-9, "{top}");
            // All negative: the maximum is the fold's start, 0.
            assert_eq!(max_over_range(frame, 4, |_| -1.0), 0.0);
        });
    }

    #[test]
    fn input_rounding_is_half_a_signal_code() {
        with_frame(|frame| {
            assert_eq!(input_rounding_ohm(frame), 0.0);
            let codes = frame.with_signal_unit(SignalUnit::AdcCode);
            assert!(codes.signal_lsb > 0.0 && codes.signal_lsb != 2.0);
            assert_eq!(input_rounding_ohm(&codes), 0.5 * codes.signal_lsb);
        });
    }

    #[test]
    fn drift_slope_is_the_worse_full_scale_end() {
        // Independent quotient over +/-0.5 K (the helper uses +/-0.01 K):
        // the stimulus read at a fixed output is smooth in T, so the two
        // agree to the wider step's truncation, (0.5 K)^2 / 6 of the third
        // derivative: below 1e-3 relative on these curves.
        with_frame(|frame| {
            for t in [frame.t_lo_c, 25.0, frame.t_hi_c] {
                let by_end = |s: f64| {
                    let y = frame.output(t, s);
                    (frame.stimulus(y, t + 0.5) - frame.stimulus(y, t - 0.5)).abs()
                };
                let want = by_end(frame.fs_lo).max(by_end(frame.fs_hi));
                let got = drift_slope(frame, t);
                assert!(want > 0.0);
                assert!((got - want).abs() <= 1e-3 * want, "{t} C: {got} vs {want}");
            }
        });
    }

    /// Largest ratio of the bound to the dense maximum where the offset and
    /// gain columns dominate: the cubic's one-sided end slopes carry weight
    /// 1/4 in the bound against the 4/27 they reach (1.69x), the offset, gain
    /// and thermometer terms peak at different temperatures and stimuli but
    /// are added, and the 1.1 safety factor: measured 1.2-2.8x.
    const MAX_RATIO: f64 = 3.0;
    /// The same where a coarse thermometer map dominates. The full model's
    /// mobility pairing factor is bilinear on a 10 K grid, so ln rho's slope
    /// kinks every 10 K against its smooth curvature (0.5 K second
    /// differences: +2.8e-5 /K^2 between kinks, -1.2e-4 /K^2 at each): the
    /// real error sees the signed sum, a bound only the size, about 3.3x the
    /// net change of the slope; with the other terms, measured 9.5x.
    const MAX_RATIO_COARSE_THERMOMETER: f64 = 10.0;

    #[test]
    fn bound_holds_and_is_tight_on_a_table_of_plans() {
        let well = Scenario::well_logger();
        let hall = Scenario::battery_current();
        let mut bowed = parts(&well, 1, 7).remove(0);
        bowed.scenario.bow = Some(Bow {
            mid_rel: 8e-4,
            mid_rel_per_k: -4e-6,
        });
        let plan = |interpolation, format, n_t, n_sig, n_raw| TablePlan {
            axis: AxisKind::Temperature,
            interpolation,
            format,
            n_t,
            n_sig,
            n_raw,
        };
        let over_signal = |interpolation, format, n, n_raw| TablePlan {
            axis: AxisKind::Signal,
            ..plan(interpolation, format, n, n, n_raw)
        };
        use InterpKind::{Bilinear2d as B2, Linear as L, MonotoneCubic as C};
        use NumFormat::{F32, Q};
        let wells = parts(&well, 2, 1);
        let halls = parts(&hall, 1, 3);
        let (ohm, code) = (SignalUnit::Ohm, SignalUnit::AdcCode);
        let (tight, coarse) = (MAX_RATIO, MAX_RATIO_COARSE_THERMOMETER);
        // (part, plan, signal unit, largest bound / dense ratio); the first
        // two are what `table --budget 500` chooses for WELL-0001.
        let table = [
            (&wells[0], plan(C, Q, 3, 47, 0), ohm, tight),
            (&wells[0], plan(C, F32, 3, 47, 0), ohm, tight),
            (&wells[0], plan(L, F32, 3, 48, 0), ohm, tight),
            (&wells[1], plan(L, F32, 2, 8, 0), ohm, coarse),
            (&wells[1], plan(C, F32, 5, 16, 0), ohm, tight),
            (&wells[1], plan(L, Q, 12, 30, 0), code, tight),
            (&wells[1], plan(C, Q, 24, 64, 0), ohm, tight),
            (&halls[0], plan(L, F32, 4, 12, 0), ohm, tight),
            (&halls[0], plan(C, F32, 4, 12, 0), ohm, tight),
            (&halls[0], plan(C, Q, 9, 40, 0), code, tight),
            (&bowed, plan(B2, F32, 6, 20, 5), ohm, tight),
            // Over the signal axis; the first is the firmware example's.
            (&wells[0], over_signal(L, F32, 22, 0), code, tight),
            (&wells[0], over_signal(L, Q, 22, 0), code, tight),
            (&wells[1], over_signal(C, F32, 9, 0), ohm, tight),
            (&halls[0], over_signal(L, Q, 12, 0), code, tight),
            (&bowed, over_signal(B2, F32, 12, 5), ohm, tight),
        ];
        for (part, p, unit, max_ratio) in table {
            assert!(part.is_ok(), "{}: {}", part.serial, part.status);
            let curves = shapes_for(&part.scenario).unwrap();
            let model = PartModel {
                curves: &curves,
                params: part.params.unwrap(),
            };
            let frame = TableFrame::new(part, model).unwrap().with_signal_unit(unit);
            let image = frame
                .build(&p, &part.serial, "bar", frame.fs_hi - frame.fs_lo)
                .unwrap();
            let (n_t, n_s) = dense_counts(&p);
            let dense = evaluate(
                &image,
                &frame,
                &linspace(frame.t_lo_c, frame.t_hi_c, n_t),
                &linspace(frame.fs_lo, frame.fs_hi, n_s),
            )
            .unwrap()
            .max_error_ppm;
            let bound = interpolation_bound_ppm(&frame, &p);
            // The dense maximum includes arithmetic rounding (f32: a few
            // 2^-24 of full scale, < 1 ppm; Q: the node quantization, below
            // 1 ppm with these formats): 1 ppm of slack.
            println!(
                "{} {p:?} {unit:?}: dense {dense:.2} ppm, bound {bound:.2} ppm",
                part.serial
            );
            assert!(
                bound >= dense - 1.0,
                "{} {p:?}: bound {bound} ppm below the dense maximum {dense} ppm",
                part.serial
            );
            assert!(
                bound <= max_ratio * dense,
                "{} {p:?}: bound {bound} ppm above {max_ratio} x the dense maximum {dense} ppm",
                part.serial
            );
        }
    }
}
