//! Instruction, stack and memory benchmark of the compensation path against
//! the usual polynomial correction (common practice), run in QEMU with `-icount`.
//!
//! `cargo run --release --bin bench --target <triple>` (from
//! examples/firmware) prints one line per figure:
//! `metric <name> <value> <unit> target=<triple>`. Instruction figures are
//! per call, net of an empty call of the same signature through the same
//! loop, averaged over the simulated stream's inputs (see `count`); they are
//! instructions, not cycles. Two runs print identical lines.
//!
//! Cortex-M4F: the f32 path (the one an FPU part runs) and the polynomial
//! baseline in f32; the integer path too, as `*_q_insn`. Cortex-M0: the
//! integer path and the integer polynomial baseline (f32 is soft-float there
//! and not what such a part runs).
#![no_std]
#![no_main]

use compensate::{FixedCompensator, ReadingQ, Status, TableView};
use cortex_m_rt::entry;
use cortex_m_semihosting::hprintln;
use semidrift_firmware::count::{Counter, time_calls};
use semidrift_firmware::stack::{measure_call_bytes, program_high_water_bytes};
use semidrift_firmware::stream::{DRIFT_FROM, RAMP, Sample, drift, fill, jumps};
use semidrift_firmware::{rt, stream};

semidrift_firmware::printing_fault_handlers!();

static IMAGE_Q: &[u8] = include_bytes!("../../data/well_level_q.bin");
#[cfg(fpu)]
static IMAGE_F32: &[u8] = include_bytes!("../../data/well_level_f32.bin");
/// A finer f32 image of the same part (59 nodes instead of 22, as accurate
/// as the polynomial at the crossover degree), to show that the update's
/// cost does not depend on the node count.
#[cfg(fpu)]
static IMAGE_F32_FINE: &[u8] = include_bytes!("../../data/well_level_f32_fine.bin");
static STREAM: &str = include_str!("../../data/well_level_stream.csv");

/// Inputs: the temperature ramp of the simulated stream (its last four
/// samples are faults, which a benchmark of normal operation leaves out).
const INPUTS: usize = 116;

/// Calls per timed loop of the table and polynomial functions (1000 passes
/// over the stream): a SysTick reading is exact to +-1 tick, so a figure is
/// exact to +-2 ticks / CALLS = 0.001 instruction; cost x calls stays below
/// 1.2e8 instructions, far below one SysTick wrap (6.7e8 instructions on
/// mps2-an386, 1.0e9 on microbit).
const CALLS: u32 = 116_000;

/// Calls per timed loop of the runtime model (up to about 9000 instructions
/// per call): 100 passes over the inputs keep cost x calls near 1e8.
#[cfg(fpu)]
const MODEL_CALLS: u32 = 11_600;

#[cfg(fpu)]
const TARGET: &str = "thumbv7em-none-eabihf";
#[cfg(not(fpu))]
const TARGET: &str = "thumbv6m-none-eabi";

/// Prints one metric line; `centi` is the value in hundredths.
fn metric_centi(name: &str, centi: u64, unit: &str) {
    hprintln!(
        "metric {} {}.{:02} {} target={}",
        name,
        centi / 100,
        centi % 100,
        unit,
        TARGET
    );
}

/// Prints one integer metric line.
fn metric(name: &str, value: usize, unit: &str) {
    hprintln!("metric {} {} {} target={}", name, value, unit, TARGET);
}

/// Instructions per call of `f` beyond `empty`, in hundredths.
fn net_insn<S, A: Copy, R>(
    counter: &Counter,
    calls: u32,
    state: &mut S,
    inputs: &[A],
    f: fn(&mut S, A) -> R,
    empty: fn(&mut S, A) -> R,
) -> u64 {
    let work = time_calls(counter, calls, state, inputs, f);
    let base = time_calls(counter, calls, state, inputs, empty);
    counter.centi_insn_per_call(u64::from(work.saturating_sub(base)), u64::from(calls))
}

/// A timed function and the empty function of the same signature it is
/// measured against.
pub struct Timed<S, A, R> {
    f: fn(&mut S, A) -> R,
    empty: fn(&mut S, A) -> R,
}

/// Prints metric `name`: instructions per call of `t.f` beyond `t.empty`,
/// over `CALLS` calls.
fn report_insn<S, A: Copy, R>(
    counter: &Counter,
    name: &str,
    state: &mut S,
    inputs: &[A],
    t: Timed<S, A, R>,
) {
    let insn = net_insn(counter, CALLS, state, inputs, t.f, t.empty);
    metric_centi(name, insn, "insn");
}

// ---- the integer path (both targets) --------------------------------------

#[inline(never)]
fn q_temp_update(c: &mut FixedCompensator<'static>, signal: i32) -> Status {
    c.update_temperature(signal)
}

#[inline(never)]
fn q_temp_update_empty(_c: &mut FixedCompensator<'static>, _signal: i32) -> Status {
    Status::OK
}

#[inline(never)]
fn q_sample(c: &mut FixedCompensator<'static>, raw: i32) -> ReadingQ {
    c.compensate_sample(raw)
}

#[inline(never)]
fn q_sample_empty(_c: &mut FixedCompensator<'static>, raw: i32) -> ReadingQ {
    ReadingQ {
        value: raw,
        status: Status::OK,
    }
}

use semidrift_firmware::poly::{PolyQBench, fitted, fitted_q as poly_q};

#[inline(never)]
fn poly_q_temp_update(p: &mut PolyQBench, signal: i32) -> i32 {
    p.update_temperature(signal)
}

#[inline(never)]
fn poly_q_temp_update_empty(_p: &mut PolyQBench, signal: i32) -> i32 {
    signal
}

#[inline(never)]
fn poly_q_sample(p: &mut PolyQBench, raw: i32) -> i32 {
    p.sample(raw)
}

#[inline(never)]
fn poly_q_sample_empty(_p: &mut PolyQBench, raw: i32) -> i32 {
    raw
}

const Q_TEMP_UPDATE: Timed<FixedCompensator<'static>, i32, Status> = Timed {
    f: q_temp_update,
    empty: q_temp_update_empty,
};
const Q_SAMPLE: Timed<FixedCompensator<'static>, i32, ReadingQ> = Timed {
    f: q_sample,
    empty: q_sample_empty,
};
const POLY_Q_TEMP_UPDATE: Timed<PolyQBench, i32, i32> = Timed {
    f: poly_q_temp_update,
    empty: poly_q_temp_update_empty,
};
const POLY_Q_SAMPLE: Timed<PolyQBench, i32, i32> = Timed {
    f: poly_q_sample,
    empty: poly_q_sample_empty,
};

/// The integer polynomial with the checks of our integer path.
type PolyQCheckedBench = semidrift_firmware::poly_checked::PolyQChecked<
    { semidrift_firmware::poly::fitted::RAW_TERMS },
    { semidrift_firmware::poly::fitted::TERMS },
    { semidrift_firmware::poly::fitted::U_SHIFT },
    { semidrift_firmware::poly::fitted::X_SHIFT },
>;

/// [`poly_q`] with the limits of the Q image `view`, so both sides check
/// the same inputs.
fn poly_q_checked(view: &TableView<'_>) -> Option<PolyQCheckedBench> {
    semidrift_firmware::poly_checked::checked_q(view, poly_q())
}

#[inline(never)]
fn poly_q_checked_temp_update(p: &mut PolyQCheckedBench, signal: i32) -> Status {
    p.update_temperature(signal)
}

#[inline(never)]
fn poly_q_checked_temp_update_empty(_p: &mut PolyQCheckedBench, _signal: i32) -> Status {
    Status::OK
}

#[inline(never)]
fn poly_q_checked_sample(p: &mut PolyQCheckedBench, raw: i32) -> ReadingQ {
    p.sample(raw)
}

#[inline(never)]
fn poly_q_checked_sample_empty(_p: &mut PolyQCheckedBench, raw: i32) -> ReadingQ {
    ReadingQ {
        value: raw,
        status: Status::OK,
    }
}

const POLY_Q_CHECKED_TEMP_UPDATE: Timed<PolyQCheckedBench, i32, Status> = Timed {
    f: poly_q_checked_temp_update,
    empty: poly_q_checked_temp_update_empty,
};
const POLY_Q_CHECKED_SAMPLE: Timed<PolyQCheckedBench, i32, ReadingQ> = Timed {
    f: poly_q_checked_sample,
    empty: poly_q_checked_sample_empty,
};

// ---- the f32 path (FPU targets) -------------------------------------------

#[cfg(fpu)]
mod fpu {
    use super::Timed;
    use compensate::{Compensator, Reading, Status};

    #[inline(never)]
    pub fn temp_update(c: &mut Compensator<'static>, signal: f32) -> Status {
        c.update_temperature(signal)
    }

    #[inline(never)]
    pub fn temp_update_empty(_c: &mut Compensator<'static>, _signal: f32) -> Status {
        Status::OK
    }

    #[inline(never)]
    pub fn sample(c: &mut Compensator<'static>, raw: f32) -> Reading {
        c.compensate_sample(raw)
    }

    #[inline(never)]
    pub fn sample_empty(_c: &mut Compensator<'static>, raw: f32) -> Reading {
        Reading {
            value: raw,
            status: Status::OK,
        }
    }

    use semidrift_firmware::poly::fitted::{RAW_TERMS, TERMS};
    pub use semidrift_firmware::poly::{PolyF32Bench as PolyBench, fitted_f32 as poly};
    use semidrift_firmware::poly_checked::PolyF32Checked;

    /// The benchmark's polynomial with the checks of our f32 path.
    pub type PolyCheckedBench = PolyF32Checked<RAW_TERMS, TERMS>;

    /// [`poly`] with the limits of the f32 image `view`, so both sides
    /// check the same inputs.
    pub fn poly_checked(view: &compensate::TableView<'_>) -> Option<PolyCheckedBench> {
        semidrift_firmware::poly_checked::checked_f32(view, poly())
    }

    #[inline(never)]
    pub fn poly_checked_temp_update(p: &mut PolyCheckedBench, signal: f32) -> Status {
        p.update_temperature(signal)
    }

    #[inline(never)]
    pub fn poly_checked_sample(p: &mut PolyCheckedBench, raw: f32) -> Reading {
        p.sample(raw)
    }

    #[inline(never)]
    pub fn poly_checked_temp_update_empty(_p: &mut PolyCheckedBench, _signal: f32) -> Status {
        Status::OK
    }

    #[inline(never)]
    pub fn poly_checked_sample_empty(_p: &mut PolyCheckedBench, raw: f32) -> Reading {
        Reading {
            value: raw,
            status: Status::OK,
        }
    }

    /// Runtime-model parameters of the demo scenarios: the well-level
    /// logger's p-type piezoresistor (boron 2e18 cm^-3) and the current
    /// sensor's n-type Hall plate (phosphorus 5e15 cm^-3, invented).
    #[cfg(any(feature = "libm", feature = "micromath"))]
    pub mod model {
        use compensate::math::Backend;
        use compensate::model::{Model, ModelParams};

        /// Reference temperature of the ratios, 25 C.
        const T_REF_K: f32 = 298.15;

        pub fn bridge<B: Backend>() -> Model<B> {
            Model::with_backend(ModelParams::silicon(0.0, 2e18))
        }

        pub fn hall<B: Backend>() -> Model<B> {
            Model::with_backend(ModelParams::silicon(5e15, 0.0))
        }

        /// One evaluation of the model at one temperature: band gap,
        /// densities of states, intrinsic density, neutrality, both
        /// mobilities, conductivity.
        #[inline(never)]
        pub fn conductivity<B: Backend>(m: &mut Model<B>, t_k: f32) -> f32 {
            m.conductivity_s_cm(t_k)
        }

        /// Current-bias Hall sensitivity ratio (two evaluations, T and T_ref).
        #[inline(never)]
        pub fn hall_ratio<B: Backend>(m: &mut Model<B>, t_k: f32) -> f32 {
            m.hall_current_bias_ratio(t_k, T_REF_K)
        }

        /// Piezoresistance-factor ratio.
        #[inline(never)]
        pub fn piezo_ratio<B: Backend>(m: &mut Model<B>, t_k: f32) -> f32 {
            m.piezo_factor_ratio(t_k, T_REF_K)
        }

        #[inline(never)]
        pub fn empty<B: Backend>(_m: &mut Model<B>, t_k: f32) -> f32 {
            t_k
        }

        /// The signature of the timed model functions.
        pub type ModelFn<B> = fn(&mut Model<B>, f32) -> f32;
    }

    #[inline(never)]
    pub fn poly_temp_update(p: &mut PolyBench, signal: f32) -> f32 {
        p.update_temperature(signal)
    }

    #[inline(never)]
    pub fn poly_temp_update_empty(_p: &mut PolyBench, signal: f32) -> f32 {
        signal
    }

    #[inline(never)]
    pub fn poly_sample(p: &mut PolyBench, raw: f32) -> f32 {
        p.sample(raw)
    }

    #[inline(never)]
    pub fn poly_sample_empty(_p: &mut PolyBench, raw: f32) -> f32 {
        raw
    }

    pub const TEMP_UPDATE: Timed<Compensator<'static>, f32, Status> = Timed {
        f: temp_update,
        empty: temp_update_empty,
    };
    pub const SAMPLE: Timed<Compensator<'static>, f32, Reading> = Timed {
        f: sample,
        empty: sample_empty,
    };
    pub const POLY_TEMP_UPDATE: Timed<PolyBench, f32, f32> = Timed {
        f: poly_temp_update,
        empty: poly_temp_update_empty,
    };
    pub const POLY_SAMPLE: Timed<PolyBench, f32, f32> = Timed {
        f: poly_sample,
        empty: poly_sample_empty,
    };
    // Table: one timed entry and its empty twin per benchmarked call, so entries share their shape.
    pub const POLY_CHECKED_TEMP_UPDATE: Timed<PolyCheckedBench, f32, Status> = Timed {
        f: poly_checked_temp_update,
        empty: poly_checked_temp_update_empty,
    };
    pub const POLY_CHECKED_SAMPLE: Timed<PolyCheckedBench, f32, Reading> = Timed {
        f: poly_checked_sample,
        empty: poly_checked_sample_empty,
    };
}

/// Runtime-model figures with backend `B`, named after the backend.
#[cfg(all(fpu, any(feature = "libm", feature = "micromath")))]
fn model_figures<B: compensate::math::Backend>(counter: &Counter, t_k: &[f32]) {
    use fpu::model;
    let mut bridge = model::bridge::<B>();
    let mut hall = model::hall::<B>();
    // (metric name before the backend name, on the Hall plate's model?,
    // function)
    let figures: [(&str, bool, model::ModelFn<B>); 3] = [
        ("runtime_model_", false, model::conductivity),
        ("runtime_model_hall_ratio_", true, model::hall_ratio),
        ("runtime_model_piezo_ratio_", false, model::piezo_ratio),
    ];
    for (head, on_hall, f) in figures {
        let m = if on_hall { &mut hall } else { &mut bridge };
        let t = net_insn(counter, MODEL_CALLS, m, t_k, f, model::empty);
        hprintln!(
            "metric {}{}_insn {}.{:02} insn target={}",
            head,
            B::NAME,
            t / 100,
            t % 100,
            TARGET
        );
    }
    let first = t_k.first().copied().unwrap_or(298.15);
    let stack = measure_call_bytes(&mut bridge, first, model::conductivity)
        .max(measure_call_bytes(&mut hall, first, model::hall_ratio))
        .max(measure_call_bytes(&mut bridge, first, model::piezo_ratio));
    hprintln!(
        "metric stack_model_{}_bytes {} bytes target={}",
        B::NAME,
        stack,
        TARGET
    );
}

// ---- the accuracy sweep: the checked polynomial at every degree ----------

/// Prints `metric <head><degree><tail> <centi/100> <unit>`.
fn metric_degree(head: &str, degree: usize, tail: &str, centi: u64, unit: &str) {
    hprintln!(
        "metric {}{}{} {}.{:02} {} target={}",
        head,
        degree,
        tail,
        centi / 100,
        centi % 100,
        unit,
        TARGET
    );
}

/// Prints the per-degree errors `errors_centi` (hundredths of a ppm, from
/// the host's sweep) and, from the measured per-degree update costs
/// `costs_centi` and ours `ours_centi`, the crossover: the lowest degree
/// whose checked update costs more than our temperature update, and its
/// error.
fn report_sweep(costs_centi: &[u64], ours_centi: u64, errors_centi: &[u64]) {
    for (i, &e) in errors_centi.iter().enumerate() {
        metric_degree("poly_error_deg", i + 1, "_ppm", e, "ppm");
    }
    let crossover = semidrift_firmware::sweep::crossover_degree(costs_centi, ours_centi);
    match crossover.and_then(|d| Some((d, *errors_centi.get(d - 1)?))) {
        Some((degree, error)) => {
            metric("poly_crossover_degree", degree, "count");
            metric_centi("poly_crossover_error_ppm", error, "ppm");
        }
        None => hprintln!(
            "# no degree up to {} costs more than our temperature update",
            costs_centi.len()
        ),
    }
}

/// Times one sweep degree's checked temperature update on `p` (after one
/// untimed update at the first input), prints
/// `poly_checked_temp_update_deg<degree>_insn` and returns it (hundredths).
fn time_degree<S, A: Copy>(
    counter: &Counter,
    degree: usize,
    p: &mut S,
    temps: &[A],
    update: fn(&mut S, A) -> Status,
    empty: fn(&mut S, A) -> Status,
) -> u64 {
    if let Some(&first) = temps.first() {
        let _ = update(p, first);
    }
    let c = net_insn(counter, CALLS, p, temps, update, empty);
    metric_degree("poly_checked_temp_update_deg", degree, "_insn", c, "insn");
    c
}

/// Per-degree figures of the f32 polynomial with our f32 path's checks.
#[cfg(fpu)]
mod sweep_f32 {
    use super::{
        CALLS, Counter, IMAGE_F32_FINE, fpu, metric, metric_centi, net_insn, report_insn,
        report_sweep, time_degree,
    };
    use compensate::{Compensator, Status, TableView};
    use cortex_m_semihosting::hprintln;
    use semidrift_firmware::poly::fitted::{self, RAW_TERMS};
    use semidrift_firmware::poly_checked::PolyF32Checked;
    use semidrift_firmware::poly_checked::checked_f32;
    use semidrift_firmware::rt;
    use semidrift_firmware::sweep::poly_f32;

    #[inline(never)]
    fn update<const K: usize>(p: &mut PolyF32Checked<RAW_TERMS, K>, signal: f32) -> Status {
        p.update_temperature(signal)
    }

    #[inline(never)]
    fn update_empty<const K: usize>(_p: &mut PolyF32Checked<RAW_TERMS, K>, _s: f32) -> Status {
        Status::OK
    }

    /// Prints and returns (hundredths) the instructions of one checked
    /// temperature update of the polynomial with `coeffs` (degree `K - 1`).
    /// Out of line, so only one degree's state is on the stack at a time.
    #[inline(never)]
    fn degree<const K: usize>(
        counter: &Counter,
        view: &TableView<'_>,
        temps: &[f32],
        coeffs: [[f32; K]; RAW_TERMS],
    ) -> u64 {
        let Some(mut p) = checked_f32(view, poly_f32(coeffs)) else {
            hprintln!("error: well_level_f32.bin has no f32 thermometer");
            rt::exit_failure()
        };
        time_degree(
            counter,
            K - 1,
            &mut p,
            temps,
            update::<K>,
            update_empty::<K>,
        )
    }

    /// Every degree of the sweep, lowest first.
    fn all(counter: &Counter, view: &TableView<'_>, t: &[f32]) -> [u64; fitted::SWEEP_DEGREES] {
        // The list below names each degree's constants.
        const { assert!(fitted::SWEEP_DEGREES == 12) };
        [
            degree(counter, view, t, fitted::SWEEP_COEFFS_F32_1),
            degree(counter, view, t, fitted::SWEEP_COEFFS_F32_2),
            degree(counter, view, t, fitted::SWEEP_COEFFS_F32_3),
            degree(counter, view, t, fitted::SWEEP_COEFFS_F32_4),
            degree(counter, view, t, fitted::SWEEP_COEFFS_F32_5),
            degree(counter, view, t, fitted::SWEEP_COEFFS_F32_6),
            degree(counter, view, t, fitted::SWEEP_COEFFS_F32_7),
            degree(counter, view, t, fitted::SWEEP_COEFFS_F32_8),
            degree(counter, view, t, fitted::SWEEP_COEFFS_F32_9),
            degree(counter, view, t, fitted::SWEEP_COEFFS_F32_10),
            degree(counter, view, t, fitted::SWEEP_COEFFS_F32_11),
            degree(counter, view, t, fitted::SWEEP_COEFFS_F32_12),
        ]
    }

    /// The sweep's figures and the crossover against our update with
    /// `float` (timed again here, the same deterministic figure as
    /// `temp_update_insn`), then our update from the finer image; out of
    /// line so their state is on the stack only meanwhile.
    #[inline(never)]
    pub fn with_fine_image(
        counter: &Counter,
        view: &TableView<'_>,
        [temp_f, drift_f, jump_f]: [&[f32]; 3],
        float: &mut Compensator<'static>,
    ) {
        let t = fpu::TEMP_UPDATE;
        let ours = net_insn(counter, CALLS, float, temp_f, t.f, t.empty);
        let Some(&first) = temp_f.first() else {
            return;
        };
        let costs = all(counter, view, temp_f);
        report_sweep(&costs, ours, &fitted::SWEEP_ERROR_F32_CENTI_PPM);
        fine_image(counter, [temp_f, drift_f, jump_f], first);
    }

    /// Our update from the finer image on the simulated stream, the drift
    /// and the jumps (out of line, like the caller).
    #[inline(never)]
    fn fine_image(counter: &Counter, streams: [&[f32]; 3], first: f32) {
        let Ok(view_fine) = TableView::parse(IMAGE_F32_FINE) else {
            hprintln!("error: well_level_f32_fine.bin does not parse");
            rt::exit_failure()
        };
        let Ok(mut fine) = compensate::Compensator::new(&view_fine) else {
            hprintln!("error: well_level_f32_fine.bin is not an f32 image");
            rt::exit_failure()
        };
        let names = [
            "temp_update_fine_insn",
            "temp_update_fine_drift_insn",
            "temp_update_fine_jump_insn",
        ];
        for (name, stream) in names.into_iter().zip(streams) {
            let _ = fine.update_temperature(first);
            report_insn(counter, name, &mut fine, stream, fpu::TEMP_UPDATE);
        }
        metric("table_fine_nodes", view_fine.temperature_nodes(), "count");
        metric_centi(
            "table_fine_error_ppm",
            fitted::TABLE_FINE_ERROR_F32_CENTI_PPM,
            "ppm",
        );
    }
}

/// Per-degree figures of the integer polynomial with our integer path's
/// checks (the Cortex-M0's own arithmetic).
#[cfg(not(fpu))]
mod sweep_q {
    use super::{CALLS, Counter, net_insn, time_degree};
    use compensate::{FixedCompensator, Status, TableView};
    use semidrift_firmware::poly::fitted::{self, RAW_TERMS, U_SHIFT};
    use semidrift_firmware::poly_checked::PolyQChecked;
    use semidrift_firmware::poly_checked::checked_q;
    use semidrift_firmware::rt;
    use semidrift_firmware::sweep::poly_q;

    type Checked<const K: usize, const XS: u32> = PolyQChecked<RAW_TERMS, K, U_SHIFT, XS>;

    #[inline(never)]
    fn update<const K: usize, const XS: u32>(p: &mut Checked<K, XS>, signal: i32) -> Status {
        p.update_temperature(signal)
    }

    #[inline(never)]
    fn update_empty<const K: usize, const XS: u32>(_p: &mut Checked<K, XS>, _s: i32) -> Status {
        Status::OK
    }

    /// Prints and returns (hundredths) the instructions of one checked
    /// temperature update of the polynomial with `coeffs` (degree `K - 1`).
    /// Out of line, so only one degree's state is on the stack at a time.
    #[inline(never)]
    fn degree<const K: usize, const XS: u32>(
        counter: &Counter,
        view: &TableView<'_>,
        temps: &[i32],
        coeffs: [[i32; K]; RAW_TERMS],
    ) -> u64 {
        let Some(mut p) = checked_q(view, poly_q::<K, XS>(coeffs)) else {
            cortex_m_semihosting::hprintln!("error: well_level_q.bin has no thermometer");
            rt::exit_failure()
        };
        time_degree(
            counter,
            K - 1,
            &mut p,
            temps,
            update::<K, XS>,
            update_empty::<K, XS>,
        )
    }

    /// The sweep's figures and the crossover against our update with
    /// `fixed` (timed again here, the same deterministic figure as
    /// `temp_update_insn`); out of line so their state is on the stack only
    /// meanwhile.
    #[inline(never)]
    pub fn report(
        counter: &Counter,
        view: &TableView<'_>,
        temps: &[i32],
        fixed: &mut FixedCompensator<'static>,
    ) {
        let t = super::Q_TEMP_UPDATE;
        let ours = net_insn(counter, CALLS, fixed, temps, t.f, t.empty);
        let costs = all(counter, view, temps);
        super::report_sweep(&costs, ours, &fitted::SWEEP_ERROR_Q_CENTI_PPM);
    }

    /// Every degree of the sweep, lowest first.
    fn all(counter: &Counter, view: &TableView<'_>, t: &[i32]) -> [u64; fitted::SWEEP_DEGREES] {
        use fitted::*;
        // The list below names each degree's constants.
        const { assert!(SWEEP_DEGREES == 12) };
        [
            degree::<2, SWEEP_X_SHIFT_1>(counter, view, t, SWEEP_COEFFS_Q_1),
            degree::<3, SWEEP_X_SHIFT_2>(counter, view, t, SWEEP_COEFFS_Q_2),
            degree::<4, SWEEP_X_SHIFT_3>(counter, view, t, SWEEP_COEFFS_Q_3),
            degree::<5, SWEEP_X_SHIFT_4>(counter, view, t, SWEEP_COEFFS_Q_4),
            degree::<6, SWEEP_X_SHIFT_5>(counter, view, t, SWEEP_COEFFS_Q_5),
            degree::<7, SWEEP_X_SHIFT_6>(counter, view, t, SWEEP_COEFFS_Q_6),
            degree::<8, SWEEP_X_SHIFT_7>(counter, view, t, SWEEP_COEFFS_Q_7),
            degree::<9, SWEEP_X_SHIFT_8>(counter, view, t, SWEEP_COEFFS_Q_8),
            degree::<10, SWEEP_X_SHIFT_9>(counter, view, t, SWEEP_COEFFS_Q_9),
            degree::<11, SWEEP_X_SHIFT_10>(counter, view, t, SWEEP_COEFFS_Q_10),
            degree::<12, SWEEP_X_SHIFT_11>(counter, view, t, SWEEP_COEFFS_Q_11),
            degree::<13, SWEEP_X_SHIFT_12>(counter, view, t, SWEEP_COEFFS_Q_12),
        ]
    }
}

/// Parses the simulated stream into the input arrays.
fn inputs() -> [Sample; INPUTS] {
    let mut samples = [Sample {
        raw_code: 0,
        temp_code: 0,
    }; INPUTS];
    match fill(STREAM, &mut samples) {
        Ok(INPUTS) => samples,
        Ok(n) => {
            hprintln!(
                "error: well_level_stream.csv has {} samples, bench needs {}",
                n,
                INPUTS
            );
            rt::exit_failure()
        }
        Err(stream::ParseError { line }) => {
            hprintln!(
                "error: well_level_stream.csv line {}: expected raw_code,temp_code",
                line
            );
            rt::exit_failure()
        }
    }
}

#[entry]
fn main() -> ! {
    let Some(peripherals) = cortex_m::Peripherals::take() else {
        rt::exit_failure()
    };
    let counter = Counter::new(peripherals.SYST);
    metric_centi(
        "insn_per_systick",
        counter.insn_per_tick_centi(),
        "insn/tick",
    );

    let samples = inputs();
    let raw_q: [i32; INPUTS] = samples.map(|s| s.raw_code);
    let temp_q: [i32; INPUTS] = samples.map(|s| s.temp_code);
    // The temperature update also on a slow drift (the usual case) and on
    // a stream that changes node interval at every update (the worst).
    let drift_q: [i32; INPUTS] = drift(temp_q[DRIFT_FROM], temp_q[DRIFT_FROM + 1]);
    let jump_q: [i32; INPUTS] = jumps(&temp_q[..RAMP]);

    let Ok(view_q) = TableView::parse_q(IMAGE_Q) else {
        hprintln!("error: well_level_q.bin does not parse");
        rt::exit_failure()
    };
    let Ok(mut fixed) = FixedCompensator::new(&view_q) else {
        hprintln!("error: well_level_q.bin is not a Q-format image");
        rt::exit_failure()
    };
    let mut poly_q = poly_q();
    // Samples are timed at the coefficients of the first simulated temperature.
    let _ = fixed.update_temperature(temp_q[0]);
    let _ = poly_q_temp_update(&mut poly_q, temp_q[0]);

    let q_names: [&str; 4] = if cfg!(fpu) {
        [
            "temp_update_q_insn",
            "sample_q_insn",
            "poly_temp_update_q_insn",
            "poly_sample_q_insn",
        ]
    } else {
        [
            "temp_update_insn",
            "sample_insn",
            "poly_temp_update_insn",
            "poly_sample_insn",
        ]
    };

    #[cfg(fpu)]
    {
        let raw_f: [f32; INPUTS] = samples.map(|s| s.raw_code as f32);
        let temp_f: [f32; INPUTS] = samples.map(|s| s.temp_code as f32);
        let drift_f: [f32; INPUTS] = drift_q.map(|c| c as f32);
        let jump_f: [f32; INPUTS] = jump_q.map(|c| c as f32);
        let Ok(view) = TableView::parse(IMAGE_F32) else {
            hprintln!("error: well_level_f32.bin does not parse");
            rt::exit_failure()
        };
        let Ok(mut float) = compensate::Compensator::new(&view) else {
            hprintln!("error: well_level_f32.bin is not an f32 image");
            rt::exit_failure()
        };
        let mut poly = fpu::poly();
        let _ = float.update_temperature(temp_f[0]);
        let _ = fpu::poly_temp_update(&mut poly, temp_f[0]);

        report_insn(
            &counter,
            "temp_update_insn",
            &mut float,
            &temp_f,
            fpu::TEMP_UPDATE,
        );
        report_insn(
            &counter,
            "temp_update_drift_insn",
            &mut float,
            &drift_f,
            fpu::TEMP_UPDATE,
        );
        report_insn(
            &counter,
            "temp_update_jump_insn",
            &mut float,
            &jump_f,
            fpu::TEMP_UPDATE,
        );
        let _ = float.update_temperature(temp_f[0]);
        report_insn(&counter, "sample_insn", &mut float, &raw_f, fpu::SAMPLE);
        report_insn(
            &counter,
            "poly_temp_update_insn",
            &mut poly,
            &temp_f,
            fpu::POLY_TEMP_UPDATE,
        );
        report_insn(
            &counter,
            "poly_sample_insn",
            &mut poly,
            &raw_f,
            fpu::POLY_SAMPLE,
        );

        let Some(mut checked) = fpu::poly_checked(&view) else {
            hprintln!("error: well_level_f32.bin has no f32 tables");
            rt::exit_failure()
        };
        let _ = checked.update_temperature(temp_f[0]);
        report_insn(
            &counter,
            "poly_checked_temp_update_insn",
            &mut checked,
            &temp_f,
            fpu::POLY_CHECKED_TEMP_UPDATE,
        );
        // The polynomial's cost does not depend on the stream; shown on
        // the drift too so the two can be compared line by line.
        report_insn(
            &counter,
            "poly_checked_temp_update_drift_insn",
            &mut checked,
            &drift_f,
            fpu::POLY_CHECKED_TEMP_UPDATE,
        );
        let _ = checked.update_temperature(temp_f[0]);
        report_insn(
            &counter,
            "poly_checked_sample_insn",
            &mut checked,
            &raw_f,
            fpu::POLY_CHECKED_SAMPLE,
        );

        let stack = measure_call_bytes(&mut float, temp_f[0], fpu::temp_update)
            .max(measure_call_bytes(&mut float, raw_f[0], fpu::sample));
        metric("stack_bytes", stack, "bytes");
        let stack = measure_call_bytes(&mut poly, temp_f[0], fpu::poly_temp_update)
            .max(measure_call_bytes(&mut poly, raw_f[0], fpu::poly_sample));
        metric("poly_stack_bytes", stack, "bytes");
        metric(
            "state_bytes",
            core::mem::size_of::<compensate::Compensator<'static>>(),
            "bytes",
        );

        // The runtime model over the stream's temperature range, -20..85 C.
        let t_k: [f32; INPUTS] =
            core::array::from_fn(|k| 253.15 + 105.0 * k as f32 / (INPUTS - 1) as f32);
        #[cfg(feature = "libm")]
        model_figures::<compensate::math::Libm>(&counter, &t_k);
        #[cfg(feature = "micromath")]
        model_figures::<compensate::math::Micromath>(&counter, &t_k);
        // Last in the f32 block, so every figure above runs exactly as
        // before the sweep was added.
        sweep_f32::with_fine_image(&counter, &view, [&temp_f, &drift_f, &jump_f], &mut float);
    }

    report_insn(&counter, q_names[0], &mut fixed, &temp_q, Q_TEMP_UPDATE);
    let (drift_name, jump_name) = if cfg!(fpu) {
        ("temp_update_drift_q_insn", "temp_update_jump_q_insn")
    } else {
        ("temp_update_drift_insn", "temp_update_jump_insn")
    };
    report_insn(&counter, drift_name, &mut fixed, &drift_q, Q_TEMP_UPDATE);
    report_insn(&counter, jump_name, &mut fixed, &jump_q, Q_TEMP_UPDATE);
    // Samples are timed at the coefficients of the first simulated
    // temperature, as before the two streams above.
    let _ = fixed.update_temperature(temp_q[0]);
    report_insn(&counter, q_names[1], &mut fixed, &raw_q, Q_SAMPLE);
    report_insn(
        &counter,
        q_names[2],
        &mut poly_q,
        &temp_q,
        POLY_Q_TEMP_UPDATE,
    );
    report_insn(&counter, q_names[3], &mut poly_q, &raw_q, POLY_Q_SAMPLE);
    let Some(mut checked_q) = poly_q_checked(&view_q) else {
        hprintln!("error: well_level_q.bin has no thermometer");
        rt::exit_failure()
    };
    let _ = checked_q.update_temperature(temp_q[0]);
    let (update_name, sample_name) = if cfg!(fpu) {
        (
            "poly_checked_temp_update_q_insn",
            "poly_checked_sample_q_insn",
        )
    } else {
        ("poly_checked_temp_update_insn", "poly_checked_sample_insn")
    };
    report_insn(
        &counter,
        update_name,
        &mut checked_q,
        &temp_q,
        POLY_Q_CHECKED_TEMP_UPDATE,
    );
    report_insn(
        &counter,
        sample_name,
        &mut checked_q,
        &raw_q,
        POLY_Q_CHECKED_SAMPLE,
    );
    // The integer sweep on the M0 only (on the M4F the f32 sweep above is
    // what such a part runs).
    #[cfg(not(fpu))]
    {
        sweep_q::report(&counter, &view_q, &temp_q, &mut fixed);
    }

    let stack_q = measure_call_bytes(&mut fixed, temp_q[0], q_temp_update)
        .max(measure_call_bytes(&mut fixed, raw_q[0], q_sample));
    let poly_stack_q = measure_call_bytes(&mut poly_q, temp_q[0], poly_q_temp_update)
        .max(measure_call_bytes(&mut poly_q, raw_q[0], poly_q_sample));
    if cfg!(fpu) {
        metric("stack_q_bytes", stack_q, "bytes");
        metric("poly_stack_q_bytes", poly_stack_q, "bytes");
        metric(
            "state_q_bytes",
            core::mem::size_of::<FixedCompensator<'static>>(),
            "bytes",
        );
    } else {
        metric("stack_bytes", stack_q, "bytes");
        metric("poly_stack_bytes", poly_stack_q, "bytes");
        metric(
            "state_bytes",
            core::mem::size_of::<FixedCompensator<'static>>(),
            "bytes",
        );
    }
    metric(
        "table_numbers",
        view_q.temperature_nodes() * view_q.channel_count() + view_q.thermometer_nodes(),
        "count",
    );
    metric("poly_coefficients", PolyQBench::STORED, "count");
    // Accuracy of the compared corrections, measured on the host by
    // examples/make_firmware_image.rs (data/well_level_poly.rs): dense
    // maximum error against the calibrated part model, as `semidrift verify`.
    metric("poly_degree", fitted::DEGREE, "count");
    let (f32_names, q_names) = if cfg!(fpu) {
        (
            Some(["poly_error_ppm", "table_error_ppm"]),
            ["poly_error_q_ppm", "table_error_q_ppm"],
        )
    } else {
        (None, ["poly_error_ppm", "table_error_ppm"])
    };
    if let Some([poly, table]) = f32_names {
        metric_centi(poly, fitted::POLY_ERROR_F32_CENTI_PPM, "ppm");
        metric_centi(table, fitted::TABLE_ERROR_F32_CENTI_PPM, "ppm");
    }
    metric_centi(q_names[0], fitted::POLY_ERROR_Q_CENTI_PPM, "ppm");
    metric_centi(q_names[1], fitted::TABLE_ERROR_Q_CENTI_PPM, "ppm");
    // No global allocator is defined and no crate links `alloc`: any heap
    // use would fail to link. tests/firmware_qemu.rs checks the ELF files
    // for allocator symbols.
    metric("heap_bytes", 0, "bytes");
    metric("stack_program_bytes", program_high_water_bytes(), "bytes");
    rt::exit_success()
}
