//! Choosing the table that meets an error allowance with the least flash:
//! for each interpolation and number format, the fewest temperature and
//! thermometer nodes whose image (run with the runtime crate's code) stays
//! within the allowance; then the smallest image wins.

use super::image_eval::{ErrorStats, EvalError, evaluate, linspace};
use super::table::{InterpKind, NumFormat, TableError, TableFrame, TablePlan};

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
/// the gain error (ends) and the offset error (everywhere) peak.
pub fn search_grid(frame: &TableFrame<'_>) -> (Vec<f64>, Vec<f64>) {
    (
        linspace(frame.t_lo_c, frame.t_hi_c, 1001),
        linspace(frame.fs_lo, frame.fs_hi, 3),
    )
}

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

/// Smallest n in 2..=MAX_NODES with `err(n) <= target`, assuming err falls with n.
fn smallest(
    target: f64,
    err: &mut dyn FnMut(usize) -> Result<f64, ChooseError>,
) -> Result<Option<usize>, ChooseError> {
    let (mut lo, mut hi) = (2usize, 2usize);
    while err(hi)? > target {
        if hi >= MAX_NODES {
            return Ok(None);
        }
        lo = hi + 1;
        hi = (hi * 2).min(MAX_NODES);
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

/// The smallest plan of one interpolation and format meeting `allowance_ppm`.
pub fn smallest_plan(
    frame: &TableFrame<'_>,
    interpolation: InterpKind,
    format: NumFormat,
    allowance_ppm: f64,
    serial: &str,
    unit: &str,
) -> Result<Candidate, ChooseError> {
    let grid = search_grid(frame);
    let target = SEARCH_SHARE * allowance_ppm;
    let plan = |n_t, n_sig| TablePlan {
        interpolation,
        format,
        n_t,
        n_sig,
    };
    let eval = |p: TablePlan| try_plan(frame, &p, serial, unit, &grid).map(|r| r.1.max_error_ppm);
    let unreachable = |best| ChooseError::Unreachable {
        allowance_ppm,
        best_ppm: best,
    };
    let n_t = smallest(target / 2.0, &mut |n| eval(plan(n, FINE_NODES)))?
        .ok_or_else(|| unreachable(f64::NAN))?;
    let n_sig = smallest(target / 2.0, &mut |n| eval(plan(FINE_NODES, n)))?
        .ok_or_else(|| unreachable(f64::NAN))?;
    // The two errors add at worst; usually they partly cancel, so shrink
    // both together while the pair still meets the target, then grow if not.
    let (mut a, mut b) = (n_t, n_sig);
    let mut e = eval(plan(a, b))?;
    while e > target {
        if a >= MAX_NODES && b >= MAX_NODES {
            return Err(unreachable(e));
        }
        a = (a + a.div_ceil(10)).min(MAX_NODES);
        b = (b + b.div_ceil(10)).min(MAX_NODES);
        e = eval(plan(a, b))?;
    }
    loop {
        let (a2, b2) = ((a * 9 / 10).max(2), (b * 9 / 10).max(2));
        if (a2, b2) == (a, b) {
            break;
        }
        let e2 = eval(plan(a2, b2))?;
        if e2 > target {
            break;
        }
        (a, b, e) = (a2, b2, e2);
    }
    let p = plan(a, b);
    let bytes = frame
        .build(&p, serial, unit, frame.fs_hi - frame.fs_lo)?
        .len();
    Ok(Candidate {
        plan: p,
        bytes,
        max_error_ppm: e,
    })
}

/// Every interpolation and format, each at its smallest size; the least
/// flash first (ties: Q before f32, since it runs on parts with and without
/// an FPU and is bit-exact on the host; then the smaller error).
pub fn candidates(
    frame: &TableFrame<'_>,
    allowance_ppm: f64,
    serial: &str,
    unit: &str,
) -> Result<Vec<Candidate>, ChooseError> {
    let mut out = Vec::new();
    let mut last_err = None;
    for interpolation in [InterpKind::Linear, InterpKind::MonotoneCubic] {
        for format in [NumFormat::Q, NumFormat::F32] {
            match smallest_plan(frame, interpolation, format, allowance_ppm, serial, unit) {
                Ok(c) => out.push(c),
                Err(e) => last_err = Some(e),
            }
        }
    }
    if out.is_empty() {
        return Err(last_err.unwrap_or(ChooseError::Unreachable {
            allowance_ppm,
            best_ppm: f64::NAN,
        }));
    }
    out.sort_by(|x, y| {
        x.bytes
            .cmp(&y.bytes)
            .then((x.plan.format == NumFormat::F32).cmp(&(y.plan.format == NumFormat::F32)))
            .then(x.max_error_ppm.total_cmp(&y.max_error_ppm))
    });
    Ok(out)
}
