//! Sequences of temperature updates on the f32 compensator: whatever the
//! history (slow drifts inside one node interval, jumps, nodes, the
//! plausible-range limits and the float next to them, NaN and infinities),
//! every update gives exactly what the public kernels give for that signal
//! alone. This covers the cached node interval of the short update (a
//! later update that locates to the same interval reuses its node values
//! and leaves the status alone): a stale interval would show as different
//! bits, a wrong status or a wrong sample.

mod common;

use common::{GAIN, LIMITS, OFFSET, T_NODES, encode, parse};
use compensate::image::{AxisSpec, ChannelAxis, MapSpec, QFormat, SignalKind, TablesF32, Unit};
use compensate::interp::{Interpolation, linear};
use compensate::{Compensator, ImageBuilder, Status, TableView};
use proptest::prelude::*;

/// Temperature at each channel node of the signal-axis images (invented).
const THERM9: [f32; T_NODES] = [-40.0, -24.0, -6.0, 12.0, 31.0, 51.0, 72.0, 95.0, 120.0];

/// One image of the sequences: channels over `axis`, no quadratic channel
/// and no 2-D correction (the images the short update serves), plausible
/// range `signal_lo..=signal_hi`; `signal_axis` puts the channels over the
/// signal with a thermometer column, else over degrees Celsius without one.
struct Case {
    axis: AxisSpec<f32>,
    signal_lo: f32,
    signal_hi: f32,
    signal_axis: bool,
}

/// The cases: a dyadic signal axis inside a wide plausible range; a
/// non-dyadic one whose plausible range ends inside node intervals (a
/// signal just beyond a limit locates to a cached interval but must raise
/// the fault); a degrees-Celsius axis.
const CASES: [Case; 3] = [
    Case {
        axis: AxisSpec {
            start: 4000.0,
            step: 200.0,
        },
        signal_lo: 3000.0,
        signal_hi: 7000.0,
        signal_axis: true,
    },
    Case {
        axis: AxisSpec {
            start: 4000.3,
            step: 187.7,
        },
        signal_lo: 4321.5,
        signal_hi: 5123.25,
        signal_axis: true,
    },
    Case {
        axis: AxisSpec {
            start: -40.0,
            step: 20.0,
        },
        signal_lo: -55.0,
        signal_hi: 150.0,
        signal_axis: false,
    },
];

fn builder(case: &Case) -> ImageBuilder<'static, f32> {
    ImageBuilder {
        interpolation: Interpolation::Linear,
        q_format: QFormat::F32,
        signal_kind: if case.signal_axis {
            SignalKind::Ohm
        } else {
            SignalKind::Celsius
        },
        unit: Unit::Bar,
        ratiometric: false,
        full_scale: 10.0,
        raw_limits: LIMITS,
        signal_lo: case.signal_lo,
        signal_hi: case.signal_hi,
        serial: *b"SN-000044-WELL03",
        thermometer: case.signal_axis.then_some(MapSpec {
            axis: case.axis,
            values: &THERM9,
        }),
        channel_axis: if case.signal_axis {
            ChannelAxis::Signal
        } else {
            ChannelAxis::Temperature
        },
        temperature_axis: case.axis,
        offset: &OFFSET,
        gain: &GAIN,
        quadratic: None,
        grid: None,
    }
}

/// What the compensator must hold after an update: coefficient and
/// temperature bits and the status every following sample carries.
#[derive(Clone, Copy, Debug, PartialEq)]
struct Held {
    offset: u32,
    gain: u32,
    temperature: u32,
    status: Status,
}

/// The kernels' answer for `signal` after `before` (a non-finite signal
/// keeps the coefficients and raises `NAN_INPUT`).
fn expected(tables: &TablesF32<'_>, case: &Case, signal: f32, before: Held) -> Held {
    if !signal.is_finite() {
        return Held {
            status: Status::NAN_INPUT,
            ..before
        };
    }
    let p = tables.temperature.locate(signal);
    let mut status = Status::OK;
    if p.clamped {
        status |= Status::TEMPERATURE_CLAMPED;
    }
    if signal < case.signal_lo || signal > case.signal_hi {
        status |= Status::SENSOR_FAULT;
    }
    let temperature = match &tables.thermometer {
        Some((_, values)) => linear(values, p),
        None => signal,
    };
    Held {
        offset: linear(&tables.offset, p).to_bits(),
        gain: linear(&tables.gain, p).to_bits(),
        temperature: temperature.to_bits(),
        status,
    }
}

/// What `c` holds, read through the public API (the status from a sample
/// in the calibrated range).
fn held(c: &Compensator<'_>) -> Held {
    let (offset, gain, quadratic) = c.coefficients();
    assert_eq!(quadratic, 0.0, "no quadratic channel");
    Held {
        offset: offset.to_bits(),
        gain: gain.to_bits(),
        temperature: c.temperature_c().to_bits(),
        status: c.compensate_sample(1234.0).status,
    }
}

/// Signals for step `k` of a sequence on `case`, from a proptest choice:
/// a slow drift from the previous signal, a jump anywhere (beyond the
/// plausible range too), a node or its float neighbours, a limit or its
/// neighbours, or a non-finite value.
#[derive(Clone, Copy, Debug)]
enum Step {
    Drift(f32),
    Anywhere(f32),
    Node(usize, i8),
    Limit(bool, i8),
    NonFinite(u8),
}

fn step() -> impl Strategy<Value = Step> {
    prop_oneof![
        4 => (-0.02f32..0.02).prop_map(Step::Drift),
        2 => (-0.2f32..1.2).prop_map(Step::Anywhere),
        1 => (0..T_NODES, -2i8..=2).prop_map(|(k, u)| Step::Node(k, u)),
        1 => (any::<bool>(), -2i8..=2).prop_map(|(hi, u)| Step::Limit(hi, u)),
        1 => (0u8..3).prop_map(Step::NonFinite),
    ]
}

/// `x` moved by `ulps` floats (negative: down).
fn nudge(mut x: f32, ulps: i8) -> f32 {
    for _ in 0..ulps.unsigned_abs() {
        x = if ulps > 0 { x.next_up() } else { x.next_down() };
    }
    x
}

/// The signal of `step` on `case`, after `previous` (the last finite
/// signal). Drifts and jumps are fractions of the axis span.
fn signal(case: &Case, step: Step, previous: f32) -> f32 {
    let span = case.axis.step * (T_NODES - 1) as f32;
    match step {
        Step::Drift(f) => previous + f * span,
        Step::Anywhere(f) => case.axis.start + f * span,
        Step::Node(k, u) => nudge(case.axis.start + case.axis.step * k as f32, u),
        Step::Limit(hi, u) => nudge(if hi { case.signal_hi } else { case.signal_lo }, u),
        Step::NonFinite(0) => f32::NAN,
        Step::NonFinite(1) => f32::INFINITY,
        Step::NonFinite(_) => f32::NEG_INFINITY,
    }
}

/// Runs `steps` on a compensator for `case`, comparing after every update.
fn run(case: &Case, steps: &[Step]) -> Result<(), TestCaseError> {
    let img = encode(&builder(case));
    let view: TableView<'_> = parse(&img);
    let tables = view
        .tables_f32()
        .ok_or_else(|| TestCaseError::fail("no f32 tables"))?;
    let mut c = Compensator::new(&view).map_err(|e| TestCaseError::fail(format!("{e:?}")))?;
    let mut want = held(&c);
    let mut previous = case.axis.start + 0.5 * case.axis.step;
    for (k, &st) in steps.iter().enumerate() {
        let s = signal(case, st, previous);
        if s.is_finite() {
            previous = s;
        }
        want = expected(&tables, case, s, want);
        let status = c.update_temperature(s);
        prop_assert_eq!(status, want.status, "step {} {:?}: signal {}", k, st, s);
        let got = held(&c);
        prop_assert_eq!(
            got,
            want,
            "step {} {:?}: signal {} (offset {} / {}, gain {} / {})",
            k,
            st,
            s,
            f32::from_bits(got.offset),
            f32::from_bits(want.offset),
            f32::from_bits(got.gain),
            f32::from_bits(want.gain)
        );
    }
    Ok(())
}

proptest! {
    /// Every update of a random history equals the kernels on its own
    /// signal, bit for bit, status included.
    #[test]
    fn f32_update_histories_match_the_kernels(
        case in 0usize..CASES.len(),
        steps in proptest::collection::vec(step(), 1..60),
    ) {
        run(&CASES[case], &steps)?;
    }
}

/// The histories that reach each way out of a cached interval: a drift
/// inside it, then out across a node, across a plausible-range limit that
/// ends inside an interval, to a NaN and back into the same interval (the
/// status must return to OK with an update, and not before).
#[test]
fn f32_update_leaves_the_interval_at_its_ends() -> Result<(), TestCaseError> {
    use Step::*;
    let histories: [(usize, &[Step]); 5] = [
        (
            0,
            &[
                Node(2, 0),
                Drift(0.01),
                Drift(0.01),
                Node(3, -1),
                Node(3, 0),
            ],
        ),
        (
            0,
            &[
                Node(4, 1),
                Drift(0.005),
                NonFinite(0),
                Drift(0.0),
                Drift(0.001),
            ],
        ),
        (
            1,
            &[
                Limit(false, 1),
                Limit(false, 0),
                Limit(false, -1),
                Limit(false, 2),
            ],
        ),
        (
            1,
            &[
                Limit(true, -2),
                Limit(true, -1),
                Limit(true, 0),
                Limit(true, 1),
            ],
        ),
        (
            2,
            &[Node(8, -1), Node(8, 0), Node(7, 3), Node(0, 0), Node(0, -1)],
        ),
    ];
    for (case, steps) in histories {
        run(&CASES[case], steps)?;
    }
    Ok(())
}
