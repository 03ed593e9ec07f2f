//! Simulated lots: the parts a process draws and the truth they are measured with.

pub mod simulate;
pub mod truth;
