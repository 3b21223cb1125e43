//! Building a solver [`Model`] from a case file's `[[material]]`, `[[winding]]` and
//! `[[boundary]]` sections (format in `docs/case-format.md`), and a one-call solve.

use coercive_fem::library;
use coercive_fem::{
    BhCurve, ElementOrder, FemError, Formulation, LinearMagnet, MagnetDirection, Material,
    MaterialError, Model, OpenBoundary, Sense, SoftMagnetic, Winding,
};
use coercive_mesh::Mesh;
use thiserror::Error;
use toml::{Table, Value};

use crate::case::{Case, CaseFormulation, SweepParameter};
use crate::study::{force_sweep, ForceSweepSettings, StudyError, TranslationPoint};
use coercive_post::force::{Body, ForceSettings};

/// What can go wrong while turning a case into a model.
#[derive(Debug, Clone, PartialEq, Error)]
#[non_exhaustive]
pub enum SetupError {
    /// A `[[material]]`, `[[winding]]` or `[[boundary]]` entry is malformed.
    #[error("[[{section}]] entry {index}{}: {reason}", name.as_ref().map(|n| format!(" `{n}`")).unwrap_or_default())]
    Section {
        /// `material`, `winding` or `boundary`.
        section: &'static str,
        /// 1-based position of the entry in the file.
        index: usize,
        /// The entry's `name`, if it has one.
        name: Option<String>,
        /// What is wrong.
        reason: String,
    },
    /// A region names a material that is neither a `[[material]]` nor a library preset.
    #[error("region `{region}`: unknown material `{material}` (not a [[material]] name; presets: {})", presets.join(", "))]
    UnknownMaterial {
        /// The region.
        region: String,
        /// The material name as written.
        material: String,
        /// The library's preset names.
        presets: Vec<String>,
    },
    /// The model itself is invalid (missing material, unknown curve, ...).
    #[error(transparent)]
    Model(#[from] FemError),
}

struct Entry<'a> {
    section: &'static str,
    index: usize,
    table: &'a Table,
}

impl Entry<'_> {
    fn err(&self, reason: impl Into<String>) -> SetupError {
        SetupError::Section {
            section: self.section,
            index: self.index,
            name: self
                .table
                .get("name")
                .and_then(Value::as_str)
                .map(String::from),
            reason: reason.into(),
        }
    }

    fn check_keys(&self, allowed: &[&str]) -> Result<(), SetupError> {
        for k in self.table.keys() {
            if !allowed.contains(&k.as_str()) {
                return Err(self.err(format!(
                    "unknown key `{k}`, expected one of {}",
                    allowed.join(", ")
                )));
            }
        }
        Ok(())
    }

    fn number(&self, key: &str) -> Result<Option<f64>, SetupError> {
        match self.table.get(key) {
            None => Ok(None),
            Some(Value::Float(f)) => Ok(Some(*f)),
            Some(Value::Integer(i)) => Ok(Some(*i as f64)),
            Some(_) => Err(self.err(format!("`{key}` must be a number"))),
        }
    }

    fn required_number(&self, key: &str) -> Result<f64, SetupError> {
        self.number(key)?
            .ok_or_else(|| self.err(format!("missing `{key}`")))
    }

    fn string(&self, key: &str) -> Result<Option<&str>, SetupError> {
        match self.table.get(key) {
            None => Ok(None),
            Some(Value::String(s)) => Ok(Some(s)),
            Some(_) => Err(self.err(format!("`{key}` must be a string"))),
        }
    }

    fn required_string(&self, key: &str) -> Result<&str, SetupError> {
        self.string(key)?
            .ok_or_else(|| self.err(format!("missing `{key}`")))
    }

    fn strings(&self, key: &str) -> Result<Vec<String>, SetupError> {
        match self.table.get(key) {
            None => Ok(Vec::new()),
            Some(Value::Array(a)) => a
                .iter()
                .map(|v| {
                    v.as_str()
                        .map(String::from)
                        .ok_or_else(|| self.err(format!("`{key}` must list region names")))
                })
                .collect(),
            Some(_) => Err(self.err(format!("`{key}` must be an array of strings"))),
        }
    }

    fn point(&self, key: &str, to_m: f64) -> Result<Option<[f64; 2]>, SetupError> {
        match self.table.get(key) {
            None => Ok(None),
            Some(Value::Array(a)) if a.len() == 2 => {
                let n = |v: &Value| v.as_float().or_else(|| v.as_integer().map(|i| i as f64));
                match (n(&a[0]), n(&a[1])) {
                    (Some(x), Some(y)) => Ok(Some([x * to_m, y * to_m])),
                    _ => Err(self.err(format!("`{key}` must be [x, y]"))),
                }
            }
            Some(_) => Err(self.err(format!("`{key}` must be [x, y]"))),
        }
    }

    fn sub_table(&self, key: &str) -> Result<Option<Entry<'_>>, SetupError> {
        match self.table.get(key) {
            None => Ok(None),
            Some(Value::Table(t)) => Ok(Some(Entry {
                section: self.section,
                index: self.index,
                table: t,
            })),
            Some(_) => Err(self.err(format!("`{key}` must be a table"))),
        }
    }
}

fn material_error(e: &Entry<'_>, m: MaterialError) -> SetupError {
    e.err(m.to_string())
}

/// Reads one `[[material]]` entry.
fn material(e: &Entry<'_>, to_m: f64) -> Result<(String, Material), SetupError> {
    e.check_keys(&[
        "name",
        "preset",
        "relative_permeability",
        "anisotropic",
        "bh",
        "saturating",
        "brauer",
        "stacking_factor",
        "remanence",
        "recoil_permeability",
        "perpendicular_permeability",
        "direction_deg",
        "radial_centre",
        "parallel_centre",
        "outward",
    ])?;
    let name = e.required_string("name")?.to_string();
    let direction = {
        let outward = match e.table.get("outward") {
            None => true,
            Some(Value::Boolean(b)) => *b,
            Some(_) => return Err(e.err("`outward` must be true or false")),
        };
        let angle = e.number("direction_deg")?;
        let radial = e.point("radial_centre", to_m)?;
        let parallel = e.point("parallel_centre", to_m)?;
        match (angle, radial, parallel) {
            (None, None, None) => None,
            (Some(a), None, None) => Some(MagnetDirection::Fixed {
                angle: a.to_radians(),
            }),
            (None, Some(c), None) => Some(MagnetDirection::Radial { centre: c, outward }),
            (None, None, Some(c)) => Some(MagnetDirection::Parallel { centre: c, outward }),
            _ => {
                return Err(e.err("give one of `direction_deg`, `radial_centre`, `parallel_centre`"))
            }
        }
    };
    let stacking = e.number("stacking_factor")?;
    let with_stacking = |c: BhCurve| match stacking {
        Some(k) => c.with_stacking_factor(k).map_err(|m| material_error(e, m)),
        None => Ok(c),
    };
    let remanence = e.number("remanence")?;
    let recoil = e.number("recoil_permeability")?;
    let perpendicular = e.number("perpendicular_permeability")?;
    let mut kinds = Vec::new();
    let m = if let Some(p) = e.string("preset")? {
        kinds.push("preset");
        match library::grade(p).map_err(|m| material_error(e, m))? {
            library::Grade::Magnet(mut g) => {
                if let Some(b) = remanence {
                    g.remanence = b;
                }
                if let Some(r) = recoil {
                    g.recoil_permeability = r;
                    g.perpendicular_permeability = perpendicular.unwrap_or(r);
                } else if let Some(p) = perpendicular {
                    g.perpendicular_permeability = p;
                }
                if let Some(d) = direction {
                    g = g.with_direction(d);
                }
                g.to_material().map_err(|m| material_error(e, m))?
            }
            library::Grade::Steel(s) => Material::Soft(SoftMagnetic {
                curve: with_stacking(s.curve().map_err(|m| material_error(e, m))?)?,
            }),
            g => g.to_material().map_err(|m| material_error(e, m))?,
        }
    } else if let Some(mu) = e.number("relative_permeability")? {
        kinds.push("relative_permeability");
        Material::Linear {
            relative_permeability: mu,
        }
    } else if let Some(a) = e.sub_table("anisotropic")? {
        kinds.push("anisotropic");
        a.check_keys(&["parallel", "perpendicular", "angle_deg"])?;
        Material::Anisotropic {
            parallel: a.required_number("parallel")?,
            perpendicular: a.required_number("perpendicular")?,
            angle: a.number("angle_deg")?.unwrap_or(0.0).to_radians(),
        }
    } else if let Some(v) = e.table.get("bh") {
        kinds.push("bh");
        let pts = v
            .as_array()
            .ok_or_else(|| e.err("`bh` must be an array of [H (A/m), B (T)] pairs"))?
            .iter()
            .map(|p| {
                let a = p.as_array().filter(|a| a.len() == 2);
                let n = |v: &Value| v.as_float().or_else(|| v.as_integer().map(|i| i as f64));
                match a.map(|a| (n(&a[0]), n(&a[1]))) {
                    Some((Some(h), Some(b))) => Ok((h, b)),
                    _ => Err(e.err("`bh` must be an array of [H (A/m), B (T)] pairs")),
                }
            })
            .collect::<Result<Vec<_>, _>>()?;
        Material::Soft(SoftMagnetic {
            curve: with_stacking(BhCurve::from_points(&pts).map_err(|m| material_error(e, m))?)?,
        })
    } else if let Some(s) = e.sub_table("saturating")? {
        kinds.push("saturating");
        s.check_keys(&["js", "h0"])?;
        let c = BhCurve::saturating(s.required_number("js")?, s.required_number("h0")?)
            .map_err(|m| material_error(e, m))?;
        Material::Soft(SoftMagnetic {
            curve: with_stacking(c)?,
        })
    } else if let Some(s) = e.sub_table("brauer")? {
        kinds.push("brauer");
        s.check_keys(&["k1", "k2", "k3", "exact"])?;
        let (k1, k2, k3) = (
            s.required_number("k1")?,
            s.required_number("k2")?,
            s.required_number("k3")?,
        );
        let exact = match s.table.get("exact") {
            None => false,
            Some(Value::Boolean(b)) => *b,
            Some(_) => return Err(e.err("`brauer.exact` must be true or false")),
        };
        if exact {
            // The closed-form law at every flux density, without the vacuum-slope
            // continuation of the sampled curve; a stacking factor needs a table.
            if stacking.is_some() {
                return Err(e.err(
                    "`stacking_factor` needs a B-H table; it cannot be combined with \
                     `brauer.exact = true`",
                ));
            }
            let m = Material::Brauer { k1, k2, k3 };
            m.validate().map_err(|m| material_error(e, m))?;
            m
        } else {
            let c = BhCurve::brauer(k1, k2, k3).map_err(|m| material_error(e, m))?;
            Material::Soft(SoftMagnetic {
                curve: with_stacking(c)?,
            })
        }
    } else if let Some(br) = remanence {
        kinds.push("remanence");
        let r = recoil.ok_or_else(|| e.err("a magnet needs `recoil_permeability`"))?;
        Material::Magnet(LinearMagnet {
            remanence: br,
            recoil_permeability: r,
            perpendicular_permeability: perpendicular.unwrap_or(r),
            direction: direction.ok_or_else(|| {
                e.err("a magnet needs `direction_deg`, `radial_centre` or `parallel_centre`")
            })?,
        })
    } else {
        return Err(e.err(
            "give `preset`, `relative_permeability`, `anisotropic`, `bh`, `saturating`, \
             `brauer` or `remanence`",
        ));
    };
    Ok((name, m))
}

/// Builds the model of `case` on `mesh` (meshed from the same case).
///
/// Each region's `material` is a `[[material]]` name or a library preset name. A planar case
/// without `depth` is solved per metre of depth (depth 1 m).
///
/// # Errors
/// [`SetupError`] naming the section entry, the region or the model item at fault.
pub fn model_from_case(case: &Case, mesh: Mesh) -> Result<Model, SetupError> {
    let to_m = case.unit().to_metres(1.0);
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
    let entries = |section: &'static str| {
        case.section(section)
            .iter()
            .enumerate()
            .map(move |(i, t)| Entry {
                section,
                index: i + 1,
                table: t,
            })
            .collect::<Vec<_>>()
    };
    let mut named = Vec::new();
    for e in entries("material") {
        named.push(material(&e, to_m)?);
    }
    let mut builder = Model::builder(mesh.clone(), formulation).order(order);
    for r in mesh.regions() {
        let Some(m) = case.region_material(&r.name) else {
            continue; // reported by the model as a region without material
        };
        let material = match named.iter().find(|(n, _)| n == m) {
            Some((_, mat)) => mat.clone(),
            None => library::grade(m)
                .and_then(|g| g.to_material())
                .map_err(|_| SetupError::UnknownMaterial {
                    region: r.name.clone(),
                    material: m.to_string(),
                    presets: library::names().iter().map(|s| s.to_string()).collect(),
                })?,
        };
        builder = builder.material(&r.name, material);
    }
    for e in entries("winding") {
        e.check_keys(&["name", "turns", "current", "positive", "negative"])?;
        let mut w = Winding::new(
            e.required_string("name")?,
            e.required_number("turns")?,
            e.required_number("current")?,
        );
        for r in e.strings("positive")? {
            w = w.side(&r, Sense::Positive);
        }
        for r in e.strings("negative")? {
            w = w.side(&r, Sense::Negative);
        }
        builder = builder.winding(w);
    }
    for e in entries("boundary") {
        let kind = e.required_string("kind")?;
        builder = match kind {
            "fixed" => {
                e.check_keys(&["kind", "curve", "value"])?;
                builder.fixed_potential(
                    e.required_string("curve")?,
                    e.number("value")?.unwrap_or(0.0),
                )
            }
            "periodic" | "anti_periodic" => {
                e.check_keys(&["kind", "first", "second"])?;
                let (a, b) = (e.required_string("first")?, e.required_string("second")?);
                if kind == "periodic" {
                    builder.periodic(a, b)
                } else {
                    builder.anti_periodic(a, b)
                }
            }
            "open" => {
                e.check_keys(&[
                    "kind",
                    "circle",
                    "exterior_boundary",
                    "exterior_region",
                    "exterior_centre",
                ])?;
                builder.open_boundary(OpenBoundary {
                    circle: e.required_string("circle")?.to_string(),
                    exterior_boundary: e.required_string("exterior_boundary")?.to_string(),
                    exterior_region: e.required_string("exterior_region")?.to_string(),
                    exterior_centre: e
                        .point("exterior_centre", to_m)?
                        .ok_or_else(|| e.err("missing `exterior_centre`"))?,
                })
            }
            other => {
                return Err(e.err(format!(
                    "unknown kind `{other}`, expected fixed, periodic, anti_periodic or open"
                )))
            }
        };
    }
    Ok(builder.build()?)
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
        setup_s,
        assembly_s: report.times.assembly_s,
        factorisation_s: report.times.factorisation_s,
        solve_s: report.times.solve_s,
    };
    Ok((sol, summary))
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
    let geometry = case.geometry()?;
    let group_regions: Vec<&str> = geometry
        .rigid_groups
        .iter()
        .find(|g| g.name == sw.group)
        .map(|g| g.regions.iter().map(String::as_str).collect())
        .unwrap_or_default();
    let rigid = geometry
        .prepare_rigid()
        .map_err(|source| crate::case::CaseError::Mesh {
            source,
            position: None,
        })?;
    // Check the non-mesh parts of the set-up once on the drawn mesh, so that the build
    // closure below can only meet mesh-dependent model errors.
    let drawn = rigid
        .mesh_at(&[])
        .map_err(|source| crate::case::CaseError::Mesh {
            source,
            position: None,
        })?;
    let extent = {
        let v = drawn.vertices();
        let (mut lo, mut hi) = ([f64::INFINITY; 2], [f64::NEG_INFINITY; 2]);
        for p in v {
            lo = [lo[0].min(p.x), lo[1].min(p.y)];
            hi = [hi[0].max(p.x), hi[1].max(p.y)];
        }
        (hi[0] - lo[0]).max(hi[1] - lo[1])
    };
    model_from_case(case, drawn)?;
    let build = |mesh: Mesh| {
        model_from_case(case, mesh).map_err(|e| match e {
            SetupError::Model(f) => f,
            other => FemError::Unsupported {
                what: other.to_string(),
            },
        })
    };
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
    let settings = ForceSweepSettings {
        group: sw.group.clone(),
        direction: sw.direction,
        body: Body::new(&sw.body.iter().map(String::as_str).collect::<Vec<_>>()),
        group_body: Body::new(&group_regions),
        // Co-energy step h: at most a fifth of the gap and half the element next to the group
        // (the reported difference uses h/2, with a Richardson estimate of its error).
        relative_step: 0.2,
        size_step: 0.5,
        min_step_m: if gaps {
            (1e-5 * extent).max(f64::MIN_POSITIVE)
        } else {
            (1e-4 * extent).max(f64::MIN_POSITIVE)
        },
        force: ForceSettings::default(),
    };
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

    fn ring_case(extra: &str, steel: &str) -> Case {
        let text = std::fs::read_to_string(concat!(
            env!("CARGO_MANIFEST_DIR"),
            "/meshes/steel_ring_conductor.toml"
        ))
        .unwrap()
        .replace(
            "material = \"steel-1010\"",
            &format!("material = \"{steel}\""),
        );
        Case::from_toml_str(&format!("{text}\n{extra}")).unwrap()
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
        let stacked = exact.replace("exact = true }", "exact = true }\nstacking_factor = 0.95");
        let case = ring_case(&stacked, "ring_steel");
        match model_from_case(&case, mesh.clone()) {
            Err(SetupError::Section { name, reason, .. }) => {
                assert_eq!(name.as_deref(), Some("ring_steel"));
                assert!(reason.contains("stacking_factor"), "{reason}");
            }
            other => panic!("{other:?}"),
        }
        let negative = exact.replace("k3 = 396.2", "k3 = -1");
        let case = ring_case(&negative, "ring_steel");
        assert!(model_from_case(&case, mesh).is_err());
    }

    #[test]
    fn case_section_errors_name_the_entry() {
        let case = ring_case(SECTIONS, "unobtainium");
        let geometry = case.geometry().unwrap();
        let (mesh, _) = case.mesh_with_report(&geometry).unwrap();
        match model_from_case(&case, mesh.clone()) {
            Err(SetupError::UnknownMaterial {
                region, material, ..
            }) => {
                assert_eq!(region, "ring");
                assert_eq!(material, "unobtainium");
            }
            other => panic!("{other:?}"),
        }
        let bad = SECTIONS.replace("turns = 1", "turns = 1\ncolour = \"red\"");
        let case = ring_case(&bad, "ring_steel");
        match model_from_case(&case, mesh.clone()) {
            Err(SetupError::Section {
                section,
                name,
                reason,
                ..
            }) => {
                assert_eq!(section, "winding");
                assert_eq!(name.as_deref(), Some("bar"));
                assert!(reason.contains("colour"), "{reason}");
            }
            other => panic!("{other:?}"),
        }
        let bad = SECTIONS.replace("curve = \"outer\"", "curve = \"rim\"");
        let case = ring_case(&bad, "ring_steel");
        assert!(matches!(
            model_from_case(&case, mesh),
            Err(SetupError::Model(FemError::UnknownCurve { .. }))
        ));
    }
}
