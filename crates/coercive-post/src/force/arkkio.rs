//! Arkkio's air-gap torque for rotating machines.

use coercive_fem::quadrature::TriangleRule;
use coercive_fem::{Formulation, Solution, MU_0};
use serde::{Deserialize, Serialize};

use super::is_air;
use super::shell::{corners, field_at};
use crate::PostError;

/// The air-gap annulus over which Arkkio's torque is averaged.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[non_exhaustive]
pub enum AirGap {
    /// A meshed air region forming the annulus (or a sector of it) about `centre` (m); its
    /// radii are taken from its nodes.
    Region {
        /// The air-gap region's name.
        name: String,
        /// Centre of rotation (m).
        centre: [f64; 2],
    },
    /// The triangles between two radii about `centre` (m); the mesh must have nodes on both
    /// circles (no triangle may straddle either radius).
    Annulus {
        /// Centre of rotation (m).
        centre: [f64; 2],
        /// Inner radius r_i (m).
        inner_radius: f64,
        /// Outer radius r_o (m).
        outer_radius: f64,
    },
}

/// Arkkio's torque on the part inside the air gap (counter-clockwise positive).
///
/// # Convention
/// Like every other force method of this module, `torque` is the torque on what the model
/// holds: for a sector of a periodic or anti-periodic model it is the sector's share
/// (the torque on the rotor part inside the sector), and
/// [`ArkkioTorque::whole_machine_torque`] multiplies it by the number of sectors
/// ([`ArkkioTorque::sectors`]). A full model has one sector and both agree.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct ArkkioTorque {
    /// Torque per metre of depth on the modelled part (N m/m): the sector's share in a
    /// sector model, the whole machine's torque in a full one.
    pub torque: f64,
    /// Number of copies of the meshed gap around the circle (1 for a full annulus, n for a
    /// sector of 360/n degrees), from [`ArkkioTorque::covered_fraction`].
    pub sectors: u32,
    /// Planar stack depth (m).
    pub depth_m: f64,
    /// Inner radius used (m).
    pub inner_radius: f64,
    /// Outer radius used (m).
    pub outer_radius: f64,
    /// Angular coverage of the meshed gap: the integral of dS / (2 pi r) over it divided by
    /// r_o - r_i (1 for a full annulus up to the chords of polygonal circles).
    pub covered_fraction: f64,
}

impl ArkkioTorque {
    /// Torque on the modelled part for the stack depth (N m).
    pub fn torque_total_nm(&self) -> f64 {
        self.torque * self.depth_m
    }

    /// Torque per metre of depth of the whole machine (N m/m): `torque` times `sectors`.
    pub fn whole_machine_torque(&self) -> f64 {
        self.torque * f64::from(self.sectors)
    }

    /// Torque of the whole machine for the stack depth (N m).
    pub fn whole_machine_torque_total_nm(&self) -> f64 {
        self.whole_machine_torque() * self.depth_m
    }
}

/// Arkkio's air-gap torque, T = L / (mu_0 (r_o - r_i)) integral over the annulus of
/// r B_r B_phi dS: the Maxwell-stress torque averaged over every circle between r_i and r_o.
/// The width r_o - r_i is taken as the integral of dS / (2 pi r) over the meshed gap divided
/// by the meshed gap's angular coverage 1/n (equal for an exact annulus), which removes the
/// bias of polygonal circles; a sector of 360/n degrees then gives its share of the torque
/// (see [`ArkkioTorque`] for the convention).
/// (A. Arkkio, "Analysis of induction motors based on the numerical solution of the magnetic
/// field and circuit equations", Acta Polytechnica Scandinavica, Electrical Engineering
/// Series 59, Helsinki, 1987). Planar models only.
///
/// # Errors
/// [`PostError::Unsupported`] for axisymmetric models; [`PostError::UnknownRegion`];
/// [`PostError::NotInAir`] when a gap triangle is not air (naming its region);
/// [`PostError::AnnulusCutsMesh`] when a triangle straddles one of the radii;
/// [`PostError::InvalidArgument`] for radii that are not `0 <= r_i < r_o`, an empty gap, or
/// a meshed gap that does not cover 1/n of the circle for a whole number n (within 2 %: a
/// sector angle that does not divide 360 degrees, or a gap region that is not a sector).
pub fn arkkio_torque(solution: &Solution, gap: &AirGap) -> Result<ArkkioTorque, PostError> {
    let model = solution.model();
    let depth_m =
        match model.formulation() {
            Formulation::Planar { depth_m } => depth_m,
            Formulation::Axisymmetric => return Err(PostError::Unsupported {
                what:
                    "Arkkio's torque in an axisymmetric model (there is no torque about the axis)"
                        .into(),
            }),
        };
    let mesh = model.mesh();
    let dist = |c: [f64; 2], p: [f64; 2]| (p[0] - c[0]).hypot(p[1] - c[1]);
    let (centre, triangles, ri, ro) = match gap {
        AirGap::Region { name, centre } => {
            let r = mesh
                .region_by_name(name)
                .ok_or_else(|| PostError::UnknownRegion {
                    what: "Arkkio air gap".into(),
                    region: name.clone(),
                })?;
            let tris: Vec<usize> = (0..mesh.triangles().len())
                .filter(|&t| mesh.triangle_regions()[t] == r)
                .collect();
            let (mut ri, mut ro) = (f64::INFINITY, 0.0_f64);
            for &t in &tris {
                for p in corners(mesh, t) {
                    let d = dist(*centre, p);
                    ri = ri.min(d);
                    ro = ro.max(d);
                }
            }
            (*centre, tris, ri, ro)
        }
        AirGap::Annulus {
            centre,
            inner_radius,
            outer_radius,
        } => {
            let (ri, ro) = (*inner_radius, *outer_radius);
            if !(ri.is_finite() && ro.is_finite() && ri >= 0.0 && ro > ri) {
                return Err(PostError::InvalidArgument {
                    what: "air-gap radii (m)".into(),
                    value: ri,
                    reason: format!("need 0 <= inner ({ri}) < outer ({ro})"),
                });
            }
            // Nodes split off a circle lie on its chords: accept them within 2 % of the width.
            let tol = 0.02 * (ro - ri);
            let mut tris = Vec::new();
            for t in 0..mesh.triangles().len() {
                let p = corners(mesh, t);
                let c = [
                    (p[0][0] + p[1][0] + p[2][0]) / 3.0,
                    (p[0][1] + p[1][1] + p[2][1]) / 3.0,
                ];
                let dc = dist(*centre, c);
                if dc <= ri || dc >= ro {
                    continue;
                }
                for q in p {
                    let d = dist(*centre, q);
                    if d < ri - tol || d > ro + tol {
                        return Err(PostError::AnnulusCutsMesh {
                            triangle: t,
                            x: c[0],
                            y: c[1],
                        });
                    }
                }
                tris.push(t);
            }
            (*centre, tris, ri, ro)
        }
    };
    if triangles.is_empty() || ro <= ri {
        return Err(PostError::InvalidArgument {
            what: "air gap".into(),
            value: ro - ri,
            reason: "the air gap contains no triangle or has zero width".into(),
        });
    }
    for &t in &triangles {
        let r = mesh.triangle_regions()[t];
        if !is_air(solution, r) {
            let p = corners(mesh, t);
            return Err(PostError::NotInAir {
                what: "Arkkio air gap".into(),
                region: mesh.regions()[r.index()].name.clone(),
                x: (p[0][0] + p[1][0] + p[2][0]) / 3.0,
                y: (p[0][1] + p[1][1] + p[2][1]) / 3.0,
            });
        }
    }
    let rule = TriangleRule::of_degree(5);
    let mut integral = 0.0;
    let mut width = 0.0;
    for &t in &triangles {
        let p = corners(mesh, t);
        let a = mesh.triangle_area(coercive_mesh::TriangleId(t as u32));
        for (l, w) in rule.points.iter().zip(rule.weights) {
            let x = [
                l[0] * p[0][0] + l[1] * p[1][0] + l[2] * p[2][0],
                l[0] * p[0][1] + l[1] * p[1][1] + l[2] * p[2][1],
            ];
            let b = field_at(solution, t, x)?;
            let (dx, dy) = (x[0] - centre[0], x[1] - centre[1]);
            let r = dx.hypot(dy);
            // r B_r B_phi = (B . d)(B . d_perp) / r with d the radius vector.
            let br_r = b[0] * dx + b[1] * dy;
            let bphi_r = -b[0] * dy + b[1] * dx;
            integral += a * w * br_r * bphi_r / r;
            width += a * w / (2.0 * std::f64::consts::PI * r);
        }
    }
    // The integral of dS / (2 pi r) is r_o - r_i for a full annulus and (r_o - r_i) / n for a
    // sector of 360/n degrees; over the meshed gap it also accounts for the chords of
    // polygonal circles.
    let covered_fraction = width / (ro - ri);
    let n = (1.0 / covered_fraction).round();
    if !((1.0..=1e6).contains(&n) && (covered_fraction * n - 1.0).abs() <= 0.02) {
        return Err(PostError::InvalidArgument {
            what: "air-gap coverage (fraction of the full circle)".into(),
            value: covered_fraction,
            reason: "the meshed gap must be the full annulus or a sector of 360/n degrees \
                     (n whole)"
                .into(),
        });
    }
    Ok(ArkkioTorque {
        torque: integral / (MU_0 * width * n),
        sectors: n as u32,
        depth_m,
        inner_radius: ri,
        outer_radius: ro,
        covered_fraction,
    })
}
