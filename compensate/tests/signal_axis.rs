//! Images whose channels are tabulated over the temperature signal
//! (`ChannelAxis::Signal`): one look-up per temperature update, the
//! thermometer read only when the temperature is asked for.

mod common;

use common::{GAIN, LIMITS, OFFSET, QF, QUAD, T_NODES, encode, fix_crc, parse, q_data, to_q};
use compensate::image::layout::off;
use compensate::image::{
    AxisSpec, ChannelAxis, EncodeError, ImageError, MapSpec, QFormat, Section, SignalKind, Unit,
};
use compensate::interp::{Interpolation, linear_q};
use compensate::{Compensator, FixedCompensator, ImageBuilder, Status, TableView};

/// Signal nodes 4000..=5600 ohm every 200 ohm, the channels' nodes.
const S_START: f32 = 4000.0;
const S_STEP: f32 = 200.0;
/// Temperature at each signal node: a bent thermometer (-40..120 C), so a
/// mix-up of the two axes shows.
const THERM9: [f32; T_NODES] = [-40.0, -24.0, -6.0, 12.0, 31.0, 51.0, 72.0, 95.0, 120.0];

fn f32_signal_builder() -> ImageBuilder<'static, f32> {
    let axis = AxisSpec {
        start: S_START,
        step: S_STEP,
    };
    ImageBuilder {
        interpolation: Interpolation::Linear,
        q_format: QFormat::F32,
        signal_kind: SignalKind::Ohm,
        unit: Unit::Bar,
        ratiometric: false,
        full_scale: 10.0,
        raw_limits: LIMITS,
        signal_lo: 3000.0,
        signal_hi: 7000.0,
        serial: *b"SN-000043-WELL02",
        thermometer: Some(MapSpec {
            axis,
            values: &THERM9,
        }),
        channel_axis: ChannelAxis::Signal,
        temperature_axis: axis,
        offset: &OFFSET,
        gain: &GAIN,
        quadratic: Some(&QUAD),
        grid: None,
    }
}

fn q_signal_builder() -> ImageBuilder<'static, i32> {
    let d = q_data();
    let therm: &'static [i32; T_NODES] =
        Box::leak(Box::new(THERM9.map(|t| to_q(t, QF.temperature))));
    let axis = AxisSpec {
        start: to_q(S_START, QF.signal),
        step: to_q(S_STEP, QF.signal),
    };
    ImageBuilder {
        interpolation: Interpolation::Linear,
        q_format: QF,
        signal_kind: SignalKind::Ohm,
        unit: Unit::Bar,
        ratiometric: false,
        full_scale: 10.0,
        raw_limits: LIMITS,
        signal_lo: to_q(3000.0, QF.signal),
        signal_hi: to_q(7000.0, QF.signal),
        serial: *b"SN-000043-WELL02",
        thermometer: Some(MapSpec {
            axis,
            values: therm,
        }),
        channel_axis: ChannelAxis::Signal,
        temperature_axis: axis,
        offset: &d.offset,
        gain: &d.gain,
        quadratic: Some(&d.quad),
        grid: None,
    }
}

#[test]
fn f32_update_is_one_lookup_over_the_signal() {
    let img = encode(&f32_signal_builder());
    let view = parse(&img);
    assert_eq!(view.channel_axis(), ChannelAxis::Signal);
    let mut c = Compensator::new(&view).unwrap();
    // On node k, node k's values exactly (the axis is dyadic, so `frac` is
    // exactly 0); halfway, the mean of the two nodes within 2 ulp (one
    // rounding in the difference, one in the multiply-add).
    for k in 0..T_NODES {
        let s = S_START + S_STEP * k as f32;
        let st = c.update_temperature(s);
        assert_eq!(st, Status::OK, "node {k}");
        assert_eq!(c.coefficients(), (OFFSET[k], GAIN[k], QUAD[k]), "node {k}");
        assert_eq!(c.temperature_c(), THERM9[k], "node {k}");
        if k + 1 < T_NODES {
            c.update_temperature(s + 0.5 * S_STEP);
            let (o, g, _) = c.coefficients();
            let mid = |a: f32, b: f32| 0.5 * (a + b);
            let close = |got: f32, want: f32| (got - want).abs() <= 2.0 * f32::EPSILON * want.abs();
            assert!(
                close(o, mid(OFFSET[k], OFFSET[k + 1])),
                "offset mid {k}: {o}"
            );
            assert!(close(g, mid(GAIN[k], GAIN[k + 1])), "gain mid {k}: {g}");
            let t = c.temperature_c();
            assert!(
                close(t, mid(THERM9[k], THERM9[k + 1])),
                "temperature mid {k}: {t}"
            );
        }
    }
    // Beyond the last node: clamped to it, temperature included.
    let st = c.update_temperature(5900.0);
    assert_eq!(st, Status::TEMPERATURE_CLAMPED);
    assert_eq!(c.temperature_c(), THERM9[T_NODES - 1]);
    assert_eq!(c.coefficients().0, OFFSET[T_NODES - 1]);
    // Outside the plausible range: a sensor fault as well.
    let st = c.update_temperature(2000.0);
    assert_eq!(st, Status::TEMPERATURE_CLAMPED | Status::SENSOR_FAULT);
    assert_eq!(c.temperature_c(), THERM9[0]);
}

#[test]
fn q_update_is_one_lookup_over_the_signal() {
    let img = encode(&q_signal_builder());
    let view = parse(&img);
    assert_eq!(view.channel_axis(), ChannelAxis::Signal);
    let d = q_data();
    let mut c = FixedCompensator::new(&view).unwrap();
    for k in 0..T_NODES {
        let s = to_q(S_START + S_STEP * k as f32, QF.signal);
        assert_eq!(c.update_temperature(s), Status::OK, "node {k}");
        let (o, g, q) = c.coefficients();
        assert_eq!((o, g, q), (d.offset[k], d.gain[k], d.quad[k]), "node {k}");
        assert_eq!(
            c.temperature_q(),
            to_q(THERM9[k], QF.temperature),
            "node {k}"
        );
        if k + 1 < T_NODES {
            // Halfway: the fraction is exactly 1/2, so the integer kernel
            // gives the mean rounded, within 1 LSB.
            c.update_temperature(s + to_q(0.5 * S_STEP, QF.signal));
            let mid = |a: i32, b: i32| (i64::from(a) + i64::from(b)) / 2;
            let (o, _, _) = c.coefficients();
            assert!(
                (i64::from(o) - mid(d.offset[k], d.offset[k + 1])).abs() <= 1,
                "offset mid {k}: {o}"
            );
            let t = c.temperature_q();
            let want = mid(to_q(THERM9[k], 16), to_q(THERM9[k + 1], 16));
            assert!(
                (i64::from(t) - want).abs() <= 1,
                "temperature mid {k}: {t} vs {want}"
            );
        }
    }
    let st = c.update_temperature(to_q(5900.0, QF.signal));
    assert_eq!(st, Status::TEMPERATURE_CLAMPED);
    assert_eq!(c.temperature_q(), to_q(THERM9[T_NODES - 1], QF.temperature));
}

#[test]
fn signal_axis_images_need_the_thermometer_on_the_channel_nodes() {
    // Another thermometer axis than the channels'.
    let mut b = f32_signal_builder();
    b.thermometer = Some(MapSpec {
        axis: AxisSpec {
            start: S_START,
            step: 2.0 * S_STEP,
        },
        values: &THERM9,
    });
    assert_eq!(
        b.encode(&mut vec![0; b.encoded_len().unwrap()]),
        Err(EncodeError::Invalid(ImageError::BadAxis {
            section: Section::Thermometer
        }))
    );
    // Another node count.
    let mut b = f32_signal_builder();
    b.thermometer = Some(MapSpec {
        axis: b.temperature_axis,
        values: &THERM9[..5],
    });
    assert_eq!(
        b.encode(&mut vec![0; b.encoded_len().unwrap()]),
        Err(EncodeError::Invalid(ImageError::BadCount {
            field: "n_sig",
            value: 5
        }))
    );
    // A flag bit this layout does not define (bits 0..=2 are defined).
    let mut img = encode(&f32_signal_builder());
    img[off::FLAGS] |= 1 << 3;
    fix_crc(&mut img);
    assert_eq!(
        TableView::parse(&img),
        Err(ImageError::ReservedNotZero { offset: off::FLAGS })
    );
    // The simulated flag is accepted and reported, and changes nothing else.
    let plain = encode(&f32_signal_builder());
    let mut sim = plain.clone();
    sim[off::FLAGS] |= compensate::image::layout::FLAG_SIMULATED;
    fix_crc(&mut sim);
    let (a, b) = (
        TableView::parse(&plain).unwrap(),
        TableView::parse(&sim).unwrap(),
    );
    assert!(!a.simulated() && b.simulated());
    assert_eq!(a.channel_axis(), b.channel_axis());
}

proptest::proptest! {
    /// The f32 update's short path (signal inside the axis and the
    /// plausible range, an image without quadratic channel) and its general
    /// path (every other signal, and any signal on an image with a
    /// quadratic channel) compute exactly what the public kernels give:
    /// `Axis::locate` then `linear` on each column, bit for bit, for
    /// signals inside, on and beyond the axis; so does the temperature read
    /// afterwards; the status follows the clamping and the plausible range.
    #[test]
    fn f32_update_matches_the_kernels(
        signal in 2000.0f32..8000.0,
        node in 0usize..T_NODES,
        with_quadratic: bool,
    ) {
        let mut builder = f32_signal_builder();
        if !with_quadratic {
            builder.quadratic = None;
        }
        let img = encode(&builder);
        let view = parse(&img);
        let tables = view.tables_f32().unwrap();
        let (_, therm) = tables.thermometer.unwrap();
        let mut c = Compensator::new(&view).unwrap();
        // Random signals, and every node exactly.
        for s in [signal, S_START + S_STEP * node as f32] {
            let st = c.update_temperature(s);
            let p = tables.temperature.locate(s);
            let want = (
                compensate::interp::linear(&tables.offset, p),
                compensate::interp::linear(&tables.gain, p),
                tables.quadratic.map_or(0.0, |q| compensate::interp::linear(&q, p)),
            );
            let got = c.coefficients();
            proptest::prop_assert_eq!(
                (got.0.to_bits(), got.1.to_bits(), got.2.to_bits()),
                (want.0.to_bits(), want.1.to_bits(), want.2.to_bits()),
                "signal {}: got {:?}, want {:?}", s, got, want
            );
            let t_c = compensate::interp::linear(&therm, p);
            proptest::prop_assert_eq!(
                c.temperature_c().to_bits(),
                t_c.to_bits(),
                "signal {}: temperature {} want {}", s, c.temperature_c(), t_c
            );
            let mut status = Status::OK;
            if p.clamped {
                status |= Status::TEMPERATURE_CLAMPED;
            }
            if !(3000.0..=7000.0).contains(&s) {
                status |= Status::SENSOR_FAULT;
            }
            proptest::prop_assert_eq!(st, status, "signal {}", s);
        }
    }
}

proptest::proptest! {
    /// The integer update's short path (signal inside the axis and the
    /// plausible range, an image without quadratic channel) and its
    /// general path (every other signal, and any signal on an image with a
    /// quadratic channel) compute exactly what the public kernels give:
    /// `AxisQ::locate` then `linear_q` on each column, bit for bit, for
    /// signals inside, on, next to and beyond the axis and its nodes; so
    /// does the temperature read afterwards; the status follows the
    /// clamping and the plausible range.
    #[test]
    fn q_update_matches_the_kernels(
        signal in to_q(2000.0, QF.signal)..to_q(8000.0, QF.signal),
        node in 0usize..T_NODES,
        next_to_node in -2i32..=2,
        with_quadratic: bool,
    ) {
        let mut builder = q_signal_builder();
        if !with_quadratic {
            builder.quadratic = None;
            builder.q_format.quadratic = 0;
        }
        let img = encode(&builder);
        let view = parse(&img);
        let tables = view.tables_q().unwrap();
        let (_, therm) = tables.thermometer.unwrap();
        let mut c = FixedCompensator::new(&view).unwrap();
        let on_node = to_q(S_START + S_STEP * node as f32, QF.signal);
        // Random signals, every node exactly and the LSBs next to it (the
        // first and last node included: the short path's range ends there).
        for s in [signal, on_node + next_to_node] {
            let st = c.update_temperature(s);
            let p = tables.temperature.locate(s);
            let want = (
                linear_q(&tables.offset, p),
                linear_q(&tables.gain, p),
                tables.quadratic.map_or(0, |q| linear_q(&q, p)),
            );
            proptest::prop_assert_eq!(c.coefficients(), want, "signal {}", s);
            let t_q = linear_q(&therm, p);
            proptest::prop_assert_eq!(c.temperature_q(), t_q, "signal {}: temperature", s);
            let mut status = Status::OK;
            if p.clamped {
                status |= Status::TEMPERATURE_CLAMPED;
            }
            if !(to_q(3000.0, QF.signal)..=to_q(7000.0, QF.signal)).contains(&s) {
                status |= Status::SENSOR_FAULT;
            }
            proptest::prop_assert_eq!(st, status, "signal {}", s);
        }
    }
}
