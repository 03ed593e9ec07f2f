//! Writing records: each function takes an open transaction, so that a
//! caller commits a whole part (fit, image, verification, end-of-line check
//! or rejection) or nothing.

use super::TOOL_VERSION;
use super::schema::NOW_SQL;
use crate::station::design::DesignFile;
use crate::station::part_file::PartFile;
use crate::station::pipeline::VerifyReport;
use crate::station::scenario::Scenario;
use rusqlite::{Connection, OptionalExtension, params};
use sha2::{Digest, Sha256};

/// Lower-case hex SHA-256 of `bytes`.
pub fn sha256_hex(bytes: &[u8]) -> String {
    Sha256::digest(bytes)
        .iter()
        .map(|b| format!("{b:02x}"))
        .collect()
}

/// What kind of chamber run a CSV is.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum RunKind {
    /// Calibration temperatures: the fits are made from it.
    Calibration,
    /// Held-out temperatures: the end-of-line check.
    Check,
}

impl RunKind {
    /// The name the database stores.
    pub fn as_str(self) -> &'static str {
        match self {
            RunKind::Calibration => "calibration",
            RunKind::Check => "check",
        }
    }
}

/// The design's row id, recording it if new (by content hash).
pub fn ensure_design(
    c: &Connection,
    design: &DesignFile,
    now: Option<&str>,
) -> rusqlite::Result<i64> {
    if let Some(id) = c
        .query_row(
            "SELECT id FROM designs WHERE design_hash = ?",
            [&design.hash],
            |r| r.get(0),
        )
        .optional()?
    {
        return Ok(id);
    }
    c.execute(
        &format!(
            "INSERT INTO designs (design_hash, design_json, recorded_at, tool_version) VALUES (?, ?, {NOW_SQL}, ?)"
        ),
        params![design.hash, design.to_bytes(), now, TOOL_VERSION],
    )?;
    Ok(c.last_insert_rowid())
}

/// A lot as recorded.
#[derive(Debug, Clone, PartialEq)]
pub struct LotRow {
    /// Row id.
    pub id: i64,
    /// Name.
    pub name: String,
    /// Scenario name.
    pub scenario_name: String,
    /// Design row, if the lot is fitted on one.
    pub design_id: Option<i64>,
}

// Lookups read alike (one query_row each): each maps its own columns.
/// The lot named `name`, if recorded.
pub fn find_lot(c: &Connection, name: &str) -> rusqlite::Result<Option<LotRow>> {
    c.query_row(
        "SELECT id, name, scenario_name, design_id FROM lots WHERE name = ?",
        [name],
        |r| {
            Ok(LotRow {
                id: r.get(0)?,
                name: r.get(1)?,
                scenario_name: r.get(2)?,
                design_id: r.get(3)?,
            })
        },
    )
    .optional()
}

/// Records a new lot.
pub fn insert_lot(
    c: &Connection,
    name: &str,
    scenario: &Scenario,
    budget_ppm: f64,
    design_id: Option<i64>,
    now: Option<&str>,
) -> rusqlite::Result<i64> {
    c.execute(
        &format!(
            "INSERT INTO lots (name, scenario_name, scenario_toml, simulated, budget_ppm, design_id, recorded_at, tool_version) VALUES (?, ?, ?, ?, ?, ?, {NOW_SQL}, ?)"
        ),
        params![
            name,
            scenario.name,
            crate::station::spec::to_toml(scenario),
            scenario.simulated,
            budget_ppm,
            design_id,
            now,
            TOOL_VERSION
        ],
    )?;
    Ok(c.last_insert_rowid())
}

/// A chamber run as recorded.
#[derive(Debug, Clone, PartialEq)]
pub struct RunRow {
    /// Row id.
    pub id: i64,
    /// Lot row id.
    pub lot_id: i64,
    /// Lot name.
    pub lot: String,
    /// Calibration or check.
    pub kind: String,
}

/// The chamber run with this CSV content hash, if recorded (in any lot).
pub fn find_run(c: &Connection, csv_sha256: &str) -> rusqlite::Result<Option<RunRow>> {
    c.query_row(
        "SELECT r.id, r.lot_id, l.name, r.kind FROM chamber_runs r JOIN lots l ON l.id = r.lot_id WHERE r.csv_sha256 = ?",
        [csv_sha256],
        |r| {
            Ok(RunRow {
                id: r.get(0)?,
                lot_id: r.get(1)?,
                lot: r.get(2)?,
                kind: r.get(3)?,
            })
        },
    )
    .optional()
}

/// The lot's chamber run of `kind`, if recorded: (row id, CSV hash).
pub fn lot_run(
    c: &Connection,
    lot_id: i64,
    kind: RunKind,
) -> rusqlite::Result<Option<(i64, String)>> {
    c.query_row(
        "SELECT id, csv_sha256 FROM chamber_runs WHERE lot_id = ? AND kind = ? ORDER BY id LIMIT 1",
        params![lot_id, kind.as_str()],
        |r| Ok((r.get(0)?, r.get(1)?)),
    )
    .optional()
}

/// Records a chamber run (its CSV's content hash is unique in the file).
#[allow(clippy::too_many_arguments)]
pub fn insert_run(
    c: &Connection,
    lot_id: i64,
    kind: RunKind,
    csv_sha256: &str,
    csv_name: &str,
    rows: usize,
    serials: usize,
    now: Option<&str>,
) -> rusqlite::Result<i64> {
    c.execute(
        &format!(
            "INSERT INTO chamber_runs (lot_id, kind, csv_sha256, csv_name, rows, serials, recorded_at, tool_version) VALUES (?, ?, ?, ?, ?, ?, {NOW_SQL}, ?)"
        ),
        params![
            lot_id,
            kind.as_str(),
            csv_sha256,
            csv_name,
            rows as i64,
            serials as i64,
            now,
            TOOL_VERSION
        ],
    )?;
    Ok(c.last_insert_rowid())
}

/// Records a part's fit; returns its row id. A second fit of the same
/// serial in the same lot is refused by the schema (UNIQUE).
pub fn insert_fit(
    c: &Connection,
    lot_id: i64,
    run_id: i64,
    design_id: Option<i64>,
    part: &PartFile,
    now: Option<&str>,
) -> rusqlite::Result<i64> {
    let bytes = part.to_bytes();
    c.execute(
        &format!(
            "INSERT INTO fits (lot_id, chamber_run_id, design_id, serial, ok, status, fit_rms_ppm, fit_max_ppm, part_sha256, part_json, recorded_at, tool_version) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, {NOW_SQL}, ?)"
        ),
        params![
            lot_id,
            run_id,
            design_id,
            part.serial,
            part.is_ok(),
            part.status,
            finite(part.fit_rms_ppm),
            finite(part.fit_max_ppm),
            sha256_hex(&bytes),
            bytes,
            now,
            TOOL_VERSION
        ],
    )?;
    Ok(c.last_insert_rowid())
}

fn finite(x: f64) -> Option<f64> {
    x.is_finite().then_some(x)
}

/// Records a table image (bytes, the CRC-32 its trailer carries, plan);
/// the same image of the same fit is recorded once. Returns its row id.
pub fn insert_image(
    c: &Connection,
    fit_id: i64,
    image: &[u8],
    now: Option<&str>,
) -> rusqlite::Result<i64> {
    let crc = image_crc(image);
    let plan = compensate::TableView::parse(image)
        .map(|v| crate::station::output::to_json_bytes(&crate::station::pipeline::plan_of(&v)))
        .unwrap_or_else(|_| b"null".to_vec());
    if let Some(id) = c
        .query_row(
            "SELECT id FROM images WHERE fit_id = ? AND crc32 = ?",
            params![fit_id, crc],
            |r| r.get(0),
        )
        .optional()?
    {
        return Ok(id);
    }
    c.execute(
        &format!(
            "INSERT INTO images (fit_id, bytes, crc32, size_bytes, plan_json, recorded_at, tool_version) VALUES (?, ?, ?, ?, ?, {NOW_SQL}, ?)"
        ),
        params![
            fit_id,
            image,
            crc,
            image.len() as i64,
            String::from_utf8_lossy(plan.trim_ascii_end()),
            now,
            TOOL_VERSION
        ],
    )?;
    Ok(c.last_insert_rowid())
}

/// The CRC-32 an image's trailer carries (little-endian last four bytes),
/// 0 for an image shorter than that.
pub fn image_crc(image: &[u8]) -> i64 {
    match image.len().checked_sub(4) {
        Some(k) => {
            let mut b = [0u8; 4];
            b.copy_from_slice(&image[k..]);
            i64::from(u32::from_le_bytes(b))
        }
        None => 0,
    }
}

/// Records a verification of an image.
pub fn insert_verification(
    c: &Connection,
    image_id: i64,
    v: &VerifyReport,
    now: Option<&str>,
) -> rusqlite::Result<i64> {
    let t = &v.terms;
    c.execute(
        &format!(
            "INSERT INTO verifications (image_id, pass, max_error_ppm, rms_error_ppm, worst_t_c, points, allowance_ppm, budget_ppm, interpolation_ppm, quantization_ppm, runtime_model_ppm, fit_residual_ppm, temperature_ppm, total_ppm, report_json, recorded_at, tool_version) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, {NOW_SQL}, ?)"
        ),
        params![
            image_id,
            v.pass,
            v.max_error_ppm,
            v.rms_error_ppm,
            v.worst_t_c,
            v.points as i64,
            v.table_allowance_ppm,
            v.budget_ppm,
            t.interpolation_ppm,
            t.quantization_ppm,
            t.runtime_model_ppm,
            t.fit_residual_ppm,
            t.temperature_ppm,
            t.total_ppm,
            String::from_utf8_lossy(&crate::station::output::to_json_bytes(v)),
            now,
            TOOL_VERSION
        ],
    )?;
    Ok(c.last_insert_rowid())
}

/// An end-of-line check of an image: the part compensated by the image at
/// held-out chamber temperatures inside the operating range.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct EolCheck {
    /// Worst |error| over the rows judged, ppm of span.
    pub max_error_ppm: f64,
    /// The limit (the lot's budget), ppm of span.
    pub limit_ppm: f64,
    /// Rows judged (rows on an ADC rail are not).
    pub rows: usize,
    /// Per check temperature: [t_c, least error, greatest error], ppm.
    pub envelope: Vec<[f64; 3]>,
    /// Whether `max_error_ppm <= limit_ppm` over at least one row.
    pub pass: bool,
}

/// Records an end-of-line check.
pub fn insert_eol(
    c: &Connection,
    image_id: i64,
    run_id: Option<i64>,
    e: &EolCheck,
    now: Option<&str>,
) -> rusqlite::Result<i64> {
    c.execute(
        &format!(
            "INSERT INTO eol_checks (image_id, chamber_run_id, pass, max_error_ppm, limit_ppm, rows, envelope_json, recorded_at, tool_version) VALUES (?, ?, ?, ?, ?, ?, ?, {NOW_SQL}, ?)"
        ),
        params![
            image_id,
            run_id,
            e.pass,
            e.max_error_ppm,
            e.limit_ppm,
            e.rows as i64,
            serde_json::to_string(&e.envelope).unwrap_or_else(|_| "[]".into()),
            now,
            TOOL_VERSION
        ],
    )?;
    Ok(c.last_insert_rowid())
}

/// Records why a part was rejected at a stage.
pub fn insert_reject(
    c: &Connection,
    fit_id: i64,
    stage: &str,
    reason: &str,
    now: Option<&str>,
) -> rusqlite::Result<i64> {
    c.execute(
        &format!(
            "INSERT INTO rejects (fit_id, stage, reason, recorded_at, tool_version) VALUES (?, ?, ?, {NOW_SQL}, ?)"
        ),
        params![fit_id, stage, reason, now, TOOL_VERSION],
    )?;
    Ok(c.last_insert_rowid())
}

/// The newest fit whose part file has these bytes' hash: (fit id, lot id).
pub fn fit_by_part_bytes(
    c: &Connection,
    part_bytes: &[u8],
) -> rusqlite::Result<Option<(i64, i64)>> {
    c.query_row(
        "SELECT id, lot_id FROM fits WHERE part_sha256 = ? ORDER BY id DESC LIMIT 1",
        [sha256_hex(part_bytes)],
        |r| Ok((r.get(0)?, r.get(1)?)),
    )
    .optional()
}
