//! The meshing pipeline: validate, split intersections, size field, constrained Delaunay
//! triangulation, refinement, labelling, output.

pub(crate) mod rigid;

use crate::{Geometry, Mesh, MeshError, QualityReport};

/// Meshes a geometry (see [`Geometry::mesh_with_report`]).
pub(crate) fn mesh_geometry(_geometry: &Geometry) -> Result<(Mesh, QualityReport), MeshError> {
    Err(MeshError::TriangulationFailed {
        what: "not yet implemented".to_string(),
    })
}
