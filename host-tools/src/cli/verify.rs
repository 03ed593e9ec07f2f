//! `semidrift verify IMAGE --against PART`: the image run by the runtime
//! crate's own code on a dense grid against the fitted part's full model.

use super::CliError;
use super::table::{PartOrigin, budget_ppm_of, check_part_for, read_part_for};
use crate::station::{output, pipeline};
use std::io::Write;
use std::path::PathBuf;

/// Arguments of `semidrift verify`.
#[derive(Debug, clap::Args)]
pub struct VerifyArgs {
    /// Table image (`.bin`) [with --db: or --crc, or --serial alone for
    /// the part's latest recorded image].
    #[arg(required_unless_present_any = ["serial", "crc"], conflicts_with = "crc")]
    pub image: Option<PathBuf>,
    /// Part file the image was built from [with --db: or --serial, or
    /// --crc for the image's own part].
    #[arg(long, required_unless_present_any = ["serial", "crc"], conflicts_with_all = ["serial", "crc"])]
    pub against: Option<PathBuf>,
    /// Design file the part was fitted on: refused (exit 2) unless the
    /// part records that design's content hash.
    #[arg(long)]
    pub design: Option<PathBuf>,
    // Documented options read alike (part_file.rs, apply.rs); each is its own.
    /// Total budget in ppm of span (default: the scenario's).
    #[arg(long, allow_negative_numbers = true)]
    pub budget: Option<f64>,
    /// Temperatures of the dense grid [default: 20001, or 1001 for an image
    /// with a 2-D correction].
    #[arg(long)]
    pub temps: Option<usize>,
    /// Stimuli (raw signals) of the dense grid [default: 6, or 101 for an
    /// image with a 2-D correction].
    #[arg(long)]
    pub stimuli: Option<usize>,
    /// JSON report on stdout.
    #[arg(long)]
    pub json: bool,
    /// Station database: also record the verification (and the image, if
    /// new) under the part's recorded fit.
    #[arg(long)]
    pub db: Option<PathBuf>,
    #[command(flatten)]
    pub from_db: super::record::FromDbArgs,
    /// With --db: the table image recorded with this CRC-32 (as `lot
    /// status` prints it), against its own part, instead of files.
    #[arg(long, requires = "db", value_name = "CRC32", value_parser = super::record::parse_crc)]
    pub crc: Option<u32>,
}

/// Runs `semidrift verify`; exit 1 when over budget.
pub fn run(args: VerifyArgs, out: &mut dyn Write) -> Result<(), CliError> {
    super::record::check_lot_narrows(&args.from_db, args.crc)?;
    let (part, image, image_label, part_label, mut recording) = match (&args.image, &args.against) {
        (Some(image_path), Some(against)) => {
            let part = read_part_for(against, args.design.as_deref())?;
            let image = read_image(image_path)?;
            let recording = match &args.db {
                Some(db) => Some(super::record::prepare(db, against)?),
                None => None,
            };
            let label = format!("part file {}", against.display());
            (
                part,
                image,
                image_path.display().to_string(),
                label,
                recording,
            )
        }
        (image_path, _) => {
            let r = super::record::recorded_inputs(
                super::record::db_path(&args.db, "--serial/--crc")?,
                &args.from_db,
                args.crc,
                image_path.as_deref(),
            )?;
            let p = r.part;
            check_part_for(
                &p.part,
                PartOrigin::Recorded(&p.label),
                args.design.as_deref(),
            )?;
            (
                p.part,
                r.image,
                r.image_label,
                p.label,
                Some((p.db, p.fit_id)),
            )
        }
    };
    let origin = match &args.against {
        Some(path) => PartOrigin::File(path),
        None => PartOrigin::Recorded(&part_label),
    };
    let budget = budget_ppm_of(args.budget, &part, origin)?;
    let (temps_default, stimuli_default) = compensate::TableView::parse(&image)
        .map(|v| pipeline::dense_counts(&pipeline::plan_of(&v)))
        .unwrap_or((pipeline::DENSE_TEMPS, pipeline::DENSE_STIMULI));
    let temps = args.temps.unwrap_or(temps_default);
    let stimuli = args.stimuli.unwrap_or(stimuli_default);
    use crate::station::limits::{MAX_DENSE_PER_AXIS, MAX_DENSE_POINTS};
    for (option, n) in [("--temps", temps), ("--stimuli", stimuli)] {
        if !(2..=MAX_DENSE_PER_AXIS).contains(&n) {
            return Err(CliError::option(
                option,
                &n.to_string(),
                format!("the dense grid has 2 to {MAX_DENSE_PER_AXIS} points per axis"),
            ));
        }
    }
    if temps * stimuli > MAX_DENSE_POINTS {
        return Err(CliError::option(
            "--temps/--stimuli",
            &format!("{temps}/{stimuli}"),
            format!(
                "{} points; the dense grid has at most {MAX_DENSE_POINTS}",
                temps * stimuli
            ),
        ));
    }
    let curves = pipeline::part_curves(&part).map_err(|e| CliError::Input(e.to_string()))?;
    let report =
        pipeline::verify(&image, &part, &curves, budget, temps, stimuli).map_err(|e| match e {
            pipeline::StepError::NotThisPart { .. } => {
                CliError::Input(format!("{image_label}: {e} ({part_label})"))
            }
            e => CliError::Input(format!("{image_label}: {e}")),
        })?;
    if let Some((db, fit_id)) = &mut recording {
        super::record::verification(db, *fit_id, &image, &report)?;
    }
    // JSON or one line, as every command reports (eol.rs, flash.rs); the line differs.
    if args.json {
        out.write_all(&output::to_json_bytes(&report))?;
    } else {
        writeln!(
            out,
            "{}: max {:.3} ppm, rms {:.3} ppm, worst at {:.3} C / {} over {} points; analytic bound {:.3} ppm; allowance {:.3} of budget {} ppm: {}",
            part.serial,
            report.max_error_ppm,
            report.rms_error_ppm,
            report.worst_t_c,
            report.worst_stimulus,
            report.points,
            report.analytic_bound_ppm,
            report.table_allowance_ppm,
            report.budget_ppm,
            if report.pass { "PASS" } else { "FAIL" }
        )?;
        writeln!(
            out,
            "caution: {} is against the part's fitted model, not against the part itself; \
             check the part at held-out temperatures (semidrift apply) before trusting it where \
             a reading protects people or property{}",
            if report.pass { "PASS" } else { "FAIL" },
            if report.simulated {
                format!("; {}", output::SIMULATED_CAUTION)
            } else {
                String::new()
            }
        )?;
    }
    if report.pass {
        Ok(())
    } else {
        Err(CliError::CheckFailed(format!(
            "{image_label}: table error {:.3} ppm exceeds the allowance {:.3} ppm",
            report.max_error_ppm, report.table_allowance_ppm
        )))
    }
}

/// Reads a table image, at most `limits::MAX_IMAGE_BYTES`.
pub fn read_image(path: &std::path::Path) -> Result<Vec<u8>, CliError> {
    use crate::station::limits::{MAX_IMAGE_BYTES, read_capped};
    read_capped(path, MAX_IMAGE_BYTES, "table image")
        .map_err(|m| CliError::Input(format!("{}: {m}", path.display())))
}
