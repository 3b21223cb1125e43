//! Studies: sweeps of a rigid group's placement (force versus gap, torque versus angle), run
//! in parallel with rayon, every point on a mesh that keeps the group's own triangles.
//!
//! The group (e.g. a magnet assembly) is meshed once; each sweep point re-meshes only the
//! air around it ([`coercive_mesh::RigidMesher`]), so force curves carry no re-meshing noise
//! from the moving parts and per-triangle states stay valid.

use coercive_fem::{FemError, MagnetState, Model, NewtonSettings, Solver};
use coercive_mesh::{Mesh, MeshError, Placement, RigidMesher};
use coercive_post::force::{coenergy_force, force_on, Body, ForceMethod, ForceSettings};
use coercive_post::PostError;
use rayon::prelude::*;
use serde::{Deserialize, Serialize};
use thiserror::Error;

/// A failed study point, naming the point.
#[derive(Debug, Error)]
#[non_exhaustive]
pub enum StudyError {
    /// Meshing failed at a sweep point.
    #[error("sweep point {index} ({label}): meshing failed: {source}")]
    Mesh {
        /// Index of the point.
        index: usize,
        /// The point's label (e.g. `gap 0.05 mm`).
        label: String,
        /// The mesher's error.
        #[source]
        source: MeshError,
    },
    /// Building the model or solving failed at a sweep point.
    #[error("sweep point {index} ({label}): {source}")]
    Solve {
        /// Index of the point.
        index: usize,
        /// The point's label.
        label: String,
        /// The solver's error.
        #[source]
        source: Box<FemError>,
    },
    /// Post-processing failed at a sweep point.
    #[error("sweep point {index} ({label}): {source}")]
    Post {
        /// Index of the point.
        index: usize,
        /// The point's label.
        label: String,
        /// The post-processing error.
        #[source]
        source: Box<PostError>,
    },
    /// A bad study setting.
    #[error("{what}: {reason}")]
    Invalid {
        /// The setting.
        what: String,
        /// Why it is rejected.
        reason: String,
    },
}

/// One point of a rigid-group translation sweep.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct TranslationPoint {
    /// A label for messages and tables, e.g. `gap 0.05 mm`.
    pub label: String,
    /// The swept parameter's value in SI units (e.g. the gap in m).
    pub parameter: f64,
    /// Translation of the group from its drawn position (m).
    pub offset: [f64; 2],
}

/// Settings of [`force_sweep`].
#[derive(Clone, Debug, PartialEq)]
pub struct ForceSweepSettings {
    /// The rigid group that moves.
    pub group: String,
    /// Unit vector of the group's motion (the co-energy derivative is taken along it).
    pub direction: [f64; 2],
    /// The body whose force is reported (e.g. the held plate, fixed).
    pub body: Body,
    /// The moving assembly's regions, for the action-reaction check (force on the group
    /// should be minus the force on the body when nothing else carries force).
    pub group_body: Body,
    /// Co-energy step as a fraction of each point's parameter (e.g. 0.1 of the gap); the
    /// step is at least `min_step_m`.
    pub relative_step: f64,
    /// Smallest co-energy step (m).
    pub min_step_m: f64,
    /// Settings of the stress methods.
    pub force: ForceSettings,
}

/// The force on the body at one sweep point by three methods, N for the stack depth
/// (planar) or total (axisymmetric), as components along the motion direction.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct ForcePoint {
    /// The point.
    pub point: TranslationPoint,
    /// Eggshell (main shell) force on the body along the motion direction (N).
    pub eggshell_n: f64,
    /// Maxwell stress on the mid-line of the first air layer, same component (N).
    pub stress_n: f64,
    /// Co-energy difference: minus dW'/dx of the moving group (N), i.e. the body's share by
    /// action-reaction.
    pub coenergy_n: f64,
    /// The co-energy step used (m).
    pub coenergy_step_m: f64,
    /// Relative spread of the three values (dimensionless).
    pub spread: f64,
    /// True when the spread exceeds [`ForceSettings::spread_warning`].
    pub warning: bool,
    /// Eggshell force on the moving group along the motion direction (N): should be
    /// -`eggshell_n` (action-reaction).
    pub group_eggshell_n: f64,
    /// Largest |B| over the quadrature points of each body region (T), for saturation.
    pub peak_flux_density_t: f64,
    /// Newton iterations of the central solve.
    pub newton_iterations: usize,
    /// Triangles of the central mesh.
    pub triangles: usize,
}

/// Sweeps a rigid group through `points` in parallel and reports, at each, the force on
/// `settings.body` by the eggshell, the mid-line stress and the co-energy difference (two
/// extra solves at the point's offset plus and minus a step along the motion).
///
/// `build` turns each mesh into a model (materials, windings, boundary conditions).
///
/// # Errors
/// The first failing point's [`StudyError`] (points are independent; the index says which).
pub fn force_sweep<B>(
    rigid: &RigidMesher,
    points: &[TranslationPoint],
    settings: &ForceSweepSettings,
    build: B,
) -> Result<Vec<ForcePoint>, StudyError>
where
    B: Fn(Mesh) -> Result<Model, FemError> + Sync,
{
    sweep(rigid, points, settings, None, build)
}

/// [`force_sweep`] with the hysteretic magnets in the committed `state` at every point (e.g.
/// the state a switching pulse left). The moving part keeps its triangles at every position,
/// so one state fits every point; each solve starts from it and none changes it (a small
/// virtual displacement moves the magnets along their recoil branches).
///
/// # Errors
/// As [`force_sweep`]; a state that does not fit a point's model is that point's
/// [`StudyError::Solve`].
pub fn force_sweep_with_state<B>(
    rigid: &RigidMesher,
    points: &[TranslationPoint],
    settings: &ForceSweepSettings,
    state: &MagnetState,
    build: B,
) -> Result<Vec<ForcePoint>, StudyError>
where
    B: Fn(Mesh) -> Result<Model, FemError> + Sync,
{
    sweep(rigid, points, settings, Some(state), build)
}

fn sweep<B>(
    rigid: &RigidMesher,
    points: &[TranslationPoint],
    settings: &ForceSweepSettings,
    state: Option<&MagnetState>,
    build: B,
) -> Result<Vec<ForcePoint>, StudyError>
where
    B: Fn(Mesh) -> Result<Model, FemError> + Sync,
{
    let d = settings.direction;
    let norm = d[0].hypot(d[1]);
    if !(norm.is_finite() && (norm - 1.0).abs() < 1e-9) {
        return Err(StudyError::Invalid {
            what: "sweep direction".into(),
            reason: format!("must be a unit vector, got ({}, {})", d[0], d[1]),
        });
    }
    if !(settings.relative_step > 0.0 && settings.min_step_m > 0.0) {
        return Err(StudyError::Invalid {
            what: "co-energy step".into(),
            reason: "relative step and minimum step must be positive".into(),
        });
    }
    points
        .par_iter()
        .enumerate()
        .map(|(index, point)| sweep_point(rigid, index, point, settings, state, &build))
        .collect()
}

fn sweep_point<B>(
    rigid: &RigidMesher,
    index: usize,
    point: &TranslationPoint,
    settings: &ForceSweepSettings,
    state: Option<&MagnetState>,
    build: &B,
) -> Result<ForcePoint, StudyError>
where
    B: Fn(Mesh) -> Result<Model, FemError> + Sync,
{
    let label = || point.label.clone();
    let d = settings.direction;
    let step = (settings.relative_step * point.parameter.abs()).max(settings.min_step_m);
    let solve_at = |shift: f64| {
        let offset = [
            point.offset[0] + shift * d[0],
            point.offset[1] + shift * d[1],
        ];
        let mesh = rigid
            .mesh_at(&[(
                settings.group.as_str(),
                Placement::translation(offset[0], offset[1]),
            )])
            .map_err(|source| StudyError::Mesh {
                index,
                label: label(),
                source,
            })?;
        build(mesh)
            .and_then(|m| match state {
                Some(state) => {
                    Solver::new(&m)?.solve_with_state(&m, state, None, &NewtonSettings::default())
                }
                None => m.solve(),
            })
            .map_err(|source| StudyError::Solve {
                index,
                label: label(),
                source: Box::new(source),
            })
    };
    let post = |source| StudyError::Post {
        index,
        label: label(),
        source: Box::new(source),
    };
    let centre = solve_at(0.0)?;
    let before = solve_at(-step)?;
    let after = solve_at(step)?;
    let along = |f: [f64; 2]| f[0] * d[0] + f[1] * d[1];
    let depth = centre.depth_m().unwrap_or(1.0);
    let f = force_on(&centre, &settings.body, &settings.force).map_err(post)?;
    let g = force_on(&centre, &settings.group_body, &settings.force).map_err(post)?;
    let cd =
        coenergy_force(&before, &after, [2.0 * step * d[0], 2.0 * step * d[1]]).map_err(post)?;
    let eggshell_n = along(f.force()) * depth;
    let stress_n = f
        .by(&ForceMethod::StressMidLine)
        .map(|m| along(m.force) * depth)
        .unwrap_or(f64::NAN);
    // dW'/dx is the force on the moving group; the body gets the opposite.
    let coenergy_n = -cd.force * depth;
    let spread = coercive_post::force::relative_spread(&[eggshell_n, stress_n, coenergy_n], 0.0);
    let mesh = centre.model().mesh();
    let peak = settings
        .body
        .regions
        .iter()
        .filter_map(|r| centre.peak_flux_density(r))
        .fold(0.0_f64, f64::max);
    Ok(ForcePoint {
        point: point.clone(),
        eggshell_n,
        stress_n,
        coenergy_n,
        coenergy_step_m: step,
        spread,
        warning: spread > settings.force.spread_warning,
        group_eggshell_n: along(g.force()) * depth,
        peak_flux_density_t: peak,
        newton_iterations: centre.newton_report().iterations,
        triangles: mesh.triangles().len(),
    })
}
