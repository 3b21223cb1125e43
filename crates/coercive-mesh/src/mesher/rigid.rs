//! Rigid-group meshing.

use crate::{Geometry, Mesh, MeshError, Placement};

/// A geometry with its rigid groups meshed.
#[derive(Clone, Debug)]
pub(crate) struct Prepared {
    group_nodes: usize,
    group_triangles: usize,
}

impl Prepared {
    pub(crate) fn group_node_count(&self) -> usize {
        self.group_nodes
    }
    pub(crate) fn group_triangle_count(&self) -> usize {
        self.group_triangles
    }
}

pub(crate) fn prepare(_g: &Geometry) -> Result<Prepared, MeshError> {
    Err(MeshError::TriangulationFailed {
        what: "not yet implemented".to_string(),
    })
}

pub(crate) fn mesh_at(_p: &Prepared, _pl: &[(&str, Placement)]) -> Result<Mesh, MeshError> {
    Err(MeshError::TriangulationFailed {
        what: "not yet implemented".to_string(),
    })
}
