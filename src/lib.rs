//! Coercive: 2D finite-element magnetostatics.
pub use coercive_fem as fem;
pub use coercive_mesh as mesh;
pub use coercive_post as post;
