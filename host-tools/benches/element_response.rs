//! Throughput of the element models as the calibration station uses them:
//! simulating a new part (four new arm dopings, eight chamber temperatures,
//! five stimuli each) and answering stimuli at an already-solved temperature.
//!
//! Run: `cargo bench -p host-tools --bench element_response`.

use std::hint::black_box;

use criterion::{Criterion, criterion_group, criterion_main};
use host_tools::element::{ElementKind, ElementModel, ElementSpec, example_spec};

/// Chamber temperatures of one simulated calibration run, in Celsius.
const CHAMBER_C: [f64; 8] = [-20.0, -5.0, 10.0, 25.0, 40.0, 55.0, 70.0, 85.0];

fn bench_parts(c: &mut Criterion) {
    let ElementSpec::Bridge(base) = example_spec(ElementKind::Bridge) else {
        return;
    };
    let mut part = 0u64;
    c.bench_function("bridge: new part, 8 temperatures x 5 stimuli", |b| {
        b.iter(|| {
            // A new doping every iteration so the memo never hits.
            part += 1;
            let mut spec = base.clone();
            for (i, arm) in spec.arm.iter_mut().enumerate() {
                arm.density_cm3 *= 1.0 + 1e-6 * (part as f64 + i as f64);
            }
            let model = ElementModel::new(&ElementSpec::Bridge(spec)).ok();
            let mut sum = 0.0;
            if let Some(model) = model {
                for t_c in CHAMBER_C {
                    for stimulus in [0.0, 2.5, 5.0, 7.5, 10.0] {
                        sum += model
                            .response(t_c, stimulus)
                            .map(|o| o.output_v)
                            .unwrap_or(0.0);
                    }
                }
            }
            black_box(sum)
        })
    });
    let model = ElementModel::new(&ElementSpec::Bridge(base.clone())).ok();
    c.bench_function("bridge: response at a solved temperature", |b| {
        b.iter(|| {
            model
                .as_ref()
                .and_then(|m| m.response(black_box(25.0), black_box(5.0)).ok())
        })
    });
}

criterion_group!(benches, bench_parts);
criterion_main!(benches);
