//! tirtrace: an offline light-guide calculator.
//!
//! The core is pure Rust with no web types: refractive-index models ([`index`]), interface optics
//! ([`interface`]), closed-form guide results ([`guide`]), the quick-look design document and its
//! figures ([`quick`]), a 2D meridional ray fan for drawings ([`fan`]) and charts generic over the
//! plotters backend ([`chart`]). The wasm-bindgen layer (`web`, wasm32 only) only converts.
//!
//! Conventions: every refractive index leaving [`index::library`] is relative to air; angles are
//! radians inside the core and degrees only in documents; units are carried in names.
#![warn(missing_docs)]

pub mod absorption;
pub mod chart;
pub mod check;
pub mod coating_outline;
pub mod corner_check;
pub mod error;
pub mod exit_figures;
pub mod export;
pub mod faces;
pub mod fan;
pub mod far_field;
pub mod geometry;
pub mod guide;
pub mod index;
pub mod interface;
pub mod limits;
pub mod outline;
pub mod problems;
pub mod quick;
pub mod reading;
pub mod scenario;
pub mod schema;
pub mod source;
pub mod stats;
pub mod study;
pub mod trace;
pub mod units;

#[cfg(target_arch = "wasm32")]
mod web;

pub use error::{FieldError, RunError, TirError};
