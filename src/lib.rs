//! Coercive: 2D finite-element magnetostatics.
#![warn(missing_docs)]
pub use coercive_fem as fem;
pub use coercive_mesh as mesh;
pub use coercive_post as post;

pub mod case;
pub mod materials;
pub mod solve;
pub mod study;
pub mod switching;
