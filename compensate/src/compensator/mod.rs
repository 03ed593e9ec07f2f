//! Compensators: raw element output plus temperature signal in, measurand in
//! engineering units plus [`crate::Status`] out.
//!
//! Both cache every temperature-dependent coefficient in
//! `update_temperature`, so that the per-sample `compensate_sample` is a few
//! multiply-adds: `(raw - offset) * gain` (plus an optional quadratic term and
//! an optional bilinear 2-D correction).

mod error;
mod fixed;
mod float;

pub use error::CompensatorError;
pub use fixed::{FixedCompensator, ReadingQ};
pub use float::{Compensator, Reading};
