//! Station database speed target: recording a 1 000-part lot (lot, chamber
//! runs, then per part, each in its own transaction: fit with its part
//! file, image, verification, end-of-line check) adds at most 1 s to the
//! lot run on the 2-core machine. Run:
//! `cargo bench -p host-tools --bench station_db`.
//!
//! The fits are 1 000 real ones; images, verifications and checks are
//! those of 8 real parts, reused in turn (recording does not look inside
//! them, and their sizes are the lot's).

use criterion::{Criterion, criterion_group, criterion_main};
use host_tools::station::chamber::{self, ChamberData};
use host_tools::station::lot::{Silent, calibrate_lot};
use host_tools::station::model_shapes::shapes_for;
use host_tools::station::pipeline::{self, DENSE_STIMULI, DENSE_TEMPS};
use host_tools::station::scenario::Scenario;
use host_tools::station::simulate::{Plan, draw_parts, measure};
use host_tools::stationdb::run::{self, CsvInput, LotRunInput, PartResult};
use std::time::Duration;

fn record_lot(c: &mut Criterion) {
    let sc = Scenario::well_logger();
    let curves = shapes_for(&sc).unwrap();
    let lot = draw_parts(&sc, 1000, 1);
    let cal_plan = Plan {
        temps_c: sc.cal_temps_c.clone(),
        stimuli: sc.stimuli.clone(),
    };
    let mut check_temps = sc.check_temps_c.clone();
    check_temps.sort_by(f64::total_cmp);
    let check_plan = Plan {
        temps_c: check_temps,
        stimuli: sc.check_stimuli(),
    };
    let cal_rows = measure(&sc, &lot, &cal_plan, 1).unwrap();
    let check_rows = measure(&sc, &lot, &check_plan, 1).unwrap();
    let cal_bytes = chamber::to_csv_bytes(&cal_rows);
    let check_bytes = chamber::to_csv_bytes(&check_rows);
    let cal = ChamberData::from(cal_rows);
    let check = ChamberData::from(check_rows);
    let parts = calibrate_lot(&sc, &curves, &cal, &Silent);
    let groups = check.by_serial();
    let samples: Vec<(
        Vec<u8>,
        pipeline::VerifyReport,
        host_tools::stationdb::record::EolCheck,
    )> = parts
        .iter()
        .filter(|p| p.is_ok())
        .filter_map(|p| {
            // Physics-only fits of the demo truth may leave no room for a
            // table; the bench needs 8 parts that get one.
            let t = pipeline::build_table(p, &curves, sc.budget_ppm).ok()?;
            let v = pipeline::verify(
                &t.image,
                p,
                &curves,
                sc.budget_ppm,
                DENSE_TEMPS,
                DENSE_STIMULI,
            )
            .ok()?;
            let e = run::eol_check(
                p,
                &curves,
                &t.image,
                &groups[p.serial.as_str()],
                sc.budget_ppm,
            )
            .ok()?;
            Some((t.image, v, e))
        })
        .take(8)
        .collect();
    let results: Vec<PartResult> = parts
        .iter()
        .enumerate()
        .map(|(k, p)| {
            let (image, v, e) = &samples[k % samples.len()];
            PartResult {
                part: p.clone(),
                image: Some(image.clone()),
                verify: Some(v.clone()),
                eol: Some(e.clone()),
                reject: None,
            }
        })
        .collect();
    let input = LotRunInput {
        lot: "bench",
        scenario: &sc,
        curves: &curves,
        budget_ppm: sc.budget_ppm,
        design: None,
        calibration: CsvInput {
            name: "cal.csv",
            bytes: &cal_bytes,
            data: &cal,
        },
        check: Some(CsvInput {
            name: "check.csv",
            bytes: &check_bytes,
            data: &check,
        }),
    };
    let mut group = c.benchmark_group("station_db");
    group
        .sample_size(10)
        .measurement_time(Duration::from_secs(30));
    group.bench_function("record_1000_part_lot", |b| {
        b.iter_batched(
            || tempfile::tempdir().unwrap(),
            |dir| {
                let mut db = host_tools::stationdb::open(&dir.path().join("s.sqlite")).unwrap();
                let ids = run::begin_lot(&mut db, &input).unwrap();
                for r in &results {
                    assert!(run::record_part(&mut db, ids, r).unwrap());
                }
                drop(db);
                dir
            },
            criterion::BatchSize::PerIteration,
        )
    });
    group.finish();
}

criterion_group!(benches, record_lot);
criterion_main!(benches);
