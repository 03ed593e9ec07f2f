//! `semidrift eol IMAGE CHECK.csv --against PART --gdb HOST:PORT --address
//! ADDR --firmware ELF`: the end-of-line check run on the part itself. The
//! part's check rows go through the image flashed into it (the EOL
//! firmware runs them), and the device's results are compared with the
//! host's `apply` on the same image and with the reference stimulus.

use super::CliError;
use super::table::{parse_address, read_part_for};
use crate::station::apply::ImageCompensation;
use crate::station::eol::{EolReport, judge};
use crate::station::eol_target::{EolTargetError, firmware_symbols, run_rows};
use crate::station::limits::read_capped;
use crate::station::{chamber, output, pipeline};
use std::io::Write;
use std::path::PathBuf;

/// Largest firmware ELF read, bytes (debug information included).
const MAX_ELF_BYTES: u64 = 64 << 20;

/// Arguments of `semidrift eol`.
#[derive(Debug, clap::Args)]
pub struct EolArgs {
    /// Table image (`.bin`) flashed into the part.
    pub image: PathBuf,
    /// Chamber CSV with the part's check rows (its serial's rows are run).
    pub csv: PathBuf,
    /// Part file the image was built from (ADC scale, span and budget).
    #[arg(long)]
    pub against: PathBuf,
    /// Design file the part was fitted on (checked as by `apply`).
    #[arg(long)]
    pub design: Option<PathBuf>,
    /// Debug server speaking the GDB remote protocol, `HOST:PORT`.
    #[arg(long, value_name = "HOST:PORT")]
    pub gdb: String,
    /// Flash address of the image, as given to `flash` (decimal or 0x hex).
    #[arg(long, value_parser = parse_address)]
    pub address: u32,
    /// The end-of-line firmware running on the part (ELF; its mailbox and
    /// ready-point symbols are read from it).
    #[arg(long, value_name = "ELF")]
    pub firmware: PathBuf,
    /// JSON report on stdout.
    #[arg(long)]
    pub json: bool,
}

/// The `--json` report.
#[derive(serde::Serialize)]
struct Report<'a> {
    #[serde(flatten)]
    eol: &'a EolReport,
    address: u32,
    requests: usize,
    mailbox: u32,
    breakpoint: &'static str,
    simulated: bool,
    caution: String,
}

/// Runs `semidrift eol`. Exit 1 when the device disagrees with `apply`,
/// refuses the image in its memory, or a judged row is over budget; 2 for
/// bad input; 3 when the debug server or the EOL firmware does not answer.
pub fn run(args: EolArgs, out: &mut dyn Write) -> Result<(), CliError> {
    let shown = args.image.display().to_string();
    let image = super::verify::read_image(&args.image)?;
    let part = read_part_for(&args.against, args.design.as_deref())?;
    let view = compensate::TableView::parse(&image)
        .map_err(|e| CliError::Input(format!("{shown}: not a valid table image: {e}")))?;
    pipeline::check_image_for_part(&view, &part).map_err(|e| {
        CliError::Input(format!(
            "{shown}: {e} (part file {})",
            args.against.display()
        ))
    })?;
    let comp = ImageCompensation::new(
        &image,
        part.scenario.output_adc.lsb(),
        part.scenario.signal_adc.lsb(),
    )
    .map_err(|e| CliError::Input(format!("{shown}: {e}")))?;
    let elf_shown = args.firmware.display().to_string();
    let elf = read_capped(&args.firmware, MAX_ELF_BYTES, "firmware ELF")
        .map_err(|m| CliError::Input(format!("{elf_shown}: {m}")))?;
    let symbols =
        firmware_symbols(&elf).map_err(|e| CliError::Input(format!("{elf_shown}: {e}")))?;
    let data = chamber::read_file(&args.csv).map_err(|e| CliError::Input(e.to_string()))?;
    super::report_rows(&data);
    if let Some(e) = data.errors.first() {
        return Err(CliError::Input(format!(
            "{} bad row(s) in the check file, first: {e}",
            data.errors.len()
        )));
    }
    let rows = super::part_rows(&data, &args.csv, &part.serial)?;
    let inputs: Vec<_> = rows
        .iter()
        .map(|r| comp.runtime_input(r.output, r.temp_signal))
        .collect();
    let image_len = u32::try_from(image.len())
        .map_err(|_| CliError::Input(format!("{shown}: larger than 4 GiB")))?;
    let run = run_rows(&args.gdb, symbols, args.address, image_len, &inputs).map_err(|e| {
        let message = format!("{shown} at {:#010x} via {}: {e}", args.address, args.gdb);
        match e {
            EolTargetError::ImageRejected { .. } => CliError::CheckFailed(message),
            EolTargetError::Symbols(_) | EolTargetError::OutsideMailbox { .. } => {
                CliError::Input(message)
            }
            _ => CliError::Target(message),
        }
    })?;
    let report = judge(&part, &comp, &rows, &inputs, &run.outputs);
    let breakpoint = if run.breakpoint == 1 {
        "hardware"
    } else {
        "software"
    };
    let caution = output::caution_for(part.scenario.simulated);
    if args.json {
        let full = Report {
            eol: &report,
            address: args.address,
            requests: run.requests,
            mailbox: symbols.mailbox,
            breakpoint,
            simulated: part.scenario.simulated,
            caution,
        };
        out.write_all(&output::to_json_bytes(&full))?;
    } else {
        writeln!(
            out,
            "{}: {} check rows run on the device ({} image at {:#010x}) via {} ({} request(s), mailbox {:#010x}, {} breakpoint)",
            report.serial,
            report.rows,
            report.number_format,
            args.address,
            args.gdb,
            run.requests,
            symbols.mailbox,
            breakpoint
        )?;
        writeln!(
            out,
            "line  chamber_c  stimulus  device_value    host_value  {:>9}  error_ppm",
            if report.number_format == "q" {
                "diff_lsb"
            } else {
                "diff_ulp"
            }
        )?;
        for r in &report.row_results {
            writeln!(
                out,
                "{:>4}  {:>9.2}  {:>8.3}  {:>12.6}  {:>12.6}  {:>9}  {:>9.1}{}{}",
                r.line,
                r.chamber_c,
                r.stimulus,
                r.device_value,
                r.host_value,
                r.value_diff,
                r.error_ppm,
                if r.agrees { "" } else { "  MISMATCH" },
                if r.device_status.is_empty() {
                    String::new()
                } else {
                    format!("  not judged: {}", r.device_status)
                }
            )?;
        }
        writeln!(
            out,
            "device and apply agree on {}/{} rows ({}); worst |error| {:.1} ppm of span over {} judged rows, budget {:.1} ppm: {}",
            report.rows - report.mismatches.min(report.rows),
            report.rows,
            if report.number_format == "q" {
                "bit for bit".to_string()
            } else {
                format!(
                    "within f32 rounding, largest difference {} ulp",
                    report.max_value_diff
                )
            },
            report.max_abs_error_ppm,
            report.judged,
            report.budget_ppm,
            if report.pass { "pass" } else { "FAIL" }
        )?;
        writeln!(out, "{caution}")?;
    }
    if report.mismatches > 0 {
        let first = report.row_results.iter().find(|r| !r.agrees);
        return Err(CliError::CheckFailed(match first {
            Some(r) => format!(
                "{shown}: end-of-line check: the device disagrees with apply on {} row(s), first at {}:{} (device {}, host {}{})",
                report.mismatches,
                args.csv.display(),
                r.line,
                r.device_value,
                r.host_value,
                if r.device_status.is_empty() {
                    String::new()
                } else {
                    format!(", device status {}", r.device_status)
                }
            ),
            None => format!(
                "{shown}: end-of-line check: the device returned {} results for {} rows",
                run.outputs.len(),
                rows.len()
            ),
        }));
    }
    if report.judged == 0 {
        return Err(CliError::CheckFailed(format!(
            "{shown}: end-of-line check: none of the {} rows lies inside the table's domain and off the ADC rails; nothing to judge",
            report.rows
        )));
    }
    if !report.pass {
        let worst = report
            .row_results
            .iter()
            .filter(|r| r.judged)
            .max_by(|a, b| a.error_ppm.abs().total_cmp(&b.error_ppm.abs()));
        return Err(CliError::CheckFailed(format!(
            "{shown}: end-of-line check: error {:.1} ppm of span at {}:{} is over the budget {:.1} ppm",
            report.max_abs_error_ppm,
            args.csv.display(),
            worst.map_or(0, |r| r.line),
            report.budget_ppm
        )));
    }
    Ok(())
}
