//! Calibration-station side of semidrift: the full f64 semiconductor model,
//! element models, calibration fits, table building, export and verification.
#![forbid(unsafe_code)]

pub mod arrhenius;
pub mod arrhenius_check;
pub mod arrhenius_model;
pub mod cli;
pub mod demo;
pub mod element;
pub mod gdb_remote;
pub mod physics;
pub mod plot;
pub mod station;
pub mod stationdb;
