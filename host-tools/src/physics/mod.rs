//! The full semiconductor model in f64: band structure, carrier statistics,
//! charge neutrality with several dopant species, mobility, transport and
//! piezoresistance.
//!
//! Data flow: [`model::Sample`] (material + dopants) --[`carriers::solve`]-->
//! [`carriers::CarrierState`] --[`mobility`], [`transport`], [`piezo`]-->
//! [`model::ModelPoint`].

pub mod carriers;
#[cfg(test)]
mod check;
pub mod constants;
pub mod dopant;
pub mod error;
pub mod fermi;
pub mod hall_factor;
pub mod material;
pub mod mobility;
pub mod model;
pub mod piezo;
pub mod transport;

pub use carriers::{CarrierState, solve};
pub use dopant::{Dopant, DopantKind, Species};
pub use error::ModelError;
pub use hall_factor::HallFactorSource;
pub use material::Material;
pub use model::{ModelPoint, Sample, evaluate};
