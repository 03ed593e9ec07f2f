//! Choosing the table that meets an error allowance with the least flash:
//! for each interpolation (linear, monotone cubic, and for an element with a
//! bow a 2-D correction over temperature x raw signal) and number format, the
//! fewest temperature, thermometer (and raw-signal) nodes whose image (run with the runtime crate's code) stays
//! within the allowance; then the smallest image wins.

use crate::station::image_eval::{ErrorStats, EvalError, evaluate, linspace};
use crate::station::table::{AxisKind, InterpKind, NumFormat, TableError, TableFrame, TablePlan};

/// Most nodes tried per axis before giving up.
pub const MAX_NODES: usize = 4096;
/// Node count used for the other axis while one axis is searched: its error
/// is then far below any allowance worth asking for (error ~ 1/n^2).
const FINE_NODES: usize = 1024;
/// Share of the allowance the search aims at, leaving room for the dense
/// verification finding a slightly worse point than the search grid.
const SEARCH_SHARE: f64 = 0.9;

/// One evaluated plan.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Candidate {
    /// The plan.
    pub plan: TablePlan,
    /// Image size in bytes.
    pub bytes: usize,
    /// Largest error on the search grid, ppm of span.
    pub max_error_ppm: f64,
}

/// Why no table was chosen.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum ChooseError {
    /// Building an image failed.
    #[error(transparent)]
    Table(#[from] TableError),
    /// Running an image failed.
    #[error(transparent)]
    Eval(#[from] EvalError),
    /// Nothing up to [`MAX_NODES`] nodes meets the allowance.
    #[error(
        "no table up to {MAX_NODES} nodes meets {allowance_ppm:.3} ppm (best {best_ppm:.3} ppm)"
    )]
    Unreachable {
        /// The allowance.
        allowance_ppm: f64,
        /// Best error found.
        best_ppm: f64,
    },
}

/// The search grid: 1001 temperatures x 3 stimuli (ends and middle), where
/// the gain error (ends) and the offset error (everywhere) peak; a 2-D
/// correction's error peaks between its raw nodes, so its plans are searched
/// on [`SEARCH_STIMULI_2D`] stimuli.
pub fn search_grid(frame: &TableFrame<'_>, two_d: bool) -> (Vec<f64>, Vec<f64>) {
    let n_s = if two_d { SEARCH_STIMULI_2D } else { 3 };
    (
        linspace(frame.t_lo_c, frame.t_hi_c, 1001),
        linspace(frame.fs_lo, frame.fs_hi, n_s),
    )
}

/// Stimuli of the search grid of a 2-D plan: 97 intervals, a prime-ish
/// count that does not line up with small raw-node counts.
pub const SEARCH_STIMULI_2D: usize = 98;
/// Most raw-signal nodes tried for a 2-D correction: beyond this a grid of
/// `n_t x n_raw` values costs more flash than any 1-D table.
pub const MAX_RAW_NODES: usize = 256;

/// Builds and evaluates one plan on the given grid.
pub fn try_plan(
    frame: &TableFrame<'_>,
    plan: &TablePlan,
    serial: &str,
    unit: &str,
    grid: &(Vec<f64>, Vec<f64>),
) -> Result<(Vec<u8>, ErrorStats), ChooseError> {
    let image = frame.build(plan, serial, unit, frame.fs_hi - frame.fs_lo)?;
    let stats = evaluate(&image, frame, &grid.0, &grid.1)?;
    Ok((image, stats))
}

/// Smallest n in 2..=max with `err(n) <= target`, assuming err falls with n.
fn smallest(
    target: f64,
    max: usize,
    err: &mut dyn FnMut(usize) -> Result<f64, ChooseError>,
) -> Result<Option<usize>, ChooseError> {
    let (mut lo, mut hi) = (2usize, 2usize);
    while err(hi)? > target {
        if hi >= max {
            return Ok(None);
        }
        lo = hi + 1;
        hi = (hi * 2).min(max);
    }
    while lo < hi {
        let mid = (lo + hi) / 2;
        if err(mid)? <= target {
            hi = mid;
        } else {
            lo = mid + 1;
        }
    }
    Ok(Some(hi))
}

/// The smallest plan of one interpolation and format meeting `allowance_ppm`:
/// each axis (temperature nodes, thermometer nodes and, for a 2-D plan, raw
/// nodes) searched alone with the others fine, against an equal share of the
/// target; then all shrunk or grown together.
pub fn smallest_plan(
    frame: &TableFrame<'_>,
    interpolation: InterpKind,
    format: NumFormat,
    axis: AxisKind,
    allowance_ppm: f64,
    serial: &str,
    unit: &str,
) -> Result<Candidate, ChooseError> {
    let two_d = interpolation == InterpKind::Bilinear2d;
    let grid = search_grid(frame, two_d);
    let target = SEARCH_SHARE * allowance_ppm;
    let plan = |n: [usize; 3]| TablePlan {
        interpolation,
        format,
        n_t: n[0],
        // Over the signal axis the thermometer shares the channels' nodes.
        n_sig: match axis {
            AxisKind::Temperature => n[1],
            AxisKind::Signal => n[0],
        },
        n_raw: n[2],
        axis,
    };
    let eval = |p: TablePlan| try_plan(frame, &p, serial, unit, &grid).map(|r| r.1.max_error_ppm);
    let unreachable = |best| ChooseError::Unreachable {
        allowance_ppm,
        best_ppm: best,
    };
    let (fine, max) = if two_d {
        (
            [FINE_NODES, FINE_NODES, MAX_RAW_NODES],
            [MAX_NODES, MAX_NODES, MAX_RAW_NODES],
        )
    } else {
        ([FINE_NODES, FINE_NODES, 0], [MAX_NODES, MAX_NODES, 0])
    };
    // The node counts searched: temperature, thermometer (not over the
    // signal axis, where it is the channels' count), raw signal (2-D only).
    let searched: Vec<usize> = [0, 1, 2]
        .into_iter()
        .filter(|&k| max[k] > 0 && !(k == 1 && axis == AxisKind::Signal))
        .collect();
    // A part whose nonlinearity alone exceeds the target cannot be served by
    // a 1-D table at any size: say so before the search walks every size up
    // to the limit.
    // (A 1-D table reproduces at best the terminal line, which misses the
    // stimulus by the mid-scale deviation there; 0.9 of it leaves room for
    // rounding in that argument.)
    let bow_ppm = frame.nonlinearity_ppm();
    if !two_d && 0.9 * bow_ppm > target {
        return Err(unreachable(bow_ppm));
    }
    let (n, e) = joint_search(
        &searched,
        fine,
        max,
        target,
        &mut |m| eval(plan(m)),
        &unreachable,
    )?;
    let p = plan(n);
    let bytes = frame
        .build(&p, serial, unit, frame.fs_hi - frame.fs_lo)?
        .len();
    Ok(Candidate {
        plan: p,
        bytes,
        max_error_ppm: e,
    })
}

/// The node-count search of [`smallest_plan`] over the `searched` axes:
/// each axis alone (the others at `fine`) against an equal share of
/// `target`; then all grown together by a tenth while the errors together
/// miss the target (up to `max`), and shrunk together by a tenth while the
/// plan still meets it. Returns the counts and their error.
fn joint_search(
    searched: &[usize],
    fine: [usize; 3],
    max: [usize; 3],
    target: f64,
    eval: &mut dyn FnMut([usize; 3]) -> Result<f64, ChooseError>,
    unreachable: &dyn Fn(f64) -> ChooseError,
) -> Result<([usize; 3], f64), ChooseError> {
    let axes = searched.len();
    let mut n = [0usize; 3];
    for &k in searched {
        let found = smallest(target / axes as f64, max[k], &mut |j| {
            let mut m = fine;
            m[k] = j;
            eval(m)
        })?;
        n[k] = found.ok_or_else(|| unreachable(f64::NAN))?;
    }
    // The errors add at worst; usually they partly cancel, so shrink all
    // together while the plan still meets the target, then grow if not.
    let mut e = eval(n)?;
    while e > target {
        if searched.iter().all(|&k| n[k] >= max[k]) {
            return Err(unreachable(e));
        }
        for &k in searched {
            n[k] = (n[k] + n[k].div_ceil(10)).min(max[k]);
        }
        e = eval(n)?;
    }
    loop {
        let mut m = n;
        for &k in searched {
            m[k] = (n[k] * 9 / 10).max(2);
        }
        if m == n {
            break;
        }
        let e2 = eval(m)?;
        if e2 > target {
            break;
        }
        (n, e) = (m, e2);
    }
    Ok((n, e))
}

/// Limits the chooser to one interpolation and/or one number format (a
/// firmware without an FPU needs Q; one that shares a table with another
/// part's firmware may need a given interpolation).
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct Restrict {
    /// Only this interpolation.
    pub interpolation: Option<InterpKind>,
    /// Only this number format.
    pub format: Option<NumFormat>,
    /// Only this channel axis.
    pub axis: Option<AxisKind>,
}

/// Every interpolation and format allowed by `restrict`, each at its
/// smallest size; the least flash first (ties: Q before f32, since it runs on
/// parts with and without an FPU and is bit-exact on the host; then the
/// smaller error).
pub fn candidates(
    frame: &TableFrame<'_>,
    allowance_ppm: f64,
    serial: &str,
    unit: &str,
    restrict: Restrict,
) -> Result<Vec<Candidate>, ChooseError> {
    let mut out = Vec::new();
    let mut last_err = None;
    // A 2-D correction only helps an output with a bow.
    let kinds: &[InterpKind] = if frame.has_bow() {
        &[
            InterpKind::Linear,
            InterpKind::MonotoneCubic,
            InterpKind::Bilinear2d,
        ]
    } else {
        &[InterpKind::Linear, InterpKind::MonotoneCubic]
    };
    let kinds: Vec<InterpKind> = match restrict.interpolation {
        Some(k) => vec![k],
        None => kinds.to_vec(),
    };
    let formats: Vec<NumFormat> = match restrict.format {
        Some(f) => vec![f],
        None => vec![NumFormat::Q, NumFormat::F32],
    };
    let axes: Vec<AxisKind> = match restrict.axis {
        Some(a) => vec![a],
        None => vec![AxisKind::Temperature, AxisKind::Signal],
    };
    for &interpolation in &kinds {
        for &format in &formats {
            for &axis in &axes {
                match smallest_plan(
                    frame,
                    interpolation,
                    format,
                    axis,
                    allowance_ppm,
                    serial,
                    unit,
                ) {
                    Ok(c) => out.push(c),
                    Err(e) => last_err = Some(e),
                }
            }
        }
    }
    if out.is_empty() {
        return Err(last_err.unwrap_or(ChooseError::Unreachable {
            allowance_ppm,
            best_ppm: f64::NAN,
        }));
    }
    out.sort_by(least_flash_first);
    Ok(out)
}

/// The order of [`candidates`]: fewer bytes, then Q before f32, then the
/// signal axis (one look-up per temperature update), then the smaller error.
fn least_flash_first(x: &Candidate, y: &Candidate) -> std::cmp::Ordering {
    x.bytes
        .cmp(&y.bytes)
        .then((x.plan.format == NumFormat::F32).cmp(&(y.plan.format == NumFormat::F32)))
        .then((x.plan.axis == AxisKind::Temperature).cmp(&(y.plan.axis == AxisKind::Temperature)))
        .then(x.max_error_ppm.total_cmp(&y.max_error_ppm))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::station::bound::tests::parts;
    use crate::station::model_shapes::shapes_for;
    use crate::station::scenario::Scenario;

    /// [`joint_search`] on two axes with error `e`, target `target`, node
    /// limit `max_1` on the second axis; (counts, error) or the error's best.
    fn joint(
        e: fn([usize; 3]) -> f64,
        target: f64,
        max_1: usize,
    ) -> Result<([usize; 3], f64), f64> {
        let unreachable = |best| ChooseError::Unreachable {
            allowance_ppm: target,
            best_ppm: best,
        };
        let mut calls = 0;
        joint_search(
            &[0, 1],
            [FINE_NODES, FINE_NODES, 0],
            [MAX_NODES, max_1, 0],
            target,
            &mut |m| {
                calls += 1;
                assert!(calls < 10_000, "search does not end");
                Ok(e(m))
            },
            &unreachable,
        )
        .map_err(|err| match err {
            ChooseError::Unreachable { best_ppm, .. } => best_ppm,
            other => panic!("{other}"),
        })
    }

    #[test]
    fn joint_search_grows_all_axes_when_the_errors_together_miss() {
        // e = 100/n0 + 100/n1, plus 5 when neither axis is at the fine
        // count (errors that the separate searches cannot see). Target 10:
        // each axis alone needs 100/j + 100/1024 <= 5, so j = 21. Together
        // 9.52 + 5 > 10: grow by ceil(n/10): 24, 27, 30, 33, 37, 41, where
        // 2 * 100/41 + 5 = 9.878 <= 10. Shrinking by a tenth gives 36:
        // 10.56 > 10, so the search stops at 41.
        fn e(m: [usize; 3]) -> f64 {
            let cross = if m[0] < FINE_NODES && m[1] < FINE_NODES {
                5.0
            } else {
                0.0
            };
            100.0 / m[0] as f64 + 100.0 / m[1] as f64 + cross
        }
        let (n, err) = joint(e, 10.0, MAX_NODES).unwrap();
        assert_eq!(n, [41, 41, 0]);
        assert_eq!(err, e(n));
        // With the second axis limited to 24 nodes the first keeps growing
        // alone: 100/n0 <= 10 - 5 - 100/24 = 0.833 first at n0 = 127 (33,
        // 37, 41, 46, 51, 57, 63, 70, 77, 85, 94, 104, 115, 127).
        let (n, _) = joint(e, 10.0, 24).unwrap();
        assert_eq!(n, [127, 24, 0]);
        // Limited to 20 nodes on the second axis, its own search fails
        // (100/20 + 100/1024 > 5): unreachable, best unknown.
        assert!(joint(e, 10.0, 20).unwrap_err().is_nan());
        // A cross term of 9.99 (absent only while an axis sits at the fine
        // count of a separate search) needs 100/n0 + 100/n1 <= 0.01, which
        // even 4096 nodes on both axes miss: unreachable, with the error
        // there. (The growth from 21 by tenths never lands on 1024.)
        fn e2(m: [usize; 3]) -> f64 {
            let cross = if m[0] != FINE_NODES && m[1] != FINE_NODES {
                9.99
            } else {
                0.0
            };
            100.0 / m[0] as f64 + 100.0 / m[1] as f64 + cross
        }
        let best = joint(e2, 10.0, MAX_NODES).unwrap_err();
        assert_eq!(best, e2([MAX_NODES, MAX_NODES, 0]));
    }

    #[test]
    fn joint_search_accepts_an_error_equal_to_the_target() {
        // f(n) = 0 at the fine count and beyond, 1 from 21 nodes, 5 below;
        // e = f(n0) + f(n1) + 2 when neither axis is fine. Target 4: each
        // axis alone needs f(j) <= 2, so j = 21; together 1 + 1 + 2 = 4
        // meets the target exactly (no growth), and 18 nodes give 12. (A
        // search that grew at an equal error would climb past 1024 and
        // shrink by tenths down to 22.)
        fn f(n: usize) -> f64 {
            if n >= FINE_NODES {
                0.0
            } else if n >= 21 {
                1.0
            } else {
                5.0
            }
        }
        fn e(m: [usize; 3]) -> f64 {
            let cross = if m[0] < FINE_NODES && m[1] < FINE_NODES {
                2.0
            } else {
                0.0
            };
            f(m[0]) + f(m[1]) + cross
        }
        assert_eq!(joint(e, 4.0, MAX_NODES).unwrap(), ([21, 21, 0], 4.0));
        // g(n) = 1 from 20 nodes and 2 below: shrinking keeps the error at
        // exactly the target 4 (2 + 2, no cross term), so the search goes
        // down to two nodes on each axis (20, 18, 16, 14, 12, 10, 9, 8, 7,
        // 6, 5, 4, 3, 2).
        fn g(m: [usize; 3]) -> f64 {
            let h = |n: usize| if n >= 20 { 1.0 } else { 2.0 };
            h(m[0]) + h(m[1])
        }
        assert_eq!(joint(g, 4.0, MAX_NODES).unwrap(), ([2, 2, 0], 4.0));
    }

    #[test]
    fn smallest_matches_a_linear_scan() {
        // err(n) falls with n; the reference is the first n in 2..=max with
        // err(n) <= target, found by trying every n. Integer-valued errors
        // make ties with the target exact.
        type ErrFn = fn(usize) -> f64;
        let errs: [(&str, ErrFn); 7] = [
            ("1000/n^2", |n| (1000 / (n * n)) as f64),
            ("60/n", |n| (60 / n) as f64),
            ("step at 37", |n| if n < 37 { 5.0 } else { 1.0 }),
            // Answers one above a doubling step (3, 5, 17, 33): the
            // bisection starts just above a value the doubling has tried.
            ("step at 3", |n| if n < 3 { 5.0 } else { 1.0 }),
            ("step at 5", |n| if n < 5 { 5.0 } else { 1.0 }),
            ("step at 17", |n| if n < 17 { 5.0 } else { 1.0 }),
            ("step at 33", |n| if n < 33 { 5.0 } else { 1.0 }),
        ];
        for (name, f) in errs {
            for target in [0.0, 1.0, 2.0, 3.0, 7.0, 10.0, 30.0, 250.0, 1000.0] {
                for max in [2usize, 3, 17, 64, 100, 4096] {
                    let want = (2..=max).find(|&n| f(n) <= target);
                    let mut asked = Vec::new();
                    let got = smallest(target, max, &mut |n| {
                        assert!((2..=max).contains(&n), "{name}: asked for {n}");
                        asked.push(n);
                        Ok(f(n))
                    })
                    .unwrap();
                    assert_eq!(got, want, "{name}, target {target}, max {max}");
                    // Each evaluation builds and runs an image: doubling
                    // then bisection asks for no size twice, and at most
                    // 2 log2(max) + 2 sizes (a linear walk: up to max).
                    let calls = asked.len();
                    asked.sort_unstable();
                    asked.dedup();
                    assert_eq!(
                        asked.len(),
                        calls,
                        "{name}, target {target}: a size asked twice"
                    );
                    let bound = 2 * (usize::BITS - max.leading_zeros()) as usize + 2;
                    assert!(calls <= bound, "{name}: {calls} calls for max {max}");
                }
            }
        }
    }

    #[test]
    fn search_grid_spans_the_range_and_the_stimulus_ends() {
        let part = parts(&Scenario::well_logger(), 1, 7).remove(0);
        let curves = shapes_for(&part.scenario).unwrap();
        let frame = TableFrame::new(&part, part.model(&curves)).unwrap();
        // The well logger: -20..85 C, 0..10 bar (scenario.rs).
        for (two_d, n_s) in [(false, 3), (true, SEARCH_STIMULI_2D)] {
            let (t, s) = search_grid(&frame, two_d);
            assert_eq!(t.len(), 1001);
            assert_eq!((t[0], t[1000]), (-20.0, 85.0));
            // Uniform: 105 K over 1000 intervals.
            assert!((t[1] - t[0] - 0.105).abs() < 1e-12, "{}", t[1] - t[0]);
            assert_eq!(s.len(), n_s);
            assert_eq!((s[0], s[n_s - 1]), (0.0, 10.0));
        }
        assert_eq!(search_grid(&frame, false).1, vec![0.0, 5.0, 10.0]);
    }

    #[test]
    fn chosen_plan_meets_the_allowance_and_one_size_smaller_does_not() {
        let part = parts(&Scenario::well_logger(), 1, 7).remove(0);
        let curves = shapes_for(&part.scenario).unwrap();
        let frame = TableFrame::new(&part, part.model(&curves)).unwrap();
        // Several allowances: the 10 % the search keeps back shows as a
        // chosen error at most 0.9 of each, whatever the node steps.
        for (interp, format, allowance) in [
            (InterpKind::Linear, NumFormat::Q, 40.0),
            (InterpKind::Linear, NumFormat::Q, 60.0),
            (InterpKind::Linear, NumFormat::Q, 100.0),
            (InterpKind::Linear, NumFormat::F32, 150.0),
            (InterpKind::Linear, NumFormat::Q, 300.0),
            (InterpKind::MonotoneCubic, NumFormat::F32, 300.0),
        ] {
            let target = SEARCH_SHARE * allowance;
            let c = smallest_plan(
                &frame,
                interp,
                format,
                AxisKind::Temperature,
                allowance,
                "S",
                "bar",
            )
            .unwrap();
            // A 1-D interpolation gets no 2-D correction.
            assert_eq!(c.plan.n_raw, 0, "{c:?}");
            assert_eq!((c.plan.interpolation, c.plan.format), (interp, format));
            let grid = search_grid(&frame, false);
            let (image, stats) = try_plan(&frame, &c.plan, "S", "bar", &grid).unwrap();
            assert_eq!(c.bytes, image.len());
            assert_eq!(c.max_error_ppm, stats.max_error_ppm);
            assert!(c.max_error_ppm <= target, "{c:?}");
            assert!(c.max_error_ppm > 0.0, "{c:?}");
            // On a grid 10x denser in temperature and with 11 stimuli the
            // error stays inside the whole allowance: the 10 % the search
            // keeps back covers points between its grid lines.
            let dense = (
                linspace(frame.t_lo_c, frame.t_hi_c, 10_001),
                linspace(frame.fs_lo, frame.fs_hi, 11),
            );
            let (_, d) = try_plan(&frame, &c.plan, "S", "bar", &dense).unwrap();
            assert!(d.max_error_ppm <= allowance, "{c:?}: dense {d:?}");
            // The next smaller plan the search would try (every axis to
            // 9/10) misses the target: the plan is not oversized.
            let mut smaller = c.plan;
            smaller.n_t = (c.plan.n_t * 9 / 10).max(2);
            smaller.n_sig = (c.plan.n_sig * 9 / 10).max(2);
            assert_ne!(smaller, c.plan, "{c:?}");
            let (_, s) = try_plan(&frame, &smaller, "S", "bar", &grid).unwrap();
            assert!(s.max_error_ppm > target, "{smaller:?}: {s:?}");
        }
    }

    #[test]
    fn a_bow_over_the_target_is_refused_before_any_1d_search() {
        let mut part = parts(&Scenario::well_logger(), 1, 7).remove(0);
        // Mid-scale bow 8e-4 of span at 25 C, -4e-6 per K: largest at
        // -20 C, 8e-4 + 4e-6 * 45 = 9.8e-4, i.e. 980 ppm.
        part.scenario.bow = Some(crate::station::bow::Bow {
            mid_rel: 8e-4,
            mid_rel_per_k: -4e-6,
        });
        let curves = shapes_for(&part.scenario).unwrap();
        let frame = TableFrame::new(&part, part.model(&curves)).unwrap();
        let bow = frame.nonlinearity_ppm();
        // Sum of two terms rounded once each: ~1e-13 ppm.
        assert!((bow - 980.0).abs() < 1e-9, "{bow}");
        let try_1d = |allowance: f64| {
            smallest_plan(
                &frame,
                InterpKind::Linear,
                NumFormat::Q,
                AxisKind::Temperature,
                allowance,
                "S",
                "bar",
            )
        };
        // 0.9 x 980 exceeds the target 0.9 x 500: refused at once, with
        // the bow as the best a 1-D table can do.
        assert_eq!(
            try_1d(500.0),
            Err(ChooseError::Unreachable {
                allowance_ppm: 500.0,
                best_ppm: bow
            })
        );
        // With the allowance equal to the bow the shortcut does not apply
        // (strictly greater only): the search runs and finds no size.
        match try_1d(bow) {
            Err(ChooseError::Unreachable { best_ppm, .. }) => {
                assert!(best_ppm.is_nan(), "{best_ppm}");
            }
            other => panic!("{other:?}"),
        }
    }

    #[test]
    fn images_carry_the_span_as_full_scale() {
        // The image's full scale is the stimulus span, fs_hi - fs_lo: with
        // a range that does not start at 0 (2..10 bar), 8 bar.
        let part = parts(&Scenario::well_logger(), 1, 7).remove(0);
        let curves = shapes_for(&part.scenario).unwrap();
        let mut frame = TableFrame::new(&part, part.model(&curves)).unwrap();
        frame.fs_lo = 2.0;
        let plan = TablePlan {
            interpolation: InterpKind::Linear,
            format: NumFormat::Q,
            n_t: 8,
            n_sig: 8,
            n_raw: 0,
            axis: AxisKind::Temperature,
        };
        let grid = search_grid(&frame, false);
        let (image, _) = try_plan(&frame, &plan, "S", "bar", &grid).unwrap();
        let view = compensate::TableView::parse(&image).unwrap();
        assert_eq!(view.full_scale(), 8.0);
    }

    #[test]
    fn order_is_bytes_then_q_then_signal_axis_then_error() {
        let c = |bytes, format, axis, err| Candidate {
            plan: TablePlan {
                interpolation: InterpKind::Linear,
                format,
                n_t: 4,
                n_sig: 4,
                n_raw: 0,
                axis,
            },
            bytes,
            max_error_ppm: err,
        };
        use AxisKind::{Signal, Temperature};
        use NumFormat::{F32, Q};
        use std::cmp::Ordering::{Greater, Less};
        // (x, y, order): each rule decides against every later one.
        let cases = [
            (c(100, F32, Temperature, 9.0), c(104, Q, Signal, 1.0), Less),
            (c(100, Q, Temperature, 9.0), c(100, F32, Signal, 1.0), Less),
            (c(100, Q, Signal, 9.0), c(100, Q, Temperature, 1.0), Less),
            (c(100, Q, Temperature, 9.0), c(100, Q, Signal, 1.0), Greater),
            (c(100, Q, Signal, 1.0), c(100, Q, Signal, 9.0), Less),
            (
                c(100, Q, Temperature, 9.0),
                c(100, Q, Temperature, 1.0),
                Greater,
            ),
        ];
        for (x, y, want) in cases {
            assert_eq!(least_flash_first(&x, &y), want, "{x:?} vs {y:?}");
            assert_eq!(least_flash_first(&y, &x), want.reverse(), "{y:?} vs {x:?}");
        }
    }

    #[test]
    fn candidates_are_least_flash_first() {
        let part = parts(&Scenario::well_logger(), 1, 7).remove(0);
        let curves = shapes_for(&part.scenario).unwrap();
        let frame = TableFrame::new(&part, part.model(&curves)).unwrap();
        let all = candidates(&frame, 300.0, "S", "bar", Restrict::default()).unwrap();
        // Two interpolations (no bow) x two formats x two axes.
        assert_eq!(all.len(), 8);
        for w in all.windows(2) {
            let key = |c: &Candidate| {
                (
                    c.bytes,
                    c.plan.format == NumFormat::F32,
                    c.plan.axis == AxisKind::Temperature,
                )
            };
            assert!(key(&w[0]) <= key(&w[1]), "{:?} before {:?}", w[0], w[1]);
            assert_eq!(w[0].plan.n_raw, 0, "no bow, no 2-D correction");
            if key(&w[0]) == key(&w[1]) {
                assert!(w[0].max_error_ppm <= w[1].max_error_ppm);
            }
        }
        let q_only = Restrict {
            format: Some(NumFormat::Q),
            ..Restrict::default()
        };
        let q = candidates(&frame, 300.0, "S", "bar", q_only).unwrap();
        assert_eq!(q.len(), 4);
        assert!(q.iter().all(|c| c.plan.format == NumFormat::Q));
    }
}
