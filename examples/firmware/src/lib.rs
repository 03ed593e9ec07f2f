//! Shared pieces of the semidrift firmware binaries (`main`, `bench`,
//! `nopanic`, `eol` and the flash probes): semihosting exit and fault handlers,
//! the SysTick instruction counter, stack painting, the simulated sample
//! stream and the polynomial baseline the benchmark compares against (at
//! the chosen degree and at every degree of the accuracy sweep), and the
//! end-of-line check's mailbox layout.
//!
//! Runs on QEMU's `mps2-an386` (Cortex-M4F) and `microbit` (Cortex-M0).
#![no_std]

pub mod count;
pub mod eol_mailbox;
pub mod poly;
pub mod poly_checked;
pub mod probe;
pub mod report;
pub mod rt;
pub mod stack;
pub mod stream;
pub mod sweep;
