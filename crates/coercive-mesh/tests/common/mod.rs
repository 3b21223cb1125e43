//! Shared checks for the mesher tests.
#![allow(dead_code)]

use std::collections::HashSet;

use coercive_mesh::{triangle_angles_deg, Mesh, Point2, TriangleId, VertexId};

/// Unique undirected edges of a mesh.
pub fn edges(m: &Mesh) -> HashSet<(VertexId, VertexId)> {
    let mut e = HashSet::new();
    for t in m.triangles() {
        for k in 0..3 {
            let (a, b) = (t[k], t[(k + 1) % 3]);
            e.insert((a.min(b), a.max(b)));
        }
    }
    e
}

/// Euler characteristic V - E + T of the triangulation (T counts triangles only). For a
/// planar triangulated domain with C connected pieces and H holes it equals C - H
/// (Euler's formula V - E + F = 2 with the outer face and one face per hole removed).
pub fn euler(m: &Mesh) -> i64 {
    m.vertices().len() as i64 - edges(m).len() as i64 + m.triangles().len() as i64
}

/// Smallest angle of the mesh (degrees).
pub fn min_angle(m: &Mesh) -> f64 {
    (0..m.triangles().len())
        .map(|t| {
            let a = triangle_angles_deg(m.triangle_points(TriangleId(t as u32)));
            a[0].min(a[1]).min(a[2])
        })
        .fold(180.0, f64::min)
}

/// Centroid of a triangle.
pub fn centroid(m: &Mesh, t: usize) -> Point2 {
    let p = m.triangle_points(TriangleId(t as u32));
    Point2::new(
        (p[0].x + p[1].x + p[2].x) / 3.0,
        (p[0].y + p[1].y + p[2].y) / 3.0,
    )
}

/// Even-odd point-in-polygon test.
pub fn in_polygon(p: Point2, poly: &[Point2]) -> bool {
    let mut inside = false;
    let n = poly.len();
    for i in 0..n {
        let (a, b) = (poly[i], poly[(i + 1) % n]);
        if (a.y > p.y) != (b.y > p.y) {
            let x = a.x + (p.y - a.y) / (b.y - a.y) * (b.x - a.x);
            if p.x < x {
                inside = !inside;
            }
        }
    }
    inside
}

/// Shoelace area of a polygon (m^2, positive for counter-clockwise).
pub fn polygon_area(poly: &[Point2]) -> f64 {
    let n = poly.len();
    (0..n)
        .map(|i| {
            let (a, b) = (poly[i], poly[(i + 1) % n]);
            a.x * b.y - b.x * a.y
        })
        .sum::<f64>()
        * 0.5
}

/// Distance from `p` to segment `a b`.
pub fn dist_to_segment(p: Point2, a: Point2, b: Point2) -> f64 {
    let (dx, dy) = (b.x - a.x, b.y - a.y);
    let l2 = dx * dx + dy * dy;
    let t = (((p.x - a.x) * dx + (p.y - a.y) * dy) / l2).clamp(0.0, 1.0);
    p.distance(Point2::new(a.x + t * dx, a.y + t * dy))
}
