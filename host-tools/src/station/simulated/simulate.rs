//! A virtual lot: parts drawn from a scenario's process spread, "measured" in
//! a simulated chamber with ADC quantization and noise, written as chamber CSV
//! rows. Seeded and byte-reproducible regardless of thread count: every part
//! draws from its own ChaCha stream, selected by the part index.

use crate::physics::ModelError;
use crate::station::chamber::ChamberRow;
use crate::station::scenario::{Adc, Scenario};
use crate::station::truth::{PartTruth, Truth};
use rand::SeedableRng;
use rand_chacha::ChaCha12Rng;
use rand_distr::{Distribution, StandardNormal};
use rayon::prelude::*;

/// A chamber plan: which temperatures and stimuli each part sees.
#[derive(Debug, Clone, PartialEq)]
pub struct Plan {
    /// Chamber set points, C.
    pub temps_c: Vec<f64>,
    /// Stimuli at each set point.
    pub stimuli: Vec<f64>,
}

impl Plan {
    /// A 64-bit FNV-1a hash of the plan: selects the noise stream, so that
    /// two plans on the same lot (calibration and check) get independent noise.
    fn tag(&self) -> u64 {
        let mut h: u64 = 0xcbf2_9ce4_8422_2325;
        for x in self
            .temps_c
            .iter()
            .chain([f64::NAN].iter())
            .chain(&self.stimuli)
        {
            for b in x.to_bits().to_le_bytes() {
                h ^= u64::from(b);
                h = h.wrapping_mul(0x0000_0100_0000_01b3);
            }
        }
        h
    }
}

/// Serial number of part `index` of a scenario (`WELL-0007`).
pub fn serial(scenario: &Scenario, index: usize) -> String {
    format!("{}-{:04}", scenario.name.to_ascii_uppercase(), index + 1)
}

/// The parts of a lot of `count` parts (same for every plan and thread count).
pub fn draw_parts(scenario: &Scenario, count: usize, seed: u64) -> Vec<PartTruth> {
    draw_part_range(scenario, 0..count, seed)
}

/// Parts `range` of the lot [`draw_parts`] draws (the same parts for the
/// same indices, so a lot can be drawn in pieces).
pub fn draw_part_range(
    scenario: &Scenario,
    range: std::ops::Range<usize>,
    seed: u64,
) -> Vec<PartTruth> {
    range
        .map(|k| {
            let mut rng = ChaCha12Rng::seed_from_u64(seed);
            rng.set_stream(2 * k as u64);
            PartTruth::draw(scenario, serial(scenario, k), &mut rng)
        })
        .collect()
}

/// Quantizes `value + noise` with an ADC (round to nearest code, clamp to the range).
pub fn adc_read(adc: &Adc, value: f64, rng: &mut ChaCha12Rng) -> f64 {
    let n: f64 = StandardNormal.sample(rng);
    let lsb = adc.lsb();
    let half = 2f64.powi(adc.bits as i32 - 1);
    let code = ((value + adc.noise_rms * n) / lsb)
        .round()
        .clamp(-half, half - 1.0);
    code * lsb
}

/// Measures every part of the lot at every point of the plan.
pub fn measure(
    scenario: &Scenario,
    parts: &[PartTruth],
    plan: &Plan,
    seed: u64,
) -> Result<Vec<ChamberRow>, ModelError> {
    let truth = Truth::new(scenario)?;
    let mut rows = measure_with(scenario, &truth, parts, 0, plan, seed)?;
    for (k, r) in rows.iter_mut().enumerate() {
        r.line = k + 2;
    }
    Ok(rows)
}

/// Writes the chamber CSV of a `count`-part lot ([`draw_parts`] and
/// [`measure`]) to `out`, the same bytes as [`crate::station::chamber::to_csv_bytes`] of
/// their rows, drawing and measuring 1 000 parts at a time so that memory
/// stays bounded whatever the lot size. Returns the number of rows.
pub fn write_lot(
    scenario: &Scenario,
    count: usize,
    plan: &Plan,
    seed: u64,
    out: &mut dyn std::io::Write,
) -> Result<usize, SimulateError> {
    write_lot_in_chunks(scenario, count, plan, seed, out, 1000)
}

fn write_lot_in_chunks(
    scenario: &Scenario,
    count: usize,
    plan: &Plan,
    seed: u64,
    out: &mut dyn std::io::Write,
    chunk: usize,
) -> Result<usize, SimulateError> {
    let truth = Truth::new(scenario)?;
    let mut written = 0;
    let mut first = 0;
    while first < count {
        let end = (first + chunk.max(1)).min(count);
        let parts = draw_part_range(scenario, first..end, seed);
        let rows = measure_with(scenario, &truth, &parts, first, plan, seed)?;
        let bytes = crate::station::chamber::to_csv_bytes(&rows);
        // Every chunk's bytes start with the header line; the file has one.
        let body = if first == 0 {
            &bytes[..]
        } else {
            let header = bytes.iter().position(|&b| b == b'\n').map_or(0, |p| p + 1);
            &bytes[header..]
        };
        out.write_all(body)?;
        written += rows.len();
        first = end;
    }
    Ok(written)
}

/// Why a lot could not be written.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum SimulateError {
    /// The full model failed for the scenario.
    #[error("full model: {0}")]
    Model(#[from] ModelError),
    /// Writing failed.
    #[error("{0}")]
    Io(#[from] std::io::Error),
}

/// Rows of `parts`, the first of which is part `first_index` of the lot
/// (its noise stream), with line numbers 0.
fn measure_with(
    scenario: &Scenario,
    truth: &Truth,
    parts: &[PartTruth],
    first_index: usize,
    plan: &Plan,
    seed: u64,
) -> Result<Vec<ChamberRow>, ModelError> {
    let tag = plan.tag();
    let per_part: Result<Vec<Vec<ChamberRow>>, ModelError> = parts
        .par_iter()
        .enumerate()
        .map(|(j, part)| {
            let k = first_index + j;
            let mut rng = ChaCha12Rng::seed_from_u64(seed ^ tag);
            rng.set_stream(2 * k as u64 + 1);
            let mut rows = Vec::with_capacity(plan.temps_c.len() * plan.stimuli.len());
            for &t_c in &plan.temps_c {
                let z: f64 = StandardNormal.sample(&mut rng);
                let die_c = t_c + scenario.spread.chamber_k * z;
                for &stimulus in &plan.stimuli {
                    let r = truth.reading(part, die_c, stimulus)?;
                    rows.push(ChamberRow {
                        serial: part.serial.clone(),
                        chamber_c: t_c,
                        stimulus,
                        output: adc_read(&scenario.output_adc, r.output_v, &mut rng),
                        temp_signal: adc_read(&scenario.signal_adc, r.signal_ohm, &mut rng),
                        line: 0,
                    });
                }
            }
            Ok(rows)
        })
        .collect();
    Ok(per_part?.into_iter().flatten().collect())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_lot_written_in_chunks_has_the_bytes_of_the_whole_lot() {
        let scenario = Scenario::well_logger();
        let plan = Plan {
            temps_c: vec![-20.0, 25.0],
            stimuli: vec![0.0, 10.0],
        };
        let parts = draw_parts(&scenario, 5, 7);
        let whole =
            crate::station::chamber::to_csv_bytes(&measure(&scenario, &parts, &plan, 7).unwrap());
        for chunk in [1, 2, 5, 1000] {
            let mut bytes = Vec::new();
            let rows = write_lot_in_chunks(&scenario, 5, &plan, 7, &mut bytes, chunk).unwrap();
            assert_eq!(rows, 20, "chunk {chunk}");
            assert!(bytes == whole, "chunk {chunk}: bytes differ");
        }
    }

    #[test]
    fn adc_rounds_to_codes_and_clamps() {
        let adc = Adc {
            bits: 4,
            range: 8.0,
            noise_rms: 0.0,
        };
        let mut rng = ChaCha12Rng::seed_from_u64(1);
        // lsb = 16 / 16 = 1; codes -8..=7. (input, expected)
        for (x, want) in [
            (0.4, 0.0),
            (0.6, 1.0),
            (-3.5, -4.0),
            (100.0, 7.0),
            (-100.0, -8.0),
        ] {
            assert_eq!(adc_read(&adc, x, &mut rng), want, "input {x}");
        }
    }

    #[test]
    fn parts_do_not_depend_on_lot_size_and_plans_get_distinct_noise() {
        let sc = Scenario::well_logger();
        let a = draw_parts(&sc, 3, 42);
        let b = draw_parts(&sc, 5, 42);
        assert_eq!(a[..], b[..3]);
        assert_ne!(draw_parts(&sc, 1, 43)[0], a[0]);
        let p1 = Plan {
            temps_c: vec![25.0],
            stimuli: vec![0.0],
        };
        let p2 = Plan {
            temps_c: vec![25.0],
            stimuli: vec![0.0, 1.0],
        };
        assert_ne!(p1.tag(), p2.tag());
        assert_eq!(serial(&sc, 6), "WELL-0007");
    }
}
