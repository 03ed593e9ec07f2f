//! `semidrift plot lot PARTS... --chamber CSV`: the lot's worst-case error
//! envelope against temperature, before and after compensation, at the
//! chamber CSV's temperatures, as an SVG (or PNG) file. The lot is part
//! files (or directories of them), or a calibration chamber CSV with
//! `--spec`, fitted in memory as `calibrate` would.

use crate::cli::CliError;
use crate::cli::table::read_part;
use crate::plot::station::{Series, comparison_series, write_error_plot};
use crate::station::part_file::PartFile;
use crate::station::{chamber, compare, lot, model_shapes, pipeline, spec};
use clap::Args;
use std::io::Write;
use std::path::{Path, PathBuf};

/// Ending of the part files `calibrate` writes (searched in directories).
const PART_SUFFIX: &str = ".part.json";

/// Options of `semidrift plot lot`.
#[derive(Debug, Args)]
pub struct PlotLotArgs {
    /// Part files, or directories whose `*.part.json` files make the lot;
    /// or one calibration chamber CSV (`*.csv`, with `--spec`), whose parts
    /// are fitted in memory first.
    #[arg(required = true, value_name = "PARTS")]
    pub parts: Vec<PathBuf>,
    /// Element or scenario spec of a calibration CSV given as PARTS (as for
    /// `calibrate`).
    #[arg(long, value_name = "SPEC")]
    pub spec: Option<String>,
    /// Chamber CSV whose rows are compensated (e.g. held-out temperatures
    /// from `simulate --check`).
    #[arg(long, value_name = "CSV")]
    pub chamber: PathBuf,
    /// File to write, SVG (or PNG when the name ends in `.png`); replaced atomically.
    #[arg(long, value_name = "FILE.svg")]
    pub out: PathBuf,
}

/// The part files named by `paths`: files as given, directories expanded to
/// their `*.part.json` files in name order (so the lot is the same on every
/// machine).
pub fn collect_parts(paths: &[PathBuf]) -> Result<Vec<PathBuf>, CliError> {
    let mut out = Vec::new();
    for p in paths {
        if !p.is_dir() {
            out.push(p.clone());
            continue;
        }
        let entries = std::fs::read_dir(p)
            .map_err(|e| CliError::Input(format!("{}: cannot read directory: {e}", p.display())))?;
        let mut found: Vec<PathBuf> = entries
            .filter_map(Result::ok)
            .map(|e| e.path())
            .filter(|f| {
                f.file_name()
                    .and_then(|n| n.to_str())
                    .is_some_and(|n| n.ends_with(PART_SUFFIX))
            })
            .collect();
        if found.is_empty() {
            return Err(CliError::Input(format!(
                "{}: no *{PART_SUFFIX} files in this directory",
                p.display()
            )));
        }
        found.sort();
        out.extend(found);
    }
    Ok(out)
}

/// Reads the parts and the chamber rows and writes the error plot; `what`
/// names the plot in its title. Every part must come from the same element
/// and lot description (one set of full-model shapes).
pub fn plot_parts(
    part_paths: &[PathBuf],
    chamber_csv: &Path,
    out_path: &Path,
    what: &str,
) -> Result<(usize, usize), CliError> {
    let parts = read_parts(part_paths)?;
    plot_lot(&parts, chamber_csv, out_path, what)
}

/// Reads part files that must share one element and lot description.
fn read_parts(part_paths: &[PathBuf]) -> Result<Vec<PartFile>, CliError> {
    let mut parts: Vec<PartFile> = Vec::with_capacity(part_paths.len());
    for p in part_paths {
        let part = read_part(p)?;
        if let Some(first) = parts.first()
            && first.scenario != part.scenario
        {
            return Err(CliError::at(
                &p.display().to_string(),
                1,
                "scenario",
                format!(
                    "differs from that of {} (a lot plot needs one element and lot description)",
                    part_paths[0].display()
                ),
            ));
        }
        parts.push(part);
    }
    Ok(parts)
}

/// Fits every part of a calibration chamber CSV in memory.
fn calibrate_csv(spec_arg: &str, csv: &Path) -> Result<Vec<PartFile>, CliError> {
    let scenario = spec::load(spec_arg).map_err(|e| CliError::Input(e.to_string()))?;
    let data = chamber::read_file(csv).map_err(|e| CliError::Input(e.to_string()))?;
    if let Some(e) = data.errors.first() {
        return Err(CliError::Input(e.to_string()));
    }
    let curves = model_shapes::shapes_for(&scenario)
        .map_err(|e| CliError::Input(format!("{spec_arg}: full model: {e}")))?;
    Ok(lot::calibrate_lot(&scenario, &curves, &data, &lot::Silent))
}

/// Writes the error plot of `parts` on the rows of `chamber_csv`.
fn plot_lot(
    parts: &[PartFile],
    chamber_csv: &Path,
    out_path: &Path,
    what: &str,
) -> Result<(usize, usize), CliError> {
    let Some(first) = parts.first() else {
        return Err(CliError::option("PARTS", "", "no part files given"));
    };
    let data = chamber::read_file(chamber_csv).map_err(|e| CliError::Input(e.to_string()))?;
    if let Some(e) = data.errors.first() {
        return Err(CliError::Input(e.to_string()));
    }
    let curves = pipeline::part_curves(first).map_err(|e| CliError::Input(e.to_string()))?;
    let comparison = compare::compare(parts, &curves, &data);
    if comparison.parts == 0 {
        return Err(CliError::at(
            &chamber_csv.display().to_string(),
            1,
            "serial",
            "no rows for any usable part (fit ok, polynomial present)",
        ));
    }
    let series: Vec<Series> = comparison_series(&comparison, None);
    let title = format!("{what}: worst |error| before and after compensation");
    write_error_plot(
        out_path,
        &title,
        &series,
        Some((first.scenario.budget_ppm, "budget")),
    )
    .map_err(|e| CliError::option("--out", &out_path.display().to_string(), e))?;
    Ok((comparison.parts, comparison.by_temperature.len()))
}

/// Runs `semidrift plot lot`.
pub fn run(args: PlotLotArgs, out: &mut dyn Write) -> Result<(), CliError> {
    let csv = match args.parts.as_slice() {
        [one]
            if one
                .extension()
                .is_some_and(|e| e.eq_ignore_ascii_case("csv")) =>
        {
            Some(one)
        }
        _ => None,
    };
    let lot = match (csv, &args.spec) {
        (Some(csv), Some(spec)) => calibrate_csv(spec, csv)?,
        (Some(csv), None) => {
            return Err(CliError::option(
                "--spec",
                "",
                format!(
                    "{} is a chamber CSV: give the spec it was measured with",
                    csv.display()
                ),
            ));
        }
        (None, _) => read_parts(&collect_parts(&args.parts)?)?,
    };
    let what = format!("lot of {} parts", lot.len());
    let (parts, temps) = plot_lot(&lot, &args.chamber, &args.out, &what)?;
    writeln!(
        out,
        "wrote {} ({parts} parts, {temps} temperatures)",
        args.out.display()
    )?;
    Ok(())
}
