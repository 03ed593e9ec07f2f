//! The full model's temperature shapes for a scenario's nominal die.

use crate::physics::{self, ModelError};
use crate::station::curves::{OffsetShape, ShapeCurves, ShapePoint};
use crate::station::scenario::{ElementKind, Scenario};

/// Coldest tabulated temperature, C: 20 K below the coldest data-sheet range.
pub const GRID_MIN_C: f64 = -60.0;
/// Hottest tabulated temperature, C: 35 K above the hottest data-sheet range.
pub const GRID_MAX_C: f64 = 160.0;
/// Grid step, K (see [`ShapeCurves`] for the interpolation error).
pub const GRID_STEP_K: f64 = 0.5;

/// Tabulates the full model's shapes for the scenario's nominal die.
pub fn shapes_for(scenario: &Scenario) -> Result<ShapeCurves, ModelError> {
    let offset = match scenario.kind {
        ElementKind::Bridge => OffsetShape::DopingSensitivity,
        ElementKind::HallPlate => OffsetShape::Resistivity,
    };
    let kind = scenario.kind;
    ShapeCurves::build(
        GRID_MIN_C,
        GRID_MAX_C,
        GRID_STEP_K,
        scenario.t_ref_c,
        offset,
        |t_k, factor| {
            let mut sample = scenario.sample.clone();
            for d in sample.donors.iter_mut().chain(sample.acceptors.iter_mut()) {
                d.density_cm3 *= factor;
            }
            let p = physics::evaluate(&sample, t_k)?;
            let gain = match kind {
                ElementKind::Bridge => p.piezo_factor.unwrap_or(1.0),
                ElementKind::HallPlate => p.hall_coefficient_cm3_c.abs(),
            };
            Ok(ShapePoint {
                ln_rho: p.rho_ohm_cm.ln(),
                ln_gain: gain.ln(),
            })
        },
    )
}
