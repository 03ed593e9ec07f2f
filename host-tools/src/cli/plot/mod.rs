//! `semidrift plot KIND ...`: one file per kind of plot; this file dispatches.

mod model;

use super::CliError;
use clap::Subcommand;
use std::io::Write;

/// The kinds of plot.
#[derive(Debug, Subcommand)]
pub enum PlotCommand {
    /// Carriers, mobilities, resistivity and an Arrhenius view of a sample versus temperature.
    Model(model::PlotModelArgs),
}

/// Runs `semidrift plot ...`.
pub fn run(command: PlotCommand, out: &mut dyn Write) -> Result<(), CliError> {
    match command {
        PlotCommand::Model(args) => model::run(args, out),
    }
}
