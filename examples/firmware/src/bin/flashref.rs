//! Flash probe, reference: the `flashuse` program with every compensation
//! call replaced by a trivial computation on the same inputs, so that the
//! difference in size between the two is the compensation code alone.
#![no_std]
#![no_main]

use core::hint::black_box;
use semidrift_firmware::probe::{Inputs, reference};

semidrift_firmware::flash_probe!(probe);

fn probe(i: &Inputs) -> bool {
    reference(i);
    black_box(true)
}
