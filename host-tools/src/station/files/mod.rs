//! Files that leave the station: atomic writes, exports for flashing, flashing through a debug server, running the end-of-line check on the part.

pub mod eol_target;
pub mod export;
pub mod flash;
pub mod output;
