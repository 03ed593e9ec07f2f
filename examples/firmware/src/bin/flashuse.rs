//! Flash probe, with compensation: parses the table image, builds the
//! compensator the target runs (f32 on the Cortex-M4F, integer on the
//! Cortex-M0), updates the temperature and compensates one sample, all on
//! inputs the optimiser cannot see. `bench.sh` subtracts the size of
//! `flashref` (the same program with the compensation calls replaced by a
//! trivial computation on the same inputs) to get the flash and static RAM
//! the compensation code costs. The Cortex-M0 parses with
//! `TableView::parse_q`, as a part without FPU would.
#![no_std]
#![no_main]

use core::hint::black_box;
use semidrift_firmware::probe::Inputs;

semidrift_firmware::flash_probe!(probe);

#[cfg(fpu)]
fn probe(i: &Inputs) -> bool {
    black_box(i.first);
    let Ok(view) = compensate::TableView::parse(i.image) else {
        return false;
    };
    let Ok(mut c) = compensate::Compensator::new(&view) else {
        return false;
    };
    let s = c.update_temperature(i.signal as f32);
    let r = c.compensate_sample(i.raw as f32);
    black_box(r.value);
    s.is_ok() && r.status.is_ok()
}

// Same probe as the FPU one above, on the Q image.
#[cfg(not(fpu))]
fn probe(i: &Inputs) -> bool {
    black_box(i.first);
    let Ok(view) = compensate::TableView::parse_q(i.image) else {
        return false;
    };
    let Ok(mut c) = compensate::FixedCompensator::new(&view) else {
        return false;
    };
    let s = c.update_temperature(i.signal);
    let r = c.compensate_sample(i.raw);
    black_box(r.value);
    s.is_ok() && r.status.is_ok()
}
