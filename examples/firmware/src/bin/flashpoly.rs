//! Flash probe, polynomial baseline: the `flashuse` program with the
//! polynomial correction (`poly.rs`) in place of the compensate crate, so
//! `bench.sh` can report the baseline's flash the same way. The baseline
//! has no image to parse: its coefficients are compiled in.
#![no_std]
#![no_main]

use core::hint::black_box;
use semidrift_firmware::probe::Inputs;

semidrift_firmware::flash_probe!(probe);

fn probe(i: &Inputs) -> bool {
    // Reads the image as `flashref` does.
    black_box(i.first);
    #[cfg(fpu)]
    {
        let mut p = semidrift_firmware::poly::FITTED_F32;
        p.update_temperature(i.signal as f32);
        black_box(p.sample(i.raw as f32));
    }
    #[cfg(not(fpu))]
    {
        let mut p = semidrift_firmware::poly::FITTED_Q;
        p.update_temperature(i.signal);
        black_box(p.sample(i.raw));
    }
    black_box(true)
}
