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
    #[command(after_help = super::CAUTIONS)]
    Model(model::PlotModelArgs),
    /// Relative span, offset and resistance drift of a sense element, both drives.
    #[command(after_help = super::CAUTIONS)]
    Element(element::PlotElementArgs),
    /// One part's error against temperature before and after compensation.
    #[command(after_help = super::CAUTIONS)]
    Part(part::PlotPartArgs),
    /// A lot's worst-case error envelope before and after compensation.
    #[command(after_help = super::CAUTIONS)]
    Lot(lot::PlotLotArgs),
    /// A table image's error against temperature beside its budget allowance.
    #[command(after_help = super::CAUTIONS)]
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
