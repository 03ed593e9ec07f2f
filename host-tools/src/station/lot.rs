//! Calibrating a whole lot: parts in parallel across cores, a progress bar on
//! a terminal, results in serial order whatever the thread scheduling.

use super::calibrate::calibrate_part;
use super::chamber::ChamberData;
use super::curves::ShapeCurves;
use super::design::DesignFile;
use super::design::calibrate::calibrate_on_design;
use super::part_file::PartFile;
use super::scenario::Scenario;
use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};
use rayon::prelude::*;
use std::io::IsTerminal;

/// A progress bar on stderr, hidden when stdout is not a terminal or `quiet`.
pub fn progress(len: usize, quiet: bool, what: &str) -> ProgressBar {
    let bar = ProgressBar::with_draw_target(Some(len as u64), ProgressDrawTarget::hidden());
    if !quiet && std::io::stdout().is_terminal() {
        bar.set_draw_target(ProgressDrawTarget::stderr());
        if let Ok(style) = ProgressStyle::with_template("{msg} [{bar:40}] {pos}/{len} {eta}") {
            bar.set_style(style.progress_chars("=> "));
        }
        bar.set_message(what.to_string());
    }
    bar
}

/// Calibrates every part in `data` (sorted by serial), physics-only.
pub fn calibrate_lot(
    scenario: &Scenario,
    curves: &ShapeCurves,
    data: &ChamberData,
    quiet: bool,
) -> Vec<PartFile> {
    calibrate_lot_with(scenario, curves, data, None, quiet)
}

/// Calibrates every part in `data` (sorted by serial), on `design` when given.
pub fn calibrate_lot_with(
    scenario: &Scenario,
    curves: &ShapeCurves,
    data: &ChamberData,
    design: Option<&DesignFile>,
    quiet: bool,
) -> Vec<PartFile> {
    let groups: Vec<(&str, Vec<&super::chamber::ChamberRow>)> =
        data.by_serial().into_iter().collect();
    let bar = progress(groups.len(), quiet, "calibrating");
    let parts: Vec<PartFile> = groups
        .par_iter()
        .map(|(serial, rows)| {
            let part = match design {
                Some(d) => calibrate_on_design(scenario, curves, d, serial, rows),
                None => calibrate_part(scenario, curves, serial, rows),
            };
            bar.inc(1);
            part
        })
        .collect();
    bar.finish_and_clear();
    parts
}
