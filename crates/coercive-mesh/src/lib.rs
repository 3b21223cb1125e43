//! Geometry and constrained Delaunay mesher for Coercive.
//!
//! The mesher knows nothing of physics: it turns a [`Geometry`] (points, curves, named
//! regions, sizes) into a [`Mesh`] (nodes, counter-clockwise triangles, the region of every
//! triangle and the ordered nodes of every input curve). Coordinates are metres.
//!
//! # Use
//! Build a [`Geometry`] (points, segments, arcs, regions found from a point inside them,
//! holes, sizes, curve pairs, rigid groups), then call [`Geometry::mesh`] or
//! [`Geometry::mesh_with_report`] (a [`QualityReport`]). For studies that move parts,
//! [`Geometry::prepare_rigid`] meshes the rigid groups once and
//! [`RigidMesher::mesh_at`] re-meshes only the rest for each [`Placement`].
//!
//! # Guarantees
//! - Every triangle is counter-clockwise, belongs to one region (found by flood fill from
//!   the region's point, so nested regions are never mistaken for holes), and every input
//!   curve's node list is a chain of mesh edges from its start to its end.
//! - Minimum angle at least [`MeshSettings::min_angle_deg`] (default 28 degrees) except
//!   next to input angles below it (listed in [`QualityReport::small_input_angles`]) and,
//!   for rigid meshes, a few triangles next to the fixed outlines of the moved groups
//!   (counted in [`QualityReport::triangles_below_min_angle`]; see [`RigidMesher`]).
//! - No triangle's longest edge exceeds the local size at its centroid (global, region,
//!   curve and point sizes, the automatic gap size, all limited by the growth rate).
//! - Every node of an arc lies on its circle: refinement splits an arc edge at the point
//!   of the arc over the chord point (it keeps the chord point only where that arc point
//!   would leave the two triangles beside the edge, which needs another curve closer than
//!   the sagitta).
//! - The same input gives the same mesh, bit for bit, whatever the thread count.
//! - Bad input gives a [`MeshError`] naming the item; a panic inside the triangulation
//!   library is caught and returned as [`MeshError::TriangulationFailed`].
//!
//! # Method
//! Input is validated and snapped; crossing, touching and overlapping curves are split
//! into shared pieces; a coarse constrained Delaunay triangulation (spade) checks the
//! region points; curves are discretised at the local size (pairs with matched
//! fractions); the fine triangulation is refined by our own Delaunay refinement
//! (Ruppert 1995; Shewchuk 2002: circumcentre insertion, encroached-edge splitting with
//! concentric shells, the small-angle rule of Miller, Pav and Walkington 2005). Nodes are
//! numbered along a Hilbert curve and triangles sorted by their first node.
#![warn(missing_docs)]
#![deny(rustdoc::broken_intra_doc_links)]

mod error;
mod geometry;
mod ids;
mod mesh;
mod mesher;
mod point;
mod quality;
mod rigid;
pub mod structured;
pub mod svg;

pub use error::MeshError;
pub use geometry::{
    CurvePair, CurveShape, Geometry, GeometryCurve, GeometryPoint, GeometryRegion, MeshSettings,
    RigidGroup,
};
pub use ids::{CurveId, PointId, RegionId, TriangleId, VertexId};
pub use mesh::{Mesh, MeshCurve, MeshCurvePair, MeshRegion};
pub use point::Point2;
pub use quality::{triangle_angles_deg, QualityReport, RegionQuality, SmallInputAngle};
pub use rigid::{Placement, RigidMesher};
