//! Checks at held-out points: compensating recorded rows and comparing methods over a lot.

pub mod apply;
pub mod compare;
