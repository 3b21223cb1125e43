//! Structured meshes of simple shapes, for tests, convergence studies and quick models.

use crate::{Mesh, MeshCurve, MeshError, MeshRegion, Point2, RegionId, VertexId};

/// A rectangle `[x0, x1] x [y0, y1]` (m) split into `nx` by `ny` cells, each cut into two
/// triangles along alternating diagonals, all in one region named `region`.
///
/// Curves, in this order: `bottom` (x0 to x1 at y0), `right` (y0 to y1 at x1), `top`
/// (x1 to x0 at y1), `left` (y1 to y0 at x0): a counter-clockwise tour of the boundary.
///
/// # Errors
/// [`MeshError::InvalidMesh`] if the rectangle is empty or a cell count is zero.
pub fn rectangle(
    x0: f64,
    y0: f64,
    x1: f64,
    y1: f64,
    nx: usize,
    ny: usize,
    region: &str,
) -> Result<Mesh, MeshError> {
    let bad = |what: String| MeshError::InvalidMesh { what };
    // Written to reject NaN as well.
    #[allow(clippy::nonminimal_bool)]
    if !(x1 > x0 && y1 > y0)
        || !(x0.is_finite() && x1.is_finite() && y0.is_finite() && y1.is_finite())
    {
        return Err(bad(format!(
            "empty or non-finite rectangle [{x0}, {x1}] x [{y0}, {y1}]"
        )));
    }
    if nx == 0 || ny == 0 {
        return Err(bad(format!(
            "rectangle needs at least one cell each way, got {nx} x {ny}"
        )));
    }
    let id = |i: usize, j: usize| VertexId((j * (nx + 1) + i) as u32);
    let mut vertices = Vec::with_capacity((nx + 1) * (ny + 1));
    for j in 0..=ny {
        for i in 0..=nx {
            vertices.push(Point2::new(
                x0 + (x1 - x0) * i as f64 / nx as f64,
                y0 + (y1 - y0) * j as f64 / ny as f64,
            ));
        }
    }
    let mut triangles = Vec::with_capacity(2 * nx * ny);
    for j in 0..ny {
        for i in 0..nx {
            let (a, b, c, d) = (id(i, j), id(i + 1, j), id(i + 1, j + 1), id(i, j + 1));
            if (i + j) % 2 == 0 {
                triangles.push([a, b, c]);
                triangles.push([a, c, d]);
            } else {
                triangles.push([a, b, d]);
                triangles.push([b, c, d]);
            }
        }
    }
    let curve = |name: &str, nodes: Vec<VertexId>| MeshCurve {
        name: Some(name.to_string()),
        nodes,
    };
    let curves = vec![
        curve("bottom", (0..=nx).map(|i| id(i, 0)).collect()),
        curve("right", (0..=ny).map(|j| id(nx, j)).collect()),
        curve("top", (0..=nx).rev().map(|i| id(i, ny)).collect()),
        curve("left", (0..=ny).rev().map(|j| id(0, j)).collect()),
    ];
    let n = triangles.len();
    Mesh::from_parts(
        vertices,
        triangles,
        vec![RegionId(0); n],
        vec![MeshRegion {
            name: region.to_string(),
            rigid_group: None,
        }],
        curves,
        Vec::new(),
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rectangle_has_exact_area_and_euler_characteristic() {
        let m = rectangle(0.0, 0.0, 2.0, 1.0, 4, 3, "air").unwrap();
        // Euler's formula for a triangulated disc: V - E + F = 1 (F counts triangles only).
        let mut edges = std::collections::HashSet::new();
        for t in m.triangles() {
            for k in 0..3 {
                let (a, b) = (t[k], t[(k + 1) % 3]);
                edges.insert((a.min(b), a.max(b)));
            }
        }
        assert_eq!(
            m.vertices().len() as i64 - edges.len() as i64 + m.triangles().len() as i64,
            1
        );
        approx::assert_relative_eq!(m.region_area(RegionId(0)), 2.0, epsilon = 1e-12);
        assert_eq!(m.curves_named("top").len(), 1);
    }

    #[test]
    fn rectangle_rejects_nan_and_zero_cells() {
        assert!(rectangle(0.0, 0.0, f64::NAN, 1.0, 2, 2, "a").is_err());
        assert!(rectangle(0.0, 0.0, 1.0, 1.0, 0, 2, "a").is_err());
    }
}
