//! The station database: every chamber run, design, part fit, table image,
//! verification, end-of-line check and release of a station in one SQLite
//! file, so that for any serial one can say which chamber run, fit, design
//! and image (by CRC) it got and which checks it passed.
//!
//! [`open`] refuses a file that is not ours (exit 2 at the command line)
//! before changing anything; [`record`] writes, [`run`] takes a lot through
//! the chain part by part (resumable), [`query`] reads, [`figures`] gathers
//! what the HTML lot report shows.

pub mod figures;
pub mod query;
pub mod record;
pub mod run;
pub mod schema;

pub use schema::{Db, DbError, open};

/// The tool version recorded beside every row.
pub const TOOL_VERSION: &str = concat!("semidrift ", env!("CARGO_PKG_VERSION"));

/// Default database path of the commands that take `--db`.
pub const DEFAULT_DB: &str = "station.sqlite";
