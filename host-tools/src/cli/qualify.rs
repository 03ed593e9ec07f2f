//! `semidrift qualify SPEC QUAL.csv --out DESIGN`: learns a design from a
//! qualification lot (parts of one design measured at many temperatures and
//! stimuli) and measures the model error of a production plan on it.

use super::CliError;
use crate::station::design::{self, DesignFile, ProductionPlan};
use crate::station::{chamber, model_shapes, output, spec};
use std::io::Write;
use std::path::PathBuf;

/// Arguments of `semidrift qualify`.
#[derive(Debug, clap::Args)]
#[command(after_help = super::CAUTIONS)]
pub struct QualifyArgs {
    /// Scenario: `well-logger`, `battery-current`, a scenario TOML or an element spec TOML.
    pub spec: String,
    /// Qualification chamber CSV (`serial, chamber_c, stimulus, output,
    /// temp_signal`): 10 or more parts, 8 or more temperatures spanning the
    /// operating range and beyond, 5 or more stimuli per temperature.
    pub csv: PathBuf,
    /// Design file to write.
    #[arg(long, short)]
    pub out: PathBuf,
    /// Production calibration temperatures in C, comma separated (default:
    /// the scenario's calibration temperatures).
    #[arg(long, value_delimiter = ',', allow_hyphen_values = true)]
    pub plan: Option<Vec<f64>>,
    /// Production stimuli, comma separated (default: the scenario's).
    #[arg(long, value_delimiter = ',', allow_hyphen_values = true)]
    pub plan_stimuli: Option<Vec<f64>>,
    /// Print a JSON summary on stdout instead of the text report.
    #[arg(long)]
    pub json: bool,
    /// Also cross-validate every three-temperature production plan among the
    /// qualification temperatures that spans the operating range (to within
    /// 15 K) and list the best five (one qualification run per plan).
    #[arg(long)]
    pub suggest_plan: bool,
}

/// The `--json` summary.
#[derive(Debug, serde::Serialize)]
struct Summary<'a> {
    design: String,
    hash: &'a str,
    parts: usize,
    temps_c: &'a [f64],
    stimuli: &'a [f64],
    plan: &'a design::learn::PlanError,
    movement: &'a [design::learn::Movement],
    modes_used: [usize; 4],
    outlier: design::OutlierLimits,
    #[serde(skip_serializing_if = "Vec::is_empty")]
    suggested_plans: Vec<design::learn::PlanError>,
}

/// Runs `semidrift qualify`.
pub fn run(args: QualifyArgs, out: &mut dyn Write) -> Result<(), CliError> {
    let scenario = spec::load(&args.spec).map_err(|e| CliError::Input(e.to_string()))?;
    let data = chamber::read_file(&args.csv).map_err(|e| CliError::Input(e.to_string()))?;
    super::report_rows(&data);
    output::check_not_input(
        &args.out,
        &[args.csv.as_path(), std::path::Path::new(&args.spec)],
    )?;
    if let Some(e) = data.errors.first() {
        return Err(CliError::Input(format!(
            "{e} ({} bad row(s); a design is learned only from a clean qualification file)",
            data.errors.len()
        )));
    }
    let plan = ProductionPlan {
        temps_c: args
            .plan
            .clone()
            .unwrap_or_else(|| scenario.cal_temps_c.clone()),
        stimuli: args
            .plan_stimuli
            .clone()
            .unwrap_or_else(|| scenario.stimuli.clone()),
    };
    if plan
        .temps_c
        .iter()
        .chain(&plan.stimuli)
        .any(|x| !x.is_finite())
    {
        return Err(CliError::option(
            "--plan",
            "",
            "values must be finite numbers",
        ));
    }
    let curves = model_shapes::shapes_for(&scenario)
        .map_err(|e| CliError::Input(format!("{}: full model: {e}", args.spec)))?;
    let file = args.csv.display().to_string();
    let d = design::qualify(&scenario, &curves, &data, &file, &plan)
        .map_err(|e| CliError::Input(e.to_string()))?;
    output::write_atomic(&args.out, &d.to_bytes()).map_err(|e| CliError::Input(e.to_string()))?;
    let suggested = if args.suggest_plan {
        design::suggest_plans(&scenario, &curves, &data, &file, &plan.stimuli, 5)
    } else {
        Vec::new()
    };
    if args.json {
        let s = Summary {
            design: args.out.display().to_string(),
            hash: &d.hash,
            parts: d.qualification.parts,
            temps_c: &d.qualification.temps_c,
            stimuli: &d.qualification.stimuli,
            plan: &d.plan_error,
            movement: &d.movement,
            modes_used: d.core.modes_used(),
            outlier: d.outlier,
            suggested_plans: suggested,
        };
        out.write_all(&output::to_json_bytes(&s))?;
        return Ok(());
    }
    write!(out, "{}", report_text(&d))?;
    if !suggested.is_empty() {
        writeln!(
            out,
            "best three-temperature plans (worst held-out error, ppm of span: operating range / everywhere):"
        )?;
        for p in &suggested {
            writeln!(
                out,
                "  {:?} C: {:.1} / {:.1}",
                p.plan.temps_c, p.operating_range_ppm, p.all_ppm
            )?;
        }
    }
    writeln!(
        out,
        "design -> {} (hash {})",
        args.out.display(),
        &d.hash[..16]
    )?;
    Ok(())
}

/// The text report of a design.
pub fn report_text(d: &DesignFile) -> String {
    let q = &d.qualification;
    let p = &d.plan_error;
    let mut s = format!(
        "qualification lot: {} parts x {} temperatures ({}..{} C) x {} stimuli\n",
        q.parts,
        q.temps_c.len(),
        q.temps_c.first().copied().unwrap_or(f64::NAN),
        q.temps_c.last().copied().unwrap_or(f64::NAN),
        q.stimuli.len()
    );
    s.push_str("curve         moved from physics   ridge    modes  variance explained\n");
    for (m, f) in d.movement.iter().zip(&d.core.families) {
        let modes = if f.modes_used == design::model::ALL_MODES {
            format!("all {}", f.modes.len())
        } else {
            f.modes_used.to_string()
        };
        s.push_str(&format!(
            "{:<12}  {:>9.3} {:<11} {:>7.0e}  {:>5}  {:>6.1} %\n",
            m.family.name(),
            m.max,
            m.unit,
            m.lambda,
            modes,
            m.explained * 100.0
        ));
    }
    s.push_str(&format!(
        "production plan {:?} C x {:?} (qualification points used: {:?} C x {:?})\n",
        p.plan.temps_c, p.plan.stimuli, p.used_temps_c, p.used_stimuli
    ));
    s.push_str(&format!(
        "model error, worst held-out reading over the lot (each part calibrated on the others' design):\n  inside the plan's span {:.1} ppm, inside the operating range {:.1} ppm (budgeted), everywhere {:.1} ppm; choice criterion {:.1} ppm\n",
        p.inside_plan_ppm, p.operating_range_ppm, p.all_ppm, p.rms_ppm
    ));
    s.push_str(&format!(
        "outlier limits for production parts: {} lot standard deviations, fit residual {:.1} ppm\n",
        d.outlier.max_sigma, d.outlier.max_residual_ppm
    ));
    s
}
