//! The mesher's error type.

use thiserror::Error;

/// Everything that can go wrong while describing or meshing a geometry. Each variant names
/// the offending item (and its position where useful).
#[derive(Debug, Clone, PartialEq, Error)]
#[non_exhaustive]
pub enum MeshError {
    /// A mesh whose structural invariants do not hold.
    #[error("invalid mesh: {what}")]
    InvalidMesh {
        /// The violated invariant.
        what: String,
    },
}
