//! The station database end to end through the real binary: a lot run
//! killed with SIGKILL at random moments and restarted ends whole (no part
//! lost or duplicated, every stored image passes verify, integrity_check
//! ok); two processes writing different lots to one file both complete;
//! files that are not ours, a newer schema and a CSV imported under another
//! lot are refused with exit 2 and change nothing; the queries.
//!
//! The kill test runs a 40-part lot; `SEMIDRIFT_SLOW=1` runs the full
//! 1 000-part lot of the acceptance (about 2 1/2 minutes on 2 cores, debug
//! build).
//! The database is read here with rusqlite directly, not through
//! host-tools' own queries.

mod common;

use common::{ok_in, run_in, semidrift_bin, stderr, stdout};
use rand::{Rng, SeedableRng};
use rusqlite::Connection;
use std::path::Path;
use std::process::{Command, Stdio};
use std::time::Duration;

fn slow() -> bool {
    std::env::var("SEMIDRIFT_SLOW").is_ok_and(|v| v == "1")
}

/// Simulates a well-logger lot: calibration and check CSVs.
fn lot_csvs(dir: &Path, parts: usize, seed: u64, name: &str) {
    let n = parts.to_string();
    let s = seed.to_string();
    ok_in(
        dir,
        &[
            "simulate",
            "well-logger",
            "--parts",
            &n,
            "--seed",
            &s,
            "--out",
            &format!("{name}.csv"),
        ],
    );
    // Same simulate call as above, here for the check rows.
    ok_in(
        dir,
        &[
            "simulate",
            "well-logger",
            "--parts",
            &n,
            "--seed",
            &s,
            "--check",
            "--out",
            &format!("{name}-check.csv"),
        ],
    );
}

fn lot_run_args<'a>(name: &'a str, check: &'a str, db: &'a str) -> Vec<&'a str> {
    vec![
        "lot",
        "run",
        "well-logger",
        name,
        "--check",
        check,
        "--db",
        db,
        "-q",
    ]
}

fn count(c: &Connection, sql: &str) -> i64 {
    c.query_row(sql, [], |r| r.get(0)).unwrap()
}

/// (serial, part sha256, image crc32, verification pass, eol pass).
type LotRow = (String, String, Option<i64>, Option<i64>, Option<i64>);

/// Every part's [`LotRow`], in serial order: what two runs of one lot must
/// agree on.
fn lot_rows(db: &Path) -> Vec<LotRow> {
    let c = Connection::open(db).unwrap();
    let mut st = c
        .prepare(
            "SELECT f.serial, f.part_sha256, i.crc32, v.pass, e.pass FROM fits f
             LEFT JOIN images i ON i.fit_id = f.id
             LEFT JOIN verifications v ON v.image_id = i.id
             LEFT JOIN eol_checks e ON e.image_id = i.id ORDER BY f.serial",
        )
        .unwrap();
    st.query_map([], |r| {
        Ok((r.get(0)?, r.get(1)?, r.get(2)?, r.get(3)?, r.get(4)?))
    })
    .unwrap()
    .collect::<Result<_, _>>()
    .unwrap()
}

fn parts_with_images(db: &Path) -> i64 {
    let c = Connection::open(db).unwrap();
    count(&c, "SELECT count(*) FROM images")
}

#[test]
fn killed_lot_run_resumes_without_loss_or_duplicate() {
    let parts = if slow() { 1000 } else { 40 };
    let seed: u64 = std::env::var("SEMIDRIFT_KILL_SEED")
        .ok()
        .and_then(|s| s.parse().ok())
        .unwrap_or(17);
    eprintln!("kill seed {seed} (set SEMIDRIFT_KILL_SEED to replay), {parts} parts");
    let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(seed);
    let args = lot_run_args("lot.csv", "lot-check.csv", "station.sqlite");

    // The same lot without interruption: its records are the reference, and
    // its wall time sets the kill moments.
    let u = tempfile::tempdir().unwrap();
    lot_csvs(u.path(), parts, 3, "lot");
    let t0 = std::time::Instant::now();
    ok_in(u.path(), &args);
    let full_ms = t0.elapsed().as_millis() as u64;

    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    lot_csvs(d, parts, 3, "lot");
    // Kill moments uniform in 1..15 % of an uninterrupted run: ten of them
    // (each restart also pays the start-up) leave most kills mid-lot
    // whatever the machine's speed.
    let (lo, hi) = ((full_ms / 100).max(20), (full_ms * 15 / 100).max(40));
    let mut recorded_after_kills = Vec::new();
    for _ in 0..10 {
        let mut child = Command::new(semidrift_bin())
            .args(&args)
            .current_dir(d)
            .stdout(Stdio::null())
            .stderr(Stdio::null())
            .spawn()
            .unwrap();
        std::thread::sleep(Duration::from_millis(rng.random_range(lo..hi)));
        // Child::kill sends SIGKILL on Unix.
        let _ = child.kill();
        child.wait().unwrap();
        if d.join("station.sqlite").exists() {
            let c = Connection::open(d.join("station.sqlite")).unwrap();
            recorded_after_kills.push(count(&c, "SELECT count(*) FROM fits"));
        }
    }
    eprintln!(
        "uninterrupted run {full_ms} ms; parts recorded after each kill: {recorded_after_kills:?}"
    );
    let text = ok_in(d, &args);
    assert!(
        text.contains(&format!("lot 'lot': {parts} parts")) || text.contains("nothing to do"),
        "{text}"
    );
    let again = ok_in(d, &args);
    assert!(again.contains("nothing to do"), "{again}");

    let c = Connection::open(d.join("station.sqlite")).unwrap();
    let p = parts as i64;
    assert_eq!(count(&c, "SELECT count(*) FROM fits"), p);
    assert_eq!(count(&c, "SELECT count(DISTINCT serial) FROM fits"), p);
    // One image, one verification, one check per part at most.
    assert_eq!(
        count(&c, "SELECT count(*) FROM images"),
        count(&c, "SELECT count(DISTINCT fit_id) FROM images")
    );
    assert_eq!(
        count(&c, "SELECT count(*) FROM verifications"),
        count(&c, "SELECT count(*) FROM images")
    );
    assert_eq!(
        count(&c, "SELECT count(*) FROM eol_checks"),
        count(&c, "SELECT count(*) FROM images")
    );
    assert!(count(&c, "SELECT count(*) FROM images") > 0);
    assert_eq!(count(&c, "SELECT count(*) FROM chamber_runs"), 2);
    let integrity: String = c
        .query_row("PRAGMA integrity_check", [], |r| r.get(0))
        .unwrap();
    assert_eq!(integrity, "ok");
    drop(c);
    // Every stored image re-verified against its stored part.
    let check = ok_in(d, &["lot", "check", "lot", "--db", "station.sqlite"]);
    let images = parts_with_images(&d.join("station.sqlite"));
    assert!(
        check.contains(&format!(
            "{images} stored images, {images} pass verify, 0 disagree"
        )) && check.contains("integrity_check: ok"),
        "{check}"
    );
    // The killed and restarted lot holds the same parts, images and
    // verdicts as the uninterrupted one.
    assert_eq!(
        lot_rows(&d.join("station.sqlite")),
        lot_rows(&u.path().join("station.sqlite"))
    );
}

#[test]
fn two_processes_write_two_lots_into_one_database() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    lot_csvs(d, 12, 21, "a");
    lot_csvs(d, 12, 22, "b");
    let spawn = |name: &str| {
        Command::new(semidrift_bin())
            .args(lot_run_args(
                &format!("{name}.csv"),
                &format!("{name}-check.csv"),
                "shared.sqlite",
            ))
            .current_dir(d)
            .stdout(Stdio::piped())
            .stderr(Stdio::piped())
            .spawn()
            .unwrap()
    };
    let (a, b) = (spawn("a"), spawn("b"));
    for o in [a.wait_with_output().unwrap(), b.wait_with_output().unwrap()] {
        assert!(o.status.success(), "{}", stderr(&o));
    }
    let c = Connection::open(d.join("shared.sqlite")).unwrap();
    for lot in ["a", "b"] {
        let n: i64 = c
            .query_row(
                "SELECT count(*) FROM fits f JOIN lots l ON l.id = f.lot_id WHERE l.name = ?",
                [lot],
                |r| r.get(0),
            )
            .unwrap();
        assert_eq!(n, 12, "lot {lot}");
    }
    let integrity: String = c
        .query_row("PRAGMA integrity_check", [], |r| r.get(0))
        .unwrap();
    assert_eq!(integrity, "ok");
}

/// Runs a lot command expected to be refused: exit 2, one line on stderr
/// naming the database, the file's bytes unchanged.
fn refused(d: &Path, args: &[&str], db: &str, says: &str) {
    let before = std::fs::read(d.join(db)).unwrap();
    let o = run_in(d, args);
    let err = stderr(&o);
    assert_eq!(o.status.code(), Some(2), "{args:?}: {err}");
    assert_eq!(err.lines().count(), 1, "{err}");
    assert!(err.contains(db) && err.contains(says), "{err}");
    // Compared as a boolean: a failure must not print two files' bytes.
    assert!(std::fs::read(d.join(db)).unwrap() == before, "{db} changed");
}

#[test]
fn files_not_ours_newer_schemas_and_reimported_csvs_are_refused() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    lot_csvs(d, 2, 5, "x");
    let run = |db: &'static str| lot_run_args("x.csv", "x-check.csv", db);

    std::fs::write(d.join("garbage.sqlite"), vec![0xa5u8; 8192]).unwrap();
    refused(
        d,
        &run("garbage.sqlite"),
        "garbage.sqlite",
        "not a readable station database",
    );

    {
        let c = Connection::open(d.join("foreign.sqlite")).unwrap();
        c.execute_batch("CREATE TABLE notes (x TEXT); INSERT INTO notes VALUES ('y');")
            .unwrap();
    }
    refused(
        d,
        &run("foreign.sqlite"),
        "foreign.sqlite",
        "another program",
    );

    ok_in(d, &run("newer.sqlite"));
    {
        let c = Connection::open(d.join("newer.sqlite")).unwrap();
        let v: i64 = c
            .query_row("PRAGMA user_version", [], |r| r.get(0))
            .unwrap();
        c.pragma_update(None, "user_version", v + 1).unwrap();
    }
    refused(
        d,
        &["lot", "status", "x", "--db", "newer.sqlite"],
        "newer.sqlite",
        "is newer than",
    );

    // The same CSV under another lot name.
    ok_in(d, &run("main.sqlite"));
    let mut other = run("main.sqlite");
    other.extend(["--lot", "another"]);
    refused(d, &other, "main.sqlite", "already imported under lot 'x'");
    let c = Connection::open(d.join("main.sqlite")).unwrap();
    assert_eq!(count(&c, "SELECT count(*) FROM lots"), 1);
}

#[test]
fn queries_release_only_verified_and_checked_images() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    lot_csvs(d, 10, 8, "q");
    // A budget tight enough that some parts fail their checks (seed 8:
    // worst end-of-line errors of this lot spread from about 100 to 400 ppm).
    let mut args = lot_run_args("q.csv", "q-check.csv", "s.sqlite");
    args.extend(["--budget", "250"]);
    let o = run_in(d, &args);
    assert!(o.status.success(), "{}", stderr(&o));

    let json = ok_in(
        d,
        &["lot", "export", "q", "--db", "s.sqlite", "--format", "json"],
    );
    let records: serde_json::Value = serde_json::from_str(&json).unwrap();
    let records = records.as_array().unwrap();
    assert_eq!(records.len(), 10);
    let eligible: Vec<&str> = records
        .iter()
        .filter(|r| r["verify_pass"] == true && r["eol_pass"] == true)
        .map(|r| r["serial"].as_str().unwrap())
        .collect();
    assert!(
        !eligible.is_empty() && eligible.len() < 10,
        "the budget should split the lot: {eligible:?}"
    );

    let rel = ok_in(d, &["lot", "release", "q", "--db", "s.sqlite", "--json"]);
    let rel: serde_json::Value = serde_json::from_str(&rel).unwrap();
    let released: Vec<&str> = rel["released"]
        .as_array()
        .unwrap()
        .iter()
        .map(|x| x[0].as_str().unwrap())
        .collect();
    assert_eq!(released, eligible);
    assert_eq!(
        rel["refused"].as_array().unwrap().len(),
        10 - eligible.len()
    );

    // A refused serial named alone: exit 1 with the reason.
    let refused_serial = rel["refused"][0][0].as_str().unwrap();
    let o = run_in(
        d,
        &[
            "lot",
            "release",
            "q",
            "--db",
            "s.sqlite",
            "--serial",
            refused_serial,
        ],
    );
    assert_eq!(o.status.code(), Some(1), "{}", stderr(&o));

    let c = Connection::open(d.join("s.sqlite")).unwrap();
    assert_eq!(
        count(&c, "SELECT count(*) FROM releases"),
        eligible.len() as i64
    );
    // Every release points at an image whose verification and check passed.
    assert_eq!(
        count(
            &c,
            "SELECT count(*) FROM releases r JOIN verifications v ON v.image_id = r.image_id
             JOIN eol_checks e ON e.image_id = r.image_id WHERE v.pass = 1 AND e.pass = 1"
        ),
        eligible.len() as i64
    );

    // Rejected images re-verify as recorded: the check passes.
    let check = ok_in(d, &["lot", "check", "q", "--db", "s.sqlite"]);
    assert!(check.contains(" 0 disagree"), "{check}");

    let csv = ok_in(d, &["lot", "export", "q", "--db", "s.sqlite"]);
    assert_eq!(csv.lines().count(), 11, "{csv}");
    assert!(csv.starts_with("lot,serial,state,"));

    let h = ok_in(d, &["lot", "history", eligible[0], "--db", "s.sqlite"]);
    for what in [
        "chamber run",
        "fit",
        "image",
        "verification",
        "end-of-line",
        "released",
    ] {
        assert!(h.contains(what), "history lacks {what}: {h}");
    }
    let status = stdout(&run_in(d, &["lot", "status", "q", "--db", "s.sqlite"]));
    assert!(
        status.contains(&format!("{} released", eligible.len())),
        "{status}"
    );

    // The file commands record into the same database with --db.
    ok_in(
        d,
        &[
            "calibrate",
            "well-logger",
            "q.csv",
            "--db",
            "f.sqlite",
            "-q",
        ],
    );
    let serial = eligible[0];
    let part = format!("parts/{serial}.part.json");
    let image = format!("parts/{serial}.bin");
    ok_in(d, &["table", &part, "--db", "f.sqlite"]);
    ok_in(
        d,
        &["verify", &image, "--against", &part, "--db", "f.sqlite"],
    );
    ok_in(
        d,
        &[
            "apply",
            &image,
            "q-check.csv",
            "--against",
            &part,
            "--db",
            "f.sqlite",
        ],
    );
    let h = ok_in(d, &["lot", "history", serial, "--db", "f.sqlite"]);
    for what in ["fit", "image", "verification", "end-of-line"] {
        assert!(h.contains(what), "history lacks {what}: {h}");
    }
}

/// A column of the row of `sql` (one row expected).
fn one<T: rusqlite::types::FromSql>(db: &Path, sql: &str, p: &[&dyn rusqlite::ToSql]) -> T {
    let c = Connection::open(db).unwrap();
    c.query_row(sql, p, |r| r.get(0)).unwrap()
}

#[test]
fn file_commands_take_their_inputs_from_the_database() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let db = d.join("s.sqlite");
    lot_csvs(d, 3, 11, "r");
    ok_in(d, &lot_run_args("r.csv", "r-check.csv", "s.sqlite"));
    let serial = "WELL-0002";
    let image_sql =
        "SELECT i.bytes FROM images i JOIN fits f ON f.id = i.fit_id WHERE f.serial = ?";
    let recorded_image: Vec<u8> = one(&db, image_sql, &[&serial]);
    let crc = format!(
        "{:08x}",
        one::<i64>(
            &db,
            "SELECT i.crc32 FROM images i JOIN fits f ON f.id = i.fit_id WHERE f.serial = ?",
            &[&serial]
        )
    );
    // The recorded part, written out as a file for the file forms.
    let part_json: Vec<u8> = one(
        &db,
        "SELECT part_json FROM fits WHERE serial = ?",
        &[&serial],
    );
    std::fs::write(d.join("p.part.json"), &part_json).unwrap();
    let counts = || {
        let c = Connection::open(&db).unwrap();
        (
            count(&c, "SELECT count(*) FROM images"),
            count(&c, "SELECT count(*) FROM verifications"),
            count(&c, "SELECT count(*) FROM eol_checks"),
        )
    };
    let (images, verifications, checks) = counts();

    // table on the recorded part: the same image as the lot run's (same
    // part, same options), written as SERIAL.bin and recorded once.
    let t = ok_in(d, &["table", "--db", "s.sqlite", "--serial", serial]);
    assert!(t.contains(&format!("-> {serial}.bin")), "{t}");
    assert!(std::fs::read(d.join(format!("{serial}.bin"))).unwrap() == recorded_image);
    assert_eq!(counts(), (images, verifications, checks));

    // verify by serial (its latest image) and by CRC report exactly what the
    // file form reports on the same image and part, and record each.
    let by_file = ok_in(
        d,
        &[
            "verify",
            &format!("{serial}.bin"),
            "--against",
            "p.part.json",
            "--json",
        ],
    );
    let by_serial = ok_in(
        d,
        &["verify", "--db", "s.sqlite", "--serial", serial, "--json"],
    );
    let by_crc = ok_in(d, &["verify", "--db", "s.sqlite", "--crc", &crc, "--json"]);
    let image_and_serial = ok_in(
        d,
        &[
            "verify",
            &format!("{serial}.bin"),
            "--db",
            "s.sqlite",
            "--serial",
            serial,
            "--json",
        ],
    );
    assert_eq!(by_serial, by_file);
    assert_eq!(by_crc, by_file);
    assert_eq!(image_and_serial, by_file);
    assert_eq!(counts(), (images, verifications + 3, checks));

    // apply: the recorded image on the check rows, as the file form does;
    // recorded as an end-of-line check.
    let apply_file = ok_in(
        d,
        &[
            "apply",
            &format!("{serial}.bin"),
            "r-check.csv",
            "--against",
            "p.part.json",
            "--json",
        ],
    );
    let apply_serial = ok_in(
        d,
        &[
            "apply",
            "r-check.csv",
            "--db",
            "s.sqlite",
            "--serial",
            serial,
            "--json",
        ],
    );
    let apply_crc = ok_in(
        d,
        &[
            "apply",
            "r-check.csv",
            "--db",
            "s.sqlite",
            "--crc",
            &crc,
            "--json",
        ],
    );
    assert_eq!(apply_serial, apply_file);
    assert_eq!(apply_crc, apply_file);
    assert_eq!(counts(), (images, verifications + 3, checks + 2));

    // What is not there: exit 2, one line naming it, the file unchanged.
    refused(
        d,
        &["table", "--db", "s.sqlite", "--serial", "NOPE-1"],
        "s.sqlite",
        "no part 'NOPE-1' is recorded",
    );
    refused(
        d,
        &["verify", "--db", "s.sqlite", "--crc", "0badc0de"],
        "s.sqlite",
        "no table image with crc32 0badc0de",
    );
    // Same apply call as above, with a lot that does not hold the serial.
    refused(
        d,
        &[
            "apply",
            "r-check.csv",
            "--db",
            "s.sqlite",
            "--serial",
            serial,
            "--lot",
            "nosuch",
        ],
        "s.sqlite",
        &format!("no part '{serial}' is recorded in lot 'nosuch'"),
    );
    // The same serial in a second lot: named by --lot, refused without.
    lot_csvs(d, 3, 12, "r2");
    ok_in(d, &lot_run_args("r2.csv", "r2-check.csv", "s.sqlite"));
    refused(
        d,
        &["verify", "--db", "s.sqlite", "--serial", serial],
        "s.sqlite",
        "is recorded in 2 lots ('r', 'r2')",
    );
    let r2 = ok_in(
        d,
        &[
            "verify", "--db", "s.sqlite", "--serial", serial, "--lot", "r2", "--json",
        ],
    );
    assert_ne!(r2, by_file, "lot r2's part is another part");
    // A fit without an image (calibrate --db records fits only).
    ok_in(
        d,
        &[
            "calibrate",
            "well-logger",
            "r.csv",
            "--db",
            "f.sqlite",
            "-q",
        ],
    );
    refused(
        d,
        &["verify", "--db", "f.sqlite", "--serial", serial],
        "f.sqlite",
        &format!("part '{serial}' of lot 'r' has no recorded table image"),
    );
    // Options that need the database, or each other, are usage errors.
    for (args, says) in [
        (&["verify", "--serial", serial][..], "--db"),
        (
            &[
                "table",
                "--db",
                "s.sqlite",
                "--serial",
                serial,
                "p.part.json",
            ][..],
            "cannot be used",
        ),
        (
            &["verify", "x.bin", "--db", "s.sqlite", "--crc", &crc][..],
            "cannot be used",
        ),
        (
            &["verify", "--db", "s.sqlite", "--crc", "xyz"][..],
            "not a CRC-32",
        ),
        (
            &["apply", "--db", "s.sqlite", "--serial", serial][..],
            "chamber CSV",
        ),
    ] {
        let o = run_in(d, args);
        let err = stderr(&o);
        assert_eq!(o.status.code(), Some(2), "{args:?}: {err}");
        assert!(
            err.lines().count() == 1 && err.contains(says),
            "{args:?}: {err}"
        );
    }
}
