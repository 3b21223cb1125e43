//! The [`Model`]: a mesh with a material per region, sources, boundary conditions, a
//! formulation and an element order, validated once by [`ModelBuilder::build`].

use std::collections::{HashMap, HashSet};
use std::fmt;
use std::sync::Arc;

use coercive_mesh::{CurveId, Mesh, Point2, RegionId};
use serde::{Deserialize, Serialize};

use crate::element::ElementOrder;
use crate::material::Material;
use crate::FemError;

/// The field formulation.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
#[serde(tag = "kind", rename_all = "snake_case")]
pub enum Formulation {
    /// Planar (x, y) fields with unknown A_z (Wb/m); B = (dA/dy, -dA/dx). Integrals are per
    /// metre of depth; `depth_m` (m) turns them into totals.
    Planar {
        /// Stack depth (m), positive.
        depth_m: f64,
    },
    /// Axisymmetric fields in (r, z) = (x, y) with unknown A_phi (Wb/m):
    /// B_r = -dA/dz, B_z = dA/dr + A/r, A = 0 on the axis (imposed automatically on mesh
    /// nodes at r = 0). Contours of r A_phi are flux lines (flux 2 pi r A_phi through the
    /// circle of radius r). Integrals are totals over the full revolution.
    ///
    /// A_phi rather than the modified potential u = r A_phi is the unknown because near the
    /// axis u ~ r^2 while A_phi ~ r: P1 elements represent A_phi exactly there but not u, and
    /// with u the field within one element of the axis did not converge (measured: error of
    /// B_z on the axis stayed near 0.9 T of 2 T under refinement in the manufactured test).
    Axisymmetric,
}

/// The sense of a winding side: current along +z (planar) / +phi (axisymmetric), or against.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Sense {
    /// Current along +z (planar) or +phi (axisymmetric).
    Positive,
    /// Current along -z or -phi.
    Negative,
}

impl Sense {
    /// +1 or -1.
    #[inline]
    pub fn sign(self) -> f64 {
        match self {
            Sense::Positive => 1.0,
            Sense::Negative => -1.0,
        }
    }
}

/// One side of a winding: a region carrying all `turns` conductors with one sense.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct WindingSide {
    /// The region holding the side's conductors.
    pub region: String,
    /// The current's sense in this side.
    pub sense: Sense,
}

/// A winding (a phase) of `turns` turns per side carrying the terminal current `current_a`
/// amperes, its conductors connected in `parallel_paths` parallel paths. Each side is a
/// region holding its `turns` conductors, each carrying `current_a / parallel_paths`, so the
/// current density in a side is `turns * current_a / (parallel_paths * area)` (A/m^2), with
/// the side's area taken from the mesh (uniform over the side: a stranded coil).
///
/// A phase of several coils lists every coil's sides. With `a` parallel paths each path
/// holds 1/a of the coils in series, so the flux linkage at the terminals is the sum over
/// all sides divided by `a` (and the terminal current is `a` times the current of a coil);
/// the product of the two, and so the energy, is the same for any `a`. The end windings,
/// outside a planar model's cross-section, add `end_turn_inductance_h` times the terminal
/// current to the flux linkage (their field is not modelled: an estimate or a measured
/// figure, e.g. from a 3D solve or a handbook formula for the overhang).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Winding {
    /// The winding's name (used in errors and results).
    pub name: String,
    /// Number of turns (conductors) in each side (non-zero, finite).
    pub turns: f64,
    /// Terminal current of the winding (A); each conductor carries
    /// `current_a / parallel_paths`.
    pub current_a: f64,
    /// The sides with their sense.
    pub sides: Vec<WindingSide>,
    /// Number of parallel paths the sides' conductors are connected in (at least 1).
    #[serde(default = "one_path")]
    pub parallel_paths: u32,
    /// Inductance of the end windings outside the modelled cross-section (H, at the
    /// terminals, >= 0), added to the flux linkage as `end_turn_inductance_h * current_a`.
    #[serde(default)]
    pub end_turn_inductance_h: f64,
}

fn one_path() -> u32 {
    1
}

impl Winding {
    /// A winding without sides yet, one path, no end-winding inductance; add sides with
    /// [`Winding::side`].
    pub fn new(name: &str, turns: f64, current_a: f64) -> Self {
        Self {
            name: name.to_string(),
            turns,
            current_a,
            sides: Vec::new(),
            parallel_paths: 1,
            end_turn_inductance_h: 0.0,
        }
    }

    /// Adds a side: `region` carries the turns with `sense`.
    pub fn side(mut self, region: &str, sense: Sense) -> Self {
        self.sides.push(WindingSide {
            region: region.to_string(),
            sense,
        });
        self
    }

    /// Connects the conductors in `paths` parallel paths (checked when the model is built).
    pub fn parallel_paths(mut self, paths: u32) -> Self {
        self.parallel_paths = paths;
        self
    }

    /// Sets the end-winding inductance (H, at the terminals; checked when the model is
    /// built).
    pub fn end_turn_inductance(mut self, henry: f64) -> Self {
        self.end_turn_inductance_h = henry;
        self
    }

    /// Current in each conductor (A): the terminal current over the parallel paths.
    pub fn conductor_current_a(&self) -> f64 {
        self.current_a / f64::from(self.parallel_paths.max(1))
    }

    /// A side's ampere-turns per ampere of terminal current: `turns / parallel_paths`.
    pub fn turns_per_path(&self) -> f64 {
        self.turns / f64::from(self.parallel_paths.max(1))
    }
}

/// A position-dependent scalar field f(x, y) (point in metres), e.g. a manufactured current
/// density (A/m^2) or a prescribed potential.
#[derive(Clone)]
pub struct ScalarField(pub Arc<dyn Fn(Point2) -> f64 + Send + Sync>);

impl ScalarField {
    /// Wraps a closure.
    pub fn new(f: impl Fn(Point2) -> f64 + Send + Sync + 'static) -> Self {
        Self(Arc::new(f))
    }

    /// Evaluates the field at `p` (m).
    #[inline]
    pub fn at(&self, p: Point2) -> f64 {
        (self.0)(p)
    }
}

impl fmt::Debug for ScalarField {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str("ScalarField(..)")
    }
}

/// The value a fixed potential prescribes.
#[derive(Clone, Debug)]
pub enum PotentialValue {
    /// A constant: A_z (Wb/m) planar, A_phi (Wb/m) axisymmetric.
    Constant(f64),
    /// A value depending on the node position.
    Field(ScalarField),
}

/// An open boundary by the Kelvin transformation (planar and axisymmetric).
///
/// The exterior of the circle `circle` (radius R, centre c) is mapped by inversion onto a
/// disc of the same radius R meshed as region `exterior_region` elsewhere in the plane, with
/// centre `exterior_centre` and boundary curve `exterior_boundary`. The mesh must hold a curve
/// pair between `circle` and `exterior_boundary` whose matched nodes are translates of each
/// other; a node must sit at `exterior_centre` (the image of infinity), where the potential
/// is fixed to 0. The 2D Laplace equation is invariant under the inversion, so the exterior
/// disc is filled with a material of relative permeability 1 (assigned automatically).
///
/// Axisymmetric models: `circle` and `exterior_boundary` are semicircles and both discs are
/// half-discs centred on the axis r = 0 (so the translation between them is along z). The
/// exterior region's reluctivity is then nu_0 rho'^2 / R^2 (rho' the distance from
/// `exterior_centre`), which makes it the exact image of the unbounded exterior; its energy
/// and co-energy are those of the whole exterior. See the derivation at
/// `axisymmetric_kelvin` in this module's source.
///
/// The curve `circle` must cover the whole rim it lies on, and `exterior_boundary` the whole
/// rim of the exterior disc: an outer mesh edge on either circle that neither they nor another
/// boundary condition cover is refused ([`FemError::PartialOpenBoundary`]), since it would
/// silently stay natural.
///
/// Reference: E. M. Freeman and D. A. Lowther, "A novel mapping technique for open boundary
/// finite element solutions to Poisson's equation", IEEE Trans. Magn. 25(5), 1989.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct OpenBoundary {
    /// Name of the circle curve(s) bounding the modelled interior.
    pub circle: String,
    /// Name of the exterior disc's boundary curve(s), paired with `circle` in the mesh.
    pub exterior_boundary: String,
    /// Name of the region meshing the exterior disc.
    pub exterior_region: String,
    /// Centre of the exterior disc (m): the image of infinity.
    pub exterior_centre: [f64; 2],
}

/// A boundary condition (the default on every boundary is natural: B tangential... i.e. H
/// tangential component zero, field normal to the boundary).
#[derive(Clone, Debug)]
pub enum BoundaryCondition {
    /// Fixed potential on every curve named `curve`.
    FixedPotential {
        /// Curve name.
        curve: String,
        /// The prescribed value.
        value: PotentialValue,
    },
    /// Periodic pair: the potential on `second` equals that on `first` at matched nodes.
    Periodic {
        /// First curve name.
        first: String,
        /// Second curve name.
        second: String,
    },
    /// Anti-periodic pair: the potential on `second` is minus that on `first`.
    AntiPeriodic {
        /// First curve name.
        first: String,
        /// Second curve name.
        second: String,
    },
    /// Open boundary by the Kelvin transformation.
    Open(OpenBoundary),
    /// Floating potential on every curve named `curve`: the potential takes one unknown
    /// constant value along all of them, so no flux crosses them (as on a fixed potential),
    /// but the value is not imposed. The weak form then holds the integral of the tangential
    /// H along the curves at zero: the wall carries no net surface current, and the flux
    /// between it and a fixed potential follows from the windings (a leakage-free magnetic
    /// circuit between two flux walls is the usual use).
    FloatingPotential {
        /// Curve name.
        curve: String,
    },
}

/// Builder of a [`Model`]; every method records, [`ModelBuilder::build`] validates.
#[derive(Clone, Debug)]
pub struct ModelBuilder {
    mesh: Arc<Mesh>,
    formulation: Formulation,
    order: ElementOrder,
    materials: Vec<(String, Material)>,
    current_densities: Vec<(String, f64)>,
    current_density_fields: Vec<(String, ScalarField)>,
    windings: Vec<Winding>,
    boundary_conditions: Vec<BoundaryCondition>,
}

impl ModelBuilder {
    /// Sets the element order (default P1).
    pub fn order(mut self, order: ElementOrder) -> Self {
        self.order = order;
        self
    }

    /// Assigns `material` to the region named `region`.
    pub fn material(mut self, region: &str, material: Material) -> Self {
        self.materials.push((region.to_string(), material));
        self
    }

    /// Assigns `material` to the region named `region` in place of any material given to it
    /// before (e.g. a moving magnet's easy axis turned with the part, on a builder from
    /// [`Model::to_builder`]).
    pub fn replace_material(mut self, region: &str, material: Material) -> Self {
        self.materials.retain(|(r, _)| r != region);
        self.materials.push((region.to_string(), material));
        self
    }

    /// Adds a uniform current density `j` (A/m^2, along +z planar or +phi axisymmetric) in
    /// region `region`.
    pub fn current_density(mut self, region: &str, j: f64) -> Self {
        self.current_densities.push((region.to_string(), j));
        self
    }

    /// Adds a position-dependent current density (A/m^2) in region `region`.
    pub fn current_density_field(mut self, region: &str, j: ScalarField) -> Self {
        self.current_density_fields.push((region.to_string(), j));
        self
    }

    /// Adds a winding.
    pub fn winding(mut self, winding: Winding) -> Self {
        self.windings.push(winding);
        self
    }

    /// Sets the current (A) of the winding named `name` (no effect if there is none; `build`
    /// does not complain, so use it on builders known to hold the winding).
    pub fn winding_current(mut self, name: &str, current_a: f64) -> Self {
        for w in self.windings.iter_mut().filter(|w| w.name == name) {
            w.current_a = current_a;
        }
        self
    }

    /// Fixes the potential to `value` on every curve named `curve` (0 makes it a flux line).
    pub fn fixed_potential(mut self, curve: &str, value: f64) -> Self {
        self.boundary_conditions
            .push(BoundaryCondition::FixedPotential {
                curve: curve.to_string(),
                value: PotentialValue::Constant(value),
            });
        self
    }

    /// Fixes the potential on every curve named `curve` to a function of position.
    pub fn fixed_potential_field(mut self, curve: &str, value: ScalarField) -> Self {
        self.boundary_conditions
            .push(BoundaryCondition::FixedPotential {
                curve: curve.to_string(),
                value: PotentialValue::Field(value),
            });
        self
    }

    /// Makes every curve named `curve` a floating potential: one unknown constant along all
    /// of them (see [`BoundaryCondition::FloatingPotential`]).
    pub fn floating_potential(mut self, curve: &str) -> Self {
        self.boundary_conditions
            .push(BoundaryCondition::FloatingPotential {
                curve: curve.to_string(),
            });
        self
    }

    /// Periodic pair: potential on `second` equals potential on `first` at matched nodes.
    pub fn periodic(mut self, first: &str, second: &str) -> Self {
        self.boundary_conditions.push(BoundaryCondition::Periodic {
            first: first.to_string(),
            second: second.to_string(),
        });
        self
    }

    /// Anti-periodic pair: potential on `second` is minus that on `first`.
    pub fn anti_periodic(mut self, first: &str, second: &str) -> Self {
        self.boundary_conditions
            .push(BoundaryCondition::AntiPeriodic {
                first: first.to_string(),
                second: second.to_string(),
            });
        self
    }

    /// Open boundary by the Kelvin transformation (planar or axisymmetric).
    pub fn open_boundary(mut self, open: OpenBoundary) -> Self {
        self.boundary_conditions.push(BoundaryCondition::Open(open));
        self
    }

    /// Adds any boundary condition.
    pub fn boundary_condition(mut self, bc: BoundaryCondition) -> Self {
        self.boundary_conditions.push(bc);
        self
    }

    /// Validates everything and builds the model.
    ///
    /// # Errors
    /// A [`FemError`] naming the first offending item: a region without material, a material
    /// or source for an unknown region, a duplicate material, an invalid material, an invalid
    /// winding, a non-finite number, an unknown curve, an unmatched curve pair, a non-positive
    /// depth, negative radii, or an axisymmetric open boundary whose circles are not centred
    /// on the axis.
    pub fn build(self) -> Result<Model, FemError> {
        let mesh = &self.mesh;
        let nreg = mesh.regions().len();
        let finite = |what: String, value: f64| {
            if value.is_finite() {
                Ok(())
            } else {
                Err(FemError::NotFinite { what, value })
            }
        };
        let region = |what: &str, name: &str| {
            mesh.region_by_name(name)
                .ok_or_else(|| FemError::UnknownRegion {
                    what: what.to_string(),
                    region: name.to_string(),
                })
        };
        match self.formulation {
            Formulation::Planar { depth_m } => {
                finite("planar depth (m)".into(), depth_m)?;
                if depth_m <= 0.0 {
                    return Err(FemError::OutOfRange {
                        what: "planar depth (m)".into(),
                        value: depth_m,
                        reason: "must be positive".into(),
                    });
                }
            }
            Formulation::Axisymmetric => {
                let extent = mesh_extent(mesh);
                if let Some(p) = mesh.vertices().iter().find(|p| p.x < -1e-12 * extent) {
                    return Err(FemError::OutOfRange {
                        what: format!("radius of mesh node at ({} m, {} m)", p.x, p.y),
                        value: p.x,
                        reason: "axisymmetric models need r >= 0".into(),
                    });
                }
            }
        }

        // Materials.
        let mut materials: Vec<Option<Material>> = vec![None; nreg];
        let mut open_regions = Vec::new();
        for bc in &self.boundary_conditions {
            if let BoundaryCondition::Open(o) = bc {
                let r = region("open boundary exterior", &o.exterior_region)?;
                materials[r.index()] = Some(Material::vacuum());
                open_regions.push(r);
            }
        }
        for (name, m) in &self.materials {
            let r = region("material", name)?;
            if materials[r.index()].is_some() {
                return Err(FemError::DuplicateMaterial {
                    region: name.clone(),
                });
            }
            m.validate().map_err(|e| FemError::InvalidMaterial {
                region: name.clone(),
                reason: e.to_string(),
            })?;
            materials[r.index()] = Some(m.clone());
        }
        let materials: Vec<Material> = materials
            .into_iter()
            .enumerate()
            .map(|(i, m)| {
                m.ok_or_else(|| FemError::MissingMaterial {
                    region: mesh.regions()[i].name.clone(),
                })
            })
            .collect::<Result<_, _>>()?;

        // Sources.
        let mut region_current_density = vec![0.0; nreg];
        let mut region_areas = vec![0.0; nreg];
        let mut region_centroids = vec![[0.0; 2]; nreg];
        for (t, tri) in mesh.triangles().iter().enumerate() {
            let r = mesh.triangle_regions()[t].index();
            let a = mesh.triangle_area(coercive_mesh::TriangleId(t as u32));
            let c = tri.iter().fold([0.0; 2], |acc, v| {
                let p = mesh.vertex(*v);
                [acc[0] + p.x / 3.0, acc[1] + p.y / 3.0]
            });
            region_areas[r] += a;
            region_centroids[r][0] += a * c[0];
            region_centroids[r][1] += a * c[1];
        }
        for (c, a) in region_centroids.iter_mut().zip(&region_areas) {
            if *a > 0.0 {
                c[0] /= a;
                c[1] /= a;
            }
        }
        for (name, j) in &self.current_densities {
            let r = region("current density", name)?;
            finite(format!("current density in region `{name}` (A/m^2)"), *j)?;
            region_current_density[r.index()] += j;
        }
        let mut region_density_fields: Vec<Vec<ScalarField>> = vec![Vec::new(); nreg];
        for (name, f) in &self.current_density_fields {
            let r = region("current density field", name)?;
            region_density_fields[r.index()].push(f.clone());
        }
        for w in &self.windings {
            let bad = |reason: String| FemError::InvalidWinding {
                winding: w.name.clone(),
                reason,
            };
            finite(format!("turns of winding `{}`", w.name), w.turns)?;
            finite(format!("current of winding `{}` (A)", w.name), w.current_a)?;
            if w.turns == 0.0 {
                return Err(bad("zero turns".into()));
            }
            if w.sides.is_empty() {
                return Err(bad("no sides".into()));
            }
            if w.parallel_paths == 0 {
                return Err(bad("zero parallel paths (at least 1)".into()));
            }
            if !(w.end_turn_inductance_h.is_finite() && w.end_turn_inductance_h >= 0.0) {
                return Err(bad(format!(
                    "end-winding inductance {} H (must be finite and >= 0)",
                    w.end_turn_inductance_h
                )));
            }
            for s in &w.sides {
                let r = region(&format!("winding `{}` side", w.name), &s.region)?;
                let area = region_areas[r.index()];
                if area <= 0.0 {
                    return Err(bad(format!("side `{}` has no area", s.region)));
                }
                region_current_density[r.index()] +=
                    s.sense.sign() * w.turns_per_path() * w.current_a / area;
            }
        }

        // Boundary conditions: names must exist; pairs must be matched.
        let mut region_kelvin: Vec<Option<KelvinImage>> = vec![None; nreg];
        let conditioned = conditioned_edges(mesh, &self.boundary_conditions);
        for bc in &self.boundary_conditions {
            match bc {
                BoundaryCondition::FixedPotential { curve, value } => {
                    curves_named(mesh, "fixed potential", curve)?;
                    if let PotentialValue::Constant(v) = value {
                        finite(format!("fixed potential on curve `{curve}`"), *v)?;
                    }
                }
                BoundaryCondition::FloatingPotential { curve } => {
                    curves_named(mesh, "floating potential", curve)?;
                }
                BoundaryCondition::Periodic { first, second }
                | BoundaryCondition::AntiPeriodic { first, second } => {
                    matched_pairs(mesh, first, second)?;
                }
                BoundaryCondition::Open(o) => {
                    for v in o.exterior_centre {
                        finite("open boundary exterior centre (m)".into(), v)?;
                    }
                    let pairs = matched_pairs(mesh, &o.circle, &o.exterior_boundary)?;
                    let shift = check_translated(mesh, &o.circle, &o.exterior_boundary, &pairs)?;
                    centre_node(mesh, o)?;
                    let interior = [
                        o.exterior_centre[0] - shift.0,
                        o.exterior_centre[1] - shift.1,
                    ];
                    check_full_rim(mesh, &o.circle, interior, &conditioned)?;
                    check_full_rim(mesh, &o.exterior_boundary, o.exterior_centre, &conditioned)?;
                    if self.formulation == Formulation::Axisymmetric {
                        let r = region("open boundary exterior", &o.exterior_region)?;
                        region_kelvin[r.index()] =
                            Some(axisymmetric_kelvin(mesh, o, &pairs, shift)?);
                    }
                }
            }
        }

        Ok(Model {
            mesh: self.mesh.clone(),
            formulation: self.formulation,
            order: self.order,
            materials,
            region_current_density,
            region_density_fields,
            region_areas,
            region_centroids,
            region_kelvin,
            spec: self,
        })
    }
}

/// A validated magnetostatic model. Cheap to clone (the mesh is shared).
///
/// Build one with [`Model::builder`]; solve it with [`Model::solve`] or, to reuse the
/// symbolic factorisation across models on the same mesh, with a [`Solver`](crate::Solver).
#[derive(Clone, Debug)]
pub struct Model {
    mesh: Arc<Mesh>,
    formulation: Formulation,
    order: ElementOrder,
    materials: Vec<Material>,
    region_current_density: Vec<f64>,
    region_density_fields: Vec<Vec<ScalarField>>,
    region_areas: Vec<f64>,
    region_centroids: Vec<[f64; 2]>,
    /// Per region: the axisymmetric Kelvin image it holds, if any.
    region_kelvin: Vec<Option<KelvinImage>>,
    spec: ModelBuilder,
}

impl Model {
    /// Starts a model on `mesh` with `formulation`: element order P1, no materials, no
    /// sources, natural boundaries everywhere.
    pub fn builder(mesh: impl Into<Arc<Mesh>>, formulation: Formulation) -> ModelBuilder {
        ModelBuilder {
            mesh: mesh.into(),
            formulation,
            order: ElementOrder::P1,
            materials: Vec::new(),
            current_densities: Vec::new(),
            current_density_fields: Vec::new(),
            windings: Vec::new(),
            boundary_conditions: Vec::new(),
        }
    }

    /// A builder holding everything this model was built from, to derive a variant (e.g. a
    /// different winding current with [`ModelBuilder::winding_current`]).
    pub fn to_builder(&self) -> ModelBuilder {
        self.spec.clone()
    }

    /// The mesh.
    pub fn mesh(&self) -> &Arc<Mesh> {
        &self.mesh
    }

    /// The formulation.
    pub fn formulation(&self) -> Formulation {
        self.formulation
    }

    /// The element order.
    pub fn order(&self) -> ElementOrder {
        self.order
    }

    /// The material of one region.
    ///
    /// # Panics
    /// If the mesh has no region `r`; [`Model::try_material`] returns an error instead.
    pub fn material(&self, r: RegionId) -> &Material {
        &self.materials[r.index()]
    }

    /// [`Model::material`] without panicking.
    ///
    /// # Errors
    /// [`FemError::OutOfRange`] if the mesh has no region `r`.
    pub fn try_material(&self, r: RegionId) -> Result<&Material, FemError> {
        self.materials
            .get(r.index())
            .ok_or_else(|| region_out_of_range(r, self.materials.len()))
    }

    /// Materials indexed by region.
    pub fn materials(&self) -> &[Material] {
        &self.materials
    }

    /// True if every material is linear (then one linear solve is exact).
    pub fn is_linear(&self) -> bool {
        self.materials.iter().all(Material::is_linear)
    }

    /// The uniform current density of each region (A/m^2), windings included.
    pub fn region_current_densities(&self) -> &[f64] {
        &self.region_current_density
    }

    /// Position-dependent current densities of each region.
    pub(crate) fn region_density_fields(&self) -> &[Vec<ScalarField>] {
        &self.region_density_fields
    }

    /// The area of each region (m^2).
    pub fn region_areas(&self) -> &[f64] {
        &self.region_areas
    }

    /// The area centroid of each region (m).
    pub fn region_centroids(&self) -> &[[f64; 2]] {
        &self.region_centroids
    }

    /// This model with winding `name` carrying the terminal current `current_a` amperes instead (the
    /// current densities of its sides follow; nothing else is rebuilt).
    ///
    /// # Errors
    /// [`FemError::InvalidPulse`] if no winding has that name, [`FemError::NotFinite`] for a
    /// non-finite current.
    pub fn with_winding_current(&self, name: &str, current_a: f64) -> Result<Model, FemError> {
        if !current_a.is_finite() {
            return Err(FemError::NotFinite {
                what: format!("current of winding `{name}` (A)"),
                value: current_a,
            });
        }
        let k = self
            .spec
            .windings
            .iter()
            .position(|w| w.name == name)
            .ok_or_else(|| FemError::InvalidPulse {
                reason: format!(
                    "winding `{name}` is not in the model (windings: {})",
                    self.spec
                        .windings
                        .iter()
                        .map(|w| format!("`{}`", w.name))
                        .collect::<Vec<_>>()
                        .join(", ")
                ),
            })?;
        let mut m = self.clone();
        let w = &mut m.spec.windings[k];
        let delta = current_a - w.current_a;
        w.current_a = current_a;
        for side in &w.sides {
            // Sides were validated when the model was built.
            if let Some(r) = m.mesh.region_by_name(&side.region) {
                m.region_current_density[r.index()] +=
                    side.sense.sign() * w.turns_per_path() * delta / m.region_areas[r.index()];
            }
        }
        Ok(m)
    }

    /// The current density (A/m^2) per ampere of winding `k`'s current in each region.
    pub(crate) fn winding_density_per_ampere(&self, k: usize) -> Vec<f64> {
        let mut j = vec![0.0; self.region_areas.len()];
        let w = &self.spec.windings[k];
        for side in &w.sides {
            if let Some(r) = self.mesh.region_by_name(&side.region) {
                j[r.index()] +=
                    side.sense.sign() * w.turns_per_path() / self.region_areas[r.index()];
            }
        }
        j
    }

    /// The windings.
    pub fn windings(&self) -> &[Winding] {
        &self.spec.windings
    }

    /// The boundary conditions.
    pub fn boundary_conditions(&self) -> &[BoundaryCondition] {
        &self.spec.boundary_conditions
    }

    /// The factor multiplying the material's reluctivity (and its energy densities) at
    /// `point` (m) in region `r`: `rho'^2 / R^2` in the exterior disc of an axisymmetric open
    /// boundary (rho' the distance from the disc's centre), 1 everywhere else.
    #[inline]
    pub(crate) fn reluctivity_scale(&self, r: RegionId, point: [f64; 2]) -> f64 {
        match &self.region_kelvin[r.index()] {
            None => 1.0,
            Some(k) => {
                let (dx, dy) = (point[0] - k.centre[0], point[1] - k.centre[1]);
                (dx * dx + dy * dy) / k.radius_sq
            }
        }
    }

    /// The name of a region.
    ///
    /// # Panics
    /// If the mesh has no region `r`; [`Model::try_region_name`] returns an error instead.
    pub fn region_name(&self, r: RegionId) -> &str {
        &self.mesh.regions()[r.index()].name
    }

    /// [`Model::region_name`] without panicking.
    ///
    /// # Errors
    /// [`FemError::OutOfRange`] if the mesh has no region `r`.
    pub fn try_region_name(&self, r: RegionId) -> Result<&str, FemError> {
        let regions = self.mesh.regions();
        regions
            .get(r.index())
            .map(|region| region.name.as_str())
            .ok_or_else(|| region_out_of_range(r, regions.len()))
    }

    /// Solves the model with default Newton settings (see [`Solver::solve`](crate::Solver)).
    ///
    /// # Errors
    /// See [`Solver::new`](crate::Solver::new) and [`Solver::solve`](crate::Solver::solve).
    pub fn solve(&self) -> Result<crate::Solution, FemError> {
        let solver = crate::Solver::new(self)?;
        solver.solve(self, &crate::NewtonSettings::default())
    }
}

/// The largest coordinate magnitude of the mesh (m), at least 1e-300.
pub(crate) fn mesh_extent(mesh: &Mesh) -> f64 {
    mesh.vertices()
        .iter()
        .fold(1e-300_f64, |m, p| m.max(p.x.abs()).max(p.y.abs()))
}

pub(crate) fn curves_named(mesh: &Mesh, what: &str, name: &str) -> Result<Vec<CurveId>, FemError> {
    let c = mesh.curves_named(name);
    if c.is_empty() {
        return Err(FemError::UnknownCurve {
            what: what.to_string(),
            curve: name.to_string(),
        });
    }
    Ok(c)
}

/// The mesh curve pairs joining curves named `first` and `second`, oriented so that
/// `.0` is on `first`.
pub(crate) fn matched_pairs(
    mesh: &Mesh,
    first: &str,
    second: &str,
) -> Result<Vec<(CurveId, CurveId)>, FemError> {
    curves_named(mesh, "curve pair", first)?;
    curves_named(mesh, "curve pair", second)?;
    let name = |c: CurveId| mesh.curves()[c.index()].name.as_deref();
    let mut out = Vec::new();
    for p in mesh.curve_pairs() {
        if name(p.first) == Some(first) && name(p.second) == Some(second) {
            out.push((p.first, p.second));
        } else if name(p.first) == Some(second) && name(p.second) == Some(first) {
            out.push((p.second, p.first));
        }
    }
    let unmatched = |reason: String| FemError::UnmatchedCurvePair {
        first: first.to_string(),
        second: second.to_string(),
        reason,
    };
    if out.is_empty() {
        return Err(unmatched(
            "the mesh has no curve pair joining them (mesh them as a curve pair)".into(),
        ));
    }
    for (a, b) in &out {
        let (na, nb) = (mesh.curve_nodes(*a).len(), mesh.curve_nodes(*b).len());
        if na != nb {
            return Err(unmatched(format!(
                "{na} nodes on one side, {nb} on the other"
            )));
        }
    }
    Ok(out)
}

/// The mesh edges (sorted vertex pairs) lying on a curve that carries a boundary condition.
fn conditioned_edges(mesh: &Mesh, conditions: &[BoundaryCondition]) -> HashSet<(u32, u32)> {
    let mut names: Vec<&str> = Vec::new();
    for bc in conditions {
        match bc {
            BoundaryCondition::FixedPotential { curve, .. }
            | BoundaryCondition::FloatingPotential { curve } => names.push(curve),
            BoundaryCondition::Periodic { first, second }
            | BoundaryCondition::AntiPeriodic { first, second } => names.extend([&**first, second]),
            BoundaryCondition::Open(o) => names.extend([&*o.circle, &o.exterior_boundary]),
        }
    }
    let mut edges = HashSet::new();
    for curve in mesh.curves() {
        if curve.name.as_deref().is_some_and(|n| names.contains(&n)) {
            for w in curve.nodes.windows(2) {
                edges.insert((w[0].0.min(w[1].0), w[0].0.max(w[1].0)));
            }
        }
    }
    edges
}

/// Checks that an open boundary's curve `name` (a circle, or arcs of one, about `centre`)
/// covers the whole rim it lies on: every boundary edge of the mesh (an edge of exactly one
/// triangle) whose two nodes lie on that circle must carry a boundary condition, the open
/// boundary's own or another one (a symmetry line's fixed potential may end on the rim).
///
/// The radius is the largest distance of the curve's nodes from `centre`; a node is on the
/// circle within 1e-6 of the radius.
fn check_full_rim(
    mesh: &Mesh,
    name: &str,
    centre: [f64; 2],
    conditioned: &HashSet<(u32, u32)>,
) -> Result<(), FemError> {
    let dist = |v: u32| {
        let p = mesh.vertices()[v as usize];
        (p.x - centre[0]).hypot(p.y - centre[1])
    };
    let radius = mesh
        .curves_named(name)
        .iter()
        .flat_map(|&c| mesh.curve_nodes(c))
        .map(|v| dist(v.0))
        .fold(0.0_f64, f64::max);
    if !(radius > 0.0 && radius.is_finite()) {
        return Ok(());
    }
    let on_rim = |v: u32| (dist(v) - radius).abs() <= 1e-6 * radius;
    let mut count: HashMap<(u32, u32), u32> = HashMap::with_capacity(3 * mesh.triangles().len());
    for tri in mesh.triangles() {
        for k in 0..3 {
            let (a, b) = (tri[k].0, tri[(k + 1) % 3].0);
            *count.entry((a.min(b), a.max(b))).or_insert(0) += 1;
        }
    }
    let length = |(a, b): (u32, u32)| {
        let (p, q) = (mesh.vertices()[a as usize], mesh.vertices()[b as usize]);
        (q.x - p.x).hypot(q.y - p.y)
    };
    let mut rim: Vec<(u32, u32)> = count
        .into_iter()
        .filter(|&((a, b), n)| n == 1 && on_rim(a) && on_rim(b))
        .map(|(e, _)| e)
        .collect();
    // A fixed order, so the error names the same edge on every run.
    rim.sort_unstable();
    let Some(&first) = rim.iter().find(|e| !conditioned.contains(e)) else {
        return Ok(());
    };
    let total: f64 = rim.iter().map(|&e| length(e)).sum();
    let covered: f64 = rim
        .iter()
        .filter(|e| conditioned.contains(e))
        .map(|&e| length(e))
        .sum();
    let (p, q) = (
        mesh.vertices()[first.0 as usize],
        mesh.vertices()[first.1 as usize],
    );
    Err(FemError::PartialOpenBoundary {
        curve: name.to_string(),
        radius,
        centre_x: centre[0],
        centre_y: centre[1],
        covered_percent: 100.0 * covered / total,
        x0: p.x,
        y0: p.y,
        x1: q.x,
        y1: q.y,
    })
}

/// Checks that the matched nodes of an open-boundary pair are translates of each other, and
/// returns the translation (m) from `first` to `second`.
fn check_translated(
    mesh: &Mesh,
    first: &str,
    second: &str,
    pairs: &[(CurveId, CurveId)],
) -> Result<(f64, f64), FemError> {
    let extent = mesh_extent(mesh);
    let mut shift: Option<(f64, f64)> = None;
    for (a, b) in pairs {
        for (va, vb) in mesh.curve_nodes(*a).iter().zip(mesh.curve_nodes(*b)) {
            let (pa, pb) = (mesh.vertex(*va), mesh.vertex(*vb));
            let d = (pb.x - pa.x, pb.y - pa.y);
            match shift {
                None => shift = Some(d),
                Some(s) => {
                    if (s.0 - d.0).hypot(s.1 - d.1) > 1e-6 * extent {
                        return Err(FemError::UnmatchedCurvePair {
                            first: first.to_string(),
                            second: second.to_string(),
                            reason: format!(
                                "node ({} m, {} m) is not matched by a translate of the \
                                 exterior circle (its partner is at ({} m, {} m))",
                                pa.x, pa.y, pb.x, pb.y
                            ),
                        });
                    }
                }
            }
        }
    }
    Ok(shift.unwrap_or((0.0, 0.0)))
}

/// The image of the unbounded exterior in an axisymmetric model: the centre of the exterior
/// half-disc (on the axis, m) and its radius squared (m^2).
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct KelvinImage {
    centre: [f64; 2],
    radius_sq: f64,
}

/// Validates an axisymmetric open boundary and returns its image data.
///
/// # The axisymmetric Kelvin transformation
///
/// In air, with the flux function psi = r A_phi, the field equation is
/// div((1/r) grad psi) = 0 in the meridian half-plane (r, z), the Euler-Lagrange equation of
/// the energy pi nu_0 int (1/r) |grad psi|^2 dr dz. In two dimensions the Dirichlet integral
/// int |grad u|^2 dA is unchanged by a conformal map, provided any weight multiplying the
/// integrand is carried along as a function of the original point. Take the inversion about
/// the point (0, z0) of the axis with radius R: at the same polar angle, distance rho from
/// (0, z0) becomes rho' = R^2 / rho. It is conformal in the meridian plane, maps the axis
/// onto itself, the exterior of the half-disc of radius R onto the interior of a half-disc of
/// radius R (translated along z in the mesh), and infinity onto its centre. A point's radius
/// is r = R^2 r' / rho'^2, so the weight 1/r becomes rho'^2 / (R^2 r'). Writing the image
/// unknown as A' = psi / r' turns the weight back into an ordinary axisymmetric one:
/// pi nu_0 int (rho'^2 / R^2) |grad psi|^2 / r' dr' dz' is the energy of an axisymmetric air
/// region whose reluctivity is nu_eff = nu_0 rho'^2 / R^2. So the exterior disc is solved as
/// an ordinary region with that reluctivity, and its stored energy is that of the whole
/// unbounded exterior. On the rim rho' = R, r' = r, so A' = A at matched nodes (the same node
/// identification as the planar case); psi -> 0 at infinity fixes A' = 0 at the image centre,
/// which lies on the axis where A = 0 anyway.
///
/// References: E. M. Freeman and D. A. Lowther, "A novel mapping technique for open boundary
/// finite element solutions to Poisson's equation", IEEE Trans. Magn. 25(5), 1989 (Kelvin
/// transformation, planar and axisymmetric); conformal invariance of the two-dimensional
/// Dirichlet integral (e.g. any complex-analysis text on conformal mapping).
fn axisymmetric_kelvin(
    mesh: &Mesh,
    o: &OpenBoundary,
    pairs: &[(CurveId, CurveId)],
    shift: (f64, f64),
) -> Result<KelvinImage, FemError> {
    let tol = 1e-9 * mesh_extent(mesh);
    let c = o.exterior_centre;
    let off_axis = |what: String, value: f64| FemError::OutOfRange {
        what,
        value,
        reason: "an axisymmetric open boundary needs half-discs centred on the axis r = 0".into(),
    };
    if c[0].abs() > tol {
        return Err(off_axis(
            format!(
                "radius of the centre ({} m, {} m) of exterior region `{}` (curve `{}`)",
                c[0], c[1], o.exterior_region, o.exterior_boundary
            ),
            c[0],
        ));
    }
    // The interior circle's centre is the exterior centre moved back by the translation.
    let interior = [c[0] - shift.0, c[1] - shift.1];
    if interior[0].abs() > 1e-6 * mesh_extent(mesh) {
        return Err(off_axis(
            format!(
                "radius of the centre ({} m, {} m) of the open boundary circle `{}`",
                interior[0], interior[1], o.circle
            ),
            interior[0],
        ));
    }
    // The radius: every exterior rim node at the same distance from the centre.
    let dist = |p: coercive_mesh::Point2| (p.x - c[0]).hypot(p.y - c[1]);
    let mut radius = 0.0_f64;
    for (_, b) in pairs {
        for v in mesh.curve_nodes(*b) {
            radius = radius.max(dist(mesh.vertex(*v)));
        }
    }
    for (_, b) in pairs {
        for v in mesh.curve_nodes(*b) {
            let p = mesh.vertex(*v);
            if (dist(p) - radius).abs() > 1e-6 * radius {
                return Err(FemError::OutOfRange {
                    what: format!(
                        "distance of node ({} m, {} m) of curve `{}` from the exterior centre (m)",
                        p.x, p.y, o.exterior_boundary
                    ),
                    value: dist(p),
                    reason: format!(
                        "the exterior boundary must be a circle (arc) of radius {radius} m \
                         about the exterior centre"
                    ),
                });
            }
        }
    }
    // The exterior region must lie inside that circle.
    let region =
        mesh.region_by_name(&o.exterior_region)
            .ok_or_else(|| FemError::UnknownRegion {
                what: "open boundary exterior".into(),
                region: o.exterior_region.clone(),
            })?;
    for (t, tri) in mesh.triangles().iter().enumerate() {
        if mesh.triangle_regions()[t] != region {
            continue;
        }
        for v in tri {
            let p = mesh.vertex(*v);
            if dist(p) > radius * (1.0 + 1e-6) {
                return Err(FemError::OutOfRange {
                    what: format!(
                        "distance of node ({} m, {} m) of exterior region `{}` from its centre (m)",
                        p.x, p.y, o.exterior_region
                    ),
                    value: dist(p),
                    reason: format!(
                        "the exterior region must be the half-disc of radius {radius} m bounded \
                         by curve `{}`",
                        o.exterior_boundary
                    ),
                });
            }
        }
    }
    Ok(KelvinImage {
        centre: c,
        radius_sq: radius * radius,
    })
}

/// The mesh node at the centre of an open boundary's exterior disc.
pub(crate) fn centre_node(mesh: &Mesh, o: &OpenBoundary) -> Result<usize, FemError> {
    let c = Point2::new(o.exterior_centre[0], o.exterior_centre[1]);
    let (i, d) = mesh
        .vertices()
        .iter()
        .enumerate()
        .map(|(i, p)| (i, p.distance(c)))
        .fold((usize::MAX, f64::INFINITY), |best, x| {
            if x.1 < best.1 {
                x
            } else {
                best
            }
        });
    if d > 1e-9 * mesh_extent(mesh) {
        return Err(FemError::OutOfRange {
            what: format!(
                "open boundary exterior centre ({} m, {} m) (nearest mesh node at {d} m)",
                c.x, c.y
            ),
            value: d,
            reason: "a mesh node must sit at the centre of the exterior disc".into(),
        });
    }
    Ok(i)
}

/// The error of a `try_` accessor given a region id the mesh does not hold.
fn region_out_of_range(r: RegionId, count: usize) -> FemError {
    FemError::OutOfRange {
        what: "region id".into(),
        value: r.index() as f64,
        reason: format!(
            "the mesh has {count} regions (ids 0 to {})",
            count.max(1) - 1
        ),
    }
}
