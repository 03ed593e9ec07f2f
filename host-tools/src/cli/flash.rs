//! `semidrift flash IMAGE --gdb HOST:PORT --address ADDR`: writes a table
//! image into a part through a debug server and proves it landed.

use super::CliError;
use super::table::{parse_address, read_part_for};
use crate::station::flash::{After, FlashTarget, flash};
use crate::station::{output, pipeline};
use std::io::Write;
use std::path::PathBuf;

/// Arguments of `semidrift flash`.
#[derive(Debug, clap::Args)]
pub struct FlashArgs {
    /// Table image (`.bin`) to write.
    pub image: PathBuf,
    /// Debug server speaking the GDB remote protocol, `HOST:PORT` (a
    /// probe's server, or QEMU's `-gdb tcp::PORT`).
    #[arg(long, value_name = "HOST:PORT")]
    pub gdb: String,
    /// Flash address of the image (decimal or 0x hex).
    #[arg(long, value_parser = parse_address)]
    pub address: u32,
    /// Part file the image was built from: the image is checked against it
    /// and verified on the dense grid before anything is written (refused,
    /// exit 1, when over budget).
    #[arg(long)]
    pub against: Option<PathBuf>,
    /// Design file the part was fitted on (checked as by `verify`).
    #[arg(long)]
    pub design: Option<PathBuf>,
    /// Flash without `--against` (no verification); logged on stderr.
    #[arg(long, conflicts_with = "against")]
    pub skip_verify: bool,
    /// Flash an image made from simulated data (header flag); logged on stderr.
    #[arg(long)]
    pub allow_simulated: bool,
    /// Address of a 16-byte serial record on the device: refused (exit 1,
    /// nothing written) unless it equals the image's serial field.
    #[arg(long, value_parser = parse_address, value_name = "ADDR")]
    pub serial_address: Option<u32>,
    /// What the target does after a good flash.
    #[arg(long, value_enum, default_value_t = AfterArg::Halt)]
    pub then: AfterArg,
    /// Only read the range back and check it against the image (no write).
    #[arg(long)]
    pub check_only: bool,
    /// JSON report on stdout.
    #[arg(long)]
    pub json: bool,
}

/// `--then`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum AfterArg {
    /// Leave the target halted.
    Halt,
    /// Let it run (detach).
    Resume,
    /// Reset it (`monitor system_reset`), then let it run.
    Reset,
}

/// Runs `semidrift flash`. Exit 1 for a failed check (verification, serial,
/// read-back, CRC), 2 for bad input, 3 when the debug server cannot be
/// reached or the connection breaks.
pub fn run(args: FlashArgs, out: &mut dyn Write) -> Result<(), CliError> {
    let image = super::verify::read_image(&args.image)?;
    let shown = args.image.display().to_string();
    let mut overrides = Vec::new();
    let view = compensate::TableView::parse(&image)
        .map_err(|e| CliError::Input(format!("{shown}: not a valid table image: {e}")))?;
    if view.simulated() {
        if !args.allow_simulated {
            return Err(CliError::Input(format!(
                "{shown}: field 'flags': the image was made from simulated data; it must never reach a part whose reading protects people or property (give --allow-simulated for a test bench)"
            )));
        }
        eprintln!(
            "semidrift: warning: flashing {shown}, made from simulated data (--allow-simulated)"
        );
        overrides.push("--allow-simulated");
    }
    match &args.against {
        Some(part_path) => {
            let part = read_part_for(part_path, args.design.as_deref())?;
            pipeline::check_image_for_part(&view, &part).map_err(|e| {
                CliError::Input(format!("{shown}: {e} (part file {})", part_path.display()))
            })?;
            let curves =
                pipeline::part_curves(&part).map_err(|e| CliError::Input(e.to_string()))?;
            let (nt, ns) = pipeline::dense_counts(&pipeline::plan_of(&view));
            let report = pipeline::verify(&image, &part, &curves, part.scenario.budget_ppm, nt, ns)
                .map_err(|e| CliError::Input(format!("{shown}: {e}")))?;
            if !report.pass {
                return Err(CliError::CheckFailed(format!(
                    "{shown}: verification failed (table error {:.3} ppm over its allowance {:.3} ppm); nothing written",
                    report.max_error_ppm, report.table_allowance_ppm
                )));
            }
        }
        None if args.skip_verify => {
            eprintln!("semidrift: warning: flashing {shown} without verification (--skip-verify)");
            overrides.push("--skip-verify");
        }
        None => {
            return Err(CliError::option(
                "--against",
                "",
                "give the part file the image was built from (the image is verified before flashing), or --skip-verify",
            ));
        }
    }
    let target = FlashTarget {
        server: args.gdb.clone(),
        address: args.address,
        serial_address: args.serial_address,
    };
    let after = match args.then {
        AfterArg::Halt => After::Halt,
        AfterArg::Resume => After::Resume,
        AfterArg::Reset => After::Reset,
    };
    let mut report = flash(&image, &target, !args.check_only, after).map_err(|e| {
        let message = format!("{shown} -> {}: {e}", args.gdb);
        if e.is_check() {
            CliError::CheckFailed(message)
        } else if matches!(e, crate::station::flash::FlashError::AddressRange { .. }) {
            CliError::option("--address", &format!("{:#010x}", args.address), e)
        } else {
            CliError::Target(message)
        }
    })?;
    report.overrides = overrides;
    // JSON or one line, as every command reports (eol.rs, verify.rs); the line differs.
    if args.json {
        out.write_all(&output::to_json_bytes(&report))?;
    } else {
        writeln!(
            out,
            "{}: {} bytes {} at {:#010x} via {} ({} packets, packet size {}), read back equal, CRC-32 {:#010x} over target memory{}; target {:?}",
            report.serial,
            report.bytes,
            if report.written { "written" } else { "checked" },
            report.address,
            args.gdb,
            report.write_packets,
            report.packet_size,
            report.crc32,
            if report.serial_checked {
                ", device serial matches"
            } else {
                ""
            },
            report.after
        )?;
        if !report.overrides.is_empty() {
            writeln!(
                out,
                "overridden: {} (recorded in the --json report)",
                report.overrides.join(", ")
            )?;
        }
        writeln!(
            out,
            "caution: a part whose reading protects people or property needs its own qualification and end-of-line test under the standards that apply"
        )?;
    }
    Ok(())
}
