//! Command-line interface of `semidrift`: a thin layer over the library.
//!
//! Each subcommand lives in its own file with a `clap::Args` struct and a
//! `run(args, out)` function returning [`CliError`]; this file only dispatches.
//! Exit codes: 0 success, 1 a check failed, 2 bad input or usage, 3 the
//! target or its debug server could not be reached (`flash`, `eol`).

mod apply;
mod arrhenius;
mod calibrate;
mod choices;
mod demo;
pub mod element;
mod eol;
mod error;
mod flash;
mod lot;
mod model;
mod plot;
mod progress;
mod qualify;
pub mod range;
mod record;
pub mod sample_args;
mod simulate;
mod table;
pub(crate) mod verify;

pub use error::CliError;

use clap::{Parser, Subcommand};
use std::io::Write;

/// Usual cautions, shown in the `--help` of the program and of every
/// subcommand (`tests/cautions.rs` checks each).
pub(crate) const CAUTIONS: &str = "\
CAUTION: semidrift's output feeds measuring instruments. Where a reading protects people or \
property (pressure vessels, battery-pack current sensing, medical devices, vehicles), treat it \
as one input to a design qualified under the standards and local codes that apply, verified on \
real parts, and approved by qualified engineers. Simulated demo data is not a measurement.";

/// semidrift: temperature-drift compensation for semiconductor sense elements.
#[derive(Debug, Parser)]
#[command(name = "semidrift", version, about, after_help = CAUTIONS)]
pub struct Cli {
    /// What to do.
    #[command(subcommand)]
    pub command: Command,
}

/// The subcommands.
#[derive(Debug, Subcommand)]
pub enum Command {
    /// Evaluate the full physics model of a doped sample over temperature.
    ///
    /// mu_n_cm2_vs / mu_p_cm2_vs are the published mobility models at the total
    /// dopant density (Si: Masetti 1983 with Arora 1982 temperature laws): compare
    /// them with published mobility curves. mu_n_per_free_carrier_cm2_vs /
    /// mu_p_per_free_carrier_cm2_vs are the mobilities per band carrier that pair
    /// with n_cm3 / p_cm3 (which count only ionized dopants) in
    /// rho = 1 / (q (n mu_n + p mu_p)); in Si they exceed the published ones where
    /// dopants are partly neutral (about 1.3x at 1e18 cm^-3, 300 K), elsewhere the
    /// two are equal. hall_factor_n / hall_factor_p are published Si data
    /// (sources printed above the table and in the JSON) or scattering theory.
    #[command(after_help = CAUTIONS)]
    Model(model::ModelArgs),
    /// Draw plots as SVG or PNG files.
    #[command(after_help = CAUTIONS)]
    #[command(subcommand)]
    Plot(plot::PlotCommand),
    // Subcommands read alike: each has its own help line, arguments and the cautions.
    /// Fit an activation energy to conductivity or resistance versus temperature.
    #[command(after_help = CAUTIONS)]
    Arrhenius(arrhenius::ArrheniusArgs),
    /// Example element specs; drift of a sense element over temperature.
    #[command(after_help = CAUTIONS)]
    Element(element::ElementArgs),
    /// Simulate a lot of parts in a chamber and write the chamber CSV.
    #[command(after_help = CAUTIONS)]
    Simulate(simulate::SimulateArgs),
    /// Learn a design from a qualification lot measured at many temperatures.
    #[command(after_help = CAUTIONS)]
    Qualify(qualify::QualifyArgs),
    /// Fit every part of a chamber CSV and write one part file per serial.
    #[command(after_help = CAUTIONS)]
    Calibrate(calibrate::CalibrateArgs),
    /// Build a part's table image within an error budget and export it.
    #[command(after_help = CAUTIONS)]
    Table(table::TableArgs),
    /// Check a table image against its part on a dense grid.
    #[command(after_help = CAUTIONS)]
    Verify(verify::VerifyArgs),
    /// Compensate recorded rows with a part file or table image.
    #[command(after_help = CAUTIONS)]
    Apply(apply::ApplyArgs),
    /// Write a table image into a part through a debug server and read it back.
    #[command(after_help = CAUTIONS)]
    Flash(flash::FlashArgs),
    /// Run a part's check rows through its flashed image on the part itself.
    #[command(after_help = CAUTIONS)]
    Eol(eol::EolArgs),
    /// The station database: resumable lot runs, status, history, release,
    /// traceability export and the HTML lot report.
    #[command(after_help = CAUTIONS)]
    #[command(subcommand)]
    Lot(lot::LotCommand),
    /// Run the whole station chain on both demo scenarios.
    #[command(after_help = CAUTIONS)]
    Demo(demo::DemoArgs),
}

/// Runs the command line with the process arguments and returns the exit code.
pub fn main() -> i32 {
    let stdout = std::io::stdout();
    let mut out = stdout.lock();
    run_with_args(std::env::args_os(), &mut out)
}

/// Runs the command line with explicit arguments (the first is the program
/// name) and writes normal output to `out`; errors go to stderr as one line.
pub fn run_with_args<I, T>(args: I, out: &mut dyn Write) -> i32
where
    I: IntoIterator<Item = T>,
    T: Into<std::ffi::OsString> + Clone,
{
    let cli = match Cli::try_parse_from(args) {
        Ok(cli) => cli,
        Err(e) if !e.use_stderr() => {
            // --help and --version.
            let _ = e.print();
            return 0;
        }
        Err(e) => {
            eprintln!(
                "semidrift: {} (see --help)",
                one_line(&e.render().to_string())
            );
            return 2;
        }
    };
    match dispatch(cli.command, out) {
        Ok(()) | Err(CliError::OutputClosed) => 0,
        Err(e) => {
            eprintln!("semidrift: error: {e}");
            e.exit_code()
        }
    }
}

fn dispatch(command: Command, out: &mut dyn Write) -> Result<(), CliError> {
    match command {
        Command::Model(args) => model::run(args, out),
        Command::Plot(args) => plot::run(args, out),
        Command::Arrhenius(args) => arrhenius::run(args, out),
        Command::Element(args) => element::run(args, out),
        Command::Simulate(args) => simulate::run(args, out),
        Command::Qualify(args) => qualify::run(args, out),
        Command::Calibrate(args) => calibrate::run(args, out),
        Command::Table(args) => table::run(args, out),
        Command::Verify(args) => verify::run(args, out),
        Command::Apply(args) => apply::run(args, out),
        Command::Flash(args) => flash::run(args, out),
        Command::Eol(args) => eol::run(args, out),
        Command::Lot(args) => lot::run(args, out),
        Command::Demo(args) => demo::run(args, out),
    }
}

/// Prints a chamber file's rejected rows (errors) and repeated readings
/// (warnings) on stderr, one line each.
pub(crate) fn report_rows(data: &crate::station::chamber::ChamberData) {
    for e in &data.errors {
        eprintln!("semidrift: error: {e}");
    }
    for w in &data.repeats {
        eprintln!("semidrift: warning: {w}");
    }
}

/// The rows of part `serial` in `data`, read from `csv`; refused (exit 2)
/// with the file and field when there are none.
pub(crate) fn part_rows<'a>(
    data: &'a crate::station::chamber::ChamberData,
    csv: &std::path::Path,
    serial: &str,
) -> Result<Vec<&'a crate::station::chamber::ChamberRow>, CliError> {
    let rows: Vec<_> = data.rows.iter().filter(|r| r.serial == serial).collect();
    if rows.is_empty() {
        return Err(CliError::at(
            &csv.display().to_string(),
            1,
            "serial",
            format!("no rows for part {serial}"),
        ));
    }
    Ok(rows)
}

/// clap's usage error as one line: its first paragraph, whitespace collapsed
/// (the contract asks for one-line errors; the usage text is in `--help`).
fn one_line(rendered: &str) -> String {
    rendered
        .lines()
        .take_while(|l| !l.trim().is_empty())
        .map(str::trim)
        .collect::<Vec<_>>()
        .join(" ")
}
