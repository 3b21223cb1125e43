//! The [`Solution`] of a model: nodal potential, B and H at quadrature points, energies.

// Index loops over local nodes mirror the formulas; iterator chains would hide them.
#![allow(clippy::needless_range_loop)]

use std::sync::Arc;

use coercive_mesh::{RegionId, TriangleId, VertexId};
use rayon::prelude::*;

use crate::assembly::{easy_axis, point_operator, triangle_map, Assembler, Pattern};
use crate::dof::Layout;
use crate::element::{shape_gradients, shape_values, ElementOrder};
use crate::model::{Formulation, Model};
use crate::newton::NewtonReport;
use crate::quadrature::TriangleRule;
use crate::state::MagnetState;
use crate::FemError;

/// A solved model.
///
/// # Units
/// Planar: potential A_z in Wb/m; energies per metre of depth (J/m), multiply by
/// [`Solution::depth_m`] (or use [`Solution::total_energy`]) for the stack.
/// Axisymmetric: the stored potential is A_phi (Wb/m), energies are totals (J).
/// B in T, H in A/m everywhere.
#[derive(Clone, Debug)]
pub struct Solution {
    model: Arc<Model>,
    layout: Arc<Layout>,
    potential: Vec<f64>,
    rule: TriangleRule,
    flux_density: Vec<[f64; 2]>,
    field_strength: Vec<[f64; 2]>,
    region_energy: Vec<f64>,
    region_coenergy: Vec<f64>,
    region_peak_b: Vec<f64>,
    newton: NewtonReport,
    load_scale: f64,
    /// The committed magnet state after this solution (the histories with this field applied).
    state: MagnetState,
    /// Stored energy with the committed state (J/m planar, J axisymmetric).
    stored_energy: f64,
    /// Hysteresis loss of the step from the previous committed state (J/m, J).
    loss: f64,
}

impl Solution {
    pub(crate) fn new(
        model: Arc<Model>,
        layout: Arc<Layout>,
        potential: Vec<f64>,
        rule: TriangleRule,
        newton: NewtonReport,
        load_scale: f64,
        previous: &MagnetState,
    ) -> Solution {
        let state_ref = (!previous.is_empty()).then_some(previous);
        let mesh = model.mesh().clone();
        let nq = rule.len();
        let nloc = layout.nloc;
        let formulation = model.formulation();
        let order = layout.order;
        let model_ref: &Model = &model;
        let per_t: Vec<[[f64; 2]; 2]> = (0..mesh.triangles().len())
            .into_par_iter()
            .flat_map_iter(|t| {
                let region = mesh.triangle_regions()[t];
                let material = model.material(region);
                let centroid = model.region_centroids()[region.index()];
                let tri = triangle_map(&mesh, t);
                let dofs = layout.triangle_dofs(t);
                let potential = &potential;
                let histories = if material.is_hysteretic() {
                    state_ref.and_then(|s| s.histories_of(t))
                } else {
                    None
                };
                rule.points
                    .iter()
                    .zip(rule.weights)
                    .enumerate()
                    .map(move |(q, (l, wq))| {
                        let op = point_operator(formulation, order, &tri, *l, *wq);
                        let mut b = [0.0; 2];
                        for j in 0..nloc {
                            let aj = potential[dofs[j] as usize];
                            b[0] += op.coef[j][0] * aj;
                            b[1] += op.coef[j][1] * aj;
                        }
                        let h = material
                            .response_with(
                                b,
                                easy_axis(material, op.point, centroid),
                                histories.map(|h| &h[q]),
                            )
                            .h;
                        // The image region of an axisymmetric open boundary has a scaled
                        // reluctivity (1 elsewhere).
                        let s = model_ref.reluctivity_scale(region, op.point);
                        [b, [s * h[0], s * h[1]]]
                    })
            })
            .collect();
        let flux_density: Vec<[f64; 2]> = per_t.iter().map(|x| x[0]).collect();
        let field_strength: Vec<[f64; 2]> = per_t.iter().map(|x| x[1]).collect();
        drop(per_t);
        let nreg = mesh.regions().len();
        let mut region_peak_b = vec![0.0_f64; nreg];
        for (t, r) in mesh.triangle_regions().iter().enumerate() {
            for b in &flux_density[t * nq..(t + 1) * nq] {
                let m = b[0].hypot(b[1]);
                let p = &mut region_peak_b[r.index()];
                *p = p.max(m);
            }
        }
        let empty = Pattern {
            neq: 0,
            col_ptr: vec![0],
            row_idx: Vec::new(),
            upper_only: true,
            slots: Vec::new(),
        };
        let asm = Assembler {
            model: &model,
            layout: &layout,
            pattern: &empty,
            rule,
            state: state_ref,
        };
        let (region_energy, region_coenergy) = asm.energies(&potential);
        let (state, magnet_stored, loss) = if previous.is_empty() {
            (previous.clone(), 0.0, 0.0)
        } else {
            let c = previous.committed_with(&model, rule, &field_strength);
            (c.state, c.stored_energy, c.loss)
        };
        // Every other region stores its energy density (a state function of B).
        let stored_energy = magnet_stored
            + region_energy
                .iter()
                .enumerate()
                .filter(|(r, _)| !model.material(RegionId(*r as u32)).is_hysteretic())
                .map(|(_, w)| w)
                .sum::<f64>();
        Solution {
            model,
            layout,
            potential,
            rule,
            flux_density,
            field_strength,
            region_energy,
            region_coenergy,
            region_peak_b,
            newton,
            load_scale,
            state,
            stored_energy,
            loss,
        }
    }

    /// Adds `seconds` to the reported assembly time (the load vector assembled once for
    /// several steps).
    pub(crate) fn add_assembly_time(&mut self, seconds: f64) {
        self.newton.times.assembly_s += seconds;
    }

    /// The model this solution belongs to.
    pub fn model(&self) -> &Arc<Model> {
        &self.model
    }

    /// The potential at every node: the mesh vertices first (indexed by [`VertexId`]), then
    /// for P2 the edge midpoints. Planar: A_z (Wb/m). Axisymmetric: A_phi (Wb/m); the flux
    /// through the circle of radius r is 2 pi r A_phi (see [`Solution::flux_function_at`]).
    pub fn potential(&self) -> &[f64] {
        &self.potential
    }

    /// The potential at one mesh vertex (see [`Solution::potential`] for units).
    pub fn vertex_potential(&self, v: VertexId) -> f64 {
        self.potential[v.index()]
    }

    /// Coordinates of every node (m), in the order of [`Solution::potential`].
    pub fn node_points(&self) -> &[[f64; 2]] {
        &self.layout.dof_points
    }

    /// The nodes of triangle `t` (indices into [`Solution::potential`]): 3 for P1, 6 for P2
    /// (vertices, then midpoints of edges (0,1), (1,2), (2,0)).
    pub fn triangle_nodes(&self, t: TriangleId) -> &[u32] {
        self.layout.triangle_dofs(t.index())
    }

    /// The quadrature rule at whose points B and H are stored (barycentric points, weights
    /// summing to 1).
    pub fn quadrature_rule(&self) -> TriangleRule {
        self.rule
    }

    /// B (T) at the quadrature points of triangle `t`.
    pub fn flux_density_at_quadrature(&self, t: TriangleId) -> &[[f64; 2]] {
        let nq = self.rule.len();
        &self.flux_density[t.index() * nq..(t.index() + 1) * nq]
    }

    /// H (A/m) at the quadrature points of triangle `t`.
    pub fn field_strength_at_quadrature(&self, t: TriangleId) -> &[[f64; 2]] {
        let nq = self.rule.len();
        &self.field_strength[t.index() * nq..(t.index() + 1) * nq]
    }

    /// Stored magnetic energy of each region, the integral of H . dB (J/m planar, J
    /// axisymmetric). Magnets count from their H = 0 state (see the material laws).
    pub fn region_energies(&self) -> &[f64] {
        &self.region_energy
    }

    /// Co-energy of each region, the integral of B . dH = B . H - w (J/m planar, J
    /// axisymmetric).
    pub fn region_coenergies(&self) -> &[f64] {
        &self.region_coenergy
    }

    /// Total stored energy (J/m planar, J axisymmetric).
    pub fn energy(&self) -> f64 {
        self.region_energy.iter().sum()
    }

    /// Total co-energy (J/m planar, J axisymmetric).
    pub fn coenergy(&self) -> f64 {
        self.region_coenergy.iter().sum()
    }

    /// The planar stack depth (m), or `None` for axisymmetric models.
    pub fn depth_m(&self) -> Option<f64> {
        match self.model.formulation() {
            Formulation::Planar { depth_m } => Some(depth_m),
            Formulation::Axisymmetric => None,
        }
    }

    /// Total energy of the device (J): planar energy per metre times the depth; the
    /// axisymmetric energy as is.
    pub fn total_energy(&self) -> f64 {
        self.energy() * self.depth_m().unwrap_or(1.0)
    }

    /// Total co-energy of the device (J), as [`Solution::total_energy`].
    pub fn total_coenergy(&self) -> f64 {
        self.coenergy() * self.depth_m().unwrap_or(1.0)
    }

    /// Stored (recoverable) magnetic energy with the committed state after this solution
    /// (J/m planar, J axisymmetric): every region's energy density, the integral of H . dB
    /// from its own zero (see [`Material::energy_density`](crate::Material::energy_density)),
    /// except in hysteretic magnets, which store
    /// [`HysteresisLaw::stored_energy_density`](crate::HysteresisLaw::stored_energy_density)
    /// of their committed history along the easy axis plus mu_0 mu_perp H_perp^2 / 2 across
    /// it. A state function: its change over a load history plus the
    /// [`Solution::hysteresis_loss`] of every step is the energy the sources supplied.
    pub fn stored_energy(&self) -> f64 {
        self.stored_energy
    }

    /// Hysteresis loss of the load step that produced this solution (J/m planar, J
    /// axisymmetric): the dissipation of every hysteretic point's change from the committed
    /// state the step started from to the one it committed, integrated with the stiffness
    /// rule. Never negative; zero without hysteretic magnets.
    pub fn hysteresis_loss(&self) -> f64 {
        self.loss
    }

    /// Largest |B| (T) over the quadrature points of each region.
    pub fn region_peak_flux_densities(&self) -> &[f64] {
        &self.region_peak_b
    }

    /// Largest |B| (T) over the quadrature points of the region named `name`.
    pub fn peak_flux_density(&self, name: &str) -> Option<f64> {
        self.model
            .mesh()
            .region_by_name(name)
            .map(|r: RegionId| self.region_peak_b[r.index()])
    }

    /// The Newton log (iterations, residual and update histories, phase times).
    pub fn newton_report(&self) -> &NewtonReport {
        &self.newton
    }

    /// The load scale this solution was computed with (1 outside load steps).
    pub fn load_scale(&self) -> f64 {
        self.load_scale
    }

    /// The committed magnet state after this solution: every hysteretic point's history with
    /// this solution's field applied (empty without hysteretic materials). Start the next load
    /// step, or another branch of a study, from it.
    pub fn magnet_state(&self) -> &MagnetState {
        &self.state
    }

    /// Barycentric coordinates of `point` in triangle `t`, or an error if it is outside
    /// (with a relative tolerance of 1e-9).
    fn locate(&self, t: TriangleId, point: [f64; 2]) -> Result<[f64; 3], FemError> {
        let mesh = self.model.mesh();
        if t.index() >= mesh.triangles().len() {
            return Err(FemError::PointOutsideTriangle {
                triangle: t.index(),
                x: point[0],
                y: point[1],
            });
        }
        let tri = triangle_map(mesh, t.index());
        let l = tri.barycentric(point);
        if l.iter().any(|&x| x < -1e-9) {
            return Err(FemError::PointOutsideTriangle {
                triangle: t.index(),
                x: point[0],
                y: point[1],
            });
        }
        Ok(l)
    }

    /// The flux function at `point` (m) inside triangle `t`, whose contours are flux lines:
    /// A_z (Wb/m) planar; r A_phi (Wb/rad, the flux through the circle of radius r divided
    /// by 2 pi) axisymmetric.
    ///
    /// # Errors
    /// [`FemError::PointOutsideTriangle`].
    pub fn flux_function_at(&self, t: TriangleId, point: [f64; 2]) -> Result<f64, FemError> {
        let a = self.potential_at(t, point)?;
        Ok(match self.model.formulation() {
            Formulation::Planar { .. } => a,
            Formulation::Axisymmetric => point[0] * a,
        })
    }

    fn interpolate(&self, t: TriangleId, l: [f64; 3]) -> f64 {
        let v = shape_values(self.layout.order, l);
        self.layout
            .triangle_dofs(t.index())
            .iter()
            .zip(v)
            .map(|(&d, vi)| self.potential[d as usize] * vi)
            .sum()
    }

    /// Interpolates `values` (one per node of [`Solution::potential`], e.g. the difference of
    /// two potentials on this mesh) at barycentric coordinates `l` of triangle `t`, with this
    /// solution's elements.
    ///
    /// # Errors
    /// [`FemError::IncompatibleModel`] if `values` has another length than the potential or
    /// `t` is not a triangle of the mesh.
    pub fn interpolate_nodal(
        &self,
        t: TriangleId,
        l: [f64; 3],
        values: &[f64],
    ) -> Result<f64, FemError> {
        if values.len() != self.potential.len() || t.index() >= self.model.mesh().triangles().len()
        {
            return Err(FemError::IncompatibleModel {
                reason: format!(
                    "{} nodal values for a potential of {} nodes, triangle {} of {}",
                    values.len(),
                    self.potential.len(),
                    t.index() + 1,
                    self.model.mesh().triangles().len()
                ),
            });
        }
        let v = shape_values(self.layout.order, l);
        Ok(self
            .layout
            .triangle_dofs(t.index())
            .iter()
            .zip(v)
            .map(|(&d, vi)| values[d as usize] * vi)
            .sum())
    }

    /// The vector potential at `point` (m) in triangle `t`: A_z (Wb/m) planar, A_phi (Wb/m)
    /// axisymmetric.
    ///
    /// # Errors
    /// [`FemError::PointOutsideTriangle`].
    pub fn potential_at(&self, t: TriangleId, point: [f64; 2]) -> Result<f64, FemError> {
        let l = self.locate(t, point)?;
        Ok(self.interpolate(t, l))
    }

    /// B (T) at `point` (m) inside triangle `t`, from the interpolated potential.
    ///
    /// Axisymmetric: B = (-dA/dz, dA/dr + A/r); on the axis (r = 0, where A = 0) the limit
    /// B_z = 2 dA/dr is used.
    ///
    /// # Errors
    /// [`FemError::PointOutsideTriangle`].
    pub fn flux_density_at(&self, t: TriangleId, point: [f64; 2]) -> Result<[f64; 2], FemError> {
        let l = self.locate(t, point)?;
        let mesh = self.model.mesh();
        let tri = triangle_map(mesh, t.index());
        let dofs = self.layout.triangle_dofs(t.index());
        let g = shape_gradients(self.layout.order, &tri, l);
        let mut grad = [0.0; 2];
        for (gj, &d) in g.iter().zip(dofs) {
            grad[0] += gj[0] * self.potential[d as usize];
            grad[1] += gj[1] * self.potential[d as usize];
        }
        Ok(match self.model.formulation() {
            Formulation::Planar { .. } => [grad[1], -grad[0]],
            Formulation::Axisymmetric => {
                if point[0] > 0.0 {
                    let a = self.interpolate(t, l);
                    [-grad[1], grad[0] + a / point[0]]
                } else {
                    [-grad[1], 2.0 * grad[0]]
                }
            }
        })
    }

    /// The element order of the solution.
    pub fn order(&self) -> ElementOrder {
        self.layout.order
    }
}

/// Non-panicking twins of the id-indexed getters, for ids that come from outside (a file, a
/// user, another mesh): an id beyond the mesh is a typed error naming the id and the count.
impl Solution {
    fn check_triangle(&self, t: TriangleId) -> Result<usize, FemError> {
        let count = self.model.mesh().triangles().len();
        if t.index() < count {
            Ok(t.index())
        } else {
            Err(FemError::OutOfRange {
                what: "triangle id".into(),
                value: t.index() as f64,
                reason: format!(
                    "the mesh has {count} triangles (ids 0 to {})",
                    count.max(1) - 1
                ),
            })
        }
    }

    /// [`Solution::vertex_potential`] without panicking.
    ///
    /// # Errors
    /// [`FemError::OutOfRange`] if `v` is not a vertex of the mesh.
    pub fn try_vertex_potential(&self, v: VertexId) -> Result<f64, FemError> {
        let count = self.model.mesh().vertices().len();
        match self.potential.get(v.index()) {
            Some(&a) if v.index() < count => Ok(a),
            _ => Err(FemError::OutOfRange {
                what: "vertex id".into(),
                value: v.index() as f64,
                reason: format!(
                    "the mesh has {count} vertices (ids 0 to {})",
                    count.max(1) - 1
                ),
            }),
        }
    }

    /// [`Solution::triangle_nodes`] without panicking.
    ///
    /// # Errors
    /// [`FemError::OutOfRange`] if `t` is not a triangle of the mesh.
    pub fn try_triangle_nodes(&self, t: TriangleId) -> Result<&[u32], FemError> {
        let t = self.check_triangle(t)?;
        Ok(self.layout.triangle_dofs(t))
    }

    /// [`Solution::flux_density_at_quadrature`] without panicking: B (T) at the quadrature
    /// points of triangle `t`.
    ///
    /// # Errors
    /// [`FemError::OutOfRange`] if `t` is not a triangle of the mesh.
    pub fn try_flux_density_at_quadrature(&self, t: TriangleId) -> Result<&[[f64; 2]], FemError> {
        let t = self.check_triangle(t)?;
        let nq = self.rule.len();
        self.flux_density
            .get(t * nq..(t + 1) * nq)
            .ok_or_else(|| FemError::OutOfRange {
                what: "triangle id".into(),
                value: t as f64,
                reason: "no stored flux density for this triangle".into(),
            })
    }

    /// [`Solution::field_strength_at_quadrature`] without panicking: H (A/m) at the
    /// quadrature points of triangle `t`.
    ///
    /// # Errors
    /// [`FemError::OutOfRange`] if `t` is not a triangle of the mesh.
    pub fn try_field_strength_at_quadrature(&self, t: TriangleId) -> Result<&[[f64; 2]], FemError> {
        let t = self.check_triangle(t)?;
        let nq = self.rule.len();
        self.field_strength
            .get(t * nq..(t + 1) * nq)
            .ok_or_else(|| FemError::OutOfRange {
                what: "triangle id".into(),
                value: t as f64,
                reason: "no stored field strength for this triangle".into(),
            })
    }
}
