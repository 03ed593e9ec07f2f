//! The usual polynomial correction, as the comparison baseline.

pub mod poly_baseline;
pub mod poly_sweep;
pub mod polynomial;
