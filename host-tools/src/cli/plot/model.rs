//! `semidrift plot model`: the model plot of one sample as an SVG (or PNG) file.

use crate::cli::CliError;
use crate::cli::model::sweep;
use crate::cli::range::TemperatureArgs;
use crate::cli::sample_args::SampleArgs;
use crate::physics::carriers;
use crate::plot::write_model_plot;
use clap::Args;
use std::io::Write;
use std::path::PathBuf;

/// Step of the default sweep in kelvin: smooth curves, ~200 points.
const DEFAULT_STEP_K: f64 = 5.0;

/// Options of `semidrift plot model`.
#[derive(Debug, Args)]
pub struct PlotModelArgs {
    /// The sample.
    #[command(flatten)]
    pub sample: SampleArgs,
    /// Temperature sweep in kelvin, `START:STOP:STEP` (inclusive); default: the
    /// material's whole model range in 5 K steps (20:1000:5 for Si).
    #[arg(long, value_name = "START:STOP:STEP")]
    pub kelvin: Option<String>,
    /// File to write, SVG (or PNG when the name ends in `.png`); replaced atomically.
    #[arg(long, value_name = "FILE.svg")]
    pub out: PathBuf,
}

/// Runs `semidrift plot model`.
pub fn run(args: PlotModelArgs, out: &mut dyn Write) -> Result<(), CliError> {
    let sample = args.sample.to_sample()?;
    let kelvin = args.kelvin.clone().unwrap_or_else(|| {
        let max_k = carriers::t_max_k(sample.material);
        format!("{}:{max_k}:{DEFAULT_STEP_K}", carriers::T_MIN_K)
    });
    let temperature = TemperatureArgs {
        kelvin: Some(kelvin.clone()),
        celsius: None,
    };
    let temperatures_k = temperature.temperatures_k()?;
    if temperatures_k.len() < 2 {
        return Err(CliError::option(
            "--kelvin",
            &kelvin,
            "a plot needs at least two temperatures",
        ));
    }
    let rows = sweep(&args.sample, &sample, &temperature, &temperatures_k)?;
    let out_err = |e| CliError::option("--out", &args.out.display().to_string(), e);
    write_model_plot(&args.out, &sample, &rows).map_err(out_err)?;
    writeln!(
        out,
        "wrote {} ({} temperatures)",
        args.out.display(),
        rows.len()
    )?;
    Ok(())
}
