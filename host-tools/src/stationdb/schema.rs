//! Opening the station database: who it belongs to, its schema version,
//! its migrations and the connection settings (foreign keys, WAL, busy
//! timeout).

use rusqlite::{Connection, OpenFlags};
use std::path::{Path, PathBuf};
use std::time::Duration;

/// `PRAGMA application_id` of a semidrift station database ("SDDB" in
/// ASCII), so that a file of another program is recognised and refused.
pub const APPLICATION_ID: i32 = 0x5344_4442;

/// How long a writer waits for another process's transaction to end.
pub const BUSY_TIMEOUT: Duration = Duration::from_secs(30);

/// Time of day as recorded (UTC, ISO 8601 with milliseconds), from SQLite's
/// own clock unless the database was opened with a fixed clock.
pub(crate) const NOW_SQL: &str = "COALESCE(?, strftime('%Y-%m-%dT%H:%M:%fZ','now'))";

/// The schema, one migration per version: the file's `PRAGMA user_version`
/// is the number of migrations applied. Append; never edit a released one.
const MIGRATIONS: &[&str] = &[
    // Version 1.
    "
CREATE TABLE designs (
    id INTEGER PRIMARY KEY,
    design_hash TEXT NOT NULL UNIQUE,
    design_json BLOB NOT NULL,
    recorded_at TEXT NOT NULL,
    tool_version TEXT NOT NULL
);
CREATE TABLE lots (
    id INTEGER PRIMARY KEY,
    name TEXT NOT NULL UNIQUE,
    scenario_name TEXT NOT NULL,
    scenario_toml TEXT NOT NULL,
    simulated INTEGER NOT NULL,
    budget_ppm REAL NOT NULL,
    design_id INTEGER REFERENCES designs(id),
    recorded_at TEXT NOT NULL,
    tool_version TEXT NOT NULL
);
CREATE TABLE chamber_runs (
    id INTEGER PRIMARY KEY,
    lot_id INTEGER NOT NULL REFERENCES lots(id),
    kind TEXT NOT NULL CHECK (kind IN ('calibration', 'check')),
    csv_sha256 TEXT NOT NULL UNIQUE,
    csv_name TEXT NOT NULL,
    rows INTEGER NOT NULL,
    serials INTEGER NOT NULL,
    recorded_at TEXT NOT NULL,
    tool_version TEXT NOT NULL
);
CREATE TABLE fits (
    id INTEGER PRIMARY KEY,
    lot_id INTEGER NOT NULL REFERENCES lots(id),
    chamber_run_id INTEGER NOT NULL REFERENCES chamber_runs(id),
    design_id INTEGER REFERENCES designs(id),
    serial TEXT NOT NULL,
    ok INTEGER NOT NULL,
    status TEXT NOT NULL,
    fit_rms_ppm REAL,
    fit_max_ppm REAL,
    part_sha256 TEXT NOT NULL,
    part_json BLOB NOT NULL,
    recorded_at TEXT NOT NULL,
    tool_version TEXT NOT NULL,
    UNIQUE (lot_id, serial)
);
CREATE INDEX fits_by_serial ON fits(serial);
CREATE INDEX fits_by_part ON fits(part_sha256);
-- Record tables read alike: each holds its own rows with time and tool version.
CREATE TABLE images (
    id INTEGER PRIMARY KEY,
    fit_id INTEGER NOT NULL REFERENCES fits(id),
    bytes BLOB NOT NULL,
    crc32 INTEGER NOT NULL,
    size_bytes INTEGER NOT NULL,
    plan_json TEXT NOT NULL,
    recorded_at TEXT NOT NULL,
    tool_version TEXT NOT NULL,
    UNIQUE (fit_id, crc32)
);
CREATE TABLE verifications (
    id INTEGER PRIMARY KEY,
    image_id INTEGER NOT NULL REFERENCES images(id),
    pass INTEGER NOT NULL,
    max_error_ppm REAL NOT NULL,
    rms_error_ppm REAL NOT NULL,
    worst_t_c REAL NOT NULL,
    points INTEGER NOT NULL,
    allowance_ppm REAL NOT NULL,
    budget_ppm REAL NOT NULL,
    interpolation_ppm REAL NOT NULL,
    quantization_ppm REAL NOT NULL,
    runtime_model_ppm REAL NOT NULL,
    fit_residual_ppm REAL NOT NULL,
    temperature_ppm REAL NOT NULL,
    total_ppm REAL NOT NULL,
    report_json TEXT NOT NULL,
    recorded_at TEXT NOT NULL,
    tool_version TEXT NOT NULL
);
CREATE INDEX verifications_by_image ON verifications(image_id);
-- Record tables read alike: each holds its own rows with time and tool version.
CREATE TABLE eol_checks (
    id INTEGER PRIMARY KEY,
    image_id INTEGER NOT NULL REFERENCES images(id),
    chamber_run_id INTEGER REFERENCES chamber_runs(id),
    pass INTEGER NOT NULL,
    max_error_ppm REAL NOT NULL,
    limit_ppm REAL NOT NULL,
    rows INTEGER NOT NULL,
    envelope_json TEXT NOT NULL,
    recorded_at TEXT NOT NULL,
    tool_version TEXT NOT NULL
);
CREATE INDEX eol_by_image ON eol_checks(image_id);
CREATE TABLE rejects (
    id INTEGER PRIMARY KEY,
    fit_id INTEGER NOT NULL REFERENCES fits(id),
    stage TEXT NOT NULL,
    reason TEXT NOT NULL,
    recorded_at TEXT NOT NULL,
    tool_version TEXT NOT NULL
);
CREATE INDEX rejects_by_fit ON rejects(fit_id);
CREATE TABLE releases (
    id INTEGER PRIMARY KEY,
    image_id INTEGER NOT NULL UNIQUE REFERENCES images(id),
    serial TEXT NOT NULL,
    released_at TEXT NOT NULL,
    tool_version TEXT NOT NULL
);
",
];

/// The schema version this build writes and reads.
pub const SCHEMA_VERSION: i64 = MIGRATIONS.len() as i64;

/// Why the database could not be used. Every variant is bad input (exit 2
/// at the command line) and leaves the file as it was.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum DbError {
    /// Not an SQLite file, or a damaged one.
    #[error("{path}: not a readable station database ({message})")]
    Corrupt {
        /// The file.
        path: PathBuf,
        /// SQLite's or the integrity check's words.
        message: String,
    },
    /// An SQLite file of another program.
    #[error(
        "{path}: an SQLite file of another program (application_id {found:#010x}, a station database has {APPLICATION_ID:#010x})"
    )]
    Foreign {
        /// The file.
        path: PathBuf,
        /// Its application id.
        found: i32,
    },
    /// Written by a newer semidrift.
    #[error(
        "{path}: schema version {found} is newer than this semidrift's {SCHEMA_VERSION}; use the semidrift that wrote it"
    )]
    NewerSchema {
        /// The file.
        path: PathBuf,
        /// Its schema version.
        found: i64,
    },
    /// A request the database's contents refuse (names the record).
    #[error("{path}: {message}")]
    Refused {
        /// The file.
        path: PathBuf,
        /// Why.
        message: String,
    },
    /// SQLite failed while reading or writing.
    #[error("{path}: {source}")]
    Sqlite {
        /// The file.
        path: PathBuf,
        /// SQLite's error.
        source: rusqlite::Error,
    },
}

/// An open station database.
#[derive(Debug)]
pub struct Db {
    /// The connection (foreign keys on, WAL, busy timeout).
    pub conn: Connection,
    /// The file.
    pub path: PathBuf,
    /// When set, every recorded time is this text (a fixed clock, for
    /// byte-identical databases in tests); otherwise SQLite's clock.
    pub fixed_time: Option<String>,
}

impl Db {
    /// Wraps an SQLite error with the file's name.
    pub fn err(&self, source: rusqlite::Error) -> DbError {
        DbError::Sqlite {
            path: self.path.clone(),
            source,
        }
    }

    /// [`Db::err`] as a closure that owns the file's name, for use while a
    /// transaction borrows the connection.
    pub fn wrapper(&self) -> impl Fn(rusqlite::Error) -> DbError + use<> {
        let path = self.path.clone();
        move |source| DbError::Sqlite {
            path: path.clone(),
            source,
        }
    }

    /// An immediate write transaction: a second writer waits on the busy
    /// timeout instead of failing at its first write.
    pub fn immediate(&mut self) -> Result<rusqlite::Transaction<'_>, DbError> {
        let wrap = self.wrapper();
        self.conn
            .transaction_with_behavior(rusqlite::TransactionBehavior::Immediate)
            .map_err(wrap)
    }

    /// A refusal naming the file.
    pub fn refuse(&self, message: impl Into<String>) -> DbError {
        DbError::Refused {
            path: self.path.clone(),
            message: message.into(),
        }
    }
}

fn corrupt(path: &Path, e: impl std::fmt::Display) -> DbError {
    DbError::Corrupt {
        path: path.to_path_buf(),
        message: e.to_string(),
    }
}

/// Opens (creating if absent) a station database. A file that is damaged,
/// of another program or of a newer schema is refused before anything is
/// written to it; an older schema is migrated in one transaction.
pub fn open(path: &Path) -> Result<Db, DbError> {
    let conn = Connection::open_with_flags(
        path,
        OpenFlags::SQLITE_OPEN_READ_WRITE
            | OpenFlags::SQLITE_OPEN_CREATE
            | OpenFlags::SQLITE_OPEN_NO_MUTEX,
    )
    .map_err(|e| corrupt(path, e))?;
    conn.busy_timeout(BUSY_TIMEOUT)
        .map_err(|e| corrupt(path, e))?;
    // Read-only questions first: nothing is written to a file we refuse.
    // One statement, so one snapshot: another process creating the same
    // file commits its schema and application id together, and separate
    // reads could see the id before the commit and the tables after it.
    let (app_id, version, objects): (i32, i64, i64) = conn
        .query_row(
            "SELECT (SELECT application_id FROM pragma_application_id()),
                    (SELECT user_version FROM pragma_user_version()),
                    (SELECT count(*) FROM sqlite_master)",
            [],
            |r| Ok((r.get(0)?, r.get(1)?, r.get(2)?)),
        )
        .map_err(|e| corrupt(path, e))?;
    if app_id != APPLICATION_ID && (app_id != 0 || objects > 0 || version != 0) {
        return Err(DbError::Foreign {
            path: path.to_path_buf(),
            found: app_id,
        });
    }
    if version > SCHEMA_VERSION {
        return Err(DbError::NewerSchema {
            path: path.to_path_buf(),
            found: version,
        });
    }
    if objects > 0 {
        let check: String = conn
            .query_row("PRAGMA quick_check", [], |r| r.get(0))
            .map_err(|e| corrupt(path, e))?;
        if check != "ok" {
            return Err(corrupt(path, format!("quick_check: {check}")));
        }
    }
    let mut db = Db {
        conn,
        path: path.to_path_buf(),
        fixed_time: None,
    };
    // WAL: readers never block the writer and a killed writer leaves the
    // file consistent (its unfinished transaction is rolled back on the
    // next open). synchronous=NORMAL: a power cut may lose the last parts
    // committed (the next run redoes them), never corrupts or duplicates.
    set_wal(&db)?;
    db.conn
        .execute_batch("PRAGMA foreign_keys=ON; PRAGMA synchronous=NORMAL;")
        .map_err(|e| db.err(e))?;
    if version < SCHEMA_VERSION || app_id != APPLICATION_ID {
        // Only a file that lacks something is written to: opening an
        // up-to-date database changes nothing in it.
        migrate(&mut db)?;
    }
    Ok(db)
}

/// Puts the database in WAL mode. Switching a file into WAL takes an
/// exclusive lock that SQLite does not wait for (no busy handler), so two
/// processes opening a new file at once can find it locked: that is
/// retried here for as long as a writer waits ([`BUSY_TIMEOUT`]). A file
/// that stays in another mode (a file system without WAL) is refused at
/// once.
fn set_wal(db: &Db) -> Result<(), DbError> {
    let start = std::time::Instant::now();
    loop {
        let waited_enough = start.elapsed() >= BUSY_TIMEOUT;
        match db
            .conn
            .query_row("PRAGMA journal_mode=WAL", [], |r| r.get::<_, String>(0))
        {
            Ok(mode) if mode.eq_ignore_ascii_case("wal") => return Ok(()),
            Ok(mode) => {
                return Err(db.refuse(format!("journal mode {mode}, WAL could not be set")));
            }
            Err(e)
                if waited_enough
                    || e.sqlite_error_code() != Some(rusqlite::ErrorCode::DatabaseBusy) =>
            {
                return Err(db.err(e));
            }
            _ => std::thread::sleep(Duration::from_millis(10)),
        }
    }
}

/// Applies the migrations the file lacks, each with its version, in one
/// immediate transaction (a second process waits, then finds them done).
fn migrate(db: &mut Db) -> Result<(), DbError> {
    let path = db.path.clone();
    let wrap = &db.wrapper();
    let tx = db.immediate()?;
    let version: i64 = tx
        .query_row("PRAGMA user_version", [], |r| r.get(0))
        .map_err(wrap)?;
    if version > SCHEMA_VERSION {
        return Err(DbError::NewerSchema {
            path: path.clone(),
            found: version,
        });
    }
    for (k, sql) in MIGRATIONS.iter().enumerate().skip(version as usize) {
        tx.execute_batch(sql).map_err(wrap)?;
        tx.pragma_update(None, "user_version", (k + 1) as i64)
            .map_err(wrap)?;
    }
    tx.pragma_update(None, "application_id", APPLICATION_ID)
        .map_err(wrap)?;
    tx.commit().map_err(wrap)?;
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn fresh_file_gets_the_schema_and_reopens() {
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("s.sqlite");
        let db = open(&p).unwrap();
        let v: i64 = db
            .conn
            .query_row("PRAGMA user_version", [], |r| r.get(0))
            .unwrap();
        assert_eq!(v, SCHEMA_VERSION);
        let fk: i64 = db
            .conn
            .query_row("PRAGMA foreign_keys", [], |r| r.get(0))
            .unwrap();
        assert_eq!(fk, 1);
        drop(db);
        open(&p).unwrap();
    }

    #[test]
    fn recorded_time_is_the_fixed_clock_when_set() {
        let dir = tempfile::tempdir().unwrap();
        let db = open(&dir.path().join("t.sqlite")).unwrap();
        let at = |fixed: Option<&str>| -> String {
            db.conn
                .query_row(&format!("SELECT {NOW_SQL}"), [fixed], |r| r.get(0))
                .unwrap()
        };
        assert_eq!(
            at(Some("2026-01-01T00:00:00.000Z")),
            "2026-01-01T00:00:00.000Z"
        );
        // SQLite's clock: ISO 8601 UTC with milliseconds, 24 characters.
        let now = at(None);
        assert!(
            now.len() == 24 && now.ends_with('Z') && now.as_bytes()[10] == b'T',
            "{now}"
        );
    }

    #[test]
    fn foreign_newer_and_garbage_files_are_refused_unchanged() {
        let dir = tempfile::tempdir().unwrap();
        let foreign = dir.path().join("f.sqlite");
        {
            let c = Connection::open(&foreign).unwrap();
            c.execute_batch("CREATE TABLE t(x); INSERT INTO t VALUES (1);")
                .unwrap();
        }
        let before = std::fs::read(&foreign).unwrap();
        assert!(matches!(open(&foreign), Err(DbError::Foreign { .. })));
        assert_eq!(std::fs::read(&foreign).unwrap(), before);

        let newer = dir.path().join("n.sqlite");
        drop(open(&newer).unwrap());
        {
            let c = Connection::open(&newer).unwrap();
            c.pragma_update(None, "user_version", SCHEMA_VERSION + 1)
                .unwrap();
        }
        assert!(matches!(open(&newer), Err(DbError::NewerSchema { .. })));

        let garbage = dir.path().join("g.sqlite");
        std::fs::write(&garbage, vec![0x5au8; 4096]).unwrap();
        assert!(matches!(open(&garbage), Err(DbError::Corrupt { .. })));
        assert_eq!(std::fs::read(&garbage).unwrap(), vec![0x5au8; 4096]);
    }
}
