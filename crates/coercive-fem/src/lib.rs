//! Vector-potential finite-element magnetostatics for Coercive.
#![warn(missing_docs)]
#![deny(rustdoc::broken_intra_doc_links)]

pub mod bh;
pub mod material;

pub use bh::{BhCurve, BhKnot, BhTable};
pub use material::{
    LinearMagnet, MagnetDirection, Material, MaterialError, Response, SoftMagnetic, MU_0,
};
