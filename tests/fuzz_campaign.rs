//! Fuzzing campaign: structure-aware mutated table images (f32 and Q, every
//! section the station builds), mutated chamber CSV, scenario and element
//! spec texts, and calibration of lots with degenerate data. Nothing may
//! panic, hang or abort; every image the parser accepts must run through the
//! compensator with a defined status.
//!
//! The normal test command runs a short campaign; `SEMIDRIFT_SLOW=1` runs
//! the full one (10 million images, 1 million texts, 100 000 lots), whose
//! figures stand in docs/station.md "Hostile input". A watchdog aborts the
//! process (failing the test) when no case finishes for 60 s: a hang.

use compensate::image::NumberFormat;
use compensate::image::layout::{CRC_LEN, HEADER_LEN};
use host_tools::station::chamber::{self, ChamberData, ChamberRow};
use host_tools::station::choose::Restrict;
use host_tools::station::design::{DesignFile, ProductionPlan};
use host_tools::station::scenario::Scenario;
use host_tools::station::table::{AxisKind, InterpKind, NumFormat, SignalUnit};
use host_tools::station::{lot, model_shapes, pipeline, simulate, spec};
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use rayon::prelude::*;
use std::sync::atomic::{AtomicUsize, Ordering};
use std::sync::{Arc, OnceLock};
use std::time::{Duration, Instant};

fn slow() -> bool {
    std::env::var("SEMIDRIFT_SLOW").is_ok_and(|v| v == "1")
}

/// Starts a watchdog that aborts the process when `progress` has not moved
/// for 60 s (no single case of this campaign takes more than a second).
fn watchdog(name: &'static str) -> Arc<AtomicUsize> {
    let progress = Arc::new(AtomicUsize::new(0));
    let seen = Arc::clone(&progress);
    std::thread::spawn(move || {
        let mut last = usize::MAX;
        loop {
            std::thread::sleep(Duration::from_secs(60));
            let now = seen.load(Ordering::Relaxed);
            if now == usize::MAX {
                return;
            }
            if now == last {
                eprintln!("fuzz {name}: no case finished for 60 s after {now} cases: hang");
                std::process::abort();
            }
            last = now;
        }
    });
    progress
}

/// A thread pool of the test's own: the three campaigns run side by side
/// and must not wait for each other's work in rayon's global pool (which
/// the watchdog would take for a hang).
fn pool() -> rayon::ThreadPool {
    rayon::ThreadPoolBuilder::new()
        .build()
        .expect("thread pool")
}

/// The simulated lots the campaign starts from.
fn base() -> &'static (Scenario, Vec<ChamberRow>, Vec<Vec<u8>>) {
    static BASE: OnceLock<(Scenario, Vec<ChamberRow>, Vec<Vec<u8>>)> = OnceLock::new();
    BASE.get_or_init(|| {
        let mut images = Vec::new();
        let mut well = None;
        for scenario in [
            Scenario::well_logger().with_demo_truth(),
            Scenario::battery_current().with_demo_truth(),
        ] {
            let plan = simulate::Plan {
                temps_c: scenario.cal_temps_c.clone(),
                stimuli: scenario.stimuli.clone(),
            };
            let parts = simulate::draw_parts(&scenario, 3, 5);
            let rows = simulate::measure(&scenario, &parts, &plan, 5).unwrap();
            let curves = model_shapes::shapes_for(&scenario).unwrap();
            let data = ChamberData::from(rows.clone());
            let fitted =
                lot::calibrate_lot(&scenario, &curves, &data, &host_tools::station::lot::Silent);
            let part = fitted.iter().find(|p| p.is_ok()).expect("a part fits");
            for format in [NumFormat::F32, NumFormat::Q] {
                for interpolation in [
                    InterpKind::Linear,
                    InterpKind::MonotoneCubic,
                    InterpKind::Bilinear2d,
                ] {
                    for axis in [AxisKind::Temperature, AxisKind::Signal] {
                        for unit in [SignalUnit::Ohm, SignalUnit::AdcCode] {
                            let restrict = Restrict {
                                interpolation: Some(interpolation),
                                format: Some(format),
                                axis: Some(axis),
                            };
                            // The largest budget: coarse, small images, fast cases.
                            if let Ok(o) =
                                pipeline::build_table_with(part, &curves, 1e6, restrict, unit)
                            {
                                images.push(o.image);
                            }
                        }
                    }
                }
            }
            if well.is_none() {
                well = Some((scenario, rows));
            }
        }
        let (scenario, rows) = well.unwrap();
        (scenario, rows, images)
    })
}

/// Values that break arithmetic: zeros, extremes, NaN and infinity bit
/// patterns, subnormals, off-by-one sizes.
const INTERESTING_U32: [u32; 14] = [
    0,
    1,
    2,
    0xFF,
    0xFFFF,
    0x1_0000,
    0x7FFF_FFFF,
    0x8000_0000,
    0xFFFF_FFFF,
    0x7F80_0000, // +inf
    0x7FC0_0000, // NaN
    0x0000_0001, // smallest subnormal
    0x3F80_0000, // 1.0
    0x4B80_0000, // 2^24
];

fn mutate_image(base: &[u8], rng: &mut ChaCha8Rng) -> Vec<u8> {
    let mut v = base.to_vec();
    let edits = rng.random_range(1..=3);
    for _ in 0..edits {
        let len = v.len();
        if len == 0 {
            v.push(rng.random());
            continue;
        }
        match rng.random_range(0..6) {
            // One header byte.
            0 => {
                let at = rng.random_range(0..HEADER_LEN.min(len));
                v[at] = rng.random();
            }
            // One aligned header word set to an interesting value.
            1 => {
                let at = 4 * rng.random_range(0..HEADER_LEN / 4);
                let x = INTERESTING_U32[rng.random_range(0..INTERESTING_U32.len())];
                if at + 4 <= len {
                    v[at..at + 4].copy_from_slice(&x.to_le_bytes());
                }
            }
            // One u16 or u8 header field nudged by a small amount.
            2 => {
                let at = 2 * rng.random_range(0..HEADER_LEN / 2);
                if at + 2 <= len {
                    let x = u16::from_le_bytes([v[at], v[at + 1]]);
                    let d: i32 = rng.random_range(-2..=2);
                    v[at..at + 2].copy_from_slice(&((x as i32 + d) as u16).to_le_bytes());
                }
            }
            // One body word set to an interesting value.
            3 => {
                if len > HEADER_LEN + 4 {
                    let at = HEADER_LEN + 4 * rng.random_range(0..(len - HEADER_LEN) / 4);
                    let x = INTERESTING_U32[rng.random_range(0..INTERESTING_U32.len())];
                    if at + 4 <= len {
                        v[at..at + 4].copy_from_slice(&x.to_le_bytes());
                    }
                }
            }
            // One bit anywhere.
            4 => {
                let at = rng.random_range(0..len);
                v[at] ^= 1 << rng.random_range(0..8);
            }
            // Length: truncate or extend.
            _ => {
                if rng.random_bool(0.5) {
                    v.truncate(rng.random_range(0..len));
                } else {
                    let extra = rng.random_range(1..64);
                    v.extend((0..extra).map(|_| rng.random::<u8>()));
                }
            }
        }
    }
    // Re-signed most of the time, so that the parser's structure checks,
    // not the CRC, decide.
    if v.len() >= CRC_LEN && rng.random_bool(0.9) {
        let body = v.len() - CRC_LEN;
        let crc = compensate::crc::crc32(&v[..body]);
        v[body..].copy_from_slice(&crc.to_le_bytes());
    }
    v
}

/// Runs an accepted image: a few temperature updates and samples. Returns
/// whether every sample's status was defined (bits within the known flags)
/// and every OK f32 value finite.
fn exercise(bytes: &[u8], rng: &mut ChaCha8Rng) -> bool {
    let Ok(view) = compensate::TableView::parse(bytes) else {
        return true;
    };
    let known = 0x7F; // Status has 7 flags (compensate::Status::ALL).
    match view.format() {
        NumberFormat::Q => {
            let Ok(mut c) = compensate::FixedCompensator::new(&view) else {
                return true;
            };
            let mut fine = true;
            for _ in 0..4 {
                let s: i32 = if rng.random_bool(0.2) {
                    [i32::MIN, i32::MAX, 0, -1][rng.random_range(0..4)]
                } else {
                    rng.random()
                };
                let st = c.update_temperature(s);
                let r = c.compensate_sample(rng.random());
                fine &= (st.bits() | r.status.bits()) & !known == 0;
            }
            fine
        }
        _ => {
            let Ok(mut c) = compensate::Compensator::new(&view) else {
                return true;
            };
            let mut fine = true;
            for _ in 0..4 {
                let s = f32::from_bits(if rng.random_bool(0.3) {
                    INTERESTING_U32[rng.random_range(0..INTERESTING_U32.len())]
                } else {
                    rng.random()
                });
                let st = c.update_temperature(s);
                let raw = rng.random_range(-1e7f32..1e7);
                let r = c.compensate_sample(raw);
                fine &= (st.bits() | r.status.bits()) & !known == 0;
                fine &= !r.status.is_ok() || r.value.is_finite();
            }
            fine
        }
    }
}

#[test]
fn mutated_images_never_panic_and_accepted_ones_run() {
    let (_, _, images) = base();
    assert!(images.len() >= 8, "only {} seed images", images.len());
    let total: usize = if slow() { 10_000_000 } else { 20_000 };
    let progress = watchdog("images");
    let chunk = 10_000;
    let start = Instant::now();
    let (accepted, undefined) = pool().install(|| {
        (0..total.div_ceil(chunk))
            .into_par_iter()
            .map(|c| {
                let mut rng = ChaCha8Rng::seed_from_u64(0x1234_0000 + c as u64);
                let (mut acc, mut bad) = (0usize, 0usize);
                for _ in 0..chunk.min(total - c * chunk) {
                    let seed = &images[rng.random_range(0..images.len())];
                    let v = mutate_image(seed, &mut rng);
                    if compensate::TableView::parse(&v).is_ok() {
                        acc += 1;
                    }
                    if !exercise(&v, &mut rng) {
                        bad += 1;
                    }
                    progress.fetch_add(1, Ordering::Relaxed);
                }
                (acc, bad)
            })
            .reduce(|| (0, 0), |a, b| (a.0 + b.0, a.1 + b.1))
    });
    progress.store(usize::MAX, Ordering::Relaxed);
    eprintln!(
        "fuzz images: {total} mutated images from {} seeds, {accepted} accepted by the parser, {undefined} with an undefined status, {:.1} s",
        images.len(),
        start.elapsed().as_secs_f64()
    );
    assert_eq!(undefined, 0);
    // Some mutations are harmless (a changed reserved-free byte that the
    // parser accepts, or a value change inside a table): the campaign must
    // reach past the parser, or it tests only the CRC.
    assert!(accepted > total / 100, "only {accepted} accepted");
}

fn mutate_text(text: &str, rng: &mut ChaCha8Rng) -> Vec<u8> {
    const PIECES: [&str; 16] = [
        ",", "\n", "\"", "=", "[", "]", "#", "-", "1e308", "nan", "inf", "0", "-0", "1e-320",
        "\u{FEFF}", "\r\n",
    ];
    let mut v = text.as_bytes().to_vec();
    for _ in 0..rng.random_range(1..=4) {
        if v.is_empty() {
            break;
        }
        let at = rng.random_range(0..v.len());
        match rng.random_range(0..4) {
            0 => v[at] = rng.random(),
            1 => {
                let p = PIECES[rng.random_range(0..PIECES.len())];
                v.splice(at..at, p.bytes());
            }
            2 => {
                let end = (at + rng.random_range(1..16)).min(v.len());
                v.drain(at..end);
            }
            _ => {
                // Duplicate a line.
                let start = v[..at]
                    .iter()
                    .rposition(|&b| b == b'\n')
                    .map_or(0, |p| p + 1);
                let end = v[at..]
                    .iter()
                    .position(|&b| b == b'\n')
                    .map_or(v.len(), |p| at + p + 1);
                let line = v[start..end].to_vec();
                v.splice(end..end, line);
            }
        }
    }
    v
}

#[test]
fn mutated_loader_texts_never_panic() {
    let (scenario, rows, _) = base();
    let csv = String::from_utf8(chamber::to_csv_bytes(&rows[..27.min(rows.len())])).unwrap();
    let scenario_text = spec::to_toml(scenario);
    use host_tools::element::{ElementKind, example_text};
    let element_texts = [
        example_text(ElementKind::Bridge),
        example_text(ElementKind::Hall),
    ];
    let total: usize = if slow() { 1_000_000 } else { 20_000 };
    let progress = watchdog("texts");
    let start = Instant::now();
    let chunk = 5_000;
    let parsed: usize = pool().install(|| {
        (0..total.div_ceil(chunk))
            .into_par_iter()
            .map(|c| {
                let mut rng = ChaCha8Rng::seed_from_u64(0x5678_0000 + c as u64);
                let mut ok = 0;
                for k in 0..chunk.min(total - c * chunk) {
                    match k % 3 {
                        0 => {
                            let v = mutate_text(&csv, &mut rng);
                            if let Ok(d) = chamber::read_bytes("fuzz.csv", &v) {
                                ok += usize::from(d.errors.is_empty());
                            }
                        }
                        1 => {
                            let v = mutate_text(&scenario_text, &mut rng);
                            if let Ok(t) = std::str::from_utf8(&v) {
                                ok += usize::from(spec::parse_text("fuzz.toml", t).is_ok());
                            }
                        }
                        _ => {
                            let base = element_texts[rng.random_range(0..2)];
                            let v = mutate_text(base, &mut rng);
                            if let Ok(t) = std::str::from_utf8(&v) {
                                ok += usize::from(spec::parse_text("fuzz.toml", t).is_ok());
                            }
                        }
                    }
                    progress.fetch_add(1, Ordering::Relaxed);
                }
                ok
            })
            .sum()
    });
    progress.store(usize::MAX, Ordering::Relaxed);
    eprintln!(
        "fuzz texts: {total} mutated CSV, scenario and element spec texts, {parsed} accepted, {:.1} s",
        start.elapsed().as_secs_f64()
    );
    assert!(parsed > 0 && parsed < total, "{parsed} of {total} accepted");
}

/// A lot of three parts whose rows are degraded at random (the kinds of
/// degenerate data a chamber produces: stuck or absurd outputs, constant
/// or missing temperatures, repeated rows).
fn degenerate_lot(rows: &[ChamberRow], rng: &mut ChaCha8Rng) -> ChamberData {
    let mut out: Vec<ChamberRow> = rows.to_vec();
    for r in out.iter_mut() {
        if !rng.random_bool(0.15) {
            continue;
        }
        match rng.random_range(0..8) {
            0 => r.output = 0.0,
            1 => r.output *= 10f64.powi(rng.random_range(-25..25)),
            2 => r.temp_signal = 0.0,
            3 => r.temp_signal *= 10f64.powi(rng.random_range(-25..25)),
            4 => r.chamber_c = 25.0,
            5 => r.stimulus = 0.0,
            6 => r.output = -r.output,
            _ => r.temp_signal = -r.temp_signal,
        }
    }
    if rng.random_bool(0.2) {
        // Drop rows at random (too few temperatures or stimuli).
        out.retain(|_| rng.random_bool(0.5));
    }
    if rng.random_bool(0.1) {
        // Every row of a part identical.
        if let Some(first) = out.first().cloned() {
            for r in out.iter_mut().filter(|r| r.serial == first.serial) {
                r.output = first.output;
                r.temp_signal = first.temp_signal;
            }
        }
    }
    ChamberData::from(out)
}

/// A design learned from an 8-part qualification lot of the base scenario.
fn design(scenario: &Scenario, curves: &host_tools::station::curves::ShapeCurves) -> DesignFile {
    let plan = simulate::Plan {
        temps_c: scenario.qualification_plan_temps_c(),
        stimuli: scenario.qualification_stimuli(),
    };
    let parts = simulate::draw_parts(scenario, 8, 11);
    let data = ChamberData::from(simulate::measure(scenario, &parts, &plan, 11).unwrap());
    let production = ProductionPlan {
        temps_c: scenario.cal_temps_c.clone(),
        stimuli: scenario.stimuli.clone(),
    };
    host_tools::station::design::qualify(scenario, curves, &data, "qual.csv", &production)
        .expect("design learns")
}

#[test]
fn lots_with_degenerate_data_always_finish_with_one_file_per_part() {
    let (scenario, rows, _) = base();
    let curves = model_shapes::shapes_for(scenario).unwrap();
    // Every other lot is fitted on a design (the production path).
    let design = design(scenario, &curves);
    let total: usize = if slow() { 100_000 } else { 200 };
    let progress = watchdog("lots");
    let start = Instant::now();
    let slowest = pool().install(|| {
        (0..total)
            .into_par_iter()
            .map(|k| {
                let mut rng = ChaCha8Rng::seed_from_u64(0x9abc_0000 + k as u64);
                let data = degenerate_lot(rows, &mut rng);
                let serials = data.by_serial().len();
                let t0 = Instant::now();
                let on_design = (k % 2 == 1).then_some(&design);
                let parts = lot::calibrate_lot_with(
                    scenario,
                    &curves,
                    &data,
                    on_design,
                    &host_tools::station::lot::Silent,
                );
                let took = t0.elapsed();
                assert_eq!(parts.len(), serials, "lot {k}: one part file per serial");
                progress.fetch_add(1, Ordering::Relaxed);
                took
            })
            .max()
            .unwrap_or_default()
    });
    progress.store(usize::MAX, Ordering::Relaxed);
    eprintln!(
        "fuzz lots: {total} degenerate 3-part lots calibrated (half on a design), slowest {:.3} s, {:.1} s in all",
        slowest.as_secs_f64(),
        start.elapsed().as_secs_f64()
    );
    // The acceptance limit per command is 10 s (a guard against unbounded
    // loops, not a speed target: those are in the benches).
    assert!(slowest < Duration::from_secs(10), "slowest lot {slowest:?}");
}
