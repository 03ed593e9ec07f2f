//! Deterministic instruction counting with SysTick under QEMU `-icount`.
//!
//! With `-icount shift=0,align=off,sleep=off` every executed instruction
//! advances QEMU's virtual clock by 1 ns, and SysTick, clocked from the core,
//! then ticks once per 40 instructions on `mps2-an386` (25 MHz) and once per
//! 62.5 on `microbit` (16 MHz). Rather than trust those ratios, [`Counter`]
//! calibrates them with a loop of known instruction count.

use cortex_m::peripheral::{SYST, syst::SystClkSource};

/// SysTick's counter is 24 bits wide.
const MASK_24: u32 = 0x00FF_FFFF;

/// Extra iterations of the two-instruction calibration loop: 2e7
/// instructions, far below one 24-bit wrap at either clock ratio (6.7e8 and
/// 1.0e9), so the +-1 tick quantization is below 4e-6 relative.
const CALIBRATION_ITERATIONS: u32 = 10_000_000;
/// Iterations of the shorter calibration loop.
const CALIBRATION_BASE_ITERATIONS: u32 = 1_000_000;

/// A free-running SysTick together with its calibration.
pub struct Counter {
    syst: SYST,
    /// Instructions executed by the calibration loop.
    calibration_insn: u64,
    /// SysTick ticks the calibration loop took.
    calibration_ticks: u64,
}

impl Counter {
    /// Starts SysTick from the core clock, free running over all 24 bits,
    /// and calibrates ticks against instructions.
    pub fn new(mut syst: SYST) -> Self {
        syst.disable_interrupt();
        syst.set_clock_source(SystClkSource::Core);
        syst.set_reload(MASK_24);
        syst.clear_current();
        syst.enable_counter();
        let mut counter = Self {
            syst,
            calibration_insn: 1,
            calibration_ticks: 1,
        };
        // Two loops differing by CALIBRATION_ITERATIONS passes of `subs; bne`:
        // the call, return and SysTick reads around each loop cancel in the
        // difference, leaving exactly 2 x CALIBRATION_ITERATIONS instructions.
        let start = counter.now();
        busy_loop(CALIBRATION_BASE_ITERATIONS);
        let short = counter.ticks_since(start);
        let start = counter.now();
        busy_loop(CALIBRATION_BASE_ITERATIONS + CALIBRATION_ITERATIONS);
        let long = counter.ticks_since(start);
        counter.calibration_insn = 2 * u64::from(CALIBRATION_ITERATIONS);
        counter.calibration_ticks = u64::from(long.saturating_sub(short).max(1));
        counter
    }

    /// Current SysTick value (counts down).
    #[inline(always)]
    pub fn now(&self) -> u32 {
        SYST::get_current()
    }

    /// Ticks elapsed since `start`, correct across at most one wrap.
    #[inline(always)]
    pub fn ticks_since(&self, start: u32) -> u32 {
        start.wrapping_sub(self.now()) & MASK_24
    }

    /// Instructions per SysTick tick in hundredths (4000 on mps2-an386).
    pub fn insn_per_tick_centi(&self) -> u64 {
        (self.calibration_insn * 100 + self.calibration_ticks / 2) / self.calibration_ticks
    }

    /// Converts a tick count to instructions, in hundredths of an instruction
    /// per call after dividing by `calls` (rounded to nearest).
    pub fn centi_insn_per_call(&self, ticks: u64, calls: u64) -> u64 {
        let num = ticks * self.calibration_insn * 100;
        let den = self.calibration_ticks * calls;
        (num + den / 2) / den
    }

    /// Gives the SysTick peripheral back.
    pub fn release(self) -> SYST {
        self.syst
    }
}

/// Runs `iterations` passes of a two-instruction loop (`subs`, `bne`).
#[inline(never)]
pub fn busy_loop(iterations: u32) {
    // SAFETY: the loop only decrements a scratch register; no memory access.
    unsafe {
        core::arch::asm!(
            "2:",
            "subs {0}, {0}, #1",
            "bne 2b",
            inout(reg) iterations => _,
            options(nomem, nostack),
        );
    }
}

/// Times `calls` calls of `f` on `state` with inputs taken in turn from
/// `inputs`, returning SysTick ticks. `f` goes through `black_box` as a
/// function pointer, so every function timed with the same types shares this
/// exact loop, and subtracting the loop of an empty function of the same
/// signature leaves the cost of the work alone.
#[inline(never)]
pub fn time_calls<S, A: Copy, R>(
    counter: &Counter,
    calls: u32,
    state: &mut S,
    inputs: &[A],
    f: fn(&mut S, A) -> R,
) -> u32 {
    let f = core::hint::black_box(f);
    let len = inputs.len();
    if len == 0 {
        return 0;
    }
    let mut k = 0usize;
    let start = counter.now();
    for _ in 0..calls {
        let a = inputs.get(k).copied();
        if let Some(a) = a {
            let r = f(core::hint::black_box(&mut *state), core::hint::black_box(a));
            core::hint::black_box(r);
        }
        k += 1;
        if k == len {
            k = 0;
        }
    }
    counter.ticks_since(start)
}
