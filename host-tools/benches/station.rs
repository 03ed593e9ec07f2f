//! Station speed targets (the project's): calibrate 1000 parts in at most 10 s on
//! 2 cores; verify a table on 1e6 points in at most 2 s; build a table to a
//! 10 ppm allowance in under 1 s. Run: `cargo bench -p host-tools --bench station`.

use criterion::{Criterion, criterion_group, criterion_main};
use host_tools::station::budget::PartTerms;
use host_tools::station::chamber::ChamberData;
use host_tools::station::lot::calibrate_lot;
use host_tools::station::model_shapes::shapes_for;
use host_tools::station::part_model::PartModel;
use host_tools::station::pipeline::{build_table_for_allowance, verify};
use host_tools::station::scenario::Scenario;
use host_tools::station::simulate::{Plan, draw_parts, measure};
use host_tools::station::table::TableFrame;
use std::time::Duration;

fn station(c: &mut Criterion) {
    let sc = Scenario::well_logger();
    let curves = shapes_for(&sc).unwrap();
    // Same production plan as benches/qualify.rs: each bench file is its own binary.
    let plan = Plan {
        temps_c: sc.cal_temps_c.clone(),
        stimuli: sc.stimuli.clone(),
    };
    let parts = draw_parts(&sc, 1000, 1);
    let data = ChamberData::from(measure(&sc, &parts, &plan, 1).unwrap());
    let mut group = c.benchmark_group("station");
    group
        .sample_size(10)
        .measurement_time(Duration::from_secs(20));
    group.bench_function("calibrate_1000_parts", |b| {
        b.iter(|| calibrate_lot(&sc, &curves, &data, &host_tools::station::lot::Silent))
    });
    let fitted = calibrate_lot(
        &sc,
        &curves,
        &ChamberData::from(data.rows[..9].to_vec()),
        &host_tools::station::lot::Silent,
    );
    let part = &fitted[0];
    let model = PartModel {
        curves: &curves,
        params: part.params.expect("physics part file"),
    };
    let frame = TableFrame::new(part, model).unwrap();
    let terms = PartTerms::of(part, &frame);
    group.bench_function("table_build_10ppm", |b| {
        b.iter(|| build_table_for_allowance(part, &frame, &terms, 10.0, 10.0).unwrap())
    });
    let outcome = build_table_for_allowance(part, &frame, &terms, 10.0, 10.0).unwrap();
    group.bench_function("verify_1e6_points", |b| {
        b.iter(|| verify(&outcome.image, part, &curves, 500.0, 100_001, 10).unwrap())
    });
    group.finish();
}

criterion_group!(benches, station);
criterion_main!(benches);
