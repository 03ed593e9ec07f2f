//! Property tests of the image encoder and parser: every valid description
//! round-trips, every value reads back bit for bit.

use compensate::image::{
    AxisSpec, ChannelAxis, GridSpec, MapSpec, NumberFormat, QFormat, RawLimits, SignalKind, Unit,
};
use compensate::interp::{Axis, Interpolation, Nodes};
use compensate::{ImageBuilder, TableView};
use proptest::prelude::*;

const LIMITS: RawLimits = RawLimits {
    rail_lo: -32768,
    raw_lo: -30000,
    raw_hi: 30000,
    rail_hi: 32767,
};

/// A Q format the parser accepts for these limits, from six free bytes:
/// every count in its allowed range, so that the whole space of valid Q
/// formats is reachable. The rules (`compensate::image::layout::QFormat`):
/// temperature, signal, output and offset at most 30 bits; gain and
/// quadratic at most 62; `offset + gain - output` in `0..=62`;
/// `quadratic + offset - gain` in `0..=62` with a quadratic channel, else
/// `quadratic == 0`; the rails shifted left by `offset` fit in i32, which
/// for rails of +/-2^15 allows `offset <= 16`.
fn q_format_from(b: [u8; 6], quad: bool) -> QFormat {
    let pick = |x: u8, lo: u8, hi: u8| lo + x % (hi - lo + 1);
    let offset = pick(b[3], 0, 16);
    let output = pick(b[2], 0, 30);
    // offset + gain - output in 0..=62, gain in 0..=62.
    let gain = pick(
        b[4],
        output.saturating_sub(offset),
        (62 + output - offset).min(62),
    );
    let quadratic = if quad {
        // quadratic + offset - gain in 0..=62, quadratic in 0..=62.
        pick(
            b[5],
            gain.saturating_sub(offset),
            (62 + gain).saturating_sub(offset).min(62),
        )
    } else {
        0
    };
    QFormat {
        temperature: pick(b[0], 0, 30),
        signal: pick(b[1], 0, 30),
        output,
        offset,
        gain,
        quadratic,
    }
}

/// Every unit an image can name (codes 0..=6).
fn unit_from(code: u8) -> Unit {
    Unit::from_code(code % 7).unwrap_or(Unit::None)
}

proptest! {
    #[test]
    fn f32_images_round_trip(
        n_t in 2usize..24,
        therm in prop::option::of(prop::collection::vec(-60.0f32..200.0, 2..12)),
        quad in any::<bool>(),
        n_raw in prop::option::of(2usize..6),
        seed in prop::collection::vec(-1.0e3f32..1.0e3, 200),
        serial in any::<[u8; 16]>(),
        cubic in any::<bool>(),
    ) {
        let offset: Vec<f32> = seed[..n_t].to_vec();
        let gain: Vec<f32> = seed[n_t..2 * n_t].iter().map(|g| g * 1e-6).collect();
        let q: Vec<f32> = seed[2 * n_t..3 * n_t].iter().map(|g| g * 1e-12).collect();
        let grid: Vec<f32> = n_raw.map(|r| seed.iter().cycle().take(r * n_t).copied().collect()).unwrap_or_default();
        let b = ImageBuilder {
            interpolation: if cubic && cfg!(feature = "cubic") { Interpolation::MonotoneCubic } else { Interpolation::Linear },
            q_format: QFormat::F32,
            signal_kind: if therm.is_some() { SignalKind::Ohm } else { SignalKind::Celsius },
            unit: Unit::Millitesla,
            ratiometric: false,
            full_scale: 100.0,
            raw_limits: LIMITS,
            signal_lo: -1.0e4,
            signal_hi: 1.0e4,
            serial,
            thermometer: therm.as_ref().map(|t| MapSpec { axis: AxisSpec { start: 1000.0, step: 12.5 }, values: t.as_slice() }),
            channel_axis: ChannelAxis::Temperature,
            temperature_axis: AxisSpec { start: -40.0, step: 7.5 },
            offset: &offset,
            gain: &gain,
            quadratic: quad.then_some(q.as_slice()),
            grid: n_raw.map(|r| GridSpec { raw_axis: AxisSpec { start: -30000.0, step: 60000.0 / (r - 1) as f32 }, raw_len: r, values: grid.as_slice() }),
        };
        let mut buf = vec![0u8; 4096];
        let len = b.encode(&mut buf).unwrap();
        prop_assert_eq!(len, b.encoded_len().unwrap());
        let v = TableView::parse(&buf[..len]).unwrap();
        prop_assert_eq!(v.serial(), serial);
        let t = v.tables_f32().unwrap();
        for i in 0..n_t {
            prop_assert_eq!(t.offset.node(i).to_bits(), offset[i].to_bits());
            prop_assert_eq!(t.gain.node(i).to_bits(), gain[i].to_bits());
        }
        prop_assert_eq!(t.quadratic.is_some(), quad);
        if let Some(col) = t.quadratic {
            prop_assert_eq!(col.len(), n_t);
            for (i, x) in q[..n_t].iter().enumerate() {
                prop_assert_eq!(col.node(i).to_bits(), x.to_bits(), "quadratic node {}", i);
            }
        }
        prop_assert_eq!(t.thermometer.is_some(), therm.is_some());
        if let (Some((axis, col)), Some(th)) = (t.thermometer, &therm) {
            prop_assert_eq!(axis, Axis { start: 1000.0, step: 12.5, len: th.len() });
            prop_assert_eq!(col.len(), th.len());
            for (i, x) in th.iter().enumerate() {
                prop_assert_eq!(col.node(i).to_bits(), x.to_bits(), "thermometer node {}", i);
            }
        }
        prop_assert_eq!(t.grid.is_some(), n_raw.is_some());
        if let (Some((axis, col)), Some(r)) = (t.grid, n_raw) {
            prop_assert_eq!(axis, Axis { start: -30000.0, step: 60000.0 / (r - 1) as f32, len: r });
            prop_assert_eq!(col.len(), grid.len());
            for (i, x) in grid.iter().enumerate() {
                prop_assert_eq!(col.node(i).to_bits(), x.to_bits(), "grid node {}", i);
            }
        }
    }

    #[test]
    fn q_images_round_trip(
        n_t in 2usize..24,
        values in prop::collection::vec(any::<i32>(), 48),
        t_start in -(60i32 << 16)..0,
        t_step in (1i32 << 12)..(20 << 16),
    ) {
        let offset = &values[..n_t];
        let gain = &values[24..24 + n_t];
        let b = ImageBuilder::<i32> {
            interpolation: Interpolation::Linear,
            q_format: QFormat { temperature: 16, signal: 16, output: 16, offset: 0, gain: 30, quadratic: 0 },
            signal_kind: SignalKind::Celsius,
            unit: Unit::Ampere,
            ratiometric: true,
            full_scale: 200.0,
            raw_limits: LIMITS,
            signal_lo: -60 << 16,
            signal_hi: 200 << 16,
            serial: [7; 16],
            thermometer: None,
            channel_axis: ChannelAxis::Temperature,
            temperature_axis: AxisSpec { start: t_start, step: t_step },
            offset,
            gain,
            quadratic: None,
            grid: None,
        };
        let mut buf = vec![0u8; 1024];
        let len = b.encode(&mut buf).unwrap();
        let v = TableView::parse(&buf[..len]).unwrap();
        let t = v.tables_q().unwrap();
        prop_assert_eq!(t.temperature.start(), t_start);
        prop_assert_eq!(t.temperature.step(), t_step);
        for i in 0..n_t {
            prop_assert_eq!(t.offset.node(i), offset[i]);
            prop_assert_eq!(t.gain.node(i), gain[i]);
        }
    }

    #[test]
    fn q_images_with_every_section_round_trip(
        n_t in 2usize..20,
        n_sig in prop::option::of(2usize..12),
        over_signal in any::<bool>(),
        quad in any::<bool>(),
        n_raw in prop::option::of(2usize..6),
        cubic in any::<bool>(),
        frac in any::<[u8; 6]>(),
        values in prop::collection::vec(any::<i32>(), 20 * 3 + 12 + 20 * 5),
        t_start in -(1i32 << 28)..(1 << 28),
        t_step in 1i32..(1 << 22),
        s_start in -(1i32 << 28)..(1 << 28),
        s_step in 1i32..(1 << 22),
        unit in any::<u8>(),
        ratiometric in any::<bool>(),
        full_scale in 1.0e-3f32..1.0e6,
        serial in any::<[u8; 16]>(),
    ) {
        // Over the signal, the thermometer sits on the channels' own nodes.
        let over_signal = over_signal && n_sig.is_some();
        let n_sig = if over_signal { Some(n_t) } else { n_sig };
        let q_format = q_format_from(frac, quad);
        let (offset, rest) = values.split_at(n_t);
        let (gain, rest) = rest.split_at(n_t);
        let (quadratic, rest) = rest.split_at(n_t);
        let (therm, rest) = rest.split_at(n_sig.unwrap_or(0));
        let grid = &rest[..n_raw.map_or(0, |r| r * n_t)];
        let channel_axis_spec = AxisSpec { start: t_start, step: t_step };
        let therm_axis = if over_signal { channel_axis_spec } else { AxisSpec { start: s_start, step: s_step } };
        let interpolation = if cubic && cfg!(feature = "cubic") { Interpolation::MonotoneCubic } else { Interpolation::Linear };
        let b = ImageBuilder::<i32> {
            interpolation,
            q_format,
            signal_kind: if n_sig.is_some() { SignalKind::AdcCode } else { SignalKind::Celsius },
            unit: unit_from(unit),
            ratiometric,
            full_scale,
            raw_limits: LIMITS,
            signal_lo: s_start,
            signal_hi: s_start.saturating_add(1 << 20),
            serial,
            thermometer: n_sig.map(|_| MapSpec { axis: therm_axis, values: therm }),
            channel_axis: if over_signal { ChannelAxis::Signal } else { ChannelAxis::Temperature },
            temperature_axis: channel_axis_spec,
            offset,
            gain,
            quadratic: quad.then_some(quadratic),
            grid: n_raw.map(|r| GridSpec {
                raw_axis: AxisSpec { start: -30000, step: 60000 / (r as i32 - 1) },
                raw_len: r,
                values: grid,
            }),
        };
        let mut buf = vec![0u8; 4096];
        let len = b.encode(&mut buf).unwrap();
        prop_assert_eq!(len, b.encoded_len().unwrap());
        let img = &buf[..len];
        let v = TableView::parse(img).unwrap();
        // The Q-only parser reads the same image the same way.
        prop_assert_eq!(TableView::parse_q(img).unwrap(), v);
        prop_assert_eq!(v.format(), NumberFormat::Q);
        prop_assert_eq!(v.interpolation(), interpolation);
        prop_assert_eq!(v.signal_kind(), b.signal_kind);
        prop_assert_eq!(v.channel_axis(), b.channel_axis);
        prop_assert_eq!(v.unit(), b.unit);
        prop_assert_eq!(v.ratiometric(), ratiometric);
        prop_assert_eq!(v.full_scale().to_bits(), full_scale.to_bits());
        prop_assert_eq!(v.raw_limits(), LIMITS);
        prop_assert_eq!(v.q_format(), q_format);
        prop_assert_eq!(v.serial(), serial);
        prop_assert_eq!(v.temperature_nodes(), n_t);
        prop_assert_eq!(v.channel_count(), if quad { 3 } else { 2 });
        prop_assert_eq!(v.thermometer_nodes(), n_sig.unwrap_or(0));
        prop_assert_eq!(v.grid_raw_nodes(), n_raw.unwrap_or(0));
        let t = v.tables_q().unwrap();
        prop_assert!(v.tables_f32().is_none());
        prop_assert_eq!(t.q, q_format);
        prop_assert_eq!((t.signal_lo, t.signal_hi), (b.signal_lo, b.signal_hi));
        prop_assert_eq!(t.temperature.start(), t_start);
        prop_assert_eq!(t.temperature.step(), t_step);
        prop_assert_eq!(t.temperature.len(), n_t);
        for i in 0..n_t {
            prop_assert_eq!(t.offset.node(i), offset[i], "offset node {}", i);
            prop_assert_eq!(t.gain.node(i), gain[i], "gain node {}", i);
        }
        prop_assert_eq!(t.quadratic.is_some(), quad);
        if let Some(col) = t.quadratic {
            prop_assert_eq!(col.len(), n_t);
            for (i, &x) in quadratic.iter().enumerate() {
                prop_assert_eq!(col.node(i), x, "quadratic node {}", i);
            }
        }
        prop_assert_eq!(t.thermometer.is_some(), n_sig.is_some());
        if let Some((axis, col)) = t.thermometer {
            prop_assert_eq!((axis.start(), axis.step(), axis.len()), (therm_axis.start, therm_axis.step, therm.len()));
            prop_assert_eq!(col.len(), therm.len());
            for (i, &x) in therm.iter().enumerate() {
                prop_assert_eq!(col.node(i), x, "thermometer node {}", i);
            }
        }
        prop_assert_eq!(t.grid.is_some(), n_raw.is_some());
        if let (Some((axis, col)), Some(r)) = (t.grid, n_raw) {
            prop_assert_eq!((axis.start(), axis.step(), axis.len()), (-30000, 60000 / (r as i32 - 1), r));
            prop_assert_eq!(col.len(), grid.len());
            for (i, &x) in grid.iter().enumerate() {
                prop_assert_eq!(col.node(i), x, "grid node {}", i);
            }
        }
    }
}
