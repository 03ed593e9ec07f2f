//! Calibrating a whole lot: parts in parallel across cores, progress
//! reported through [`Progress`] (the command line draws it; the library
//! never touches the terminal), results in serial order whatever the thread
//! scheduling.

use crate::station::calibrate::calibrate_part;
use crate::station::chamber::ChamberData;
use crate::station::curves::ShapeCurves;
use crate::station::design::DesignFile;
use crate::station::design::calibrate::calibrate_on_design;
use crate::station::part_file::PartFile;
use crate::station::scenario::Scenario;
use rayon::prelude::*;

/// Receives the progress of a long step (called from worker threads).
pub trait Progress: Sync {
    /// A step of `len` units named `what` begins.
    fn begin(&self, _len: usize, _what: &str) {}
    /// One unit is done.
    fn advance(&self) {}
    /// The step is over.
    fn end(&self) {}
}

/// Reports nothing.
#[derive(Debug, Clone, Copy, Default)]
pub struct Silent;

impl Progress for Silent {}

/// Calibrates every part in `data` (sorted by serial), physics-only.
pub fn calibrate_lot(
    scenario: &Scenario,
    curves: &ShapeCurves,
    data: &ChamberData,
    progress: &dyn Progress,
) -> Vec<PartFile> {
    calibrate_lot_with(scenario, curves, data, None, progress)
}

/// Calibrates every part in `data` (sorted by serial), on `design` when given.
pub fn calibrate_lot_with(
    scenario: &Scenario,
    curves: &ShapeCurves,
    data: &ChamberData,
    design: Option<&DesignFile>,
    progress: &dyn Progress,
) -> Vec<PartFile> {
    let groups: Vec<(&str, Vec<&crate::station::chamber::ChamberRow>)> =
        data.by_serial().into_iter().collect();
    progress.begin(groups.len(), "calibrating");
    let parts: Vec<PartFile> = groups
        .par_iter()
        .map(|(serial, rows)| {
            let part = match design {
                Some(d) => calibrate_on_design(scenario, curves, d, serial, rows),
                None => calibrate_part(scenario, curves, serial, rows),
            };
            progress.advance();
            part
        })
        .collect();
    progress.end();
    parts
}
