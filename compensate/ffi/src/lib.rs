//! C ABI of the [`compensate`] runtime crate, built as a static library for
//! C firmware on Cortex-M (and as an ordinary library for host tests).
//!
//! The C header `include/semidrift_compensate.h` is generated from this crate by
//! cbindgen (the test `header_is_current` fails when it is out of date; run
//! it with `SEMIDRIFT_BLESS=1` to rewrite it). Every entry point:
//!
//! - checks each pointer (null; a state block's alignment and size at
//!   init, its key word on every later call, see `state.rs`) and length
//!   before it reads anything else, and returns an [`SdStatus`] code, or
//!   an [`SdResult`] (updates, and in the low half of a sample word), whose
//!   negative values are the same codes: 0 or more on success, a negative
//!   code naming the one thing that was wrong;
//! - never panics and never unwinds (the C firmware's link proves that no
//!   panic path is left, see `examples/firmware-c/`), never allocates;
//! - keeps its state in a block the caller owns ([`SdF32State`],
//!   [`SdQState`]), whose size and alignment the header states.
//!
//! A state borrows the image bytes it was made from: they must stay in
//! place and unchanged while the state is used (in firmware the image sits
//! in flash). A state is not safe to use from two contexts at once.
//!
//! **Caution.** Where a reading protects people or property, act on every
//! status flag (`SD_FLAG_*`): a sample flagged sensor fault, table invalid,
//! NaN input or no temperature is not a reading. A table image made from
//! simulated data is never for a product; qualify the design on real parts
//! under the standards that apply.
#![cfg_attr(target_os = "none", no_std)]
#![deny(missing_docs)]
#![deny(unsafe_op_in_unsafe_fn)]
#![deny(
    clippy::undocumented_unsafe_blocks,
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::panic,
    clippy::indexing_slicing
)]

mod fixed;
mod float;
mod image;
#[cfg(target_os = "none")]
mod panic;
mod state;
mod status;

pub use fixed::{sd_q_compensate, sd_q_init, sd_q_temperature_q, sd_q_update_temperature};
pub use float::{sd_f32_compensate, sd_f32_init, sd_f32_temperature_c, sd_f32_update_temperature};
pub use image::{SdImageInfo, sd_image_check, sd_image_check_q};
pub use state::{SD_F32_STATE_BYTES, SD_Q_STATE_BYTES, SD_STATE_ALIGN, SdF32State, SdQState};
pub use status::*;
