//! Structured mesh builders for the validation geometries (independent of the mesher, so a
//! solver test does not depend on the mesher's choices): tensor-product grids with regions
//! chosen by a closure, and polar grids of concentric rings (full circle or a sector) whose
//! region boundaries follow mesh edges exactly.

use coercive::mesh::{
    CurveId, Mesh, MeshCurve, MeshCurvePair, MeshRegion, Point2, RegionId, VertexId,
};

/// Grid lines from `a` to `b` (both included) with `n` intervals whose lengths grow by the
/// constant factor `ratio` from `a` towards `b` (ratio 1: uniform).
pub fn graded(a: f64, b: f64, n: usize, ratio: f64) -> Vec<f64> {
    let n = n.max(1);
    let mut w = Vec::with_capacity(n);
    let mut s = 0.0;
    let mut q = 1.0;
    for _ in 0..n {
        w.push(q);
        s += q;
        q *= ratio;
    }
    let mut x = vec![a];
    let mut acc = 0.0;
    for wi in &w {
        acc += wi;
        x.push(a + (b - a) * acc / s);
    }
    *x.last_mut().unwrap() = b;
    x
}

/// Grid lines through `breaks` (increasing) with intervals of about `h(x)` in each piece.
pub fn lines_through(breaks: &[f64], h: impl Fn(f64) -> f64) -> Vec<f64> {
    let mut x = vec![breaks[0]];
    for w in breaks.windows(2) {
        let mid = 0.5 * (w[0] + w[1]);
        // The small allowance keeps exact ratios (0.13 / 0.001) from rounding up a cell.
        let n = ((w[1] - w[0]) / h(mid) - 1e-9).ceil().max(1.0) as usize;
        for i in 1..=n {
            x.push(w[0] + (w[1] - w[0]) * i as f64 / n as f64);
        }
    }
    x
}

/// A tensor-product triangulation on grid lines `xs` x `ys` (increasing, m), each cell cut
/// along alternating diagonals; the region of each triangle is `region_of(centroid)`, an
/// index into `names`. Curves: `bottom`, `right`, `top`, `left` (counter-clockwise tour).
pub fn tensor_mesh(
    xs: &[f64],
    ys: &[f64],
    names: &[&str],
    region_of: impl Fn(f64, f64) -> usize,
) -> Mesh {
    let (nx, ny) = (xs.len() - 1, ys.len() - 1);
    let id = |i: usize, j: usize| VertexId((j * (nx + 1) + i) as u32);
    let mut vertices = Vec::with_capacity((nx + 1) * (ny + 1));
    for y in ys {
        for x in xs {
            vertices.push(Point2::new(*x, *y));
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
    let regions_of: Vec<RegionId> = triangles
        .iter()
        .map(|t| {
            let (mut cx, mut cy) = (0.0, 0.0);
            for v in t {
                cx += vertices[v.index()].x / 3.0;
                cy += vertices[v.index()].y / 3.0;
            }
            RegionId(region_of(cx, cy) as u32)
        })
        .collect();
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
    Mesh::from_parts(
        vertices,
        triangles,
        regions_of,
        region_list(names),
        curves,
        Vec::new(),
    )
    .expect("tensor mesh is valid")
}

fn region_list(names: &[&str]) -> Vec<MeshRegion> {
    names
        .iter()
        .map(|n| MeshRegion {
            name: n.to_string(),
            rigid_group: None,
        })
        .collect()
}

/// Radii of node rings: through every radius of `breaks` (increasing; the first may be 0),
/// with radial spacing about `h(r)` in each piece.
pub fn ring_radii(breaks: &[f64], h: impl Fn(f64) -> f64) -> Vec<f64> {
    lines_through(breaks, h)
}

/// A polar triangulation of concentric node rings at `radii` (increasing; `radii[0] == 0`
/// puts a single node at the centre), covering the angle `2 pi sectors / period` from angle
/// 0. Each ring has a multiple of `period` nodes per full turn (about `2 pi r / h` with h the
/// local ring spacing, so triangles are near-equilateral), so rays at multiples of
/// `2 pi / period` are chains of mesh edges and region boundaries there are exact.
/// The region of a triangle is `region_of(r, theta)` at its centroid (theta in [0, 2 pi)).
///
/// Curves: one per ring, named `ring{k}` (k the ring index, ordered by angle), and, for a
/// sector (`sectors < period`), `start` (the ray at angle 0, outward) and `end` (the ray at
/// the closing angle, outward), recorded as a curve pair when `pair_rays` is set.
pub fn polar_mesh(
    radii: &[f64],
    period: usize,
    sectors: usize,
    names: &[&str],
    region_of: impl Fn(f64, f64) -> usize,
    pair_rays: bool,
) -> Mesh {
    use std::f64::consts::PI;
    assert!(sectors >= 1 && sectors <= period);
    let closed = sectors == period;
    // Nodes per full turn on each ring (a multiple of `period`).
    let per_turn: Vec<usize> = radii
        .iter()
        .enumerate()
        .map(|(k, &r)| {
            if r == 0.0 {
                return 1;
            }
            let h = if k + 1 < radii.len() {
                0.5 * (radii[k + 1] - radii[k.saturating_sub(1)])
            } else {
                radii[k] - radii[k - 1]
            };
            let n = (2.0 * PI * r / h).round().max(period as f64 * 2.0) as usize;
            n.div_ceil(period) * period
        })
        .collect();
    let mut vertices = Vec::new();
    // ring_nodes[k][j]: node j (angle index j of per_turn[k]) of ring k; for a closed ring
    // j ranges over 0..n, for a sector over 0..=n*sectors/period.
    let mut ring_nodes: Vec<Vec<VertexId>> = Vec::new();
    for (k, &r) in radii.iter().enumerate() {
        let n = per_turn[k];
        if n == 1 {
            ring_nodes.push(vec![VertexId(vertices.len() as u32)]);
            vertices.push(Point2::new(0.0, 0.0));
            continue;
        }
        let count = if closed { n } else { n * sectors / period + 1 };
        let mut ids = Vec::with_capacity(count);
        for j in 0..count {
            let th = 2.0 * PI * j as f64 / n as f64;
            ids.push(VertexId(vertices.len() as u32));
            vertices.push(Point2::new(r * th.cos(), r * th.sin()));
        }
        ring_nodes.push(ids);
    }
    let mut triangles: Vec<[VertexId; 3]> = Vec::new();
    for k in 0..radii.len() - 1 {
        let (inner, outer) = (&ring_nodes[k], &ring_nodes[k + 1]);
        let (ni, no) = (per_turn[k], per_turn[k + 1]);
        if ni == 1 {
            let c = inner[0];
            let steps = if closed { outer.len() } else { outer.len() - 1 };
            for j in 0..steps {
                triangles.push([c, outer[j], outer[(j + 1) % outer.len()]]);
            }
            continue;
        }
        // Zipper by exact rational angle comparison: node j of a ring of n is at j/n turns.
        let (ei, eo) = if closed {
            (ni, no)
        } else {
            (inner.len() - 1, outer.len() - 1)
        };
        let (mut p, mut q) = (0usize, 0usize);
        while p < ei || q < eo {
            // Advance the ring whose next node comes first (ties: inner first).
            let advance_inner = if p == ei {
                false
            } else if q == eo {
                true
            } else {
                (p + 1) * no <= (q + 1) * ni
            };
            let ip = inner[p % inner.len()];
            let oq = outer[q % outer.len()];
            if advance_inner {
                let ip1 = inner[(p + 1) % inner.len()];
                triangles.push([ip, ip1, oq]);
                p += 1;
            } else {
                let oq1 = outer[(q + 1) % outer.len()];
                triangles.push([ip, oq1, oq]);
                q += 1;
            }
        }
    }
    // Orient counter-clockwise (the zipper's orientation depends on the step type).
    for t in &mut triangles {
        let [a, b, c] = t.map(|v| vertices[v.index()]);
        if (b.x - a.x) * (c.y - a.y) - (c.x - a.x) * (b.y - a.y) < 0.0 {
            t.swap(1, 2);
        }
    }
    let regions_of: Vec<RegionId> = triangles
        .iter()
        .map(|t| {
            let (mut cx, mut cy) = (0.0, 0.0);
            for v in t {
                cx += vertices[v.index()].x / 3.0;
                cy += vertices[v.index()].y / 3.0;
            }
            let th = cy.atan2(cx).rem_euclid(2.0 * PI);
            RegionId(region_of(cx.hypot(cy), th) as u32)
        })
        .collect();
    let mut curves = Vec::new();
    for (k, ids) in ring_nodes.iter().enumerate() {
        if ids.len() == 1 {
            continue;
        }
        let mut nodes = ids.clone();
        if closed {
            nodes.push(ids[0]);
        }
        curves.push(MeshCurve {
            name: Some(format!("ring{k}")),
            nodes,
        });
    }
    let mut pairs = Vec::new();
    if !closed {
        let start: Vec<VertexId> = ring_nodes.iter().map(|ids| ids[0]).collect();
        let end: Vec<VertexId> = ring_nodes.iter().map(|ids| *ids.last().unwrap()).collect();
        curves.push(MeshCurve {
            name: Some("start".into()),
            nodes: start,
        });
        curves.push(MeshCurve {
            name: Some("end".into()),
            nodes: end,
        });
        if pair_rays {
            let n = curves.len() as u32;
            pairs.push(MeshCurvePair {
                first: CurveId(n - 2),
                second: CurveId(n - 1),
            });
        }
    }
    Mesh::from_parts(
        vertices,
        triangles,
        regions_of,
        region_list(names),
        curves,
        pairs,
    )
    .expect("polar mesh is valid")
}

/// Index of the ring whose radius equals `r` (to 1e-12 relative) in `radii`.
pub fn ring_index(radii: &[f64], r: f64) -> usize {
    radii
        .iter()
        .position(|x| (x - r).abs() <= 1e-12 * r.abs().max(1e-300))
        .expect("radius is one of the rings")
}

/// Grid lines from `a` to `b` (either order) whose first interval, at `a`, is about `h0` (m)
/// and each next one `ratio` times longer, ending exactly at `b`. Returned increasing.
pub fn grown(a: f64, b: f64, h0: f64, ratio: f64) -> Vec<f64> {
    let len = (b - a).abs();
    let n = if (ratio - 1.0).abs() < 1e-12 {
        (len / h0).ceil()
    } else {
        ((len / h0 * (ratio - 1.0) + 1.0).ln() / ratio.ln()).ceil()
    }
    .max(1.0) as usize;
    let mut x = graded(0.0, len, n, ratio);
    for v in &mut x {
        *v = if b >= a { a + *v } else { a - *v };
    }
    if b < a {
        x.reverse();
    }
    x
}

/// Concatenates increasing line sets, dropping repeated end points.
pub fn join(parts: &[Vec<f64>]) -> Vec<f64> {
    let mut out: Vec<f64> = Vec::new();
    for p in parts {
        for &v in p {
            if out.last().is_none_or(|&l| v > l + 1e-15) {
                out.push(v);
            }
        }
    }
    out
}

/// Joins two meshes into one (the second shifted by `shift`, m), keeping every region (regions
/// of the same name are merged), prefixing curve names with `first_prefix` and
/// `second_prefix`, and adding a curve pair between curve `first_curve` of the first mesh and
/// curve `second_curve` of the second (names before prefixing).
pub fn join_meshes(
    first: &Mesh,
    first_prefix: &str,
    second: &Mesh,
    second_prefix: &str,
    shift: [f64; 2],
    first_curve: &str,
    second_curve: &str,
) -> Mesh {
    let n1 = first.vertices().len() as u32;
    let mut vertices = first.vertices().to_vec();
    vertices.extend(
        second
            .vertices()
            .iter()
            .map(|p| Point2::new(p.x + shift[0], p.y + shift[1])),
    );
    let mut triangles = first.triangles().to_vec();
    triangles.extend(
        second
            .triangles()
            .iter()
            .map(|t| t.map(|v| VertexId(v.0 + n1))),
    );
    let mut regions = first.regions().to_vec();
    let mut tri_regions = first.triangle_regions().to_vec();
    for r in second.triangle_regions() {
        let name = &second.regions()[r.index()].name;
        let id = match regions.iter().position(|x| &x.name == name) {
            Some(i) => i,
            None => {
                regions.push(second.regions()[r.index()].clone());
                regions.len() - 1
            }
        };
        tri_regions.push(RegionId(id as u32));
    }
    let rename = |c: &MeshCurve, prefix: &str, offset: u32| MeshCurve {
        name: c.name.as_ref().map(|n| format!("{prefix}{n}")),
        nodes: c.nodes.iter().map(|v| VertexId(v.0 + offset)).collect(),
    };
    let mut curves: Vec<MeshCurve> = first
        .curves()
        .iter()
        .map(|c| rename(c, first_prefix, 0))
        .collect();
    let c1 = first.curves_named(first_curve)[0];
    let c2 = second.curves_named(second_curve)[0];
    let n_first_curves = curves.len() as u32;
    curves.extend(second.curves().iter().map(|c| rename(c, second_prefix, n1)));
    Mesh::from_parts(
        vertices,
        triangles,
        tri_regions,
        regions,
        curves,
        vec![MeshCurvePair {
            first: c1,
            second: CurveId(c2.0 + n_first_curves),
        }],
    )
    .expect("joined mesh is valid")
}
