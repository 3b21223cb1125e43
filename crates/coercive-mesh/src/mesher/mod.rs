//! The meshing pipeline: validate, split intersections, size field, constrained Delaunay
//! triangulation, refinement, labelling, output.
//!
//! 1. [`input::prepare`]: validate, snap coincident points, cut arcs into chords at the
//!    chord tolerance, split crossing/touching/overlapping curves into unique pieces.
//! 2. A coarse triangulation of the pieces, labelled by flood fill from the region points:
//!    this checks the seeds (outside, on a curve, two in one area, enclosed areas without a
//!    seed) and tells which regions lie on each side of each piece.
//! 3. The size field ([`size::SizeField`]) from point, curve and region sizes and the
//!    automatic local feature size; the triangle count is estimated before meshing.
//! 4. Every piece is discretised at the local size (curve pairs with matched fractions).
//! 5. The fine triangulation is labelled and refined ([`cdt::Refiner`]).
//! 6. Output: nodes renumbered along a Hilbert curve, triangles sorted by their first
//!    node, the ordered nodes of every input curve, and the quality report.

pub(crate) mod cdt;
pub(crate) mod input;
pub(crate) mod rigid;
pub(crate) mod size;

use std::collections::HashMap;

use spade::{PositionInTriangulation, Triangulation};

use crate::{
    Geometry, Mesh, MeshCurve, MeshCurvePair, MeshError, MeshRegion, Point2, QualityReport,
    RegionId, SmallInputAngle, VertexId,
};

use cdt::{pt, sp, Cdt, Refiner, Seed, NONE};
use input::Prepared;
use size::SizeField;

/// Meshes a geometry (see [`Geometry::mesh_with_report`]).
///
/// The whole pipeline runs under `catch_unwind` as a last line of defence: an unexpected
/// panic (in the triangulation library or here) becomes [`MeshError::TriangulationFailed`].
pub(crate) fn mesh_geometry(g: &Geometry) -> Result<(Mesh, QualityReport), MeshError> {
    cdt::guarded("meshing", || {
        let stage = Staged::new(g)?;
        let fine = stage.triangulate(&[])?;
        let (mesh, report) = stage.output(g, fine, None, true);
        let report = report.ok_or_else(|| MeshError::TriangulationFailed {
            what: "no quality report".into(),
        })?;
        Ok((mesh, report))
    })?
}

/// Meshes a geometry without computing the quality report.
pub(crate) fn mesh_only(g: &Geometry) -> Result<Mesh, MeshError> {
    cdt::guarded("meshing", || {
        let stage = Staged::new(g)?;
        let fine = stage.triangulate(&[])?;
        Ok(stage.output(g, fine, None, false).0)
    })?
}

/// Everything known after the coarse stage.
#[derive(Clone)]
pub(crate) struct Staged {
    pub prep: Prepared,
    /// Per piece: labels on its left (a -> b) and right.
    pub sides: Vec<(u32, u32)>,
    /// Per label: meshed (label 0 and holes are not).
    pub meshed: Vec<bool>,
    /// Per label: size cap (m).
    pub cap: Vec<f64>,
    pub size: SizeField,
    /// Per piece: interior node fractions (from a to b).
    pub nodes: Vec<Vec<f64>>,
    /// Per piece: never split by refinement.
    pub fixed: Vec<bool>,
    /// Per piece: partner piece of a curve pair, and whether both run the same way from
    /// their `a` ends.
    pub pair_of: Vec<Option<(u32, bool)>>,
    pub seeds: Vec<(String, Point2)>,
    pub min_angle_deg: f64,
    pub max_triangles: usize,
    pub growth: f64,
}

/// A refined triangulation.
pub(crate) struct Fine {
    pub cdt: Cdt,
    pub vpiece: Vec<u32>,
    /// Per break point: its vertex index (NONE if excluded).
    pub point_index: Vec<u32>,
    /// First vertex index of every extra chain.
    pub extra_start: Vec<usize>,
}

/// The kept part of a rigid-group mesh, numbered first in the output.
pub(crate) struct RigidPart<'a> {
    /// Group nodes (m), already moved.
    pub verts: &'a [Point2],
    /// Group triangles (indices into `verts`).
    pub tris: &'a [[u32; 3]],
    /// Region of every group triangle.
    pub tri_regions: &'a [RegionId],
    /// (triangulation vertex of an outline chain, group node).
    pub cdt_to_group: Vec<(u32, u32)>,
    /// Per piece: group node ids from a to b, for pieces owned by a group.
    pub piece_nodes: &'a [Option<Vec<u32>>],
}

/// Which part of the geometry to triangulate (rigid groups re-mesh only the rest).
pub(crate) struct Rest<'a> {
    /// Extra closed chains of fixed edges (moved group outlines).
    pub extra: &'a [Vec<Point2>],
    /// Break points to leave out.
    pub exclude_point: Option<&'a [bool]>,
    /// Pieces to leave out.
    pub skip_piece: Option<&'a [bool]>,
    /// Seeds to use (others ignored); `Some` also allows enclosed areas without a seed
    /// (the moved groups), which stay unmeshed.
    pub active_seed: Option<&'a [bool]>,
}

impl Staged {
    pub(crate) fn new(g: &Geometry) -> Result<Self, MeshError> {
        Self::new_with(g, &[])
    }

    /// `extra_fixed_labels`: labels (region index + 1) whose outline pieces are fixed.
    pub(crate) fn new_with(g: &Geometry, fixed_regions: &[usize]) -> Result<Self, MeshError> {
        let prep = input::prepare(g)?;
        let s = &g.settings;
        let edges: Vec<[usize; 2]> = prep
            .pieces
            .iter()
            .map(|p| [p.a as usize, p.b as usize])
            .collect();
        let mut coarse = cdt::build(&prep.points, edges, prep.min, prep.max)?;
        let seeds: Vec<(String, Point2)> =
            g.regions.iter().map(|r| (r.name.clone(), r.seed)).collect();
        let seed_refs: Vec<Seed> = seeds
            .iter()
            .map(|(n, p)| Seed {
                name: n,
                at: *p,
                active: true,
            })
            .collect();
        cdt::label(&mut coarse, &seed_refs, prep.tol, false)?;
        let nl = g.regions.len() + 1;
        let mut meshed = vec![false; nl];
        let mut cap = vec![f64::INFINITY; nl];
        for (k, r) in g.regions.iter().enumerate() {
            meshed[k + 1] = !r.hole;
            if let Some(v) = r.size {
                cap[k + 1] = v;
            }
        }
        let sides: Vec<(u32, u32)> = prep
            .pieces
            .iter()
            .map(|p| {
                let e = coarse
                    .get_edge_from_neighbors(
                        spade::handles::FixedVertexHandle::from_index(p.a as usize),
                        spade::handles::FixedVertexHandle::from_index(p.b as usize),
                    )
                    .ok_or_else(|| {
                        let q = prep.points[p.a as usize];
                        MeshError::TriangulationFailed {
                            what: format!(
                                "the curve piece from ({}, {}) passes through another point",
                                q.x, q.y
                            ),
                        }
                    })?;
                Ok((
                    e.face().as_inner().map_or(0, |f| *f.data()),
                    e.rev().face().as_inner().map_or(0, |f| *f.data()),
                ))
            })
            .collect::<Result<_, MeshError>>()?;
        let piece_meshed: Vec<bool> = sides
            .iter()
            .map(|&(l, r)| meshed[l as usize] || meshed[r as usize])
            .collect();

        // Automatic local feature size.
        let lfs = if s.elements_across_gap > 0.0 {
            local_feature_sizes(&prep, &piece_meshed, s.elements_across_gap)
        } else {
            vec![Vec::new(); prep.pieces.len()]
        };

        // Size field.
        let mut min_h = prep.max_size;
        let mut note = |h: f64| min_h = min_h.min(h);
        for v in prep.point_size.iter().flatten() {
            note(*v);
        }
        for (i, p) in prep.pieces.iter().enumerate() {
            if !piece_meshed[i] {
                continue;
            }
            if let Some(v) = p.size {
                note(v);
            }
            let (l, r) = sides[i];
            note(cap[l as usize].min(cap[r as usize]));
            for &(_, h) in &lfs[i] {
                note(h);
            }
        }
        let mut size = SizeField::new(
            prep.min,
            prep.max,
            prep.max_size,
            s.growth,
            (0.5 * min_h).max(prep.diag / 4096.0),
        );
        for (i, v) in prep.point_size.iter().enumerate() {
            if let Some(v) = v {
                size.add_point(prep.points[i], *v);
            }
        }
        for (i, p) in prep.pieces.iter().enumerate() {
            if !piece_meshed[i] {
                continue;
            }
            let (l, r) = sides[i];
            let h = p
                .size
                .unwrap_or(f64::INFINITY)
                .min(cap[l as usize].min(cap[r as usize]));
            if h.is_finite() {
                let n = if p.arc.is_some() { 8 } else { 1 };
                for k in 0..n {
                    let a = p.at(&prep.points, k as f64 / n as f64);
                    let b = p.at(&prep.points, (k + 1) as f64 / n as f64);
                    size.add_segment(a, b, h);
                }
            }
            for &(t, h) in &lfs[i] {
                size.add_point(p.at(&prep.points, t), h);
            }
        }
        size.propagate();

        // Triangle-count guard, before any meshing work.
        let est = estimate_triangles(&coarse, &size, &meshed, &cap, &prep);
        if est > s.max_triangles as f64 {
            return Err(MeshError::TooManyTriangles {
                estimated: est as usize,
                limit: s.max_triangles,
                detail: format!(" (smallest size {min_h:.3e} m)"),
            });
        }

        let mut staged = Self {
            sides,
            meshed,
            cap,
            size,
            nodes: Vec::new(),
            fixed: vec![false; prep.pieces.len()],
            pair_of: vec![None; prep.pieces.len()],
            seeds,
            min_angle_deg: s.min_angle_deg,
            max_triangles: s.max_triangles,
            growth: s.growth,
            prep,
        };
        for &r in fixed_regions {
            for (i, &(l, rr)) in staged.sides.iter().enumerate() {
                if l as usize == r + 1 || rr as usize == r + 1 {
                    staged.fixed[i] = true;
                }
            }
        }
        staged.discretise(g, &piece_meshed, &lfs)?;
        Ok(staged)
    }

    /// The error for a curve piece asking for more nodes than the triangle limit.
    fn too_many(&self, i: usize) -> MeshError {
        let p = &self.prep.pieces[i];
        let (a, b) = (
            self.prep.points[p.a as usize],
            self.prep.points[p.b as usize],
        );
        MeshError::TooManyTriangles {
            estimated: self.max_triangles.saturating_add(1),
            limit: self.max_triangles,
            detail: format!(
                " (the curve from ({}, {}) to ({}, {}) needs very small elements: is another curve almost touching it?)",
                a.x, a.y, b.x, b.y
            ),
        }
    }

    /// The exact size along piece `i` at fraction `t` (m).
    fn piece_size(&self, i: usize, t: f64, lfs: &[(f64, f64)]) -> f64 {
        let p = &self.prep.pieces[i];
        let x = p.at(&self.prep.points, t);
        let (l, r) = self.sides[i];
        let mut h = self.size.at(x);
        for lab in [l, r] {
            if self.meshed[lab as usize] {
                h = h.min(self.cap[lab as usize]);
            }
        }
        if let Some(v) = p.size {
            h = h.min(v);
        }
        let len = piece_length(&self.prep, i);
        for &(s, hs) in lfs {
            h = h.min(hs + self.growth * (t - s).abs() * len);
        }
        for (end, tt) in [(p.a, 0.0), (p.b, 1.0)] {
            if let Some(v) = self.prep.point_size[end as usize] {
                h = h.min(v + self.growth * (t - tt).abs() * len);
            }
        }
        h
    }

    fn discretise(
        &mut self,
        g: &Geometry,
        piece_meshed: &[bool],
        lfs: &[Vec<(f64, f64)>],
    ) -> Result<(), MeshError> {
        let np = self.prep.pieces.len();
        let mut nodes: Vec<Option<Vec<f64>>> = vec![None; np];
        // Nodes on curves are fewer than triangles: stop before allocating absurd counts.
        let mut budget = self.max_triangles;
        // Curve pairs first: matched fractions.
        let mut in_pair = vec![false; np];
        for (pi, pair) in g.curve_pairs.iter().enumerate() {
            let (c1, c2) = (pair.first.index(), pair.second.index());
            let err = |why: String| MeshError::CurvePairMismatch {
                pair: pi,
                first: c1,
                second: c2,
                why,
            };
            let (ch1, ch2) = (&self.prep.chains[c1], &self.prep.chains[c2]);
            if ch1.len() != ch2.len() {
                return Err(err(format!(
                    "the curves are cut into {} and {} pieces by other curves",
                    ch1.len(),
                    ch2.len()
                )));
            }
            let cum = |ch: &Vec<(u32, bool)>| {
                let mut acc = vec![0.0];
                for &(p, _) in ch {
                    let l = piece_length(&self.prep, p as usize);
                    acc.push(acc.last().unwrap() + l);
                }
                let tot = *acc.last().unwrap();
                (acc.iter().map(|x| x / tot).collect::<Vec<_>>(), tot)
            };
            let ((f1, l1), (f2, l2)) = (cum(ch1), cum(ch2));
            if (l1 - l2).abs() > 1e-6 * l1.max(l2) {
                return Err(err(format!(
                    "the curves have different lengths {l1:.9e} m and {l2:.9e} m"
                )));
            }
            for k in 0..f1.len() {
                if (f1[k] - f2[k]).abs() > 1e-6 {
                    return Err(err(format!(
                        "the curves are cut by other curves at different places ({:.6} and {:.6} of their length)",
                        f1[k], f2[k]
                    )));
                }
            }
            for j in 0..ch1.len() {
                let ((p1, d1), (p2, d2)) = (ch1[j], ch2[j]);
                let (p1, p2) = (p1 as usize, p2 as usize);
                if p1 == p2 {
                    return Err(err("the two curves share a piece".into()));
                }
                if in_pair[p1] || in_pair[p2] {
                    return Err(err("a piece of these curves is in another pair".into()));
                }
                in_pair[p1] = true;
                in_pair[p2] = true;
                let (len1, len2) = (piece_length(&self.prep, p1), piece_length(&self.prep, p2));
                let dens = |s: f64| {
                    let s1 = if d1 { s } else { 1.0 - s };
                    let s2 = if d2 { s } else { 1.0 - s };
                    (len1 / self.piece_size(p1, s1, &lfs[p1]))
                        .max(len2 / self.piece_size(p2, s2, &lfs[p2]))
                };
                let fr = fractions(dens, budget).ok_or_else(|| self.too_many(p1))?;
                budget = budget.saturating_sub(fr.len());
                let conv = |d: bool| -> Vec<f64> {
                    if d {
                        fr.clone()
                    } else {
                        fr.iter().rev().map(|s| 1.0 - s).collect()
                    }
                };
                nodes[p1] = Some(conv(d1));
                nodes[p2] = Some(conv(d2));
                self.pair_of[p1] = Some((p2 as u32, d1 == d2));
                self.pair_of[p2] = Some((p1 as u32, d1 == d2));
            }
        }
        for i in 0..np {
            if nodes[i].is_some() {
                continue;
            }
            if !piece_meshed[i] {
                nodes[i] = Some(Vec::new());
                continue;
            }
            let len = piece_length(&self.prep, i);
            let fr = fractions(|s| len / self.piece_size(i, s, &lfs[i]), budget)
                .ok_or_else(|| self.too_many(i))?;
            budget = budget.saturating_sub(fr.len());
            nodes[i] = Some(fr);
        }
        self.nodes = nodes.into_iter().map(|n| n.unwrap_or_default()).collect();
        Ok(())
    }

    /// Builds and refines the fine triangulation of the whole geometry.
    pub(crate) fn triangulate(&self, extra: &[Vec<Point2>]) -> Result<Fine, MeshError> {
        self.triangulate_with(&Rest {
            extra,
            exclude_point: None,
            skip_piece: None,
            active_seed: None,
        })
    }

    /// Builds and refines the fine triangulation of part of the geometry (see [`Rest`]).
    pub(crate) fn triangulate_with(&self, rest: &Rest) -> Result<Fine, MeshError> {
        let prep = &self.prep;
        // Break points kept, renumbered in order.
        let mut point_index = vec![NONE; prep.points.len()];
        let mut verts = Vec::with_capacity(prep.points.len());
        for (i, &p) in prep.points.iter().enumerate() {
            if !rest.exclude_point.is_some_and(|x| x[i]) {
                point_index[i] = verts.len() as u32;
                verts.push(p);
            }
        }
        let n_break = verts.len();
        let mut vpiece = vec![NONE; n_break];
        let mut edges: Vec<[usize; 2]> = Vec::new();
        let mut direct = HashMap::new();
        let mut piece_verts: Vec<Vec<u32>> = vec![Vec::new(); prep.pieces.len()];
        for (i, p) in prep.pieces.iter().enumerate() {
            if rest.skip_piece.is_some_and(|x| x[i]) {
                continue;
            }
            let (a, b) = (point_index[p.a as usize], point_index[p.b as usize]);
            if a == NONE || b == NONE {
                return Err(MeshError::TriangulationFailed {
                    what: "a kept curve piece ends at an excluded point".into(),
                });
            }
            let mut prev = a as usize;
            piece_verts[i].push(a);
            for &t in &self.nodes[i] {
                piece_verts[i].push(verts.len() as u32);
                verts.push(p.at(&prep.points, t));
                vpiece.push(i as u32);
                let cur = verts.len() - 1;
                edges.push([prev, cur]);
                prev = cur;
            }
            edges.push([prev, b as usize]);
            piece_verts[i].push(b);
            if self.nodes[i].is_empty() {
                direct.insert((a.min(b), a.max(b)), i as u32);
            }
        }
        let extra_piece = prep.pieces.len() as u32;
        let mut extra_start = Vec::with_capacity(rest.extra.len());
        for chain in rest.extra {
            let first = verts.len();
            extra_start.push(first);
            for (k, &q) in chain.iter().enumerate() {
                verts.push(q);
                vpiece.push(extra_piece);
                let cur = verts.len() - 1;
                let next = if k + 1 == chain.len() { first } else { cur + 1 };
                edges.push([cur, next]);
            }
        }
        let mut fine = cdt::build(&verts, edges, prep.min, prep.max)?;
        vpiece.extend([NONE; 4]);
        let seed_refs: Vec<Seed> = self
            .seeds
            .iter()
            .enumerate()
            .map(|(k, (n, p))| Seed {
                name: n,
                at: *p,
                active: rest.active_seed.is_none_or(|a| a[k]),
            })
            .collect();
        cdt::label(&mut fine, &seed_refs, prep.tol, rest.active_seed.is_some())?;
        let mut fixed = self.fixed.clone();
        fixed.push(true);
        let mut piece_ends: Vec<(u32, u32)> = prep
            .pieces
            .iter()
            .map(|p| (point_index[p.a as usize], point_index[p.b as usize]))
            .collect();
        piece_ends.push((NONE, NONE));
        let mut refiner = Refiner::new(
            fine,
            &self.size,
            self.cap.clone(),
            self.meshed.clone(),
            vpiece,
            n_break,
            direct,
            fixed,
            piece_ends,
            self.min_angle_deg,
            self.max_triangles,
            prep.diag * 1e-7,
        );
        let mut partner = HashMap::new();
        for (i, pair) in self.pair_of.iter().enumerate() {
            if let Some((o, same)) = *pair {
                let (mine, theirs) = (&piece_verts[i], &piece_verts[o as usize]);
                if mine.is_empty() || theirs.is_empty() {
                    continue;
                }
                for (k, &v) in mine.iter().enumerate() {
                    let k2 = if same { k } else { theirs.len() - 1 - k };
                    partner.insert((v, i as u32), theirs[k2]);
                }
            }
        }
        refiner.pair_of = self.pair_of.iter().map(|p| p.map(|(o, _)| o)).collect();
        refiner.pair_of.push(None);
        refiner.partner = partner;
        refiner.arcs = prep
            .pieces
            .iter()
            .map(|p| p.arc.map(|a| (a.centre, a.radius)))
            .collect();
        refiner.refine()?;
        Ok(Fine {
            vpiece: refiner.vpiece,
            cdt: refiner.cdt,
            point_index,
            extra_start,
        })
    }

    /// The ordered vertex indices of piece `i` from `a` to `b`, walking its constraint edges.
    pub(crate) fn walk_piece(&self, fine: &Fine, i: usize) -> Vec<u32> {
        let p = &self.prep.pieces[i];
        let (pa, pb) = (
            fine.point_index[p.a as usize],
            fine.point_index[p.b as usize],
        );
        if pa == NONE || pb == NONE {
            return Vec::new();
        }
        let mut out = vec![pa];
        let mut prev = NONE;
        let mut cur = pa;
        while cur != pb {
            let v = fine
                .cdt
                .vertex(spade::handles::FixedVertexHandle::from_index(cur as usize));
            let mut next = NONE;
            for e in v.out_edges() {
                let w = e.to().fix().index() as u32;
                if w == prev || !fine.cdt.is_constraint_edge(e.fix().as_undirected()) {
                    continue;
                }
                if w == pb || fine.vpiece[w as usize] == i as u32 {
                    next = w;
                    if w != pb {
                        break;
                    }
                }
            }
            if next == NONE || out.len() > fine.vpiece.len() {
                return Vec::new();
            }
            out.push(next);
            prev = cur;
            cur = next;
        }
        out
    }

    /// Builds the mesh and its report. `first_vertices`/`first_triangles`: fine vertex
    /// indices and triangles placed first (rigid groups), in order.
    pub(crate) fn output(
        &self,
        g: &Geometry,
        fine: Fine,
        rigid: Option<&RigidPart>,
        want_report: bool,
    ) -> (Mesh, Option<QualityReport>) {
        let cdt = &fine.cdt;
        let nv = cdt.num_vertices();
        // Region ids: meshed regions in geometry order.
        let mut region_of_label = vec![u32::MAX; self.meshed.len()];
        let mut regions = Vec::new();
        for (k, r) in g.regions.iter().enumerate() {
            if !r.hole {
                region_of_label[k + 1] = regions.len() as u32;
                let group = g
                    .rigid_groups
                    .iter()
                    .find(|grp| grp.regions.iter().any(|x| x == &r.name))
                    .map(|grp| grp.name.clone());
                regions.push(MeshRegion {
                    name: r.name.clone(),
                    rigid_group: group,
                });
            }
        }
        let mut tris: Vec<([u32; 3], u32)> = Vec::new();
        for f in cdt.inner_faces() {
            let lab = *f.data();
            if self.meshed[lab as usize] {
                let v = f.vertices().map(|v| v.fix().index() as u32);
                tris.push((v, region_of_label[lab as usize]));
            }
        }
        let mut used = vec![false; nv];
        for (t, _) in &tris {
            for &v in t {
                used[v as usize] = true;
            }
        }
        let pos: Vec<Point2> = cdt.vertices().map(|v| pt(v.position())).collect();
        // Rigid groups' nodes come first; chain vertices of their outlines are theirs.
        let ng = rigid.map_or(0, |r| r.verts.len());
        if let Some(r) = rigid {
            for &(cv, _) in &r.cdt_to_group {
                used[cv as usize] = false;
            }
        }
        let mut new_id = hilbert_numbering(&pos, &used, self.prep.min, self.prep.max);
        for n in new_id.iter_mut() {
            if *n != u32::MAX {
                *n += ng as u32;
            }
        }
        let mut vertices =
            vec![Point2::default(); ng + new_id.iter().filter(|&&x| x != u32::MAX).count()];
        if let Some(r) = rigid {
            vertices[..ng].copy_from_slice(r.verts);
            for &(cv, gv) in &r.cdt_to_group {
                new_id[cv as usize] = gv;
            }
        }
        for (i, &n) in new_id.iter().enumerate() {
            if n as usize >= ng && n != u32::MAX {
                vertices[n as usize] = pos[i];
            }
        }
        let mut tri_new: Vec<([VertexId; 3], RegionId)> = tris
            .iter()
            .map(|(t, r)| {
                let v = t.map(|x| new_id[x as usize]);
                // Rotate so the smallest index comes first (keeps counter-clockwise order).
                let k = (0..3).min_by_key(|&k| v[k]).unwrap_or(0);
                (
                    [v[k], v[(k + 1) % 3], v[(k + 2) % 3]].map(VertexId),
                    RegionId(*r),
                )
            })
            .collect();
        tri_new.sort_unstable_by_key(|(t, _)| (t[0], t[1], t[2]));
        if let Some(r) = rigid {
            let mut first: Vec<([VertexId; 3], RegionId)> = r
                .tris
                .iter()
                .zip(r.tri_regions)
                .map(|(t, &reg)| (t.map(VertexId), reg))
                .collect();
            first.extend(tri_new);
            tri_new = first;
        }
        let (triangles, triangle_regions): (Vec<_>, Vec<_>) = tri_new.into_iter().unzip();

        // Curve node lists.
        // Final node ids of every piece, from a to b.
        let piece_nodes: Vec<Option<Vec<u32>>> = (0..self.prep.pieces.len())
            .map(|i| match rigid.and_then(|r| r.piece_nodes[i].as_ref()) {
                Some(nodes) => Some(nodes.clone()),
                None => {
                    let w = self.walk_piece(&fine, i);
                    let ids: Vec<u32> = w.iter().map(|&v| new_id[v as usize]).collect();
                    (!w.is_empty() && ids.iter().all(|&n| n != u32::MAX)).then_some(ids)
                }
            })
            .collect();
        let curves: Vec<MeshCurve> = g
            .curves
            .iter()
            .enumerate()
            .map(|(ci, c)| {
                let mut nodes: Vec<VertexId> = Vec::new();
                let mut ok = true;
                for &(p, fwd) in &self.prep.chains[ci] {
                    let Some(pn) = &piece_nodes[p as usize] else {
                        ok = false;
                        break;
                    };
                    let it: Box<dyn Iterator<Item = &u32>> = if fwd {
                        Box::new(pn.iter())
                    } else {
                        Box::new(pn.iter().rev())
                    };
                    for &n in it {
                        if nodes.last() != Some(&VertexId(n)) {
                            nodes.push(VertexId(n));
                        }
                    }
                }
                MeshCurve {
                    name: c.name.clone(),
                    nodes: if ok { nodes } else { Vec::new() },
                }
            })
            .collect();
        let curve_pairs = g
            .curve_pairs
            .iter()
            .map(|p| MeshCurvePair {
                first: p.first,
                second: p.second,
            })
            .collect();
        let small = if want_report {
            self.small_input_angles(&fine)
        } else {
            Vec::new()
        };
        let mesh = Mesh::from_parts_unchecked(
            vertices,
            triangles,
            triangle_regions,
            regions,
            curves,
            curve_pairs,
        );
        let cap_of_region: Vec<f64> = g
            .regions
            .iter()
            .filter(|r| !r.hole)
            .map(|r| r.size.unwrap_or(f64::INFINITY))
            .collect();
        let report = want_report.then(|| {
            crate::quality::compute(
                &mesh,
                |p, r| self.size.at(p).min(cap_of_region[r.index()]),
                self.min_angle_deg,
                small,
            )
        });
        (mesh, report)
    }

    fn small_input_angles(&self, fine: &Fine) -> Vec<SmallInputAngle> {
        let prep = &self.prep;
        let mut dirs: Vec<Vec<f64>> = vec![Vec::new(); prep.points.len()];
        for (i, p) in prep.pieces.iter().enumerate() {
            for (end, t) in [(p.a, 1e-6), (p.b, 1.0 - 1e-6)] {
                let q = p.at(&prep.points, t);
                let o = prep.points[end as usize];
                dirs[end as usize].push((q.y - o.y).atan2(q.x - o.x));
                let _ = i;
            }
        }
        let limit = self.min_angle_deg.to_radians();
        let mut out = Vec::new();
        for (k, d) in dirs.iter_mut().enumerate() {
            if d.len() < 2 {
                continue;
            }
            d.sort_by(f64::total_cmp);
            let o = prep.points[k];
            for j in 0..d.len() {
                let a0 = d[j];
                let mut a1 = d[(j + 1) % d.len()];
                if j + 1 == d.len() {
                    a1 += std::f64::consts::TAU;
                }
                let gap = a1 - a0;
                if gap < limit && gap > 0.0 {
                    // Is the wedge meshed? Look just inside its bisector.
                    let mid = 0.5 * (a0 + a1);
                    let r = prep.diag * 1e-6;
                    let q = Point2::new(o.x + r * mid.cos(), o.y + r * mid.sin());
                    let meshed = match fine.cdt.locate(sp(q)) {
                        PositionInTriangulation::OnFace(f) => {
                            self.meshed[*fine.cdt.face(f).data() as usize]
                        }
                        _ => false,
                    };
                    if meshed {
                        out.push(SmallInputAngle {
                            at: o,
                            angle_deg: gap.to_degrees(),
                        });
                    }
                }
            }
        }
        out
    }
}

/// Length of piece `i` (m): arc length for arcs.
pub(crate) fn piece_length(prep: &Prepared, i: usize) -> f64 {
    let p = &prep.pieces[i];
    match p.arc {
        Some(a) => a.radius * a.sweep.abs(),
        None => prep.points[p.a as usize].distance(prep.points[p.b as usize]),
    }
}

/// Interior node fractions for a piece with node density `dens(s)` (nodes per unit
/// fraction): n = ceil(integral) segments at equal steps of the integral.
fn fractions(dens: impl Fn(f64) -> f64, cap: usize) -> Option<Vec<f64>> {
    // Coarse pass to choose the sampling.
    let mut peak: f64 = 0.0;
    for k in 0..=32 {
        peak = peak.max(dens(k as f64 / 32.0));
    }
    if !peak.is_finite() || peak > cap as f64 {
        return None;
    }
    let m = ((peak * 4.0).ceil() as usize).clamp(64, 1 << 22);
    let mut cum = Vec::with_capacity(m + 1);
    cum.push(0.0);
    let mut prev = dens(0.0);
    for k in 1..=m {
        let d = dens(k as f64 / m as f64);
        cum.push(cum[k - 1] + 0.5 * (prev + d) / m as f64);
        prev = d;
    }
    let total = cum[m];
    if !total.is_finite() || total > cap as f64 {
        return None;
    }
    let n = ((total * 0.999).ceil() as usize).max(1);
    let mut out = Vec::with_capacity(n.saturating_sub(1));
    let mut j = 0;
    for i in 1..n {
        let target = total * i as f64 / n as f64;
        while j < m && cum[j + 1] < target {
            j += 1;
        }
        let (c0, c1) = (cum[j], cum[j + 1]);
        let frac = if c1 > c0 {
            (target - c0) / (c1 - c0)
        } else {
            0.5
        };
        out.push((j as f64 + frac) / m as f64);
    }
    Some(out)
}

/// For every meshed piece, samples (fraction, size) of the automatic local feature size:
/// the distance from sample points to the nearest piece that neither touches this piece
/// nor belongs to the same input curve, divided by `across`.
fn local_feature_sizes(
    prep: &Prepared,
    piece_meshed: &[bool],
    across: f64,
) -> Vec<Vec<(f64, f64)>> {
    let np = prep.pieces.len();
    let reach = prep.max_size * across;
    // Bucket grid over the pieces' chords.
    let w = (prep.max.x - prep.min.x).max(prep.max.y - prep.min.y);
    let nb = ((np as f64).sqrt().ceil() as usize).clamp(1, 512);
    let cell = w / nb as f64 * 1.0001 + 1e-300;
    let idx = |v: f64, o: f64| (((v - o) / cell).floor().max(0.0) as usize).min(nb - 1);
    let mut buckets: Vec<Vec<u32>> = vec![Vec::new(); nb * nb];
    let chord = |i: usize| {
        let p = &prep.pieces[i];
        (prep.points[p.a as usize], prep.points[p.b as usize])
    };
    for i in 0..np {
        let (a, b) = chord(i);
        let (i0, i1) = (idx(a.x.min(b.x), prep.min.x), idx(a.x.max(b.x), prep.min.x));
        let (j0, j1) = (idx(a.y.min(b.y), prep.min.y), idx(a.y.max(b.y), prep.min.y));
        for j in j0..=j1 {
            for ii in i0..=i1 {
                buckets[j * nb + ii].push(i as u32);
            }
        }
    }
    let mut stamp = vec![u32::MAX; np];
    let mut out = vec![Vec::new(); np];
    let mut query = 0u32;
    // Pieces at every point, to skip smooth continuations (a circle drawn as four arcs is
    // one feature: the chords on either side of a joint are not a gap).
    let mut at_point: Vec<Vec<u32>> = vec![Vec::new(); prep.points.len()];
    for (i, p) in prep.pieces.iter().enumerate() {
        at_point[p.a as usize].push(i as u32);
        at_point[p.b as usize].push(i as u32);
    }
    let dir_from = |i: usize, s: u32| -> Point2 {
        let p = &prep.pieces[i];
        let other = if p.a == s { p.b } else { p.a };
        let (o, q) = (prep.points[s as usize], prep.points[other as usize]);
        let l = o.distance(q);
        Point2::new((q.x - o.x) / l, (q.y - o.y) / l)
    };
    // Nearly straight at `s` between pieces i and j: their directions away from s are
    // nearly opposite (turn below 30 degrees).
    let smooth = |i: usize, j: usize, s: u32| {
        let (u, v) = (dir_from(i, s), dir_from(j, s));
        u.x * v.x + u.y * v.y < -(30f64.to_radians().cos())
    };
    let mut skip_near: Vec<u32> = Vec::new();
    for i in 0..np {
        if !piece_meshed[i] {
            continue;
        }
        let p = &prep.pieces[i];
        // Pieces two steps away along smooth joints.
        skip_near.clear();
        for s in [p.a, p.b] {
            for &r in &at_point[s as usize] {
                let r = r as usize;
                if r == i || !smooth(i, r, s) {
                    continue;
                }
                let rp = &prep.pieces[r];
                let t = if rp.a == s { rp.b } else { rp.a };
                for &q in &at_point[t as usize] {
                    if q as usize != r && smooth(r, q as usize, t) {
                        skip_near.push(q);
                    }
                }
            }
        }
        let len = piece_length(prep, i);
        let ns = ((len / (prep.max_size * 0.5)).ceil() as usize).clamp(2, 64);
        for k in 0..=ns {
            let t = k as f64 / ns as f64;
            let x = p.at(&prep.points, t);
            let mut best = reach;
            let r = ((best / cell).ceil() as isize).min(nb as isize);
            let (ci, cj) = (idx(x.x, prep.min.x) as isize, idx(x.y, prep.min.y) as isize);
            query += 1;
            for j in (cj - r).max(0)..=(cj + r).min(nb as isize - 1) {
                for ii in (ci - r).max(0)..=(ci + r).min(nb as isize - 1) {
                    for &q in &buckets[j as usize * nb + ii as usize] {
                        let q = q as usize;
                        if stamp[q] == query || q == i {
                            continue;
                        }
                        stamp[q] = query;
                        let o = &prep.pieces[q];
                        if o.a == p.a || o.a == p.b || o.b == p.a || o.b == p.b {
                            continue;
                        }
                        if skip_near.contains(&(q as u32))
                            || o.owners.iter().any(|c| p.owners.contains(c))
                        {
                            continue;
                        }
                        let (a, b) = chord(q);
                        let d = cdt::dist_to_segment(x, a, b);
                        if d < best {
                            best = d;
                        }
                    }
                }
            }
            if best < reach {
                out[i].push((t, best / across));
            }
        }
    }
    out
}

/// Estimated triangle count from the size field on about 65 000 samples of the meshed
/// area, and at least the count asked by each region's own size.
fn estimate_triangles(
    coarse: &Cdt,
    size: &SizeField,
    meshed: &[bool],
    cap: &[f64],
    prep: &Prepared,
) -> f64 {
    let (w, h) = (prep.max.x - prep.min.x, prep.max.y - prep.min.y);
    let step = (w * h / 65536.0).sqrt().max(1e-300);
    let (nx, ny) = (
        (w / step).ceil() as usize + 1,
        (h / step).ceil() as usize + 1,
    );
    let mut total = 0.0;
    let mut hint = spade::handles::FixedVertexHandle::from_index(0);
    for j in 0..ny {
        for i in 0..nx {
            let x = Point2::new(
                prep.min.x + (i as f64 + 0.5) * step,
                prep.min.y + (j as f64 + 0.5) * step,
            );
            if let PositionInTriangulation::OnFace(f) = coarse.locate_with_hint(sp(x), hint) {
                let face = coarse.face(f);
                hint = face.vertices()[0].fix();
                let lab = *face.data() as usize;
                if meshed[lab] {
                    let hh = size.at(x).min(cap[lab]);
                    total += step * step / (0.433_012_701_892_219_3 * hh * hh);
                }
            }
        }
    }
    // Region caps on their own (catches regions smaller than the sampling step).
    let mut area = vec![0.0; meshed.len()];
    for f in coarse.inner_faces() {
        let [a, b, c] = f.vertices().map(|v| pt(v.position()));
        area[*f.data() as usize] += 0.5 * cdt::cross(a, b, c);
    }
    let mut by_cap = 0.0;
    for (lab, &m) in meshed.iter().enumerate() {
        if m && cap[lab].is_finite() {
            by_cap += area[lab] / (0.433_012_701_892_219_3 * cap[lab] * cap[lab]);
        }
    }
    total.max(by_cap)
}

/// New vertex numbers along a Hilbert curve (u32::MAX for unused vertices).
fn hilbert_numbering(pos: &[Point2], used: &[bool], min: Point2, max: Point2) -> Vec<u32> {
    let span = (max.x - min.x).max(max.y - min.y).max(1e-300);
    let n = 1u32 << 16;
    let mut keys: Vec<(u64, u32)> = pos
        .iter()
        .enumerate()
        .filter(|(i, _)| used[*i])
        .map(|(i, p)| {
            let q = |v: f64, o: f64| {
                (((v - o) / span * (n - 1) as f64)
                    .round()
                    .clamp(0.0, (n - 1) as f64)) as u32
            };
            (hilbert_d(n, q(p.x, min.x), q(p.y, min.y)), i as u32)
        })
        .collect();
    keys.sort_unstable();
    let mut out = vec![u32::MAX; pos.len()];
    for (k, &(_, i)) in keys.iter().enumerate() {
        out[i as usize] = k as u32;
    }
    out
}

/// Index of cell (x, y) along the Hilbert curve filling an n x n grid (n a power of two).
fn hilbert_d(n: u32, mut x: u32, mut y: u32) -> u64 {
    let mut d: u64 = 0;
    let mut s = n / 2;
    while s > 0 {
        let rx = u32::from(x & s > 0);
        let ry = u32::from(y & s > 0);
        d += s as u64 * s as u64 * ((3 * rx) ^ ry) as u64;
        if ry == 0 {
            if rx == 1 {
                x = n - 1 - x;
                y = n - 1 - y;
            }
            std::mem::swap(&mut x, &mut y);
        }
        s /= 2;
    }
    d
}
