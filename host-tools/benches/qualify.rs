//! Qualification speed targets: `qualify` of 20 parts x 14 temperatures x 5
//! stimuli in at most 2 s, and calibration of 1 000 parts on the design in
//! at most 1 s, on the 2-core machine. Run: `cargo bench -p host-tools --bench qualify`.

use criterion::{Criterion, criterion_group, criterion_main};
use host_tools::station::chamber::ChamberData;
use host_tools::station::design::{self, ProductionPlan};
use host_tools::station::lot::calibrate_lot_with;
use host_tools::station::model_shapes::shapes_for;
use host_tools::station::scenario::Scenario;
use host_tools::station::simulate::{Plan, draw_parts, measure};
use std::time::Duration;

fn qualify(c: &mut Criterion) {
    let sc = Scenario::well_logger().with_demo_truth();
    let curves = shapes_for(&sc).unwrap();
    // 14 temperatures: 11 spread over -40..125 C plus the 3 production ones.
    let temps_c = vec![
        -40.0, -30.0, -20.0, -5.0, 10.0, 25.0, 40.0, 55.0, 70.0, 85.0, 95.0, 105.0, 115.0, 125.0,
    ];
    let qual = Plan {
        temps_c,
        stimuli: sc.qualification_stimuli(),
    };
    let parts = draw_parts(&sc, 20, 7);
    let qual_data = ChamberData::from(measure(&sc, &parts, &qual, 7).unwrap());
    let plan = ProductionPlan {
        temps_c: sc.cal_temps_c.clone(),
        stimuli: sc.stimuli.clone(),
    };
    let mut group = c.benchmark_group("qualify");
    group
        .sample_size(10)
        .measurement_time(Duration::from_secs(20));
    group.bench_function("qualify_20x14x5", |b| {
        b.iter(|| design::qualify(&sc, &curves, &qual_data, "bench", &plan).unwrap())
    });
    let d = design::qualify(&sc, &curves, &qual_data, "bench", &plan).unwrap();
    let prod = Plan {
        temps_c: sc.cal_temps_c.clone(),
        stimuli: sc.stimuli.clone(),
    };
    let lot = draw_parts(&sc, 1000, 1);
    let data = ChamberData::from(measure(&sc, &lot, &prod, 1).unwrap());
    group.bench_function("calibrate_1000_parts_on_design", |b| {
        b.iter(|| {
            calibrate_lot_with(
                &sc,
                &curves,
                &data,
                Some(&d),
                &host_tools::station::lot::Silent,
            )
        })
    });
    group.finish();
}

criterion_group!(benches, qualify);
criterion_main!(benches);
