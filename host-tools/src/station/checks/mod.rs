//! Checks at held-out points: compensating recorded rows, comparing methods over a lot, and judging the end-of-line check run on a part.

pub mod apply;
pub mod compare;
pub mod eol;
