//! `--db` on the file commands: what `calibrate`, `table`, `verify` and
//! `apply` also record in the station database, and the inputs `table`,
//! `verify` and `apply` take from it (`--serial`, `--lot`, `--crc`) in place
//! of a part file or image file. The files are written as without it; a
//! refusal of the database (exit 2) comes before any file is written where
//! the command can know it in advance.

use super::CliError;
use super::lot::{db_error, open_db};
use crate::station::part_file::PartFile;
use crate::station::pipeline::VerifyReport;
use crate::stationdb::record::{self, EolCheck};
use crate::stationdb::{Db, query};
use std::path::{Path, PathBuf};

/// The options that name a recorded part instead of a part file.
#[derive(Debug, Clone, Default, clap::Args)]
pub struct FromDbArgs {
    /// With --db: the part recorded for this serial instead of a part file
    /// (for verify and apply without an image file: with its latest
    /// recorded table image, the one `lot status` shows).
    #[arg(long, requires = "db", value_name = "SERIAL")]
    pub serial: Option<String>,
    /// With --db: the lot of --serial (or of --crc), needed when several
    /// lots hold it.
    #[arg(long, requires = "db", value_name = "LOT")]
    pub lot: Option<String>,
}

/// Parses a CRC-32 as `lot status` prints it: 8 hex digits (an optional
/// `0x` prefix allowed).
pub fn parse_crc(s: &str) -> Result<u32, String> {
    let h = s
        .strip_prefix("0x")
        .or_else(|| s.strip_prefix("0X"))
        .unwrap_or(s);
    if h.is_empty() || h.len() > 8 || !h.bytes().all(|b| b.is_ascii_hexdigit()) {
        return Err(format!(
            "'{s}' is not a CRC-32: up to 8 hex digits, as `lot status` prints it"
        ));
    }
    u32::from_str_radix(h, 16).map_err(|e| format!("'{s}' is not a CRC-32: {e}"))
}

/// The database path that `requires = "db"` guarantees with a selector.
pub fn db_path<'a>(db: &'a Option<PathBuf>, option: &str) -> Result<&'a Path, CliError> {
    db.as_deref()
        .ok_or_else(|| CliError::option(option, "", "takes its input from the database: give --db"))
}

/// Refuses `--lot` without what it narrows.
pub fn check_lot_narrows(from: &FromDbArgs, crc: Option<u32>) -> Result<(), CliError> {
    match &from.lot {
        Some(lot) if from.serial.is_none() && crc.is_none() => Err(CliError::option(
            "--lot",
            lot,
            "names the lot of --serial or --crc: give one of them",
        )),
        _ => Ok(()),
    }
}

/// A part taken from the database, and the fit that records under it.
#[derive(Debug)]
pub struct RecordedPart {
    /// The open database.
    pub db: Db,
    /// The fit's row id.
    pub fit_id: i64,
    /// The part.
    pub part: PartFile,
    /// How messages name it: `DB: lot 'L', part S`.
    pub label: String,
}

fn parse_recorded(db: Db, r: query::RecordedPart) -> Result<RecordedPart, CliError> {
    let label = format!("{}: lot '{}', part {}", db.path.display(), r.lot, r.serial);
    let part = PartFile::parse(&label, &String::from_utf8_lossy(&r.part_json))
        .map_err(|e| CliError::Input(e.to_string()))?;
    Ok(RecordedPart {
        db,
        fit_id: r.fit_id,
        part,
        label,
    })
}

/// The part recorded for `serial` (in `lot`); exit 2 when there is none or
/// the serial is in several lots and none is named.
pub fn recorded_part(
    db_path: &Path,
    serial: &str,
    lot: Option<&str>,
) -> Result<RecordedPart, CliError> {
    let db = open_db(db_path)?;
    let r = query::recorded_part(&db, serial, lot).map_err(db_error)?;
    parse_recorded(db, r)
}

/// An image and its part for `verify` and `apply`, at least one of them
/// from the database.
#[derive(Debug)]
pub struct RecordedInputs {
    /// The part and its fit.
    pub part: RecordedPart,
    /// The image's bytes.
    pub image: Vec<u8>,
    /// How messages name the image: its file, or `DB: image crc32 C of
    /// lot 'L', part S`.
    pub image_label: String,
}

/// The image and part named by `--crc` (that image and its part), or by
/// `--serial` (the part, with `image_file` when given, else its latest
/// recorded image).
pub fn recorded_inputs(
    db_path: &Path,
    from: &FromDbArgs,
    crc: Option<u32>,
    image_file: Option<&Path>,
) -> Result<RecordedInputs, CliError> {
    let db_image_label = |db: &Db, crc: u32, lot: &str, serial: &str| {
        format!(
            "{}: image crc32 {crc:08x} of lot '{lot}', part {serial}",
            db.path.display()
        )
    };
    match (crc, &from.serial, image_file) {
        (Some(_), _, Some(file)) => Err(CliError::option(
            "--crc",
            &file.display().to_string(),
            "names the image in the database: give no image file with it",
        )),
        (Some(crc), serial, None) => {
            let db = open_db(db_path)?;
            let (p, image) = query::image_by_crc(&db, crc, serial.as_deref(), from.lot.as_deref())
                .map_err(db_error)?;
            let image_label = db_image_label(&db, crc, &p.lot, &p.serial);
            let part = parse_recorded(db, p)?;
            Ok(RecordedInputs {
                part,
                image: image.bytes,
                image_label,
            })
        }
        (None, Some(serial), file) => {
            let db = open_db(db_path)?;
            let p = query::recorded_part(&db, serial, from.lot.as_deref()).map_err(db_error)?;
            let (image, image_label) = match file {
                Some(f) => (super::verify::read_image(f)?, f.display().to_string()),
                None => {
                    let i = query::latest_image(&db, &p).map_err(db_error)?;
                    let label = db_image_label(&db, i.crc32, &p.lot, &p.serial);
                    (i.bytes, label)
                }
            };
            Ok(RecordedInputs {
                part: parse_recorded(db, p)?,
                image,
                image_label,
            })
        }
        (None, None, _) => Err(CliError::option(
            "--serial",
            "",
            "give --serial or --crc to take the inputs from the database",
        )),
    }
}

/// The fit a part file was recorded as: (fit id, lot id). Exit 2 when the
/// part file is not in the database.
fn fit_of(db: &Db, part_path: &Path) -> Result<(i64, i64), CliError> {
    let bytes = std::fs::read(part_path)
        .map_err(|e| CliError::Input(format!("{}: {e}", part_path.display())))?;
    record::fit_by_part_bytes(&db.conn, &bytes)
        .map_err(|e| db_error(db.err(e)))?
        .ok_or_else(|| {
            CliError::Input(format!(
                "{}: this part file is not recorded in {} (record its fit with calibrate --db, or lot run)",
                part_path.display(),
                db.path.display()
            ))
        })
}

/// Opens the database and finds the part's fit before the command writes
/// anything.
pub fn prepare(db_path: &Path, part_path: &Path) -> Result<(Db, i64), CliError> {
    let db = open_db(db_path)?;
    let (fit_id, _) = fit_of(&db, part_path)?;
    Ok((db, fit_id))
}

fn in_tx<T>(
    db: &mut Db,
    f: impl FnOnce(&rusqlite::Transaction<'_>, Option<&str>) -> rusqlite::Result<T>,
) -> Result<T, CliError> {
    let now = db.fixed_time.clone();
    let sqlite = db.wrapper();
    let wrap = |e| db_error(sqlite(e));
    let tx = db.immediate().map_err(db_error)?;
    let v = f(&tx, now.as_deref()).map_err(wrap)?;
    tx.commit().map_err(wrap)?;
    Ok(v)
}

/// Records a table image of the fit.
pub fn image(db: &mut Db, fit_id: i64, image: &[u8]) -> Result<i64, CliError> {
    in_tx(db, |tx, now| record::insert_image(tx, fit_id, image, now))
}

/// Records an image (if new) and its verification.
pub fn verification(
    db: &mut Db,
    fit_id: i64,
    image: &[u8],
    report: &VerifyReport,
) -> Result<(), CliError> {
    in_tx(db, |tx, now| {
        let id = record::insert_image(tx, fit_id, image, now)?;
        record::insert_verification(tx, id, report, now)
    })?;
    Ok(())
}

/// Records an image (if new) and its end-of-line check.
pub fn eol(db: &mut Db, fit_id: i64, image: &[u8], check: &EolCheck) -> Result<(), CliError> {
    in_tx(db, |tx, now| {
        let id = record::insert_image(tx, fit_id, image, now)?;
        record::insert_eol(tx, id, None, check, now)
    })?;
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::parse_crc;

    #[test]
    fn crc_reads_as_lot_status_prints_it() {
        assert_eq!(parse_crc("0badc0de"), Ok(0x0bad_c0de));
        assert_eq!(parse_crc("0X0BADC0DE"), Ok(0x0bad_c0de));
        assert_eq!(parse_crc("ff"), Ok(0xff));
        for bad in ["", "0x", "123456789", "12g4", "-1", "+ff"] {
            assert!(parse_crc(bad).is_err(), "{bad}");
        }
    }
}
