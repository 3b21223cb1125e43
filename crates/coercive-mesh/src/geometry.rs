//! The input of meshing: points, straight segments, circular arcs, named regions found from
//! a point inside them, holes, sizes, curve pairs and rigid groups.
//!
//! A [`Geometry`] is a plain value built with methods (or deserialised with serde). Nothing
//! is checked while building except what the type system cannot express cheaply; every
//! check happens in [`Geometry::mesh`], which returns a typed [`MeshError`] naming the
//! offending item.
//!
//! # Policies
//! - **Crossing and touching curves are split at their intersections.** A magnet drawn
//!   sitting on a plate's edge, a T-junction or two overlapping collinear segments all give
//!   one shared curve piece; the node list of every input curve still runs from its start to
//!   its end through the nodes of the shared pieces.
//! - **Coincident points** (closer than [`MeshSettings::snap_tolerance`] times the drawing's
//!   diagonal) are merged into one point.
//! - **Areas** are found by flood fill from each region's point without crossing curves.
//!   A curve with the same region on both sides (a dangling line) is kept in the mesh as a
//!   chain of edges (useful for paths). An enclosed area with no region or hole point is an
//!   error ([`MeshError::AreaWithoutRegion`]); the area outside every closed outline is not
//!   meshed.
//! - **Sizes are lengths** (m): the target edge length of triangles.
//! - **Curves outside every region** (construction lines) are not meshed: their node
//!   lists in the [`Mesh`] are empty. Points on no curve are kept as mesh nodes when they
//!   lie inside a region.
//! - **Exact duplicate segments** (two segments joining the same two points) are refused
//!   ([`MeshError::DuplicateSegment`]); [`Geometry::add_polygon`] and
//!   [`Geometry::add_rectangle`] reuse an existing segment instead of adding a duplicate.

use serde::{Deserialize, Serialize};

use crate::{CurveId, Mesh, MeshError, Point2, PointId, QualityReport};

/// One input point with an optional local size.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct GeometryPoint {
    /// Position (m).
    pub position: Point2,
    /// Target element size next to this point (m), if any.
    pub size: Option<f64>,
}

/// The shape of an input curve.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
#[serde(tag = "kind", rename_all = "snake_case")]
pub enum CurveShape {
    /// A straight segment from `start` to `end`.
    Segment {
        /// First point.
        start: PointId,
        /// Last point.
        end: PointId,
    },
    /// A circular arc running counter-clockwise about `centre` from `start` to `end`
    /// (a full circle is made of several arcs). Both points must lie at the same distance
    /// from the centre (relative tolerance 1e-6).
    Arc {
        /// First point.
        start: PointId,
        /// Last point.
        end: PointId,
        /// Centre of the circle (m).
        centre: Point2,
    },
}

impl CurveShape {
    /// The curve's first point.
    pub fn start(&self) -> PointId {
        match *self {
            CurveShape::Segment { start, .. } | CurveShape::Arc { start, .. } => start,
        }
    }

    /// The curve's last point.
    pub fn end(&self) -> PointId {
        match *self {
            CurveShape::Segment { end, .. } | CurveShape::Arc { end, .. } => end,
        }
    }
}

/// One input curve: a segment or an arc, with an optional name (names group curves and may
/// repeat) and an optional local size.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct GeometryCurve {
    /// Segment or arc.
    pub shape: CurveShape,
    /// Name shared by a group of curves (e.g. `outer`), if any.
    pub name: Option<String>,
    /// Target element size along this curve (m), if any.
    pub size: Option<f64>,
}

/// A named area found from a point inside it; a hole is such an area left unmeshed.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct GeometryRegion {
    /// The region's name (unique among regions and holes).
    pub name: String,
    /// A point strictly inside the area, not on any curve (m).
    pub seed: Point2,
    /// True for a hole (not meshed).
    pub hole: bool,
    /// Largest element size inside this region (m), if any.
    pub size: Option<f64>,
}

/// A set of regions meshed once and then moved as a whole (see [`crate::RigidMesher`]).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct RigidGroup {
    /// The group's name (unique among groups).
    pub name: String,
    /// The names of the regions forming the group.
    pub regions: Vec<String>,
}

/// Two curves meshed with matched nodes: node `i` of `first` corresponds to node `i` of
/// `second`, counted from each curve's start.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct CurvePair {
    /// The first curve.
    pub first: CurveId,
    /// The second curve (typically a rotated or translated copy of the first).
    pub second: CurveId,
}

/// Settings of the mesher. All lengths in metres; `None` means "derived from the drawing".
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct MeshSettings {
    /// Largest element size anywhere (m). Default: the drawing's diagonal divided by 20.
    pub max_size: Option<f64>,
    /// Growth limit `g` (dimensionless): the size at `x` is at most `h_f + g * dist(x, f)`
    /// for every feature `f` of size `h_f`. Default 0.3.
    pub growth: f64,
    /// Smallest angle of every triangle (degrees) except next to smaller input angles.
    /// Default 28; values above 33 are refused (refinement may not terminate).
    pub min_angle_deg: f64,
    /// Guard against runaway meshes: meshing fails, before any work, when the size field
    /// asks for more triangles than this, and stops if refinement reaches it. Default 10
    /// million; the caller may raise it.
    pub max_triangles: usize,
    /// Largest distance between an arc and the chords of its mesh edges (m).
    /// Default: the drawing's diagonal times 2e-4.
    pub chord_tolerance: Option<f64>,
    /// Elements across the narrowest gap between two curves (the automatic local feature
    /// size): sizes next to a gap of width `w` are at most `w / elements_across_gap`.
    /// Default 3; 0 switches the automatic size off.
    pub elements_across_gap: f64,
    /// Points closer than this fraction of the drawing's diagonal are merged. Default 1e-9.
    pub snap_tolerance: f64,
}

impl Default for MeshSettings {
    fn default() -> Self {
        Self {
            max_size: None,
            growth: 0.3,
            min_angle_deg: 28.0,
            max_triangles: 10_000_000,
            chord_tolerance: None,
            elements_across_gap: 3.0,
            snap_tolerance: 1e-9,
        }
    }
}

/// A planar drawing to be meshed: points, curves, regions, holes, sizes, curve pairs and
/// rigid groups. Coordinates in metres.
///
/// ```
/// use coercive_mesh::{Geometry, Point2};
/// let mut g = Geometry::new();
/// g.add_rectangle(Point2::new(0.0, 0.0), Point2::new(0.1, 0.05));
/// g.add_circle(Point2::new(0.05, 0.025), 0.01);
/// g.add_region("air", Point2::new(0.01, 0.01));
/// g.add_region("wire", Point2::new(0.05, 0.025));
/// g.set_region_size("wire", 0.002);
/// let mesh = g.mesh().unwrap();
/// assert_eq!(mesh.regions().len(), 2);
/// ```
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct Geometry {
    /// Input points, indexed by [`PointId`].
    pub points: Vec<GeometryPoint>,
    /// Input curves, indexed by [`CurveId`].
    pub curves: Vec<GeometryCurve>,
    /// Regions and holes, in the order added (meshed regions keep this order in the mesh).
    pub regions: Vec<GeometryRegion>,
    /// Curve pairs meshed with matched nodes.
    pub curve_pairs: Vec<CurvePair>,
    /// Rigid groups.
    pub rigid_groups: Vec<RigidGroup>,
    /// Mesher settings.
    pub settings: MeshSettings,
}

impl Geometry {
    /// An empty geometry with default settings.
    pub fn new() -> Self {
        Self::default()
    }

    /// Adds a point (m) and returns its id. A point at exactly the same coordinates as an
    /// existing one returns the existing id; nearly coincident points are merged when meshing.
    pub fn add_point(&mut self, position: Point2) -> PointId {
        if let Some(i) = self.points.iter().position(|p| p.position == position) {
            return PointId(i as u32);
        }
        self.points.push(GeometryPoint {
            position,
            size: None,
        });
        PointId((self.points.len() - 1) as u32)
    }

    /// Adds a point with a local size (m). A point inside a region that is on no curve is
    /// kept as a mesh node.
    pub fn add_point_with_size(&mut self, position: Point2, size: f64) -> PointId {
        let id = self.add_point(position);
        self.set_point_size(id, size);
        id
    }

    /// Sets the target element size next to a point (m).
    ///
    /// # Panics
    /// If `point` was not returned by this geometry (a programming error, not bad input).
    pub fn set_point_size(&mut self, point: PointId, size: f64) {
        self.points[point.index()].size = Some(size);
    }

    /// Adds a straight segment between two points and returns its id.
    pub fn add_segment(&mut self, start: PointId, end: PointId) -> CurveId {
        self.push_curve(CurveShape::Segment { start, end })
    }

    /// Adds a circular arc running counter-clockwise about `centre` (m) from `start` to
    /// `end`. The radii of the two ends are checked when meshing.
    pub fn add_arc(&mut self, start: PointId, end: PointId, centre: Point2) -> CurveId {
        self.push_curve(CurveShape::Arc { start, end, centre })
    }

    fn push_curve(&mut self, shape: CurveShape) -> CurveId {
        self.curves.push(GeometryCurve {
            shape,
            name: None,
            size: None,
        });
        CurveId((self.curves.len() - 1) as u32)
    }

    /// Adds a closed polygon through `corners` (m), in the given order, and returns its
    /// sides (side `i` joins corner `i` and corner `i + 1`). A side joining the same two
    /// points as an existing segment reuses that segment (an interface is one curve), so
    /// its id may run the other way; [`Geometry::add_segment`] itself never reuses.
    pub fn add_polygon(&mut self, corners: &[Point2]) -> Vec<CurveId> {
        let ids: Vec<PointId> = corners.iter().map(|&p| self.add_point(p)).collect();
        (0..ids.len())
            .map(|i| {
                let (a, b) = (ids[i], ids[(i + 1) % ids.len()]);
                self.find_segment(a, b)
                    .unwrap_or_else(|| self.add_segment(a, b))
            })
            .collect()
    }

    /// The segment joining points `a` and `b` (either way), if any.
    pub fn find_segment(&self, a: PointId, b: PointId) -> Option<CurveId> {
        self.curves
            .iter()
            .position(|c| match c.shape {
                CurveShape::Segment { start, end } => {
                    (start == a && end == b) || (start == b && end == a)
                }
                CurveShape::Arc { .. } => false,
            })
            .map(|i| CurveId(i as u32))
    }

    /// Adds an axis-aligned rectangle from its lower-left and upper-right corners (m).
    /// Returns its sides counter-clockwise: bottom, right, top, left (a side equal to an
    /// existing segment reuses it, see [`Geometry::add_polygon`]).
    pub fn add_rectangle(&mut self, min: Point2, max: Point2) -> [CurveId; 4] {
        let c = self.add_polygon(&[
            min,
            Point2::new(max.x, min.y),
            max,
            Point2::new(min.x, max.y),
        ]);
        [c[0], c[1], c[2], c[3]]
    }

    /// Adds a full circle (centre and radius in m) as four quarter arcs, counter-clockwise
    /// from angle 0, and returns them.
    pub fn add_circle(&mut self, centre: Point2, radius: f64) -> Vec<CurveId> {
        let ids: Vec<PointId> = (0..4)
            .map(|k| {
                // Exact quarter positions avoid rounding noise from cos(pi/2).
                let (dx, dy) = [(1.0, 0.0), (0.0, 1.0), (-1.0, 0.0), (0.0, -1.0)][k];
                self.add_point(Point2::new(centre.x + radius * dx, centre.y + radius * dy))
            })
            .collect();
        (0..4)
            .map(|k| self.add_arc(ids[k], ids[(k + 1) % 4], centre))
            .collect()
    }

    /// Gives a curve a name (names may repeat: a name groups curves, e.g. `outer`).
    ///
    /// # Panics
    /// If `curve` was not returned by this geometry.
    pub fn name_curve(&mut self, curve: CurveId, name: &str) {
        self.curves[curve.index()].name = Some(name.to_string());
    }

    /// Sets the target element size along a curve (m).
    ///
    /// # Panics
    /// If `curve` was not returned by this geometry.
    pub fn set_curve_size(&mut self, curve: CurveId, size: f64) {
        self.curves[curve.index()].size = Some(size);
    }

    /// Adds a named region found from a point strictly inside it (m).
    pub fn add_region(&mut self, name: &str, seed: Point2) {
        self.regions.push(GeometryRegion {
            name: name.to_string(),
            seed,
            hole: false,
            size: None,
        });
    }

    /// Adds a named hole (an area that is not meshed) found from a point inside it (m).
    pub fn add_hole(&mut self, name: &str, seed: Point2) {
        self.regions.push(GeometryRegion {
            name: name.to_string(),
            seed,
            hole: true,
            size: None,
        });
    }

    /// Sets the largest element size inside a region (m). Returns false (and changes
    /// nothing) when no region has this name.
    pub fn set_region_size(&mut self, name: &str, size: f64) -> bool {
        match self.regions.iter_mut().find(|r| r.name == name) {
            Some(r) => {
                r.size = Some(size);
                true
            }
            None => false,
        }
    }

    /// Declares two curves a pair meshed with matched nodes (node `i` of `first` matches
    /// node `i` of `second`, both counted from the curve's start).
    pub fn add_curve_pair(&mut self, first: CurveId, second: CurveId) {
        self.curve_pairs.push(CurvePair { first, second });
    }

    /// Declares a rigid group made of the named regions.
    pub fn add_rigid_group(&mut self, name: &str, regions: &[&str]) {
        self.rigid_groups.push(RigidGroup {
            name: name.to_string(),
            regions: regions.iter().map(|s| s.to_string()).collect(),
        });
    }

    /// Replaces the mesher settings.
    pub fn set_settings(&mut self, settings: MeshSettings) {
        self.settings = settings;
    }

    /// Meshes the geometry.
    ///
    /// # Errors
    /// A [`MeshError`] naming the offending item for every kind of bad input (see the
    /// variants), or [`MeshError::TooManyTriangles`] when the sizes ask for more triangles
    /// than [`MeshSettings::max_triangles`].
    pub fn mesh(&self) -> Result<Mesh, MeshError> {
        crate::mesher::mesh_only(self)
    }

    /// Meshes the geometry and returns the quality report with the mesh.
    ///
    /// # Errors
    /// As [`Geometry::mesh`].
    pub fn mesh_with_report(&self) -> Result<(Mesh, QualityReport), MeshError> {
        crate::mesher::mesh_geometry(self)
    }
}
