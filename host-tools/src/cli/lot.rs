//! `semidrift lot ...`: the station database. A resumable lot run, and the
//! questions a station asks of its records (status, a serial's history,
//! release, traceability export, the HTML lot report, a re-check of every
//! stored image).

use super::CliError;
use crate::station::{chamber, model_shapes, output, pipeline, spec};
use crate::stationdb::{self, DEFAULT_DB, DbError, figures, query, run};
use clap::Subcommand;
use std::io::Write;
use std::path::{Path, PathBuf};

/// The database option every `lot` command takes.
#[derive(Debug, Clone, clap::Args)]
pub struct DbArg {
    /// Station database (SQLite; created with its schema when absent).
    #[arg(long, default_value = DEFAULT_DB)]
    pub db: PathBuf,
}

/// The `lot` commands.
#[derive(Debug, Subcommand)]
pub enum LotCommand {
    /// Take a chamber CSV through fit, table, verify (and the end-of-line
    /// check with --check) for every part, recording part by part; run it
    /// again after a crash to finish the rest.
    #[command(after_help = super::CAUTIONS)]
    Run(RunArgs),
    /// Every part of a lot: calibrated, passed, released or rejected (why).
    #[command(after_help = super::CAUTIONS)]
    Status(StatusArgs),
    /// Everything recorded about one serial, in every lot.
    #[command(after_help = super::CAUTIONS)]
    History(HistoryArgs),
    /// Release for flashing the images that passed verification and whose
    /// part passed the end-of-line check.
    #[command(after_help = super::CAUTIONS)]
    Release(ReleaseArgs),
    /// A lot's traceability records as CSV or JSON.
    #[command(after_help = super::CAUTIONS)]
    Export(ExportArgs),
    /// A self-contained HTML lot report (no network, plots inline).
    #[command(after_help = super::CAUTIONS)]
    Report(ReportArgs),
    /// Re-verify every stored image of a lot against its stored part (exit
    /// 1 when a verdict differs from the record) and check the database's
    /// integrity.
    #[command(after_help = super::CAUTIONS)]
    Check(CheckArgs),
}

/// Arguments of `semidrift lot run`.
#[derive(Debug, clap::Args)]
pub struct RunArgs {
    /// Scenario: `well-logger`, `battery-current`, a scenario TOML or an element spec TOML.
    pub spec: String,
    /// Chamber CSV at the calibration temperatures.
    pub csv: PathBuf,
    // Documented options read alike across commands (calibrate.rs, part_file.rs); each is its own.
    /// Chamber CSV at held-out temperatures: each part's image is checked
    /// on its rows (the end-of-line check) before it may be released.
    #[arg(long)]
    pub check: Option<PathBuf>,
    /// Design file to fit on (physics-only fits without).
    #[arg(long)]
    pub design: Option<PathBuf>,
    /// Lot name [default: the CSV's file name without extension].
    #[arg(long)]
    pub lot: Option<String>,
    /// Total error budget, ppm of span [default: the scenario's].
    #[arg(long, allow_negative_numbers = true)]
    pub budget: Option<f64>,
    #[command(flatten)]
    pub db: DbArg,
    /// No progress bar.
    #[arg(long, short)]
    pub quiet: bool,
}

/// Arguments of `semidrift lot status`.
#[derive(Debug, clap::Args)]
pub struct StatusArgs {
    /// Lot name.
    pub lot: String,
    #[command(flatten)]
    pub db: DbArg,
    /// JSON on stdout.
    #[arg(long)]
    pub json: bool,
}

/// Arguments of `semidrift lot history`.
#[derive(Debug, clap::Args)]
pub struct HistoryArgs {
    /// Serial.
    pub serial: String,
    #[command(flatten)]
    pub db: DbArg,
    /// JSON on stdout.
    #[arg(long)]
    pub json: bool,
}

/// Arguments of `semidrift lot release`.
#[derive(Debug, clap::Args)]
pub struct ReleaseArgs {
    /// Lot name.
    pub lot: String,
    /// Only this serial (exit 1 if it may not be released).
    #[arg(long)]
    pub serial: Option<String>,
    #[command(flatten)]
    pub db: DbArg,
    /// JSON on stdout.
    #[arg(long)]
    pub json: bool,
}

/// Format of `lot export`.
#[derive(Debug, Clone, Copy, clap::ValueEnum)]
pub enum TraceFormat {
    /// One row per part.
    Csv,
    /// An array of records.
    Json,
}

/// Arguments of `semidrift lot export`.
#[derive(Debug, clap::Args)]
pub struct ExportArgs {
    /// Lot name.
    pub lot: String,
    /// Format.
    #[arg(long, value_enum, default_value_t = TraceFormat::Csv)]
    pub format: TraceFormat,
    /// Output file [default: stdout].
    #[arg(long, short)]
    pub out: Option<PathBuf>,
    #[command(flatten)]
    pub db: DbArg,
}

/// Arguments of `semidrift lot report`.
#[derive(Debug, clap::Args)]
pub struct ReportArgs {
    /// Lot name (with --folder: the name the report shows [default: the
    /// demo's, '<scenario> demo lot']).
    #[arg(required_unless_present = "folder")]
    pub lot: Option<String>,
    /// Output HTML file.
    #[arg(long, short)]
    pub out: PathBuf,
    #[command(flatten)]
    pub db: DbArg,
    /// Make the report from a demo folder (one scenario's folder as
    /// `semidrift demo` writes it: scenario.toml, parts/, tables/, verify/,
    /// chamber-check.csv, ...) instead of the database.
    #[arg(long, value_name = "DIR", conflicts_with = "db")]
    pub folder: Option<PathBuf>,
}

/// Arguments of `semidrift lot check`.
#[derive(Debug, clap::Args)]
pub struct CheckArgs {
    /// Lot name.
    pub lot: String,
    #[command(flatten)]
    pub db: DbArg,
}

/// A database refusal or failure: bad input, exit 2.
pub(crate) fn db_error(e: DbError) -> CliError {
    CliError::Input(e.to_string())
}

/// Opens the database, refusing (exit 2) a file that is not ours.
pub(crate) fn open_db(path: &Path) -> Result<stationdb::Db, CliError> {
    stationdb::open(path).map_err(db_error)
}

/// Runs `semidrift lot ...`.
pub fn run(command: LotCommand, out: &mut dyn Write) -> Result<(), CliError> {
    match command {
        LotCommand::Run(a) => run_lot(a, out),
        LotCommand::Status(a) => status(a, out),
        LotCommand::History(a) => history(a, out),
        LotCommand::Release(a) => release(a, out),
        LotCommand::Export(a) => export(a, out),
        LotCommand::Report(a) => report(a, out),
        LotCommand::Check(a) => check(a, out),
    }
}

fn read_csv(path: &Path) -> Result<(Vec<u8>, chamber::ChamberData), CliError> {
    use crate::station::limits::{MAX_CSV_BYTES, read_capped};
    let bytes = read_capped(path, MAX_CSV_BYTES, "chamber CSV")
        .map_err(|m| CliError::Input(format!("{}: {m}", path.display())))?;
    let data = chamber::read_bytes(&path.display().to_string(), &bytes)
        .map_err(|e| CliError::Input(e.to_string()))?;
    super::report_rows(&data);
    if let Some(e) = data.errors.first() {
        // A lot is recorded from a whole, clean CSV: a bad row would make a
        // part's record depend on a fix made later to the same file.
        return Err(CliError::Input(format!(
            "{} bad row(s), first: {e}; fix the CSV, then run the lot",
            data.errors.len()
        )));
    }
    if data.rows.is_empty() {
        return Err(CliError::Input(format!(
            "{}: no readable rows: no part to run",
            path.display()
        )));
    }
    Ok((bytes, data))
}

fn run_lot(args: RunArgs, out: &mut dyn Write) -> Result<(), CliError> {
    let scenario = spec::load(&args.spec).map_err(|e| CliError::Input(e.to_string()))?;
    let (cal_bytes, cal) = read_csv(&args.csv)?;
    let check = match &args.check {
        Some(p) => Some(read_csv(p)?),
        None => None,
    };
    let design = super::calibrate::design_for(args.design.as_deref(), &scenario)?;
    let budget = args.budget.unwrap_or(scenario.budget_ppm);
    crate::station::limits::check_budget_ppm(budget)
        .map_err(|m| CliError::option("--budget", &budget.to_string(), m))?;
    let lot = match &args.lot {
        Some(l) if !l.trim().is_empty() => l.clone(),
        Some(l) => return Err(CliError::option("--lot", l, "a lot needs a name")),
        None => args
            .csv
            .file_stem()
            .map(|s| s.to_string_lossy().to_string())
            .unwrap_or_else(|| "lot".to_string()),
    };
    let mut db = open_db(&args.db.db)?;
    let curves = model_shapes::shapes_for(&scenario)
        .map_err(|e| CliError::Input(format!("{}: full model: {e}", args.spec)))?;
    let cal_name = args.csv.display().to_string();
    let check_name = args.check.as_ref().map(|p| p.display().to_string());
    let input = run::LotRunInput {
        lot: &lot,
        scenario: &scenario,
        curves: &curves,
        budget_ppm: budget,
        design: design.as_ref(),
        calibration: run::CsvInput {
            name: &cal_name,
            bytes: &cal_bytes,
            data: &cal,
        },
        check: check
            .as_ref()
            .zip(check_name.as_deref())
            .map(|((bytes, data), name)| run::CsvInput { name, bytes, data }),
    };
    let o =
        run::run_lot(&mut db, &input, &super::progress::Bar::new(args.quiet)).map_err(db_error)?;
    if o.nothing_to_do() {
        writeln!(
            out,
            "lot '{}': all {} parts of {} are already recorded in {}; nothing to do",
            o.lot,
            o.parts,
            args.csv.display(),
            args.db.db.display()
        )?;
        return Ok(());
    }
    for (serial, stage, reason) in &o.rejected_now {
        writeln!(out, "{serial}: rejected at {stage}: {reason}")?;
    }
    writeln!(
        out,
        "lot '{}': {} parts, {} recorded before, {} now ({} passed, {} rejected) -> {}",
        o.lot,
        o.parts,
        o.already_recorded,
        o.recorded_now,
        o.passed_now,
        o.rejected_now.len(),
        args.db.db.display()
    )?;
    if args.check.is_none() {
        writeln!(
            out,
            "no end-of-line check (--check): no image of this run can be released until one is recorded"
        )?;
    }
    writeln!(out, "{}", output::caution_for(scenario.simulated))?;
    Ok(())
}

fn status(args: StatusArgs, out: &mut dyn Write) -> Result<(), CliError> {
    let db = open_db(&args.db.db)?;
    let (info, parts) = query::lot_status(&db, &args.lot).map_err(db_error)?;
    if args.json {
        #[derive(serde::Serialize)]
        struct Status<'a> {
            lot: &'a query::LotInfo,
            parts: &'a [query::PartRecord],
        }
        out.write_all(&output::to_json_bytes(&Status {
            lot: &info,
            parts: &parts,
        }))?;
        return Ok(());
    }
    let count = |s: &str| parts.iter().filter(|p| p.state == s).count();
    writeln!(
        out,
        "lot '{}' ({}, budget {} ppm{}): {} parts: {} released, {} passed (not yet released), {} rejected, {} calibrated only",
        info.name,
        info.scenario_name,
        info.budget_ppm,
        info.design_hash
            .as_ref()
            .map_or(", physics-only".to_string(), |h| format!(
                ", design {}",
                &h[..16.min(h.len())]
            )),
        parts.len(),
        count("released"),
        count("passed"),
        count("rejected"),
        count("calibrated")
    )?;
    writeln!(
        out,
        "serial        state       image_crc32  verify_ppm  eol_ppm  why"
    )?;
    let opt = |x: Option<f64>| x.map_or("-".to_string(), |v| format!("{v:.1}"));
    for p in &parts {
        let why = match (&p.reject_stage, &p.reject_reason) {
            (Some(s), Some(r)) => format!("{s}: {r}"),
            _ if p.state == "calibrated" => query::release_refusal(p).unwrap_or_default(),
            _ => String::new(),
        };
        writeln!(
            out,
            "{:<12}  {:<10}  {:>11}  {:>10}  {:>7}  {}",
            p.serial,
            p.state,
            p.image_crc32.as_deref().unwrap_or("-"),
            opt(p.verify_max_ppm),
            opt(p.eol_max_ppm),
            why
        )?;
    }
    writeln!(out, "{}", output::caution_for(info.simulated))?;
    Ok(())
}

fn history(args: HistoryArgs, out: &mut dyn Write) -> Result<(), CliError> {
    let db = open_db(&args.db.db)?;
    let events = query::history(&db, &args.serial).map_err(db_error)?;
    if args.json {
        out.write_all(&output::to_json_bytes(&events))?;
        return Ok(());
    }
    for e in &events {
        writeln!(
            out,
            "{}  {}  {:<12}  {}  [{}]",
            e.at, e.lot, e.what, e.detail, e.tool_version
        )?;
    }
    Ok(())
}

fn release(args: ReleaseArgs, out: &mut dyn Write) -> Result<(), CliError> {
    let mut db = open_db(&args.db.db)?;
    let r = query::release(&mut db, &args.lot, args.serial.as_deref()).map_err(db_error)?;
    if args.json {
        out.write_all(&output::to_json_bytes(&r))?;
    } else {
        for (s, crc) in &r.released {
            writeln!(out, "{s}: released image crc32 {crc}")?;
        }
        for s in &r.already {
            writeln!(out, "{s}: already released")?;
        }
        for (s, why) in &r.refused {
            writeln!(out, "{s}: not released: {why}")?;
        }
        writeln!(
            out,
            "lot '{}': {} released now, {} before, {} refused",
            args.lot,
            r.released.len(),
            r.already.len(),
            r.refused.len()
        )?;
    }
    match (&args.serial, r.refused.first()) {
        (Some(_), Some((s, why))) => {
            Err(CliError::CheckFailed(format!("{s}: not released: {why}")))
        }
        _ => Ok(()),
    }
}

fn export(args: ExportArgs, out: &mut dyn Write) -> Result<(), CliError> {
    let db = open_db(&args.db.db)?;
    let (_, parts) = query::lot_status(&db, &args.lot).map_err(db_error)?;
    let bytes = match args.format {
        TraceFormat::Csv => query::records_csv(&parts),
        TraceFormat::Json => output::to_json_bytes(&parts),
    };
    match &args.out {
        Some(p) => {
            output::check_not_input(p, &[args.db.db.as_path()])?;
            output::write_atomic(p, &bytes)?;
            writeln!(out, "{} records -> {}", parts.len(), p.display())?;
        }
        None => out.write_all(&bytes)?,
    }
    Ok(())
}

fn report(args: ReportArgs, out: &mut dyn Write) -> Result<(), CliError> {
    let (f, inputs) = match (&args.folder, &args.lot) {
        (Some(dir), lot) => {
            let f = crate::demo::folder::lot_figures(dir, lot.as_deref())
                .map_err(|e| CliError::Input(e.to_string()))?;
            let inputs: Vec<PathBuf> = [
                "scenario.toml",
                "design.json",
                "chamber-check.csv",
                "chamber-calibration.csv",
            ]
            .iter()
            .map(|n| dir.join(n))
            .collect();
            (f, inputs)
        }
        (None, Some(lot)) => {
            let db = open_db(&args.db.db)?;
            let f = figures::lot_figures(&db, lot).map_err(db_error)?;
            (f, vec![args.db.db.clone()])
        }
        // clap requires LOT unless --folder is given.
        (None, None) => {
            return Err(CliError::option(
                "--folder",
                "",
                "give a LOT or --folder DIR",
            ));
        }
    };
    let html = crate::plot::report::lot_report_html(&f)
        .map_err(|e| CliError::Input(format!("{}: {e}", args.out.display())))?;
    let inputs: Vec<&Path> = inputs.iter().map(PathBuf::as_path).collect();
    output::check_not_input(&args.out, &inputs)?;
    output::write_atomic(&args.out, html.as_bytes())?;
    writeln!(
        out,
        "lot report of '{}' ({} parts) -> {}",
        f.lot,
        f.parts.len(),
        args.out.display()
    )?;
    Ok(())
}

fn check(args: CheckArgs, out: &mut dyn Write) -> Result<(), CliError> {
    let db = open_db(&args.db.db)?;
    let integrity: String = db
        .conn
        .query_row("PRAGMA integrity_check", [], |r| r.get(0))
        .map_err(|e| db_error(db.err(e)))?;
    let (budget, stored) = query::stored_images(&db, &args.lot).map_err(db_error)?;
    let mut failed = Vec::new();
    let mut disagree = Vec::new();
    let mut curves_by_scenario = std::collections::BTreeMap::new();
    for s in &stored {
        let part = crate::station::part_file::PartFile::parse(
            &format!("{}: part {}", args.db.db.display(), s.serial),
            &String::from_utf8_lossy(&s.part_json),
        )
        .map_err(|e| CliError::Input(e.to_string()))?;
        let key = crate::station::spec::to_toml(&part.scenario);
        if !curves_by_scenario.contains_key(&key) {
            let c = pipeline::part_curves(&part).map_err(|e| CliError::Input(e.to_string()))?;
            curves_by_scenario.insert(key.clone(), c);
        }
        let curves = &curves_by_scenario[&key];
        // Parsing checks the image's CRC-32 before anything is evaluated.
        let verdict = pipeline::verify(
            &s.image,
            &part,
            curves,
            budget,
            pipeline::DENSE_TEMPS,
            pipeline::DENSE_STIMULI,
        );
        let pass = match verdict {
            Ok(v) if v.pass => true,
            Ok(v) => {
                failed.push(format!(
                    "{}: {:.1} ppm over allowance {:.1} ppm",
                    s.serial, v.max_error_ppm, v.table_allowance_ppm
                ));
                false
            }
            Err(e) => {
                failed.push(format!("{}: {e}", s.serial));
                false
            }
        };
        if s.verify_pass.is_some_and(|recorded| recorded != pass) {
            disagree.push(s.serial.clone());
        }
    }
    for f in &failed {
        writeln!(out, "fails verify: {f}")?;
    }
    for s in &disagree {
        writeln!(
            out,
            "{s}: re-verification disagrees with the recorded verdict"
        )?;
    }
    writeln!(
        out,
        "lot '{}': {} stored images, {} pass verify, {} disagree with their record; integrity_check: {integrity}",
        args.lot,
        stored.len(),
        stored.len() - failed.len(),
        disagree.len()
    )?;
    // A stored image that fails verify was recorded as rejected: only a
    // verdict that changed, or a damaged file, fails the check.
    if integrity != "ok" || !disagree.is_empty() {
        return Err(CliError::CheckFailed(format!(
            "lot '{}': {} image(s) re-verify differently from their record, integrity_check {integrity}",
            args.lot,
            disagree.len()
        )));
    }
    Ok(())
}
