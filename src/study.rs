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
    arkkio_torque, coenergy_force, force_on, AirGap, Body, ForceMethod, ForceSettings,
};
use coercive_post::winding::flux_linkage;
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

/// One set of winding currents of a sweep point: (winding name, current per turn in A);
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
    /// The currents set at this point (A per turn).
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
/// solution. Every point is a pure function of its inputs, so the result does not depend
/// on the number of threads. Points come angle by angle, currents within an angle.
///
/// # Errors
/// [`StudyError::Invalid`] for a zero sector count, a non-finite angle or step, a winding
/// that is not in the model, or a band whose coverage disagrees with `sectors`; otherwise
/// the first failing point's error, naming its angle and currents.
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
    let sets: Vec<Currents> = if currents.is_empty() {
        vec![Vec::new()]
    } else {
        currents.to_vec()
    };
    let rows: Result<Vec<Vec<TorquePoint>>, StudyError> = angles_rad
        .par_iter()
        .enumerate()
        .map(|(index, &angle)| torque_at_angle(rigid, index, angle, &sets, settings, &build))
        .collect();
    Ok(rows?.into_iter().flatten().collect())
}

fn torque_at_angle<B>(
    rigid: &RigidMesher,
    angle_index: usize,
    angle: f64,
    sets: &[Currents],
    settings: &TorqueSweepSettings,
    build: &B,
) -> Result<Vec<TorquePoint>, StudyError>
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
    let mut previous: Option<Solution> = None;
    let mut side_previous: Option<(Solution, Solution)> = None;
    let mut out = Vec::with_capacity(sets.len());
    for (current_index, currents) in sets.iter().enumerate() {
        let m = with_currents(&model, currents)?;
        let sol = match &previous {
            Some(p) => solver.solve_from(&m, p, &newton),
            None => solver.solve(&m, &newton),
        }
        .map_err(|e| solve_error(currents, e))?;
        let depth = sol.depth_m().unwrap_or(1.0);
        let scale = n * depth;
        let f =
            force_on(&sol, &settings.body, &force_settings).map_err(|e| post_error(currents, e))?;
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
        out.push(TorquePoint {
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
        });
        previous = Some(sol);
    }
    Ok(out)
}
