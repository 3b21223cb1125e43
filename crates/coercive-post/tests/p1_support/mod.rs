//! Test meshes and reference functions for the field, winding and energy tests (helper P1's
//! own copies: structured meshes independent of the mesher, elliptic integrals, Gauss
//! quadrature).
#![allow(dead_code)]

use std::f64::consts::PI;

use coercive_fem::MU_0;
use coercive_mesh::{Mesh, MeshCurve, MeshRegion, Point2, RegionId, VertexId};

/// Grid lines from `a` to `b` (both included), `n` intervals growing by `ratio` each.
pub fn graded(a: f64, b: f64, n: usize, ratio: f64) -> Vec<f64> {
    let mut w = Vec::with_capacity(n);
    let mut q = 1.0;
    for _ in 0..n {
        w.push(q);
        q *= ratio;
    }
    let total: f64 = w.iter().sum();
    let mut x = vec![a];
    let mut acc = 0.0;
    for wi in &w {
        acc += wi;
        x.push(a + (b - a) * acc / total);
    }
    *x.last_mut().unwrap() = b;
    x
}

/// Uniform grid lines through every break (increasing), spacing at most `h`.
pub fn uniform_through(breaks: &[f64], h: f64) -> Vec<f64> {
    let mut x = vec![breaks[0]];
    for w in breaks.windows(2) {
        let n = ((w[1] - w[0]) / h).ceil().max(1.0) as usize;
        for i in 1..=n {
            x.push(w[0] + (w[1] - w[0]) * i as f64 / n as f64);
        }
    }
    x
}

/// A tensor-product triangulation on grid lines `xs` x `ys` (m), cells cut along
/// alternating diagonals. `region_of(cx, cy)` at each triangle's centroid gives an index into
/// `names`, or `None` for a hole (triangle left out). Curves `bottom`, `right`, `top`, `left`
/// (each a full grid side; only meaningful when no hole touches the boundary).
pub fn tensor_mesh(
    xs: &[f64],
    ys: &[f64],
    names: &[&str],
    region_of: impl Fn(f64, f64) -> Option<usize>,
) -> Mesh {
    let (nx, ny) = (xs.len() - 1, ys.len() - 1);
    let id = |i: usize, j: usize| VertexId((j * (nx + 1) + i) as u32);
    let mut vertices = Vec::new();
    for y in ys {
        for x in xs {
            vertices.push(Point2::new(*x, *y));
        }
    }
    let mut triangles = Vec::new();
    let mut regions = Vec::new();
    for j in 0..ny {
        for i in 0..nx {
            let (a, b, c, d) = (id(i, j), id(i + 1, j), id(i + 1, j + 1), id(i, j + 1));
            let pair = if (i + j) % 2 == 0 {
                [[a, b, c], [a, c, d]]
            } else {
                [[a, b, d], [b, c, d]]
            };
            for t in pair {
                let cx = t.iter().map(|v| vertices[v.index()].x).sum::<f64>() / 3.0;
                let cy = t.iter().map(|v| vertices[v.index()].y).sum::<f64>() / 3.0;
                if let Some(r) = region_of(cx, cy) {
                    triangles.push(t);
                    regions.push(RegionId(r as u32));
                }
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
    // Drop vertices no triangle uses? Unused vertices are harmless for the mesh invariants.
    Mesh::from_parts(
        vertices,
        triangles,
        regions,
        names
            .iter()
            .map(|n| MeshRegion {
                name: n.to_string(),
                rigid_group: None,
            })
            .collect(),
        curves,
        Vec::new(),
    )
    .expect("valid tensor mesh")
}

/// A full-disc polar mesh centred at the origin with node rings at `radii` (`radii[0]` may
/// be 0), `n_theta` nodes per ring, alternating diagonals; cells between rings k and k+1 in
/// region `regions[k]`. Curve `outer`: the last ring, closed.
pub fn polar_disc(radii: &[f64], regions: &[&str], n_theta: usize) -> Mesh {
    let mut vertices = Vec::new();
    let mut ids: Vec<Vec<u32>> = Vec::new();
    for &r in radii {
        if r == 0.0 {
            vertices.push(Point2::new(0.0, 0.0));
            ids.push(vec![(vertices.len() - 1) as u32; n_theta + 1]);
            continue;
        }
        let mut ring = Vec::new();
        for j in 0..n_theta {
            let th = 2.0 * PI * j as f64 / n_theta as f64;
            vertices.push(Point2::new(r * th.cos(), r * th.sin()));
            ring.push((vertices.len() - 1) as u32);
        }
        ring.push(ring[0]);
        ids.push(ring);
    }
    let mut names: Vec<String> = Vec::new();
    let mut triangles = Vec::new();
    let mut tri_regions = Vec::new();
    for k in 0..radii.len() - 1 {
        let rid = match names.iter().position(|n| n == regions[k]) {
            Some(i) => i,
            None => {
                names.push(regions[k].to_string());
                names.len() - 1
            }
        };
        for j in 0..n_theta {
            let (a, b) = (ids[k][j], ids[k][j + 1]);
            let (c, d) = (ids[k + 1][j + 1], ids[k + 1][j]);
            let v = |i: u32| VertexId(i);
            if radii[k] == 0.0 {
                triangles.push([v(a), v(d), v(c)]);
                tri_regions.push(RegionId(rid as u32));
            } else if (j + k) % 2 == 0 {
                triangles.push([v(a), v(d), v(c)]);
                triangles.push([v(a), v(c), v(b)]);
                tri_regions.extend([RegionId(rid as u32); 2]);
            } else {
                triangles.push([v(a), v(d), v(b)]);
                triangles.push([v(b), v(d), v(c)]);
                tri_regions.extend([RegionId(rid as u32); 2]);
            }
        }
    }
    let last = ids.len() - 1;
    Mesh::from_parts(
        vertices,
        triangles,
        tri_regions,
        names
            .into_iter()
            .map(|name| MeshRegion {
                name,
                rigid_group: None,
            })
            .collect(),
        vec![MeshCurve {
            name: Some("outer".into()),
            nodes: ids[last].iter().map(|&v| VertexId(v)).collect(),
        }],
        Vec::new(),
    )
    .expect("valid polar mesh")
}

/// Radii from `r0` to `r1` in `n` equal steps, without `r0` (to chain pieces).
pub fn steps(r0: f64, r1: f64, n: usize) -> Vec<f64> {
    (1..=n)
        .map(|i| r0 + (r1 - r0) * i as f64 / n as f64)
        .collect()
}

/// Gauss-Legendre nodes and weights of order `n` on [-1, 1] (Newton's method on the
/// Legendre three-term recurrence; Abramowitz & Stegun 22.7.10 and 25.4.29).
pub fn gauss_legendre(n: usize) -> (Vec<f64>, Vec<f64>) {
    let mut x = vec![0.0; n];
    let mut w = vec![0.0; n];
    for i in 0..n.div_ceil(2) {
        let mut z = (PI * (i as f64 + 0.75) / (n as f64 + 0.5)).cos();
        let mut dp = 1.0;
        for _ in 0..100 {
            let (mut p0, mut p1) = (1.0, z);
            for k in 2..=n {
                let p2 = ((2 * k - 1) as f64 * z * p1 - (k - 1) as f64 * p0) / k as f64;
                p0 = p1;
                p1 = p2;
            }
            dp = n as f64 * (z * p1 - p0) / (z * z - 1.0);
            let dz = p1 / dp;
            z -= dz;
            if dz.abs() < 1e-16 {
                break;
            }
        }
        x[i] = -z;
        x[n - 1 - i] = z;
        w[i] = 2.0 / ((1.0 - z * z) * dp * dp);
        w[n - 1 - i] = w[i];
    }
    (x, w)
}

/// Complete elliptic integrals K(m), E(m), parameter m = k^2 in [0, 1), by the
/// arithmetic-geometric mean (Abramowitz & Stegun 17.6.1-17.6.4).
pub fn elliptic_k_e(m: f64) -> (f64, f64) {
    let (mut a, mut b) = (1.0_f64, (1.0 - m).sqrt());
    let mut sum = 0.5 * m;
    let mut pow = 0.5;
    for _ in 0..64 {
        let c = 0.5 * (a - b);
        let (an, bn) = (0.5 * (a + b), (a * b).sqrt());
        pow *= 2.0;
        sum += pow * c * c;
        a = an;
        b = bn;
        if c.abs() < 1e-17 * a {
            break;
        }
    }
    let k = PI / (2.0 * a);
    (k, k * (1.0 - sum))
}

/// Mutual inductance (H) of two coaxial filament loops of radii `a`, `b` (m), axial distance
/// `d` (m): M = mu_0 sqrt(a b) [(2/k - k) K(k) - (2/k) E(k)], k^2 = 4 a b / ((a+b)^2 + d^2)
/// (Maxwell, A Treatise on Electricity and Magnetism, vol. 2, art. 701).
pub fn filament_mutual(a: f64, b: f64, d: f64) -> f64 {
    let m = 4.0 * a * b / ((a + b).powi(2) + d * d);
    let k = m.sqrt();
    let (kk, ee) = elliptic_k_e(m);
    MU_0 * (a * b).sqrt() * ((2.0 / k - k) * kk - 2.0 / k * ee)
}

/// Mutual inductance (H) between two coaxial coils of rectangular section
/// `[r0, r1] x [z0, z1]` (m) with `n1`, `n2` turns spread uniformly: the filament formula
/// averaged over both sections by `order`-point Gauss-Legendre in each of the four
/// coordinates, times n1 n2.
pub fn coil_mutual(c1: [f64; 4], n1: f64, c2: [f64; 4], n2: f64, order: usize) -> f64 {
    let (x, w) = gauss_legendre(order);
    let map = |lo: f64, hi: f64, t: f64| 0.5 * (lo + hi) + 0.5 * (hi - lo) * t;
    let mut sum = 0.0;
    for (i, &ri) in x.iter().enumerate() {
        let r1 = map(c1[0], c1[1], ri);
        for (j, &zj) in x.iter().enumerate() {
            let z1 = map(c1[2], c1[3], zj);
            for (k, &rk) in x.iter().enumerate() {
                let r2 = map(c2[0], c2[1], rk);
                for (l, &zl) in x.iter().enumerate() {
                    let z2 = map(c2[2], c2[3], zl);
                    sum += w[i] * w[j] * w[k] * w[l] * filament_mutual(r1, r2, z2 - z1);
                }
            }
        }
    }
    // Weights sum to 2 per coordinate: divide by 16 for the mean.
    n1 * n2 * sum / 16.0
}
