//! The resumable lot run: a chamber CSV through fit, table and verify (and
//! the end-of-line check when a check CSV is given) for every part,
//! committing part by part. A part is in the database whole (fit, image,
//! verification, check, or its rejection) or not at all, so a run killed at
//! any moment and started again does the missing parts only.

use super::record::{self, EolCheck, RunKind};
use super::schema::{Db, DbError};
use crate::station::apply::{ImageCompensation, apply_rows};
use crate::station::calibrate::calibrate_part;
use crate::station::chamber::{ChamberData, ChamberRow};
use crate::station::curves::ShapeCurves;
use crate::station::design::DesignFile;
use crate::station::design::calibrate::calibrate_on_design;
use crate::station::lot::Progress;
use crate::station::part_file::PartFile;
use crate::station::pipeline::{self, DENSE_STIMULI, DENSE_TEMPS, VerifyReport};
use crate::station::scenario::Scenario;
use rayon::prelude::*;
use std::collections::{BTreeMap, BTreeSet};

/// A chamber CSV as the run records it.
#[derive(Debug, Clone, Copy)]
pub struct CsvInput<'a> {
    /// Its name as given (recorded; the hash identifies it).
    pub name: &'a str,
    /// Its bytes (hashed).
    pub bytes: &'a [u8],
    /// Its parsed rows.
    pub data: &'a ChamberData,
}

/// What a lot run needs.
#[derive(Debug, Clone, Copy)]
pub struct LotRunInput<'a> {
    /// Lot name.
    pub lot: &'a str,
    /// Scenario of the parts.
    pub scenario: &'a Scenario,
    /// The full model's shapes for it.
    pub curves: &'a ShapeCurves,
    /// Total error budget, ppm of span.
    pub budget_ppm: f64,
    /// The design to fit on (physics-only fits without).
    pub design: Option<&'a DesignFile>,
    /// Chamber CSV at the calibration temperatures.
    pub calibration: CsvInput<'a>,
    /// Chamber CSV at held-out temperatures: the end-of-line check.
    pub check: Option<CsvInput<'a>>,
}

/// What a lot run did.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct LotRunOutcome {
    /// Lot name.
    pub lot: String,
    /// Parts in the CSV.
    pub parts: usize,
    /// Parts already recorded when the run started.
    pub already_recorded: usize,
    /// Parts recorded by this run.
    pub recorded_now: usize,
    /// Parts of this run whose image passed verification (and the
    /// end-of-line check when there was one).
    pub passed_now: usize,
    /// Parts of this run rejected, with stage and reason.
    pub rejected_now: Vec<(String, String, String)>,
}

impl LotRunOutcome {
    /// True when every part was recorded before the run: nothing was done.
    pub fn nothing_to_do(&self) -> bool {
        self.recorded_now == 0 && self.already_recorded == self.parts
    }
}

/// One part's results, ready to record.
#[derive(Debug, Clone)]
pub struct PartResult {
    /// The fit.
    pub part: PartFile,
    /// Its table image.
    pub image: Option<Vec<u8>>,
    /// The image's verification.
    pub verify: Option<VerifyReport>,
    /// The image's end-of-line check.
    pub eol: Option<EolCheck>,
    /// Why it was rejected: (stage, reason).
    pub reject: Option<(&'static str, String)>,
}

/// The end-of-line check of `image` on the part's rows inside its
/// operating range (rows on an ADC rail are reported by `apply`, not
/// judged); passes when the worst |error| is within `limit_ppm`.
pub fn eol_check(
    part: &PartFile,
    curves: &ShapeCurves,
    image: &[u8],
    rows: &[&ChamberRow],
    limit_ppm: f64,
) -> Result<EolCheck, String> {
    let (lo, hi) = part.scenario.range_c;
    let inside: Vec<&ChamberRow> = rows
        .iter()
        .copied()
        .filter(|r| r.chamber_c >= lo && r.chamber_c <= hi)
        .collect();
    let comp = ImageCompensation::new(
        image,
        part.scenario.output_adc.lsb(),
        part.scenario.signal_adc.lsb(),
    )
    .map_err(|e| e.to_string())?;
    let mut by_t: BTreeMap<u64, [f64; 3]> = BTreeMap::new();
    let mut max: f64 = 0.0;
    let mut n = 0;
    for r in apply_rows(part, curves, &comp, &inside) {
        if r.clipped {
            continue;
        }
        n += 1;
        max = max.max(r.error_ppm.abs());
        // Keyed by the temperature's bits after ordering them as integers:
        // the same chamber temperature always lands in the same entry.
        let key = r.chamber_c.to_bits() ^ if r.chamber_c < 0.0 { u64::MAX } else { 1 << 63 };
        let e = by_t
            .entry(key)
            .or_insert([r.chamber_c, r.error_ppm, r.error_ppm]);
        e[1] = e[1].min(r.error_ppm);
        e[2] = e[2].max(r.error_ppm);
    }
    Ok(EolCheck {
        max_error_ppm: max,
        limit_ppm,
        rows: n,
        envelope: by_t.into_values().collect(),
        pass: n > 0 && max <= limit_ppm,
    })
}

/// Fits, tables, verifies and checks one part (no database involved; the
/// same inputs give the same result, whichever run computes it).
pub fn process_part(
    input: &LotRunInput<'_>,
    serial: &str,
    rows: &[&ChamberRow],
    check_rows: Option<&[&ChamberRow]>,
) -> PartResult {
    let part = match input.design {
        Some(d) => calibrate_on_design(input.scenario, input.curves, d, serial, rows),
        None => calibrate_part(input.scenario, input.curves, serial, rows),
    };
    let mut out = PartResult {
        part,
        image: None,
        verify: None,
        eol: None,
        reject: None,
    };
    if !out.part.is_ok() {
        out.reject = Some(("fit", out.part.status.clone()));
        return out;
    }
    let built = match pipeline::build_table(&out.part, input.curves, input.budget_ppm) {
        Ok(b) => b,
        Err(e) => {
            out.reject = Some(("table", e.to_string()));
            return out;
        }
    };
    let report = pipeline::verify(
        &built.image,
        &out.part,
        input.curves,
        input.budget_ppm,
        DENSE_TEMPS,
        DENSE_STIMULI,
    );
    out.image = Some(built.image);
    match report {
        Ok(v) => {
            if !v.pass {
                out.reject = Some((
                    "verify",
                    format!(
                        "table error {:.1} ppm exceeds the allowance {:.1} ppm",
                        v.max_error_ppm, v.table_allowance_ppm
                    ),
                ));
            }
            out.verify = Some(v);
        }
        Err(e) => {
            out.reject = Some(("verify", e.to_string()));
            return out;
        }
    }
    if let (Some(rows), Some(image)) = (check_rows, out.image.as_deref()) {
        match eol_check(&out.part, input.curves, image, rows, input.budget_ppm) {
            Ok(e) => {
                if out.reject.is_none() && !e.pass {
                    out.reject = Some((
                        "end-of-line",
                        if e.rows == 0 {
                            "no check row inside the operating range".to_string()
                        } else {
                            format!(
                                "worst error {:.1} ppm at held-out temperatures exceeds the budget {:.1} ppm",
                                e.max_error_ppm, e.limit_ppm
                            )
                        },
                    ));
                }
                out.eol = Some(e);
            }
            Err(e) => {
                if out.reject.is_none() {
                    out.reject = Some(("end-of-line", e));
                }
            }
        }
    } else if input.check.is_some() && out.reject.is_none() {
        out.reject = Some(("end-of-line", "no rows in the check CSV".to_string()));
    }
    out
}

/// Ids the part records hang from.
#[derive(Debug, Clone, Copy)]
pub struct LotIds {
    /// Lot row.
    pub lot_id: i64,
    /// Calibration run row.
    pub run_id: i64,
    /// Check run row.
    pub check_run_id: Option<i64>,
    /// Design row.
    pub design_id: Option<i64>,
}

/// Records one part in one transaction. Returns false (and records
/// nothing) when the lot already holds the serial.
pub fn record_part(db: &mut Db, ids: LotIds, r: &PartResult) -> Result<bool, DbError> {
    let now = db.fixed_time.clone();
    let now = now.as_deref();
    let wrap = &db.wrapper();
    let tx = db.immediate()?;
    let exists: i64 = tx
        .query_row(
            "SELECT count(*) FROM fits WHERE lot_id = ? AND serial = ?",
            rusqlite::params![ids.lot_id, r.part.serial],
            |row| row.get(0),
        )
        .map_err(wrap)?;
    if exists > 0 {
        return Ok(false);
    }
    let fit_id = record::insert_fit(&tx, ids.lot_id, ids.run_id, ids.design_id, &r.part, now)
        .map_err(wrap)?;
    if let Some(image) = &r.image {
        let image_id = record::insert_image(&tx, fit_id, image, now).map_err(wrap)?;
        if let Some(v) = &r.verify {
            record::insert_verification(&tx, image_id, v, now).map_err(wrap)?;
        }
        if let Some(e) = &r.eol {
            record::insert_eol(&tx, image_id, ids.check_run_id, e, now).map_err(wrap)?;
        }
    }
    if let Some((stage, reason)) = &r.reject {
        record::insert_reject(&tx, fit_id, stage, reason, now).map_err(wrap)?;
    }
    tx.commit().map_err(wrap)?;
    Ok(true)
}

/// Records the lot, its design and chamber runs (or finds them), refusing
/// a CSV recorded under another lot or a lot recorded with other inputs.
pub fn begin_lot(db: &mut Db, input: &LotRunInput<'_>) -> Result<LotIds, DbError> {
    let now = db.fixed_time.clone();
    let now = now.as_deref();
    let path = db.path.clone();
    let wrap = &db.wrapper();
    let refuse = |m: String| DbError::Refused {
        path: path.clone(),
        message: m,
    };
    let tx = db.immediate()?;
    let cal_hash = record::sha256_hex(input.calibration.bytes);
    let check_hash = input.check.map(|c| record::sha256_hex(c.bytes));
    let lot = record::find_lot(&tx, input.lot).map_err(wrap)?;
    // Every refusal before the first write: a refused run changes nothing.
    for (hash, kind, csv) in [
        (
            Some(&cal_hash),
            RunKind::Calibration,
            Some(input.calibration),
        ),
        (check_hash.as_ref(), RunKind::Check, input.check),
    ] {
        let (Some(hash), Some(csv)) = (hash, csv) else {
            continue;
        };
        if let Some(run) = record::find_run(&tx, hash).map_err(wrap)? {
            if run.lot != input.lot {
                return Err(refuse(format!(
                    "{}: this CSV (sha256 {}) was already imported under lot '{}'; a chamber run belongs to one lot",
                    csv.name,
                    &hash[..16],
                    run.lot
                )));
            }
            if run.kind != kind.as_str() {
                return Err(refuse(format!(
                    "{}: this CSV (sha256 {}) is lot '{}''s {} run, not its {} run",
                    csv.name,
                    &hash[..16],
                    run.lot,
                    run.kind,
                    kind.as_str()
                )));
            }
        }
        if let Some(l) = &lot
            && let Some((_, h)) = record::lot_run(&tx, l.id, kind).map_err(wrap)?
            && &h != hash
        {
            return Err(refuse(format!(
                "{}: lot '{}' was run on another {} CSV (sha256 {}); name a new lot with --lot",
                csv.name,
                l.name,
                kind.as_str(),
                &h[..16]
            )));
        }
    }
    if let Some(l) = &lot {
        if l.scenario_name != input.scenario.name {
            return Err(refuse(format!(
                "lot '{}' is of scenario '{}', not '{}'",
                l.name, l.scenario_name, input.scenario.name
            )));
        }
        let recorded: Option<String> = match l.design_id {
            Some(id) => Some(
                tx.query_row("SELECT design_hash FROM designs WHERE id = ?", [id], |r| {
                    r.get(0)
                })
                .map_err(wrap)?,
            ),
            None => None,
        };
        let given = input.design.map(|d| d.hash.clone());
        if recorded != given {
            let show = |h: &Option<String>| {
                h.as_ref().map_or("no design".to_string(), |h| {
                    format!("design {}", &h[..16.min(h.len())])
                })
            };
            return Err(refuse(format!(
                "lot '{}' is fitted on {}, this run gives {}",
                l.name,
                show(&recorded),
                show(&given)
            )));
        }
    }
    let design_id = match input.design {
        Some(d) => Some(record::ensure_design(&tx, d, now).map_err(wrap)?),
        None => None,
    };
    let lot_id = match &lot {
        Some(l) => l.id,
        None => record::insert_lot(
            &tx,
            input.lot,
            input.scenario,
            input.budget_ppm,
            design_id,
            now,
        )
        .map_err(wrap)?,
    };
    let mut run_ids = [None, None];
    for (k, (kind, csv)) in [
        (RunKind::Calibration, Some(input.calibration)),
        (RunKind::Check, input.check),
    ]
    .into_iter()
    .enumerate()
    {
        let Some(csv) = csv else { continue };
        run_ids[k] = Some(match record::lot_run(&tx, lot_id, kind).map_err(wrap)? {
            Some((id, _)) => id,
            None => record::insert_run(
                &tx,
                lot_id,
                kind,
                &record::sha256_hex(csv.bytes),
                csv.name,
                csv.data.rows.len(),
                csv.data.by_serial().len(),
                now,
            )
            .map_err(wrap)?,
        });
    }
    tx.commit().map_err(wrap)?;
    Ok(LotIds {
        lot_id,
        run_id: run_ids[0].unwrap_or_default(),
        check_run_id: run_ids[1],
        design_id,
    })
}

/// Runs the lot: records it (see [`begin_lot`]), then fits, tables,
/// verifies and checks every part not yet recorded, in parallel, recording
/// each in its own transaction as it comes.
pub fn run_lot(
    db: &mut Db,
    input: &LotRunInput<'_>,
    progress: &dyn Progress,
) -> Result<LotRunOutcome, DbError> {
    let ids = begin_lot(db, input)?;
    let done: BTreeSet<String> = {
        let mut st = db
            .conn
            .prepare("SELECT serial FROM fits WHERE lot_id = ?")
            .map_err(|e| db.err(e))?;
        st.query_map([ids.lot_id], |r| r.get(0))
            .and_then(|rows| rows.collect::<Result<_, _>>())
            .map_err(|e| db.err(e))?
    };
    let groups = input.calibration.data.by_serial();
    let checks = input.check.map(|c| c.data.by_serial());
    let todo: Vec<(&str, &Vec<&ChamberRow>)> = groups
        .iter()
        .filter(|(s, _)| !done.contains(**s))
        .map(|(s, r)| (*s, r))
        .collect();
    let mut outcome = LotRunOutcome {
        lot: input.lot.to_string(),
        parts: groups.len(),
        already_recorded: groups.len() - todo.len(),
        recorded_now: 0,
        passed_now: 0,
        rejected_now: Vec::new(),
    };
    if todo.is_empty() {
        return Ok(outcome);
    }
    progress.begin(todo.len(), "lot");
    let (tx, rx) = std::sync::mpsc::sync_channel::<PartResult>(16);
    let result = std::thread::scope(|s| {
        s.spawn(|| {
            todo.par_iter().for_each_with(tx, |tx, (serial, rows)| {
                let check_rows = checks
                    .as_ref()
                    .map(|c| c.get(serial).map_or(&[][..], |v| v.as_slice()));
                // A closed receiver means the writer stopped on an error.
                let _ = tx.send(process_part(input, serial, rows, check_rows));
            });
        });
        for r in rx {
            if record_part(db, ids, &r)? {
                outcome.recorded_now += 1;
                match &r.reject {
                    Some((stage, reason)) => outcome.rejected_now.push((
                        r.part.serial.clone(),
                        stage.to_string(),
                        reason.clone(),
                    )),
                    None => outcome.passed_now += 1,
                }
            } else {
                outcome.already_recorded += 1;
            }
            progress.advance();
        }
        Ok::<(), DbError>(())
    });
    progress.end();
    result?;
    outcome.rejected_now.sort();
    Ok(outcome)
}
