//! The output of meshing: nodes, counter-clockwise triangles, regions and curve node lists.

use serde::{Deserialize, Serialize};

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
/// Every triangle is counter-clockwise with positive area, every vertex index is in range,
/// every triangle belongs to exactly one region, and every curve's node list is a chain of
/// mesh edges. [`Mesh::sanity_check`] verifies all of these.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Mesh {
    vertices: Vec<Point2>,
    triangles: Vec<[VertexId; 3]>,
    triangle_regions: Vec<RegionId>,
    regions: Vec<MeshRegion>,
    curves: Vec<MeshCurve>,
    curve_pairs: Vec<MeshCurvePair>,
}

impl Mesh {
    /// Builds a mesh from its parts and checks it (see [`Mesh::sanity_check`]).
    ///
    /// # Errors
    /// [`MeshError::InvalidMesh`] naming the first broken invariant.
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
    pub fn triangle_region(&self, t: TriangleId) -> RegionId {
        self.triangle_regions[t.index()]
    }

    /// The corner coordinates of one triangle (m), counter-clockwise.
    pub fn triangle_points(&self, t: TriangleId) -> [Point2; 3] {
        let [a, b, c] = self.triangles[t.index()];
        [self.vertex(a), self.vertex(b), self.vertex(c)]
    }

    /// The area of one triangle (m^2), positive.
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

    /// Checks every structural invariant listed in the type's documentation.
    ///
    /// # Errors
    /// [`MeshError::InvalidMesh`] describing the first violation found.
    pub fn sanity_check(&self) -> Result<(), MeshError> {
        let bad = |what: String| Err(MeshError::InvalidMesh { what });
        let nv = self.vertices.len();
        if let Some(i) = self.vertices.iter().position(|p| !p.is_finite()) {
            return bad(format!("vertex {i} has a non-finite coordinate"));
        }
        if self.triangle_regions.len() != self.triangles.len() {
            return bad(format!(
                "{} triangles but {} triangle regions",
                self.triangles.len(),
                self.triangle_regions.len()
            ));
        }
        for (t, tri) in self.triangles.iter().enumerate() {
            if tri.iter().any(|v| v.index() >= nv) {
                return bad(format!("triangle {t} refers to a vertex out of range"));
            }
            if self.triangle_regions[t].index() >= self.regions.len() {
                return bad(format!("triangle {t} refers to a region out of range"));
            }
            if self.triangle_area(TriangleId(t as u32)) <= 0.0 {
                return bad(format!(
                    "triangle {t} is not counter-clockwise with positive area"
                ));
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
            for w in curve.nodes.windows(2) {
                if w.iter().any(|v| v.index() >= nv) {
                    return bad(format!("curve {c} refers to a vertex out of range"));
                }
                if !edges.contains(&(w[0].min(w[1]), w[0].max(w[1]))) {
                    return bad(format!(
                        "curve {c}: nodes {} and {} are not joined by a mesh edge",
                        w[0].0, w[1].0
                    ));
                }
            }
        }
        for (p, pair) in self.curve_pairs.iter().enumerate() {
            let (a, b) = (pair.first.index(), pair.second.index());
            if a >= self.curves.len() || b >= self.curves.len() {
                return bad(format!("curve pair {p} refers to a curve out of range"));
            }
            if self.curves[a].nodes.len() != self.curves[b].nodes.len() {
                return bad(format!(
                    "curve pair {p}: {} nodes on the first curve, {} on the second",
                    self.curves[a].nodes.len(),
                    self.curves[b].nodes.len()
                ));
            }
        }
        Ok(())
    }
}
