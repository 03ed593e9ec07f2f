//! `semidrift calibrate SPEC CSV`: fits every part in a chamber CSV and
//! writes one part file per serial.

use super::CliError;
use crate::station::design::DesignFile;
use crate::station::{chamber, lot, model_shapes, output, spec};
use std::io::Write;
use std::path::PathBuf;

/// Arguments of `semidrift calibrate`.
#[derive(Debug, clap::Args)]
pub struct CalibrateArgs {
    /// Scenario: `well-logger`, `battery-current`, a scenario TOML or an element spec TOML.
    pub spec: String,
    /// Chamber CSV (`serial, chamber_c, stimulus, output, temp_signal`).
    pub csv: PathBuf,
    /// Design file from `semidrift qualify`: fit each part on the design's
    /// learned curves (without it, the physics-only fit, whose error between
    /// chamber temperatures is not measured).
    #[arg(long)]
    pub design: Option<PathBuf>,
    /// Directory for the part files (`SERIAL.part.json`).
    #[arg(long, default_value = "parts")]
    pub out_dir: PathBuf,
    /// No progress bar.
    #[arg(long, short)]
    pub quiet: bool,
    /// Station database: also record the chamber run (CSV content hash),
    /// the design and every part's fit under the lot.
    #[arg(long)]
    pub db: Option<PathBuf>,
    /// Lot name in the database [default: the CSV's file name without
    /// extension].
    #[arg(long, requires = "db")]
    pub lot: Option<String>,
}

/// Runs `semidrift calibrate`. Exit 2 if rows were bad (the good parts are
/// still written), 1 if a fit was ill-conditioned or had too few points.
pub fn run(args: CalibrateArgs, out: &mut dyn Write) -> Result<(), CliError> {
    let scenario = spec::load(&args.spec).map_err(|e| CliError::Input(e.to_string()))?;
    let data = chamber::read_file(&args.csv).map_err(|e| CliError::Input(e.to_string()))?;
    super::report_rows(&data);
    output::check_destination(&args.out_dir).or_else(|e| match e {
        // An existing folder is where part files go.
        output::OutputError::NotRegular {
            kind: "directory", ..
        } => Ok(()),
        e => Err(e),
    })?;
    let curves = model_shapes::shapes_for(&scenario)
        .map_err(|e| CliError::Input(format!("{}: full model: {e}", args.spec)))?;
    let design = design_for(args.design.as_deref(), &scenario)?;
    if data.rows.is_empty() {
        return Err(CliError::CheckFailed(format!(
            "{}: no readable rows ({} rejected): no part to calibrate",
            args.csv.display(),
            data.errors.len()
        )));
    }
    // The database's refusals (a CSV recorded under another lot, a lot of
    // other inputs) come before any part file is written.
    let csv_bytes = match &args.db {
        Some(_) => std::fs::read(&args.csv)
            .map_err(|e| CliError::Input(format!("{}: {e}", args.csv.display())))?,
        None => Vec::new(),
    };
    let lot_name = args.lot.clone().unwrap_or_else(|| {
        args.csv
            .file_stem()
            .map_or("lot".to_string(), |s| s.to_string_lossy().to_string())
    });
    let csv_name = args.csv.display().to_string();
    let input = crate::stationdb::run::LotRunInput {
        lot: &lot_name,
        scenario: &scenario,
        curves: &curves,
        budget_ppm: scenario.budget_ppm,
        design: design.as_ref(),
        calibration: crate::stationdb::run::CsvInput {
            name: &csv_name,
            bytes: &csv_bytes,
            data: &data,
        },
        check: None,
    };
    let mut recording = match &args.db {
        Some(path) => {
            let mut db = super::lot::open_db(path)?;
            let ids =
                crate::stationdb::run::begin_lot(&mut db, &input).map_err(super::lot::db_error)?;
            Some((db, ids))
        }
        None => None,
    };
    let parts = lot::calibrate_lot_with(
        &scenario,
        &curves,
        &data,
        design.as_ref(),
        &super::progress::Bar::new(args.quiet),
    );
    let mut recorded = 0;
    if let Some((db, ids)) = &mut recording {
        for p in &parts {
            let r = crate::stationdb::run::PartResult {
                part: p.clone(),
                image: None,
                verify: None,
                eol: None,
                reject: (!p.is_ok()).then(|| ("fit", p.status.clone())),
            };
            if crate::stationdb::run::record_part(db, *ids, &r).map_err(super::lot::db_error)? {
                recorded += 1;
            }
        }
    }
    let mut bad = Vec::new();
    let mut unwritten = Vec::new();
    for p in &parts {
        // Serials were checked when the CSV was read (limits::check_serial);
        // path_in keeps the name inside the folder whatever happens.
        let written = output::path_in(&args.out_dir, &format!("{}.part.json", p.serial))
            .and_then(|path| output::write_atomic(&path, &p.to_bytes()));
        if let Err(e) = written {
            // One part's file failing must not cost the others theirs.
            eprintln!("semidrift: error: {e}");
            unwritten.push(e.to_string());
        }
        if !p.is_ok() {
            bad.push(format!("{}: {}", p.serial, p.status));
        }
    }
    writeln!(
        out,
        "serial        status  thermo_rms_K  fit_rms_ppm  fit_max_ppm  condition"
    )?;
    for p in &parts {
        writeln!(
            out,
            "{:<12}  {:<6}  {:>12.4}  {:>11.2}  {:>11.2}  {:>9.3e}",
            p.serial,
            if p.is_ok() { "ok" } else { "FAIL" },
            p.thermometer_rms_k,
            p.fit_rms_ppm,
            p.fit_max_ppm,
            p.condition
        )?;
    }
    writeln!(
        out,
        "{} part files -> {}",
        parts.len() - unwritten.len(),
        args.out_dir.display()
    )?;
    if let Some((db, _)) = &recording {
        writeln!(
            out,
            "{recorded} fits recorded in {} under lot '{lot_name}' ({} already there)",
            db.path.display(),
            parts.len() - recorded
        )?;
    }
    match &design {
        Some(d) => writeln!(
            out,
            "fitted on design {} (model error {:.1} ppm of span inside the operating range, measured on its {}-part qualification lot)",
            &d.hash[..16],
            d.plan_error.operating_range_ppm,
            d.qualification.parts
        )?,
        None => writeln!(
            out,
            "physics-only fit: its error between chamber temperatures has not been measured (qualify the design with semidrift qualify, then calibrate --design)"
        )?,
    }
    writeln!(out, "{}", output::caution_for(scenario.simulated))?;
    if let Some(e) = unwritten.first() {
        return Err(CliError::Input(format!(
            "{} part file(s) not written, first: {e}",
            unwritten.len()
        )));
    }
    if let Some(e) = data.errors.first() {
        return Err(CliError::Input(format!(
            "{} bad row(s) skipped, first: {e}",
            data.errors.len()
        )));
    }
    if !bad.is_empty() {
        for b in &bad {
            eprintln!("semidrift: fit rejected: {b}");
        }
        return Err(CliError::CheckFailed(format!(
            "{} of {} parts not calibrated: {}",
            bad.len(),
            parts.len(),
            bad[0]
        )));
    }
    Ok(())
}

/// The design file `path` names, checked against `scenario` (none without a path).
pub(super) fn design_for(
    path: Option<&std::path::Path>,
    scenario: &crate::station::scenario::Scenario,
) -> Result<Option<DesignFile>, CliError> {
    path.map(|p| DesignFile::read_for(p, scenario))
        .transpose()
        .map_err(|e| CliError::Input(e.to_string()))
}
