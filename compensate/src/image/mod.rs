//! The binary table image: layout, zero-copy validated parser, encoder.
//!
//! See the crate documentation for the byte-by-byte layout.

mod bytes;
mod column;
mod encode;
mod error;
pub mod layout;
mod tables;
mod validate;
mod view;

pub use column::{ColumnF32, ColumnQ};
pub use encode::{AxisSpec, GridSpec, ImageBuilder, MapSpec, Number};
pub use error::{EncodeError, ImageError, Section};
pub use layout::{ChannelAxis, NumberFormat, QFormat, RawLimits, SignalKind, Unit};
pub use tables::{TablesF32, TablesQ};
pub use view::TableView;
