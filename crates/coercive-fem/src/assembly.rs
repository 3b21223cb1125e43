//! Sparsity pattern with an element-to-slot map, and deterministic parallel assembly of the
//! internal force (residual without sources), the tangent, the load vector and the energy.
//!
//! Element work runs in parallel over fixed chunks of triangles into a chunk buffer; the
//! buffer is then added into the global arrays serially in triangle order. The floating-point
//! additions therefore happen in the same order whatever the thread count: results are
//! bit-identical for any number of threads.

// Index loops over local nodes mirror the formulas; iterator chains would hide them.
#![allow(clippy::needless_range_loop)]

use std::f64::consts::PI;

use coercive_mesh::Mesh;
use rayon::prelude::*;

use crate::dof::{Layout, FIXED};
use crate::element::{shape_gradients, shape_values, AffineTriangle, ElementOrder, MAX_NODES};
use crate::hysteresis::History;
use crate::material::Material;
use crate::model::{Formulation, Model};
use crate::quadrature::TriangleRule;
use crate::state::MagnetState;
use crate::FemError;

/// Triangles per parallel chunk.
const CHUNK: usize = 8192;

/// Marks an element entry that is not assembled (fixed node, or lower triangle).
const NO_SLOT: u32 = u32::MAX;

/// The sparsity pattern of the tangent on the free equations (compressed sparse columns,
/// sorted rows) and the slot of every element entry.
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct Pattern {
    /// Number of equations.
    pub neq: usize,
    /// Column pointers (`neq + 1`).
    pub col_ptr: Vec<u32>,
    /// Row index of each stored entry.
    pub row_idx: Vec<u32>,
    /// True: only the upper triangle (row <= column) is stored.
    pub upper_only: bool,
    /// For each triangle, `nloc * nloc` slots (row-major local i, j) or [`NO_SLOT`].
    pub slots: Vec<u32>,
}

impl Pattern {
    /// Builds the pattern of `layout`'s free equations. With `upper_only`, only entries with
    /// row <= column are stored (for Cholesky).
    pub fn new(layout: &Layout, upper_only: bool) -> Result<Pattern, FemError> {
        let nloc = layout.nloc;
        let nt = layout.element_dofs.len() / nloc;
        let keep = |ei: u32, ej: u32| ei != FIXED && ej != FIXED && (!upper_only || ei <= ej);
        let key_of = |ei: u32, ej: u32| ((ej as u64) << 32) | ei as u64;
        let mut keys: Vec<u64> = (0..nt)
            .into_par_iter()
            .flat_map_iter(|t| {
                let dofs = layout.triangle_dofs(t);
                let mut local = [0u64; MAX_NODES * MAX_NODES];
                let mut n = 0;
                for &di in dofs {
                    for &dj in dofs {
                        let (ei, ej) = (layout.dof_eq[di as usize], layout.dof_eq[dj as usize]);
                        if keep(ei, ej) {
                            local[n] = key_of(ei, ej);
                            n += 1;
                        }
                    }
                }
                local.into_iter().take(n)
            })
            .collect();
        // Diagonal entries exist for every equation even if only reached through links.
        keys.extend((0..layout.neq as u64).map(|e| (e << 32) | e));
        keys.par_sort_unstable();
        keys.dedup();
        if keys.len() >= u32::MAX as usize {
            return Err(FemError::Unsupported {
                what: format!("{} matrix entries (more than 2^32)", keys.len()),
            });
        }
        let neq = layout.neq;
        let mut col_ptr = vec![0u32; neq + 1];
        let mut row_idx = Vec::with_capacity(keys.len());
        for k in &keys {
            col_ptr[(k >> 32) as usize + 1] += 1;
            row_idx.push(*k as u32);
        }
        for c in 0..neq {
            col_ptr[c + 1] += col_ptr[c];
        }
        drop(keys);
        let mut slots = vec![NO_SLOT; nt * nloc * nloc];
        slots
            .par_chunks_mut(nloc * nloc)
            .enumerate()
            .for_each(|(t, s)| {
                let dofs = layout.triangle_dofs(t);
                for (i, &di) in dofs.iter().enumerate() {
                    for (j, &dj) in dofs.iter().enumerate() {
                        let (ei, ej) = (layout.dof_eq[di as usize], layout.dof_eq[dj as usize]);
                        if keep(ei, ej) {
                            let (lo, hi) = (
                                col_ptr[ej as usize] as usize,
                                col_ptr[ej as usize + 1] as usize,
                            );
                            let pos = row_idx[lo..hi]
                                .binary_search(&ei)
                                .expect("pattern holds every element entry");
                            s[i * nloc + j] = (lo + pos) as u32;
                        }
                    }
                }
            });
        Ok(Pattern {
            neq,
            col_ptr,
            row_idx,
            upper_only,
            slots,
        })
    }

    /// Number of stored entries.
    pub fn nnz(&self) -> usize {
        self.row_idx.len()
    }
}

/// The quadrature rule used for the tangent and residual of a model (and the points where a
/// [`crate::Solution`] keeps B and H).
///
/// Planar P1: the centroid (B is constant per triangle, so any law is integrated exactly).
/// Planar P2: with only linear materials, Dunavant degree 2 (3 points; exact for the linear
/// stiffness, whose integrand is a product of two linear gradients); with a nonlinear material
/// anywhere in the model (`linear` false), Dunavant degree 4 (6 points): the energy density
/// and the reluctivity are then non-polynomial in B, and the 3-point rule left a bias of
/// about 4e-6 relative in the energy that shrank only slowly with refinement (issue 10). With
/// B linear on a P2 triangle, the degree-4 rule is exact when the reluctivity is affine in
/// |B|^2 over the triangle, and its error falls as the fourth power of the size. Axisymmetric P1: Dunavant degree 2; P2: degree 4 (the 1/r and r
/// weights are not polynomial). All points are interior, so the 1/r weight is never
/// evaluated on the axis.
pub(crate) fn stiffness_rule(
    formulation: Formulation,
    order: ElementOrder,
    linear: bool,
) -> TriangleRule {
    match (formulation, order) {
        (Formulation::Planar { .. }, ElementOrder::P1) => TriangleRule::of_degree(1),
        (Formulation::Planar { .. }, ElementOrder::P2) => {
            TriangleRule::of_degree(if linear { 2 } else { 4 })
        }
        (Formulation::Axisymmetric, ElementOrder::P1) => TriangleRule::of_degree(2),
        (Formulation::Axisymmetric, ElementOrder::P2) => TriangleRule::of_degree(4),
    }
}

/// Geometry of one quadrature point: weight w (m^2 planar, m^3 axisymmetric) and the map
/// from nodal potentials to B: B_c = sum_j coef[j][c] a_j.
#[derive(Clone, Copy)]
pub(crate) struct PointOperator {
    pub weight: f64,
    pub coef: [[f64; 2]; MAX_NODES],
    pub point: [f64; 2],
}

/// The B operator at barycentric point `l` of `tri`.
///
/// Planar: B = (dA/dy, -dA/dx), weight = area * w_q (per metre).
/// Axisymmetric with A = A_phi: B = curl(A e_phi) = (-dA/dz, dA/dr + A/r), weight =
/// 2 pi r area w_q (the volume element 2 pi r dr dz). With A = 0 on the axis the A/r term is
/// bounded, and the quadrature points are interior, so r > 0 wherever it is evaluated.
#[inline]
pub(crate) fn point_operator(
    formulation: Formulation,
    order: ElementOrder,
    tri: &AffineTriangle,
    l: [f64; 3],
    wq: f64,
) -> PointOperator {
    let g = shape_gradients(order, tri, l);
    let p = tri.point(l);
    let mut coef = [[0.0; 2]; MAX_NODES];
    let weight = match formulation {
        Formulation::Planar { .. } => {
            for (c, gj) in coef.iter_mut().zip(&g) {
                *c = [gj[1], -gj[0]];
            }
            tri.area * wq
        }
        Formulation::Axisymmetric => {
            let inv_r = 1.0 / p[0];
            let v = shape_values(order, l);
            for ((c, gj), vj) in coef.iter_mut().zip(&g).zip(v) {
                *c = [-gj[1], gj[0] + vj * inv_r];
            }
            2.0 * PI * p[0] * tri.area * wq
        }
    };
    PointOperator {
        weight,
        coef,
        point: p,
    }
}

/// The affine map of triangle `t`.
#[inline]
pub(crate) fn triangle_map(mesh: &Mesh, t: usize) -> AffineTriangle {
    let [a, b, c] = mesh.triangles()[t];
    let p = |v: coercive_mesh::VertexId| {
        let q = mesh.vertex(v);
        [q.x, q.y]
    };
    AffineTriangle::new([p(a), p(b), p(c)])
}

/// The easy axis of `material` at `point` (unit vector; +x for non-magnets).
#[inline]
pub(crate) fn easy_axis(material: &Material, point: [f64; 2], centroid: [f64; 2]) -> [f64; 2] {
    match material {
        Material::Magnet(m) => m.direction.easy_axis_at(point, centroid),
        Material::Hysteretic(m) => m.direction.easy_axis_at(point, centroid),
        _ => [1.0, 0.0],
    }
}

/// What to assemble.
#[derive(Clone, Copy, PartialEq, Eq)]
pub(crate) enum Want {
    /// Internal force and tangent.
    ForceAndTangent,
    /// Internal force only.
    Force,
}

/// Shared read-only context of an assembly pass.
pub(crate) struct Assembler<'a> {
    pub model: &'a Model,
    pub layout: &'a Layout,
    pub pattern: &'a Pattern,
    pub rule: TriangleRule,
    /// The committed histories of the hysteretic points (checked against the model), if the
    /// model has any.
    pub state: Option<&'a MagnetState>,
}

impl Assembler<'_> {
    /// Assembles the internal force `force[eq] = sum_e sign * integral(H . dB/da)` for the
    /// nodal potential `a` (all nodes), and the tangent values into `values` (pattern slots)
    /// when asked. `force` and `values` are overwritten.
    pub fn assemble(&self, a: &[f64], want: Want, force: &mut [f64], values: &mut [f64]) {
        let nloc = self.layout.nloc;
        let nn = nloc * nloc;
        let nt = self.layout.element_dofs.len() / nloc;
        let stride = nloc + if want == Want::ForceAndTangent { nn } else { 0 };
        force.fill(0.0);
        if want == Want::ForceAndTangent {
            values.fill(0.0);
        }
        let mut buf = vec![0.0; CHUNK.min(nt.max(1)) * stride];
        let mut start = 0;
        while start < nt {
            let end = (start + CHUNK).min(nt);
            let buf = &mut buf[..(end - start) * stride];
            buf.par_chunks_mut(stride).enumerate().for_each(|(k, out)| {
                self.element(start + k, a, want, out);
            });
            for (k, out) in buf.chunks(stride).enumerate() {
                let t = start + k;
                let dofs = self.layout.triangle_dofs(t);
                for (i, &d) in dofs.iter().enumerate() {
                    let e = self.layout.dof_eq[d as usize];
                    if e != FIXED {
                        force[e as usize] += self.layout.dof_sign[d as usize] * out[i];
                    }
                }
                if want == Want::ForceAndTangent {
                    let slots = &self.pattern.slots[t * nn..(t + 1) * nn];
                    for (i, &di) in dofs.iter().enumerate() {
                        for (j, &dj) in dofs.iter().enumerate() {
                            let s = slots[i * nloc + j];
                            if s != NO_SLOT {
                                values[s as usize] += self.layout.dof_sign[di as usize]
                                    * self.layout.dof_sign[dj as usize]
                                    * out[nloc + i * nloc + j];
                            }
                        }
                    }
                }
            }
            start = end;
        }
    }

    /// Element internal force (first `nloc` entries of `out`) and tangent (next `nloc^2`,
    /// row-major) of triangle `t`.
    #[inline]
    fn element(&self, t: usize, a: &[f64], want: Want, out: &mut [f64]) {
        let model = self.model;
        let mesh = model.mesh();
        let nloc = self.layout.nloc;
        let region = mesh.triangle_regions()[t];
        let material = model.material(region);
        let centroid = model.region_centroids()[region.index()];
        let tri = triangle_map(mesh, t);
        let dofs = self.layout.triangle_dofs(t);
        let mut al = [0.0; MAX_NODES];
        for (x, &d) in al.iter_mut().zip(dofs) {
            *x = a[d as usize];
        }
        out.fill(0.0);
        let histories = self.histories(material, t);
        for (q, (l, wq)) in self.rule.points.iter().zip(self.rule.weights).enumerate() {
            let op = point_operator(model.formulation(), self.layout.order, &tri, *l, *wq);
            let mut b = [0.0; 2];
            for j in 0..nloc {
                b[0] += op.coef[j][0] * al[j];
                b[1] += op.coef[j][1] * al[j];
            }
            let resp = material.response_with(
                b,
                easy_axis(material, op.point, centroid),
                histories.map(|h| &h[q]),
            );
            // Reluctivity scale of an axisymmetric open-boundary image (1 elsewhere): it
            // multiplies H and dH/dB alike, so folding it into the weight is exact.
            let w = op.weight * model.reluctivity_scale(region, op.point);
            for i in 0..nloc {
                out[i] += w * (resp.h[0] * op.coef[i][0] + resp.h[1] * op.coef[i][1]);
            }
            if want == Want::ForceAndTangent {
                let d = resp.dh_db;
                for i in 0..nloc {
                    // (dH/dB)^T applied to coef_i, then dotted with coef_j.
                    let ci = op.coef[i];
                    let u0 = w * (ci[0] * d[0][0] + ci[1] * d[1][0]);
                    let u1 = w * (ci[0] * d[0][1] + ci[1] * d[1][1]);
                    let row = &mut out[nloc + i * nloc..nloc + (i + 1) * nloc];
                    for (j, r) in row.iter_mut().enumerate() {
                        *r += u0 * op.coef[j][0] + u1 * op.coef[j][1];
                    }
                }
            }
        }
    }

    /// The committed histories of triangle `t`'s quadrature points if its material is
    /// hysteretic and a state is given.
    #[inline]
    pub(crate) fn histories(&self, material: &Material, t: usize) -> Option<&[History]> {
        if material.is_hysteretic() {
            self.state.and_then(|s| s.histories_of(t))
        } else {
            None
        }
    }

    /// The stored energy (J/m planar, J axisymmetric) of each region for potential `a`, by
    /// integrating the material's energy density, and the co-energy likewise.
    pub fn energies(&self, a: &[f64]) -> (Vec<f64>, Vec<f64>) {
        let nreg = self.model.mesh().regions().len();
        let per_t = self.per_triangle(a, |m, b, e, h| {
            (
                m.energy_density_with(b, e, h),
                m.coenergy_density_with(b, e, h),
            )
        });
        let mut energy = vec![0.0; nreg];
        let mut coenergy = vec![0.0; nreg];
        for (t, (w, c)) in per_t.iter().enumerate() {
            let r = self.model.mesh().triangle_regions()[t].index();
            energy[r] += w;
            coenergy[r] += c;
        }
        (energy, coenergy)
    }

    /// Integral over each triangle of `(f(B).0, f(B).1)`.
    fn per_triangle(
        &self,
        a: &[f64],
        f: impl Fn(&Material, [f64; 2], [f64; 2], Option<&History>) -> (f64, f64) + Sync,
    ) -> Vec<(f64, f64)> {
        let model = self.model;
        let mesh = model.mesh();
        let nloc = self.layout.nloc;
        (0..mesh.triangles().len())
            .into_par_iter()
            .map(|t| {
                let region = mesh.triangle_regions()[t];
                let material = model.material(region);
                let centroid = model.region_centroids()[region.index()];
                let tri = triangle_map(mesh, t);
                let dofs = self.layout.triangle_dofs(t);
                let mut sum = (0.0, 0.0);
                let histories = self.histories(material, t);
                for (q, (l, wq)) in self.rule.points.iter().zip(self.rule.weights).enumerate() {
                    let op = point_operator(model.formulation(), self.layout.order, &tri, *l, *wq);
                    let mut b = [0.0; 2];
                    for j in 0..nloc {
                        let aj = a[dofs[j] as usize];
                        b[0] += op.coef[j][0] * aj;
                        b[1] += op.coef[j][1] * aj;
                    }
                    let v = f(
                        material,
                        b,
                        easy_axis(material, op.point, centroid),
                        histories.map(|h| &h[q]),
                    );
                    // The image region of an axisymmetric open boundary: energy densities
                    // scale with its reluctivity (the region is linear air).
                    let w = op.weight * model.reluctivity_scale(region, op.point);
                    sum.0 += w * v.0;
                    sum.1 += w * v.1;
                }
                sum
            })
            .collect()
    }

    /// The source integral of every node (free or fixed) for a uniform current density
    /// `region_density[r]` (A/m^2) in each region: integral(J N_i) per metre (planar) or with
    /// 2 pi r (axisymmetric). With the density per ampere of a winding, its dot product with
    /// the nodal potential is the winding's flux linkage (Wb per metre planar, Wb axisymmetric).
    pub fn nodal_source(&self, region_density: &[f64]) -> Vec<f64> {
        let model = self.model;
        let mesh = model.mesh();
        let nloc = self.layout.nloc;
        let order = self.layout.order;
        let axisymmetric = model.formulation() == Formulation::Axisymmetric;
        let rule = TriangleRule::of_degree(if axisymmetric { 4 } else { 2 });
        let mut out = vec![0.0; self.layout.ndofs()];
        for (t, r) in mesh.triangle_regions().iter().enumerate() {
            let j = region_density[r.index()];
            if j == 0.0 {
                continue;
            }
            let tri = triangle_map(mesh, t);
            let dofs = self.layout.triangle_dofs(t);
            for (l, wq) in rule.points.iter().zip(rule.weights) {
                let p = tri.point(*l);
                let v = shape_values(order, *l);
                let factor = if axisymmetric { 2.0 * PI * p[0] } else { 1.0 };
                let w = factor * tri.area * wq * j;
                for i in 0..nloc {
                    out[dofs[i] as usize] += w * v[i];
                }
            }
        }
        out
    }

    /// The load vector of the current densities on the free equations: integral(J v) per
    /// metre (planar) or integral(J v) 2 pi r dr dz (axisymmetric).
    pub fn load(&self) -> Result<Vec<f64>, FemError> {
        let model = self.model;
        let mesh = model.mesh();
        let nloc = self.layout.nloc;
        let order = self.layout.order;
        let axisymmetric = model.formulation() == Formulation::Axisymmetric;
        let uniform = model.region_current_densities();
        let fields = model.region_density_fields();
        // Constant J: integrals of the shape functions (times r axisymmetric) are exact with
        // the degree 2 (planar) or 4 (axisymmetric) rule; fields use the degree 5 rule.
        let rule_const = TriangleRule::of_degree(if axisymmetric { 4 } else { 2 });
        let rule_field = TriangleRule::of_degree(5);
        let per_t: Vec<([f64; MAX_NODES], bool)> = (0..mesh.triangles().len())
            .into_par_iter()
            .map(|t| {
                let r = mesh.triangle_regions()[t].index();
                let mut f = [0.0; MAX_NODES];
                let mut finite = true;
                if uniform[r] == 0.0 && fields[r].is_empty() {
                    return (f, finite);
                }
                let tri = triangle_map(mesh, t);
                let rule = if fields[r].is_empty() {
                    rule_const
                } else {
                    rule_field
                };
                for (l, wq) in rule.points.iter().zip(rule.weights) {
                    let p = tri.point(*l);
                    let mut j = uniform[r];
                    for field in &fields[r] {
                        j += field.at(coercive_mesh::Point2::new(p[0], p[1]));
                    }
                    finite &= j.is_finite();
                    let v = shape_values(order, *l);
                    let factor = if axisymmetric { 2.0 * PI * p[0] } else { 1.0 };
                    let w = factor * tri.area * wq * j;
                    for i in 0..nloc {
                        f[i] += w * v[i];
                    }
                }
                (f, finite)
            })
            .collect();
        let mut load = vec![0.0; self.layout.neq];
        for (t, (f, finite)) in per_t.iter().enumerate() {
            if !finite {
                let tri = triangle_map(mesh, t);
                let c = tri.point([1.0 / 3.0; 3]);
                return Err(FemError::NotFinite {
                    what: format!(
                        "current density in region `{}` near ({} m, {} m)",
                        model.region_name(mesh.triangle_regions()[t]),
                        c[0],
                        c[1]
                    ),
                    value: f64::NAN,
                });
            }
            for (i, &d) in self.layout.triangle_dofs(t).iter().enumerate() {
                let e = self.layout.dof_eq[d as usize];
                if e != FIXED {
                    load[e as usize] += self.layout.dof_sign[d as usize] * f[i];
                }
            }
        }
        Ok(load)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::bh::BhCurve;
    use crate::material::SoftMagnetic;
    use crate::model::Model;
    use coercive_mesh::structured::rectangle;

    /// Central finite differences of the assembled internal force against the assembled
    /// tangent, for a saturating steel (B = mu_0 H + Js H / (H + H0)) at a potential that
    /// drives it into saturation, planar and axisymmetric, P1 and P2.
    #[test]
    fn assembled_tangent_matches_finite_differences_of_the_force() {
        let steel = Material::Soft(SoftMagnetic {
            curve: BhCurve::saturating(1.8, 200.0).unwrap(),
        });
        for formulation in [
            Formulation::Planar { depth_m: 1.0 },
            Formulation::Axisymmetric,
        ] {
            for order in [ElementOrder::P1, ElementOrder::P2] {
                let mesh = rectangle(0.0, 0.0, 0.02, 0.01, 6, 3, "steel").unwrap();
                let model = Model::builder(mesh, formulation)
                    .order(order)
                    .material("steel", steel.clone())
                    .fixed_potential("left", 0.0)
                    .build()
                    .unwrap();
                let layout = Layout::new(&model).unwrap();
                let pattern = Pattern::new(&layout, false).unwrap();
                let asm = Assembler {
                    model: &model,
                    layout: &layout,
                    pattern: &pattern,
                    rule: stiffness_rule(formulation, order, model.is_linear()),
                    state: None,
                };
                let n = layout.ndofs();
                // A potential of about 1.5 T over 1 cm with some variation.
                let a: Vec<f64> = layout
                    .dof_points
                    .iter()
                    .map(|p| {
                        0.015 * p[1] / 0.01 * (1.0 + 0.3 * (400.0 * p[0]).sin())
                            + 0.004 * p[0] / 0.02
                    })
                    .collect();
                let dir: Vec<f64> = (0..n)
                    .map(|i| ((i * 7919) % 13) as f64 / 13.0 - 0.5)
                    .collect();
                let mut force = vec![0.0; layout.neq];
                let mut values = vec![0.0; pattern.nnz()];
                asm.assemble(&a, Want::ForceAndTangent, &mut force, &mut values);
                // K dir on free equations (full pattern).
                let mut x_dir = vec![0.0; layout.neq];
                for d in 0..n {
                    let e = layout.dof_eq[d];
                    if e != FIXED {
                        x_dir[e as usize] = layout.dof_sign[d] * dir[d];
                    }
                }
                let mut kd = vec![0.0; layout.neq];
                for c in 0..layout.neq {
                    for s in pattern.col_ptr[c] as usize..pattern.col_ptr[c + 1] as usize {
                        kd[pattern.row_idx[s] as usize] += values[s] * x_dir[c];
                    }
                }
                let eps = 1e-7;
                let shifted = |sgn: f64| {
                    let mut ap = a.clone();
                    for d in 0..n {
                        if layout.dof_eq[d] != FIXED {
                            ap[d] += sgn * eps * dir[d];
                        }
                    }
                    let mut f = vec![0.0; layout.neq];
                    let mut v = vec![0.0; pattern.nnz()];
                    asm.assemble(&ap, Want::Force, &mut f, &mut v);
                    f
                };
                let (fp, fm) = (shifted(1.0), shifted(-1.0));
                let scale = kd.iter().fold(0.0_f64, |m, x| m.max(x.abs()));
                for e in 0..layout.neq {
                    let fd = (fp[e] - fm[e]) / (2.0 * eps);
                    assert!(
                        (fd - kd[e]).abs() <= 1e-5 * scale,
                        "{formulation:?} {order:?} eq {e}: fd {fd} vs tangent {}",
                        kd[e]
                    );
                }
                // The tangent is symmetric.
                for c in 0..layout.neq {
                    for s in pattern.col_ptr[c] as usize..pattern.col_ptr[c + 1] as usize {
                        let r = pattern.row_idx[s] as usize;
                        let lo = pattern.col_ptr[r] as usize;
                        let hi = pattern.col_ptr[r + 1] as usize;
                        let t = lo + pattern.row_idx[lo..hi].binary_search(&(c as u32)).unwrap();
                        assert!((values[s] - values[t]).abs() <= 1e-12 * scale);
                    }
                }
            }
        }
    }
}
