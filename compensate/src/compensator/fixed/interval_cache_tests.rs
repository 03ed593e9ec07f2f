//! Tests of the short update's interval cache ([`CellQ`]): any sequence of
//! updates reads exactly what the general update alone gives, and the
//! cache serves exactly the signals of its interval.
// Test geometry is computed in i64 from small constants, or in i32 where
// the image encoder rejects any overflowed node; the runtime's no-overflow
// rule guards firmware arithmetic, not these fixtures.
#![allow(clippy::arithmetic_side_effects)]

use super::*;
use crate::ImageBuilder;
use crate::image::{AxisSpec, MapSpec, SignalKind};

/// An image for the cache tests: a Celsius signal without thermometer
/// (offset Q8 codes, gain Q20, output Q12) over `nodes` nodes from `start`
/// every `step`, plausible range `signal_lo..=signal_hi`.
struct Geometry {
    name: &'static str,
    start: i32,
    step: i32,
    nodes: usize,
    signal_lo: i32,
    signal_hi: i32,
    /// Channels over the signal, with a bent thermometer (so that the
    /// temperature read-out interpolates the stored signal).
    over_signal: bool,
}

/// The test images: an awkward step above 2^16 LSB whose reciprocal
/// rounds, with a plausible range starting inside the axis; a step of a few
/// LSB with many nodes; channels over the signal; a step of 2^28 LSB (the
/// rounded-up reciprocal can place signals just below a node on it) with
/// the plausible range ending inside the axis.
const GEOMETRIES: [Geometry; 4] = [
    Geometry {
        name: "awkward step",
        start: -40 << 16,
        step: 809_042,
        nodes: 6,
        signal_lo: -30 << 16,
        signal_hi: 200 << 16,
        over_signal: false,
    },
    Geometry {
        name: "37 LSB step",
        start: 1000,
        step: 37,
        nodes: 40,
        signal_lo: -60 << 16,
        signal_hi: 200 << 16,
        over_signal: false,
    },
    Geometry {
        name: "over the signal",
        start: 0,
        step: 100 << 16,
        nodes: 3,
        signal_lo: -(20 << 16),
        signal_hi: 300 << 16,
        over_signal: true,
    },
    Geometry {
        name: "2^28 LSB step",
        start: -(1 << 30),
        step: 1 << 28,
        nodes: 7,
        signal_lo: -(1 << 30) + 5,
        signal_hi: 1 << 29,
        over_signal: false,
    },
];

/// Node values: ordinary differences of both signs, and (node 0 to 1 of
/// the gain) one beyond the i32 range, which the cache never holds.
fn columns(nodes: usize) -> (Vec<i32>, Vec<i32>) {
    let offset = (0..nodes)
        .map(|k| (k as i32 * 7919 % 4001 - 2000) << 8)
        .collect();
    let gain = (0..nodes)
        .map(|k| match k {
            0 => i32::MAX,
            1 => i32::MIN,
            _ => (3 << 20) + (k as i32 % 5 - 2) * 123_457,
        })
        .collect();
    (offset, gain)
}

/// A compensator on `g`'s image, encoded into `buf`.
fn compensator<'a>(
    g: &Geometry,
    offset: &[i32],
    gain: &[i32],
    therm: &[i32],
    buf: &'a mut [u8],
) -> Result<FixedCompensator<'a>, &'static str> {
    let axis = AxisSpec {
        start: g.start,
        step: g.step,
    };
    let b = ImageBuilder {
        signal_kind: if g.over_signal {
            SignalKind::Ohm
        } else {
            SignalKind::Celsius
        },
        signal_lo: g.signal_lo,
        signal_hi: g.signal_hi,
        thermometer: g.over_signal.then_some(MapSpec {
            axis,
            values: therm,
        }),
        channel_axis: if g.over_signal {
            ChannelAxis::Signal
        } else {
            ChannelAxis::Temperature
        },
        ..super::tests::celsius_builder(axis, offset, gain)
    };
    super::tests::compensator(&b, buf)
}

/// Everything a caller can read after a temperature update: the status,
/// the coefficients, the temperature and compensated samples (in range,
/// beyond it, at a rail).
fn observed(c: &FixedCompensator<'_>, status: Status) -> impl PartialEq + core::fmt::Debug {
    (
        status,
        c.coefficients(),
        c.temperature_q(),
        [0, 12_345, -777_777, 8_000_001, i32::MIN].map(|raw| c.compensate_sample(raw)),
    )
}

/// The signal of one move of a random update sequence: a drift of up to
/// 1/16 step from the previous signal, a jump over the axis and a step
/// beyond, a node or one LSB either side, a range end (axis, short update,
/// plausible range) or one LSB either side, an i32 extreme, or any i32.
fn signal_of(g: &Geometry, short: &ShortUpdateQ<'_>, kind: u8, p: i32, prev: i32) -> i32 {
    let (start, step, n) = (i64::from(g.start), i64::from(g.step), g.nodes as i64);
    let end = start + (n - 1) * step;
    let near = i64::from(p.rem_euclid(3)) - 1;
    let pick = |k: i64| i64::from(p.unsigned_abs() >> 2) % k;
    let s = match kind {
        0 => i64::from(prev) + i64::from(p) % (step / 16 + 1),
        1 => start - step + pick((n + 1) * step),
        2 => start + pick(n) * step + near,
        3 => {
            let ends = [
                start,
                end,
                i64::from(short.lo),
                i64::from(short.hi),
                i64::from(g.signal_lo),
                i64::from(g.signal_hi),
            ];
            ends[pick(6) as usize] + near
        }
        4 => [i32::MIN, i32::MIN + 1, i32::MAX - 1, i32::MAX][pick(4) as usize].into(),
        _ => i64::from(p),
    };
    s.clamp(i64::from(i32::MIN), i64::from(i32::MAX)) as i32
}

proptest::proptest! {
    /// Random sequences of updates (slow drifts, jumps, nodes, range ends,
    /// extremes, out-of-range and sensor-fault signals) on one compensator
    /// read exactly what a compensator that only runs the general update
    /// reads, bit for bit, after every update.
    #[test]
    fn cached_updates_match_the_general_update(
        image in 0usize..GEOMETRIES.len(),
        moves in proptest::collection::vec((0u8..6, proptest::num::i32::ANY), 1..120),
    ) {
        let g = &GEOMETRIES[image];
        let (offset, gain) = columns(g.nodes);
        let therm: Vec<i32> = (0..g.nodes as i32).map(|k| (k * k * 5 - 40) << 16).collect();
        let mut buf = [0u8; 1024];
        let fresh = compensator(g, &offset, &gain, &therm, &mut buf)
            .map_err(proptest::test_runner::TestCaseError::fail)?;
        let (mut cached, mut general) = (fresh, fresh);
        let mut prev = g.start;
        for (step, &(kind, p)) in moves.iter().enumerate() {
            let s = signal_of(g, &fresh.short, kind, p, prev);
            prev = s;
            let got = cached.update_temperature(s);
            let want = general.update_general(s);
            proptest::prop_assert_eq!(
                observed(&cached, got),
                observed(&general, want),
                "{}: update {} (move {}), signal {}: cached (left) vs general (right)",
                g.name, step, kind, s
            );
        }
    }
}

/// The cache serves a signal exactly when the short update applies and the
/// signal locates to the cached interval: at the ends of every interval
/// (node, one LSB either side, one LSB below the next node) and of the
/// short update's range. A poisoned cell shows whether it served.
#[test]
fn cache_serves_exactly_its_interval() -> Result<(), &'static str> {
    const POISON: i32 = 0x5EED_0000;
    let mut served_probes = 0;
    for g in &GEOMETRIES {
        let (offset, gain) = columns(g.nodes);
        let therm: Vec<i32> = (0..g.nodes as i32)
            .map(|k| (k * k * 5 - 40) << 16)
            .collect();
        let mut buf = [0u8; 1024];
        let c = compensator(g, &offset, &gain, &therm, &mut buf)?;
        let axis = c.tables.ok_or("tables")?.temperature;
        let short = c.short;
        for i in 0..g.nodes - 1 {
            let node = g.start + i as i32 * g.step;
            let mid = node + g.step / 2;
            let mut filled = c;
            // Fills the cell unless the short update does not apply there
            // (outside the plausible range, or a node difference beyond
            // the i32 range).
            filled.update_temperature(mid);
            let narrow = |v: &[i32]| v[i + 1].checked_sub(v[i]).is_some();
            let cacheable =
                (short.lo..=short.hi).contains(&mid) && narrow(&offset) && narrow(&gain);
            assert_eq!(
                filled.cell.index == i,
                cacheable,
                "{}: interval {i} (signal {mid}) cached",
                g.name
            );
            if !cacheable {
                continue;
            }
            filled.cell.offset0 = POISON;
            let next = node + g.step;
            let probes = [
                node - 1,
                node,
                node + 1,
                next - 1,
                next,
                short.lo - 1,
                short.lo,
                short.hi,
                short.hi.saturating_add(1),
            ];
            for s in probes {
                let (mut probe, mut reference) = (filled, c);
                probe.update_temperature(s);
                reference.update_general(s);
                // Only the poisoned cell gives another offset.
                let got = probe.coefficients().0 != reference.coefficients().0;
                let p = axis.locate(s);
                let want = (short.lo..=short.hi).contains(&s) && p.index == i && !p.clamped;
                assert_eq!(
                    got, want,
                    "{}: interval {i}, signal {s} (located {p:?}): served {got}, expected {want}",
                    g.name
                );
                served_probes += usize::from(got);
            }
        }
    }
    // Every image's cached intervals serve their node and the LSB above it.
    assert!(served_probes >= 20, "{served_probes} probes served");
    Ok(())
}
