//! Table images sized to an error budget: planning, building, bounding and verifying.

pub mod bound;
pub mod bow;
pub mod budget;
pub mod choose;
pub mod image_eval;
pub mod pipeline;
pub mod remainder;
pub mod table;
pub mod table_grid;
