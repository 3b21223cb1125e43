//! The committed magnetic history of every quadrature point of the hysteretic magnets: a
//! [`MagnetState`], a plain value to clone, save (serde), restore and branch from.
//!
//! # Guarantees
//! - A state is keyed to the triangles of the hysteretic regions and to their shapes (side
//!   lengths), not to their position: a moving part (rigid group) translated or turned keeps
//!   its triangles and their numbering, so one state serves every position of a force sweep.
//!   A model whose hysteretic triangles differ (another mesh, another element order or
//!   quadrature rule, a region that changed material) is refused with
//!   [`FemError::IncompatibleState`].
//! - The solver only ever reads a committed state; after a converged load step it returns a
//!   new one (return mapping, as in plasticity). A failed step leaves the caller's state as
//!   it was.

use coercive_mesh::Mesh;
use serde::{Deserialize, Serialize};

use crate::assembly::{easy_axis, point_operator, triangle_map};
use crate::hysteresis::History;
use crate::material::{Material, MU_0};
use crate::model::Model;
use crate::quadrature::TriangleRule;
use crate::FemError;

/// Relative tolerance on the squared side lengths of a triangle for a state to apply to it.
const SHAPE_TOLERANCE: f64 = 1e-9;

/// The committed history of each quadrature point of the hysteretic regions of a model.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct MagnetState {
    /// Quadrature points per triangle.
    points_per_triangle: usize,
    /// The hysteretic triangles, ascending.
    triangles: Vec<u32>,
    /// Squared side lengths (m^2) of each of `triangles`, to recognise the mesh.
    shapes: Vec<[f64; 3]>,
    /// One history per quadrature point, triangle-major.
    histories: Vec<History>,
}

fn shape(mesh: &Mesh, t: usize) -> [f64; 3] {
    let tri = mesh.triangles()[t];
    let p = tri.map(|v| mesh.vertex(v));
    let d2 = |a: coercive_mesh::Point2, b: coercive_mesh::Point2| {
        (a.x - b.x).powi(2) + (a.y - b.y).powi(2)
    };
    [d2(p[0], p[1]), d2(p[1], p[2]), d2(p[2], p[0])]
}

impl MagnetState {
    /// The initial state of `model`: every point of a hysteretic region in its material's
    /// [`InitialMagnetisation`](crate::InitialMagnetisation). Empty when the model has no
    /// hysteretic material.
    pub fn initial(model: &Model) -> MagnetState {
        let rule =
            crate::assembly::stiffness_rule(model.formulation(), model.order(), model.is_linear());
        let mesh = model.mesh();
        let mut triangles = Vec::new();
        let mut shapes = Vec::new();
        let mut histories = Vec::new();
        for (t, r) in mesh.triangle_regions().iter().enumerate() {
            if let Material::Hysteretic(m) = model.material(*r) {
                triangles.push(t as u32);
                shapes.push(shape(mesh, t));
                for _ in 0..rule.len() {
                    histories.push(m.initial_history());
                }
            }
        }
        MagnetState {
            points_per_triangle: rule.len(),
            triangles,
            shapes,
            histories,
        }
    }

    /// True when the model has no hysteretic point.
    pub fn is_empty(&self) -> bool {
        self.triangles.is_empty()
    }

    /// Number of quadrature points with a history.
    pub fn points(&self) -> usize {
        self.histories.len()
    }

    /// Quadrature points per triangle.
    pub fn points_per_triangle(&self) -> usize {
        self.points_per_triangle
    }

    /// The hysteretic triangles (indices into the mesh's triangles), ascending.
    pub fn triangles(&self) -> &[u32] {
        &self.triangles
    }

    /// The histories of triangle `t`'s quadrature points, or `None` if `t` holds no
    /// hysteretic material.
    #[inline]
    pub fn histories_of(&self, t: usize) -> Option<&[History]> {
        let k = self.triangles.binary_search(&(t as u32)).ok()?;
        let n = self.points_per_triangle;
        Some(&self.histories[k * n..(k + 1) * n])
    }

    /// All histories, triangle-major (`points_per_triangle` per entry of
    /// [`MagnetState::triangles`]).
    pub fn histories(&self) -> &[History] {
        &self.histories
    }

    /// Checks that this state belongs to `model`: the same hysteretic triangles with the same
    /// shapes and the same number of quadrature points, and valid histories.
    ///
    /// # Errors
    /// [`FemError::IncompatibleState`] saying what differs.
    pub fn check(&self, model: &Model) -> Result<(), FemError> {
        let bad = |reason: String| Err(FemError::IncompatibleState { reason });
        let rule =
            crate::assembly::stiffness_rule(model.formulation(), model.order(), model.is_linear());
        if self.points_per_triangle != rule.len() {
            return bad(format!(
                "the state has {} quadrature points per triangle, the model {} (another element \
                 order or formulation)",
                self.points_per_triangle,
                rule.len()
            ));
        }
        if self.histories.len() != self.triangles.len() * self.points_per_triangle
            || self.shapes.len() != self.triangles.len()
        {
            return bad("the state's arrays have inconsistent lengths".into());
        }
        let mesh = model.mesh();
        let nt = mesh.triangles().len();
        let mut k = 0;
        for (t, r) in mesh.triangle_regions().iter().enumerate() {
            if !model.material(*r).is_hysteretic() {
                continue;
            }
            if self.triangles.get(k) != Some(&(t as u32)) {
                return bad(format!(
                    "triangle {t} (region `{}`) is hysteretic in the model but has no history \
                     in the state (a state from another mesh or material layout)",
                    model.region_name(*r)
                ));
            }
            let s = shape(mesh, t);
            let same = s
                .iter()
                .zip(&self.shapes[k])
                .all(|(a, b)| (a - b).abs() <= SHAPE_TOLERANCE * a.max(*b));
            if !same {
                return bad(format!(
                    "triangle {t} (region `{}`) has another shape than in the state (a state \
                     from another mesh)",
                    model.region_name(*r)
                ));
            }
            k += 1;
        }
        if k != self.triangles.len() {
            let extra = self.triangles.get(k).copied().unwrap_or(0);
            return bad(format!(
                "the state holds histories for {} triangles, the model has {k} hysteretic \
                 triangles (first extra: {extra}, mesh of {nt} triangles)",
                self.triangles.len()
            ));
        }
        Ok(())
    }

    /// The state after a converged load step: each point's history with the step's field
    /// along its easy axis applied. `h` is H (A/m) at every quadrature point of the mesh
    /// (triangle-major, `rule.len()` per triangle). Also returns the energy of the magnets'
    /// points: the stored energy of the new state and the hysteresis loss of the change
    /// (see [`Committed`]).
    pub(crate) fn committed_with(
        &self,
        model: &Model,
        rule: TriangleRule,
        h: &[[f64; 2]],
    ) -> Committed {
        let mut next = self.clone();
        let mesh = model.mesh();
        let n = self.points_per_triangle;
        let mut stored_energy = 0.0;
        let mut loss = 0.0;
        for (k, &t) in self.triangles.iter().enumerate() {
            let t = t as usize;
            let region = mesh.triangle_regions()[t];
            let Material::Hysteretic(m) = model.material(region) else {
                continue;
            };
            let centroid = model.region_centroids()[region.index()];
            let tri = triangle_map(mesh, t);
            for q in 0..n {
                let op = point_operator(
                    model.formulation(),
                    model.order(),
                    &tri,
                    rule.points[q],
                    rule.weights[q],
                );
                let e = easy_axis(model.material(region), op.point, centroid);
                let hq = h[t * n + q];
                let he = hq[0] * e[0] + hq[1] * e[1];
                let hp = -hq[0] * e[1] + hq[1] * e[0];
                let history = &mut next.histories[k * n + q];
                loss += op.weight * m.law.dissipation_density(history, he);
                m.law.apply(history, he);
                stored_energy += op.weight
                    * (m.law.stored_energy_density(history)
                        + 0.5 * MU_0 * m.perpendicular_permeability * hp * hp);
            }
        }
        Committed {
            state: next,
            stored_energy,
            loss,
        }
    }
}

/// A state committed after a load step, with the energy of its hysteretic points (J per
/// metre planar, J axisymmetric), integrated with the stiffness rule's weights.
pub(crate) struct Committed {
    /// The new state.
    pub state: MagnetState,
    /// Stored energy of the hysteretic points in the new state: the integral of
    /// [`HysteresisLaw::stored_energy_density`](crate::HysteresisLaw::stored_energy_density)
    /// along the easy axis plus mu_0 mu_perp H_perp^2 / 2 across it.
    pub stored_energy: f64,
    /// Hysteresis loss of the change from the old state to the new one, the integral of
    /// [`HysteresisLaw::dissipation_density`](crate::HysteresisLaw::dissipation_density).
    pub loss: f64,
}
