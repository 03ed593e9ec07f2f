//! Temperature-drift compensation for semiconductor sense elements, in fixed
//! memory and bounded time, for microcontrollers with and without an FPU.
#![cfg_attr(not(test), no_std)]
#![forbid(unsafe_code)]
#![deny(missing_docs)]
