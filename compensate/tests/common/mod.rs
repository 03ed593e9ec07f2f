//! Small example images shared by the integration tests (invented values).
#![allow(dead_code)]

use compensate::image::{
    AxisSpec, ChannelAxis, GridSpec, MapSpec, QFormat, RawLimits, SignalKind, Unit,
};
use compensate::interp::Interpolation;
use compensate::{ImageBuilder, TableView};

/// Temperature nodes -40..=120 C every 20 C.
pub const T_NODES: usize = 9;
pub const T_START_C: f32 = -40.0;
pub const T_STEP_C: f32 = 20.0;

pub const OFFSET: [f32; T_NODES] = [120.0, 90.0, 64.0, 40.0, 20.0, 3.0, -12.0, -24.0, -33.0];
/// bar per code: span falls with temperature (p-type piezoresistor).
pub const GAIN: [f32; T_NODES] = [
    1.00e-4, 1.03e-4, 1.06e-4, 1.09e-4, 1.125e-4, 1.16e-4, 1.20e-4, 1.24e-4, 1.28e-4,
];
pub const QUAD: [f32; T_NODES] = [1.0e-10; T_NODES];
/// Bridge resistance 4000..5600 ohm maps to -40..120 C.
pub const THERM_T: [f32; 5] = [-40.0, 0.0, 40.0, 80.0, 120.0];

pub const LIMITS: RawLimits = RawLimits {
    rail_lo: -8_388_608,
    raw_lo: -100_000,
    raw_hi: 100_000,
    rail_hi: 8_388_607,
};

/// A small f32 image with a thermometer, three channels and no grid.
pub fn f32_builder() -> ImageBuilder<'static, f32> {
    ImageBuilder {
        interpolation: Interpolation::Linear,
        q_format: QFormat::F32,
        signal_kind: SignalKind::Ohm,
        unit: Unit::Bar,
        ratiometric: true,
        full_scale: 10.0,
        raw_limits: LIMITS,
        signal_lo: 3000.0,
        signal_hi: 7000.0,
        serial: *b"SN-000042-WELL01",
        thermometer: Some(MapSpec {
            axis: AxisSpec {
                start: 4000.0,
                step: 400.0,
            },
            values: &THERM_T,
        }),
        channel_axis: ChannelAxis::Temperature,
        temperature_axis: AxisSpec {
            start: T_START_C,
            step: T_STEP_C,
        },
        offset: &OFFSET,
        gain: &GAIN,
        quadratic: Some(&QUAD),
        grid: None,
    }
}

/// Grid values for a 9 x 3 raw-axis correction (bar).
pub const GRID: [f32; T_NODES * 3] = [
    0.001, 0.0, -0.001, 0.002, 0.0, -0.002, 0.001, 0.0, -0.001, 0.0, 0.0, 0.0, 0.0005, 0.0,
    -0.0005, 0.001, 0.0, -0.001, 0.0015, 0.0, -0.0015, 0.002, 0.0, -0.002, 0.0025, 0.0, -0.0025,
];

/// The f32 image with a 2-D correction over 3 raw nodes.
pub fn f32_grid_builder() -> ImageBuilder<'static, f32> {
    ImageBuilder {
        grid: Some(GridSpec {
            raw_axis: AxisSpec {
                start: -100_000.0,
                step: 100_000.0,
            },
            raw_len: 3,
            values: &GRID,
        }),
        ..f32_builder()
    }
}

/// Encodes into a fresh Vec.
pub fn encode<V: compensate::image::Number>(b: &ImageBuilder<'_, V>) -> Vec<u8> {
    let mut buf = vec![0u8; b.encoded_len().unwrap()];
    let n = b.encode(&mut buf).unwrap();
    assert_eq!(n, buf.len());
    buf
}

/// Rewrites the CRC after a deliberate corruption, so that the parser's
/// later checks are reached.
pub fn fix_crc(img: &mut [u8]) {
    let body = img.len() - 4;
    let crc = compensate::crc::crc32(&img[..body]);
    img[body..].copy_from_slice(&crc.to_le_bytes());
}

/// Parses, panicking with the error on failure.
pub fn parse(img: &[u8]) -> TableView<'_> {
    TableView::parse(img).unwrap_or_else(|e| panic!("valid image rejected: {e}"))
}

/// Q formats of the Q twin of the example image: temperature and ohms in
/// Q16.16, bar in Q11.20, offset codes in Q23.8, gain in Q.30
/// (1e-4 bar/code is 107374 LSB: 9.3 ppm resolution), quadratic in Q.50.
pub const QF: QFormat = QFormat {
    temperature: 16,
    signal: 16,
    output: 20,
    offset: 8,
    gain: 30,
    quadratic: 50,
};

/// `round(x * 2^bits)` as i32.
pub fn to_q(x: f32, bits: u8) -> i32 {
    (f64::from(x) * f64::from(bits).exp2()).round() as i32
}

/// The Q-format data of [`f32_builder`], leaked so builders can borrow it.
pub struct QData {
    pub therm: [i32; 5],
    pub offset: [i32; T_NODES],
    pub gain: [i32; T_NODES],
    pub quad: [i32; T_NODES],
    pub grid: [i32; T_NODES * 3],
}

pub fn q_data() -> &'static QData {
    Box::leak(Box::new(QData {
        therm: THERM_T.map(|t| to_q(t, QF.temperature)),
        offset: OFFSET.map(|o| to_q(o, QF.offset)),
        gain: GAIN.map(|g| to_q(g, QF.gain)),
        quad: QUAD.map(|q| to_q(q, QF.quadratic)),
        grid: GRID.map(|g| to_q(g, QF.output)),
    }))
}

/// The Q twin of [`f32_grid_builder`] (`grid` selects the 2-D section).
pub fn q_builder(grid: bool) -> ImageBuilder<'static, i32> {
    let d = q_data();
    ImageBuilder {
        interpolation: Interpolation::Linear,
        q_format: QF,
        signal_kind: SignalKind::Ohm,
        unit: Unit::Bar,
        ratiometric: true,
        full_scale: 10.0,
        raw_limits: LIMITS,
        signal_lo: to_q(3000.0, QF.signal),
        signal_hi: to_q(7000.0, QF.signal),
        serial: *b"SN-000042-WELL01",
        thermometer: Some(MapSpec {
            axis: AxisSpec {
                start: to_q(4000.0, QF.signal),
                step: to_q(400.0, QF.signal),
            },
            values: &d.therm,
        }),
        channel_axis: ChannelAxis::Temperature,
        temperature_axis: AxisSpec {
            start: to_q(T_START_C, QF.temperature),
            step: to_q(T_STEP_C, QF.temperature),
        },
        offset: &d.offset,
        gain: &d.gain,
        quadratic: Some(&d.quad),
        grid: grid.then_some(GridSpec {
            raw_axis: AxisSpec {
                start: -100_000,
                step: 100_000,
            },
            raw_len: 3,
            values: &d.grid,
        }),
    }
}
