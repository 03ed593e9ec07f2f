//! Flash probe of the runtime model with the micromath backend: the `flashref`
//! program plus the model calls of `semidrift_firmware::probe`, so that
//! `bench.sh` can report the model's flash with this backend.
// Same as flashmodel_libm.rs with the other backend: each flash probe is its own binary.
#![no_std]
#![no_main]

use core::hint::black_box;
use semidrift_firmware::probe::{Inputs, reference};

semidrift_firmware::flash_probe!(probe);

fn probe(i: &Inputs) -> bool {
    reference(i);
    #[cfg(feature = "micromath")]
    semidrift_firmware::probe::runtime_model::<compensate::math::Micromath>();
    black_box(true)
}
