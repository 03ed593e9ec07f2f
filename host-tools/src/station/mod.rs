//! The calibration station chain: chamber data in, per-part fits, table
//! images sized to an error budget, export, verification.
//!
//! Data flow: [`chamber`] rows --[`fit`]--> part files --> table image
//! --[`export`]--> flash; every file goes through [`output::write_atomic`].

pub mod chamber;
pub mod curves;
pub mod export;
pub mod fit;
pub mod output;
pub mod part_model;
pub mod polynomial;
pub mod scenario;
pub mod simulate;
pub mod truth;
pub mod model_shapes;
pub mod part_file;
pub mod calibrate;
pub mod lot;
pub mod spec;
pub mod apply;
pub mod compare;
