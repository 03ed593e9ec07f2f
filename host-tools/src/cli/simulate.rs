//! `semidrift simulate SPEC`: a virtual lot measured in a simulated chamber,
//! written as chamber CSV (invented data; see `station::truth` for what the
//! simulated truth contains beyond the fitted model).

use super::CliError;
use crate::station::{chamber, output, simulate, spec};
use std::io::Write;
use std::path::PathBuf;

/// Arguments of `semidrift simulate`.
#[derive(Debug, clap::Args)]
pub struct SimulateArgs {
    /// Scenario: `well-logger`, `battery-current`, a scenario TOML or an element spec TOML.
    pub spec: String,
    /// Number of parts in the lot.
    #[arg(long, default_value_t = 50)]
    pub parts: usize,
    /// Random seed (the same seed gives the same bytes).
    #[arg(long, default_value_t = 1)]
    pub seed: u64,
    /// Chamber temperatures in C, comma separated (default: the scenario's calibration temperatures).
    #[arg(long, value_delimiter = ',', allow_hyphen_values = true)]
    pub temps: Option<Vec<f64>>,
    /// Use the scenario's held-out check temperatures instead.
    #[arg(long, conflicts_with = "temps")]
    pub check: bool,
    /// Stimuli at each temperature, comma separated (default: the scenario's).
    #[arg(long, value_delimiter = ',', allow_hyphen_values = true)]
    pub stimuli: Option<Vec<f64>>,
    /// Output chamber CSV.
    #[arg(long, short)]
    pub out: PathBuf,
    /// Also write the resolved scenario as TOML here (input for `calibrate`).
    #[arg(long)]
    pub write_spec: Option<PathBuf>,
}

/// Runs `semidrift simulate`.
pub fn run(args: SimulateArgs, out: &mut dyn Write) -> Result<(), CliError> {
    let scenario = spec::load(&args.spec).map_err(|e| CliError::Input(e.to_string()))?;
    if args.parts == 0 {
        return Err(CliError::option(
            "--parts",
            "0",
            "a lot needs at least one part",
        ));
    }
    let temps_c = match (&args.temps, args.check) {
        (Some(t), _) => t.clone(),
        (None, true) => scenario.check_temps_c.clone(),
        (None, false) => scenario.cal_temps_c.clone(),
    };
    let plan = simulate::Plan {
        temps_c,
        stimuli: args
            .stimuli
            .clone()
            .unwrap_or_else(|| scenario.stimuli.clone()),
    };
    let parts = simulate::draw_parts(&scenario, args.parts, args.seed);
    let rows = simulate::measure(&scenario, &parts, &plan, args.seed)
        .map_err(|e| CliError::Input(format!("{}: full model: {e}", args.spec)))?;
    output::write_atomic(&args.out, &chamber::to_csv_bytes(&rows))
        .map_err(|e| CliError::Input(e.to_string()))?;
    if let Some(path) = &args.write_spec {
        output::write_atomic(path, spec::to_toml(&scenario).as_bytes())
            .map_err(|e| CliError::Input(e.to_string()))?;
    }
    writeln!(
        out,
        "simulated {} parts x {} temperatures x {} stimuli = {} rows -> {}",
        parts.len(),
        plan.temps_c.len(),
        plan.stimuli.len(),
        rows.len(),
        args.out.display()
    )?;
    Ok(())
}
