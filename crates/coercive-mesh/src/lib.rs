//! Geometry and constrained Delaunay mesher for Coercive.
//!
//! The mesher knows nothing of physics: it turns a [`Geometry`] (points, curves, named
//! regions, sizes) into a [`Mesh`] (nodes, counter-clockwise triangles, the region of every
//! triangle and the ordered nodes of every input curve). Coordinates are metres.
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
