//! Files that leave the station: atomic writes, exports for flashing, flashing through a debug server.

pub mod export;
pub mod flash;
pub mod output;
