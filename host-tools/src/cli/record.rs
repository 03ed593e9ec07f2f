//! `--db` on the file commands: what `calibrate`, `table`, `verify` and
//! `apply` also record in the station database. The files are written as
//! without it; a refusal of the database (exit 2) comes before any file is
//! written where the command can know it in advance.

use super::CliError;
use super::lot::{db_error, open_db};
use crate::station::pipeline::VerifyReport;
use crate::stationdb::Db;
use crate::stationdb::record::{self, EolCheck};
use std::path::Path;

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
