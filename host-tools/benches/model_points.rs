//! Throughput of the full model: `evaluate` points per second for a
//! three-species Si sample swept over 20..1000 K (target >= 200 000 points/s
//! per core, see the transport notes in `physics/model.rs`).
//!
//! Run: `cargo bench -p host-tools --bench model_points`.
//!
//! Every group is measured twice: in wall time (criterion's default) and in
//! CPU time of the benchmarking thread (`*_cpu` groups, Linux
//! `/proc/thread-self/schedstat`). On a shared, loaded machine wall time
//! includes time spent waiting for a core; the CPU-time figure is the
//! per-core throughput the target refers to.

use std::hint::black_box;

use criterion::measurement::{Measurement, ValueFormatter};
use criterion::{
    BenchmarkGroup, Criterion, SamplingMode, Throughput, criterion_group, criterion_main,
};
use host_tools::physics::model::evaluate_state;
use host_tools::physics::{Material, Sample, Species, evaluate, solve};

/// Temperatures of one sweep: 20..=1000 K in 1 K steps (981 points).
fn sweep_k() -> Vec<f64> {
    (20..=1000).map(f64::from).collect()
}

/// A compensated n-type Si sample with three species (two donors, one acceptor).
fn three_species_si() -> Sample {
    Sample::new(
        Material::Si,
        &[(Species::P, 2e15), (Species::As, 5e14)],
        &[(Species::B, 3e14)],
    )
}

/// The heavily doped p-type piezoresistor of the well-level scenario (B 2e18).
fn piezoresistor_si() -> Sample {
    Sample::new(
        Material::Si,
        &[(Species::P, 1e15)],
        &[(Species::B, 2e18), (Species::Al, 1e14)],
    )
}

fn bench_sweeps<M: Measurement>(c: &mut Criterion<M>, suffix: &str) {
    let temps = sweep_k();
    let mut group = c.benchmark_group(format!("evaluate_sweep_20_1000k{suffix}"));
    configure(&mut group, suffix, temps.len());
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

// Same group setup as bench_sweeps: each criterion group is set up on its own.
/// The transport half alone (mobility, conductivity, Hall factors, Kanda) on
/// states solved beforehand, to show how the per-point time splits.
fn bench_transport_only<M: Measurement>(c: &mut Criterion<M>, suffix: &str) {
    let temps = sweep_k();
    let mut group = c.benchmark_group(format!("transport_only_20_1000k{suffix}"));
    configure(&mut group, suffix, temps.len());
    for (name, sample) in [
        ("si_3species_n", three_species_si()),
        ("si_3species_p_2e18", piezoresistor_si()),
    ] {
        let states: Vec<_> = temps
            .iter()
            .filter_map(|&t| solve(&sample, t).ok())
            .collect();
        assert_eq!(states.len(), temps.len(), "every state solves");
        group.bench_function(name, |b| {
            b.iter(|| {
                let mut acc = 0.0;
                for state in &states {
                    acc += evaluate_state(Material::Si, black_box(state)).rho_ohm_cm;
                }
                black_box(acc)
            });
        });
    }
    group.finish();
}

/// Throughput in points; for the CPU-time groups flat sampling with few, long
/// samples: the kernel updates a running thread's schedstat time only at
/// scheduler ticks and switches (1..4 ms apart), so each sample must last
/// far longer than that (here ~0.5 s: < 2 % quantization per sample).
fn configure<M: Measurement>(group: &mut BenchmarkGroup<'_, M>, suffix: &str, points: usize) {
    group.throughput(Throughput::Elements(points as u64));
    if suffix == "_cpu" {
        group.sampling_mode(SamplingMode::Flat);
        group.sample_size(20);
        group.measurement_time(std::time::Duration::from_secs(10));
    }
}

/// CPU time consumed by the calling thread, in nanoseconds.
struct ThreadCpuTime;

/// First field of `/proc/thread-self/schedstat`: time spent on a CPU, in ns.
fn thread_cpu_ns() -> u64 {
    let text = std::fs::read_to_string("/proc/thread-self/schedstat")
        .expect("the *_cpu benchmark groups need Linux /proc/thread-self/schedstat");
    text.split_whitespace()
        .next()
        .and_then(|field| field.parse().ok())
        .expect("schedstat starts with the on-CPU time in ns")
}

impl Measurement for ThreadCpuTime {
    type Intermediate = u64;
    type Value = u64;
    fn start(&self) -> u64 {
        thread_cpu_ns()
    }
    fn end(&self, start_ns: u64) -> u64 {
        thread_cpu_ns().saturating_sub(start_ns)
    }
    fn add(&self, a: &u64, b: &u64) -> u64 {
        a + b
    }
    fn zero(&self) -> u64 {
        0
    }
    fn to_f64(&self, value: &u64) -> f64 {
        *value as f64
    }
    fn formatter(&self) -> &dyn ValueFormatter {
        &CpuNsFormatter
    }
}

/// Shows CPU nanoseconds as "cpu-ms" and throughputs as elements per CPU-second.
struct CpuNsFormatter;

impl ValueFormatter for CpuNsFormatter {
    fn scale_values(&self, _typical_ns: f64, values: &mut [f64]) -> &'static str {
        values.iter_mut().for_each(|v| *v *= 1e-6);
        "cpu-ms"
    }
    fn scale_throughputs(
        &self,
        _typical_ns: f64,
        throughput: &Throughput,
        values: &mut [f64],
    ) -> &'static str {
        let per_iteration = match *throughput {
            Throughput::Elements(n) | Throughput::Bytes(n) | Throughput::BytesDecimal(n) => {
                n as f64
            }
            _ => 1.0,
        };
        values
            .iter_mut()
            .for_each(|v| *v = per_iteration * 1e9 / *v);
        "elem/cpu-s"
    }
    fn scale_for_machines(&self, _values: &mut [f64]) -> &'static str {
        "ns"
    }
}

fn wall(c: &mut Criterion) {
    bench_sweeps(c, "");
    bench_transport_only(c, "");
}

fn cpu(c: &mut Criterion<ThreadCpuTime>) {
    bench_sweeps(c, "_cpu");
    bench_transport_only(c, "_cpu");
}

criterion_group!(wall_time, wall);
criterion_group! {
    name = cpu_time;
    config = Criterion::default().with_measurement(ThreadCpuTime);
    targets = cpu
}
criterion_main!(wall_time, cpu_time);
