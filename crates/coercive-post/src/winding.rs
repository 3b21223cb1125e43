//! Windings: flux linkage, apparent and incremental inductance, the inductance matrix.
//!
//! # Flux linkage
//! Each side of a winding is a region holding all N turns, with the current spread uniformly
//! over its cross-section S (a stranded coil; the solver uses J = N i / S). The flux linkage
//! is the turn-weighted mean of the potential over each side:
//! - planar: psi' = sum over sides of sense * (N / S) * integral over the side of A_z dA
//!   (Wb per metre of depth); the total for the stack is psi = depth * psi' (Wb);
//! - axisymmetric: psi = sum over sides of sense * (N / S) * integral of 2 pi r A_phi dA (Wb),
//!   since 2 pi r A_phi is the flux through the circle of radius r.
//!
//! A winding of `a` parallel paths (each holding 1/a of the sides' conductors in series,
//! each conductor carrying i / a of the terminal current i) links psi / a at its terminals;
//! the end windings outside a planar cross-section add L_end i (the winding's stated
//! end-turn inductance). Both are part of `total_wb`; the per-metre value is the
//! cross-section's alone.
//!
//! The integrals are exact for the element's polynomial potential (quadrature of degree p
//! planar, p + 1 axisymmetric). Co-energy and energy then satisfy W = psi i / 2 for linear
//! devices without magnets (e.g. Hammond, Electromagnetism for Engineers, 4th ed., ch. 6).
//!
//! # Inductances
//! - Apparent inductance psi / i: the secant, including any magnet flux linked.
//! - Incremental (differential) inductances L_jk = d psi_j / d i_k by a central difference:
//!   two extra solves with i_k replaced by i_k + h and i_k - h, h = max(relative step x |i_k|,
//!   absolute step), all other sources unchanged, each warm-started from the given solution
//!   with the caller's [`Solver`] (its symbolic factorisation is reused). The truncation
//!   error is O(h^2) (zero for linear devices, where L_jk is the mutual inductance M_jk);
//!   the Newton tolerance of the extra solves bounds the rounding part. The matrix of a
//!   magnetostatic device is symmetric (reciprocity; the tangent nu I + 2 nu' B B^T is
//!   symmetric); [`InductanceMatrix::asymmetry`] reports how far the computed one is from it.

use coercive_fem::element::shape_values;
use coercive_fem::quadrature::TriangleRule;
use coercive_fem::{ElementOrder, FemError, Formulation, Model, NewtonSettings, Solution, Solver};
use coercive_mesh::TriangleId;
use serde::{Deserialize, Serialize};

use crate::integrate::{region_sums, triangle, volume_weight};
use crate::table::{csv_line, Tabular};
use crate::PostError;

/// The flux linkage of one winding.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct FluxLinkage {
    /// The winding.
    pub winding: String,
    /// Its number of turns.
    pub turns: f64,
    /// Its current (A).
    pub current_a: f64,
    /// Number of parallel paths of the winding.
    pub parallel_paths: u32,
    /// Planar models: flux linkage of the modelled cross-section per metre of depth (Wb/m),
    /// end windings excluded; `None` for axisymmetric ones.
    pub per_metre_wb_per_m: Option<f64>,
    /// Flux linkage of the end windings (Wb): the winding's end-turn inductance times its
    /// current (zero unless the winding states one).
    pub end_winding_wb: f64,
    /// Flux linkage of the device at the terminals (Wb): per metre times the depth (planar)
    /// or as computed (axisymmetric), plus `end_winding_wb`.
    pub total_wb: f64,
}

/// An inductance, per metre of depth (planar) and for the device.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct Inductance {
    /// Planar models: inductance per metre of depth (H/m); `None` for axisymmetric ones.
    pub per_metre_h_per_m: Option<f64>,
    /// Inductance of the device (H).
    pub total_h: f64,
}

/// The integral over each region of A times the volume weight (planar: A_z dA, Wb m;
/// axisymmetric: 2 pi r A_phi dA, Wb m^2), exact for the element polynomial.
pub fn region_potential_integrals(solution: &Solution) -> Vec<f64> {
    let model = solution.model();
    let mesh = model.mesh();
    let formulation = model.formulation();
    let order = solution.order();
    let degree = match (order, formulation) {
        (ElementOrder::P1, Formulation::Planar { .. }) => 1,
        (ElementOrder::P2, Formulation::Planar { .. }) | (ElementOrder::P1, _) => 2,
        (ElementOrder::P2, _) => 3,
    };
    let rule = TriangleRule::of_degree(degree);
    let potential = solution.potential();
    region_sums::<1>(mesh, false, |t| {
        let tri = triangle(mesh, t);
        let nodes = solution.triangle_nodes(TriangleId(t as u32));
        let mut sum = 0.0;
        for (l, w) in rule.points.iter().zip(rule.weights) {
            let v = shape_values(order, *l);
            let a: f64 = nodes
                .iter()
                .zip(v)
                .map(|(&n, vi)| potential[n as usize] * vi)
                .sum();
            sum += w * a * volume_weight(formulation, tri.point(*l));
        }
        [sum * tri.area]
    })
    .into_iter()
    .map(|v| v[0])
    .collect()
}

fn winding_index(model: &Model, winding: &str) -> Result<usize, PostError> {
    model
        .windings()
        .iter()
        .position(|w| w.name == winding)
        .ok_or_else(|| PostError::UnknownWinding {
            winding: winding.into(),
            known: model.windings().iter().map(|w| w.name.clone()).collect(),
        })
}

/// Flux linkage of winding `k` of the solution's model from precomputed region integrals.
fn linkage_from(
    solution: &Solution,
    integrals: &[f64],
    k: usize,
) -> Result<FluxLinkage, PostError> {
    let model = solution.model();
    let mesh = model.mesh();
    let w = &model.windings()[k];
    if w.turns == 0.0 || !w.turns.is_finite() {
        return Err(PostError::ZeroTurns {
            winding: w.name.clone(),
            turns: w.turns,
        });
    }
    let mut psi = 0.0;
    for side in &w.sides {
        let r = mesh
            .region_by_name(&side.region)
            .ok_or_else(|| PostError::UnknownRegion {
                what: format!("winding `{}` side", w.name),
                region: side.region.clone(),
            })?;
        let area = model.region_areas()[r.index()];
        if area <= 0.0 {
            return Err(PostError::EmptyRegion {
                what: format!("winding `{}` side", w.name),
                region: side.region.clone(),
            });
        }
        psi += side.sense.sign() * w.turns / area * integrals[r.index()];
    }
    // Each of the `a` parallel paths holds 1/a of the sides' conductors in series.
    let psi = psi / f64::from(w.parallel_paths.max(1));
    let end_winding_wb = w.end_turn_inductance_h * w.current_a;
    let (per_metre_wb_per_m, cross_section_wb) = match solution.depth_m() {
        Some(depth) => (Some(psi), psi * depth),
        None => (None, psi),
    };
    Ok(FluxLinkage {
        winding: w.name.clone(),
        turns: w.turns,
        current_a: w.current_a,
        parallel_paths: w.parallel_paths.max(1),
        per_metre_wb_per_m,
        end_winding_wb,
        total_wb: cross_section_wb + end_winding_wb,
    })
}

/// The flux linkage of the winding named `winding`.
///
/// # Errors
/// [`PostError::UnknownWinding`], [`PostError::ZeroTurns`], [`PostError::EmptyRegion`].
pub fn flux_linkage(solution: &Solution, winding: &str) -> Result<FluxLinkage, PostError> {
    let k = winding_index(solution.model(), winding)?;
    linkage_from(solution, &region_potential_integrals(solution), k)
}

/// The flux linkage of every winding, with its apparent inductance psi / i where the current
/// is not zero.
///
/// # Errors
/// [`PostError::ZeroTurns`], [`PostError::EmptyRegion`].
pub fn flux_linkages(solution: &Solution) -> Result<FluxLinkageTable, PostError> {
    let integrals = region_potential_integrals(solution);
    let rows = (0..solution.model().windings().len())
        .map(|k| {
            let psi = linkage_from(solution, &integrals, k)?;
            let apparent = (psi.current_a != 0.0).then(|| Inductance {
                per_metre_h_per_m: psi.per_metre_wb_per_m.map(|p| p / psi.current_a),
                total_h: psi.total_wb / psi.current_a,
            });
            Ok(FluxLinkageRow {
                linkage: psi,
                apparent_inductance: apparent,
            })
        })
        .collect::<Result<_, PostError>>()?;
    Ok(FluxLinkageTable {
        depth_m: solution.depth_m(),
        rows,
    })
}

/// The apparent inductance psi / i of the winding named `winding` (the secant; includes
/// flux from magnets and other windings).
///
/// # Errors
/// [`PostError::ZeroCurrent`] at zero current, and as [`flux_linkage`].
pub fn apparent_inductance(solution: &Solution, winding: &str) -> Result<Inductance, PostError> {
    let psi = flux_linkage(solution, winding)?;
    if psi.current_a == 0.0 {
        return Err(PostError::ZeroCurrent {
            winding: winding.into(),
            what: "apparent inductance psi / i".into(),
        });
    }
    Ok(Inductance {
        per_metre_h_per_m: psi.per_metre_wb_per_m.map(|p| p / psi.current_a),
        total_h: psi.total_wb / psi.current_a,
    })
}

/// One row of a [`FluxLinkageTable`].
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct FluxLinkageRow {
    /// The flux linkage.
    pub linkage: FluxLinkage,
    /// psi / i, or `None` at zero current.
    pub apparent_inductance: Option<Inductance>,
}

/// Flux linkage and apparent inductance of every winding.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct FluxLinkageTable {
    /// The planar depth (m); `None` for axisymmetric models.
    pub depth_m: Option<f64>,
    /// One row per winding, in the model's order.
    pub rows: Vec<FluxLinkageRow>,
}

impl Tabular for FluxLinkageTable {
    fn header(&self) -> Vec<String> {
        [
            "winding",
            "turns (1)",
            "current (A)",
            "flux linkage per metre (Wb/m)",
            "flux linkage (Wb)",
            "apparent inductance per metre (H/m)",
            "apparent inductance (H)",
        ]
        .iter()
        .map(|s| s.to_string())
        .collect()
    }
    fn csv_rows(&self) -> Vec<String> {
        self.rows
            .iter()
            .map(|r| {
                let l = &r.linkage;
                csv_line(
                    std::slice::from_ref(&l.winding),
                    &[
                        l.turns,
                        l.current_a,
                        l.per_metre_wb_per_m.unwrap_or(f64::NAN),
                        l.total_wb,
                        r.apparent_inductance
                            .and_then(|i| i.per_metre_h_per_m)
                            .unwrap_or(f64::NAN),
                        r.apparent_inductance.map_or(f64::NAN, |i| i.total_h),
                    ],
                    0,
                )
            })
            .collect()
    }
}

/// How incremental inductances are differenced.
#[derive(Clone, Debug, PartialEq)]
pub struct DifferenceSettings {
    /// Current step relative to the winding's current (dimensionless, default 1e-3).
    pub relative_step: f64,
    /// Smallest current step (A, default 1e-3), used at small or zero current.
    pub absolute_step_a: f64,
    /// Newton settings of the extra solves (default: the solver's defaults with residual and
    /// update tolerances tightened to 1e-10, so that rounding in the difference stays far
    /// below the O(h^2) truncation).
    pub newton: NewtonSettings,
}

impl Default for DifferenceSettings {
    fn default() -> Self {
        DifferenceSettings {
            relative_step: 1e-3,
            absolute_step_a: 1e-3,
            newton: NewtonSettings {
                residual_tolerance: 1e-10,
                update_tolerance: 1e-10,
                ..NewtonSettings::default()
            },
        }
    }
}

/// The matrix of incremental inductances d psi_j / d i_k between all windings.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct InductanceMatrix {
    /// Winding names, indexing rows and columns.
    pub windings: Vec<String>,
    /// The current step used for each winding (A).
    pub steps_a: Vec<f64>,
    /// Planar models: `[j][k]` = d psi'_j / d i_k per metre of depth (H/m); `None` for
    /// axisymmetric ones.
    pub per_metre_h_per_m: Option<Vec<Vec<f64>>>,
    /// `[j][k]` = d psi_j / d i_k for the device (H).
    pub total_h: Vec<Vec<f64>>,
    /// How it was computed.
    pub method: String,
}

impl InductanceMatrix {
    /// Largest |L_jk - L_kj| / sqrt(L_jj L_kk) over pairs (dimensionless; 0 for a single
    /// winding). Reciprocity makes the exact matrix symmetric.
    pub fn asymmetry(&self) -> f64 {
        let l = &self.total_h;
        let mut worst: f64 = 0.0;
        for j in 0..l.len() {
            for k in j + 1..l.len() {
                let scale = (l[j][j] * l[k][k]).abs().sqrt();
                if scale > 0.0 {
                    worst = worst.max((l[j][k] - l[k][j]).abs() / scale);
                }
            }
        }
        worst
    }

    /// The element for windings `row` and `column` by name.
    ///
    /// # Errors
    /// [`PostError::UnknownWinding`].
    pub fn get(&self, row: &str, column: &str) -> Result<Inductance, PostError> {
        let find = |name: &str| {
            self.windings
                .iter()
                .position(|w| w == name)
                .ok_or_else(|| PostError::UnknownWinding {
                    winding: name.into(),
                    known: self.windings.clone(),
                })
        };
        let (j, k) = (find(row)?, find(column)?);
        Ok(Inductance {
            per_metre_h_per_m: self.per_metre_h_per_m.as_ref().map(|m| m[j][k]),
            total_h: self.total_h[j][k],
        })
    }
}

impl Tabular for InductanceMatrix {
    fn header(&self) -> Vec<String> {
        let mut h = vec!["winding j".to_string(), "winding k".to_string()];
        h.push("step of i_k (A)".into());
        h.push("d psi_j / d i_k per metre (H/m)".into());
        h.push("d psi_j / d i_k (H)".into());
        h
    }
    fn csv_rows(&self) -> Vec<String> {
        let mut out = Vec::new();
        for (j, wj) in self.windings.iter().enumerate() {
            for (k, wk) in self.windings.iter().enumerate() {
                out.push(csv_line(
                    &[wj.clone(), wk.clone()],
                    &[
                        self.steps_a[k],
                        self.per_metre_h_per_m
                            .as_ref()
                            .map_or(f64::NAN, |m| m[j][k]),
                        self.total_h[j][k],
                    ],
                    0,
                ));
            }
        }
        out
    }
}

/// The flux linkages (device totals, Wb) of all windings with winding `k`'s current set to
/// `current`.
fn perturbed_linkages(
    solution: &Solution,
    solver: &Solver,
    k: usize,
    current: f64,
    settings: &DifferenceSettings,
) -> Result<Vec<f64>, PostError> {
    let model = solution.model();
    let name = &model.windings()[k].name;
    let what = format!("incremental inductance: solve with winding `{name}` at {current} A");
    let wrap = |source: FemError| PostError::Solve {
        what: what.clone(),
        source,
    };
    let perturbed = model
        .to_builder()
        .winding_current(name, current)
        .build()
        .map_err(wrap)?;
    let s = solver
        .solve_from(&perturbed, solution, &settings.newton)
        .map_err(wrap)?;
    let integrals = region_potential_integrals(&s);
    (0..model.windings().len())
        .map(|j| linkage_from(&s, &integrals, j).map(|l| l.total_wb))
        .collect()
}

/// The incremental inductance matrix d psi_j / d i_k of every pair of windings at the
/// operating point of `solution`, by central differences (2 extra solves per winding; see
/// the module documentation). `solver` must have been built for the solution's model
/// (`Solver::new(solution.model())`); pass `None` to build one here.
///
/// # Errors
/// [`PostError::InvalidArgument`] for a non-positive or non-finite step,
/// [`PostError::Solve`] if an extra solve fails, and as [`flux_linkage`].
pub fn incremental_inductances(
    solution: &Solution,
    solver: Option<&Solver>,
    settings: &DifferenceSettings,
) -> Result<InductanceMatrix, PostError> {
    for (what, v) in [
        ("relative current step", settings.relative_step),
        ("absolute current step (A)", settings.absolute_step_a),
    ] {
        if !(v.is_finite() && v > 0.0) {
            return Err(PostError::InvalidArgument {
                what: what.into(),
                value: v,
                reason: "must be positive and finite".into(),
            });
        }
    }
    let model = solution.model();
    let owned;
    let solver = match solver {
        Some(s) => s,
        None => {
            owned = Solver::new(model).map_err(|source| PostError::Solve {
                what: "incremental inductance: solver set-up".into(),
                source,
            })?;
            &owned
        }
    };
    // Validate the windings (turns, sides) before solving anything.
    flux_linkages(solution)?;
    let n = model.windings().len();
    let mut total = vec![vec![0.0; n]; n];
    let mut steps = Vec::with_capacity(n);
    for k in 0..n {
        let i = model.windings()[k].current_a;
        let h = (settings.relative_step * i.abs()).max(settings.absolute_step_a);
        let plus = perturbed_linkages(solution, solver, k, i + h, settings)?;
        let minus = perturbed_linkages(solution, solver, k, i - h, settings)?;
        for (row, (p, m)) in total.iter_mut().zip(plus.iter().zip(&minus)) {
            row[k] = (p - m) / (2.0 * h);
        }
        steps.push(h);
    }
    let per_metre = solution.depth_m().map(|d| {
        total
            .iter()
            .map(|row| row.iter().map(|v| v / d).collect())
            .collect()
    });
    Ok(InductanceMatrix {
        windings: model.windings().iter().map(|w| w.name.clone()).collect(),
        steps_a: steps,
        per_metre_h_per_m: per_metre,
        total_h: total,
        method: format!(
            "central difference of flux linkage, step max({} x |i|, {} A), two warm-started \
             solves per winding sharing the symbolic factorisation",
            settings.relative_step, settings.absolute_step_a
        ),
    })
}

/// The incremental self-inductance d psi / d i of one winding (2 extra solves; see
/// [`incremental_inductances`]).
///
/// # Errors
/// As [`incremental_inductances`], and [`PostError::UnknownWinding`].
pub fn incremental_inductance(
    solution: &Solution,
    solver: Option<&Solver>,
    winding: &str,
    settings: &DifferenceSettings,
) -> Result<Inductance, PostError> {
    let model = solution.model();
    let k = winding_index(model, winding)?;
    if !(settings.relative_step.is_finite() && settings.relative_step > 0.0) {
        return Err(PostError::InvalidArgument {
            what: "relative current step".into(),
            value: settings.relative_step,
            reason: "must be positive and finite".into(),
        });
    }
    if !(settings.absolute_step_a.is_finite() && settings.absolute_step_a > 0.0) {
        return Err(PostError::InvalidArgument {
            what: "absolute current step (A)".into(),
            value: settings.absolute_step_a,
            reason: "must be positive and finite".into(),
        });
    }
    flux_linkage(solution, winding)?;
    let owned;
    let solver = match solver {
        Some(s) => s,
        None => {
            owned = Solver::new(model).map_err(|source| PostError::Solve {
                what: "incremental inductance: solver set-up".into(),
                source,
            })?;
            &owned
        }
    };
    let i = model.windings()[k].current_a;
    let h = (settings.relative_step * i.abs()).max(settings.absolute_step_a);
    let plus = perturbed_linkages(solution, solver, k, i + h, settings)?[k];
    let minus = perturbed_linkages(solution, solver, k, i - h, settings)?[k];
    let total = (plus - minus) / (2.0 * h);
    Ok(Inductance {
        per_metre_h_per_m: solution.depth_m().map(|d| total / d),
        total_h: total,
    })
}
