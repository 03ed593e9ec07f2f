//! `semidrift plot KIND ...`: one file per kind of plot; this file dispatches.

mod element;
mod lot;
mod model;
mod part;
mod table;

use super::CliError;
use clap::Subcommand;
use std::io::Write;

/// The kinds of plot.
#[derive(Debug, Subcommand)]
pub enum PlotCommand {
    /// Carriers, mobilities, resistivity and an Arrhenius view of a sample versus temperature.
    Model(model::PlotModelArgs),
    /// Relative span, offset and resistance drift of a sense element, both drives.
    Element(element::PlotElementArgs),
    /// One part's error against temperature before and after compensation.
    Part(part::PlotPartArgs),
    /// A lot's worst-case error envelope before and after compensation.
    Lot(lot::PlotLotArgs),
    /// A table image's error against temperature beside its budget allowance.
    Table(table::PlotTableArgs),
}

/// Runs `semidrift plot ...`.
pub fn run(command: PlotCommand, out: &mut dyn Write) -> Result<(), CliError> {
    match command {
        PlotCommand::Model(args) => model::run(args, out),
        PlotCommand::Element(args) => element::run(args, out),
        PlotCommand::Part(args) => part::run(args, out),
        PlotCommand::Lot(args) => lot::run(args, out),
        PlotCommand::Table(args) => table::run(args, out),
    }
}
