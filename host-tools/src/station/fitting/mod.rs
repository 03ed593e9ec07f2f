//! Per-part fits from chamber data: the full model's shapes, the fits and the part files.

pub mod calibrate;
pub mod curves;
pub mod fit;
pub mod linalg;
pub mod lot;
pub mod model_shapes;
pub mod part_file;
pub mod part_model;
