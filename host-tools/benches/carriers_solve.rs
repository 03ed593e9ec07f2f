//! Time per charge-neutrality solve (`physics::carriers::solve`), the
//! carrier half of the full model: a three-species Si sample swept over
//! 20..1000 K, and a 300 K point in every material. The full-model target
//! (>= 200 000 points/s per core for solve + mobility) leaves solve a few
//! microseconds.
//!
//! Run: `cargo bench -p host-tools --bench carriers_solve`.

use std::hint::black_box;

use criterion::{Criterion, Throughput, criterion_group, criterion_main};
use host_tools::physics::{Material, Sample, Species, solve};

fn bench_solve(c: &mut Criterion) {
    let temps: Vec<f64> = (20..=1000).map(f64::from).collect();
    let si3 = Sample::new(
        Material::Si,
        &[(Species::P, 2e15), (Species::As, 5e14)],
        &[(Species::B, 3e14)],
    );
    let mut group = c.benchmark_group("solve_sweep_20_1000k");
    group.throughput(Throughput::Elements(temps.len() as u64));
    group.bench_function("si_P_As_B", |b| {
        b.iter(|| {
            let mut acc = 0.0;
            for &t in &temps {
                // NaN on error so an early-return path cannot look fast.
                acc += solve(black_box(&si3), black_box(t)).map_or(f64::NAN, |s| s.n_cm3);
            }
            black_box(acc)
        });
    });
    group.finish();

    let mut group = c.benchmark_group("solve_300k");
    let samples = [
        (Material::Si, Species::P, Species::B),
        (Material::Ge, Species::Sb, Species::Ga),
        (Material::GaAs, Species::Si, Species::C),
        (Material::InSb, Species::Te, Species::Zn),
        (Material::InAs, Species::Te, Species::Zn),
        (Material::Sic4H, Species::N, Species::Al),
    ];
    for (m, d, a) in samples {
        let s = Sample::new(m, &[(d, 1e17)], &[(a, 1e16)]);
        group.bench_function(m.name(), |b| {
            b.iter(|| solve(black_box(&s), black_box(300.0)).map_or(f64::NAN, |s| s.n_cm3));
        });
    }
    group.finish();
}

criterion_group!(benches, bench_solve);
criterion_main!(benches);
