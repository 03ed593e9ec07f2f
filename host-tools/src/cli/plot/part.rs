//! `semidrift plot part PART --chamber CSV`: one part's error against
//! temperature before and after compensation, as an SVG (or PNG) file.

use super::lot::plot_parts;
use crate::cli::CliError;
use clap::Args;
use std::io::Write;
use std::path::PathBuf;

/// Options of `semidrift plot part`.
#[derive(Debug, Args)]
pub struct PlotPartArgs {
    /// Part file written by `calibrate`.
    pub part: PathBuf,
    /// Chamber CSV with rows of this part (other serials are ignored).
    #[arg(long, value_name = "CSV")]
    pub chamber: PathBuf,
    /// File to write, SVG (or PNG when the name ends in `.png`); replaced atomically.
    #[arg(long, value_name = "FILE.svg")]
    pub out: PathBuf,
}

/// Runs `semidrift plot part`.
pub fn run(args: PlotPartArgs, out: &mut dyn Write) -> Result<(), CliError> {
    let name = args
        .part
        .file_name()
        .and_then(|n| n.to_str())
        .and_then(|n| n.strip_suffix(".part.json"))
        .map_or_else(|| args.part.display().to_string(), str::to_string);
    let paths = [args.part.clone()];
    let (_, temps) = plot_parts(&paths, &args.chamber, &args.out, &format!("part {name}"))?;
    writeln!(out, "wrote {} ({temps} temperatures)", args.out.display())?;
    Ok(())
}
