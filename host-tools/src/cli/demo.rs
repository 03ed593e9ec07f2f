//! `semidrift demo`: the whole station chain on both demo scenarios.

use super::CliError;
use crate::demo::{run_scenario, summary_text};
use crate::station::output::write_atomic;
use crate::station::scenario::Scenario;
use std::io::Write;
use std::path::PathBuf;

/// Arguments of `semidrift demo`.
#[derive(Debug, clap::Args)]
pub struct DemoArgs {
    /// Output folder.
    #[arg(long, default_value = "semidrift-demo")]
    pub out_dir: PathBuf,
    /// Parts per scenario.
    #[arg(long, default_value_t = 50)]
    pub parts: usize,
    /// No progress bars.
    #[arg(long, short)]
    pub quiet: bool,
}

/// Runs `semidrift demo`.
pub fn run(args: DemoArgs, out: &mut dyn Write) -> Result<(), CliError> {
    if args.parts == 0 {
        return Err(CliError::option("--parts", "0", "need at least one part"));
    }
    let mut summaries = Vec::new();
    for scenario in [
        Scenario::well_logger().with_demo_truth(),
        Scenario::battery_current().with_demo_truth(),
    ] {
        let dir = args.out_dir.join(&scenario.name);
        let s = run_scenario(
            &scenario,
            args.parts,
            &dir,
            &super::progress::Bar::new(args.quiet),
        )
        .map_err(|e| CliError::Input(e.to_string()))?;
        summaries.push(s);
    }
    let text = summary_text(&summaries);
    write_atomic(&args.out_dir.join("summary.txt"), text.as_bytes())
        .map_err(|e| CliError::Input(e.to_string()))?;
    write!(out, "{text}")?;
    writeln!(out, "everything under {}/", args.out_dir.display())?;
    Ok(())
}
