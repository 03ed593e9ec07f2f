//! Flash probe, with compensation: parses the table image, builds the
//! compensator the target runs (f32 on the Cortex-M4F, integer on the
//! Cortex-M0), updates the temperature and compensates one sample, all on
//! inputs the optimiser cannot see. `bench.sh` subtracts the size of
//! `flashref` (the same program with the compensation calls replaced by a
//! trivial computation on the same inputs) to get the flash and static RAM
//! the compensation code costs.
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
    #[cfg(fpu)]
    let ok = {
        let Ok(view) = compensate::TableView::parse(bytes) else {
            rt::exit_failure()
        };
        let Ok(mut c) = compensate::Compensator::new(&view) else {
            rt::exit_failure()
        };
        let s = c.update_temperature(signal as f32);
        let r = c.compensate_sample(raw as f32);
        black_box(r.value);
        s.is_ok() && r.status.is_ok()
    };
    #[cfg(not(fpu))]
    let ok = {
        let Ok(view) = compensate::TableView::parse_q(bytes) else {
            rt::exit_failure()
        };
        let Ok(mut c) = compensate::FixedCompensator::new(&view) else {
            rt::exit_failure()
        };
        let s = c.update_temperature(signal);
        let r = c.compensate_sample(raw);
        black_box(r.value);
        s.is_ok() && r.status.is_ok()
    };
    if ok {
        rt::exit_success()
    } else {
        rt::exit_failure()
    }
}

#[panic_handler]
fn panic(_: &core::panic::PanicInfo) -> ! {
    rt::exit_failure()
}
