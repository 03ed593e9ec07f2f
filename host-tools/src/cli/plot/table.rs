//! `semidrift plot table IMAGE --against PART`: a table image's error
//! against temperature (run with the runtime crate's code) beside the
//! allowance its budget leaves, as an SVG (or PNG) file.

use crate::cli::CliError;
use crate::cli::table::{budget_ppm, read_part};
use crate::plot::station::{table_series, write_error_plot};
use crate::station::pipeline;
use clap::Args;
use std::io::Write;
use std::path::PathBuf;

/// Options of `semidrift plot table`.
#[derive(Debug, Args)]
pub struct PlotTableArgs {
    /// Table image (`.bin`).
    pub image: PathBuf,
    /// Part file the image was built from.
    #[arg(long, value_name = "PART")]
    pub against: PathBuf,
    /// Total budget in ppm of span (default: the part's scenario's).
    #[arg(long, allow_negative_numbers = true)]
    pub budget: Option<f64>,
    /// File to write, SVG (or PNG when the name ends in `.png`); replaced atomically.
    #[arg(long, value_name = "FILE.svg")]
    pub out: PathBuf,
}

/// Runs `semidrift plot table`.
pub fn run(args: PlotTableArgs, out: &mut dyn Write) -> Result<(), CliError> {
    let part = read_part(&args.against)?;
    let image = crate::cli::verify::read_image(&args.image)?;
    let budget = budget_ppm(args.budget, &part, &args.against)?;
    crate::station::output::check_not_input(
        &args.out,
        &[args.image.as_path(), args.against.as_path()],
    )?;
    let curves = pipeline::part_curves(&part).map_err(|e| CliError::Input(e.to_string()))?;
    let image_err =
        |e: pipeline::StepError| CliError::Input(format!("{}: {e}", args.image.display()));
    // A short verification gives the plan, size and allowance for the legend.
    let report = pipeline::verify(&image, &part, &curves, budget, 3, 2).map_err(image_err)?;
    let curve = pipeline::table_error_curve(&image, &part, &curves).map_err(image_err)?;
    let (title, series) = table_series(&report, curve);
    write_error_plot(
        &args.out,
        &title,
        &series,
        Some((report.table_allowance_ppm, "allowance")),
    )
    .map_err(|e| CliError::option("--out", &args.out.display().to_string(), e))?;
    writeln!(
        out,
        "wrote {} ({} temperatures)",
        args.out.display(),
        pipeline::CURVE_TEMPS
    )?;
    Ok(())
}
