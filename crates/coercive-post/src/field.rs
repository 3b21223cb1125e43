//! Field queries on a [`Solution`]: A, B, H and |B| at points and along paths, averages over
//! regions, and the working point of each magnet.
//!
//! Units: coordinates in metres (x = r, y = z in axisymmetric models); the potential A_z
//! (planar) or A_phi (axisymmetric) in Wb/m; B in T; H in A/m.
//!
//! H at a point is the material law of the point's region applied to the interpolated B
//! (`Material::response`, with each magnet's easy axis at that point). Region averages and
//! working points use the B and H the solver stored at its quadrature points.

use std::sync::Arc;

use coercive_fem::{Material, Solution, MU_0};
use coercive_mesh::{RegionId, TriangleId};
use rayon::prelude::*;
use serde::{Deserialize, Serialize};

use crate::integrate::{region_sums, triangle, volume_weight};
use crate::locate::{Location, PointLocator};
use crate::table::{csv_line, Tabular};
use crate::PostError;

/// The field at one point.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct PointField {
    /// The point (m).
    pub point: [f64; 2],
    /// The triangle it was evaluated in.
    pub triangle: u32,
    /// The region of that triangle.
    pub region: u32,
    /// Vector potential: A_z planar, A_phi axisymmetric (Wb/m).
    pub potential: f64,
    /// Flux function whose contours are flux lines: A_z (Wb/m) planar, r A_phi (Wb/rad)
    /// axisymmetric.
    pub flux_function: f64,
    /// Flux density B (T): (Bx, By) planar, (Br, Bz) axisymmetric.
    pub flux_density: [f64; 2],
    /// |B| (T).
    pub flux_density_norm: f64,
    /// Field strength H (A/m), components as for B.
    pub field_strength: [f64; 2],
    /// |H| (A/m).
    pub field_strength_norm: f64,
}

/// Field queries on one solution, with a point locator built once.
#[derive(Clone, Debug)]
pub struct FieldProbe<'a> {
    solution: &'a Solution,
    locator: Arc<PointLocator>,
}

fn easy_axis(solution: &Solution, region: RegionId, point: [f64; 2]) -> [f64; 2] {
    match solution.model().material(region).magnet_direction() {
        Some(d) => d.easy_axis_at(point, solution.model().region_centroids()[region.index()]),
        None => [1.0, 0.0],
    }
}

/// Remanence (T) and the field where B vanishes on the recoil line or major loop (A/m) of a
/// magnet material.
fn magnet_nominals(material: &Material) -> Option<(f64, f64)> {
    match material {
        Material::Magnet(m) => Some((m.remanence, m.model_coercivity())),
        Material::Hysteretic(m) => {
            let saturated = coercive_fem::History::saturated(true);
            let br = m.law.flux_density(&saturated, 0.0).0;
            // HcB: B = 0 on the descending branch, by bisection (B increases with H).
            let (mut lo, mut hi) = (-br / MU_0 - 1.0, 0.0);
            for _ in 0..200 {
                let mid = 0.5 * (lo + hi);
                if m.law.flux_density(&saturated, mid).0 > 0.0 {
                    hi = mid;
                } else {
                    lo = mid;
                }
            }
            Some((br, -0.5 * (lo + hi)))
        }
        _ => None,
    }
}

fn fem_to_outside(point: [f64; 2]) -> PostError {
    PostError::PointOutsideMesh {
        x: point[0],
        y: point[1],
    }
}

impl<'a> FieldProbe<'a> {
    /// A probe on `solution`, building a [`PointLocator`] for its mesh (O(n log n)).
    pub fn new(solution: &'a Solution) -> FieldProbe<'a> {
        FieldProbe {
            solution,
            locator: Arc::new(PointLocator::new(solution.model().mesh().clone())),
        }
    }

    /// A probe reusing a locator built for the same mesh (e.g. every solution of a current
    /// sweep on one mesh).
    ///
    /// # Errors
    /// [`PostError::LocatorMeshMismatch`] if the locator was built for another mesh.
    pub fn with_locator(
        solution: &'a Solution,
        locator: Arc<PointLocator>,
    ) -> Result<FieldProbe<'a>, PostError> {
        let mesh = solution.model().mesh();
        if !Arc::ptr_eq(mesh, locator.mesh()) && **mesh != **locator.mesh() {
            return Err(PostError::LocatorMeshMismatch {
                locator_triangles: locator.mesh().triangles().len(),
                mesh_triangles: mesh.triangles().len(),
            });
        }
        Ok(FieldProbe { solution, locator })
    }

    /// The solution queried.
    pub fn solution(&self) -> &'a Solution {
        self.solution
    }

    /// The point locator (share it with [`FieldProbe::with_locator`]).
    pub fn locator(&self) -> &Arc<PointLocator> {
        &self.locator
    }

    /// The triangle holding `point` (m) and its barycentric coordinates there.
    ///
    /// # Errors
    /// [`PostError::PointOutsideMesh`].
    pub fn locate(&self, point: [f64; 2]) -> Result<Location, PostError> {
        self.locator.locate(point)
    }

    /// Every field quantity at `point` (m).
    ///
    /// # Errors
    /// [`PostError::PointOutsideMesh`] naming the point.
    pub fn at(&self, point: [f64; 2]) -> Result<PointField, PostError> {
        let loc = self.locator.locate(point)?;
        Ok(self.at_location(point, loc))
    }

    /// Every field quantity at `point`, which lies in `location` (see
    /// [`PointLocator::locate_all`] to choose a side of a region interface).
    pub fn at_location(&self, point: [f64; 2], location: Location) -> PointField {
        let s = self.solution;
        let t = location.triangle;
        // The locator's tolerance is tighter than the solution's, so these cannot fail;
        // fall back to NaN rather than panic if they ever did.
        let potential = s.potential_at(t, point).unwrap_or(f64::NAN);
        let flux_function = s.flux_function_at(t, point).unwrap_or(f64::NAN);
        let b = s.flux_density_at(t, point).unwrap_or([f64::NAN; 2]);
        let region = s.model().mesh().triangle_region(t);
        let h = s
            .model()
            .material(region)
            .response(b, easy_axis(s, region, point))
            .h;
        PointField {
            point,
            triangle: t.0,
            region: region.0,
            potential,
            flux_function,
            flux_density: b,
            flux_density_norm: b[0].hypot(b[1]),
            field_strength: h,
            field_strength_norm: h[0].hypot(h[1]),
        }
    }

    /// The vector potential at `point`: A_z (planar) or A_phi (axisymmetric), Wb/m.
    ///
    /// # Errors
    /// [`PostError::PointOutsideMesh`].
    pub fn potential(&self, point: [f64; 2]) -> Result<f64, PostError> {
        let loc = self.locator.locate(point)?;
        self.solution
            .potential_at(loc.triangle, point)
            .map_err(|_| fem_to_outside(point))
    }

    /// B (T) at `point` (m).
    ///
    /// # Errors
    /// [`PostError::PointOutsideMesh`].
    pub fn flux_density(&self, point: [f64; 2]) -> Result<[f64; 2], PostError> {
        let loc = self.locator.locate(point)?;
        self.solution
            .flux_density_at(loc.triangle, point)
            .map_err(|_| fem_to_outside(point))
    }

    /// |B| (T) at `point` (m).
    ///
    /// # Errors
    /// [`PostError::PointOutsideMesh`].
    pub fn flux_density_norm(&self, point: [f64; 2]) -> Result<f64, PostError> {
        let b = self.flux_density(point)?;
        Ok(b[0].hypot(b[1]))
    }

    /// H (A/m) at `point` (m).
    ///
    /// # Errors
    /// [`PostError::PointOutsideMesh`].
    pub fn field_strength(&self, point: [f64; 2]) -> Result<[f64; 2], PostError> {
        Ok(self.at(point)?.field_strength)
    }

    /// The field at `point` evaluated in the region named `region`: on an interface (an edge
    /// or vertex shared with other regions) this picks that region's side, where B and H may
    /// differ from the other side's.
    ///
    /// # Errors
    /// [`PostError::UnknownRegion`]; [`PostError::PointOutsideMesh`] if the point is not in
    /// (or on the boundary of) a triangle of that region.
    pub fn at_in_region(&self, point: [f64; 2], region: &str) -> Result<PointField, PostError> {
        let id = self.region_id("field in a region", region)?;
        let mesh = self.solution.model().mesh();
        let best = self
            .locator
            .locate_all(point)
            .into_iter()
            .filter(|l| mesh.triangle_region(l.triangle) == id)
            .max_by(|a, b| {
                let m = |l: &Location| l.barycentric[0].min(l.barycentric[1]).min(l.barycentric[2]);
                m(a).total_cmp(&m(b))
                    .then(b.triangle.index().cmp(&a.triangle.index()))
            })
            .ok_or(PostError::PointOutsideMesh {
                x: point[0],
                y: point[1],
            })?;
        Ok(self.at_location(point, best))
    }

    /// The magnetic flux crossing the straight segment from `start` to `end` (m), counted
    /// positive towards the left of the direction of travel (the segment's direction turned
    /// by +90 degrees in the (x, y) or (r, z) plane), from the flux function alone (exact for
    /// the discrete field, whatever the path between the two points):
    /// - planar: A(start) - A(end) per metre of depth (Wb/m), times the depth in total (Wb);
    /// - axisymmetric: 2 pi (r A_phi(end) - r A_phi(start)), the flux through the surface the
    ///   segment sweeps around the axis (Wb).
    ///
    /// # Errors
    /// [`PostError::PointOutsideMesh`] naming the point outside.
    pub fn flux_between(&self, start: [f64; 2], end: [f64; 2]) -> Result<FluxCrossing, PostError> {
        let a = self.at(start)?.flux_function;
        let b = self.at(end)?.flux_function;
        Ok(match self.solution.depth_m() {
            Some(depth) => FluxCrossing {
                per_metre_wb_per_m: Some(a - b),
                total_wb: (a - b) * depth,
            },
            None => FluxCrossing {
                per_metre_wb_per_m: None,
                total_wb: 2.0 * std::f64::consts::PI * (b - a),
            },
        })
    }

    /// The field at each of `points` (in parallel, results in input order).
    ///
    /// # Errors
    /// [`PostError::PathOutsideMesh`] naming the first point (by index) outside the mesh.
    pub fn at_points(&self, points: &[[f64; 2]]) -> Result<Vec<PointField>, PostError> {
        let located: Vec<Option<Location>> = points
            .par_iter()
            .map(|&p| self.locator.try_locate(p))
            .collect();
        if let Some(i) = located.iter().position(Option::is_none) {
            return Err(PostError::PathOutsideMesh {
                index: i,
                x: points[i][0],
                y: points[i][1],
            });
        }
        Ok(points
            .par_iter()
            .zip(located.par_iter())
            .map(|(&p, l)| self.at_location(p, l.expect("checked above")))
            .collect())
    }

    /// Samples the polyline through `path` (m) at `samples` points equally spaced by arc
    /// length, both ends included.
    ///
    /// # Errors
    /// [`PostError::InvalidArgument`] for fewer than 2 path points or samples, a non-finite
    /// or zero-length path; [`PostError::PathOutsideMesh`] naming the first sample outside
    /// the mesh.
    pub fn sample_path(&self, path: &[[f64; 2]], samples: usize) -> Result<PathSamples, PostError> {
        let (points, distances) = polyline_samples(path, samples)?;
        let fields = self.at_points(&points)?;
        let length_m = *distances.last().unwrap_or(&0.0);
        Ok(PathSamples {
            samples: distances
                .into_iter()
                .zip(fields)
                .map(|(distance_m, field)| PathSample { distance_m, field })
                .collect(),
            length_m,
            region_names: self.region_names(),
        })
    }

    fn region_names(&self) -> Vec<String> {
        self.solution
            .model()
            .mesh()
            .regions()
            .iter()
            .map(|r| r.name.clone())
            .collect()
    }

    fn region_id(&self, what: &str, region: &str) -> Result<RegionId, PostError> {
        self.solution
            .model()
            .mesh()
            .region_by_name(region)
            .ok_or_else(|| PostError::UnknownRegion {
                what: what.into(),
                region: region.into(),
            })
    }

    /// Area- (planar) or volume- (axisymmetric, 2 pi r) weighted averages of B, |B| and H
    /// over every region, from the solver's quadrature points; with the peak |B|.
    pub fn region_averages(&self) -> RegionAverageTable {
        let s = self.solution;
        let mesh = s.model().mesh();
        let formulation = s.model().formulation();
        let rule = s.quadrature_rule();
        let sums = region_sums::<8>(mesh, true, |t| {
            let tri = triangle(mesh, t);
            let bq = s.flux_density_at_quadrature(TriangleId(t as u32));
            let hq = s.field_strength_at_quadrature(TriangleId(t as u32));
            let mut acc = [0.0; 8];
            acc[7] = f64::NEG_INFINITY;
            for q in 0..rule.len() {
                let p = tri.point(rule.points[q]);
                let w = tri.area * rule.weights[q] * volume_weight(formulation, p);
                let (b, h) = (bq[q], hq[q]);
                let bn = b[0].hypot(b[1]);
                acc[0] += tri.area * rule.weights[q];
                acc[1] += w;
                acc[2] += w * b[0];
                acc[3] += w * b[1];
                acc[4] += w * bn;
                acc[5] += w * h[0];
                acc[6] += w * h[1];
                acc[7] = acc[7].max(bn);
            }
            acc
        });
        let depth = s.depth_m();
        let rows = mesh
            .regions()
            .iter()
            .zip(sums)
            .map(|(r, v)| {
                let wv = if v[1] > 0.0 { v[1] } else { f64::NAN };
                RegionAverage {
                    region: r.name.clone(),
                    area_m2: v[0],
                    volume_m3: v[1] * depth.unwrap_or(1.0),
                    mean_flux_density: [v[2] / wv, v[3] / wv],
                    mean_flux_density_norm: v[4] / wv,
                    mean_field_strength: [v[5] / wv, v[6] / wv],
                    peak_flux_density_norm: v[7].max(0.0),
                }
            })
            .collect();
        RegionAverageTable { rows }
    }

    /// The averages of one region (see [`FieldProbe::region_averages`]).
    ///
    /// # Errors
    /// [`PostError::UnknownRegion`], [`PostError::EmptyRegion`].
    pub fn region_average(&self, region: &str) -> Result<RegionAverage, PostError> {
        let id = self.region_id("region average", region)?;
        let row = self.region_averages().rows.swap_remove(id.index());
        if row.area_m2 <= 0.0 {
            return Err(PostError::EmptyRegion {
                what: "region average".into(),
                region: region.into(),
            });
        }
        Ok(row)
    }

    /// The working point of every magnet region: B and H along the local easy axis, averaged
    /// (area- or 2 pi r volume-weighted) and their extremes over the solver's quadrature
    /// points. The smallest B along the axis and the most negative H along it show how
    /// close the magnet's most demagnetised part sits to the knee of its demagnetisation
    /// curve.
    pub fn magnet_working_points(&self) -> WorkingPointTable {
        let s = self.solution;
        let model = s.model();
        let mesh = model.mesh();
        let formulation = model.formulation();
        let rule = s.quadrature_rule();
        // Per-chunk accumulators merged in chunk order: identical for any thread count.
        let n = mesh.triangles().len();
        let knees: Vec<Option<f64>> = model.materials().iter().map(|m| m.knee_field()).collect();
        let per_region: Vec<Option<WorkingAcc>> = {
            let chunks: Vec<Vec<Option<WorkingAcc>>> = (0..n.div_ceil(4096))
                .into_par_iter()
                .map(|c| {
                    let mut acc: Vec<Option<WorkingAcc>> = vec![None; mesh.regions().len()];
                    for t in c * 4096..((c + 1) * 4096).min(n) {
                        let region = mesh.triangle_regions()[t];
                        if model.material(region).magnet_direction().is_none() {
                            continue;
                        }
                        let knee = knees[region.index()];
                        let tri = triangle(mesh, t);
                        let bq = s.flux_density_at_quadrature(TriangleId(t as u32));
                        let hq = s.field_strength_at_quadrature(TriangleId(t as u32));
                        for q in 0..rule.len() {
                            let p = tri.point(rule.points[q]);
                            let w = tri.area * rule.weights[q] * volume_weight(formulation, p);
                            let e = easy_axis(s, region, p);
                            let be = bq[q][0] * e[0] + bq[q][1] * e[1];
                            let he = hq[q][0] * e[0] + hq[q][1] * e[1];
                            let beyond = knee.is_some_and(|k| he < -k);
                            acc[region.index()]
                                .get_or_insert_with(WorkingAcc::new)
                                .add(w, be, he, p, beyond);
                        }
                    }
                    acc
                })
                .collect();
            let mut out: Vec<Option<WorkingAcc>> = vec![None; mesh.regions().len()];
            for c in chunks {
                for (o, a) in out.iter_mut().zip(c) {
                    if let Some(a) = a {
                        match o {
                            Some(o) => o.merge(&a),
                            None => *o = Some(a),
                        }
                    }
                }
            }
            out
        };
        let rows = per_region
            .into_iter()
            .enumerate()
            .filter_map(|(r, acc)| {
                let acc = acc?;
                let material = model.material(RegionId(r as u32));
                let (remanence, coercivity) = magnet_nominals(material)?;
                let mean_b = acc.wb / acc.w;
                let mean_h = acc.wh / acc.w;
                Some(MagnetWorkingPoint {
                    region: mesh.regions()[r].name.clone(),
                    hysteretic: material.is_hysteretic(),
                    remanence_t: remanence,
                    model_coercivity_a_per_m: coercivity,
                    mean_polarisation_t: mean_b - MU_0 * mean_h,
                    knee_field_a_per_m: knees[r],
                    beyond_knee_fraction: acc.w_beyond / acc.w,
                    mean_flux_density_t: mean_b,
                    min_flux_density_t: acc.min_b,
                    max_flux_density_t: acc.max_b,
                    mean_field_strength_a_per_m: mean_h,
                    min_field_strength_a_per_m: acc.min_h,
                    max_field_strength_a_per_m: acc.max_h,
                    permeance_coefficient: -mean_b / (MU_0 * mean_h),
                    weakest_point: acc.min_b_point,
                })
            })
            .collect();
        WorkingPointTable { rows }
    }
}

#[derive(Clone, Copy, Debug)]
struct WorkingAcc {
    w: f64,
    wb: f64,
    wh: f64,
    min_b: f64,
    max_b: f64,
    min_h: f64,
    max_h: f64,
    min_b_point: [f64; 2],
    w_beyond: f64,
}

impl WorkingAcc {
    fn new() -> Self {
        WorkingAcc {
            w: 0.0,
            wb: 0.0,
            wh: 0.0,
            min_b: f64::INFINITY,
            max_b: f64::NEG_INFINITY,
            min_h: f64::INFINITY,
            max_h: f64::NEG_INFINITY,
            min_b_point: [f64::NAN; 2],
            w_beyond: 0.0,
        }
    }
    fn add(&mut self, w: f64, be: f64, he: f64, p: [f64; 2], beyond_knee: bool) {
        self.w += w;
        if beyond_knee {
            self.w_beyond += w;
        }
        self.wb += w * be;
        self.wh += w * he;
        if be < self.min_b {
            self.min_b = be;
            self.min_b_point = p;
        }
        self.max_b = self.max_b.max(be);
        self.min_h = self.min_h.min(he);
        self.max_h = self.max_h.max(he);
    }
    fn merge(&mut self, o: &WorkingAcc) {
        self.w += o.w;
        self.w_beyond += o.w_beyond;
        self.wb += o.wb;
        self.wh += o.wh;
        if o.min_b < self.min_b {
            self.min_b = o.min_b;
            self.min_b_point = o.min_b_point;
        }
        self.max_b = self.max_b.max(o.max_b);
        self.min_h = self.min_h.min(o.min_h);
        self.max_h = self.max_h.max(o.max_h);
    }
}

/// Points equally spaced by arc length along a polyline, and their distances from the start.
pub(crate) fn polyline_samples(
    path: &[[f64; 2]],
    samples: usize,
) -> Result<(Vec<[f64; 2]>, Vec<f64>), PostError> {
    if path.len() < 2 {
        return Err(PostError::InvalidArgument {
            what: "path points".into(),
            value: path.len() as f64,
            reason: "a path needs at least 2 points".into(),
        });
    }
    if samples < 2 {
        return Err(PostError::InvalidArgument {
            what: "path samples".into(),
            value: samples as f64,
            reason: "sample a path at 2 points or more".into(),
        });
    }
    if let Some(p) = path
        .iter()
        .find(|p| !(p[0].is_finite() && p[1].is_finite()))
    {
        return Err(PostError::InvalidArgument {
            what: "path point coordinate (m)".into(),
            value: if p[0].is_finite() { p[1] } else { p[0] },
            reason: "must be finite".into(),
        });
    }
    let mut cumulative = vec![0.0];
    for w in path.windows(2) {
        let d = (w[1][0] - w[0][0]).hypot(w[1][1] - w[0][1]);
        cumulative.push(cumulative.last().unwrap_or(&0.0) + d);
    }
    let length = *cumulative.last().unwrap_or(&0.0);
    if length <= 0.0 {
        return Err(PostError::InvalidArgument {
            what: "path length (m)".into(),
            value: length,
            reason: "the path has zero length".into(),
        });
    }
    let mut points = Vec::with_capacity(samples);
    let mut distances = Vec::with_capacity(samples);
    let mut seg = 0;
    for i in 0..samples {
        let s = length * i as f64 / (samples - 1) as f64;
        while seg + 2 < cumulative.len() && cumulative[seg + 1] < s {
            seg += 1;
        }
        let (a, b) = (path[seg], path[seg + 1]);
        let span = cumulative[seg + 1] - cumulative[seg];
        let f = if span > 0.0 {
            ((s - cumulative[seg]) / span).clamp(0.0, 1.0)
        } else {
            0.0
        };
        let p = if i + 1 == samples {
            path[path.len() - 1]
        } else {
            [a[0] + f * (b[0] - a[0]), a[1] + f * (b[1] - a[1])]
        };
        points.push(p);
        distances.push(s);
    }
    Ok((points, distances))
}

/// The flux crossing a segment (see [`FieldProbe::flux_between`]).
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct FluxCrossing {
    /// Planar models: flux per metre of depth (Wb/m); `None` for axisymmetric ones.
    pub per_metre_wb_per_m: Option<f64>,
    /// Flux through the device (Wb).
    pub total_wb: f64,
}

/// One sample of a path.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct PathSample {
    /// Distance from the path's start along the path (m).
    pub distance_m: f64,
    /// The field there.
    pub field: PointField,
}

/// The field sampled along a path.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct PathSamples {
    /// Samples from the start to the end of the path.
    pub samples: Vec<PathSample>,
    /// Length of the path (m).
    pub length_m: f64,
    /// Region names, indexed by [`PointField::region`].
    pub region_names: Vec<String>,
}

impl PathSamples {
    /// The mean of `f` over the path's length (trapezoidal rule over the samples; its error
    /// falls as the square of the sample spacing for a smooth field).
    pub fn mean_of(&self, f: impl Fn(&PointField) -> f64) -> f64 {
        let mut integral = 0.0;
        for w in self.samples.windows(2) {
            integral +=
                0.5 * (f(&w[0].field) + f(&w[1].field)) * (w[1].distance_m - w[0].distance_m);
        }
        integral / self.length_m
    }

    /// The mean of |B| along the path (T).
    pub fn mean_flux_density_norm(&self) -> f64 {
        self.mean_of(|f| f.flux_density_norm)
    }

    /// The line integral of H along the path, the magnetomotive force (A): trapezoidal rule
    /// on H . t with t the local path direction.
    pub fn magnetomotive_force(&self) -> f64 {
        let mut sum = 0.0;
        for w in self.samples.windows(2) {
            let (a, b) = (&w[0].field, &w[1].field);
            let d = [b.point[0] - a.point[0], b.point[1] - a.point[1]];
            let h = [
                0.5 * (a.field_strength[0] + b.field_strength[0]),
                0.5 * (a.field_strength[1] + b.field_strength[1]),
            ];
            sum += h[0] * d[0] + h[1] * d[1];
        }
        sum
    }
}

impl Tabular for PathSamples {
    fn header(&self) -> Vec<String> {
        [
            "distance (m)",
            "x (m)",
            "y (m)",
            "region",
            "potential (Wb/m)",
            "flux function",
            "Bx (T)",
            "By (T)",
            "|B| (T)",
            "Hx (A/m)",
            "Hy (A/m)",
            "|H| (A/m)",
        ]
        .iter()
        .map(|s| s.to_string())
        .collect()
    }
    fn csv_rows(&self) -> Vec<String> {
        self.samples
            .iter()
            .map(|s| {
                let f = &s.field;
                let region = self
                    .region_names
                    .get(f.region as usize)
                    .cloned()
                    .unwrap_or_default();
                csv_line(
                    &[region],
                    &[
                        s.distance_m,
                        f.point[0],
                        f.point[1],
                        f.potential,
                        f.flux_function,
                        f.flux_density[0],
                        f.flux_density[1],
                        f.flux_density_norm,
                        f.field_strength[0],
                        f.field_strength[1],
                        f.field_strength_norm,
                    ],
                    3,
                )
            })
            .collect()
    }
}

/// Averages over one region.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct RegionAverage {
    /// The region.
    pub region: String,
    /// Cross-section area (m^2).
    pub area_m2: f64,
    /// Volume (m^3): area times depth (planar), the integral of 2 pi r dA (axisymmetric).
    pub volume_m3: f64,
    /// Mean B (T), (Bx, By) or (Br, Bz).
    pub mean_flux_density: [f64; 2],
    /// Mean |B| (T).
    pub mean_flux_density_norm: f64,
    /// Mean H (A/m).
    pub mean_field_strength: [f64; 2],
    /// Largest |B| at a quadrature point (T).
    pub peak_flux_density_norm: f64,
}

/// Averages over every region.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct RegionAverageTable {
    /// One row per mesh region, by region id.
    pub rows: Vec<RegionAverage>,
}

impl Tabular for RegionAverageTable {
    fn header(&self) -> Vec<String> {
        [
            "region",
            "area (m^2)",
            "volume (m^3)",
            "mean Bx (T)",
            "mean By (T)",
            "mean |B| (T)",
            "mean Hx (A/m)",
            "mean Hy (A/m)",
            "peak |B| (T)",
        ]
        .iter()
        .map(|s| s.to_string())
        .collect()
    }
    fn csv_rows(&self) -> Vec<String> {
        self.rows
            .iter()
            .map(|r| {
                csv_line(
                    std::slice::from_ref(&r.region),
                    &[
                        r.area_m2,
                        r.volume_m3,
                        r.mean_flux_density[0],
                        r.mean_flux_density[1],
                        r.mean_flux_density_norm,
                        r.mean_field_strength[0],
                        r.mean_field_strength[1],
                        r.peak_flux_density_norm,
                    ],
                    0,
                )
            })
            .collect()
    }
}

/// The working point of one magnet region: B and H along its easy axis.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct MagnetWorkingPoint {
    /// The magnet region.
    pub region: String,
    /// True for a hysteretic magnet (its state is part of the solution), false for a linear
    /// recoil magnet (valid only above its knee).
    pub hysteretic: bool,
    /// Remanence Br of its material (T): the linear law's, or the major loop's.
    pub remanence_t: f64,
    /// Where B vanishes: Br / (mu_0 mu_rec) on a linear recoil line, HcB of a hysteretic
    /// magnet's major loop (A/m).
    pub model_coercivity_a_per_m: f64,
    /// Mean polarisation J = B - mu_0 H along the easy axis (T).
    pub mean_polarisation_t: f64,
    /// The grade's knee field Hk (A/m, positive), if known.
    pub knee_field_a_per_m: Option<f64>,
    /// Volume fraction of the region where H along the easy axis is below -Hk (0 when the
    /// knee is unknown). For a linear magnet this part is outside the model's validity (the
    /// real magnet would lose remanence there); for a hysteretic magnet the loss is modelled.
    pub beyond_knee_fraction: f64,
    /// Mean B along the easy axis (T).
    pub mean_flux_density_t: f64,
    /// Smallest B along the easy axis at a quadrature point (T): the most demagnetised spot.
    pub min_flux_density_t: f64,
    /// Largest B along the easy axis (T).
    pub max_flux_density_t: f64,
    /// Mean H along the easy axis (A/m), negative in a magnet working against a load.
    pub mean_field_strength_a_per_m: f64,
    /// Most negative H along the easy axis (A/m): compare with the knee field of the grade.
    pub min_field_strength_a_per_m: f64,
    /// Largest H along the easy axis (A/m).
    pub max_field_strength_a_per_m: f64,
    /// Permeance coefficient -B/(mu_0 H) of the mean working point (dimensionless; the
    /// slope of the load line).
    pub permeance_coefficient: f64,
    /// Where the smallest B along the easy axis occurs (m).
    pub weakest_point: [f64; 2],
}

/// Working points of every magnet region.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct WorkingPointTable {
    /// One row per magnet region, by region id.
    pub rows: Vec<MagnetWorkingPoint>,
}

impl Tabular for WorkingPointTable {
    fn header(&self) -> Vec<String> {
        [
            "region",
            "Br (T)",
            "model HcB (A/m)",
            "mean B along axis (T)",
            "min B along axis (T)",
            "max B along axis (T)",
            "mean H along axis (A/m)",
            "min H along axis (A/m)",
            "max H along axis (A/m)",
            "permeance coefficient (1)",
            "weakest x (m)",
            "weakest y (m)",
            "mean J along axis (T)",
            "knee field Hk (A/m)",
            "volume beyond knee (%)",
            "hysteretic",
        ]
        .iter()
        .map(|s| s.to_string())
        .collect()
    }
    fn csv_rows(&self) -> Vec<String> {
        self.rows
            .iter()
            .map(|r| {
                csv_line(
                    std::slice::from_ref(&r.region),
                    &[
                        r.remanence_t,
                        r.model_coercivity_a_per_m,
                        r.mean_flux_density_t,
                        r.min_flux_density_t,
                        r.max_flux_density_t,
                        r.mean_field_strength_a_per_m,
                        r.min_field_strength_a_per_m,
                        r.max_field_strength_a_per_m,
                        r.permeance_coefficient,
                        r.weakest_point[0],
                        r.weakest_point[1],
                        r.mean_polarisation_t,
                        r.knee_field_a_per_m.unwrap_or(f64::NAN),
                        100.0 * r.beyond_knee_fraction,
                        if r.hysteretic { 1.0 } else { 0.0 },
                    ],
                    0,
                )
            })
            .collect()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn polyline_samples_are_equally_spaced_by_arc_length_through_repeated_points() {
        // An L-shaped path of length 3 + 4 = 7 with a repeated corner point.
        let path = [[0.0, 0.0], [3.0, 0.0], [3.0, 0.0], [3.0, 4.0]];
        let (points, distances) = polyline_samples(&path, 15).unwrap();
        assert_eq!(points.len(), 15);
        for (i, (p, d)) in points.iter().zip(&distances).enumerate() {
            let s = 0.5 * i as f64;
            assert!((d - s).abs() < 1e-12);
            let expected = if s <= 3.0 { [s, 0.0] } else { [3.0, s - 3.0] };
            assert!((p[0] - expected[0]).abs() < 1e-12 && (p[1] - expected[1]).abs() < 1e-12);
        }
        assert_eq!(points[14], [3.0, 4.0]);
        assert!(polyline_samples(&[[0.0, f64::NAN], [1.0, 0.0]], 3).is_err());
    }
}
