//! `semidrift table PART --budget PPM`: the least-flash table image meeting
//! the budget, its budget terms, and the export for flashing.

use super::CliError;
use super::choices::{AxisArg, ExportFormatArg, InterpArg, NumFormatArg, SignalUnitArg};
use crate::station::choose::Restrict;
use crate::station::export::{ExportFormat, export_with};
use crate::station::part_file::PartFile;
use crate::station::table::AxisKind;
use crate::station::{output, pipeline};
use std::io::Write;
use std::path::{Path, PathBuf};

/// Arguments of `semidrift table`.
#[derive(Debug, clap::Args)]
pub struct TableArgs {
    /// Part file written by `calibrate` (or `--serial` with `--db`).
    #[arg(required_unless_present = "serial", conflicts_with = "serial")]
    pub part: Option<PathBuf>,
    /// Design file the part was fitted on: refused (exit 2) unless the
    /// part records that design's content hash.
    #[arg(long)]
    pub design: Option<PathBuf>,
    /// Total error budget in ppm of span (default: the scenario's).
    #[arg(long, allow_negative_numbers = true)]
    pub budget: Option<f64>,
    /// Export format.
    #[arg(long, value_enum, default_value_t = ExportFormatArg::Bin)]
    pub format: ExportFormatArg,
    /// Flash address of the image (Intel HEX), e.g. 0x0800F000.
    #[arg(long, default_value = "0x08000000", value_parser = parse_address)]
    pub address: u32,
    /// Symbol name in Rust/C exports.
    #[arg(long, default_value = "drift_table")]
    pub name: String,
    /// Output file (default: the part file's name with the format's
    /// extension; with --serial: SERIAL with it, in the current folder).
    #[arg(long, short)]
    pub out: Option<PathBuf>,
    /// Print the outcome as JSON instead of text.
    #[arg(long)]
    pub json: bool,
    /// Use only this number format (e.g. `q` for a part without an FPU)
    /// [default: the least flash of both].
    #[arg(long, value_enum, value_name = "FORMAT")]
    pub number_format: Option<NumFormatArg>,
    /// Use only this interpolation [default: the least flash of linear,
    /// monotone cubic and, for an element with a bow, 2-D].
    #[arg(long, value_enum, value_name = "KIND")]
    pub interpolation: Option<InterpArg>,
    /// Temperature signal the image takes: `ohm` (the spec's units, as the
    /// chamber CSV records it) or `adc-code` (whole codes of the spec's
    /// temperature-signal ADC, as firmware reads them).
    #[arg(long, value_enum, default_value_t = SignalUnitArg::Ohm, value_name = "UNIT")]
    pub signal_unit: SignalUnitArg,
    /// Tabulate the correction over this axis only: `temperature` (a
    /// thermometer map, then the channels over degrees Celsius) or `signal`
    /// (the channels directly over the temperature signal: one look-up per
    /// temperature update on the part) [default: the least flash of both].
    #[arg(long, value_enum, value_name = "AXIS")]
    pub channel_axis: Option<AxisArg>,
    /// Station database: also record the image (bytes and CRC) under the
    /// part's recorded fit (the part file must be recorded there).
    #[arg(long)]
    pub db: Option<PathBuf>,
    #[command(flatten)]
    pub from_db: super::record::FromDbArgs,
}

/// Parses a decimal or 0x-prefixed hexadecimal address.
pub fn parse_address(s: &str) -> Result<u32, String> {
    let r = match s.strip_prefix("0x").or_else(|| s.strip_prefix("0X")) {
        Some(h) => u32::from_str_radix(h, 16),
        None => s.parse(),
    };
    r.map_err(|e| format!("'{s}' is not a 32-bit address: {e}"))
}

/// Reads a part file, mapping errors to exit code 2.
pub fn read_part(path: &std::path::Path) -> Result<PartFile, CliError> {
    PartFile::read(path).map_err(|e| CliError::Input(e.to_string()))
}

/// The line of the first line of `path` containing `key` (1 if none).
fn line_in(path: &std::path::Path, key: &str) -> usize {
    crate::station::limits::read_text_capped(
        path,
        crate::station::limits::MAX_JSON_BYTES,
        "part file",
    )
    .ok()
    .and_then(|t| t.lines().position(|l| l.contains(key)))
    .map_or(1, |k| k + 1)
}

/// Where a command's part came from, for the messages that name it.
#[derive(Debug, Clone, Copy)]
pub enum PartOrigin<'a> {
    /// A part file.
    File(&'a std::path::Path),
    /// A part recorded in the station database, named by this label
    /// (`DB: lot 'L', part S`).
    Recorded(&'a str),
}

impl PartOrigin<'_> {
    /// An error at the field `field` (found in a part file on the first
    /// line with the JSON key `key`, else on line 1).
    fn at(&self, key: Option<&str>, field: &str, message: impl std::fmt::Display) -> CliError {
        match self {
            PartOrigin::File(path) => CliError::at(
                &path.display().to_string(),
                key.map_or(1, |k| line_in(path, &format!("\"{k}\""))),
                field,
                message,
            ),
            PartOrigin::Recorded(label) => {
                CliError::Input(format!("{label}: field '{field}': {message}"))
            }
        }
    }

    /// How messages name the part's source.
    pub fn label(&self) -> String {
        match self {
            PartOrigin::File(path) => path.display().to_string(),
            PartOrigin::Recorded(label) => label.to_string(),
        }
    }
}

/// Reads a part file and, when `design` is given, checks that the part was
/// fitted on that design file (content hash); exit 2 otherwise.
pub fn read_part_for(
    path: &std::path::Path,
    design: Option<&std::path::Path>,
) -> Result<PartFile, CliError> {
    let part = read_part(path)?;
    check_part_for(&part, PartOrigin::File(path), design)?;
    Ok(part)
}

/// Checks that a part was calibrated and, when `design` is given, that it
/// was fitted on that design file (content hash); exit 2 otherwise.
pub fn check_part_for(
    part: &PartFile,
    origin: PartOrigin<'_>,
    design: Option<&std::path::Path>,
) -> Result<(), CliError> {
    if !part.is_ok() {
        // A part whose fit failed has no model to tabulate, verify or apply.
        return Err(origin.at(
            Some("status"),
            "status",
            format!(
                "part {} was not calibrated ({}); recalibrate it",
                part.serial, part.status
            ),
        ));
    }
    let Some(dpath) = design else {
        return Ok(());
    };
    let d = crate::station::design::DesignFile::read(dpath)
        .map_err(|e| CliError::Input(e.to_string()))?;
    match &part.design {
        Some(pd) if pd.design_hash == d.hash => Ok(()),
        Some(pd) => Err(origin.at(
            Some("design_hash"),
            "design_hash",
            format!(
                "part fitted on design {}, not on {} ({})",
                &pd.design_hash[..pd.design_hash.len().min(16)],
                dpath.display(),
                &d.hash[..16]
            ),
        )),
        None => Err(origin.at(
            None,
            "design",
            format!(
                "part was fitted without a design; {} does not apply to it",
                dpath.display()
            ),
        )),
    }
}

/// The total budget of `--budget`, or the part's scenario's; ppm of span,
/// positive.
pub fn budget_ppm(
    arg: Option<f64>,
    part: &PartFile,
    part_path: &std::path::Path,
) -> Result<f64, CliError> {
    budget_ppm_of(arg, part, PartOrigin::File(part_path))
}

/// [`budget_ppm`] of a part from any origin.
pub fn budget_ppm_of(
    arg: Option<f64>,
    part: &PartFile,
    origin: PartOrigin<'_>,
) -> Result<f64, CliError> {
    let budget = arg.unwrap_or(part.scenario.budget_ppm);
    if let Err(m) = crate::station::limits::check_budget_ppm(budget) {
        return Err(match arg {
            Some(_) => CliError::option("--budget", &budget.to_string(), m),
            None => origin.at(
                Some("budget_ppm"),
                "scenario.budget_ppm",
                format!("{budget}: {m}"),
            ),
        });
    }
    Ok(budget)
}

/// Runs `semidrift table`.
pub fn run(args: TableArgs, out: &mut dyn Write) -> Result<(), CliError> {
    super::record::check_lot_narrows(&args.from_db, None)?;
    let (part, mut recording, label) = match (&args.part, &args.from_db.serial) {
        (Some(path), _) => {
            let part = read_part_for(path, args.design.as_deref())?;
            let recording = match &args.db {
                Some(db) => Some(super::record::prepare(db, path)?),
                None => None,
            };
            (part, recording, None)
        }
        (None, Some(serial)) => {
            let r = super::record::recorded_part(
                super::record::db_path(&args.db, "--serial")?,
                serial,
                args.from_db.lot.as_deref(),
            )?;
            check_part_for(
                &r.part,
                PartOrigin::Recorded(&r.label),
                args.design.as_deref(),
            )?;
            (r.part, Some((r.db, r.fit_id)), Some(r.label))
        }
        // clap requires PART unless --serial is given.
        (None, None) => {
            return Err(CliError::Input(
                "table: give a part file, or --serial with --db".to_string(),
            ));
        }
    };
    let origin = match (&args.part, &label) {
        (Some(path), _) => PartOrigin::File(path),
        (None, l) => PartOrigin::Recorded(l.as_deref().unwrap_or("")),
    };
    let budget = budget_ppm_of(args.budget, &part, origin)?;
    let curves = pipeline::part_curves(&part).map_err(|e| CliError::Input(e.to_string()))?;
    let restrict = Restrict {
        interpolation: args.interpolation.map(Into::into),
        format: args.number_format.map(Into::into),
        axis: args.channel_axis.map(Into::into),
    };
    let outcome =
        pipeline::build_table_with(&part, &curves, budget, restrict, args.signal_unit.into())
            .map_err(|e| match e {
                pipeline::StepError::BudgetExhausted { .. } | pipeline::StepError::Choose(_) => {
                    CliError::CheckFailed(format!("{}: {e}", origin.label()))
                }
                other => CliError::Input(format!("{}: {other}", origin.label())),
            })?;
    let format: ExportFormat = args.format.into();
    let bytes = export_with(
        &outcome.image,
        format,
        &args.name,
        args.address,
        part.scenario.simulated,
    )
    .map_err(|e| match e {
        crate::station::export::ExportError::AddressOverflow { address, .. } => {
            CliError::option("--address", &format!("{address:#010x}"), e)
        }
        _ => CliError::option("--name", &args.name, e),
    })?;
    let path = match (&args.out, &args.part) {
        (Some(p), _) => p.clone(),
        (None, Some(part_path)) => part_path
            .with_extension("")
            .with_extension(format.extension()),
        (None, None) => output::path_in(
            Path::new(""),
            &format!("{}.{}", part.serial, format.extension()),
        )?,
    };
    let mut inputs: Vec<&Path> = args.part.iter().map(PathBuf::as_path).collect();
    inputs.extend(args.design.as_deref());
    inputs.extend(args.db.as_deref());
    output::check_not_input(&path, &inputs)?;
    output::write_atomic(&path, &bytes).map_err(|e| CliError::Input(e.to_string()))?;
    if let Some((db, fit_id)) = &mut recording {
        super::record::image(db, *fit_id, &outcome.image)?;
    }
    if args.json {
        out.write_all(&output::to_json_bytes(&outcome))?;
        return Ok(());
    }
    let t = &outcome.terms;
    let p = &outcome.plan;
    let raw_nodes = |n: usize| {
        if n > 0 {
            format!(", {n} raw-signal nodes")
        } else {
            String::new()
        }
    };
    let nodes = match p.axis {
        AxisKind::Temperature => {
            format!("{} temperature nodes, {} thermometer nodes", p.n_t, p.n_sig)
        }
        AxisKind::Signal => format!(
            "{} temperature-signal nodes (channels and thermometer)",
            p.n_t
        ),
    };
    writeln!(
        out,
        "part {}: {:?} {:?}, {}{}, {} bytes -> {}",
        outcome.serial,
        p.interpolation,
        p.format,
        nodes,
        raw_nodes(p.n_raw),
        outcome.bytes,
        path.display()
    )?;
    writeln!(out, "error budget (ppm of span):")?;
    writeln!(
        out,
        "  interpolation                      {:>10.2}",
        t.interpolation_ppm
    )?;
    writeln!(
        out,
        "  number-format quantization         {:>10.2}",
        t.quantization_ppm
    )?;
    writeln!(
        out,
        "  runtime-model deviation            {:>10.2}",
        t.runtime_model_ppm
    )?;
    writeln!(
        out,
        "  calibration fit residual           {:>10.2}",
        t.fit_residual_ppm
    )?;
    writeln!(
        out,
        "    cross-validation (held-out temp.) {:>10.2}  ({})",
        t.cross_validation_ppm,
        if t.cross_validation_budgeted {
            "in the fit residual"
        } else {
            "reported only: fewer than 4 calibration temperatures"
        }
    )?;
    writeln!(
        out,
        "  temperature signal x drift slope   {:>10.2}",
        t.temperature_ppm
    )?;
    writeln!(
        out,
        "  total                              {:>10.2}  (budget {})",
        t.total_ppm, t.budget_ppm
    )?;
    writeln!(
        out,
        "dense check: max {:.2} ppm, rms {:.2} ppm at {:.2} C over {} points; analytic interpolation bound {:.2} ppm",
        outcome.dense.max_error_ppm,
        outcome.dense.rms_error_ppm,
        outcome.dense.worst_t_c,
        outcome.dense.points,
        outcome.analytic_bound_ppm
    )?;
    writeln!(out, "candidates (least flash first):")?;
    for c in &outcome.candidates {
        let raw = if c.plan.n_raw > 0 {
            format!(" n_raw={}", c.plan.n_raw)
        } else {
            String::new()
        };
        let nodes = match c.plan.axis {
            AxisKind::Temperature => format!("n_t={} n_sig={}", c.plan.n_t, c.plan.n_sig),
            AxisKind::Signal => format!("over signal n={}", c.plan.n_t),
        };
        writeln!(
            out,
            "  {:?} {:?} {nodes}{raw}: {} bytes, {:.2} ppm",
            c.plan.interpolation, c.plan.format, c.bytes, c.max_error_ppm
        )?;
    }
    writeln!(out, "{}", outcome.caution)?;
    Ok(())
}
