//! Studies: sweeps of a rigid group's placement (force versus gap, torque versus angle), run
//! in parallel with rayon, every point on a mesh that keeps the group's own triangles.
//!
//! The group (e.g. a magnet assembly) is meshed once; each sweep point re-meshes only the
//! air around it ([`coercive_mesh::RigidMesher`]), so force curves carry no re-meshing noise
//! from the moving parts and per-triangle states stay valid.

use coercive_fem::{
    FemError, MagnetDirection, MagnetState, Material, Model, NewtonSettings, Solution, Solver,
};
use coercive_mesh::{Mesh, MeshError, Placement, Point2, RegionId, RigidMesher};
use coercive_post::force::{
    arkkio_torque, coenergy_force_richardson, force_on, AirGap, Body, BodyRole, ForceMethod,
    ForceSettings,
};
use coercive_post::winding::flux_linkage;
use coercive_post::{PointLocator, PostError};
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
    /// A point that failed with its angle's set-up (mesh or model), reported again for
    /// each further current set of that angle.
    #[error("angle {:.4} deg: {reason}", angle_rad.to_degrees())]
    Point {
        /// The angle (rad).
        angle_rad: f64,
        /// The set-up error.
        reason: String,
    },
    /// A moving part turned to an angle of the study would overlap a fixed curve (e.g. the
    /// rotor touching the stator): found before any point is meshed.
    #[error(
        "moving part `{group}` turned {:.4} deg would overlap the fixed curve `{curve}` at \
         ({:.4}, {:.4}) mm",
        angle_rad.to_degrees(),
        1e3 * point[0],
        1e3 * point[1]
    )]
    Collision {
        /// The moving part.
        group: String,
        /// The first angle of the study at which it overlaps (rad).
        angle_rad: f64,
        /// The fixed curve it overlaps.
        curve: String,
        /// A point of that curve inside the turned part (m).
        point: [f64; 2],
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
    /// should be minus the force on the body when nothing else carries force) and for the
    /// sign of the co-energy force: the body must be exactly these regions (it then gets
    /// dW'/dx) or share none of them (it gets -dW'/dx), see [`BodyRole`].
    pub group_body: Body,
    /// Largest co-energy step h as a fraction of each point's parameter when that is a gap
    /// (e.g. 0.2); ignored when the parameter is 0 (offset sweeps).
    pub relative_step: f64,
    /// Largest co-energy step h as a fraction of the mean edge of the air triangles touching
    /// the moving group at each point (e.g. 0.5).
    pub size_step: f64,
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
    /// Co-energy difference (N): the central difference with step h/2 of the moving group's
    /// co-energy, dW'/dx when the body is the moving group and -dW'/dx (action-reaction)
    /// when the body is apart from it.
    pub coenergy_n: f64,
    /// Richardson estimate of the truncation error of `coenergy_n` from the central
    /// differences with steps h and h/2 (N, >= 0); see
    /// [`coercive_post::force::CoenergyRichardson`].
    pub coenergy_step_error_n: f64,
    /// The larger co-energy step h (m); the reported value uses h/2.
    pub coenergy_step_m: f64,
    /// Relative spread of the three values (dimensionless).
    pub spread: f64,
    /// True when the spread, the co-energy step error relative to the force, or the body's
    /// relative uncertainty ([`coercive_post::force::BodyForce::relative_uncertainty`])
    /// exceeds [`ForceSettings::spread_warning`].
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
/// `settings.body` by the eggshell, the mid-line stress and the co-energy difference (four
/// extra solves at the point's offset plus and minus h and h/2 along the motion, with the
/// Richardson estimate of the step's truncation error).
///
/// The step h is the smaller of `relative_step` times the gap (gap sweeps) and `size_step`
/// times the mean edge of the air triangles touching the group, and at least `min_step_m`:
/// the truncation error grows as (h / gap)^2, the re-meshing noise of the co-energy as
/// (energy error) / h, and the energy error is set by the element size, not by the gap.
///
/// `build` turns each mesh into a model (materials, windings, boundary conditions).
///
/// # Errors
/// The first failing point's [`StudyError`] (points are independent; the index says which);
/// [`StudyError::Invalid`] when the body overlaps the moving group without being it.
pub fn force_sweep<B>(
    rigid: &RigidMesher,
    points: &[TranslationPoint],
    settings: &ForceSweepSettings,
    build: B,
) -> Result<Vec<ForcePoint>, StudyError>
where
    B: Fn(Mesh) -> Result<Model, FemError> + Sync,
{
    let per_point = sweep(rigid, points, settings, None, build)?;
    Ok(per_point.into_iter().flatten().collect())
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
    let per_point = sweep(rigid, points, settings, Some(&[state]), build)?;
    Ok(per_point.into_iter().flatten().collect())
}

/// [`force_sweep_with_state`] for several states at once: the force at every point in each
/// state (outer index: state, inner: point). Each point's meshes, models and factorisation
/// set-ups are built once and serve every state, and each state's solve starts from the
/// previous state's field at that point: cheaper than one sweep per state when the states
/// are many or alike (the forces after pulses of growing amplitude).
///
/// # Errors
/// As [`force_sweep_with_state`].
pub fn force_sweep_with_states<B>(
    rigid: &RigidMesher,
    points: &[TranslationPoint],
    settings: &ForceSweepSettings,
    states: &[&MagnetState],
    build: B,
) -> Result<Vec<Vec<ForcePoint>>, StudyError>
where
    B: Fn(Mesh) -> Result<Model, FemError> + Sync,
{
    let per_point = sweep(rigid, points, settings, Some(states), build)?;
    let mut per_state: Vec<Vec<ForcePoint>> = vec![Vec::with_capacity(points.len()); states.len()];
    for row in per_point {
        for (k, p) in row.into_iter().enumerate() {
            per_state[k].push(p);
        }
    }
    Ok(per_state)
}

fn sweep<B>(
    rigid: &RigidMesher,
    points: &[TranslationPoint],
    settings: &ForceSweepSettings,
    states: Option<&[&MagnetState]>,
    build: B,
) -> Result<Vec<Vec<ForcePoint>>, StudyError>
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
    let steps = [
        settings.relative_step,
        settings.size_step,
        settings.min_step_m,
    ];
    if !steps.iter().all(|s| s.is_finite() && *s > 0.0) {
        return Err(StudyError::Invalid {
            what: "co-energy step".into(),
            reason: "relative step, size step and minimum step must be positive".into(),
        });
    }
    let role =
        BodyRole::of(&settings.body, &settings.group_body).map_err(|e| StudyError::Invalid {
            what: "sweep body".into(),
            reason: e.to_string(),
        })?;
    points
        .par_iter()
        .enumerate()
        .map(|(index, point)| sweep_point(rigid, index, point, settings, role, states, &build))
        .collect()
}

/// The potential of `solution` at `points` (0 where a point lies outside its mesh): the warm
/// start of a solve on a nearby mesh of the same device.
fn transferred(solution: &Solution, locator: &PointLocator, points: &[[f64; 2]]) -> Vec<f64> {
    transferred_values(solution, solution.potential(), locator, points)
}

/// The nodal field `values` (one value per node of `solution`'s potential) interpolated at
/// `points` with `solution`'s elements (0 outside the mesh).
fn transferred_values(
    solution: &Solution,
    values: &[f64],
    locator: &PointLocator,
    points: &[[f64; 2]],
) -> Vec<f64> {
    points
        .par_iter()
        .map(|&p| {
            locator
                .try_locate(p)
                .and_then(|l| {
                    solution
                        .interpolate_nodal(l.triangle, l.barycentric, values)
                        .ok()
                })
                .unwrap_or(0.0)
        })
        .collect()
}

fn sweep_point<B>(
    rigid: &RigidMesher,
    index: usize,
    point: &TranslationPoint,
    settings: &ForceSweepSettings,
    role: BodyRole,
    states: Option<&[&MagnetState]>,
    build: &B,
) -> Result<Vec<ForcePoint>, StudyError>
where
    B: Fn(Mesh) -> Result<Model, FemError> + Sync,
{
    let label = || point.label.clone();
    let d = settings.direction;
    let solve_error = |source: FemError| StudyError::Solve {
        index,
        label: label(),
        source: Box::new(source),
    };
    // The model and solver set-up at the moving part's position shifted by `shift`.
    let prepare = |shift: f64| -> Result<(Model, Solver), StudyError> {
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
            .and_then(|m| Ok((Solver::new(&m)?, m)))
            .map(|(s, m)| (m, s))
            .map_err(solve_error)
    };
    let solve = |(model, solver): &(Model, Solver),
                 state: Option<&MagnetState>,
                 initial: Option<&[f64]>| {
        let initial_state;
        let state = match state {
            Some(state) => state,
            None => {
                initial_state = MagnetState::initial(model);
                &initial_state
            }
        };
        solver
            .solve_with_state_from(model, state, initial, &NewtonSettings::default())
            .map_err(solve_error)
    };
    let centre_setup = prepare(0.0)?;
    let size = element_size_next_to(centre_setup.0.mesh(), &settings.group_body.regions);
    let mut step = settings.size_step * size;
    if point.parameter != 0.0 {
        step = step.min(settings.relative_step * point.parameter.abs());
    }
    let step = step.max(settings.min_step_m);
    let shifted_setups = [
        prepare(-step)?,
        prepare(-0.5 * step)?,
        prepare(0.5 * step)?,
        prepare(step)?,
    ];
    let locator = PointLocator::new(centre_setup.0.mesh().clone());
    let list: Vec<Option<&MagnetState>> = match states {
        Some(states) => states.iter().map(|s| Some(*s)).collect(),
        None => vec![None],
    };
    let mut out = Vec::with_capacity(list.len());
    let mut previous: Option<(Solution, Vec<Solution>)> = None;
    for state in list {
        // Warm starts. The centre starts from the previous state's centre field (same mesh).
        // A shifted solve of the first state starts from this state's centre field
        // interpolated at its nodes (the meshes differ only in the re-meshed air, and A is
        // continuous); of a later state, from the previous state's solution on the same
        // shifted mesh plus the interpolated change of the centre field between the two
        // states, which carries the shift's own effect over. A few Newton iterations
        // instead of a solve from zero; the result depends on the start only within the
        // Newton tolerance.
        let centre = solve(
            &centre_setup,
            state,
            previous.as_ref().map(|(c, _)| c.potential()),
        )?;
        // The change of the centre field from the previous state's (same mesh).
        let change: Option<Vec<f64>> = previous.as_ref().map(|(before_centre, _)| {
            centre
                .potential()
                .iter()
                .zip(before_centre.potential())
                .map(|(x, y)| x - y)
                .collect()
        });
        let shifted: Vec<Solution> = shifted_setups
            .iter()
            .enumerate()
            .map(|(j, setup)| {
                let initial: Vec<f64> = match (&previous, &change) {
                    (Some((_, before)), Some(change)) => {
                        let delta =
                            transferred_values(&centre, change, &locator, setup.1.node_points());
                        before[j]
                            .potential()
                            .iter()
                            .zip(&delta)
                            .map(|(x, d)| x + d)
                            .collect()
                    }
                    _ => transferred(&centre, &locator, setup.1.node_points()),
                };
                solve(setup, state, Some(&initial))
            })
            .collect::<Result<_, _>>()?;
        out.push(force_point(
            point, index, settings, role, &centre, &shifted, step,
        )?);
        previous = Some((centre, shifted));
    }
    Ok(out)
}

/// The force point from the solutions at the centre and at the four shifted positions
/// (-h, -h/2, h/2, h).
fn force_point(
    point: &TranslationPoint,
    index: usize,
    settings: &ForceSweepSettings,
    role: BodyRole,
    centre: &Solution,
    shifted: &[Solution],
    step: f64,
) -> Result<ForcePoint, StudyError> {
    let label = || point.label.clone();
    let d = settings.direction;
    let post = |source| StudyError::Post {
        index,
        label: label(),
        source: Box::new(source),
    };
    let along = |f: [f64; 2]| f[0] * d[0] + f[1] * d[1];
    let depth = centre.depth_m().unwrap_or(1.0);
    let f = force_on(centre, &settings.body, &settings.force).map_err(post)?;
    let g = force_on(centre, &settings.group_body, &settings.force).map_err(post)?;
    let cd = coenergy_force_richardson(
        [&shifted[0], &shifted[1], &shifted[2], &shifted[3]],
        d,
        step,
    )
    .map_err(post)?;
    let eggshell_n = along(f.force()) * depth;
    let stress_n = f
        .by(&ForceMethod::StressMidLine)
        .map(|m| along(m.force) * depth)
        .unwrap_or(f64::NAN);
    // dW'/dx is the force on the moving group: the body's own when it is the group, the
    // opposite (action-reaction) when it is apart from it.
    let coenergy_n = role.sign() * cd.force * depth;
    let coenergy_step_error_n = cd.step_error * depth;
    let spread = coercive_post::force::relative_spread(&[eggshell_n, stress_n, coenergy_n], 0.0);
    let step_relative = if coenergy_n != 0.0 {
        coenergy_step_error_n / coenergy_n.abs()
    } else {
        0.0
    };
    let tolerance = settings.force.spread_warning;
    let warning = spread > tolerance || step_relative > tolerance || f.warning;
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
        coenergy_step_error_n,
        coenergy_step_m: step,
        spread,
        warning,
        group_eggshell_n: along(g.force()) * depth,
        peak_flux_density_t: peak,
        newton_iterations: centre.newton_report().iterations,
        triangles: mesh.triangles().len(),
    })
}

/// Mean edge length (m) of the air-side triangles that touch the regions `regions` (the
/// triangles outside them that share a vertex with them); the mean edge of the regions' own
/// triangles if none touch, and of the whole mesh if the regions are not found.
fn element_size_next_to(mesh: &Mesh, regions: &[String]) -> f64 {
    let inside: Vec<bool> = mesh
        .regions()
        .iter()
        .map(|r| regions.contains(&r.name))
        .collect();
    let mut on_group = vec![false; mesh.vertices().len()];
    for (tri, r) in mesh.triangles().iter().zip(mesh.triangle_regions()) {
        if inside[r.index()] {
            for v in tri {
                on_group[v.index()] = true;
            }
        }
    }
    let mean_edge = |keep: &dyn Fn(usize) -> bool| {
        let (mut sum, mut count) = (0.0, 0usize);
        for (t, tri) in mesh.triangles().iter().enumerate() {
            if !keep(t) {
                continue;
            }
            for k in 0..3 {
                let (a, b) = (
                    mesh.vertices()[tri[k].index()],
                    mesh.vertices()[tri[(k + 1) % 3].index()],
                );
                sum += (a.x - b.x).hypot(a.y - b.y);
                count += 1;
            }
        }
        (count > 0).then(|| sum / count as f64)
    };
    let tris = mesh.triangles();
    let regs = mesh.triangle_regions();
    mean_edge(&|t| !inside[regs[t].index()] && tris[t].iter().any(|v| on_group[v.index()]))
        .or_else(|| mean_edge(&|t| inside[regs[t].index()]))
        .or_else(|| mean_edge(&|_| true))
        .unwrap_or(0.0)
}

/// Settings of [`torque_sweep`]: a rigid group (the rotor) turned about a centre.
#[derive(Clone, Debug, PartialEq)]
pub struct TorqueSweepSettings {
    /// The rigid group that turns (the rotor).
    pub group: String,
    /// Centre of rotation (m).
    pub centre: [f64; 2],
    /// The body whose torque is reported (e.g. the rotor iron, or a rotor magnet).
    pub body: Body,
    /// The air-gap band for Arkkio's torque (a region or an annulus of air between the
    /// moving part and the fixed parts), if the mesh has one.
    pub gap: Option<AirGap>,
    /// Number of sectors the model stands for (1 for a full cross-section, n for a periodic
    /// or anti-periodic sector of 360/n degrees). Every torque and flux linkage reported is
    /// the model's value times `sectors`: the whole machine.
    pub sectors: u32,
    /// Co-energy torque dW'/dtheta at constant current from two extra solves at plus and
    /// minus this angle (rad), or `None` to skip it (a third of the cost).
    pub coenergy_step_rad: Option<f64>,
    /// Windings whose flux linkage is reported (all windings of the model when empty).
    pub windings: Vec<String>,
    /// Settings of the stress methods (the torque centre is set to `centre`).
    pub force: ForceSettings,
}

/// One set of winding currents of a sweep point: (winding name, terminal current in A);
/// windings not listed keep the model's current.
pub type Currents = Vec<(String, f64)>;

/// The torque on the body and the flux linkages at one (angle, currents) point of a
/// [`torque_sweep`], for the whole machine (the model's values times
/// [`TorqueSweepSettings::sectors`]) and the stack depth (planar): N m and Wb.
/// Counter-clockwise torque is positive.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct TorquePoint {
    /// Index of the angle in the sweep's list.
    pub angle_index: usize,
    /// Index of the current set in the sweep's list (0 when none was given).
    pub current_index: usize,
    /// Rotation of the group from its drawn position (rad, counter-clockwise).
    pub angle_rad: f64,
    /// The currents set at this point (terminal currents, A).
    pub currents_a: Currents,
    /// Whole-machine torque by the eggshell (virtual work over the air layer) (N m).
    pub eggshell_nm: f64,
    /// Whole-machine torque by the Maxwell stress on the mid-line of the air layer (N m).
    pub stress_nm: f64,
    /// Whole-machine torque by Arkkio's method over the air-gap band (N m), if a band was
    /// given.
    pub arkkio_nm: Option<f64>,
    /// Whole-machine co-energy torque dW'/dtheta at constant current (N m), if asked.
    pub coenergy_nm: Option<f64>,
    /// Relative spread of the available torque values (dimensionless).
    pub spread: f64,
    /// True when the spread exceeds [`ForceSettings::spread_warning`].
    pub warning: bool,
    /// Whole-machine flux linkage of each reported winding (Wb).
    pub flux_linkage_wb: Vec<(String, f64)>,
    /// Whole-machine co-energy (J) for the stack depth.
    pub coenergy_j: f64,
    /// Newton iterations of the point's solve.
    pub newton_iterations: usize,
    /// Triangles of the point's mesh.
    pub triangles: usize,
}

/// `material` as placed by `placement`: easy axes and principal directions turn with the
/// part, pattern centres move with it. Isotropic materials are returned unchanged.
pub fn placed_material(material: &Material, placement: &Placement) -> Material {
    let turn = |d: &MagnetDirection| -> MagnetDirection {
        let moved = |c: [f64; 2]| {
            let p = placement.apply(Point2::new(c[0], c[1]));
            [p.x, p.y]
        };
        match d {
            MagnetDirection::Fixed { angle } => MagnetDirection::Fixed {
                angle: angle + placement.rotation_rad,
            },
            MagnetDirection::Radial { centre, outward } => MagnetDirection::Radial {
                centre: moved(*centre),
                outward: *outward,
            },
            MagnetDirection::Azimuthal {
                centre,
                counter_clockwise,
            } => MagnetDirection::Azimuthal {
                centre: moved(*centre),
                counter_clockwise: *counter_clockwise,
            },
            MagnetDirection::Parallel { centre, outward } => MagnetDirection::Parallel {
                centre: moved(*centre),
                outward: *outward,
            },
        }
    };
    match material {
        Material::Anisotropic {
            parallel,
            perpendicular,
            angle,
        } => Material::Anisotropic {
            parallel: *parallel,
            perpendicular: *perpendicular,
            angle: angle + placement.rotation_rad,
        },
        Material::Magnet(m) => {
            let mut m = m.clone();
            m.direction = turn(&m.direction);
            Material::Magnet(m)
        }
        Material::Hysteretic(m) => {
            let mut m = m.clone();
            m.direction = turn(&m.direction);
            Material::Hysteretic(m)
        }
        other => other.clone(),
    }
}

/// The model with the materials of the moving part's regions placed by `placement` (see
/// [`placed_material`]); the group's regions are those of its triangles, which come first
/// in every mesh of the [`RigidMesher`].
fn with_group_placed(
    model: Model,
    group_triangles: usize,
    placement: &Placement,
) -> Result<Model, FemError> {
    if placement.rotation_rad == 0.0 && placement.translation == Point2::default() {
        return Ok(model);
    }
    let mesh = model.mesh().clone();
    let mut regions: Vec<RegionId> = mesh.triangle_regions()[..group_triangles].to_vec();
    regions.sort_unstable();
    regions.dedup();
    let mut builder = None;
    for r in regions {
        let m = model.material(r);
        let placed = placed_material(m, placement);
        if &placed != m {
            let b = builder.take().unwrap_or_else(|| model.to_builder());
            builder = Some(b.replace_material(model.region_name(r), placed));
        }
    }
    match builder {
        Some(b) => b.build(),
        None => Ok(model),
    }
}

/// Turns a rigid group through `angles_rad` (counter-clockwise from its drawn position,
/// about [`TorqueSweepSettings::centre`]) and reports, at each angle and for each set of
/// winding currents in `currents` (the model's own currents when empty), the torque on the
/// body by the eggshell, the mid-line stress, Arkkio's band (if given) and the co-energy
/// difference (if asked), with the flux linkage of each winding; all for the whole machine.
///
/// The rotation counterpart of [`force_sweep`]: the group is meshed once and re-placed with
/// [`Placement::rotation`], only the air around it is meshed again ([`RigidMesher`]), and
/// `build` turns each mesh into a model exactly as for a translation sweep; materials of
/// the moving part with a direction (magnets, anisotropic steel) turn with it.
///
/// Angles run in parallel (rayon); the current sets of one angle share its mesh and its
/// symbolic factorisation and run in the given order, each warm-started from the previous
/// solution or from the first set's, whichever has the nearer currents. Every point is a
/// pure function of its inputs, so the result does not depend on the number of threads.
/// Points come angle by angle, currents within an angle. Before any point is meshed, the
/// group turned to each angle is checked against the fixed curves.
///
/// # Errors
/// [`StudyError::Invalid`] for a zero sector count, a non-finite angle or step, a winding
/// that is not in the model, or a band whose coverage disagrees with `sectors`;
/// [`StudyError::Collision`] when the group turned to an angle would overlap a fixed curve;
/// otherwise the first failing point's error, naming its angle and currents.
pub fn torque_sweep<B>(
    rigid: &RigidMesher,
    angles_rad: &[f64],
    currents: &[Currents],
    settings: &TorqueSweepSettings,
    build: B,
) -> Result<Vec<TorquePoint>, StudyError>
where
    B: Fn(Mesh) -> Result<Model, FemError> + Sync,
{
    check_sweep(angles_rad, settings)?;
    let sets: Vec<Currents> = if currents.is_empty() {
        vec![Vec::new()]
    } else {
        currents.to_vec()
    };
    torque_points(rigid, angles_rad, &sets, settings, &build)?
        .into_iter()
        .flatten()
        .collect()
}

/// The checks of [`torque_sweep`]'s settings and angles.
fn check_sweep(angles_rad: &[f64], settings: &TorqueSweepSettings) -> Result<(), StudyError> {
    if settings.sectors == 0 {
        return Err(StudyError::Invalid {
            what: "sectors".into(),
            reason: "the model stands for at least one sector".into(),
        });
    }
    if let Some(a) = angles_rad.iter().find(|a| !a.is_finite()) {
        return Err(StudyError::Invalid {
            what: "rotation angle".into(),
            reason: format!("must be finite, got {a} rad"),
        });
    }
    if let Some(h) = settings.coenergy_step_rad {
        if !(h.is_finite() && h > 0.0) {
            return Err(StudyError::Invalid {
                what: "co-energy angle step".into(),
                reason: format!("must be a positive finite angle, got {h} rad"),
            });
        }
    }
    Ok(())
}

/// The solution with the moving part `settings.group` turned by `angle_rad` about
/// `settings.centre` and the windings at `currents` (others at the model's currents), as one
/// point of [`torque_sweep`] solves it (e.g. for a flux map at the aligned position).
///
/// # Errors
/// The point's [`StudyError`] (meshing, model, Newton), labelled with the angle.
pub fn solution_at_angle<B>(
    rigid: &RigidMesher,
    angle_rad: f64,
    currents: &Currents,
    settings: &TorqueSweepSettings,
    build: B,
) -> Result<Solution, StudyError>
where
    B: Fn(Mesh) -> Result<Model, FemError>,
{
    let label = format!("angle {:.4} deg", angle_rad.to_degrees());
    let placement = Placement::rotation(
        angle_rad,
        Point2::new(settings.centre[0], settings.centre[1]),
    );
    let mesh = rigid
        .mesh_at(&[(settings.group.as_str(), placement)])
        .map_err(|source| StudyError::Mesh {
            index: 0,
            label: label.clone(),
            source,
        })?;
    let solve = || -> Result<Solution, FemError> {
        let mut model = with_group_placed(build(mesh)?, rigid.group_triangle_count(), &placement)?;
        for (w, i) in currents {
            model = model.with_winding_current(w, *i)?;
        }
        model.solve()
    };
    solve().map_err(|e| StudyError::Solve {
        index: 0,
        label,
        source: Box::new(e),
    })
}

/// The points of [`torque_sweep`] angle by angle, each point's own result: an angle whose
/// mesh or model fails gives that error for each of its current sets (as
/// [`StudyError::Point`] after the first), a failed solve or post-processing only that point's.
fn torque_points<B>(
    rigid: &RigidMesher,
    angles_rad: &[f64],
    sets: &[Currents],
    settings: &TorqueSweepSettings,
    build: &B,
) -> Result<Vec<Vec<Result<TorquePoint, StudyError>>>, StudyError>
where
    B: Fn(Mesh) -> Result<Model, FemError> + Sync,
{
    check_clearance(rigid, angles_rad, settings)?;
    Ok(angles_rad
        .par_iter()
        .enumerate()
        .map(
            |(index, &angle)| match torque_at_angle(rigid, index, angle, sets, settings, build) {
                Ok(points) => points,
                Err(e) => {
                    let reason = e.to_string();
                    std::iter::once(Err(e))
                        .chain((1..sets.len()).map(|_| {
                            Err(StudyError::Point {
                                angle_rad: angle,
                                reason: reason.clone(),
                            })
                        }))
                        .collect()
                }
            },
        )
        .collect())
}

fn torque_at_angle<B>(
    rigid: &RigidMesher,
    angle_index: usize,
    angle: f64,
    sets: &[Currents],
    settings: &TorqueSweepSettings,
    build: &B,
) -> Result<Vec<Result<TorquePoint, StudyError>>, StudyError>
where
    B: Fn(Mesh) -> Result<Model, FemError> + Sync,
{
    let label = |currents: &Currents| {
        let mut s = format!("angle {:.4} deg", angle.to_degrees());
        for (w, i) in currents {
            s.push_str(&format!(", {w} {i} A"));
        }
        s
    };
    let solve_error = |currents: &Currents, source: FemError| StudyError::Solve {
        index: angle_index,
        label: label(currents),
        source: Box::new(source),
    };
    let post_error = |currents: &Currents, source: PostError| StudyError::Post {
        index: angle_index,
        label: label(currents),
        source: Box::new(source),
    };
    let centre = Point2::new(settings.centre[0], settings.centre[1]);
    // A model and its solver at `angle` (the model carries the drawn currents).
    let model_at = |a: f64| -> Result<(Model, Solver), StudyError> {
        let placement = Placement::rotation(a, centre);
        let mesh = rigid
            .mesh_at(&[(settings.group.as_str(), placement)])
            .map_err(|source| StudyError::Mesh {
                index: angle_index,
                label: label(&Vec::new()),
                source,
            })?;
        let model = build(mesh)
            .and_then(|m| with_group_placed(m, rigid.group_triangle_count(), &placement))
            .map_err(|e| solve_error(&Vec::new(), e))?;
        let solver = Solver::new(&model).map_err(|e| solve_error(&Vec::new(), e))?;
        Ok((model, solver))
    };
    let with_currents = |model: &Model, currents: &Currents| -> Result<Model, StudyError> {
        let mut m = model.clone();
        for (w, i) in currents {
            m = m
                .with_winding_current(w, *i)
                .map_err(|e| solve_error(currents, e))?;
        }
        Ok(m)
    };
    let (model, solver) = model_at(angle)?;
    let side_models = match settings.coenergy_step_rad {
        Some(h) => Some((model_at(angle - h)?, model_at(angle + h)?)),
        None => None,
    };
    let windings: Vec<String> = if settings.windings.is_empty() {
        model.windings().iter().map(|w| w.name.clone()).collect()
    } else {
        settings.windings.clone()
    };
    let n = f64::from(settings.sectors);
    let newton = NewtonSettings::default();
    let force_settings = ForceSettings {
        torque_centre: settings.centre,
        ..settings.force.clone()
    };
    // Warm starts: the last solved point and the first solved one, with their set indices.
    let mut previous: Option<(usize, Solution)> = None;
    // The first point's solution, kept as a second warm start: a map solved from zero
    // current outwards starts its negative currents from zero, not from the largest
    // positive current solved just before.
    let mut first: Option<(usize, Solution)> = None;
    let mut side_previous: Option<(Solution, Solution)> = None;
    let mut out = Vec::with_capacity(sets.len());
    for (current_index, currents) in sets.iter().enumerate() {
        let start = match (&previous, &first) {
            (Some((pi, p)), Some((fi, f))) => {
                if current_distance(currents, &sets[*fi]) < current_distance(currents, &sets[*pi]) {
                    Some(f)
                } else {
                    Some(p)
                }
            }
            (Some((_, p)), None) => Some(p),
            _ => None,
        };
        // One point; a failure is kept as this point's result and the next point starts
        // from the last good solution.
        let point = (|| -> Result<(TorquePoint, Solution), StudyError> {
            let m = with_currents(&model, currents)?;
            let sol = match start {
                Some(p) => solver.solve_from(&m, p, &newton),
                None => solver.solve(&m, &newton),
            }
            .map_err(|e| solve_error(currents, e))?;
            let depth = sol.depth_m().unwrap_or(1.0);
            let scale = n * depth;
            let f = force_on(&sol, &settings.body, &force_settings)
                .map_err(|e| post_error(currents, e))?;
            let eggshell_nm = f.torque() * scale;
            let stress_nm = f
                .by(&ForceMethod::StressMidLine)
                .map(|m| m.torque * scale)
                .unwrap_or(f64::NAN);
            let arkkio_nm = match &settings.gap {
                Some(gap) => {
                    let a = arkkio_torque(&sol, gap).map_err(|e| post_error(currents, e))?;
                    if a.sectors != settings.sectors {
                        return Err(StudyError::Invalid {
                            what: "sectors".into(),
                            reason: format!(
                                "the air-gap band covers 1/{} of the circle but the study \
                             says the model is 1/{} of the machine",
                                a.sectors, settings.sectors
                            ),
                        });
                    }
                    Some(a.torque * scale)
                }
                None => None,
            };
            let coenergy_nm = match (&side_models, settings.coenergy_step_rad) {
                (Some(((mb, sb), (ma, sa))), Some(h)) => {
                    let (mb, ma) = (with_currents(mb, currents)?, with_currents(ma, currents)?);
                    let (before, after) = match &side_previous {
                        Some((pb, pa)) => (
                            sb.solve_from(&mb, pb, &newton),
                            sa.solve_from(&ma, pa, &newton),
                        ),
                        None => (sb.solve(&mb, &newton), sa.solve(&ma, &newton)),
                    };
                    let (before, after) = (
                        before.map_err(|e| solve_error(currents, e))?,
                        after.map_err(|e| solve_error(currents, e))?,
                    );
                    let t = (after.coenergy() - before.coenergy()) / (2.0 * h) * scale;
                    side_previous = Some((before, after));
                    Some(t)
                }
                _ => None,
            };
            let mut values = vec![eggshell_nm, stress_nm];
            values.extend(arkkio_nm);
            values.extend(coenergy_nm);
            let spread = coercive_post::force::relative_spread(&values, 0.0);
            let mut flux_linkage_wb = Vec::with_capacity(windings.len());
            for w in &windings {
                let psi = flux_linkage(&sol, w).map_err(|e| post_error(currents, e))?;
                flux_linkage_wb.push((w.clone(), n * psi.total_wb));
            }
            let point = TorquePoint {
                angle_index,
                current_index,
                angle_rad: angle,
                currents_a: currents.clone(),
                eggshell_nm,
                stress_nm,
                arkkio_nm,
                coenergy_nm,
                spread,
                warning: spread > settings.force.spread_warning,
                flux_linkage_wb,
                coenergy_j: sol.coenergy() * scale,
                newton_iterations: sol.newton_report().iterations,
                triangles: m.mesh().triangles().len(),
            };
            Ok((point, sol))
        })();
        match point {
            Ok((point, sol)) => {
                if first.is_none() {
                    first = Some((current_index, sol.clone()));
                }
                previous = Some((current_index, sol));
                out.push(Ok(point));
            }
            Err(e) => out.push(Err(e)),
        }
    }
    Ok(out)
}

/// Checks, before any point is meshed, that the moving parts turned to each angle of the
/// study leave every fixed curve outside them (a rotor that would touch the stator bore,
/// cross the air-gap band or hit a stator pole): each node of a named curve outside the
/// moving parts whose distance from the centre lies within the parts' radial extent is
/// turned back by the angle and tested against the parts' triangles on the drawn mesh.
/// The nodes stand for their curves at the mesh's resolution; the check holds at the
/// study's angles (not between them).
fn check_clearance(
    rigid: &RigidMesher,
    angles_rad: &[f64],
    settings: &TorqueSweepSettings,
) -> Result<(), StudyError> {
    let mesh = rigid.mesh_at(&[]).map_err(|source| StudyError::Mesh {
        index: 0,
        label: "drawn position".into(),
        source,
    })?;
    let g = rigid.group_triangle_count();
    let vertices = mesh.vertices();
    let mut on_group = vec![false; vertices.len()];
    for tri in &mesh.triangles()[..g] {
        for v in tri {
            on_group[v.index()] = true;
        }
    }
    let [cx, cy] = settings.centre;
    let radius = |p: Point2| (p.x - cx).hypot(p.y - cy);
    let (mut lo, mut hi) = (f64::INFINITY, 0.0_f64);
    for (v, p) in vertices.iter().enumerate() {
        if on_group[v] {
            lo = lo.min(radius(*p));
            hi = hi.max(radius(*p));
        }
    }
    if g == 0 {
        return Ok(());
    }
    let tol = 1e-9 * hi.max(1e-3);
    let candidates: Vec<(Point2, &str)> = mesh
        .curves()
        .iter()
        .flat_map(|c| {
            let name = c.name.as_deref().unwrap_or("(unnamed)");
            c.nodes.iter().map(move |v| (*v, name))
        })
        .filter(|(v, _)| !on_group[v.index()])
        .map(|(v, name)| (vertices[v.index()], name))
        .filter(|(p, _)| (lo - tol..=hi + tol).contains(&radius(*p)))
        .collect();
    if candidates.is_empty() {
        return Ok(());
    }
    let triangles: Vec<[Point2; 3]> = mesh.triangles()[..g]
        .iter()
        .map(|t| [0, 1, 2].map(|k| vertices[t[k].index()]))
        .collect();
    // Inside or on the edge of a counter-clockwise triangle, to a relative tolerance.
    let inside = |q: Point2, t: &[Point2; 3]| {
        let cross = |a: Point2, b: Point2| (b.x - a.x) * (q.y - a.y) - (b.y - a.y) * (q.x - a.x);
        let scale = 1e-12 * hi * hi;
        (0..3).all(|k| cross(t[k], t[(k + 1) % 3]) >= -scale)
    };
    let centre = Point2::new(cx, cy);
    for &angle in angles_rad {
        let back = Placement::rotation(-angle, centre);
        for (p, curve) in &candidates {
            let q = back.apply(*p);
            if triangles.iter().any(|t| inside(q, t)) {
                return Err(StudyError::Collision {
                    group: settings.group.clone(),
                    angle_rad: angle,
                    curve: (*curve).to_string(),
                    point: [p.x, p.y],
                });
            }
        }
    }
    Ok(())
}

/// How far apart two current sets are (A): the sum of the differences of the currents of
/// the windings `a` names (a winding `b` does not name counts as unchanged).
fn current_distance(a: &Currents, b: &Currents) -> f64 {
    let of = |set: &Currents, w: &str| set.iter().find(|(n, _)| n == w).map(|(_, i)| *i);
    a.iter()
        .map(|(w, i)| (i - of(b, w).unwrap_or(*i)).abs())
        .sum()
}

/// The flux-linkage and torque maps psi(theta, i) and T(theta, i) of one phase of a
/// machine, for the whole machine and the stack depth (Wb, N m), from [`machine_map`].
/// Indexed `[angle][current]`; the currents are sorted and hold zero (the cogging column).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct MachineMap {
    /// The phase (winding) whose current is varied.
    pub phase: String,
    /// Number of sectors the model stands for (the values are already multiplied by it).
    pub sectors: u32,
    /// Rotor angles from the drawn position (rad), increasing.
    pub angles_rad: Vec<f64>,
    /// Phase (terminal) currents (A), increasing, zero included.
    pub currents_a: Vec<f64>,
    /// Flux linkage of the phase (Wb), `[angle][current]`.
    pub flux_linkage_wb: Vec<Vec<f64>>,
    /// Torque on the body by the eggshell (virtual work over the air layer) (N m).
    pub torque_nm: Vec<Vec<f64>>,
    /// Torque by Arkkio's method over the air-gap band (N m), if the study has a band.
    pub arkkio_nm: Option<Vec<Vec<f64>>>,
    /// Newton iterations of each point (0 for a failed point).
    pub newton_iterations: Vec<Vec<usize>>,
    /// The grid points that failed (their map entries are NaN); the others are kept.
    pub failed: Vec<FailedPoint>,
}

/// A grid point of a [`MachineMap`] that failed, with why.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct FailedPoint {
    /// Rotor angle (rad).
    pub angle_rad: f64,
    /// Phase current (A).
    pub current_a: f64,
    /// The error, in words.
    pub reason: String,
}

/// The energy converted over the stroke of a [`MachineMap`] (from its first to its last
/// angle) at one flat-top current, two ways (J, whole machine).
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct StrokeEnergy {
    /// The current (A).
    pub current_a: f64,
    /// Area enclosed in the psi-i plane: integral from 0 to i of psi(last angle) - psi(first
    /// angle) di (J).
    pub loop_area_j: f64,
    /// Integral over the stroke of T(theta, i) - T(theta, 0), the torque beyond cogging (J).
    pub torque_integral_j: f64,
    /// Integral over the stroke of the cogging torque T(theta, 0) (J): the magnets' own
    /// co-energy change, which no current supplies.
    pub cogging_integral_j: f64,
    /// Average static torque over the stroke at this current, cogging included (N m).
    pub average_torque_nm: f64,
}

/// The reciprocity check of a [`MachineMap`]: dT/di = dpsi/dtheta (both are the mixed
/// derivative of the co-energy W'(theta, i); Miller, Switched Reluctance Motors and their
/// Control, 1993, ch. 3) at every interior grid point.
///
/// Two forms: pointwise central differences, and the cell form, which compares the same
/// quantity on both sides. Over the cell [theta - h1, theta + h2] x [i - k1, i + k2] the
/// co-energy gives the exact identity (Green's theorem on the cell)
/// integral over theta of [T(theta, i + k2) - T(theta, i - k1)] = integral over i of
/// [psi(theta + h2, i) - psi(theta - h1, i)], both equal to the cell's second difference of
/// W'. Each side is a difference of samples in one direction, exact, and an integral in the
/// other, taken by Simpson's rule on the three grid points (weights for unequal halves);
/// divided by the cell's area both are the cell average of the mixed derivative. The
/// trapezoid rule in place of Simpson's left 1.4 % on the 2.5 degree test grid where the
/// pole edges meet and T(theta) bends sharply; Simpson's rule leaves 0.75 %.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct Reciprocity {
    /// Largest |dT/di - dpsi/dtheta| over the interior points, cell form (Wb).
    pub largest_difference_wb: f64,
    /// Largest |dT/di - dpsi/dtheta| over the interior points, pointwise central
    /// differences (Wb).
    pub largest_pointwise_difference_wb: f64,
    /// The largest |dT/di| or |dpsi/dtheta| over the interior points (Wb).
    pub peak_wb: f64,
    /// Angle (rad) and current (A) of the largest difference (cell form).
    pub at: (f64, f64),
}

impl Reciprocity {
    /// `largest_difference_wb / peak_wb` (dimensionless).
    pub fn relative(&self) -> f64 {
        if self.peak_wb > 0.0 {
            self.largest_difference_wb / self.peak_wb
        } else {
            0.0
        }
    }

    /// `largest_pointwise_difference_wb / peak_wb` (dimensionless).
    pub fn relative_pointwise(&self) -> f64 {
        if self.peak_wb > 0.0 {
            self.largest_pointwise_difference_wb / self.peak_wb
        } else {
            0.0
        }
    }
}

/// Integral of samples `y` over increasing abscissae `x`: composite Simpson's rule on a
/// uniform grid (with Simpson's 3/8 rule on the last three intervals for an odd count),
/// the trapezoid rule otherwise or for two points.
fn integrate(x: &[f64], y: &[f64]) -> f64 {
    let n = x.len();
    if n < 2 {
        return 0.0;
    }
    let h = (x[n - 1] - x[0]) / (n - 1) as f64;
    let uniform = x
        .windows(2)
        .all(|w| ((w[1] - w[0]) - h).abs() <= 1e-9 * h.abs());
    if !uniform || n < 3 {
        return x
            .windows(2)
            .zip(y.windows(2))
            .map(|(a, b)| 0.5 * (a[1] - a[0]) * (b[0] + b[1]))
            .sum();
    }
    let intervals = n - 1;
    let (simpson_end, tail) = if intervals % 2 == 0 {
        (n - 1, false)
    } else {
        (n - 4, true)
    };
    let mut s = 0.0;
    let mut k = 0;
    while k + 2 <= simpson_end {
        s += h / 3.0 * (y[k] + 4.0 * y[k + 1] + y[k + 2]);
        k += 2;
    }
    if tail {
        let m = n - 4;
        s += 3.0 * h / 8.0 * (y[m] + 3.0 * y[m + 1] + 3.0 * y[m + 2] + y[m + 3]);
    }
    s
}

impl MachineMap {
    /// Index of the zero current.
    fn zero(&self) -> usize {
        self.currents_a
            .iter()
            .position(|&i| i == 0.0)
            .unwrap_or_default()
    }

    /// The cogging torque T(theta, 0) at each angle (N m).
    pub fn cogging_nm(&self) -> Vec<f64> {
        let z = self.zero();
        self.torque_nm.iter().map(|row| row[z]).collect()
    }

    /// The energy converted over the stroke at the current of index `current_index`, as the
    /// psi-i loop area and as the integral of the torque (they agree for an exact map, since
    /// both are the change of co-energy at constant current), with the same quadrature rule
    /// on the map's own grid. `None` for an index outside the currents.
    pub fn stroke_energy(&self, current_index: usize) -> Option<StrokeEnergy> {
        let &current_a = self.currents_a.get(current_index)?;
        let z = self.zero();
        let last = self.angles_rad.len() - 1;
        let (lo, hi) = (z.min(current_index), z.max(current_index));
        let sign = if current_index >= z { 1.0 } else { -1.0 };
        let i = &self.currents_a[lo..=hi];
        let dpsi: Vec<f64> = (lo..=hi)
            .map(|c| self.flux_linkage_wb[last][c] - self.flux_linkage_wb[0][c])
            .collect();
        let loop_area_j = sign * integrate(i, &dpsi);
        let beyond: Vec<f64> = self
            .torque_nm
            .iter()
            .map(|row| row[current_index] - row[z])
            .collect();
        let torque_integral_j = integrate(&self.angles_rad, &beyond);
        let cogging_integral_j = integrate(&self.angles_rad, &self.cogging_nm());
        let stroke = self.angles_rad[last] - self.angles_rad[0];
        let total: Vec<f64> = self.torque_nm.iter().map(|r| r[current_index]).collect();
        Some(StrokeEnergy {
            current_a,
            loop_area_j,
            torque_integral_j,
            cogging_integral_j,
            average_torque_nm: integrate(&self.angles_rad, &total) / stroke,
        })
    }

    /// The reciprocity check dT/di = dpsi/dtheta over the interior grid points (a map with
    /// fewer than three angles or currents has none: the result is all zeros).
    pub fn reciprocity(&self) -> Reciprocity {
        let (na, nc) = (self.angles_rad.len(), self.currents_a.len());
        let mut r = Reciprocity {
            largest_difference_wb: 0.0,
            largest_pointwise_difference_wb: 0.0,
            peak_wb: 0.0,
            at: (0.0, 0.0),
        };
        let dt_di = |a: usize, c: usize| {
            (self.torque_nm[a][c + 1] - self.torque_nm[a][c - 1])
                / (self.currents_a[c + 1] - self.currents_a[c - 1])
        };
        let dpsi_dtheta = |a: usize, c: usize| {
            (self.flux_linkage_wb[a + 1][c] - self.flux_linkage_wb[a - 1][c])
                / (self.angles_rad[a + 1] - self.angles_rad[a - 1])
        };
        // Simpson weights of the three points for the mean over [x - h1, x + h2]: the
        // integral of the quadratic through them, divided by h1 + h2 (1/6, 4/6, 1/6 on a
        // uniform grid).
        let weights = |x: &[f64], k: usize| {
            let (h1, h2) = (x[k] - x[k - 1], x[k + 1] - x[k]);
            [
                (2.0 - h2 / h1) / 6.0,
                (h1 + h2) * (h1 + h2) / (6.0 * h1 * h2),
                (2.0 - h1 / h2) / 6.0,
            ]
        };
        for a in 1..na.saturating_sub(1) {
            for c in 1..nc.saturating_sub(1) {
                let (t, p) = (dt_di(a, c), dpsi_dtheta(a, c));
                r.peak_wb = r.peak_wb.max(t.abs()).max(p.abs());
                r.largest_pointwise_difference_wb =
                    r.largest_pointwise_difference_wb.max((t - p).abs());
                let wa = weights(&self.angles_rad, a);
                let wc = weights(&self.currents_a, c);
                let cell_t: f64 = (0..3).map(|k| wa[k] * dt_di(a + k - 1, c)).sum();
                let cell_p: f64 = (0..3).map(|k| wc[k] * dpsi_dtheta(a, c + k - 1)).sum();
                let d = (cell_t - cell_p).abs();
                if d > r.largest_difference_wb {
                    r.largest_difference_wb = d;
                    r.at = (self.angles_rad[a], self.currents_a[c]);
                }
            }
        }
        r
    }

    /// The maps as CSV, one row per grid point: angle (deg), current (A), flux linkage (Wb),
    /// torque by the eggshell (N m), by Arkkio (N m, empty without a band), Newton
    /// iterations.
    pub fn to_csv(&self) -> String {
        let mut s = String::from(
            "angle (deg),current (A),flux linkage (Wb),torque eggshell (N m),torque Arkkio (N m),newton iterations\n",
        );
        for (a, theta) in self.angles_rad.iter().enumerate() {
            for (c, i) in self.currents_a.iter().enumerate() {
                let ark = self
                    .arkkio_nm
                    .as_ref()
                    .map_or(String::new(), |m| format!("{:e}", m[a][c]));
                s.push_str(&format!(
                    "{},{},{:e},{:e},{},{}\n",
                    theta.to_degrees(),
                    i,
                    self.flux_linkage_wb[a][c],
                    self.torque_nm[a][c],
                    ark,
                    self.newton_iterations[a][c]
                ));
            }
        }
        s
    }
}

/// The psi(theta, i) and T(theta, i) maps of `phase` through [`torque_sweep`]: every angle
/// of `angles_rad` (increasing, from the drawn position) with the phase at every current of
/// `currents_a` (both signs; zero is added if missing, for the cogging torque), the other
/// windings at the model's currents. Angles run in parallel; the currents of one angle
/// share its mesh and symbolic factorisation and are solved from zero outwards, each
/// warm-started from its neighbour. `settings.windings` is replaced by the phase, and the
/// co-energy torque is not computed.
///
/// # Errors
/// [`StudyError::Invalid`] for fewer than two angles, angles or currents not strictly
/// increasing or not finite, or a phase that is not a winding of the model (checked on the
/// drawn mesh); [`StudyError::Collision`] when the rotor turned to an angle would overlap
/// a fixed curve; the first point's error when every point fails. A point that fails
/// alone (meshing, Newton, post-processing) is listed in [`MachineMap::failed`] with its
/// angle and current, its map entries NaN, and the other points are kept.
pub fn machine_map<B>(
    rigid: &RigidMesher,
    angles_rad: &[f64],
    currents_a: &[f64],
    phase: &str,
    settings: &TorqueSweepSettings,
    build: B,
) -> Result<MachineMap, StudyError>
where
    B: Fn(Mesh) -> Result<Model, FemError> + Sync,
{
    let increasing =
        |v: &[f64]| v.iter().all(|x| x.is_finite()) && v.windows(2).all(|w| w[1] > w[0]);
    if angles_rad.len() < 2 || !increasing(angles_rad) {
        return Err(StudyError::Invalid {
            what: "map angles".into(),
            reason: "need at least two finite angles in increasing order".into(),
        });
    }
    let mut currents: Vec<f64> = currents_a.to_vec();
    if !currents.contains(&0.0) {
        currents.push(0.0);
    }
    currents.sort_by(f64::total_cmp);
    if !increasing(&currents) {
        return Err(StudyError::Invalid {
            what: "map currents".into(),
            reason: "currents must be finite and distinct".into(),
        });
    }
    let drawn = rigid.mesh_at(&[]).map_err(|source| StudyError::Mesh {
        index: 0,
        label: "drawn position".into(),
        source,
    })?;
    let model = build(drawn).map_err(|e| StudyError::Solve {
        index: 0,
        label: "drawn position".into(),
        source: Box::new(e),
    })?;
    if !model.windings().iter().any(|w| w.name == phase) {
        return Err(StudyError::Invalid {
            what: format!("phase `{phase}`"),
            reason: format!(
                "not a winding of the model (windings: {})",
                model
                    .windings()
                    .iter()
                    .map(|w| format!("`{}`", w.name))
                    .collect::<Vec<_>>()
                    .join(", ")
            ),
        });
    }
    // Solve from zero current outwards, so that each point starts from its neighbour.
    let z = currents.iter().position(|&i| i == 0.0).unwrap_or_default();
    let order: Vec<usize> = std::iter::once(z)
        .chain(z + 1..currents.len())
        .chain((0..z).rev())
        .collect();
    let sets: Vec<Currents> = order
        .iter()
        .map(|&c| vec![(phase.to_string(), currents[c])])
        .collect();
    let map_settings = TorqueSweepSettings {
        windings: vec![phase.to_string()],
        coenergy_step_rad: None,
        ..settings.clone()
    };
    check_sweep(angles_rad, &map_settings)?;
    let rows = torque_points(rigid, angles_rad, &sets, &map_settings, &build)?;
    let (na, nc) = (angles_rad.len(), currents.len());
    let mut psi = vec![vec![f64::NAN; nc]; na];
    let mut torque = vec![vec![f64::NAN; nc]; na];
    let mut ark = vec![vec![f64::NAN; nc]; na];
    let mut iterations = vec![vec![0; nc]; na];
    let mut failed = Vec::new();
    let mut first_error = None;
    for (a, row) in rows.into_iter().enumerate() {
        for (k, point) in row.into_iter().enumerate() {
            let c = order[k];
            match point {
                Ok(p) => {
                    psi[a][c] = p.flux_linkage_wb[0].1;
                    torque[a][c] = p.eggshell_nm;
                    ark[a][c] = p.arkkio_nm.unwrap_or(f64::NAN);
                    iterations[a][c] = p.newton_iterations;
                }
                // A study-level error (e.g. the band's sector count) is not a point's.
                Err(e @ StudyError::Invalid { .. }) => return Err(e),
                Err(e) => {
                    failed.push(FailedPoint {
                        angle_rad: angles_rad[a],
                        current_a: currents[c],
                        reason: e.to_string(),
                    });
                    first_error.get_or_insert(e);
                }
            }
        }
    }
    // A map with no point at all is the study's failure (e.g. a band whose sector angle
    // does not divide 360 degrees fails every point alike).
    if failed.len() == na * nc {
        if let Some(e) = first_error {
            return Err(e);
        }
    }
    Ok(MachineMap {
        phase: phase.to_string(),
        sectors: settings.sectors,
        angles_rad: angles_rad.to_vec(),
        currents_a: currents,
        flux_linkage_wb: psi,
        torque_nm: torque,
        arkkio_nm: settings.gap.as_ref().map(|_| ark),
        newton_iterations: iterations,
        failed,
    })
}
