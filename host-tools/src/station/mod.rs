//! The calibration station chain: chamber data in, per-part fits, table
//! images sized to an error budget, export, verification.
//!
//! Data flow: [`chamber`] rows --[`fit`]--> part files --> table image
//! --[`export`]--> flash; every file goes through [`output::write_atomic`].

pub mod baseline;
pub mod checks;
pub mod design;
pub mod files;
pub mod fitting;
pub mod inputs;
pub mod simulated;
pub mod tables;

// Every stage module at the station level too, so that paths name the
// concept (`station::chamber`), whatever the stage folder.
pub use baseline::{poly_baseline, poly_sweep, polynomial};
pub use checks::{apply, compare, eol};
pub use files::{eol_target, export, flash, output};
pub use fitting::{calibrate, curves, fit, linalg, lot, model_shapes, part_file, part_model};
pub use inputs::{chamber, limits, scenario, spec};
pub use simulated::{simulate, truth};
pub use tables::{bound, bow, budget, choose, image_eval, pipeline, remainder, table, table_grid};
