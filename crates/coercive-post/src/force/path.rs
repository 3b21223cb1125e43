//! Maxwell stress integrated along a user-given closed path in air.

use coercive_fem::{Formulation, Solution};
use serde::{Deserialize, Serialize};

use super::shell::{corners, field_at};
use super::{depth_of, finish, is_air, maxwell_stress, weight, ForceMethod, MethodForce};
use crate::locate::barycentric;
use crate::{PointLocator, PostError};

/// A closed polyline (m): the last point joins the first (repeating the first point at the
/// end is allowed). Either orientation; the normal is taken outward. In axisymmetric models
/// the path may instead run from the axis to the axis (both ends at r = 0): the closing
/// piece along the axis contributes nothing (its 2 pi r weight vanishes) and is skipped.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct ClosedPath {
    /// Corner points (m).
    pub points: Vec<[f64; 2]>,
}

impl ClosedPath {
    /// A path through the given corners (m).
    pub fn new(points: Vec<[f64; 2]>) -> ClosedPath {
        ClosedPath { points }
    }

    /// An axis-aligned rectangle from its lower-left and upper-right corners (m).
    pub fn rectangle(min: [f64; 2], max: [f64; 2]) -> ClosedPath {
        ClosedPath::new(vec![min, [max[0], min[1]], max, [min[0], max[1]]])
    }

    /// A circle of `n` chords (m) about `centre`.
    pub fn circle(centre: [f64; 2], radius: f64, n: usize) -> ClosedPath {
        ClosedPath::new(
            (0..n)
                .map(|k| {
                    let a = 2.0 * std::f64::consts::PI * k as f64 / n as f64;
                    [centre[0] + radius * a.cos(), centre[1] + radius * a.sin()]
                })
                .collect(),
        )
    }
}

/// The force (and torque about `centre`, m) on everything inside a closed path in air, by
/// the Maxwell stress tensor: F = closed integral of T n dl (planar, N/m; torque N m/m) or
/// of T n 2 pi r dl (axisymmetric, axial force in N).
///
/// The path is cut at every element edge it crosses and each piece is integrated exactly
/// for the element's field (three-point Gauss-Legendre; the stress of P2 elements is
/// quadratic along a piece). Pieces lying on an element edge take the field of the element
/// the locator picks; B is discontinuous there, so prefer paths through element interiors
/// (mid-gap with two or three element layers across it; see check-values "Force methods").
///
/// # Errors
/// [`PostError::InvalidArgument`] for fewer than 3 points (2 axisymmetric with ends on the
/// axis) or non-finite coordinates; [`PostError::PathOutsideMesh`] where the path leaves the
/// mesh; [`PostError::NotInAir`] naming the first non-air region the path crosses;
/// [`PostError::LocatorMeshMismatch`] when `locator` was built for another mesh.
pub fn stress_on_path(
    solution: &Solution,
    locator: &PointLocator,
    path: &ClosedPath,
    centre: [f64; 2],
) -> Result<MethodForce, PostError> {
    let model = solution.model();
    let mesh = model.mesh();
    if locator.mesh().triangles().len() != mesh.triangles().len() {
        return Err(PostError::LocatorMeshMismatch {
            locator_triangles: locator.mesh().triangles().len(),
            mesh_triangles: mesh.triangles().len(),
        });
    }
    let formulation = model.formulation();
    let axisymmetric = matches!(formulation, Formulation::Axisymmetric);
    let mut pts = path.points.clone();
    if pts.len() > 1 && pts.first() == pts.last() {
        pts.pop();
    }
    if let Some(i) = pts
        .iter()
        .position(|p| !(p[0].is_finite() && p[1].is_finite()))
    {
        return Err(PostError::InvalidArgument {
            what: format!("closed path point {i} (m)"),
            value: pts[i][0],
            reason: "coordinates must be finite".into(),
        });
    }
    let scale = pts
        .iter()
        .fold(0.0_f64, |m, p| m.max(p[0].abs()).max(p[1].abs()))
        .max(f64::MIN_POSITIVE);
    let on_axis = |p: [f64; 2]| axisymmetric && p[0].abs() <= 1e-12 * scale;
    let minimum = if axisymmetric { 2 } else { 3 };
    if pts.len() < minimum {
        return Err(PostError::InvalidArgument {
            what: "closed path points".into(),
            value: pts.len() as f64,
            reason: format!("a closed path needs at least {minimum} points"),
        });
    }
    // Orientation from the signed area (shoelace) of the closed polygon.
    let n = pts.len();
    let area2: f64 = (0..n)
        .map(|i| {
            let (a, b) = (pts[i], pts[(i + 1) % n]);
            a[0] * b[1] - b[0] * a[1]
        })
        .sum();
    if area2 == 0.0 {
        return Err(PostError::InvalidArgument {
            what: "closed path area (m^2)".into(),
            value: 0.0,
            reason: "the path encloses no area".into(),
        });
    }
    let sign = area2.signum();
    let s3 = (0.6_f64).sqrt();
    let gauss = [
        (0.5 * (1.0 - s3), 5.0 / 18.0),
        (0.5, 8.0 / 18.0),
        (0.5 * (1.0 + s3), 5.0 / 18.0),
    ];
    let mut force = [0.0; 2];
    let mut torque = 0.0;
    let mut sample = 0usize;
    for i in 0..n {
        let (p, q) = (pts[i], pts[(i + 1) % n]);
        if on_axis(p) && on_axis(q) {
            continue;
        }
        let d = [q[0] - p[0], q[1] - p[1]];
        let len = d[0].hypot(d[1]);
        if len == 0.0 {
            continue;
        }
        // Outward normal of a counter-clockwise path: the tangent turned by -90 degrees.
        let nrm = [sign * d[1] / len, -sign * d[0] / len];
        let nudge = 1e-9_f64;
        let mut s = 0.0_f64;
        while s < 1.0 {
            let probe_s = (s + nudge).min(1.0);
            let probe = [p[0] + probe_s * d[0], p[1] + probe_s * d[1]];
            let loc = locator
                .try_locate(probe)
                .ok_or(PostError::PathOutsideMesh {
                    index: sample,
                    x: probe[0],
                    y: probe[1],
                })?;
            sample += 1;
            let t = loc.triangle.index();
            let region = mesh.triangle_regions()[t];
            if !is_air(solution, region) {
                return Err(PostError::NotInAir {
                    what: "stress path".into(),
                    region: mesh.regions()[region.index()].name.clone(),
                    x: probe[0],
                    y: probe[1],
                });
            }
            let c = corners(mesh, t);
            let lp = barycentric(c, p);
            let lq = barycentric(c, q);
            let mut exit = 1.0_f64;
            for k in 0..3 {
                if lq[k] < lp[k] {
                    let sk = lp[k] / (lp[k] - lq[k]);
                    if sk > probe_s {
                        exit = exit.min(sk);
                    }
                }
            }
            let exit = exit.max(probe_s);
            let piece = (exit - s) * len;
            for (u, w) in gauss {
                let su = s + u * (exit - s);
                let x = [p[0] + su * d[0], p[1] + su * d[1]];
                // The piece lies in triangle t up to rounding; clamp the evaluation point.
                let xe = clamp_into(c, x);
                let b = field_at(solution, t, xe)?;
                let st = maxwell_stress(b);
                let f = [
                    st[0][0] * nrm[0] + st[0][1] * nrm[1],
                    st[1][0] * nrm[0] + st[1][1] * nrm[1],
                ];
                let dw = piece * w * weight(formulation, x);
                force[0] += dw * f[0];
                force[1] += dw * f[1];
                torque += dw * ((x[0] - centre[0]) * f[1] - (x[1] - centre[1]) * f[0]);
            }
            s = exit;
        }
    }
    let (force, torque) = finish(formulation, force, torque);
    Ok(MethodForce {
        method: ForceMethod::StressPath,
        force,
        torque,
        depth_m: depth_of(solution),
    })
}

/// Moves `x` into the triangle `c` if rounding put it just outside.
fn clamp_into(c: [[f64; 2]; 3], x: [f64; 2]) -> [f64; 2] {
    let l = barycentric(c, x);
    if l.iter().all(|&v| v >= 0.0) {
        return x;
    }
    let mut l = l.map(|v| v.max(0.0));
    let s: f64 = l.iter().sum();
    for v in &mut l {
        *v /= s;
    }
    [
        l[0] * c[0][0] + l[1] * c[1][0] + l[2] * c[2][0],
        l[0] * c[0][1] + l[1] * c[1][1] + l[2] * c[2][1],
    ]
}
