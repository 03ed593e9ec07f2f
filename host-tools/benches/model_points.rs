//! Throughput of the full model: `evaluate` points per second for a
//! three-species Si sample swept over 20..1000 K (target >= 200 000 points/s
//! per core, see the transport notes in `physics/model.rs`).
//!
//! Run: `cargo bench -p host-tools --bench model_points`.

use std::hint::black_box;

use criterion::{Criterion, Throughput, criterion_group, criterion_main};
use host_tools::physics::{Dopant, Material, Sample, Species, evaluate};

/// Temperatures of one sweep: 20..=1000 K in 1 K steps (981 points).
fn sweep_k() -> Vec<f64> {
    (20..=1000).map(f64::from).collect()
}

/// A compensated n-type Si sample with three species (two donors, one acceptor).
fn three_species_si() -> Sample {
    Sample {
        material: Material::Si,
        donors: vec![
            Dopant {
                species: Species::P,
                density_cm3: 2e15,
            },
            Dopant {
                species: Species::As,
                density_cm3: 5e14,
            },
        ],
        acceptors: vec![Dopant {
            species: Species::B,
            density_cm3: 3e14,
        }],
    }
}

/// The heavily doped p-type piezoresistor of the well-level scenario (B 2e18).
fn piezoresistor_si() -> Sample {
    Sample {
        material: Material::Si,
        donors: vec![Dopant {
            species: Species::P,
            density_cm3: 1e15,
        }],
        acceptors: vec![
            Dopant {
                species: Species::B,
                density_cm3: 2e18,
            },
            Dopant {
                species: Species::Al,
                density_cm3: 1e14,
            },
        ],
    }
}

fn bench_sweeps(c: &mut Criterion) {
    let temps = sweep_k();
    let mut group = c.benchmark_group("evaluate_sweep_20_1000k");
    group.throughput(Throughput::Elements(temps.len() as u64));
    for (name, sample) in [
        ("si_3species_n", three_species_si()),
        ("si_3species_p_2e18", piezoresistor_si()),
    ] {
        group.bench_function(name, |b| {
            b.iter(|| {
                let mut acc = 0.0;
                for &t in &temps {
                    // Errors are impossible for these inputs; count them as NaN so the
                    // benchmark cannot silently measure an early-return path.
                    acc += evaluate(black_box(&sample), black_box(t))
                        .map_or(f64::NAN, |p| p.rho_ohm_cm);
                }
                black_box(acc)
            });
        });
    }
    group.finish();
}

criterion_group!(benches, bench_sweeps);
criterion_main!(benches);
