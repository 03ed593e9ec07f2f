//! `semidrift apply PART_OR_IMAGE CSV`: compensates recorded raw rows as the
//! firmware would and reports each row's error against its stimulus.

use super::CliError;
use super::table::{PartOrigin, check_part_for, read_part_for};
use crate::station::apply::{
    AppliedRow, Compensation, ImageCompensation, ModelCompensation, apply_rows,
};
use crate::station::{chamber, output, pipeline};
use std::io::Write;
use std::path::PathBuf;

/// Arguments of `semidrift apply`.
#[derive(Debug, clap::Args)]
pub struct ApplyArgs {
    /// A part file (f64 model) or a table image (runtime crate's
    /// arithmetic) [with --db and --serial: an image file or nothing (the
    /// part's latest recorded image); with --crc: nothing].
    #[arg(required_unless_present_any = ["serial", "crc"])]
    pub part_or_image: Option<PathBuf>,
    /// Chamber CSV with the rows to compensate (with --serial or --crc and
    /// no image file: the only file argument).
    #[arg(required_unless_present_any = ["serial", "crc"])]
    pub csv: Option<PathBuf>,
    // Documented options read alike across commands (verify.rs, part_file.rs); each is its own.
    /// The part file, when the first argument is an image (ADC scale and span).
    #[arg(long, conflicts_with_all = ["serial", "crc"])]
    pub against: Option<PathBuf>,
    /// Design file the part was fitted on: refused (exit 2) unless the
    /// part records that design's content hash.
    #[arg(long)]
    pub design: Option<PathBuf>,
    /// JSON on stdout.
    #[arg(long)]
    pub json: bool,
    /// Station database: record this run as the part's end-of-line check of
    /// the image (rows inside the operating range judged against the
    /// scenario's budget; the image must be the first argument and its part
    /// recorded there).
    #[arg(long)]
    pub db: Option<PathBuf>,
    #[command(flatten)]
    pub from_db: super::record::FromDbArgs,
    /// With --db: apply the table image recorded with this CRC-32 (as `lot
    /// status` prints it), with its own part, instead of files.
    #[arg(long, requires = "db", value_name = "CRC32", value_parser = super::record::parse_crc)]
    pub crc: Option<u32>,
}

/// The `--json` report.
#[derive(Debug, serde::Serialize)]
struct ApplyReport<'a> {
    method: &'a str,
    max_abs_error_ppm: f64,
    rows: Vec<AppliedRow>,
    /// Whether the part was fitted to simulated data.
    simulated: bool,
    /// Caution (`station::output::caution_for`).
    caution: String,
}

/// Runs `semidrift apply`.
pub fn run(args: ApplyArgs, out: &mut dyn Write) -> Result<(), CliError> {
    super::record::check_lot_narrows(&args.from_db, args.crc)?;
    if args.from_db.serial.is_some() || args.crc.is_some() {
        return run_recorded(args, out);
    }
    let (Some(first_path), Some(csv)) = (&args.part_or_image, &args.csv) else {
        // clap requires both unless --serial or --crc is given.
        return Err(CliError::Input(
            "apply: give a part file or table image, then the chamber CSV".to_string(),
        ));
    };
    use crate::station::limits::{MAX_IMAGE_BYTES, MAX_JSON_BYTES, read_capped};
    let first = read_capped(
        first_path,
        MAX_IMAGE_BYTES.max(MAX_JSON_BYTES),
        "table image or part file",
    )
    .map_err(|m| CliError::Input(format!("{}: {m}", first_path.display())))?;
    // Decided by content: an image starts with its magic, a part file is a
    // JSON object.
    let is_image = first.starts_with(IMAGE_MAGIC);
    let is_json = first
        .iter()
        .find(|b| !b.is_ascii_whitespace())
        .is_some_and(|&b| b == b'{');
    if !is_image && !is_json {
        return Err(CliError::Input(format!(
            "{}: not a table image or part file ({} bytes; an image starts with 'SDRT', a part file is JSON)",
            first_path.display(),
            first.len()
        )));
    }
    let part_path = if is_image {
        args.against.clone().ok_or_else(|| {
            CliError::option(
                "--against",
                "",
                "an image needs the part file it was built from",
            )
        })?
    } else {
        first_path.clone()
    };
    let part = read_part_for(&part_path, args.design.as_deref())?;
    let recording = match &args.db {
        Some(_) if !is_image => {
            return Err(CliError::option(
                "--db",
                &first_path.display().to_string(),
                "an end-of-line check is of a table image: give the image, with --against PART",
            ));
        }
        Some(db) => Some(super::record::prepare(db, &part_path)?),
        None => None,
    };
    let inputs = Inputs {
        first: &first,
        first_label: first_path.display().to_string(),
        is_image,
        part: &part,
        part_label: format!("part file {}", part_path.display()),
        csv,
        recording,
    };
    apply(inputs, args.json, out)
}

/// What every image starts with.
const IMAGE_MAGIC: &[u8] = b"SDRT";

/// `apply` with the image and part from the database (`--serial`, `--crc`).
fn run_recorded(args: ApplyArgs, out: &mut dyn Write) -> Result<(), CliError> {
    let (image_file, csv) = match (&args.part_or_image, &args.csv) {
        (Some(csv), None) => (None, csv),
        (Some(image), Some(csv)) => (Some(image.as_path()), csv),
        (None, _) => {
            return Err(CliError::Input(
                "apply: give the chamber CSV with the rows to compensate (with --serial or --crc, the last file argument)".to_string(),
            ));
        }
    };
    let r = super::record::recorded_inputs(
        super::record::db_path(&args.db, "--serial/--crc")?,
        &args.from_db,
        args.crc,
        image_file,
    )?;
    if !r.image.starts_with(IMAGE_MAGIC) {
        return Err(CliError::Input(format!(
            "{}: not a table image (an image starts with 'SDRT'); with --serial the file before the CSV is the image",
            r.image_label
        )));
    }
    // Same recorded-part check as verify.rs: each command resolves its own inputs.
    let p = r.part;
    check_part_for(
        &p.part,
        PartOrigin::Recorded(&p.label),
        args.design.as_deref(),
    )?;
    let inputs = Inputs {
        first: &r.image,
        first_label: r.image_label.clone(),
        is_image: true,
        part: &p.part,
        part_label: p.label.clone(),
        csv,
        recording: Some((p.db, p.fit_id)),
    };
    apply(inputs, args.json, out)
}

/// What `apply` works on, wherever it came from.
struct Inputs<'a> {
    /// The image's or part file's bytes.
    first: &'a [u8],
    /// How messages name them.
    first_label: String,
    /// Whether `first` is an image (else a part file).
    is_image: bool,
    /// The part.
    part: &'a crate::station::part_file::PartFile,
    /// How messages name the part.
    part_label: String,
    /// The chamber CSV.
    csv: &'a std::path::Path,
    /// Where to record the end-of-line check.
    recording: Option<(crate::stationdb::Db, i64)>,
}

/// Compensates the CSV's rows of the part and reports them.
fn apply(inputs: Inputs<'_>, json: bool, out: &mut dyn Write) -> Result<(), CliError> {
    let Inputs {
        first,
        first_label,
        is_image,
        part,
        part_label,
        csv,
        mut recording,
    } = inputs;
    let curves = pipeline::part_curves(part).map_err(|e| CliError::Input(e.to_string()))?;
    let data = chamber::read_file(csv).map_err(|e| CliError::Input(e.to_string()))?;
    super::report_rows(&data);
    let rows = super::part_rows(&data, csv, &part.serial)?;
    let model_comp;
    let image_comp;
    let method: &dyn Compensation = if is_image {
        image_comp = ImageCompensation::new(
            first,
            part.scenario.output_adc.lsb(),
            part.scenario.signal_adc.lsb(),
        )
        .map_err(|e| CliError::Input(format!("{first_label}: {e}")))?;
        let view = compensate::TableView::parse(first)
            .map_err(|e| CliError::Input(format!("{first_label}: {e}")))?;
        pipeline::check_image_for_part(&view, part)
            .map_err(|e| CliError::Input(format!("{first_label}: {e} ({part_label})")))?;
        &image_comp
    } else {
        model_comp = ModelCompensation::for_part(part, &curves);
        &model_comp
    };
    let applied = apply_rows(part, &curves, method, &rows);
    if let Some((db, fit_id)) = &mut recording {
        let check =
            crate::stationdb::run::eol_check(part, &curves, first, &rows, part.scenario.budget_ppm)
                .map_err(|e| CliError::Input(format!("{first_label}: {e}")))?;
        super::record::eol(db, *fit_id, first, &check)?;
    }
    // Rows on the ADC's rails are reported (flag `clipped`) but not judged.
    let max = applied
        .iter()
        .filter(|r| !r.clipped)
        .fold(0.0f64, |m, r| m.max(r.error_ppm.abs()));
    if json {
        let report = ApplyReport {
            method: if is_image { "image" } else { "model" },
            max_abs_error_ppm: max,
            rows: applied,
            simulated: part.scenario.simulated,
            caution: output::caution_for(part.scenario.simulated),
        };
        out.write_all(&output::to_json_bytes(&report))?;
    } else {
        writeln!(
            out,
            "serial        chamber_c  stimulus  t_est_c  compensated  error_ppm  raw_error_ppm"
        )?;
        for r in &applied {
            writeln!(
                out,
                "{:<12}  {:>9.2}  {:>8.3}  {:>7.3}  {:>11.5}  {:>9.1}  {:>13.1}{}",
                r.serial,
                r.chamber_c,
                r.stimulus,
                r.t_est_c,
                r.compensated,
                r.error_ppm,
                r.raw_error_ppm,
                if r.clipped {
                    "  clipped (ADC rail)".to_string()
                } else if !r.runtime_status.is_empty() {
                    format!("  outside the table: {}", r.runtime_status)
                } else {
                    String::new()
                }
            )?;
        }
        writeln!(
            out,
            "worst |error| {max:.1} ppm of span over {} rows",
            applied.len()
        )?;
        writeln!(out, "{}", output::caution_for(part.scenario.simulated))?;
    }
    if let Some(e) = data.errors.first() {
        return Err(CliError::Input(format!(
            "{} bad row(s) skipped, first: {e}",
            data.errors.len()
        )));
    }
    Ok(())
}
