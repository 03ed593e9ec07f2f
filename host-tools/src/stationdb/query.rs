//! Reading the station database: a lot's status part by part, a serial's
//! history, release of the images that passed, traceability records.

use super::TOOL_VERSION;
use super::schema::{Db, DbError, NOW_SQL};
use rusqlite::{OptionalExtension, params};

/// A lot's recorded facts.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct LotInfo {
    /// Lot name.
    pub name: String,
    /// Scenario name.
    pub scenario_name: String,
    /// The scenario as TOML.
    #[serde(skip)]
    pub scenario_toml: String,
    /// Simulated lot (invented data).
    pub simulated: bool,
    /// Budget, ppm of span.
    pub budget_ppm: f64,
    // Documented record fields read alike (PartRecord below); each struct is its own query row.
    /// Design content hash.
    pub design_hash: Option<String>,
    /// Calibration CSV content hash.
    pub calibration_sha256: Option<String>,
    /// Check CSV content hash.
    pub check_sha256: Option<String>,
    /// When the lot was recorded.
    pub recorded_at: String,
}

/// Budget terms of a verified image, ppm of span.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Terms {
    /// Interpolation.
    pub interpolation_ppm: f64,
    /// Number-format quantization.
    pub quantization_ppm: f64,
    /// Runtime-model deviation.
    pub runtime_model_ppm: f64,
    /// Calibration fit residual.
    pub fit_residual_ppm: f64,
    /// Temperature signal times drift slope.
    pub temperature_ppm: f64,
    /// Sum.
    pub total_ppm: f64,
}

/// One part's state and its traceability record.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct PartRecord {
    /// Lot name.
    pub lot: String,
    /// Serial.
    pub serial: String,
    /// `released`, `passed` (ready to release), `rejected` or `calibrated`
    /// (fitted, not yet through every check).
    pub state: String,
    /// Fit status text.
    pub fit_status: String,
    /// Fit RMS residual, ppm of span.
    pub fit_rms_ppm: Option<f64>,
    /// SHA-256 of the part file.
    pub part_sha256: String,
    /// When the fit was recorded.
    pub fitted_at: String,
    /// Calibration CSV content hash.
    pub chamber_csv_sha256: String,
    /// Design content hash.
    pub design_hash: Option<String>,
    /// Image CRC-32 (as the image's trailer carries it).
    pub image_crc32: Option<String>,
    /// Image size, bytes.
    pub image_bytes: Option<i64>,
    /// Verification passed.
    pub verify_pass: Option<bool>,
    /// Dense table error, ppm of span.
    pub verify_max_ppm: Option<f64>,
    /// Table allowance, ppm of span.
    pub allowance_ppm: Option<f64>,
    /// When verified.
    pub verified_at: Option<String>,
    /// End-of-line check passed.
    pub eol_pass: Option<bool>,
    /// End-of-line worst error, ppm of span.
    pub eol_max_ppm: Option<f64>,
    /// When checked.
    pub eol_at: Option<String>,
    /// When released for flashing.
    pub released_at: Option<String>,
    /// Stage that rejected the part.
    pub reject_stage: Option<String>,
    /// Why.
    pub reject_reason: Option<String>,
    /// Tool version of the fit.
    pub tool_version: String,
    /// Budget terms of the verification.
    #[serde(skip)]
    pub terms: Option<Terms>,
    /// End-of-line envelope: [t_c, least, greatest error ppm].
    #[serde(skip)]
    pub envelope: Vec<[f64; 3]>,
    /// Image row id.
    #[serde(skip)]
    pub image_id: Option<i64>,
}

fn lot_info(db: &Db, lot: &str) -> Result<(i64, LotInfo), DbError> {
    let row = db
        .conn
        .query_row(
            "SELECT l.id, l.name, l.scenario_name, l.scenario_toml, l.simulated, l.budget_ppm, d.design_hash, l.recorded_at,
                (SELECT csv_sha256 FROM chamber_runs WHERE lot_id = l.id AND kind = 'calibration'),
                (SELECT csv_sha256 FROM chamber_runs WHERE lot_id = l.id AND kind = 'check')
             FROM lots l LEFT JOIN designs d ON d.id = l.design_id WHERE l.name = ?",
            [lot],
            |r| {
                Ok((
                    r.get(0)?,
                    LotInfo {
                        name: r.get(1)?,
                        scenario_name: r.get(2)?,
                        scenario_toml: r.get(3)?,
                        simulated: r.get(4)?,
                        budget_ppm: r.get(5)?,
                        design_hash: r.get(6)?,
                        recorded_at: r.get(7)?,
                        calibration_sha256: r.get(8)?,
                        check_sha256: r.get(9)?,
                    },
                ))
            },
        )
        .optional()
        .map_err(|e| db.err(e))?;
    row.ok_or_else(|| db.refuse(format!("no lot named '{lot}'")))
}

/// The lot's facts and every part's record, in serial order.
pub fn lot_status(db: &Db, lot: &str) -> Result<(LotInfo, Vec<PartRecord>), DbError> {
    let (lot_id, info) = lot_info(db, lot)?;
    let mut st = db
        .conn
        .prepare(
            "SELECT f.serial, f.status, f.fit_rms_ppm, f.part_sha256, f.recorded_at, r.csv_sha256, d.design_hash,
                    i.id, i.crc32, i.size_bytes,
                    v.pass, v.max_error_ppm, v.allowance_ppm, v.recorded_at,
                    v.interpolation_ppm, v.quantization_ppm, v.runtime_model_ppm, v.fit_residual_ppm, v.temperature_ppm, v.total_ppm,
                    e.pass, e.max_error_ppm, e.recorded_at, e.envelope_json,
                    rel.released_at,
                    (SELECT stage FROM rejects WHERE fit_id = f.id ORDER BY id DESC LIMIT 1),
                    (SELECT reason FROM rejects WHERE fit_id = f.id ORDER BY id DESC LIMIT 1),
                    f.tool_version
             FROM fits f
             JOIN chamber_runs r ON r.id = f.chamber_run_id
             LEFT JOIN designs d ON d.id = f.design_id
             LEFT JOIN images i ON i.id = (SELECT max(id) FROM images WHERE fit_id = f.id)
             LEFT JOIN verifications v ON v.id = (SELECT max(id) FROM verifications WHERE image_id = i.id)
             LEFT JOIN eol_checks e ON e.id = (SELECT max(id) FROM eol_checks WHERE image_id = i.id)
             LEFT JOIN releases rel ON rel.image_id = i.id
             WHERE f.lot_id = ? ORDER BY f.serial",
        )
        .map_err(|e| db.err(e))?;
    let rows = st
        .query_map([lot_id], |r| {
            let crc: Option<i64> = r.get(8)?;
            let interp: Option<f64> = r.get(14)?;
            let terms = match interp {
                Some(interpolation_ppm) => Some(Terms {
                    interpolation_ppm,
                    quantization_ppm: r.get(15)?,
                    runtime_model_ppm: r.get(16)?,
                    fit_residual_ppm: r.get(17)?,
                    temperature_ppm: r.get(18)?,
                    total_ppm: r.get(19)?,
                }),
                None => None,
            };
            let envelope: Option<String> = r.get(23)?;
            let mut p = PartRecord {
                lot: info.name.clone(),
                serial: r.get(0)?,
                state: String::new(),
                fit_status: r.get(1)?,
                fit_rms_ppm: r.get(2)?,
                part_sha256: r.get(3)?,
                fitted_at: r.get(4)?,
                chamber_csv_sha256: r.get(5)?,
                design_hash: r.get(6)?,
                image_id: r.get(7)?,
                image_crc32: crc.map(|c| format!("{c:08x}")),
                image_bytes: r.get(9)?,
                verify_pass: r.get(10)?,
                verify_max_ppm: r.get(11)?,
                allowance_ppm: r.get(12)?,
                verified_at: r.get(13)?,
                terms,
                eol_pass: r.get(20)?,
                eol_max_ppm: r.get(21)?,
                eol_at: r.get(22)?,
                envelope: envelope
                    .and_then(|j| serde_json::from_str(&j).ok())
                    .unwrap_or_default(),
                released_at: r.get(24)?,
                reject_stage: r.get(25)?,
                reject_reason: r.get(26)?,
                tool_version: r.get(27)?,
            };
            p.state = if p.released_at.is_some() {
                "released"
            } else if p.reject_stage.is_some() {
                "rejected"
            } else if release_refusal(&p).is_none() {
                "passed"
            } else {
                "calibrated"
            }
            .to_string();
            Ok(p)
        })
        .and_then(|rows| rows.collect::<Result<Vec<_>, _>>())
        .map_err(|e| db.err(e))?;
    Ok((info, rows))
}

/// Why a part's image may not be released, or None when it may: its
/// latest image passed verification and the part passed the end-of-line
/// check on that image.
pub fn release_refusal(p: &PartRecord) -> Option<String> {
    if p.image_id.is_none() {
        return Some(match (&p.reject_stage, &p.reject_reason) {
            (Some(s), Some(r)) => format!("no image ({s}: {r})"),
            _ => "no image".to_string(),
        });
    }
    match p.verify_pass {
        None => return Some("image not verified".to_string()),
        Some(false) => {
            return Some(format!(
                "verification failed: {:.1} ppm over the allowance {:.1} ppm",
                p.verify_max_ppm.unwrap_or(f64::NAN),
                p.allowance_ppm.unwrap_or(f64::NAN)
            ));
        }
        Some(true) => {}
    }
    match p.eol_pass {
        None => Some("no end-of-line check recorded".to_string()),
        Some(false) => Some(format!(
            "end-of-line check failed: worst error {:.1} ppm",
            p.eol_max_ppm.unwrap_or(f64::NAN)
        )),
        Some(true) => None,
    }
}

/// What a release did.
#[derive(Debug, Clone, PartialEq, Default, serde::Serialize)]
pub struct ReleaseOutcome {
    /// Released now: (serial, image CRC-32).
    pub released: Vec<(String, String)>,
    /// Released before.
    pub already: Vec<String>,
    /// Refused: (serial, reason).
    pub refused: Vec<(String, String)>,
}

/// Releases for flashing the images of `lot` (or of one serial in it)
/// that passed verification and whose part passed the end-of-line check;
/// lists the others with the reason. One transaction.
pub fn release(db: &mut Db, lot: &str, serial: Option<&str>) -> Result<ReleaseOutcome, DbError> {
    let (_, parts) = lot_status(db, lot)?;
    if let Some(s) = serial
        && !parts.iter().any(|p| p.serial == s)
    {
        return Err(db.refuse(format!("lot '{lot}' has no part '{s}'")));
    }
    let now = db.fixed_time.clone();
    let wrap = &db.wrapper();
    let tx = db.immediate()?;
    let mut out = ReleaseOutcome::default();
    for p in parts
        .iter()
        .filter(|p| serial.is_none_or(|s| p.serial == s))
    {
        if p.released_at.is_some() {
            out.already.push(p.serial.clone());
            continue;
        }
        if let Some(why) = release_refusal(p) {
            out.refused.push((p.serial.clone(), why));
            continue;
        }
        let n = tx
            .execute(
                &format!(
                    "INSERT OR IGNORE INTO releases (image_id, serial, released_at, tool_version) VALUES (?, ?, {NOW_SQL}, ?)"
                ),
                params![p.image_id, p.serial, now, TOOL_VERSION],
            )
            .map_err(wrap)?;
        if n == 1 {
            out.released
                .push((p.serial.clone(), p.image_crc32.clone().unwrap_or_default()));
        } else {
            out.already.push(p.serial.clone());
        }
    }
    tx.commit().map_err(wrap)?;
    Ok(out)
}

/// One event of a serial's history.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct HistoryEvent {
    /// When.
    pub at: String,
    /// Lot.
    pub lot: String,
    /// What: `chamber run`, `fit`, `image`, `verification`, `end-of-line`,
    /// `rejected`, `released`.
    pub what: String,
    /// Its facts.
    pub detail: String,
    /// Tool version that recorded it.
    pub tool_version: String,
}

/// Every record of `serial`, in every lot, oldest first.
pub fn history(db: &Db, serial: &str) -> Result<Vec<HistoryEvent>, DbError> {
    let sql = "
        SELECT r.recorded_at, l.name, 'chamber run', r.kind || ' CSV ' || r.csv_name || ' sha256 ' || r.csv_sha256, r.tool_version, f.id, 0
          FROM fits f JOIN lots l ON l.id = f.lot_id JOIN chamber_runs r ON r.lot_id = f.lot_id WHERE f.serial = ?1
        UNION ALL
        SELECT f.recorded_at, l.name, 'fit', f.status || ', rms ' || printf('%.2f', f.fit_rms_ppm) || ' ppm, part sha256 ' || f.part_sha256
               || COALESCE(', design ' || d.design_hash, ', physics-only'), f.tool_version, f.id, 1
          FROM fits f JOIN lots l ON l.id = f.lot_id LEFT JOIN designs d ON d.id = f.design_id WHERE f.serial = ?1
        UNION ALL
        SELECT i.recorded_at, l.name, 'image', printf('crc32 %08x, %d bytes', i.crc32, i.size_bytes), i.tool_version, f.id, 2
          FROM images i JOIN fits f ON f.id = i.fit_id JOIN lots l ON l.id = f.lot_id WHERE f.serial = ?1
        UNION ALL
        SELECT v.recorded_at, l.name, 'verification', CASE v.pass WHEN 1 THEN 'pass' ELSE 'FAIL' END
               || printf(', max %.2f ppm of allowance %.2f ppm over %d points, image crc32 %08x', v.max_error_ppm, v.allowance_ppm, v.points, i.crc32),
               v.tool_version, f.id, 3
          FROM verifications v JOIN images i ON i.id = v.image_id JOIN fits f ON f.id = i.fit_id JOIN lots l ON l.id = f.lot_id WHERE f.serial = ?1
        UNION ALL
        SELECT e.recorded_at, l.name, 'end-of-line', CASE e.pass WHEN 1 THEN 'pass' ELSE 'FAIL' END
               || printf(', worst %.2f ppm of limit %.2f ppm over %d rows, image crc32 %08x', e.max_error_ppm, e.limit_ppm, e.rows, i.crc32),
               e.tool_version, f.id, 4
          FROM eol_checks e JOIN images i ON i.id = e.image_id JOIN fits f ON f.id = i.fit_id JOIN lots l ON l.id = f.lot_id WHERE f.serial = ?1
        UNION ALL
        SELECT x.recorded_at, l.name, 'rejected', x.stage || ': ' || x.reason, x.tool_version, f.id, 5
          FROM rejects x JOIN fits f ON f.id = x.fit_id JOIN lots l ON l.id = f.lot_id WHERE f.serial = ?1
        UNION ALL
        SELECT s.released_at, l.name, 'released', printf('image crc32 %08x', i.crc32), s.tool_version, f.id, 6
          FROM releases s JOIN images i ON i.id = s.image_id JOIN fits f ON f.id = i.fit_id JOIN lots l ON l.id = f.lot_id WHERE f.serial = ?1
        ORDER BY 6, 7, 1";
    let mut st = db.conn.prepare(sql).map_err(|e| db.err(e))?;
    let rows = st
        .query_map([serial], |r| {
            Ok(HistoryEvent {
                at: r.get(0)?,
                lot: r.get(1)?,
                what: r.get(2)?,
                detail: r.get::<_, Option<String>>(3)?.unwrap_or_default(),
                tool_version: r.get(4)?,
            })
        })
        .and_then(|rows| rows.collect::<Result<Vec<_>, _>>())
        .map_err(|e| db.err(e))?;
    if rows.is_empty() {
        return Err(db.refuse(format!("no record of serial '{serial}'")));
    }
    Ok(rows)
}

/// A stored image with its part and its recorded verification.
#[derive(Debug, Clone, PartialEq)]
pub struct StoredImage {
    /// Serial.
    pub serial: String,
    /// The part file's bytes.
    pub part_json: Vec<u8>,
    /// The image's bytes.
    pub image: Vec<u8>,
    /// Recorded verdict of its latest verification, if any.
    pub verify_pass: Option<bool>,
}

/// The lot's budget and every stored image of it with its part file, in
/// serial order.
pub fn stored_images(db: &Db, lot: &str) -> Result<(f64, Vec<StoredImage>), DbError> {
    let (lot_id, info) = lot_info(db, lot)?;
    let mut st = db
        .conn
        .prepare(
            "SELECT f.serial, f.part_json, i.bytes,
                    (SELECT pass FROM verifications WHERE image_id = i.id ORDER BY id DESC LIMIT 1)
             FROM images i JOIN fits f ON f.id = i.fit_id
             WHERE f.lot_id = ? ORDER BY f.serial, i.id",
        )
        .map_err(|e| db.err(e))?;
    let images = st
        .query_map([lot_id], |r| {
            Ok(StoredImage {
                serial: r.get(0)?,
                part_json: r.get(1)?,
                image: r.get(2)?,
                verify_pass: r.get(3)?,
            })
        })
        .and_then(|rows| rows.collect::<Result<Vec<_>, _>>())
        .map_err(|e| db.err(e))?;
    Ok((info.budget_ppm, images))
}

/// A part as recorded: its fit and the part file's bytes.
#[derive(Debug, Clone, PartialEq)]
pub struct RecordedPart {
    /// Fit row id.
    pub fit_id: i64,
    /// Lot name.
    pub lot: String,
    /// Serial.
    pub serial: String,
    /// The part file's bytes.
    pub part_json: Vec<u8>,
}

/// A recorded table image.
#[derive(Debug, Clone, PartialEq)]
pub struct RecordedImage {
    /// Image row id.
    pub id: i64,
    /// CRC-32 its trailer carries.
    pub crc32: u32,
    /// The image's bytes.
    pub bytes: Vec<u8>,
}

/// "in lot 'L'" or nothing.
fn in_lot(lot: Option<&str>) -> String {
    lot.map_or(String::new(), |l| format!(" in lot '{l}'"))
}

/// `names` quoted and comma-separated.
fn quoted<'a>(names: impl Iterator<Item = &'a str>) -> String {
    names
        .map(|n| format!("'{n}'"))
        .collect::<Vec<_>>()
        .join(", ")
}

impl RecordedPart {
    /// The part in the four columns from `first` on of a row selecting
    /// `f.id, l.name, f.serial, f.part_json`.
    fn from_row(r: &rusqlite::Row<'_>, first: usize) -> rusqlite::Result<Self> {
        Ok(Self {
            fit_id: r.get(first)?,
            lot: r.get(first + 1)?,
            serial: r.get(first + 2)?,
            part_json: r.get(first + 3)?,
        })
    }
}

/// The part recorded for `serial` (in `lot`, or in the one lot that has
/// it). Refused when none is, or when several lots have it and no lot is
/// named.
pub fn recorded_part(db: &Db, serial: &str, lot: Option<&str>) -> Result<RecordedPart, DbError> {
    let mut st = db
        .conn
        .prepare(
            "SELECT f.id, l.name, f.serial, f.part_json FROM fits f JOIN lots l ON l.id = f.lot_id
             WHERE f.serial = ?1 AND (?2 IS NULL OR l.name = ?2) ORDER BY l.name",
        )
        .map_err(|e| db.err(e))?;
    let mut rows: Vec<RecordedPart> = st
        .query_map(params![serial, lot], |r| RecordedPart::from_row(r, 0))
        .and_then(|rows| rows.collect::<Result<Vec<_>, _>>())
        .map_err(|e| db.err(e))?;
    match rows.len() {
        0 => Err(db.refuse(format!("no part '{serial}' is recorded{}", in_lot(lot)))),
        1 => Ok(rows.remove(0)),
        n => Err(db.refuse(format!(
            "part '{serial}' is recorded in {n} lots ({}): name the lot (--lot)",
            quoted(rows.iter().map(|p| p.lot.as_str()))
        ))),
    }
}

/// The latest image recorded for a part's fit (the one `lot status`
/// shows); refused when it has none.
pub fn latest_image(db: &Db, part: &RecordedPart) -> Result<RecordedImage, DbError> {
    db.conn
        .query_row(
            "SELECT id, crc32, bytes FROM images WHERE fit_id = ? ORDER BY id DESC LIMIT 1",
            [part.fit_id],
            |r| {
                Ok(RecordedImage {
                    id: r.get(0)?,
                    crc32: r.get::<_, i64>(1)? as u32,
                    bytes: r.get(2)?,
                })
            },
        )
        .optional()
        .map_err(|e| db.err(e))?
        .ok_or_else(|| {
            db.refuse(format!(
                "part '{}' of lot '{}' has no recorded table image",
                part.serial, part.lot
            ))
        })
}

/// The image recorded with CRC-32 `crc` (of `serial` and in `lot` when
/// given) and its part. Refused when none is, or when several are and the
/// serial or lot named do not single one out.
pub fn image_by_crc(
    db: &Db,
    crc: u32,
    serial: Option<&str>,
    lot: Option<&str>,
) -> Result<(RecordedPart, RecordedImage), DbError> {
    let mut st = db
        .conn
        .prepare(
            "SELECT f.id, l.name, f.serial, f.part_json, i.id, i.crc32, i.bytes
             FROM images i JOIN fits f ON f.id = i.fit_id JOIN lots l ON l.id = f.lot_id
             WHERE i.crc32 = ?1 AND (?2 IS NULL OR f.serial = ?2) AND (?3 IS NULL OR l.name = ?3)
             ORDER BY l.name, f.serial",
        )
        .map_err(|e| db.err(e))?;
    let mut rows: Vec<(RecordedPart, RecordedImage)> = st
        .query_map(params![i64::from(crc), serial, lot], |r| {
            Ok((
                RecordedPart::from_row(r, 0)?,
                RecordedImage {
                    id: r.get(4)?,
                    crc32: r.get::<_, i64>(5)? as u32,
                    bytes: r.get(6)?,
                },
            ))
        })
        .and_then(|rows| rows.collect::<Result<Vec<_>, _>>())
        .map_err(|e| db.err(e))?;
    let of = serial.map_or(String::new(), |s| format!(" of part '{s}'"));
    match rows.len() {
        0 => Err(db.refuse(format!(
            "no table image with crc32 {crc:08x} is recorded{of}{}",
            in_lot(lot)
        ))),
        1 => Ok(rows.remove(0)),
        n => Err(db.refuse(format!(
            "{n} recorded table images have crc32 {crc:08x} (parts {} in lots {}): name the part (--serial) or the lot (--lot)",
            quoted(rows.iter().map(|(p, _)| p.serial.as_str())),
            quoted(rows.iter().map(|(p, _)| p.lot.as_str()))
        ))),
    }
}

/// The lot's traceability records as CSV (one row per part, the columns of
/// [`PartRecord`]).
pub fn records_csv(parts: &[PartRecord]) -> Vec<u8> {
    let mut w = csv::Writer::from_writer(Vec::new());
    for p in parts {
        // Serialising plain fields into memory cannot fail.
        let _ = w.serialize(p);
    }
    w.into_inner().unwrap_or_default()
}
