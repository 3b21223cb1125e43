//! Deterministic parallel sums over the triangles of a mesh, per region.

use coercive_fem::element::AffineTriangle;
use coercive_fem::Formulation;
use coercive_mesh::{Mesh, TriangleId};
use rayon::prelude::*;

/// Triangles per parallel work item. Partial sums are formed per chunk and added in chunk
/// order, so results are identical for any thread count.
const CHUNK: usize = 4096;

/// Sums `f(t)` over the triangles of every region: `out[region][k]`. `f` returns `None` for
/// triangles to skip. Component `K - 1` is combined with `max` instead of `+` when
/// `last_is_max` is true (for peaks).
pub(crate) fn region_sums<const K: usize>(
    mesh: &Mesh,
    last_is_max: bool,
    f: impl Fn(usize) -> [f64; K] + Sync,
) -> Vec<[f64; K]> {
    let nreg = mesh.regions().len();
    let regions = mesh.triangle_regions();
    let n = regions.len();
    let init = if last_is_max {
        let mut z = [0.0; K];
        z[K - 1] = f64::NEG_INFINITY;
        z
    } else {
        [0.0; K]
    };
    let combine = |acc: &mut [f64; K], v: &[f64; K]| {
        for k in 0..K {
            if last_is_max && k == K - 1 {
                acc[k] = acc[k].max(v[k]);
            } else {
                acc[k] += v[k];
            }
        }
    };
    let partials: Vec<Vec<[f64; K]>> = (0..n.div_ceil(CHUNK))
        .into_par_iter()
        .map(|c| {
            let mut acc = vec![init; nreg];
            for t in c * CHUNK..((c + 1) * CHUNK).min(n) {
                let v = f(t);
                combine(&mut acc[regions[t].index()], &v);
            }
            acc
        })
        .collect();
    let mut out = vec![init; nreg];
    for p in &partials {
        for (o, v) in out.iter_mut().zip(p) {
            combine(o, v);
        }
    }
    out
}

/// The affine map of triangle `t`.
#[inline]
pub(crate) fn triangle(mesh: &Mesh, t: usize) -> AffineTriangle {
    let c = mesh.triangle_points(TriangleId(t as u32));
    AffineTriangle::new([[c[0].x, c[0].y], [c[1].x, c[1].y], [c[2].x, c[2].y]])
}

/// The volume weight of a point: 1 planar (integrals per metre of depth), 2 pi r
/// axisymmetric (integrals are totals).
#[inline]
pub(crate) fn volume_weight(formulation: Formulation, point: [f64; 2]) -> f64 {
    match formulation {
        Formulation::Planar { .. } => 1.0,
        Formulation::Axisymmetric => 2.0 * std::f64::consts::PI * point[0],
    }
}
