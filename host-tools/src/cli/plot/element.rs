//! `semidrift plot element`: the drift plot of a sense element as an SVG (or PNG) file.

use crate::cli::CliError;
use crate::cli::element::{curve_for, load_spec, temps_for};
use crate::plot::write_element_plot;
use clap::Args;
use std::io::Write;
use std::path::PathBuf;

/// Options of `semidrift plot element`.
#[derive(Debug, Args)]
pub struct PlotElementArgs {
    /// Element spec file (TOML; see `semidrift element --example`).
    pub spec: PathBuf,
    /// Temperatures in degrees Celsius, `START:STOP:STEP`
    /// [default: the spec's range in 5 C steps].
    #[arg(long, value_name = "START:STOP:STEP", allow_hyphen_values = true)]
    pub celsius: Option<String>,
    /// File to write, SVG (or PNG when the name ends in `.png`); replaced atomically.
    #[arg(long, value_name = "FILE.svg")]
    pub out: PathBuf,
}

/// Runs `semidrift plot element`.
pub fn run(args: PlotElementArgs, out: &mut dyn Write) -> Result<(), CliError> {
    let loaded = load_spec(&args.spec)?;
    let spec = &loaded.spec;
    let temps = temps_for(spec, args.celsius.as_deref())?;
    if temps.len() < 2 {
        return Err(CliError::option(
            "--celsius",
            args.celsius.as_deref().unwrap_or(""),
            "a plot needs at least two temperatures",
        ));
    }
    let curve = curve_for(&loaded, &temps, args.celsius.as_deref())?;
    let shown = args.out.display().to_string();
    let out_err = |e| CliError::option("--out", &shown, e);
    let title = spec.common().name;
    write_element_plot(&args.out, &curve, title).map_err(out_err)?;
    writeln!(out, "wrote {shown} ({} temperatures)", curve.rows.len())?;
    Ok(())
}
