//! The output of meshing: nodes, counter-clockwise triangles, regions and curve node lists.

use serde::{Deserialize, Deserializer, Serialize};

use crate::{CurveId, MeshError, Point2, RegionId, TriangleId, VertexId};

/// A meshed region: a named area of the geometry (holes are not meshed and do not appear).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct MeshRegion {
    /// The region's name, as given in the geometry.
    pub name: String,
    /// The rigid group this region belongs to, if any.
    pub rigid_group: Option<String>,
}

/// The mesh nodes lying on one input curve, ordered from the curve's start to its end.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct MeshCurve {
    /// The curve's name (names may repeat: curves sharing a name form a group, e.g. `outer`).
    pub name: Option<String>,
    /// Ordered nodes from the curve's start point to its end point (both included).
    pub nodes: Vec<VertexId>,
}

/// A pair of curves meshed with matched nodes: `first.nodes[i]` corresponds to
/// `second.nodes[i]` (for periodic and anti-periodic boundary conditions).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct MeshCurvePair {
    /// The first curve of the pair.
    pub first: CurveId,
    /// The second curve of the pair.
    pub second: CurveId,
}

/// A conforming triangulation of the plane (coordinates in metres).
///
/// # Guarantees
/// Every coordinate is finite, every triangle is counter-clockwise with an area that is not
/// degenerate (see [`Mesh::sanity_check`]), every vertex, region and curve index is in range,
/// every triangle belongs to exactly one region, region names are unique, and every curve's
/// node list is a chain of mesh edges. [`Mesh::sanity_check`] verifies all of these; a mesh
/// read with serde is checked the same way, so a stored mesh cannot bring back an index out
/// of range or an inverted triangle.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Mesh {
    vertices: Vec<Point2>,
    triangles: Vec<[VertexId; 3]>,
    triangle_regions: Vec<RegionId>,
    regions: Vec<MeshRegion>,
    curves: Vec<MeshCurve>,
    curve_pairs: Vec<MeshCurvePair>,
}

/// The serialised fields of a [`Mesh`], read unchecked and then validated.
#[derive(Deserialize)]
#[serde(rename = "Mesh")]
struct MeshFields {
    vertices: Vec<Point2>,
    triangles: Vec<[VertexId; 3]>,
    triangle_regions: Vec<RegionId>,
    regions: Vec<MeshRegion>,
    curves: Vec<MeshCurve>,
    curve_pairs: Vec<MeshCurvePair>,
}

impl<'de> Deserialize<'de> for Mesh {
    /// Reads a mesh and runs [`Mesh::sanity_check`] on it; a broken invariant becomes the
    /// deserialiser's error, with the message of the [`MeshError`] naming the item.
    fn deserialize<D: Deserializer<'de>>(deserializer: D) -> Result<Self, D::Error> {
        let f = MeshFields::deserialize(deserializer)?;
        Mesh::from_parts(
            f.vertices,
            f.triangles,
            f.triangle_regions,
            f.regions,
            f.curves,
            f.curve_pairs,
        )
        .map_err(serde::de::Error::custom)
    }
}

/// A triangle whose doubled area is at most this fraction of its longest edge squared is
/// degenerate: far above round-off (about 1e-16), far below any triangle a mesher keeps
/// (a 1-degree sliver still has about 1e-2).
const DEGENERATE_AREA_RATIO: f64 = 1e-12;

impl Mesh {
    /// Builds a mesh from its parts and checks it (see [`Mesh::sanity_check`]).
    ///
    /// # Errors
    /// [`MeshError::InvalidMeshItem`] (or [`MeshError::InvalidMesh`]) naming the first broken
    /// invariant (see [`Mesh::sanity_check`]).
    pub fn from_parts(
        vertices: Vec<Point2>,
        triangles: Vec<[VertexId; 3]>,
        triangle_regions: Vec<RegionId>,
        regions: Vec<MeshRegion>,
        curves: Vec<MeshCurve>,
        curve_pairs: Vec<MeshCurvePair>,
    ) -> Result<Self, MeshError> {
        let mesh = Self {
            vertices,
            triangles,
            triangle_regions,
            regions,
            curves,
            curve_pairs,
        };
        mesh.sanity_check()?;
        Ok(mesh)
    }

    /// Builds a mesh from its parts without checking (the mesher's own output, checked by
    /// its tests).
    pub(crate) fn from_parts_unchecked(
        vertices: Vec<Point2>,
        triangles: Vec<[VertexId; 3]>,
        triangle_regions: Vec<RegionId>,
        regions: Vec<MeshRegion>,
        curves: Vec<MeshCurve>,
        curve_pairs: Vec<MeshCurvePair>,
    ) -> Self {
        Self {
            vertices,
            triangles,
            triangle_regions,
            regions,
            curves,
            curve_pairs,
        }
    }

    /// Node coordinates (m).
    pub fn vertices(&self) -> &[Point2] {
        &self.vertices
    }

    /// Coordinates of one node (m).
    ///
    /// # Panics
    /// If the id is out of range; [`Mesh::try_vertex`] returns an error instead.
    pub fn vertex(&self, v: VertexId) -> Point2 {
        self.vertices[v.index()]
    }

    /// Triangles as counter-clockwise vertex triples.
    pub fn triangles(&self) -> &[[VertexId; 3]] {
        &self.triangles
    }

    /// The region of every triangle, indexed like [`Mesh::triangles`].
    pub fn triangle_regions(&self) -> &[RegionId] {
        &self.triangle_regions
    }

    /// The region of one triangle.
    ///
    /// # Panics
    /// If the id is out of range; [`Mesh::try_triangle_region`] returns an error instead.
    pub fn triangle_region(&self, t: TriangleId) -> RegionId {
        self.triangle_regions[t.index()]
    }

    /// The corner coordinates of one triangle (m), counter-clockwise.
    ///
    /// # Panics
    /// If the id is out of range; [`Mesh::try_triangle_points`] returns an error instead.
    pub fn triangle_points(&self, t: TriangleId) -> [Point2; 3] {
        let [a, b, c] = self.triangles[t.index()];
        [self.vertex(a), self.vertex(b), self.vertex(c)]
    }

    /// The area of one triangle (m^2), positive.
    ///
    /// # Panics
    /// If the id is out of range; [`Mesh::try_triangle_area`] returns an error instead.
    pub fn triangle_area(&self, t: TriangleId) -> f64 {
        let [a, b, c] = self.triangle_points(t);
        0.5 * ((b.x - a.x) * (c.y - a.y) - (c.x - a.x) * (b.y - a.y))
    }

    /// Meshed regions, indexed by [`RegionId`].
    pub fn regions(&self) -> &[MeshRegion] {
        &self.regions
    }

    /// The id of the region with this name.
    pub fn region_by_name(&self, name: &str) -> Option<RegionId> {
        self.regions
            .iter()
            .position(|r| r.name == name)
            .map(|i| RegionId(i as u32))
    }

    /// The node lists of all input curves, indexed by [`CurveId`].
    pub fn curves(&self) -> &[MeshCurve] {
        &self.curves
    }

    /// The ordered nodes of one input curve.
    ///
    /// # Panics
    /// If the id is out of range; [`Mesh::try_curve_nodes`] returns an error instead.
    pub fn curve_nodes(&self, c: CurveId) -> &[VertexId] {
        &self.curves[c.index()].nodes
    }

    /// The ids of all curves carrying this name (empty if none).
    pub fn curves_named(&self, name: &str) -> Vec<CurveId> {
        self.curves
            .iter()
            .enumerate()
            .filter(|(_, c)| c.name.as_deref() == Some(name))
            .map(|(i, _)| CurveId(i as u32))
            .collect()
    }

    /// Curve pairs meshed with matched nodes.
    pub fn curve_pairs(&self) -> &[MeshCurvePair] {
        &self.curve_pairs
    }

    /// Total area of the triangles of one region (m^2).
    pub fn region_area(&self, r: RegionId) -> f64 {
        (0..self.triangles.len())
            .filter(|&t| self.triangle_regions[t] == r)
            .map(|t| self.triangle_area(TriangleId(t as u32)))
            .sum()
    }

    /// [`Mesh::vertex`] without panicking: the coordinates of one node (m).
    ///
    /// # Errors
    /// [`MeshError::UnknownId`] if the mesh has no vertex `v`.
    pub fn try_vertex(&self, v: VertexId) -> Result<Point2, MeshError> {
        self.vertices
            .get(v.index())
            .copied()
            .ok_or_else(|| unknown("vertex", v.0, self.vertices.len()))
    }

    /// [`Mesh::triangle_region`] without panicking: the region of one triangle.
    ///
    /// # Errors
    /// [`MeshError::UnknownId`] if the mesh has no triangle `t`.
    pub fn try_triangle_region(&self, t: TriangleId) -> Result<RegionId, MeshError> {
        self.triangle_regions
            .get(t.index())
            .copied()
            .ok_or_else(|| unknown("triangle", t.0, self.triangles.len()))
    }

    /// [`Mesh::triangle_points`] without panicking: the corners of one triangle (m),
    /// counter-clockwise.
    ///
    /// # Errors
    /// [`MeshError::UnknownId`] if the mesh has no triangle `t` (or, for a mesh that skipped
    /// its checks, no vertex of it).
    pub fn try_triangle_points(&self, t: TriangleId) -> Result<[Point2; 3], MeshError> {
        let [a, b, c] = *self
            .triangles
            .get(t.index())
            .ok_or_else(|| unknown("triangle", t.0, self.triangles.len()))?;
        Ok([
            self.try_vertex(a)?,
            self.try_vertex(b)?,
            self.try_vertex(c)?,
        ])
    }

    /// [`Mesh::triangle_area`] without panicking: the area of one triangle (m^2).
    ///
    /// # Errors
    /// As [`Mesh::try_triangle_points`].
    pub fn try_triangle_area(&self, t: TriangleId) -> Result<f64, MeshError> {
        let [a, b, c] = self.try_triangle_points(t)?;
        Ok(0.5 * ((b.x - a.x) * (c.y - a.y) - (c.x - a.x) * (b.y - a.y)))
    }

    /// One meshed region by id, without panicking.
    ///
    /// # Errors
    /// [`MeshError::UnknownId`] if the mesh has no region `r`.
    pub fn try_region(&self, r: RegionId) -> Result<&MeshRegion, MeshError> {
        self.regions
            .get(r.index())
            .ok_or_else(|| unknown("region", r.0, self.regions.len()))
    }

    /// [`Mesh::curve_nodes`] without panicking: the ordered nodes of one input curve.
    ///
    /// # Errors
    /// [`MeshError::UnknownId`] if the mesh has no curve `c`.
    pub fn try_curve_nodes(&self, c: CurveId) -> Result<&[VertexId], MeshError> {
        self.curves
            .get(c.index())
            .map(|curve| curve.nodes.as_slice())
            .ok_or_else(|| unknown("curve", c.0, self.curves.len()))
    }

    /// The distance (m) the regions `moving` must travel along the unit vector `direction` to
    /// touch the regions `fixed`: the gap between them as drawn, measured along the motion.
    ///
    /// Exact for the mesh's polygonal outlines: the first contact of two polygons in
    /// translation is a vertex of one meeting an edge of the other, so rays are cast along
    /// `direction` from every outline vertex of `moving` to the outline edges of `fixed`, and
    /// back from every outline vertex of `fixed`. Outline edges are the edges of a triangle of
    /// the set whose neighbour across the edge is outside the set (or absent).
    ///
    /// Returns `None` when the motion never brings the two together (they do not face each
    /// other along `direction`), when a set is empty or an id is out of range, or when
    /// `direction` is not a finite non-zero vector. Returns 0 when they already touch or overlap.
    pub fn gap_along(
        &self,
        moving: &[RegionId],
        fixed: &[RegionId],
        direction: [f64; 2],
    ) -> Option<f64> {
        let norm = direction[0].hypot(direction[1]);
        if !(norm > 0.0 && norm.is_finite()) {
            return None;
        }
        let d = [direction[0] / norm, direction[1] / norm];
        let moving_edges = self.outline_edges(moving);
        let fixed_edges = self.outline_edges(fixed);
        if moving_edges.is_empty() || fixed_edges.is_empty() {
            return None;
        }
        let extent = self
            .vertices
            .iter()
            .fold(0.0_f64, |m, p| m.max(p.x.abs()).max(p.y.abs()));
        let tol = 1e-12 * extent.max(f64::MIN_POSITIVE);
        let cross = |a: [f64; 2], b: [f64; 2]| a[0] * b[1] - a[1] * b[0];
        // The smallest t >= 0 with p + t dir on one of `edges`.
        let first_hit = |p: Point2, dir: [f64; 2], edges: &[(VertexId, VertexId)]| {
            let mut best: Option<f64> = None;
            for &(a, b) in edges {
                let (a, b) = (self.vertices[a.index()], self.vertices[b.index()]);
                let e = [b.x - a.x, b.y - a.y];
                let denom = cross(dir, e);
                if denom.abs() <= 1e-12 * e[0].hypot(e[1]) {
                    continue; // parallel: the edge's ends are vertices of the other cast
                }
                let ap = [a.x - p.x, a.y - p.y];
                let t = cross(ap, e) / denom;
                let s = cross(ap, dir) / denom;
                if (-1e-12..=1.0 + 1e-12).contains(&s) && t >= -tol {
                    let t = t.max(0.0);
                    best = Some(best.map_or(t, |m: f64| m.min(t)));
                }
            }
            best
        };
        let mut gap: Option<f64> = None;
        let mut keep = |t: Option<f64>| {
            if let Some(t) = t {
                gap = Some(gap.map_or(t, |g| g.min(t)));
            }
        };
        for v in outline_vertices(&moving_edges) {
            keep(first_hit(self.vertices[v.index()], d, &fixed_edges));
        }
        for v in outline_vertices(&fixed_edges) {
            keep(first_hit(
                self.vertices[v.index()],
                [-d[0], -d[1]],
                &moving_edges,
            ));
        }
        gap
    }

    /// The outline edges of a set of regions: edges of the set's triangles whose other side
    /// is not in the set. Empty if an id is out of range.
    fn outline_edges(&self, regions: &[RegionId]) -> Vec<(VertexId, VertexId)> {
        if regions.iter().any(|r| r.index() >= self.regions.len()) {
            return Vec::new();
        }
        let mut count = std::collections::HashMap::new();
        for (t, tri) in self.triangles.iter().enumerate() {
            if !regions.contains(&self.triangle_regions[t]) {
                continue;
            }
            for k in 0..3 {
                let (a, b) = (tri[k], tri[(k + 1) % 3]);
                *count.entry((a.min(b), a.max(b))).or_insert(0_u32) += 1;
            }
        }
        let mut edges: Vec<_> = count
            .into_iter()
            .filter(|&(_, n)| n == 1)
            .map(|(e, _)| e)
            .collect();
        edges.sort_unstable();
        edges
    }

    /// Checks every structural invariant listed in the type's documentation.
    ///
    /// A triangle is degenerate when twice its area is at most 1e-12 times its longest edge
    /// squared (collinear corners up to round-off); inverted when its signed area is negative
    /// (the mesher makes every triangle counter-clockwise).
    ///
    /// # Errors
    /// [`MeshError::InvalidMeshItem`] naming the first offending item, numbered from 1
    /// (triangle, vertex, region, curve or curve pair), or [`MeshError::InvalidMesh`] when the
    /// triangle and triangle-region lists differ in length.
    pub fn sanity_check(&self) -> Result<(), MeshError> {
        let bad = |item: String, why: String| Err(MeshError::InvalidMeshItem { item, why });
        let nv = self.vertices.len();
        let nr = self.regions.len();
        if let Some(i) = self.vertices.iter().position(|p| !p.is_finite()) {
            let p = self.vertices[i];
            return bad(
                format!("vertex {}", i + 1),
                format!("has a non-finite coordinate ({}, {})", p.x, p.y),
            );
        }
        if self.triangle_regions.len() != self.triangles.len() {
            return Err(MeshError::InvalidMesh {
                what: format!(
                    "{} triangles but {} triangle regions",
                    self.triangles.len(),
                    self.triangle_regions.len()
                ),
            });
        }
        for (r, region) in self.regions.iter().enumerate() {
            if let Some(first) = self.regions[..r].iter().position(|o| o.name == region.name) {
                return bad(
                    format!("region {} \"{}\"", r + 1, region.name),
                    format!("repeats the name of region {}", first + 1),
                );
            }
        }
        for (t, tri) in self.triangles.iter().enumerate() {
            let item = || {
                format!(
                    "triangle {} (vertices {}, {}, {})",
                    t + 1,
                    tri[0].index() + 1,
                    tri[1].index() + 1,
                    tri[2].index() + 1
                )
            };
            if let Some(v) = tri.iter().find(|v| v.index() >= nv) {
                return bad(
                    item(),
                    format!(
                        "refers to vertex {}, but the mesh has {nv} vertices",
                        v.index() + 1
                    ),
                );
            }
            let region = self.triangle_regions[t];
            let Some(region_name) = self.regions.get(region.index()).map(|r| &r.name) else {
                return bad(
                    item(),
                    format!(
                        "belongs to region {}, but the mesh has {nr} regions",
                        region.index() + 1
                    ),
                );
            };
            let [a, b, c] = tri.map(|v| self.vertices[v.index()]);
            let doubled = (b.x - a.x) * (c.y - a.y) - (c.x - a.x) * (b.y - a.y);
            let longest_sq = [(a, b), (b, c), (c, a)]
                .iter()
                .map(|(p, q)| (q.x - p.x).powi(2) + (q.y - p.y).powi(2))
                .fold(0.0, f64::max);
            if doubled < 0.0 {
                return bad(
                    format!("{} in region \"{region_name}\"", item()),
                    format!(
                        "is inverted (clockwise, area {} m^2); triangles run counter-clockwise",
                        0.5 * doubled
                    ),
                );
            }
            if doubled.is_nan() || doubled <= DEGENERATE_AREA_RATIO * longest_sq {
                return bad(
                    format!("{} in region \"{region_name}\"", item()),
                    format!(
                        "is degenerate (area {} m^2, longest edge {} m)",
                        0.5 * doubled,
                        longest_sq.sqrt()
                    ),
                );
            }
        }
        let mut edges = std::collections::HashSet::with_capacity(3 * self.triangles.len());
        for tri in &self.triangles {
            for k in 0..3 {
                let (a, b) = (tri[k], tri[(k + 1) % 3]);
                edges.insert((a.min(b), a.max(b)));
            }
        }
        for (c, curve) in self.curves.iter().enumerate() {
            let item = || match &curve.name {
                Some(name) => format!("curve {} \"{name}\"", c + 1),
                None => format!("curve {}", c + 1),
            };
            if let Some(v) = curve.nodes.iter().find(|v| v.index() >= nv) {
                return bad(
                    item(),
                    format!(
                        "refers to vertex {}, but the mesh has {nv} vertices",
                        v.index() + 1
                    ),
                );
            }
            for w in curve.nodes.windows(2) {
                if !edges.contains(&(w[0].min(w[1]), w[0].max(w[1]))) {
                    return bad(
                        item(),
                        format!(
                            "runs from vertex {} to vertex {}, which no triangle edge joins",
                            w[0].index() + 1,
                            w[1].index() + 1
                        ),
                    );
                }
            }
        }
        let nc = self.curves.len();
        for (p, pair) in self.curve_pairs.iter().enumerate() {
            let item = format!("curve pair {}", p + 1);
            let (a, b) = (pair.first.index(), pair.second.index());
            if a >= nc || b >= nc {
                return bad(
                    item,
                    format!(
                        "refers to curves {} and {}, but the mesh has {nc} curves",
                        a + 1,
                        b + 1
                    ),
                );
            }
            if self.curves[a].nodes.len() != self.curves[b].nodes.len() {
                return bad(
                    item,
                    format!(
                        "has {} nodes on its first curve ({}) but {} on its second ({})",
                        self.curves[a].nodes.len(),
                        a + 1,
                        self.curves[b].nodes.len(),
                        b + 1
                    ),
                );
            }
        }
        Ok(())
    }
}

/// The error of a `try_` accessor given an id the mesh does not hold.
fn unknown(kind: &str, id: u32, count: usize) -> MeshError {
    MeshError::UnknownId {
        kind: kind.to_string(),
        id,
        count,
    }
}

/// The distinct vertices of a list of edges, in increasing order.
fn outline_vertices(edges: &[(VertexId, VertexId)]) -> Vec<VertexId> {
    let mut v: Vec<VertexId> = edges.iter().flat_map(|&(a, b)| [a, b]).collect();
    v.sort_unstable();
    v.dedup();
    v
}
