//! Structured polar test meshes (discs, annuli and sectors) independent of the mesher.
#![allow(dead_code)]

use coercive_mesh::{Mesh, MeshCurve, MeshCurvePair, MeshRegion, Point2, RegionId, VertexId};

/// A polar mesh of the sector `0 <= theta <= angle` (`angle` = 2 pi for a full disc) centred
/// at `centre`, with rings at `radii` (first radius may be 0: a centre node). Cells between
/// rings `k` and `k+1` belong to region `regions[k]` (names may repeat). `n_theta` angular
/// divisions. Curves: `outer` (the last ring, counter-clockwise), and for sectors `side0`
/// (theta = 0, outward) and `side1` (theta = angle, outward), paired. Full discs get the
/// curve `outer` closed (first node repeated at the end).
pub fn polar(
    centre: [f64; 2],
    radii: &[f64],
    regions: &[&str],
    n_theta: usize,
    angle: f64,
) -> Mesh {
    assert_eq!(regions.len(), radii.len() - 1);
    let full = (angle - 2.0 * std::f64::consts::PI).abs() < 1e-12;
    let n_ang = if full { n_theta } else { n_theta + 1 };
    let mut vertices = Vec::new();
    // ids[k][j]: node of ring k, angular index j (j = n_theta wraps for full discs).
    let mut ids: Vec<Vec<u32>> = Vec::new();
    for &r in radii {
        if r == 0.0 {
            vertices.push(Point2::new(centre[0], centre[1]));
            let id = (vertices.len() - 1) as u32;
            ids.push(vec![id; n_theta + 1]);
            continue;
        }
        let mut ring = Vec::with_capacity(n_theta + 1);
        for j in 0..n_ang {
            let th = angle * j as f64 / n_theta as f64;
            vertices.push(Point2::new(
                centre[0] + r * th.cos(),
                centre[1] + r * th.sin(),
            ));
            ring.push((vertices.len() - 1) as u32);
        }
        if full {
            ring.push(ring[0]);
        }
        ids.push(ring);
    }
    let mut region_names: Vec<String> = Vec::new();
    let mut triangles = Vec::new();
    let mut tri_regions = Vec::new();
    for k in 0..radii.len() - 1 {
        let rid = match region_names.iter().position(|n| n == regions[k]) {
            Some(i) => i,
            None => {
                region_names.push(regions[k].to_string());
                region_names.len() - 1
            }
        };
        for j in 0..n_theta {
            let (a, b) = (ids[k][j], ids[k][j + 1]);
            let (c, d) = (ids[k + 1][j + 1], ids[k + 1][j]);
            if radii[k] == 0.0 {
                triangles.push([VertexId(a), VertexId(d), VertexId(c)]);
                tri_regions.push(RegionId(rid as u32));
            } else if (j + k) % 2 == 0 {
                triangles.push([VertexId(a), VertexId(d), VertexId(c)]);
                triangles.push([VertexId(a), VertexId(c), VertexId(b)]);
                tri_regions.push(RegionId(rid as u32));
                tri_regions.push(RegionId(rid as u32));
            } else {
                triangles.push([VertexId(a), VertexId(d), VertexId(b)]);
                triangles.push([VertexId(b), VertexId(d), VertexId(c)]);
                tri_regions.push(RegionId(rid as u32));
                tri_regions.push(RegionId(rid as u32));
            }
        }
    }
    let last = ids.len() - 1;
    let mut curves = vec![MeshCurve {
        name: Some("outer".into()),
        nodes: ids[last].iter().map(|&v| VertexId(v)).collect(),
    }];
    let mut pairs = Vec::new();
    if !full {
        curves.push(MeshCurve {
            name: Some("side0".into()),
            nodes: ids.iter().map(|ring| VertexId(ring[0])).collect(),
        });
        curves.push(MeshCurve {
            name: Some("side1".into()),
            nodes: ids.iter().map(|ring| VertexId(ring[n_theta])).collect(),
        });
        pairs.push(MeshCurvePair {
            first: coercive_mesh::CurveId(1),
            second: coercive_mesh::CurveId(2),
        });
    }
    Mesh::from_parts(
        vertices,
        triangles,
        tri_regions,
        region_names
            .into_iter()
            .map(|name| MeshRegion {
                name,
                rigid_group: None,
            })
            .collect(),
        curves,
        pairs,
    )
    .unwrap()
}

/// Radii from `r0` to `r1` in `n` equal steps (both included).
pub fn linspace(r0: f64, r1: f64, n: usize) -> Vec<f64> {
    (0..=n)
        .map(|i| r0 + (r1 - r0) * i as f64 / n as f64)
        .collect()
}

/// Finds a triangle of `mesh` containing `p` (brute force).
pub fn locate(mesh: &Mesh, p: [f64; 2]) -> coercive_mesh::TriangleId {
    (0..mesh.triangles().len())
        .map(|t| coercive_mesh::TriangleId(t as u32))
        .find(|&t| {
            let c = mesh.triangle_points(t);
            let cross =
                |a: Point2, b: Point2| (b.x - a.x) * (p[1] - a.y) - (b.y - a.y) * (p[0] - a.x);
            let tol = -1e-12;
            cross(c[0], c[1]) >= tol && cross(c[1], c[2]) >= tol && cross(c[2], c[0]) >= tol
        })
        .expect("point inside the mesh")
}

/// A tensor-product mesh on the grid `xs` x `ys` (both increasing), each cell cut into two
/// triangles, the region of a cell given by `region_of(centre)`. Curves as the structured
/// rectangle: `bottom`, `right`, `top`, `left` (counter-clockwise).
pub fn tensor(xs: &[f64], ys: &[f64], region_of: impl Fn([f64; 2]) -> &'static str) -> Mesh {
    let (nx, ny) = (xs.len() - 1, ys.len() - 1);
    let id = |i: usize, j: usize| VertexId((j * (nx + 1) + i) as u32);
    let mut vertices = Vec::new();
    for &y in ys {
        for &x in xs {
            vertices.push(Point2::new(x, y));
        }
    }
    let mut names: Vec<&str> = Vec::new();
    let mut triangles = Vec::new();
    let mut tri_regions = Vec::new();
    for j in 0..ny {
        for i in 0..nx {
            let name = region_of([0.5 * (xs[i] + xs[i + 1]), 0.5 * (ys[j] + ys[j + 1])]);
            let r = match names.iter().position(|n| *n == name) {
                Some(r) => r,
                None => {
                    names.push(name);
                    names.len() - 1
                }
            };
            let (a, b, c, d) = (id(i, j), id(i + 1, j), id(i + 1, j + 1), id(i, j + 1));
            if (i + j) % 2 == 0 {
                triangles.push([a, b, c]);
                triangles.push([a, c, d]);
            } else {
                triangles.push([a, b, d]);
                triangles.push([b, c, d]);
            }
            tri_regions.push(RegionId(r as u32));
            tri_regions.push(RegionId(r as u32));
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
    Mesh::from_parts(
        vertices,
        triangles,
        tri_regions,
        names
            .into_iter()
            .map(|n| MeshRegion {
                name: n.to_string(),
                rigid_group: None,
            })
            .collect(),
        curves,
        Vec::new(),
    )
    .unwrap()
}

/// Grid coordinates through `breaks`, stepping by the local size `h(x)` between consecutive
/// breaks (each interval's steps stretched to end on its break).
pub fn graded(breaks: &[f64], h: impl Fn(f64) -> f64) -> Vec<f64> {
    let mut out = vec![breaks[0]];
    for w in breaks.windows(2) {
        let mut steps = vec![w[0]];
        let mut x = w[0];
        while x < w[1] {
            x += h(x);
            steps.push(x);
        }
        if steps.len() > 2 && (x - w[1]) > 0.5 * h(w[1]) {
            steps.pop();
        }
        let last = *steps.last().unwrap();
        for s in &steps[1..] {
            out.push(w[0] + (s - w[0]) * (w[1] - w[0]) / (last - w[0]));
        }
    }
    out
}
