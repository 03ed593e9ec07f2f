//! `semidrift simulate SPEC`: a virtual lot measured in a simulated chamber,
//! written as chamber CSV (invented data; see `station::truth` for what the
//! simulated truth contains beyond the fitted model).

use super::CliError;
use crate::station::{chamber, output, simulate, spec, truth};
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
    /// Use the scenario's held-out check temperatures instead (and 5 stimuli
    /// evenly over full scale unless --stimuli is given).
    #[arg(long, conflicts_with = "temps")]
    pub check: bool,
    /// Use the scenario's qualification plan: its qualification temperatures
    /// (default every 15 K from -40 to 125 C) and stimuli (default 5 evenly
    /// over full scale) unless --stimuli is given.
    #[arg(long, conflicts_with_all = ["temps", "check"])]
    pub qualification: bool,
    /// Simulated truth variant (overrides the scenario's `truth`; the spec
    /// written with --write-spec records it).
    #[arg(long, value_name = "NAME")]
    pub truth: Option<String>,
    /// Stimuli at each temperature, comma separated (default: the scenario's,
    /// or the plan's for --check and --qualification).
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
    let mut scenario = spec::load(&args.spec).map_err(|e| CliError::Input(e.to_string()))?;
    if let Some(name) = &args.truth {
        scenario.truth = truth::variant(name).ok_or_else(|| {
            CliError::option(
                "--truth",
                name,
                format!("expected one of {}", truth::variant_names()),
            )
        })?;
    }
    if args.parts == 0 {
        return Err(CliError::option(
            "--parts",
            "0",
            "a lot needs at least one part",
        ));
    }
    let (temps_c, plan_stimuli) = match (&args.temps, args.check, args.qualification) {
        (Some(t), _, _) => (t.clone(), scenario.stimuli.clone()),
        (None, _, true) => (
            scenario.qualification_plan_temps_c(),
            scenario.qualification_stimuli(),
        ),
        (None, true, false) => (scenario.check_temps_c.clone(), scenario.check_stimuli()),
        (None, false, false) => (scenario.cal_temps_c.clone(), scenario.stimuli.clone()),
    };
    let plan = simulate::Plan {
        temps_c,
        stimuli: args.stimuli.clone().unwrap_or(plan_stimuli),
    };
    let parts = simulate::draw_parts(&scenario, args.parts, args.seed);
    let rows = simulate::measure(&scenario, &parts, &plan, args.seed)
        .map_err(|e| CliError::Input(format!("{}: full model: {e}", args.spec)))?;
    output::write_atomic(&args.out, &chamber::to_csv_bytes(&rows))
        .map_err(|e| CliError::Input(e.to_string()))?;
    if let Some(path) = &args.write_spec {
        // The scenario file describes the simulated lot just written.
        let scenario = scenario.clone().marked_simulated();
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

#[cfg(test)]
mod tests {
    use super::*;
    use crate::station::truth::{PiezoTruth, ResistivityTruth};

    fn args(dir: &std::path::Path) -> SimulateArgs {
        SimulateArgs {
            spec: "well-logger".into(),
            parts: 2,
            seed: 3,
            temps: None,
            check: false,
            qualification: false,
            truth: None,
            stimuli: None,
            out: dir.join("out.csv"),
            write_spec: None,
        }
    }

    fn rows_per_serial(path: &std::path::Path) -> Vec<usize> {
        let data = chamber::read_file(path).unwrap();
        data.by_serial().values().map(|r| r.len()).collect()
    }

    #[test]
    fn plans_give_their_rows_and_truth_is_recorded() {
        let dir = tempfile::tempdir().unwrap();
        let mut sink = Vec::new();
        // (flags, rows per part): calibration 3 x 3, check 9 x 5,
        // qualification 15 x 5 (every 15 K from -40 C and -20, 25, 85 C),
        // check with explicit stimuli 9 x 2.
        let cal = args(dir.path());
        let mut check = args(dir.path());
        check.check = true;
        let mut qual = args(dir.path());
        qual.qualification = true;
        qual.truth = Some("caughey_thomas_kanda_boltzmann".into());
        qual.write_spec = Some(dir.path().join("spec.toml"));
        let mut check_two = args(dir.path());
        check_two.check = true;
        check_two.stimuli = Some(vec![0.0, 10.0]);
        for (a, per_part) in [(cal, 9), (check, 45), (qual, 75), (check_two, 18)] {
            let out = a.out.clone();
            run(a, &mut sink).unwrap();
            assert_eq!(rows_per_serial(&out), vec![per_part; 2]);
        }
        let written = spec::load(dir.path().join("spec.toml").to_str().unwrap()).unwrap();
        assert_eq!(
            written.truth.resistivity,
            ResistivityTruth::CaugheyThomasBoltzmann
        );
        assert_eq!(written.truth.piezo, PiezoTruth::KandaBoltzmann);
        let mut bad = args(dir.path());
        bad.truth = Some("nope".into());
        let err = run(bad, &mut sink).unwrap_err().to_string();
        assert!(
            err.contains("--truth") && err.contains("arora_richter"),
            "{err}"
        );
    }

    #[test]
    fn qualification_conflicts_with_temps_and_check() {
        use clap::Parser;
        #[derive(Debug, clap::Parser)]
        struct Wrap {
            #[command(flatten)]
            a: SimulateArgs,
        }
        for extra in [&["--check"][..], &["--temps", "0,25"][..]] {
            let mut argv = vec!["x", "well-logger", "--out", "o.csv", "--qualification"];
            argv.extend_from_slice(extra);
            assert!(Wrap::try_parse_from(argv).is_err(), "{extra:?}");
        }
        let ok = Wrap::try_parse_from(["x", "well-logger", "--out", "o.csv", "--qualification"]);
        assert!(ok.is_ok());
    }
}
