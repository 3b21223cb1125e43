//! The [`Solver`]: node layout, sparsity pattern and symbolic factorisation of a mesh,
//! built once and shared by every solve on models with the same mesh and constraints.

use std::sync::Arc;

use coercive_mesh::Mesh;

use crate::assembly::{stiffness_rule, Assembler, Pattern};
use crate::dof::{Layout, FIXED};
use crate::linsolve::{Factor, LinearSolverKind, Symbolic};
use crate::newton::{self, NewtonFailureReason, NewtonSettings, RunError};
use crate::solution::Solution;
use crate::state::MagnetState;
use crate::{FemError, Model};

/// Everything about a model's discretisation that does not depend on material values or
/// sources: the node layout, the sparsity pattern with its element-to-slot map, and the
/// symbolic factorisation (fill-reducing ordering and elimination structure).
///
/// Build it once per mesh, constraint layout and element order, then solve any number of
/// models that differ only in materials, sources or fixed-potential values (a sweep of
/// currents, load steps). Cheap to clone (shared internals).
#[derive(Clone, Debug)]
pub struct Solver {
    mesh: Arc<Mesh>,
    layout: Arc<Layout>,
    pattern: Arc<Pattern>,
    symbolic: Symbolic,
    kind: LinearSolverKind,
}

impl Solver {
    /// Prepares a Cholesky-based solver for `model`.
    ///
    /// # Errors
    /// Constraint conflicts, [`FemError::FloatingRegions`] when part of the model has no fixed
    /// potential (a singular system), and factorisation set-up failures.
    pub fn new(model: &Model) -> Result<Solver, FemError> {
        Self::with_linear_solver(model, LinearSolverKind::Cholesky)
    }

    /// Prepares a solver for `model` with the given linear solver.
    ///
    /// # Errors
    /// As [`Solver::new`].
    pub fn with_linear_solver(model: &Model, kind: LinearSolverKind) -> Result<Solver, FemError> {
        let layout = Layout::new(model)?;
        layout.check_floating(model)?;
        let pattern = Pattern::new(&layout, kind == LinearSolverKind::Cholesky)?;
        let symbolic = Symbolic::new(&pattern, kind)?;
        Ok(Solver {
            mesh: model.mesh().clone(),
            layout: Arc::new(layout),
            pattern: Arc::new(pattern),
            symbolic,
            kind,
        })
    }

    /// Number of free unknowns.
    pub fn unknowns(&self) -> usize {
        self.layout.neq
    }

    /// Number of nodes (P1: mesh vertices; P2: vertices and edge midpoints).
    pub fn nodes(&self) -> usize {
        self.layout.ndofs()
    }

    /// Stored entries of the tangent matrix (upper triangle for Cholesky).
    pub fn matrix_entries(&self) -> usize {
        self.pattern.nnz()
    }

    /// Entries of the Cholesky factor (8 bytes each), if Cholesky is used.
    pub fn factor_entries(&self) -> Option<usize> {
        self.symbolic.factor_entries()
    }

    /// The linear solver in use.
    pub fn linear_solver(&self) -> LinearSolverKind {
        self.kind
    }

    /// The layout of `model`, checked to be compatible with this solver.
    fn layout_for(&self, model: &Model) -> Result<Arc<Layout>, FemError> {
        if !Arc::ptr_eq(&self.mesh, model.mesh()) && *self.mesh != **model.mesh() {
            return Err(FemError::IncompatibleModel {
                reason: "different mesh".into(),
            });
        }
        if model.order() != self.layout.order {
            return Err(FemError::IncompatibleModel {
                reason: format!(
                    "element order {:?} instead of {:?}",
                    model.order(),
                    self.layout.order
                ),
            });
        }
        let layout = Layout::new(model)?;
        if layout.dof_eq != self.layout.dof_eq || layout.dof_sign != self.layout.dof_sign {
            return Err(FemError::IncompatibleModel {
                reason: "different boundary conditions (fixed or linked nodes)".into(),
            });
        }
        Ok(Arc::new(layout))
    }

    /// Solves `model` from zero potential on the free nodes (hysteretic magnets in their
    /// initial state).
    ///
    /// # Errors
    /// [`FemError::IncompatibleModel`], [`FemError::NewtonFailed`] (with the last iterate and
    /// history), [`FemError::NotPositiveDefinite`] naming a node and region, or a
    /// non-finite source.
    pub fn solve(&self, model: &Model, settings: &NewtonSettings) -> Result<Solution, FemError> {
        let mut steps = self.solve_load_steps(model, &[1.0], None, settings)?;
        Ok(steps.remove(0))
    }

    /// Solves `model` starting from the potential of `initial` (a warm start, e.g. the
    /// previous point of a sweep on the same mesh). Hysteretic magnets start from their
    /// initial state, not from `initial`'s (use [`Solver::solve_with_state`] for that).
    ///
    /// # Errors
    /// As [`Solver::solve`]; also if `initial` has a different number of nodes.
    pub fn solve_from(
        &self,
        model: &Model,
        initial: &Solution,
        settings: &NewtonSettings,
    ) -> Result<Solution, FemError> {
        let mut steps = self.solve_load_steps(model, &[1.0], Some(initial), settings)?;
        Ok(steps.remove(0))
    }

    /// Solves `model` with its hysteretic magnets in the committed `state` (e.g. the state a
    /// pulse left behind), optionally warm-started from the potential of `initial`. The
    /// returned solution's [`Solution::magnet_state`] is `state` with this field applied; the
    /// given `state` is not changed, so one state serves a whole sweep (every gap of a
    /// force study with a moving part keeps the magnets' triangles).
    ///
    /// # Errors
    /// As [`Solver::solve_from`]; [`FemError::IncompatibleState`] if `state` belongs to
    /// another mesh or material layout.
    pub fn solve_with_state(
        &self,
        model: &Model,
        state: &MagnetState,
        initial: Option<&Solution>,
        settings: &NewtonSettings,
    ) -> Result<Solution, FemError> {
        self.solve_with_state_from(model, state, initial.map(|s| s.potential()), settings)
    }

    /// [`Solver::solve_with_state`] warm-started from a potential given at every node of
    /// [`Solver::node_points`] (e.g. a solution on another mesh of the same device
    /// interpolated there); only its free values are used.
    ///
    /// # Errors
    /// As [`Solver::solve_with_state`]; [`FemError::IncompatibleModel`] if `initial` has the
    /// wrong length.
    pub fn solve_with_state_from(
        &self,
        model: &Model,
        state: &MagnetState,
        initial: Option<&[f64]>,
        settings: &NewtonSettings,
    ) -> Result<Solution, FemError> {
        state.check(model)?;
        let mut steps = self.steps(model, &[1.0], initial, state, settings)?;
        Ok(steps.remove(0))
    }

    /// The position (m) of every node of the potential (vertices, then the edge nodes of
    /// quadratic elements), in the order of [`Solution::potential`].
    pub fn node_points(&self) -> &[[f64; 2]] {
        &self.layout.dof_points
    }

    /// Solves a sequence of load steps: the current densities (windings included) are scaled
    /// by each factor in turn (remanence and fixed potentials are not scaled), each step
    /// starting from the previous converged one (or from `initial`'s potential). Hysteretic
    /// magnets start from their initial state; each converged step commits their histories
    /// and the next step starts from that committed state.
    ///
    /// # Errors
    /// As [`Solver::solve`]; the first failing step ends the sequence.
    pub fn solve_load_steps(
        &self,
        model: &Model,
        scales: &[f64],
        initial: Option<&Solution>,
        settings: &NewtonSettings,
    ) -> Result<Vec<Solution>, FemError> {
        let state = MagnetState::initial(model);
        self.steps(
            model,
            scales,
            initial.map(|s| s.potential()),
            &state,
            settings,
        )
    }

    /// The load steps of [`Solver::solve_load_steps`] from a given state and potential.
    fn steps(
        &self,
        model: &Model,
        scales: &[f64],
        initial: Option<&[f64]>,
        state: &MagnetState,
        settings: &NewtonSettings,
    ) -> Result<Vec<Solution>, FemError> {
        let layout = self.layout_for(model)?;
        for (i, s) in scales.iter().enumerate() {
            if !s.is_finite() {
                return Err(FemError::NotFinite {
                    what: format!("load step {i} scale"),
                    value: *s,
                });
            }
        }
        let model = Arc::new(model.clone());
        let rule = stiffness_rule(model.formulation(), model.order(), model.is_linear());
        let t0 = std::time::Instant::now();
        let load = Assembler {
            model: &model,
            layout: &layout,
            pattern: &self.pattern,
            rule,
            state: None,
        }
        .load()?;
        let load_time = t0.elapsed().as_secs_f64();
        let mut a = self.start_potential(&layout, initial)?;
        let mut factor = Factor::new(&self.symbolic)?;
        let mut state = state.clone();
        let mut out = Vec::with_capacity(scales.len());
        let mut scaled = vec![0.0; load.len()];
        for &s in scales {
            for (y, l) in scaled.iter_mut().zip(&load) {
                *y = s * l;
            }
            let mut solution = self.step(
                &model,
                &layout,
                &mut factor,
                &scaled,
                &mut a,
                &state,
                settings,
                s,
            )?;
            solution.add_assembly_time(load_time);
            state = solution.magnet_state().clone();
            out.push(solution);
        }
        Ok(out)
    }

    /// The starting potential: `initial`'s free values with this layout's fixed values, or
    /// zero on the free nodes.
    pub(crate) fn start_potential(
        &self,
        layout: &Layout,
        initial: Option<&[f64]>,
    ) -> Result<Vec<f64>, FemError> {
        let mut a = vec![0.0; layout.ndofs()];
        if let Some(init) = initial {
            if init.len() != a.len() {
                return Err(FemError::IncompatibleModel {
                    reason: format!(
                        "initial solution has {} nodes, the model {}",
                        init.len(),
                        a.len()
                    ),
                });
            }
            // Take the free values of the initial solution, and this model's fixed values.
            let x = newton::restrict(layout, init);
            newton::expand(layout, &x, &mut a);
        } else {
            newton::expand(layout, &vec![0.0; layout.neq], &mut a);
        }
        Ok(a)
    }

    /// One load step: Newton from `a` (overwritten with the converged potential) with the
    /// hysteretic points in the committed `state`, for the free-equation `load`.
    #[allow(clippy::too_many_arguments)]
    pub(crate) fn step(
        &self,
        model: &Arc<Model>,
        layout: &Arc<Layout>,
        factor: &mut Factor,
        load: &[f64],
        a: &mut [f64],
        state: &MagnetState,
        settings: &NewtonSettings,
        scale: f64,
    ) -> Result<Solution, FemError> {
        let rule = stiffness_rule(model.formulation(), model.order(), model.is_linear());
        let asm = Assembler {
            model,
            layout,
            pattern: &self.pattern,
            rule,
            state: (!state.is_empty()).then_some(state),
        };
        match newton::run(&asm, factor, load, a, settings, model.is_linear()) {
            Ok(report) => Ok(Solution::new(
                model.clone(),
                layout.clone(),
                a.to_vec(),
                rule,
                report,
                scale,
                state,
            )),
            Err(RunError::Failed(f)) => Err(FemError::NewtonFailed(f)),
            Err(RunError::Pivot(eq, f)) => {
                Err(pivot_error(model, layout, eq).unwrap_or_else(|| {
                    let mut f = f;
                    f.reason = NewtonFailureReason::Factorisation("non-positive pivot".into());
                    FemError::NewtonFailed(f)
                }))
            }
        }
    }

    /// The layout and a fresh numeric factorisation workspace for `model`.
    pub(crate) fn prepare(&self, model: &Model) -> Result<(Arc<Layout>, Factor), FemError> {
        Ok((self.layout_for(model)?, Factor::new(&self.symbolic)?))
    }

    /// The sparsity pattern (for assemblers built outside this module).
    pub(crate) fn pattern(&self) -> &Pattern {
        &self.pattern
    }
}

/// Names the node, position and a region of the free equation `eq`.
fn pivot_error(model: &Model, layout: &Layout, eq: usize) -> Option<FemError> {
    let d = layout
        .dof_eq
        .iter()
        .position(|&e| e != FIXED && e as usize == eq)?;
    let t = (0..layout.element_dofs.len() / layout.nloc)
        .find(|&t| layout.triangle_dofs(t).contains(&(d as u32)))?;
    let p = layout.dof_points[d];
    Some(FemError::NotPositiveDefinite {
        node: d,
        x: p[0],
        y: p[1],
        region: model
            .region_name(model.mesh().triangle_regions()[t])
            .to_string(),
    })
}
