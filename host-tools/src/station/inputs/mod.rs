//! What comes in: chamber CSV, scenarios and element specs, and the limits every input is checked against.

pub mod chamber;
pub mod limits;
pub mod scenario;
pub mod spec;
