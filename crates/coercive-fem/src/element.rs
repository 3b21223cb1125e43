//! Lagrange P1 and P2 triangles on straight-sided (affine) cells.
//!
//! Local numbering: vertices 0, 1, 2 (counter-clockwise, as in the mesh), then for P2 the
//! midside nodes of edges (0,1), (1,2), (2,0) as local nodes 3, 4, 5. Shape functions are
//! written in barycentric coordinates l_i: P1 `l_i`; P2 vertex `l_i (2 l_i - 1)`, edge (i,j)
//! `4 l_i l_j` (standard, e.g. Zienkiewicz & Taylor, The Finite Element Method, vol. 1,
//! ch. 6).

use serde::{Deserialize, Serialize};

/// The polynomial degree of the Lagrange elements.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Serialize, Deserialize, Default)]
#[serde(rename_all = "snake_case")]
pub enum ElementOrder {
    /// Linear triangles (3 nodes).
    #[default]
    P1,
    /// Quadratic triangles (6 nodes: vertices and edge midpoints).
    P2,
}

impl ElementOrder {
    /// Nodes per triangle: 3 or 6.
    #[inline]
    pub fn nodes_per_triangle(self) -> usize {
        match self {
            ElementOrder::P1 => 3,
            ElementOrder::P2 => 6,
        }
    }
}

/// Maximum nodes per triangle over all orders.
pub const MAX_NODES: usize = 6;

/// The local vertex pairs of the edges, in the order of the P2 midside nodes.
pub const EDGE_VERTICES: [[usize; 2]; 3] = [[0, 1], [1, 2], [2, 0]];

/// The affine map of one triangle: corner coordinates, area and barycentric gradients.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct AffineTriangle {
    /// Corner coordinates (m).
    pub corners: [[f64; 2]; 3],
    /// Area (m^2), positive for counter-clockwise corners.
    pub area: f64,
    /// Gradients of the barycentric coordinates (1/m), constant over the triangle.
    pub grad_l: [[f64; 2]; 3],
}

impl AffineTriangle {
    /// The map of the triangle with these counter-clockwise corners (m).
    #[inline]
    pub fn new(corners: [[f64; 2]; 3]) -> Self {
        let [p0, p1, p2] = corners;
        let det = (p1[0] - p0[0]) * (p2[1] - p0[1]) - (p2[0] - p0[0]) * (p1[1] - p0[1]);
        let inv = 1.0 / det;
        // grad l_i = perp(p_{i+2} - p_{i+1}) / det, with perp(x, y) = (y, -x) rotated.
        let g = |a: [f64; 2], b: [f64; 2]| [(a[1] - b[1]) * inv, (b[0] - a[0]) * inv];
        Self {
            corners,
            area: 0.5 * det,
            grad_l: [g(p1, p2), g(p2, p0), g(p0, p1)],
        }
    }

    /// The point with barycentric coordinates `l` (m).
    #[inline]
    pub fn point(&self, l: [f64; 3]) -> [f64; 2] {
        let c = &self.corners;
        [
            l[0] * c[0][0] + l[1] * c[1][0] + l[2] * c[2][0],
            l[0] * c[0][1] + l[1] * c[1][1] + l[2] * c[2][1],
        ]
    }

    /// Barycentric coordinates of the point `p` (m); all in [0, 1] inside the triangle.
    #[inline]
    pub fn barycentric(&self, p: [f64; 2]) -> [f64; 3] {
        let c = &self.corners;
        let l1 = self.grad_l[1][0] * (p[0] - c[0][0]) + self.grad_l[1][1] * (p[1] - c[0][1]);
        let l2 = self.grad_l[2][0] * (p[0] - c[0][0]) + self.grad_l[2][1] * (p[1] - c[0][1]);
        [1.0 - l1 - l2, l1, l2]
    }
}

/// Shape function values at barycentric point `l` (first `order.nodes_per_triangle()` used).
#[inline]
pub fn shape_values(order: ElementOrder, l: [f64; 3]) -> [f64; MAX_NODES] {
    match order {
        ElementOrder::P1 => [l[0], l[1], l[2], 0.0, 0.0, 0.0],
        ElementOrder::P2 => [
            l[0] * (2.0 * l[0] - 1.0),
            l[1] * (2.0 * l[1] - 1.0),
            l[2] * (2.0 * l[2] - 1.0),
            4.0 * l[0] * l[1],
            4.0 * l[1] * l[2],
            4.0 * l[2] * l[0],
        ],
    }
}

/// Shape function gradients (1/m) at barycentric point `l` of triangle `t`.
#[inline]
pub fn shape_gradients(
    order: ElementOrder,
    t: &AffineTriangle,
    l: [f64; 3],
) -> [[f64; 2]; MAX_NODES] {
    let g = &t.grad_l;
    match order {
        ElementOrder::P1 => [g[0], g[1], g[2], [0.0; 2], [0.0; 2], [0.0; 2]],
        ElementOrder::P2 => {
            let v = |i: usize| {
                let s = 4.0 * l[i] - 1.0;
                [s * g[i][0], s * g[i][1]]
            };
            let e = |i: usize, j: usize| {
                [
                    4.0 * (l[i] * g[j][0] + l[j] * g[i][0]),
                    4.0 * (l[i] * g[j][1] + l[j] * g[i][1]),
                ]
            };
            [v(0), v(1), v(2), e(0, 1), e(1, 2), e(2, 0)]
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    const TRI: [[f64; 2]; 3] = [[0.1, 0.2], [1.3, 0.4], [0.5, 1.1]];

    #[test]
    fn shape_functions_are_a_partition_of_unity_with_zero_gradient_sum() {
        let t = AffineTriangle::new(TRI);
        for order in [ElementOrder::P1, ElementOrder::P2] {
            for l in [[0.2, 0.3, 0.5], [1.0, 0.0, 0.0], [0.1, 0.7, 0.2]] {
                let n = order.nodes_per_triangle();
                let v = shape_values(order, l);
                let g = shape_gradients(order, &t, l);
                assert!((v[..n].iter().sum::<f64>() - 1.0).abs() < 1e-14);
                let gx: f64 = g[..n].iter().map(|d| d[0]).sum();
                let gy: f64 = g[..n].iter().map(|d| d[1]).sum();
                assert!(gx.abs() < 1e-12 && gy.abs() < 1e-12);
            }
        }
    }

    #[test]
    fn p2_is_nodal_and_gradients_match_finite_differences() {
        let t = AffineTriangle::new(TRI);
        let nodes = [
            [1.0, 0.0, 0.0],
            [0.0, 1.0, 0.0],
            [0.0, 0.0, 1.0],
            [0.5, 0.5, 0.0],
            [0.0, 0.5, 0.5],
            [0.5, 0.0, 0.5],
        ];
        for (i, l) in nodes.iter().enumerate() {
            let v = shape_values(ElementOrder::P2, *l);
            for (j, vj) in v.iter().enumerate() {
                let expect = if i == j { 1.0 } else { 0.0 };
                assert!((vj - expect).abs() < 1e-14);
            }
        }
        let p = [0.6, 0.5];
        let l = t.barycentric(p);
        let g = shape_gradients(ElementOrder::P2, &t, l);
        let h = 1e-6;
        for (k, gk) in g.iter().enumerate() {
            for d in 0..2 {
                let mut pp = p;
                let mut pm = p;
                pp[d] += h;
                pm[d] -= h;
                let fd = (shape_values(ElementOrder::P2, t.barycentric(pp))[k]
                    - shape_values(ElementOrder::P2, t.barycentric(pm))[k])
                    / (2.0 * h);
                assert!((fd - gk[d]).abs() < 1e-7, "node {k} dir {d}");
            }
        }
        let back = t.point(l);
        assert!((back[0] - p[0]).abs() < 1e-14 && (back[1] - p[1]).abs() < 1e-14);
    }
}
