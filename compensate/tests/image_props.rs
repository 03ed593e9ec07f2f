//! Property tests of the image encoder and parser: every valid description
//! round-trips, every value reads back bit for bit.

use compensate::image::{
    AxisSpec, ChannelAxis, GridSpec, MapSpec, QFormat, RawLimits, SignalKind, Unit,
};
use compensate::interp::{Interpolation, Nodes};
use compensate::{ImageBuilder, TableView};
use proptest::prelude::*;

const LIMITS: RawLimits = RawLimits {
    rail_lo: -32768,
    raw_lo: -30000,
    raw_hi: 30000,
    rail_hi: 32767,
};

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
        if let (Some((_, col)), Some(th)) = (t.thermometer, &therm) {
            prop_assert_eq!(col.len(), th.len());
            prop_assert_eq!(col.node(th.len() - 1).to_bits(), th[th.len() - 1].to_bits());
        }
        if let Some((axis, col)) = t.grid {
            prop_assert_eq!(col.len(), grid.len());
            prop_assert_eq!(axis.len, n_raw.unwrap());
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
}
