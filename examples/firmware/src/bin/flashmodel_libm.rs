//! Flash probe of the runtime model with the libm backend: the `flashref`
//! program plus the model calls of `semidrift_firmware::probe`, so that
//! `bench.sh` can report the model's flash with this backend.
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
    // Keeps the image in flash, as in `flashuse`.
    let first = bytes.first().copied().unwrap_or(0);
    #[cfg(fpu)]
    let value = (raw as f32 - signal as f32) * f32::from(first);
    #[cfg(not(fpu))]
    let value = raw.wrapping_sub(signal).wrapping_mul(i32::from(first));
    black_box(value);
    #[cfg(feature = "libm")]
    semidrift_firmware::probe::runtime_model::<compensate::math::Libm>();
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
