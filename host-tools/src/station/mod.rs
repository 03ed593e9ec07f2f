//! The calibration station chain: chamber data in, per-part fits, table
//! images sized to an error budget, export, verification.
//!
//! Data flow: [`chamber`] rows --[`fit`]--> part files --> table image
//! --[`export`]--> flash; every file goes through [`output::write_atomic`].

pub mod apply;
pub mod bound;
pub mod bow;
pub mod budget;
pub mod calibrate;
pub mod chamber;
pub mod choose;
pub mod compare;
pub mod curves;
pub mod design;
pub mod export;
pub mod fit;
pub mod flash;
pub mod image_eval;
pub mod limits;
pub mod linalg;
pub mod lot;
pub mod model_shapes;
pub mod output;
pub mod part_file;
pub mod part_model;
pub mod pipeline;
pub mod poly_baseline;
pub mod poly_sweep;
pub mod polynomial;
pub mod remainder;
pub mod scenario;
pub mod simulate;
pub mod spec;
pub mod table;
pub mod table_grid;
pub mod truth;
