//! Building a solver [`Model`] from a case's `[[material]]`, `[[winding]]` and `[[boundary]]`
//! sections (read and checked with the rest of the case, format in `docs/case-format.md`),
//! and a one-call solve.

use coercive_fem::library;
use coercive_fem::{ElementOrder, FemError, Formulation, Model};
use coercive_mesh::Mesh;
use thiserror::Error;

use crate::case::{Case, CaseBoundary, CaseFormulation, SweepParameter};
use crate::study::{
    force_sweep, machine_map, torque_sweep, ForceSweepSettings, MachineMap, Reciprocity,
    StrokeEnergy, StudyError, TorquePoint, TorqueSweepSettings, TranslationPoint,
};
use coercive_post::force::{AirGap, Body, ForceSettings};

/// What can go wrong while turning a case into a model. The case's own sections were checked
/// when it was read (every material, winding and boundary entry, with line and column); what
/// is left depends on the mesh.
#[derive(Debug, Clone, PartialEq, Error)]
#[non_exhaustive]
pub enum SetupError {
    /// A region of the mesh names a material that is neither a `[[material]]` nor a library
    /// preset (only for meshes that do not come from the case).
    #[error("region `{region}`: unknown material `{material}` (not a [[material]] name; presets: {})", presets.join(", "))]
    UnknownMaterial {
        /// The region.
        region: String,
        /// The material name as written.
        material: String,
        /// The library's preset names.
        presets: Vec<String>,
    },
    /// The model itself is invalid (missing material, a curve the mesh lost, unmatched curve
    /// pair, ...).
    #[error(transparent)]
    Model(#[from] FemError),
}

/// Builds the model of `case` on `mesh` (meshed from the same case, or from its geometry
/// with moved parts): the one path from a case's `[[material]]`, `[[winding]]` and
/// `[[boundary]]` sections to a solver [`Model`], used by the command line, the studies and
/// the examples alike.
///
/// Each region's `material` is a `[[material]]` name or a library preset name. A planar case
/// without `depth` is solved per metre of depth (depth 1 m).
///
/// # Errors
/// [`SetupError`] naming the region or the model item at fault.
pub fn model_from_case(case: &Case, mesh: Mesh) -> Result<Model, SetupError> {
    let formulation = match case.formulation() {
        CaseFormulation::Planar => Formulation::Planar {
            depth_m: case.depth().unwrap_or(1.0),
        },
        CaseFormulation::Axisymmetric => Formulation::Axisymmetric,
    };
    let order = match case.element_order() {
        Some(2) => ElementOrder::P2,
        _ => ElementOrder::P1,
    };
    let mut builder = Model::builder(mesh.clone(), formulation).order(order);
    for r in mesh.regions() {
        let Some(m) = case.region_material(&r.name) else {
            continue; // reported by the model as a region without material
        };
        let material = case.material(m).map_err(|_| SetupError::UnknownMaterial {
            region: r.name.clone(),
            material: m.to_string(),
            presets: library::names().iter().map(|s| s.to_string()).collect(),
        })?;
        builder = builder.material(&r.name, material);
    }
    for w in case.windings() {
        builder = builder.winding(w.clone());
    }
    for b in case.boundaries() {
        builder = match b {
            CaseBoundary::FixedPotential { curve, value } => builder.fixed_potential(curve, *value),
            CaseBoundary::Periodic { first, second } => builder.periodic(first, second),
            CaseBoundary::AntiPeriodic { first, second } => builder.anti_periodic(first, second),
            CaseBoundary::Open(open) => builder.open_boundary(open.clone()),
        };
    }
    Ok(builder.build()?)
}

/// [`model_from_case`] for a study's build closure, which reports solver errors only: a
/// set-up error becomes [`FemError::Unsupported`] with its message (a case's sections are
/// checked when it is read, so on meshes of the case this only passes on model errors).
///
/// # Errors
/// As [`model_from_case`].
pub fn study_model(case: &Case, mesh: Mesh) -> Result<Model, FemError> {
    model_from_case(case, mesh).map_err(|e| match e {
        SetupError::Model(f) => f,
        other => FemError::Unsupported {
            what: other.to_string(),
        },
    })
}

/// The geometry of `case`, its moving parts meshed once ([`RigidMesher`]), and the mesh at
/// the drawn position: what every study of a moving part starts from.
///
/// # Errors
/// [`CaseError`] for the geometry or the mesher.
pub fn moving_parts(
    case: &Case,
) -> Result<(coercive_mesh::Geometry, coercive_mesh::RigidMesher, Mesh), crate::case::CaseError> {
    let geometry = case.geometry()?;
    let mesh_error = |source| crate::case::CaseError::Mesh {
        source,
        position: None,
    };
    let rigid = geometry.prepare_rigid().map_err(mesh_error)?;
    let drawn = rigid.mesh_at(&[]).map_err(mesh_error)?;
    Ok((geometry, rigid, drawn))
}

/// A folder that a study's outputs are written into, remembering every file written.
#[derive(Debug)]
pub struct OutputDir {
    dir: std::path::PathBuf,
    written: Vec<std::path::PathBuf>,
}

impl OutputDir {
    /// Creates the folder `dir` (and its parents) if needed.
    ///
    /// # Errors
    /// The I/O error, as text naming the folder.
    pub fn create(dir: &std::path::Path) -> Result<OutputDir, String> {
        std::fs::create_dir_all(dir)
            .map_err(|e| format!("cannot create {}: {e}", dir.display()))?;
        Ok(OutputDir {
            dir: dir.to_path_buf(),
            written: Vec::new(),
        })
    }

    /// Writes `text` into the file `name` of the folder.
    ///
    /// # Errors
    /// The I/O error, as text naming the file.
    pub fn write(&mut self, name: &str, text: impl AsRef<[u8]>) -> Result<(), String> {
        let path = self.dir.join(name);
        std::fs::write(&path, text).map_err(|e| format!("cannot write {}: {e}", path.display()))?;
        self.written.push(path);
        Ok(())
    }

    /// The files written, in order.
    pub fn into_written(self) -> Vec<std::path::PathBuf> {
        self.written
    }
}

/// The largest side of the bounding box of `mesh` (m).
pub fn mesh_extent(mesh: &Mesh) -> f64 {
    let (mut lo, mut hi) = ([f64::INFINITY; 2], [f64::NEG_INFINITY; 2]);
    for p in mesh.vertices() {
        lo = [lo[0].min(p.x), lo[1].min(p.y)];
        hi = [hi[0].max(p.x), hi[1].max(p.y)];
    }
    (hi[0] - lo[0]).max(hi[1] - lo[1])
}

/// The force-sweep settings every case study uses: the moving part `group` along
/// `direction`, the force on `body`, the action-reaction check on `group_body`; co-energy
/// step h at most a fifth of the gap and half the element next to the group (the reported
/// difference uses h/2, with a Richardson estimate of its error), at least 1e-5 of the
/// model's `extent` for `gaps` and 1e-4 of it for offsets.
pub fn sweep_settings(
    group: &str,
    direction: [f64; 2],
    body: Body,
    group_body: Body,
    extent: f64,
    gaps: bool,
) -> ForceSweepSettings {
    ForceSweepSettings {
        group: group.to_string(),
        direction,
        body,
        group_body,
        relative_step: 0.2,
        size_step: 0.5,
        min_step_m: if gaps {
            (1e-5 * extent).max(f64::MIN_POSITIVE)
        } else {
            (1e-4 * extent).max(f64::MIN_POSITIVE)
        },
        force: ForceSettings::default(),
    }
}

/// The resistivity (Ohm m) of the material of `region` when it is a hysteretic magnet preset
/// (from its datasheet).
pub fn resistivity_of(case: &Case, region: &str) -> Option<f64> {
    let name = case.region_material(region)?;
    case.materials()
        .iter()
        .find(|m| m.name == name)
        .and_then(|m| m.resistivity_ohm_m)
}

/// The summary of a solved case that `coercive solve` prints (SI units).
#[derive(Clone, Debug, PartialEq, serde::Serialize)]
pub struct SolveSummary {
    /// Free unknowns of the linear systems.
    pub unknowns: usize,
    /// Mesh triangles.
    pub triangles: usize,
    /// Element order (1 or 2).
    pub element_order: u8,
    /// `planar` or `axisymmetric`.
    pub formulation: &'static str,
    /// Planar stack depth (m), if planar.
    pub depth_m: Option<f64>,
    /// Newton iterations (1 for linear models).
    pub newton_iterations: usize,
    /// Final relative residual norm.
    pub relative_residual: f64,
    /// Stored energy: J/m of depth for planar models, J for axisymmetric ones.
    pub energy: f64,
    /// Co-energy, same unit as `energy`.
    pub coenergy: f64,
    /// Unit of `energy` and `coenergy`: "J/m" or "J".
    pub energy_unit: &'static str,
    /// Peak |B| (T) per region, in mesh order.
    pub peak_flux_density_t: Vec<(String, f64)>,
    /// Magnets driven beyond their knee (linear models outside their validity), each with
    /// the volume fraction concerned.
    pub magnet_warnings: Vec<String>,
    /// Declared gaps (`drawn_gap` of `[sweep]` and `[switching]`) that differ from the gap
    /// the drawing has, each naming both values (see [`drawn_gap_warnings`]; empty unless
    /// the caller fills it from the case).
    pub gap_warnings: Vec<String>,
    /// Wall-clock times (s): set-up (layout, pattern, ordering), assembly, factorisation,
    /// triangular solves.
    pub setup_s: f64,
    /// Assembly time (s).
    pub assembly_s: f64,
    /// Factorisation time (s).
    pub factorisation_s: f64,
    /// Triangular solve time (s).
    pub solve_s: f64,
}

/// Solves `model` with default settings and summarises the result.
///
/// # Errors
/// The solver's [`FemError`].
pub fn solve_and_summarise(
    model: &Model,
) -> Result<(coercive_fem::Solution, SolveSummary), FemError> {
    let t0 = std::time::Instant::now();
    let solver = coercive_fem::Solver::new(model)?;
    let setup_s = t0.elapsed().as_secs_f64();
    let sol = solver.solve(model, &coercive_fem::NewtonSettings::default())?;
    let report = sol.newton_report();
    let planar = matches!(model.formulation(), Formulation::Planar { .. });
    let summary = SolveSummary {
        unknowns: solver.unknowns(),
        triangles: model.mesh().triangles().len(),
        element_order: match model.order() {
            ElementOrder::P1 => 1,
            _ => 2,
        },
        formulation: if planar { "planar" } else { "axisymmetric" },
        depth_m: sol.depth_m(),
        newton_iterations: report.iterations,
        relative_residual: report.residual_norms.last().copied().unwrap_or(0.0),
        energy: sol.energy(),
        coenergy: sol.coenergy(),
        energy_unit: if planar { "J/m" } else { "J" },
        peak_flux_density_t: model
            .mesh()
            .regions()
            .iter()
            .zip(sol.region_peak_flux_densities())
            .map(|(r, b)| (r.name.clone(), *b))
            .collect(),
        magnet_warnings: knee_warnings(&sol),
        gap_warnings: Vec::new(),
        setup_s,
        assembly_s: report.times.assembly_s,
        factorisation_s: report.times.factorisation_s,
        solve_s: report.times.solve_s,
    };
    Ok((sol, summary))
}

/// Relative difference between a declared and a drawn gap above which a result says so.
pub const GAP_WARNING_FRACTION: f64 = 1e-3;

/// A gap declared in a case (`drawn_gap` of `[sweep]` or `[switching]`) against the gap its
/// drawing has between the moving part and the body (or workpiece), measured along the motion
/// with [`Mesh::gap_along`] on `mesh` (the case's mesh at the drawn position).
#[derive(Clone, Debug, PartialEq, serde::Serialize)]
pub struct DrawnGap {
    /// `sweep` or `switching`: the section declaring the gap.
    pub section: &'static str,
    /// The moving part (rigid group).
    pub moving_part: String,
    /// The regions the gap is measured to (the sweep's body or the switching workpiece).
    pub body: Vec<String>,
    /// Unit vector of the motion that closes the gap.
    pub direction: [f64; 2],
    /// The declared gap (m).
    pub declared_m: f64,
    /// The gap measured in the drawing (m); `None` when the motion never brings the moving
    /// part to the body.
    pub measured_m: Option<f64>,
}

impl DrawnGap {
    /// True when the drawing disagrees with the declaration: no contact along the motion, or
    /// a relative difference above [`GAP_WARNING_FRACTION`] (with a floor of 1e-9 of the
    /// drawing's extent for tiny gaps).
    pub fn differs(&self, extent_m: f64) -> bool {
        match self.measured_m {
            None => true,
            Some(m) => {
                (m - self.declared_m).abs()
                    > GAP_WARNING_FRACTION * self.declared_m.abs() + 1e-9 * extent_m
            }
        }
    }
}

/// The declared gaps of `case` (its `[sweep]` when swept by gap, and its `[switching]`)
/// measured on `mesh`, the case meshed at its drawn position.
pub fn drawn_gaps(case: &Case, mesh: &Mesh) -> Vec<DrawnGap> {
    let group_regions = |group: &str| -> Vec<coercive_mesh::RegionId> {
        (0..mesh.regions().len())
            .filter(|&r| mesh.regions()[r].rigid_group.as_deref() == Some(group))
            .map(|r| coercive_mesh::RegionId(r as u32))
            .collect()
    };
    let named = |names: &[String]| -> Vec<coercive_mesh::RegionId> {
        names
            .iter()
            .filter_map(|n| mesh.region_by_name(n))
            .collect()
    };
    let mut out = Vec::new();
    if let Some(sw) = case.sweep() {
        if let (SweepParameter::Gap, Some((&value, &offset))) =
            (sw.parameter, sw.values_m.first().zip(sw.offsets_m.first()))
        {
            // A gap sweep's offsets are `drawn_gap - gap`.
            let declared = value + offset;
            out.push(DrawnGap {
                section: "sweep",
                moving_part: sw.group.clone(),
                body: sw.body.clone(),
                direction: sw.direction,
                declared_m: declared,
                measured_m: mesh.gap_along(
                    &group_regions(&sw.group),
                    &named(&sw.body),
                    sw.direction,
                ),
            });
        }
    }
    if let Some(sw) = case.switching() {
        out.push(DrawnGap {
            section: "switching",
            moving_part: sw.moving_part.clone(),
            body: sw.workpiece.clone(),
            direction: sw.direction,
            declared_m: sw.drawn_gap_m,
            measured_m: mesh.gap_along(
                &group_regions(&sw.moving_part),
                &named(&sw.workpiece),
                sw.direction,
            ),
        });
    }
    out
}

/// The warnings of [`drawn_gaps`] that differ from the drawing, in the case's length unit,
/// each naming the declared and the measured gap.
pub fn drawn_gap_warnings(case: &Case, mesh: &Mesh) -> Vec<String> {
    let unit = case.unit();
    let extent = mesh_extent(mesh);
    let len = |m: f64| format!("{} {}", short(unit.from_metres(m)), unit.symbol());
    drawn_gaps(case, mesh)
        .into_iter()
        .filter(|g| g.differs(extent))
        .map(|g| {
            let head = format!(
                "WARNING [{}] drawn_gap = {}, but in the drawing moving part `{}`",
                g.section,
                len(g.declared_m),
                g.moving_part
            );
            let towards = format!(
                "{} along ({}, {})",
                g.body
                    .iter()
                    .map(|b| format!("`{b}`"))
                    .collect::<Vec<_>>()
                    .join(" + "),
                g.direction[0],
                g.direction[1]
            );
            match g.measured_m {
                Some(m) => format!(
                    "{head} is {} from {towards}: every gap of the study is off by {}",
                    len(m),
                    len(g.declared_m - m)
                ),
                None => {
                    format!("{head} never reaches {towards}: check `direction` and `drawn_gap`")
                }
            }
        })
        .collect()
}

/// A length for a message: six decimals without trailing zeros (0.5, not 0.5000000000000004),
/// or three significant digits in exponent form below 1e-3.
fn short(v: f64) -> String {
    if v == 0.0 || v.abs() >= 1e-3 || !v.is_finite() {
        let s = format!("{v:.6}");
        let s = s.trim_end_matches('0').trim_end_matches('.');
        if s == "-0" {
            "0".into()
        } else {
            s.into()
        }
    } else {
        format!("{v:.3e}")
    }
}

/// Volume fraction of a linear magnet beyond its knee above which a result says so.
pub const KNEE_WARNING_FRACTION: f64 = 1e-3;

/// The warnings of a solution's linear magnets driven beyond their knee (the linear recoil
/// model is invalid there: the real magnet would lose remanence), with the volume fraction
/// as the measure of how far, and of hysteretic magnets partly past their knee (modelled).
pub fn knee_warnings(solution: &coercive_fem::Solution) -> Vec<String> {
    coercive_post::FieldProbe::new(solution)
        .magnet_working_points()
        .rows
        .into_iter()
        .filter(|r| r.beyond_knee_fraction > KNEE_WARNING_FRACTION)
        .map(|r| {
            let knee = r.knee_field_a_per_m.unwrap_or(f64::NAN);
            if r.hysteretic {
                format!(
                    "magnet `{}`: {:.1} % of its volume is beyond its knee (H along the easy \
                     axis below -{:.0} kA/m, down to {:.0} kA/m): it loses remanence there \
                     (modelled by its hysteresis law)",
                    r.region,
                    100.0 * r.beyond_knee_fraction,
                    knee * 1e-3,
                    r.min_field_strength_a_per_m * 1e-3
                )
            } else {
                format!(
                    "WARNING magnet `{}`: {:.1} % of its volume is beyond its knee (H along the \
                     easy axis below -{:.0} kA/m, down to {:.0} kA/m), where its linear recoil \
                     model does not hold: the real magnet would lose remanence and the results \
                     overstate its flux; use `hysteresis = ...` for this magnet",
                    r.region,
                    100.0 * r.beyond_knee_fraction,
                    knee * 1e-3,
                    r.min_field_strength_a_per_m * 1e-3
                )
            }
        })
        .collect()
}

/// One row of a case's `[sweep]`: the force on the body along the sweep direction by three
/// methods (N for the stack depth in planar cases, total N in axisymmetric ones).
#[derive(Clone, Debug, PartialEq, serde::Serialize)]
pub struct SweepRow {
    /// The swept value as written (gap or offset), in m.
    pub value_m: f64,
    /// Displacement of the group along the direction from its drawn position (m).
    pub offset_m: f64,
    /// Eggshell (virtual work over the air layer) force (N).
    pub eggshell_n: f64,
    /// Maxwell stress on the mid-line of the air layer (N).
    pub stress_n: f64,
    /// Co-energy difference, central with step h/2 (N).
    pub coenergy_n: f64,
    /// Richardson estimate of the co-energy difference's step error, from the steps h and
    /// h/2 (N).
    pub coenergy_step_error_n: f64,
    /// Planar only: the same three forces per metre of depth (N/m), in that order.
    pub per_metre_n_per_m: Option<[f64; 3]>,
    /// Relative spread of the three values (dimensionless; printed in %).
    pub spread: f64,
    /// True when the spread exceeds the default warning threshold.
    pub warning: bool,
    /// Largest |B| in the body (T).
    pub peak_flux_density_t: f64,
    /// Triangles of the central mesh.
    pub triangles: usize,
}

/// The result of a case's `[sweep]` section.
#[derive(Clone, Debug, PartialEq, serde::Serialize)]
pub struct SweepSummary {
    /// `gap` or `offset`: what `value_m` of each row is.
    pub parameter: &'static str,
    /// The rigid group moved.
    pub group: String,
    /// Unit vector of the motion; forces are components along it.
    pub direction: [f64; 2],
    /// The regions whose force is reported.
    pub body: Vec<String>,
    /// Planar stack depth (m), if planar.
    pub depth_m: Option<f64>,
    /// Length unit of the case file, for printing values.
    pub unit: &'static str,
    /// The rows, in file order.
    pub rows: Vec<SweepRow>,
    /// Wall-clock time of the sweep (s).
    pub seconds: f64,
}

/// What can go wrong in a case's sweep.
#[derive(Debug, Error)]
#[non_exhaustive]
pub enum SweepError {
    /// The case has no `[sweep]` section.
    #[error("the case has no [sweep] section")]
    NoSweep,
    /// The case has no `[rotation]` section.
    #[error("the case has no [rotation] section")]
    NoRotation,
    /// Preparing the rigid mesher failed.
    #[error("sweep: {0}")]
    Mesh(#[from] crate::case::CaseError),
    /// Building the model failed (materials, windings, boundaries).
    #[error("sweep: {0}")]
    Setup(#[from] SetupError),
    /// A sweep point failed (the message names the point).
    #[error("sweep: {0}")]
    Study(#[from] StudyError),
}

/// Runs the case's `[sweep]`: moves the rigid group to each point (re-meshing only the air
/// around it), solves each point and its four co-energy neighbours (steps h and h/2) in
/// parallel with the same materials, element order and boundaries as the plain solve, and
/// reports the force on the body by three methods.
///
/// # Errors
/// [`SweepError`], naming the failing point.
pub fn run_sweep(case: &Case) -> Result<SweepSummary, SweepError> {
    let started = std::time::Instant::now();
    let sw = case.sweep().ok_or(SweepError::NoSweep)?;
    let (geometry, rigid, drawn) = moving_parts(case)?;
    let group_regions: Vec<&str> = geometry
        .rigid_groups
        .iter()
        .find(|g| g.name == sw.group)
        .map(|g| g.regions.iter().map(String::as_str).collect())
        .unwrap_or_default();
    let extent = mesh_extent(&drawn);
    // Check the non-mesh parts of the set-up once on the drawn mesh, so that the build
    // closure below can only meet mesh-dependent model errors.
    model_from_case(case, drawn)?;
    let build = |mesh: Mesh| study_model(case, mesh);
    let unit = case.unit();
    let gaps = sw.parameter == SweepParameter::Gap;
    let points: Vec<TranslationPoint> = sw
        .values_m
        .iter()
        .zip(&sw.offsets_m)
        .map(|(&v, &o)| TranslationPoint {
            label: format!(
                "{} {} {}",
                if gaps { "gap" } else { "offset" },
                unit.from_metres(v),
                unit.symbol()
            ),
            parameter: if gaps { v } else { 0.0 },
            offset: [o * sw.direction[0], o * sw.direction[1]],
        })
        .collect();
    let settings = sweep_settings(
        &sw.group,
        sw.direction,
        Body::new(&sw.body.iter().map(String::as_str).collect::<Vec<_>>()),
        Body::new(&group_regions),
        extent,
        gaps,
    );
    let points_out = force_sweep(&rigid, &points, &settings, build)?;
    let depth_m = match case.formulation() {
        CaseFormulation::Planar => Some(case.depth().unwrap_or(1.0)),
        CaseFormulation::Axisymmetric => None,
    };
    let rows = points_out
        .iter()
        .zip(sw.values_m.iter().zip(&sw.offsets_m))
        .map(|(p, (&v, &o))| SweepRow {
            value_m: v,
            offset_m: o,
            eggshell_n: p.eggshell_n,
            stress_n: p.stress_n,
            coenergy_n: p.coenergy_n,
            coenergy_step_error_n: p.coenergy_step_error_n,
            per_metre_n_per_m: depth_m
                .map(|d| [p.eggshell_n / d, p.stress_n / d, p.coenergy_n / d]),
            spread: p.spread,
            warning: p.warning,
            peak_flux_density_t: p.peak_flux_density_t,
            triangles: p.triangles,
        })
        .collect();
    Ok(SweepSummary {
        parameter: if gaps { "gap" } else { "offset" },
        group: sw.group.clone(),
        direction: sw.direction,
        body: sw.body.clone(),
        depth_m,
        unit: unit.symbol(),
        rows,
        seconds: started.elapsed().as_secs_f64(),
    })
}

/// The result of a case's `[rotation]` section: torque and flux linkage versus angle, or the
/// maps of one phase with their derived figures. Whole machine (the model's values times the
/// number of sectors), stack depth (planar): N m, Wb, J. Counter-clockwise torque positive.
#[derive(Clone, Debug, PartialEq, serde::Serialize)]
pub struct RotationSummary {
    /// The rigid group turned.
    pub group: String,
    /// Sectors the model stands for.
    pub sectors: u32,
    /// Without a `phase`: one point per angle.
    pub points: Vec<TorquePoint>,
    /// With a `phase`: the maps.
    pub map: Option<MachineMap>,
    /// With a `phase`: the energy converted over the stroke at each non-zero current.
    pub stroke_energies: Vec<StrokeEnergy>,
    /// With a `phase`: the reciprocity check dT/di = dpsi/dtheta.
    pub reciprocity: Option<Reciprocity>,
    /// Wall-clock time (s).
    pub seconds: f64,
}

/// Runs the case's `[rotation]`: turns the rigid group through the angles (re-meshing only
/// around it) with the same materials, windings and boundaries as the plain solve, and
/// reports the torque on the body (eggshell, mid-line stress, Arkkio's band if named) and
/// the flux linkage of every winding; with a `phase`, the psi(theta, i) and T(theta, i)
/// maps of that phase over the currents, with the energy per stroke both ways and the
/// reciprocity check.
///
/// # Errors
/// [`SweepError`] (no `[rotation]` section, meshing, set-up, a failing point).
pub fn run_rotation(case: &Case) -> Result<RotationSummary, SweepError> {
    let started = std::time::Instant::now();
    let rot = case.rotation().ok_or(SweepError::NoRotation)?;
    let (_, rigid, drawn) = moving_parts(case)?;
    model_from_case(case, drawn)?;
    let build = |mesh: Mesh| study_model(case, mesh);
    let settings = TorqueSweepSettings {
        group: rot.group.clone(),
        centre: rot.centre_m,
        body: Body::new(&rot.body),
        gap: rot.airgap.as_ref().map(|name| AirGap::Region {
            name: name.clone(),
            centre: rot.centre_m,
        }),
        sectors: rot.sectors,
        coenergy_step_rad: None,
        windings: Vec::new(),
        force: ForceSettings::default(),
    };
    let (points, map) = match &rot.phase {
        None => (
            torque_sweep(&rigid, &rot.angles_rad, &[], &settings, build)?,
            None,
        ),
        Some(phase) => (
            Vec::new(),
            Some(machine_map(
                &rigid,
                &rot.angles_rad,
                &rot.currents_a,
                phase,
                &settings,
                build,
            )?),
        ),
    };
    let stroke_energies = map.as_ref().map_or(Vec::new(), |m| {
        (0..m.currents_a.len())
            .filter(|&c| m.currents_a[c] != 0.0)
            .filter_map(|c| m.stroke_energy(c))
            .collect()
    });
    let reciprocity = map.as_ref().map(MachineMap::reciprocity);
    Ok(RotationSummary {
        group: rot.group.clone(),
        sectors: rot.sectors,
        points,
        map,
        stroke_energies,
        reciprocity,
        seconds: started.elapsed().as_secs_f64(),
    })
}

/// Writes the files of a `[rotation]` study into `dir`: the table (`rotation.csv`,
/// `rotation.json`) and, for a map (`phase`), the magnetisation curves psi(i) at several
/// angles (`psi_i.svg`), the torque T(theta) at several currents (`torque_theta.svg`), the
/// maps psi(theta, i) and T(theta, i) as filled contour plots with a colour bar
/// (`psi_map.svg`, `torque_map.svg`; left out when a grid point failed) and the flux maps at
/// the first and last angle (unaligned and aligned for a stroke) at the largest current
/// (`flux_first_angle.svg`, `flux_last_angle.svg`); without a phase, torque versus angle
/// (`torque_theta.svg`). Returns the paths written.
///
/// # Errors
/// A message naming the file that could not be written or the point that could not be
/// solved for a flux map.
pub fn write_rotation_outputs(
    case: &Case,
    summary: &RotationSummary,
    dir: &std::path::Path,
) -> Result<Vec<std::path::PathBuf>, String> {
    use coercive_post::plot::{
        field_map_svg, filled_contour_svg, xy_chart_svg, ChartOptions, ContourOptions,
        FieldMapOptions, Series,
    };
    let mut out = OutputDir::create(dir)?;
    let plot = |e: coercive_post::plot::PlotError| e.to_string();
    out.write(
        "rotation.json",
        serde_json::to_string_pretty(summary).map_err(|e| e.to_string())?,
    )?;
    let whole = if summary.sectors == 1 {
        "whole machine".to_string()
    } else {
        format!("whole machine, {} sectors", summary.sectors)
    };
    let Some(map) = &summary.map else {
        let mut csv = String::from(
            "angle (deg),torque eggshell (N m),torque stress (N m),torque Arkkio (N m)\n",
        );
        for p in &summary.points {
            csv.push_str(&format!(
                "{},{:e},{:e},{}\n",
                p.angle_rad.to_degrees(),
                p.eggshell_nm,
                p.stress_nm,
                p.arkkio_nm.map_or(String::new(), |t| format!("{t:e}"))
            ));
        }
        out.write("rotation.csv", csv)?;
        let mut series = vec![Series::new(
            "eggshell",
            summary
                .points
                .iter()
                .map(|p| (p.angle_rad.to_degrees(), p.eggshell_nm))
                .collect(),
        )];
        if summary.points.iter().all(|p| p.arkkio_nm.is_some()) {
            series.push(Series::new(
                "Arkkio",
                summary
                    .points
                    .iter()
                    .filter_map(|p| Some((p.angle_rad.to_degrees(), p.arkkio_nm?)))
                    .collect(),
            ));
        }
        let svg = xy_chart_svg(
            &series,
            &ChartOptions {
                title: format!("torque on `{}` versus angle ({whole})", summary.group),
                x_label: "rotor angle (deg)".into(),
                y_label: "torque (N m)".into(),
                include_zero_y: true,
                ..ChartOptions::default()
            },
        )
        .map_err(plot)?;
        out.write("torque_theta.svg", svg)?;
        return Ok(out.into_written());
    };
    out.write("rotation.csv", map.to_csv())?;
    let degrees: Vec<f64> = map.angles_rad.iter().map(|a| a.to_degrees()).collect();
    // At most `n` indices spread evenly over 0..len, first and last included.
    let pick = |len: usize, n: usize| -> Vec<usize> {
        if len <= n {
            return (0..len).collect();
        }
        let mut v: Vec<usize> = (0..n)
            .map(|k| ((k * (len - 1)) as f64 / (n - 1) as f64).round() as usize)
            .collect();
        v.dedup();
        v
    };
    let finite = |points: Vec<(f64, f64)>| -> Vec<(f64, f64)> {
        points.into_iter().filter(|p| p.1.is_finite()).collect()
    };
    let psi_i: Vec<Series> = pick(map.angles_rad.len(), 7)
        .into_iter()
        .map(|a| {
            Series::new(
                format!("{:.2} deg", degrees[a]),
                finite(
                    map.currents_a
                        .iter()
                        .zip(&map.flux_linkage_wb[a])
                        .map(|(&i, &p)| (i, p))
                        .collect(),
                ),
            )
        })
        .collect();
    let svg = xy_chart_svg(
        &psi_i,
        &ChartOptions {
            title: format!("magnetisation curves of `{}` ({whole})", map.phase),
            x_label: "phase current (A)".into(),
            y_label: "flux linkage (Wb)".into(),
            ..ChartOptions::default()
        },
    )
    .map_err(plot)?;
    out.write("psi_i.svg", svg)?;
    let t_theta: Vec<Series> = pick(map.currents_a.len(), 7)
        .into_iter()
        .map(|c| {
            Series::new(
                format!("{} A", map.currents_a[c]),
                finite(
                    degrees
                        .iter()
                        .zip(&map.torque_nm)
                        .map(|(&d, row)| (d, row[c]))
                        .collect(),
                ),
            )
        })
        .collect();
    let svg = xy_chart_svg(
        &t_theta,
        &ChartOptions {
            title: format!(
                "static torque with `{}` at several currents ({whole})",
                map.phase
            ),
            x_label: "rotor angle (deg)".into(),
            y_label: "torque (N m)".into(),
            include_zero_y: true,
            ..ChartOptions::default()
        },
    )
    .map_err(plot)?;
    out.write("torque_theta.svg", svg)?;
    if map.failed.is_empty() {
        for (file, values, what) in [
            ("psi_map.svg", &map.flux_linkage_wb, "flux linkage (Wb)"),
            ("torque_map.svg", &map.torque_nm, "torque (N m)"),
        ] {
            let svg = filled_contour_svg(
                &degrees,
                &map.currents_a,
                values,
                &ContourOptions {
                    title: format!("{what} of `{}` over angle and current ({whole})", map.phase),
                    x_label: "rotor angle (deg)".into(),
                    y_label: "phase current (A)".into(),
                    z_label: what.into(),
                    ..ContourOptions::default()
                },
            )
            .map_err(plot)?;
            out.write(file, svg)?;
        }
    }
    // Flux maps at the first and last angle, the phase at its largest current.
    let rot = case
        .rotation()
        .ok_or("the case has no [rotation] section")?;
    let (_, rigid, _) = moving_parts(case).map_err(|e| e.to_string())?;
    let settings = TorqueSweepSettings {
        group: rot.group.clone(),
        centre: rot.centre_m,
        body: Body::new(&rot.body),
        gap: None,
        sectors: rot.sectors,
        coenergy_step_rad: None,
        windings: Vec::new(),
        force: ForceSettings::default(),
    };
    let current = map
        .currents_a
        .iter()
        .copied()
        .fold(f64::NEG_INFINITY, f64::max);
    let last = map.angles_rad.len() - 1;
    for (file, a) in [("flux_first_angle.svg", 0), ("flux_last_angle.svg", last)] {
        let sol = crate::study::solution_at_angle(
            &rigid,
            map.angles_rad[a],
            &vec![(map.phase.clone(), current)],
            &settings,
            |m| study_model(case, m),
        )
        .map_err(|e| e.to_string())?;
        let mesh = sol.model().mesh();
        let nv = mesh.vertices().len();
        let cells: Vec<f64> = (0..mesh.triangles().len())
            .map(|t| {
                let b = sol.flux_density_at_quadrature(coercive_mesh::TriangleId(t as u32));
                b.iter().map(|b| b[0].hypot(b[1])).sum::<f64>() / b.len() as f64
            })
            .collect();
        let svg = field_map_svg(
            mesh,
            &sol.potential()[..nv],
            &cells,
            &FieldMapOptions {
                title: format!(
                    "rotor at {:.2} deg, `{}` at {current} A: |B| and flux lines",
                    degrees[a], map.phase
                ),
                flux_lines: 40,
                ..FieldMapOptions::default()
            },
        )
        .map_err(plot)?;
        out.write(file, svg)?;
    }
    Ok(out.into_written())
}

impl std::fmt::Display for RotationSummary {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        let whole = if self.sectors == 1 {
            "whole machine".to_string()
        } else {
            format!("whole machine: {} sectors", self.sectors)
        };
        if let Some(m) = &self.map {
            writeln!(
                f,
                "maps of `{}` turning `{}` ({whole}; N m and Wb for the stack depth; \
                 counter-clockwise torque positive)",
                m.phase, self.group
            )?;
            write!(f, "{:>10}", "angle (deg)")?;
            for i in &m.currents_a {
                write!(f, " | {:>9} A: psi (Wb), T (N m)", i)?;
            }
            writeln!(f)?;
            for (a, theta) in m.angles_rad.iter().enumerate() {
                write!(f, "{:>10.3}", theta.to_degrees())?;
                for c in 0..m.currents_a.len() {
                    write!(
                        f,
                        " | {:>14.6} {:>14.5}",
                        m.flux_linkage_wb[a][c], m.torque_nm[a][c]
                    )?;
                }
                writeln!(f)?;
            }
            for e in &self.stroke_energies {
                writeln!(
                    f,
                    "stroke at {} A: psi-i loop area {:.5} J, integral of torque beyond cogging \
                     {:.5} J, cogging {:.5} J, average torque {:.5} N m",
                    e.current_a,
                    e.loop_area_j,
                    e.torque_integral_j,
                    e.cogging_integral_j,
                    e.average_torque_nm
                )?;
            }
            for p in &m.failed {
                writeln!(
                    f,
                    "failed point at {:.3} deg, {} A (left out of the maps): {}",
                    p.angle_rad.to_degrees(),
                    p.current_a,
                    p.reason
                )?;
            }
            if let Some(r) = &self.reciprocity {
                writeln!(
                    f,
                    "reciprocity dT/di = dpsi/dtheta: largest difference {:.3} % of the peak \
                     {:.4e} Wb (cell form), {:.3} % pointwise",
                    100.0 * r.relative(),
                    r.peak_wb,
                    100.0 * r.relative_pointwise()
                )?;
            }
        } else {
            writeln!(
                f,
                "rotation of `{}` ({whole}; N m and Wb for the stack depth; counter-clockwise \
                 torque positive)",
                self.group
            )?;
            writeln!(
                f,
                "{:>10} | {:>14} | {:>14} | {:>14} | {:>9} | flux linkage (Wb)",
                "angle (deg)", "eggshell (N m)", "stress (N m)", "Arkkio (N m)", "spread (%)"
            )?;
            for p in &self.points {
                write!(
                    f,
                    "{:>10.3} | {:>14.5} | {:>14.5} | {:>14} | {:>9.2} |",
                    p.angle_rad.to_degrees(),
                    p.eggshell_nm,
                    p.stress_nm,
                    p.arkkio_nm.map_or("-".into(), |t| format!("{t:.5}")),
                    100.0 * p.spread
                )?;
                for (w, psi) in &p.flux_linkage_wb {
                    write!(f, " {w} {psi:.6}")?;
                }
                writeln!(f)?;
            }
        }
        write!(f, "rotation study in {:.1} s", self.seconds)
    }
}

impl std::fmt::Display for SweepSummary {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        let scale =
            crate::case::LengthUnit::from_symbol(self.unit).map_or(1.0, |u| u.from_metres(1.0));
        let what = match self.depth_m {
            Some(d) => format!("N for the depth {d} m"),
            None => "N, total".into(),
        };
        writeln!(
            f,
            "sweep of rigid group `{}` along ({:.4}, {:.4}): force on {} along the motion \
             ({what}; negative: pulled against the motion)",
            self.group,
            self.direction[0],
            self.direction[1],
            self.body.join(" + ")
        )?;
        let col = format!("{} ({})", self.parameter, self.unit);
        write!(
            f,
            "{col:>14} | {:>18} | {:>22} | {:>28} | {:>10}",
            "by eggshell (N)", "by Maxwell stress (N)", "by co-energy difference (N)", "spread (%)"
        )?;
        if self.depth_m.is_some() {
            write!(f, " | {:>18}", "eggshell (N/m)")?;
        }
        writeln!(f, " | {:>12}", "peak |B| (T)")?;
        for r in &self.rows {
            write!(
                f,
                "{:>14.4} | {:>18.3} | {:>22.3} | {:>28.3} | {:>10.2}",
                r.value_m * scale,
                r.eggshell_n,
                r.stress_n,
                r.coenergy_n,
                100.0 * r.spread
            )?;
            if let Some(m) = r.per_metre_n_per_m {
                write!(f, " | {:>18.1}", m[0])?;
            }
            writeln!(
                f,
                " | {:>12.3}{}",
                r.peak_flux_density_t,
                if r.warning {
                    "  <- methods disagree"
                } else {
                    ""
                }
            )?;
        }
        write!(
            f,
            "{} sweep points x 3 solves in {:.1} s",
            self.rows.len(),
            self.seconds
        )
    }
}

impl std::fmt::Display for SolveSummary {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        writeln!(
            f,
            "{} model, P{} elements: {} triangles, {} unknowns",
            self.formulation, self.element_order, self.triangles, self.unknowns
        )?;
        writeln!(
            f,
            "Newton iterations: {} (relative residual {:.2e})",
            self.newton_iterations, self.relative_residual
        )?;
        writeln!(f, "energy:    {:.6e} {}", self.energy, self.energy_unit)?;
        writeln!(f, "co-energy: {:.6e} {}", self.coenergy, self.energy_unit)?;
        if let Some(d) = self.depth_m {
            writeln!(
                f,
                "for the stack depth {d} m: energy {:.6e} J, co-energy {:.6e} J",
                self.energy * d,
                self.coenergy * d
            )?;
        }
        writeln!(f, "peak |B| per region:")?;
        for (name, b) in &self.peak_flux_density_t {
            writeln!(f, "  {name:<20} {b:.4} T")?;
        }
        for w in self.magnet_warnings.iter().chain(&self.gap_warnings) {
            writeln!(f, "{w}")?;
        }
        write!(
            f,
            "time: set-up {:.3} s, assembly {:.3} s, factorisation {:.3} s, solves {:.3} s",
            self.setup_s, self.assembly_s, self.factorisation_s, self.solve_s
        )
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use coercive_fem::Material;

    fn ring_text(extra: &str, steel: &str) -> String {
        let text = std::fs::read_to_string(concat!(
            env!("CARGO_MANIFEST_DIR"),
            "/meshes/steel_ring_conductor.toml"
        ))
        .unwrap()
        .replace(
            "material = \"steel-c10\"",
            &format!("material = \"{steel}\""),
        );
        format!("{text}\n{extra}")
    }

    fn ring_case(extra: &str, steel: &str) -> Case {
        Case::from_toml_str(&ring_text(extra, steel)).unwrap()
    }

    const SECTIONS: &str = r#"
[[material]]
name = "ring_steel"
saturating = { js = 1.8, h0 = 200 }

[[winding]]
name = "bar"
turns = 1
current = 1000
positive = ["conductor"]

[[boundary]]
kind = "fixed"
curve = "outer"
"#;

    /// The steel-ring case solved from its file: the ring's flux per metre against the
    /// closed form of Ampere's law, 1.780584e-2 Wb/m (shared/check-values.md item 4,
    /// computed), here with P1 elements on the mesher's triangles (1 %).
    #[test]
    fn steel_ring_case_file_solves_to_the_closed_form_flux() {
        let case = ring_case(SECTIONS, "ring_steel");
        let geometry = case.geometry().unwrap();
        let (mesh, _) = case.mesh_with_report(&geometry).unwrap();
        let model = model_from_case(&case, mesh).unwrap();
        assert_eq!(model.windings()[0].turns, 1.0);
        let (sol, summary) = solve_and_summarise(&model).unwrap();
        assert!(summary.newton_iterations >= 2);
        assert_eq!(summary.energy_unit, "J/m");
        assert!(summary.to_string().contains("peak |B| per region"));
        let a_at = |p: [f64; 2]| {
            (0..model.mesh().triangles().len())
                .find_map(|t| {
                    sol.potential_at(coercive_mesh::TriangleId(t as u32), p)
                        .ok()
                })
                .unwrap()
        };
        let flux = a_at([0.010, 0.0]) - a_at([0.020, 0.0]);
        assert!((flux / 1.780584e-2 - 1.0).abs() < 1e-2, "flux {flux} Wb/m");
    }

    /// `brauer = { ..., exact = true }` gives the closed-form law; a stacking factor with it
    /// is an error naming the entry.
    #[test]
    fn exact_brauer_key_selects_the_closed_form_law() {
        let exact = SECTIONS.replace(
            "saturating = { js = 1.8, h0 = 200 }",
            "brauer = { k1 = 3.8, k2 = 2.17, k3 = 396.2, exact = true }",
        );
        let case = ring_case(&exact, "ring_steel");
        let geometry = case.geometry().unwrap();
        let (mesh, _) = case.mesh_with_report(&geometry).unwrap();
        let model = model_from_case(&case, mesh.clone()).unwrap();
        let ring = mesh.region_by_name("ring").unwrap();
        assert_eq!(
            model.material(ring),
            &Material::Brauer {
                k1: 3.8,
                k2: 2.17,
                k3: 396.2
            }
        );
        // A stacking factor with the closed form is refused when the case is read, naming
        // the entry and the key's line.
        let stacked = exact.replace("exact = true }", "exact = true }\nstacking_factor = 0.95");
        let text = ring_text(&stacked, "ring_steel");
        let line = text
            .lines()
            .position(|l| l.starts_with("stacking_factor"))
            .unwrap()
            + 1;
        match Case::from_toml_str(&text) {
            Err(crate::case::CaseError::Entry {
                section,
                index,
                name,
                what,
                position,
            }) => {
                assert_eq!((section, index), ("material", 1));
                assert_eq!(name.as_deref(), Some("ring_steel"));
                assert!(what.contains("stacking_factor"), "{what}");
                assert_eq!(position.line, line);
            }
            other => panic!("{other:?}"),
        }
        let negative = exact.replace("k3 = 396.2", "k3 = -1");
        assert!(Case::from_toml_str(&ring_text(&negative, "ring_steel")).is_err());
    }

    /// What the case reader cannot know (a curve lost by the mesh, a mesh region without a
    /// material) is still reported by the model, naming the item.
    #[test]
    fn mesh_dependent_errors_name_the_item() {
        let case = ring_case(SECTIONS, "ring_steel");
        let geometry = case.geometry().unwrap();
        let (mesh, _) = case.mesh_with_report(&geometry).unwrap();
        // A region without material: drop the ring's `material` line.
        let text = ring_text(SECTIONS, "ring_steel").replacen("material = \"ring_steel\"\n", "", 1);
        let bare = Case::from_toml_str(&text).unwrap();
        match model_from_case(&bare, mesh) {
            Err(SetupError::Model(FemError::MissingMaterial { region })) => {
                assert_eq!(region, "ring")
            }
            other => panic!("{other:?}"),
        }
    }
}
