//! Flash probe, polynomial baseline: the `flashuse` program with the
//! polynomial correction (`poly.rs`) in place of the compensate crate, so
//! `bench.sh` can report the baseline's flash the same way. The baseline
//! has no image to parse: its coefficients are compiled in.
#![no_std]
#![no_main]

use core::hint::black_box;
use cortex_m_rt::entry;
use semidrift_firmware::rt;

#[cfg(fpu)]
static IMAGE: &[u8] = include_bytes!("../../data/well_level_f32.bin");
#[cfg(not(fpu))]
static IMAGE: &[u8] = include_bytes!("../../data/well_level_q.bin");

#[entry]
fn main() -> ! {
    let bytes = black_box(IMAGE);
    let signal = black_box(4_194_304i32);
    let raw = black_box(2_000_000i32);
    // Keeps the image in flash, as in `flashref`.
    black_box(bytes.first().copied());
    #[cfg(fpu)]
    {
        let mut p = semidrift_firmware::poly::DEMO_F32;
        p.update_temperature(signal as f32);
        black_box(p.sample(raw as f32));
    }
    #[cfg(not(fpu))]
    {
        let mut p = semidrift_firmware::poly::DEMO_Q;
        p.update_temperature(signal);
        black_box(p.sample(raw));
    }
    if black_box(true) {
        rt::exit_success()
    } else {
        rt::exit_failure()
    }
}

#[panic_handler]
fn panic(_: &core::panic::PanicInfo) -> ! {
    rt::exit_failure()
}
