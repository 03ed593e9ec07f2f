//! `semidrift plot model`: the model plot of one sample as an SVG file.

use crate::cli::CliError;
use crate::cli::model::sweep;
use crate::cli::range::TemperatureArgs;
use crate::cli::sample_args::SampleArgs;
use crate::plot::{model_svg, write_atomically, write_model_png};
use clap::Args;
use std::io::Write;
use std::path::PathBuf;

/// Options of `semidrift plot model`.
#[derive(Debug, Args)]
pub struct PlotModelArgs {
    /// The sample.
    #[command(flatten)]
    pub sample: SampleArgs,
    /// Temperature sweep in kelvin, `START:STOP:STEP` (inclusive).
    #[arg(long, value_name = "START:STOP:STEP", default_value = "20:1000:5")]
    pub kelvin: String,
    /// File to write, SVG (or PNG when the name ends in `.png`); replaced atomically.
    #[arg(long, value_name = "FILE.svg")]
    pub out: PathBuf,
}

/// Runs `semidrift plot model`.
pub fn run(args: PlotModelArgs, out: &mut dyn Write) -> Result<(), CliError> {
    let sample = args.sample.to_sample()?;
    let temperature = TemperatureArgs {
        kelvin: Some(args.kelvin.clone()),
        celsius: None,
    };
    let temperatures_k = temperature.temperatures_k()?;
    if temperatures_k.len() < 2 {
        return Err(CliError::option(
            "--kelvin",
            &args.kelvin,
            "a plot needs at least two temperatures",
        ));
    }
    let rows = sweep(&args.sample, &sample, &temperature, &temperatures_k)?;
    let out_err = |e| CliError::option("--out", &args.out.display().to_string(), e);
    let png = args
        .out
        .extension()
        .is_some_and(|e| e.eq_ignore_ascii_case("png"));
    if png {
        write_model_png(&args.out, &sample, &rows).map_err(out_err)?;
    } else {
        let svg = model_svg(&sample, &rows).map_err(out_err)?;
        write_atomically(&args.out, svg.as_bytes()).map_err(out_err)?;
    }
    writeln!(
        out,
        "wrote {} ({} temperatures)",
        args.out.display(),
        rows.len()
    )?;
    Ok(())
}
