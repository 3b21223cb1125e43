//! The quality report of a mesh: counts, angles, size ratios, per-region figures.

use serde::{Deserialize, Serialize};

use crate::Point2;

/// Figures of one meshed region.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct RegionQuality {
    /// The region's name.
    pub name: String,
    /// Number of triangles.
    pub triangles: usize,
    /// Total area (m^2).
    pub area: f64,
    /// Smallest angle of its triangles (degrees).
    pub min_angle_deg: f64,
}

/// An input angle smaller than the requested minimum angle: triangles there keep it.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct SmallInputAngle {
    /// The apex (m).
    pub at: Point2,
    /// The angle between the two curves (degrees).
    pub angle_deg: f64,
}

/// Figures describing a mesh's quality.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct QualityReport {
    /// Number of nodes.
    pub nodes: usize,
    /// Number of triangles.
    pub triangles: usize,
    /// Smallest angle of any triangle (degrees).
    pub min_angle_deg: f64,
    /// Centroid of the triangle with the smallest angle (m).
    pub min_angle_at: Point2,
    /// Largest angle of any triangle (degrees).
    pub max_angle_deg: f64,
    /// The requested minimum angle (degrees).
    pub requested_min_angle_deg: f64,
    /// Triangles with an angle below the requested minimum (all next to small input angles
    /// or fixed curves).
    pub triangles_below_min_angle: usize,
    /// Largest ratio of a triangle's longest edge to the local size at its centroid.
    pub max_size_ratio: f64,
    /// Per-region figures, in mesh region order.
    pub regions: Vec<RegionQuality>,
    /// Input angles smaller than the requested minimum.
    pub small_input_angles: Vec<SmallInputAngle>,
}

/// Computes the report of `mesh`; `size(p, region)` is the local size (m) at `p` in that
/// region.
pub(crate) fn compute(
    mesh: &crate::Mesh,
    size: impl Fn(Point2, crate::RegionId) -> f64,
    requested_min_angle_deg: f64,
    small_input_angles: Vec<SmallInputAngle>,
) -> QualityReport {
    let mut regions: Vec<RegionQuality> = mesh
        .regions()
        .iter()
        .map(|r| RegionQuality {
            name: r.name.clone(),
            triangles: 0,
            area: 0.0,
            min_angle_deg: 180.0,
        })
        .collect();
    let (mut min_a, mut max_a, mut max_ratio) = (180.0f64, 0.0f64, 0.0f64);
    let mut below = 0;
    let mut min_at = Point2::default();
    for (t, _) in mesh.triangles().iter().enumerate() {
        let id = crate::TriangleId(t as u32);
        let p = mesh.triangle_points(id);
        let angles = triangle_angles_deg(p);
        let lo = angles[0].min(angles[1]).min(angles[2]);
        let hi = angles[0].max(angles[1]).max(angles[2]);
        let c = Point2::new(
            (p[0].x + p[1].x + p[2].x) / 3.0,
            (p[0].y + p[1].y + p[2].y) / 3.0,
        );
        if lo < min_a {
            min_a = lo;
            min_at = c;
        }
        max_a = max_a.max(hi);
        if lo < requested_min_angle_deg - 1e-9 {
            below += 1;
        }
        let r = mesh.triangle_region(id);
        let longest = p[0]
            .distance(p[1])
            .max(p[1].distance(p[2]))
            .max(p[2].distance(p[0]));
        max_ratio = max_ratio.max(longest / size(c, r));
        let rq = &mut regions[r.index()];
        rq.triangles += 1;
        rq.area += mesh.triangle_area(id);
        rq.min_angle_deg = rq.min_angle_deg.min(lo);
    }
    QualityReport {
        nodes: mesh.vertices().len(),
        triangles: mesh.triangles().len(),
        min_angle_deg: min_a,
        min_angle_at: min_at,
        max_angle_deg: max_a,
        requested_min_angle_deg,
        triangles_below_min_angle: below,
        max_size_ratio: max_ratio,
        regions,
        small_input_angles,
    }
}

/// The three angles of a triangle (degrees), at corners 0, 1, 2.
pub fn triangle_angles_deg(p: [Point2; 3]) -> [f64; 3] {
    let ang = |a: Point2, b: Point2, c: Point2| {
        let (ux, uy) = (b.x - a.x, b.y - a.y);
        let (vx, vy) = (c.x - a.x, c.y - a.y);
        (ux * vy - uy * vx)
            .abs()
            .atan2(ux * vx + uy * vy)
            .to_degrees()
    };
    [
        ang(p[0], p[1], p[2]),
        ang(p[1], p[2], p[0]),
        ang(p[2], p[0], p[1]),
    ]
}
