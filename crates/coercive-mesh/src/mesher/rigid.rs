//! Rigid-group meshing: mesh the whole geometry once with the groups' outlines kept
//! unsplit, keep the groups' triangles, then for every placement re-mesh only the rest with
//! the moved outlines as fixed chains.

use std::collections::BTreeMap;

use spade::Triangulation;

use super::cdt::{cross, dist_to_segment, pt, NONE};
use super::{hilbert_numbering, Rest, RigidPart, Staged};
use crate::{Geometry, Mesh, MeshError, Placement, Point2, QualityReport, RegionId};

/// A geometry with its rigid groups meshed.
#[derive(Clone)]
pub(crate) struct Prepared {
    geometry: Geometry,
    staged: Staged,
    group_names: Vec<String>,
    /// Group nodes at the drawn placement (m), and the group of each.
    gverts: Vec<Point2>,
    gvert_group: Vec<usize>,
    gtris: Vec<[u32; 3]>,
    gtri_regions: Vec<RegionId>,
    /// Closed outline loops (group node ids), group on the left.
    loops: Vec<Vec<u32>>,
    loop_group: Vec<usize>,
    /// Per piece: group node ids (a to b) for pieces beside a group.
    piece_nodes: Vec<Option<Vec<u32>>>,
    skip_piece: Vec<bool>,
    exclude_point: Vec<bool>,
    active_seed: Vec<bool>,
}

impl std::fmt::Debug for Prepared {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("RigidMesher")
            .field("groups", &self.group_names)
            .field("group_nodes", &self.gverts.len())
            .field("group_triangles", &self.gtris.len())
            .finish()
    }
}

impl Prepared {
    pub(crate) fn group_node_count(&self) -> usize {
        self.gverts.len()
    }
    pub(crate) fn group_triangle_count(&self) -> usize {
        self.gtris.len()
    }
}

fn rigid_err(group: &str, why: String) -> MeshError {
    MeshError::RigidGroup {
        group: group.to_string(),
        why,
    }
}

/// The geometry to mesh the groups in: a copy of `g` whose group outline curves are sized
/// uniformly at the finest size found along any group outline at the drawn placement (so
/// that, moved anywhere, the outline is as fine as where it was closest to other parts),
/// and at most `outline_size` (m) when given.
fn sized_for_moves(g: &Geometry, outline_size: Option<f64>) -> Result<Geometry, MeshError> {
    let region_index = |name: &str| g.regions.iter().position(|r| r.name == name);
    let mut in_group = vec![false; g.regions.len() + 1];
    for grp in &g.rigid_groups {
        for r in &grp.regions {
            if let Some(k) = region_index(r) {
                in_group[k + 1] = true;
            }
        }
    }
    let staged = Staged::new(g)?;
    let fine = staged.triangulate(&[])?;
    let mut h = outline_size.unwrap_or(f64::INFINITY);
    let mut outline_curves = Vec::new();
    for i in 0..staged.prep.pieces.len() {
        let (l, r) = staged.sides[i];
        if in_group[l as usize] == in_group[r as usize] {
            continue;
        }
        outline_curves.extend(staged.prep.pieces[i].owners.iter().copied());
        let cap = staged.cap[l as usize].min(staged.cap[r as usize]);
        for v in staged.walk_piece(&fine, i) {
            let q = pt(fine
                .cdt
                .vertex(spade::handles::FixedVertexHandle::from_index(v as usize))
                .position());
            h = h.min(staged.size.at(q)).min(cap);
        }
    }
    let mut g2 = g.clone();
    if h.is_finite() && h > 0.0 {
        for c in outline_curves {
            let curve = &mut g2.curves[c as usize];
            curve.size = Some(curve.size.map_or(h, |s| s.min(h)));
        }
    }
    Ok(g2)
}

pub(crate) fn prepare(g: &Geometry, outline_size: Option<f64>) -> Result<Prepared, MeshError> {
    if g.rigid_groups.is_empty() {
        return Err(rigid_err("", "the geometry has no rigid group".into()));
    }
    super::input::validate(g)?;
    let region_index = |name: &str| g.regions.iter().position(|r| r.name == name);
    let mut group_of_label = vec![None; g.regions.len() + 1];
    for (gi, grp) in g.rigid_groups.iter().enumerate() {
        if grp.regions.is_empty() {
            return Err(rigid_err(&grp.name, "the group has no region".into()));
        }
        for r in &grp.regions {
            // validate() checked the names exist.
            let k = region_index(r).unwrap_or(0);
            group_of_label[k + 1] = Some(gi);
        }
    }
    // The first mesh refines the groups' outlines freely (quality on both sides); later
    // meshes keep them fixed. The outlines are sized uniformly first (see sized_for_moves).
    let sized = sized_for_moves(g, outline_size)?;
    let g = &sized;
    let staged = Staged::new(g)?;
    let fine = staged.triangulate(&[])?;
    let cdt = &fine.cdt;
    let mut region_of_label = vec![u32::MAX; g.regions.len() + 1];
    let mut nr = 0;
    for (k, r) in g.regions.iter().enumerate() {
        if !r.hole {
            region_of_label[k + 1] = nr;
            nr += 1;
        }
    }
    // Group faces and nodes.
    let nv = cdt.num_vertices();
    let pos: Vec<Point2> = cdt.vertices().map(|v| pt(v.position())).collect();
    let mut vgroup = vec![usize::MAX; nv];
    let mut faces = Vec::new();
    for f in cdt.inner_faces() {
        let lab = *f.data() as usize;
        if let Some(gi) = group_of_label[lab] {
            let v = f.vertices().map(|v| v.fix().index() as u32);
            for &x in &v {
                let slot = &mut vgroup[x as usize];
                if *slot != usize::MAX && *slot != gi {
                    let p = pos[x as usize];
                    return Err(rigid_err(
                        &g.rigid_groups[gi].name,
                        format!(
                            "touches group \"{}\" at ({}, {})",
                            g.rigid_groups[*slot].name, p.x, p.y
                        ),
                    ));
                }
                *slot = gi;
            }
            faces.push((v, lab, f.fix()));
        }
    }
    let used: Vec<bool> = vgroup.iter().map(|&x| x != usize::MAX).collect();
    let gid = hilbert_numbering(&pos, &used, staged.prep.min, staged.prep.max);
    let ng = used.iter().filter(|&&u| u).count();
    let mut gverts = vec![Point2::default(); ng];
    let mut gvert_group = vec![0; ng];
    for i in 0..nv {
        if gid[i] != u32::MAX {
            gverts[gid[i] as usize] = pos[i];
            gvert_group[gid[i] as usize] = vgroup[i];
        }
    }
    let mut tris: Vec<([u32; 3], RegionId)> = faces
        .iter()
        .map(|(v, lab, _)| {
            let v = v.map(|x| gid[x as usize]);
            let k = (0..3).min_by_key(|&k| v[k]).unwrap_or(0);
            (
                [v[k], v[(k + 1) % 3], v[(k + 2) % 3]],
                RegionId(region_of_label[*lab]),
            )
        })
        .collect();
    tris.sort_unstable_by_key(|(t, _)| *t);
    let (gtris, gtri_regions): (Vec<_>, Vec<_>) = tris.into_iter().unzip();

    // Holes surrounded by a group move with it: every face of such a hole borders only
    // the hole itself or that group.
    let mut hole_group: Vec<Option<usize>> = vec![None; g.regions.len() + 1];
    for (_, lab, f) in &faces {
        let gi = group_of_label[*lab].unwrap_or(0);
        for e in cdt.face(*f).adjacent_edges() {
            if let Some(o) = e.rev().face().as_inner() {
                let l = *o.data() as usize;
                if l > 0 && g.regions[l - 1].hole {
                    hole_group[l] = Some(gi);
                }
            }
        }
    }
    for f in cdt.inner_faces() {
        let l = *f.data() as usize;
        let Some(gi) = hole_group[l] else { continue };
        for e in f.adjacent_edges() {
            let other = e.rev().face().as_inner().map_or(0, |o| *o.data() as usize);
            if other != l && group_of_label[other] != Some(gi) {
                let q = pt(e.from().position());
                return Err(rigid_err(
                    &g.rigid_groups[gi].name,
                    format!(
                        "hole \"{}\" borders both the group and other parts (near ({}, {}))",
                        g.regions[l - 1].name,
                        q.x,
                        q.y
                    ),
                ));
            }
        }
    }
    // Outline edges: a group face on the left, anything else (but its holes) on the right.
    let mut next: BTreeMap<u32, u32> = BTreeMap::new();
    for (_, lab, f) in &faces {
        let gi = group_of_label[*lab].unwrap_or(0);
        for e in cdt.face(*f).adjacent_edges() {
            let other = e.rev().face().as_inner().map(|o| *o.data() as usize);
            if other.and_then(|l| group_of_label[l].or(hole_group[l])) == Some(gi) {
                continue;
            }
            let (a, b) = (gid[e.from().fix().index()], gid[e.to().fix().index()]);
            if next.insert(a, b).is_some() {
                let p = gverts[a as usize];
                return Err(rigid_err(
                    &g.rigid_groups[gi].name,
                    format!("its outline touches itself at ({}, {})", p.x, p.y),
                ));
            }
        }
    }
    let mut loops = Vec::new();
    let mut loop_group = Vec::new();
    let mut done = std::collections::HashSet::new();
    for (&start, _) in next.iter() {
        if done.contains(&start) {
            continue;
        }
        let mut lp = vec![start];
        done.insert(start);
        let mut cur = next[&start];
        while cur != start {
            if !done.insert(cur) || lp.len() > ng {
                return Err(MeshError::TriangulationFailed {
                    what: "a rigid group's outline is not a closed loop".into(),
                });
            }
            lp.push(cur);
            cur = *next
                .get(&cur)
                .ok_or_else(|| MeshError::TriangulationFailed {
                    what: "a rigid group's outline is open".into(),
                })?;
        }
        loop_group.push(gvert_group[start as usize]);
        loops.push(lp);
    }

    // Pieces beside a group are the group's; the rest must not touch the groups.
    let np = staged.prep.pieces.len();
    let mut skip_piece = vec![false; np];
    let mut piece_nodes = vec![None; np];
    for i in 0..np {
        let (l, r) = staged.sides[i];
        let beside = group_of_label[l as usize].is_some() || group_of_label[r as usize].is_some();
        let walk = staged.walk_piece(&fine, i);
        if beside {
            skip_piece[i] = true;
            let ids: Vec<u32> = walk.iter().map(|&v| gid[v as usize]).collect();
            if walk.is_empty() || ids.contains(&u32::MAX) {
                return Err(MeshError::TriangulationFailed {
                    what: "a rigid group's curve is not made of group nodes".into(),
                });
            }
            piece_nodes[i] = Some(ids);
        } else if let Some(&v) = walk.iter().find(|&&v| gid[v as usize] != u32::MAX) {
            let p = pos[v as usize];
            let gi = vgroup[v as usize];
            return Err(rigid_err(
                &g.rigid_groups[gi].name,
                format!(
                    "touches a fixed curve at ({}, {}): leave air between a rigid group and the fixed parts",
                    p.x, p.y
                ),
            ));
        }
    }
    let exclude_point: Vec<bool> = fine
        .point_index
        .iter()
        .map(|&v| v != NONE && gid[v as usize] != u32::MAX)
        .collect();
    let active_seed: Vec<bool> = (0..g.regions.len())
        .map(|k| group_of_label[k + 1].is_none() && hole_group[k + 1].is_none())
        .collect();
    Ok(Prepared {
        geometry: g.clone(),
        staged,
        group_names: g.rigid_groups.iter().map(|x| x.name.clone()).collect(),
        gverts,
        gvert_group,
        gtris,
        gtri_regions,
        loops,
        loop_group,
        piece_nodes,
        skip_piece,
        exclude_point,
        active_seed,
    })
}

/// Even-odd test of `p` against the loops of one group.
fn inside_group(p: Point2, loops: &[Vec<Point2>], loop_group: &[usize], group: usize) -> bool {
    let mut inside = false;
    for (lp, &gi) in loops.iter().zip(loop_group) {
        if gi != group {
            continue;
        }
        let n = lp.len();
        for i in 0..n {
            let (a, b) = (lp[i], lp[(i + 1) % n]);
            if (a.y > p.y) != (b.y > p.y) {
                let x = a.x + (p.y - a.y) / (b.y - a.y) * (b.x - a.x);
                if p.x < x {
                    inside = !inside;
                }
            }
        }
    }
    inside
}

/// Distance between segments `a b` and `c d` (0 when they cross).
fn segment_distance(a: Point2, b: Point2, c: Point2, d: Point2) -> f64 {
    let (d1, d2) = (cross(a, b, c), cross(a, b, d));
    let (d3, d4) = (cross(c, d, a), cross(c, d, b));
    if ((d1 > 0.0 && d2 < 0.0) || (d1 < 0.0 && d2 > 0.0))
        && ((d3 > 0.0 && d4 < 0.0) || (d3 < 0.0 && d4 > 0.0))
    {
        return 0.0;
    }
    dist_to_segment(a, c, d)
        .min(dist_to_segment(b, c, d))
        .min(dist_to_segment(c, a, b))
        .min(dist_to_segment(d, a, b))
}

pub(crate) fn mesh_at(
    p: &Prepared,
    placements: &[(&str, Placement)],
    want_report: bool,
) -> Result<(Mesh, Option<QualityReport>), MeshError> {
    let mut pl = vec![Placement::default(); p.group_names.len()];
    for (name, placement) in placements {
        let Some(k) = p.group_names.iter().position(|n| n == name) else {
            return Err(rigid_err(name, "no rigid group has this name".into()));
        };
        if !(placement.translation.is_finite()
            && placement.about.is_finite()
            && placement.rotation_rad.is_finite())
        {
            return Err(MeshError::NonFiniteCoordinate {
                item: format!("placement of rigid group \"{name}\""),
                x: placement.translation.x,
                y: placement.translation.y,
            });
        }
        pl[k] = *placement;
    }
    let verts: Vec<Point2> = p
        .gverts
        .iter()
        .zip(&p.gvert_group)
        .map(|(&v, &gi)| pl[gi].apply(v))
        .collect();
    let loops: Vec<Vec<Point2>> = p
        .loops
        .iter()
        .map(|lp| lp.iter().map(|&v| verts[v as usize]).collect())
        .collect();
    let prep = &p.staged.prep;
    let tol = prep.tol;
    // The kept geometry as discretised segments, and its points.
    let mut kept_edges: Vec<(Point2, Point2)> = Vec::new();
    for (i, piece) in prep.pieces.iter().enumerate() {
        if p.skip_piece[i] {
            continue;
        }
        let mut prev = prep.points[piece.a as usize];
        for &t in &p.staged.nodes[i] {
            let q = piece.at(&prep.points, t);
            kept_edges.push((prev, q));
            prev = q;
        }
        kept_edges.push((prev, prep.points[piece.b as usize]));
    }
    for (j, lp) in loops.iter().enumerate() {
        let gi = p.loop_group[j];
        let name = &p.group_names[gi];
        let (mut lo, mut hi) = (lp[0], lp[0]);
        for q in lp {
            lo = Point2::new(lo.x.min(q.x), lo.y.min(q.y));
            hi = Point2::new(hi.x.max(q.x), hi.y.max(q.y));
        }
        let n = lp.len();
        for &(c, d) in &kept_edges {
            if c.x.max(d.x) < lo.x - tol
                || c.x.min(d.x) > hi.x + tol
                || c.y.max(d.y) < lo.y - tol
                || c.y.min(d.y) > hi.y + tol
            {
                continue;
            }
            for k in 0..n {
                let (a, b) = (lp[k], lp[(k + 1) % n]);
                if segment_distance(a, b, c, d) <= tol {
                    return Err(rigid_err(
                        name,
                        format!(
                            "at this placement its outline meets a fixed curve near ({}, {})",
                            a.x, a.y
                        ),
                    ));
                }
            }
            if inside_group(c, &loops, &p.loop_group, gi) {
                return Err(rigid_err(
                    name,
                    format!(
                        "at this placement it covers the fixed point ({}, {})",
                        c.x, c.y
                    ),
                ));
            }
        }
        for (k, r) in p.geometry.regions.iter().enumerate() {
            if p.active_seed[k] && inside_group(r.seed, &loops, &p.loop_group, gi) {
                return Err(rigid_err(
                    name,
                    format!(
                        "at this placement it covers the point of region \"{}\" ({}, {})",
                        r.name, r.seed.x, r.seed.y
                    ),
                ));
            }
        }
    }
    for (a, gi) in loops.iter().zip(&p.loop_group) {
        for (b, gj) in loops.iter().zip(&p.loop_group) {
            if gi < gj {
                for w in 0..a.len() {
                    for z in 0..b.len() {
                        let d = segment_distance(
                            a[w],
                            a[(w + 1) % a.len()],
                            b[z],
                            b[(z + 1) % b.len()],
                        );
                        if d <= tol {
                            return Err(rigid_err(
                                &p.group_names[*gi],
                                format!(
                                    "at this placement it meets group \"{}\"",
                                    p.group_names[*gj]
                                ),
                            ));
                        }
                    }
                }
            }
        }
    }
    let fine = p.staged.triangulate_with(&Rest {
        extra: &loops,
        exclude_point: Some(&p.exclude_point),
        skip_piece: Some(&p.skip_piece),
        active_seed: Some(&p.active_seed),
    })?;
    // The groups must sit inside meshed regions: the face right of every outline edge is
    // meshed, the face left of it is not.
    for (j, lp) in loops.iter().enumerate() {
        let start = fine.extra_start[j];
        let n = lp.len();
        for (k, &q) in lp.iter().enumerate() {
            let (a, b) = (start + k, start + (k + 1) % n);
            let e = fine.cdt.get_edge_from_neighbors(
                spade::handles::FixedVertexHandle::from_index(a),
                spade::handles::FixedVertexHandle::from_index(b),
            );
            let ok = e.is_some_and(|e| {
                let left = e.face().as_inner().map_or(0, |f| *f.data()) as usize;
                let right = e.rev().face().as_inner().map_or(0, |f| *f.data()) as usize;
                !p.staged.meshed[left] && p.staged.meshed[right]
            });
            if !ok {
                return Err(rigid_err(
                    &p.group_names[p.loop_group[j]],
                    format!(
                        "at this placement its outline near ({}, {}) leaves the meshed area",
                        q.x, q.y
                    ),
                ));
            }
        }
    }
    let mut cdt_to_group = Vec::new();
    for (j, lp) in p.loops.iter().enumerate() {
        for (k, &v) in lp.iter().enumerate() {
            cdt_to_group.push(((fine.extra_start[j] + k) as u32, v));
        }
    }
    let part = RigidPart {
        verts: &verts,
        tris: &p.gtris,
        tri_regions: &p.gtri_regions,
        cdt_to_group,
        piece_nodes: &p.piece_nodes,
    };
    Ok(p.staged.output(&p.geometry, fine, Some(&part), want_report))
}
