//! `semidrift simulate SPEC`: a virtual lot measured in a simulated chamber,
//! written as chamber CSV (invented data; see `station::truth` for what the
//! simulated truth contains beyond the fitted model).

use super::CliError;
use crate::station::{output, simulate, spec, truth};
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
    let max_parts = crate::station::limits::MAX_SIMULATED_PARTS;
    if args.parts == 0 || args.parts > max_parts {
        return Err(CliError::option(
            "--parts",
            &args.parts.to_string(),
            format!("a lot has 1 to {max_parts} parts"),
        ));
    }
    let spec_path = std::path::Path::new(&args.spec);
    output::check_not_input(&args.out, &[spec_path])?;
    if let Some(path) = &args.write_spec {
        output::check_not_input(path, &[spec_path, args.out.as_path()])?;
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
    check_plan(&plan)?;
    let mut failure = None;
    let mut rows = 0;
    output::write_atomic_with(&args.out, |_, file| {
        let mut buffered = std::io::BufWriter::new(file);
        match simulate::write_lot(&scenario, args.parts, &plan, args.seed, &mut buffered) {
            Ok(n) => rows = n,
            Err(simulate::SimulateError::Io(e)) => return Err(e),
            Err(e) => {
                failure = Some(e.to_string());
                return Err(std::io::Error::other("simulation failed"));
            }
        }
        buffered.flush()
    })
    .map_err(|e| match failure.take() {
        Some(f) => CliError::Input(format!("{}: {f}", args.spec)),
        None => CliError::from(e),
    })?;
    if let Some(path) = &args.write_spec {
        // The scenario file describes the simulated lot just written.
        let scenario = scenario.clone().marked_simulated();
        output::write_atomic(path, spec::to_toml(&scenario).as_bytes())
            .map_err(|e| CliError::Input(e.to_string()))?;
    }
    // One summary line, as every station command ends with: each names its own counts.
    writeln!(
        out,
        "simulated {} parts x {} temperatures x {} stimuli = {} rows -> {}",
        args.parts,
        plan.temps_c.len(),
        plan.stimuli.len(),
        rows,
        args.out.display()
    )?;
    Ok(())
}

/// Checks the chamber plan: 1 to `MAX_PLAN_POINTS` temperatures inside the
/// station's limits and as many finite stimuli.
fn check_plan(plan: &simulate::Plan) -> Result<(), CliError> {
    use crate::station::limits::{MAX_PLAN_POINTS, check_temperature_c};
    for (option, values) in [("--temps", &plan.temps_c), ("--stimuli", &plan.stimuli)] {
        let shown = || {
            values
                .iter()
                .map(|v| v.to_string())
                .collect::<Vec<_>>()
                .join(",")
        };
        if values.is_empty() || values.len() > MAX_PLAN_POINTS {
            return Err(CliError::option(
                option,
                &shown(),
                format!("a plan has 1 to {MAX_PLAN_POINTS} values"),
            ));
        }
        for &v in values.iter() {
            let checked = if option == "--temps" {
                check_temperature_c(v)
            } else {
                crate::station::limits::check_reading(v)
            };
            checked.map_err(|m| CliError::option(option, &v.to_string(), m))?;
        }
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::station::chamber;
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
