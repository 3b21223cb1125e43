//! Rigid groups: regions meshed once and then moved as a whole while only the rest is
//! meshed again.
//!
//! # Policy
//! - The group's triangles, nodes and boundary nodes are kept exactly: after a move the
//!   group's node coordinates are the original ones moved by the placement, in the same
//!   order, and they come first in the mesh's numbering (then the group's triangles come
//!   first too), so per-triangle state (e.g. magnet hysteresis) stays valid.
//! - The group's outline is fixed: refinement of the surrounding air never splits it. The
//!   first mesh discretises the whole outline uniformly at the finest size found along it
//!   at the drawn placement (so it is as fine everywhere as where it was closest to other
//!   parts: a turning rotor), or finer with
//!   [`Geometry::prepare_rigid_with_outline_size`] (a gap closing below the drawn one),
//!   then refines it freely. Where a new point would encroach the fixed outline, the air
//!   refinement inserts an off-centre of the bad triangle or the apex of a well-shaped
//!   triangle on the outline edge instead, splitting the other curves in the way (not
//!   below half the outline edge, which bounds the work). A few air triangles next to the
//!   outline may still stay below the requested minimum angle; the quality report counts
//!   them ([`crate::QualityReport::triangles_below_min_angle`]).
//! - Holes surrounded by a group move with it; a hole bordering both a group and other
//!   parts is refused. Regions that are not in a group, even enclosed by one, stay where
//!   they are drawn (their point must stay uncovered).
//! - A moved group must stay separated from the fixed geometry by air: if its outline
//!   crosses or touches a fixed curve, or leaves the meshed area,
//!   [`MeshError::RigidGroup`] names the group and the place.

use serde::{Deserialize, Serialize};

use crate::{Geometry, Mesh, MeshError, Point2};

/// Where a rigid group is placed: first rotated by `rotation_rad` (counter-clockwise,
/// radians) about `about` (m), then translated by `translation` (m).
#[derive(Clone, Copy, Debug, PartialEq, Default, Serialize, Deserialize)]
pub struct Placement {
    /// Translation applied after the rotation (m).
    pub translation: Point2,
    /// Counter-clockwise rotation (rad).
    pub rotation_rad: f64,
    /// Centre of the rotation (m).
    pub about: Point2,
}

impl Placement {
    /// A pure translation (m).
    pub fn translation(dx: f64, dy: f64) -> Self {
        Self {
            translation: Point2::new(dx, dy),
            ..Self::default()
        }
    }

    /// A pure rotation by `angle_rad` (counter-clockwise) about `about` (m).
    pub fn rotation(angle_rad: f64, about: Point2) -> Self {
        Self {
            translation: Point2::default(),
            rotation_rad: angle_rad,
            about,
        }
    }

    /// Applies the placement to a point.
    pub fn apply(&self, p: Point2) -> Point2 {
        let (s, c) = self.rotation_rad.sin_cos();
        let (dx, dy) = (p.x - self.about.x, p.y - self.about.y);
        Point2::new(
            self.about.x + c * dx - s * dy + self.translation.x,
            self.about.y + s * dx + c * dy + self.translation.y,
        )
    }
}

/// A geometry whose rigid groups have been meshed once; [`RigidMesher::mesh_at`] re-meshes
/// the rest for any placement of the groups.
#[derive(Clone, Debug)]
pub struct RigidMesher {
    pub(crate) inner: crate::mesher::rigid::Prepared,
}

impl Geometry {
    /// Meshes the rigid groups once (at their drawn placement) for repeated
    /// [`RigidMesher::mesh_at`] calls.
    ///
    /// # Errors
    /// Every error of [`Geometry::mesh`], and [`MeshError::RigidGroup`] when the geometry
    /// has no rigid group, a group names an unknown region, a region is in two groups, or a
    /// group touches the fixed geometry.
    pub fn prepare_rigid(&self) -> Result<RigidMesher, MeshError> {
        self.prepare_rigid_inner(None)
    }

    /// As [`Geometry::prepare_rigid`], with the groups' outlines discretised no coarser
    /// than `outline_size` (m). Choose it about as small as the narrowest gap the groups
    /// will be placed at (an outline edge much longer than the gap facing it leaves no
    /// room for well-shaped triangles, since the moved outline is never split).
    ///
    /// # Errors
    /// As [`Geometry::prepare_rigid`], and [`MeshError::InvalidSize`] when `outline_size` is not
    /// a positive finite length.
    pub fn prepare_rigid_with_outline_size(
        &self,
        outline_size: f64,
    ) -> Result<RigidMesher, MeshError> {
        if !(outline_size.is_finite() && outline_size > 0.0) {
            return Err(MeshError::InvalidSize {
                item: "rigid group outline size".into(),
                value: outline_size,
                why: "must be a positive finite length (m)".into(),
            });
        }
        self.prepare_rigid_inner(Some(outline_size))
    }

    fn prepare_rigid_inner(&self, outline_size: Option<f64>) -> Result<RigidMesher, MeshError> {
        crate::mesher::cdt::guarded("meshing rigid groups", || {
            crate::mesher::rigid::prepare(self, outline_size)
        })?
        .map(|inner| RigidMesher { inner })
    }
}

impl RigidMesher {
    /// Meshes with the named groups placed as given (groups not listed stay where drawn).
    ///
    /// # Errors
    /// [`MeshError::RigidGroup`] for an unknown group name or a group overlapping the fixed
    /// geometry; [`MeshError::TooManyTriangles`] as for [`Geometry::mesh`].
    pub fn mesh_at(&self, placements: &[(&str, Placement)]) -> Result<Mesh, MeshError> {
        crate::mesher::cdt::guarded("meshing around rigid groups", || {
            crate::mesher::rigid::mesh_at(&self.inner, placements, false)
        })?
        .map(|(m, _)| m)
    }

    /// As [`RigidMesher::mesh_at`], with the quality report of the whole mesh.
    ///
    /// # Errors
    /// As [`RigidMesher::mesh_at`].
    pub fn mesh_at_with_report(
        &self,
        placements: &[(&str, Placement)],
    ) -> Result<(Mesh, crate::QualityReport), MeshError> {
        crate::mesher::cdt::guarded("meshing around rigid groups", || {
            crate::mesher::rigid::mesh_at(&self.inner, placements, true)
        })?
        .and_then(|(m, r)| {
            r.map(|r| (m, r))
                .ok_or_else(|| MeshError::TriangulationFailed {
                    what: "no quality report".into(),
                })
        })
    }

    /// Number of nodes belonging to the rigid groups: nodes `0..n` of every mesh returned by
    /// [`RigidMesher::mesh_at`] are the groups' nodes, in the same order every time.
    pub fn group_node_count(&self) -> usize {
        self.inner.group_node_count()
    }

    /// Number of triangles belonging to the rigid groups: triangles `0..n` of every mesh
    /// returned by [`RigidMesher::mesh_at`] are the groups' triangles, same order every time.
    pub fn group_triangle_count(&self) -> usize {
        self.inner.group_triangle_count()
    }
}
