//! Constrained Delaunay triangulation on spade, region labelling by flood fill, and our own
//! size-driven Delaunay refinement (Ruppert's algorithm with Chew/Shewchuk-style
//! safeguards) written on spade's public API.
//!
//! References: J. Ruppert, "A Delaunay refinement algorithm for quality 2-dimensional mesh
//! generation", J. Algorithms 18 (1995); J. R. Shewchuk, "Delaunay refinement algorithms
//! for triangular mesh generation", Comput. Geom. 22 (2002) (concentric-shell splitting and
//! the small-input-angle rule); G. L. Miller, S. E. Pav, N. J. Walkington, "When and why
//! Delaunay refinement algorithms work" (2005).

use std::collections::{HashMap, VecDeque};

use spade::handles::{FixedFaceHandle, FixedUndirectedEdgeHandle, FixedVertexHandle, InnerTag};
use spade::{
    ConstrainedDelaunayTriangulation, Intersection, LineIntersectionIterator,
    PositionInTriangulation, Triangulation,
};

use crate::{MeshError, Point2};

use super::size::SizeField;

/// Spade's point type.
pub(crate) type SPoint = spade::Point2<f64>;
/// The triangulation: face data is the label (0 = none, k + 1 = geometry region k).
pub(crate) type Cdt = ConstrainedDelaunayTriangulation<SPoint, (), (), u32>;

pub(crate) const NONE: u32 = u32::MAX;

pub(crate) fn sp(p: Point2) -> SPoint {
    SPoint::new(p.x, p.y)
}

pub(crate) fn pt(p: SPoint) -> Point2 {
    Point2::new(p.x, p.y)
}

/// Runs `f`, turning a panic inside the triangulation library into a typed error.
pub(crate) fn guarded<T>(what: &str, f: impl FnOnce() -> T) -> Result<T, MeshError> {
    std::panic::catch_unwind(std::panic::AssertUnwindSafe(f)).map_err(|e| {
        let msg = e
            .downcast_ref::<&str>()
            .map(|s| s.to_string())
            .or_else(|| e.downcast_ref::<String>().cloned())
            .unwrap_or_default();
        MeshError::TriangulationFailed {
            what: format!("{what}: {msg}"),
        }
    })
}

/// Bulk-loads a CDT; crossing constraints become an error with coordinates.
///
/// Four frame vertices are appended far outside the box `min`-`max`, so that every curve
/// edge has a triangle on both sides (then splitting a curve edge never leaves a sliver
/// against the hull). Faces touching a frame vertex are outside the drawing.
pub(crate) fn build(
    vertices: &[Point2],
    edges: Vec<[usize; 2]>,
    min: Point2,
    max: Point2,
) -> Result<Cdt, MeshError> {
    let d = (max.x - min.x).hypot(max.y - min.y);
    let mut verts: Vec<SPoint> = vertices.iter().map(|&p| sp(p)).collect();
    verts.extend([
        SPoint::new(min.x - d, min.y - d),
        SPoint::new(max.x + d, min.y - d),
        SPoint::new(max.x + d, max.y + d),
        SPoint::new(min.x - d, max.y + d),
    ]);
    let mut conflicts = Vec::new();
    let cdt = guarded("building the triangulation", || {
        Cdt::try_bulk_load_cdt(verts, edges, |e| conflicts.push(e))
    })?
    .map_err(|e| MeshError::TriangulationFailed {
        what: format!("{e:?}"),
    })?;
    if let Some([a, b]) = conflicts.first() {
        let (p, q) = (vertices[*a], vertices[*b]);
        return Err(MeshError::TriangulationFailed {
            what: format!(
                "curve piece from ({}, {}) to ({}, {}) crosses another one after discretisation (curves closer than the snap tolerance?)",
                p.x, p.y, q.x, q.y
            ),
        });
    }
    if cdt.num_vertices() != vertices.len() + 4 {
        return Err(MeshError::TriangulationFailed {
            what: "coincident vertices after discretisation".into(),
        });
    }
    Ok(cdt)
}

/// A region's seed for labelling.
pub(crate) struct Seed<'a> {
    pub name: &'a str,
    pub at: Point2,
    /// Inactive seeds are skipped.
    pub active: bool,
}

/// Labels faces by flood fill from every seed (label k + 1 for seed k) without crossing
/// constraint edges; checks seeds and enclosed areas without a seed.
pub(crate) fn label(
    cdt: &mut Cdt,
    seeds: &[Seed],
    tol: f64,
    allow_unseeded: bool,
) -> Result<(), MeshError> {
    let frame = cdt.num_vertices() - 4;
    let outside = |cdt: &Cdt, f: FixedFaceHandle<InnerTag>| {
        cdt.face(f)
            .vertices()
            .iter()
            .any(|v| v.fix().index() >= frame)
    };
    for f in cdt.fixed_inner_faces().collect::<Vec<_>>() {
        *cdt.face_data_mut(f) = 0;
    }
    let mut stack = Vec::new();
    for (k, s) in seeds.iter().enumerate() {
        if !s.active {
            continue;
        }
        let not_closed = || MeshError::RegionNotClosed {
            region: s.name.to_string(),
            x: s.at.x,
            y: s.at.y,
        };
        let on_curve = || MeshError::SeedOnCurve {
            region: s.name.to_string(),
            x: s.at.x,
            y: s.at.y,
        };
        let start = match cdt.locate(sp(s.at)) {
            PositionInTriangulation::OnFace(f) => f,
            PositionInTriangulation::OnEdge(e) => {
                let e = cdt.directed_edge(e);
                if cdt.is_constraint_edge(e.fix().as_undirected()) {
                    return Err(on_curve());
                }
                match e.face().as_inner() {
                    Some(f) => f.fix(),
                    None => return Err(not_closed()),
                }
            }
            PositionInTriangulation::OnVertex(_) => return Err(on_curve()),
            _ => return Err(not_closed()),
        };
        // A seed within the snap tolerance of a curve counts as on it.
        for e in cdt.face(start).adjacent_edges() {
            if cdt.is_constraint_edge(e.fix().as_undirected()) {
                let [p, q] = e.positions();
                if dist_to_segment(s.at, pt(p), pt(q)) <= tol {
                    return Err(on_curve());
                }
            }
        }
        if outside(cdt, start) {
            return Err(not_closed());
        }
        let lab = k as u32 + 1;
        let existing = *cdt.face(start).data();
        if existing != 0 {
            let first = seeds[existing as usize - 1].name;
            return Err(MeshError::SeedsInSameArea {
                first: first.to_string(),
                second: s.name.to_string(),
                x: s.at.x,
                y: s.at.y,
            });
        }
        *cdt.face_data_mut(start) = lab;
        stack.push(start);
        while let Some(f) = stack.pop() {
            let mut next = [None; 3];
            for (k, e) in cdt.face(f).adjacent_edges().iter().enumerate() {
                if cdt.is_constraint_edge(e.fix().as_undirected()) {
                    continue;
                }
                match e.rev().face().as_inner() {
                    None => return Err(not_closed()),
                    Some(n) => {
                        if outside(cdt, n.fix()) {
                            return Err(not_closed());
                        }
                        if *n.data() == 0 {
                            next[k] = Some(n.fix());
                        }
                    }
                }
            }
            for n in next.into_iter().flatten() {
                *cdt.face_data_mut(n) = lab;
                stack.push(n);
            }
        }
    }
    if allow_unseeded {
        return Ok(());
    }
    // Enclosed areas without a seed: unlabelled components not reaching the hull.
    let nf = cdt.num_all_faces();
    let mut seen = vec![false; nf];
    for f in cdt.fixed_inner_faces().collect::<Vec<_>>() {
        if seen[f.index()] || *cdt.face(f).data() != 0 || outside(cdt, f) {
            continue;
        }
        seen[f.index()] = true;
        stack.clear();
        stack.push(f);
        let mut reaches_outside = false;
        while let Some(g) = stack.pop() {
            for e in cdt.face(g).adjacent_edges() {
                if cdt.is_constraint_edge(e.fix().as_undirected()) {
                    continue;
                }
                match e.rev().face().as_inner() {
                    None => reaches_outside = true,
                    Some(n) if outside(cdt, n.fix()) => reaches_outside = true,
                    Some(n) => {
                        if !seen[n.fix().index()] && *n.data() == 0 {
                            seen[n.fix().index()] = true;
                            stack.push(n.fix());
                        }
                    }
                }
            }
        }
        if !reaches_outside {
            let c = cdt.face(f).center();
            return Err(MeshError::AreaWithoutRegion { x: c.x, y: c.y });
        }
    }
    Ok(())
}

pub(crate) fn dist_to_segment(p: Point2, a: Point2, b: Point2) -> f64 {
    let (dx, dy) = (b.x - a.x, b.y - a.y);
    let l2 = dx * dx + dy * dy;
    let t = if l2 > 0.0 {
        (((p.x - a.x) * dx + (p.y - a.y) * dy) / l2).clamp(0.0, 1.0)
    } else {
        0.0
    };
    p.distance(Point2::new(a.x + t * dx, a.y + t * dy))
}

/// What refinement needs to know about vertices, pieces and labels.
pub(crate) struct Refiner<'a> {
    pub cdt: Cdt,
    pub size: &'a SizeField,
    /// Per label (index = label): size cap (m), INFINITY if none.
    pub cap: Vec<f64>,
    /// Per label: refine (and keep) faces with this label.
    pub meshed: Vec<bool>,
    /// Per vertex index: the piece it lies inside (NONE for break points and free points).
    pub vpiece: Vec<u32>,
    /// Number of break points (vertex indices below are input vertices).
    pub n_break: usize,
    /// Piece joining two break points directly (unsplit piece), by sorted vertex pair.
    pub direct_piece: HashMap<(u32, u32), u32>,
    /// Per piece: fixed (never split).
    pub fixed: Vec<bool>,
    /// Per piece: its two break points.
    pub piece_ends: Vec<(u32, u32)>,
    /// Per piece: the partner piece of a curve pair.
    pub pair_of: Vec<Option<u32>>,
    /// (vertex, piece) -> the matching vertex on the partner piece.
    pub partner: HashMap<(u32, u32), u32>,
    /// Radius-edge bound B = 1 / (2 sin(min angle)).
    pub bad_ratio: f64,
    /// Refinement stops with an error above this many vertices.
    pub max_vertices: usize,
    /// Triangles' worth of the triangle limit (for the error message).
    pub max_triangles: usize,
    /// Shortest edge refinement will still shorten (m).
    pub min_edge: f64,
    /// The requested minimum angle (degrees).
    pub min_angle_deg: f64,
    /// Per piece: the circle (centre in m, radius in m) of an arc piece; split nodes go on
    /// it. Missing entries are straight pieces.
    pub arcs: Vec<Option<(Point2, f64)>>,
    faces: VecDeque<FixedFaceHandle<InnerTag>>,
    segs: VecDeque<FixedUndirectedEdgeHandle>,
}

impl<'a> Refiner<'a> {
    #[allow(clippy::too_many_arguments)]
    pub fn new(
        cdt: Cdt,
        size: &'a SizeField,
        cap: Vec<f64>,
        meshed: Vec<bool>,
        vpiece: Vec<u32>,
        n_break: usize,
        direct_piece: HashMap<(u32, u32), u32>,
        fixed: Vec<bool>,
        piece_ends: Vec<(u32, u32)>,
        min_angle_deg: f64,
        max_triangles: usize,
        min_edge: f64,
    ) -> Self {
        let bad_ratio = 1.0 / (2.0 * min_angle_deg.to_radians().sin());
        let max_vertices = max_triangles / 2 + cdt.num_vertices() + 16;
        Self {
            cdt,
            size,
            cap,
            meshed,
            vpiece,
            n_break,
            direct_piece,
            fixed,
            piece_ends,
            pair_of: Vec::new(),
            partner: HashMap::new(),
            bad_ratio,
            max_vertices,
            max_triangles,
            min_edge,
            min_angle_deg,
            arcs: Vec::new(),
            faces: VecDeque::new(),
            segs: VecDeque::new(),
        }
    }

    /// The local size at `x` inside a face with label `lab` (m).
    #[inline]
    pub fn local_size(&self, x: Point2, lab: u32) -> f64 {
        self.size.at(x).min(self.cap[lab as usize])
    }

    /// The piece a constraint edge between `u` and `v` lies on.
    pub fn piece_of_edge(&self, u: u32, v: u32) -> u32 {
        let (pu, pv) = (self.vpiece[u as usize], self.vpiece[v as usize]);
        if pu != NONE {
            pu
        } else if pv != NONE {
            pv
        } else {
            self.direct_piece
                .get(&(u.min(v), u.max(v)))
                .copied()
                .unwrap_or(NONE)
        }
    }

    fn is_fixed_edge(&self, e: FixedUndirectedEdgeHandle) -> bool {
        let [u, v] = self.cdt.undirected_edge(e).vertices();
        let p = self.piece_of_edge(u.fix().index() as u32, v.fix().index() as u32);
        p == NONE || self.fixed[p as usize]
    }

    fn face_meshed(&self, f: FixedFaceHandle<InnerTag>) -> bool {
        self.meshed[*self.cdt.face(f).data() as usize]
    }

    /// Runs refinement until every triangle of a meshed region meets the angle and size
    /// bounds (or is excused next to a small input angle or a fixed curve).
    pub fn refine(&mut self) -> Result<(), MeshError> {
        let faces: Vec<_> = self
            .cdt
            .fixed_inner_faces()
            .filter(|&f| self.face_meshed(f))
            .collect();
        self.faces.extend(faces);
        let segs: Vec<_> = self
            .cdt
            .fixed_undirected_edges()
            .filter(|&e| self.cdt.is_constraint_edge(e))
            .collect();
        self.segs.extend(segs);
        let n_initial = self.cdt.num_vertices();
        self.run_queues()?;
        self.improve_beside_fixed(n_initial)
    }

    /// Treats queued curve edges and faces until both queues are empty.
    fn run_queues(&mut self) -> Result<(), MeshError> {
        loop {
            if self.cdt.num_vertices() > self.max_vertices {
                return Err(MeshError::TooManyTriangles {
                    estimated: 2 * self.cdt.num_vertices(),
                    limit: self.max_triangles,
                    detail: " (reached during refinement)".into(),
                });
            }
            if let Some(e) = self.segs.pop_front() {
                if let Some(e) = self.encroached(e) {
                    self.split_segment(e)?;
                }
                continue;
            }
            let Some(f) = self.faces.pop_back() else {
                break;
            };
            if f.index() >= self.cdt.num_all_faces() {
                continue;
            }
            self.treat_face(f)?;
        }
        Ok(())
    }

    /// After refinement, triangles beside a fixed (never split) curve edge may stay below
    /// the minimum angle because a free vertex sits too close to one end of that edge and
    /// nothing may be split to push it away. Such vertices are removed (they were inserted
    /// by refinement, lie on no curve, and the fixed edge gets a fresh apex when the
    /// neighbourhood is refined again). This is repeated for at most `ROUNDS` rounds; the
    /// best state seen (highest smallest angle of the remaining bad triangles, then fewest
    /// of them) is kept, so the result is never worse than plain refinement. Deterministic:
    /// candidates are taken in face order and removed by position.
    fn improve_beside_fixed(&mut self, n_initial: usize) -> Result<(), MeshError> {
        const ROUNDS: usize = 8;
        let (mut best, mut victims) = self.leftovers(n_initial, false);
        if victims.is_empty() {
            return Ok(());
        }
        let mut saved: Option<Snapshot> = None;
        let mut current_is_best = true;
        for _ in 0..ROUNDS {
            if victims.is_empty() {
                break;
            }
            if current_is_best {
                saved = Some((self.cdt.clone(), self.vpiece.clone(), self.partner.clone()));
            }
            for q in victims {
                self.remove_free_vertex(q, n_initial)?;
            }
            self.run_queues()?;
            let (score, next) = self.leftovers(n_initial, false);
            current_is_best = score.0 > best.0 || (score.0 == best.0 && score.1 < best.1);
            if current_is_best {
                best = score;
                victims = next;
            } else {
                // The same nodes came back: clear the whole neighbourhood next time.
                victims = self.leftovers(n_initial, true).1;
            }
        }
        if !current_is_best {
            if let Some((cdt, vpiece, partner)) = saved {
                self.cdt = cdt;
                self.vpiece = vpiece;
                self.partner = partner;
            }
        }
        Ok(())
    }

    /// The smallest angle (degrees) and the number of the meshed triangles still below the
    /// minimum angle and not excused by a small input angle, and the positions of the free
    /// vertices (inserted by refinement, on no curve) to remove: for each such triangle
    /// touching a fixed curve edge, the free ends of its shortest edge (or, if none, its
    /// free corners).
    fn leftovers(&self, n_initial: usize, wide: bool) -> ((f64, usize), Vec<Point2>) {
        let mut worst = 180.0f64;
        let mut count = 0;
        let mut out: Vec<(usize, Point2)> = Vec::new();
        for face in self.cdt.inner_faces() {
            let lab = *face.data();
            if !self.meshed[lab as usize] {
                continue;
            }
            let vs = face.vertices();
            let p = vs.map(|v| pt(v.position()));
            let l2 = [sq(p[1], p[2]), sq(p[2], p[0]), sq(p[0], p[1])];
            let (kmin, lmin2) = argmin(&l2);
            let area2 = cross(p[0], p[1], p[2]);
            if area2 <= 0.0 || lmin2.sqrt() < self.min_edge {
                continue;
            }
            let r = (l2[0] * l2[1] * l2[2]).sqrt() / (2.0 * area2);
            if r <= self.bad_ratio * lmin2.sqrt() {
                continue;
            }
            let ids = vs.map(|v| v.fix().index() as u32);
            let apex = vs[kmin];
            let constraint = |x: FixedVertexHandle, y: FixedVertexHandle| {
                self.cdt
                    .get_edge_from_neighbors(x, y)
                    .is_some_and(|e| self.cdt.is_constraint_edge(e.fix().as_undirected()))
            };
            let (u, v) = (vs[(kmin + 1) % 3], vs[(kmin + 2) % 3]);
            if (constraint(apex.fix(), u.fix()) && constraint(apex.fix(), v.fix()))
                || self.share_input_apex(ids[(kmin + 1) % 3], ids[(kmin + 2) % 3])
            {
                continue;
            }
            let angle = (lmin2.sqrt() / (2.0 * r))
                .clamp(-1.0, 1.0)
                .asin()
                .to_degrees();
            worst = worst.min(angle);
            count += 1;
            let touches_fixed = vs.iter().any(|x| {
                x.out_edges().any(|e| {
                    let ue = e.fix().as_undirected();
                    self.cdt.is_constraint_edge(ue) && self.is_fixed_edge(ue)
                })
            });
            if !touches_fixed {
                continue;
            }
            let free = |k: usize| {
                let i = ids[k] as usize;
                i >= n_initial && self.vpiece[i] == NONE
            };
            let short = [(kmin + 1) % 3, (kmin + 2) % 3];
            let mut picked: Vec<usize> = short.iter().copied().filter(|&k| free(k)).collect();
            if picked.is_empty() {
                picked = (0..3).filter(|&k| free(k)).collect();
            }
            out.extend(picked.into_iter().map(|k| (ids[k] as usize, p[k])));
            if wide {
                for x in vs {
                    for e in x.out_edges() {
                        let w = e.to();
                        let i = w.fix().index();
                        if i >= n_initial && self.vpiece[i] == NONE {
                            out.push((i, pt(w.position())));
                        }
                    }
                }
            }
        }
        out.sort_unstable_by_key(|&(i, _)| i);
        out.dedup_by_key(|&mut (i, _)| i);
        ((worst, count), out.into_iter().map(|(_, q)| q).collect())
    }

    /// Removes the free vertex at `q` (if it is still there, was inserted by refinement and
    /// all faces around it carry one meshed label), labels the re-triangulated hole and
    /// queues its faces.
    fn remove_free_vertex(&mut self, q: Point2, n_initial: usize) -> Result<(), MeshError> {
        let v = match self.cdt.locate(sp(q)) {
            PositionInTriangulation::OnVertex(v) => v,
            _ => return Ok(()),
        };
        let i = v.index();
        if i < n_initial || self.vpiece[i] != NONE {
            return Ok(());
        }
        let vh = self.cdt.vertex(v);
        let mut lab = None;
        let mut ring: Vec<Point2> = Vec::new();
        let mut ring_ids: Vec<usize> = Vec::new();
        for e in vh.out_edges() {
            if self.cdt.is_constraint_edge(e.fix().as_undirected()) {
                return Ok(());
            }
            let Some(f) = e.face().as_inner() else {
                return Ok(());
            };
            let l = *f.data();
            if !self.meshed[l as usize] || lab.is_some_and(|x| x != l) {
                return Ok(());
            }
            lab = Some(l);
            ring.push(pt(e.to().position()));
            ring_ids.push(e.to().fix().index());
        }
        let Some(lab) = lab else { return Ok(()) };
        let last = self.cdt.num_vertices() - 1;
        let cdt = &mut self.cdt;
        guarded("removing a vertex", || {
            cdt.remove(v);
        })?;
        // Spade moves the last vertex into the freed index.
        let moved_piece = self.vpiece[last];
        self.vpiece.swap_remove(i);
        if last != i {
            for id in ring_ids.iter_mut() {
                if *id == last {
                    *id = i;
                }
            }
            if moved_piece != NONE {
                if let Some(w2) = self.partner.remove(&(last as u32, moved_piece)) {
                    self.partner.insert((i as u32, moved_piece), w2);
                    if let Some(o) = self.pair_of.get(moved_piece as usize).copied().flatten() {
                        self.partner.insert((w2, o), i as u32);
                    }
                }
            }
        }
        // The new faces (label 0) inside the former star get the label.
        let mut found = Vec::new();
        for &id in &ring_ids {
            for e in self
                .cdt
                .vertex(FixedVertexHandle::from_index(id))
                .out_edges()
            {
                if let Some(f) = e.face().as_inner() {
                    if *f.data() == 0 && inside_polygon(pt(f.center()), &ring) {
                        found.push(f.fix());
                    }
                }
            }
        }
        found.sort_unstable_by_key(|f| f.index());
        found.dedup();
        for f in found {
            *self.cdt.face_data_mut(f) = lab;
            self.faces.push_back(f);
        }
        Ok(())
    }

    /// `Some(e)` if constraint edge `e` is encroached by a vertex of a meshed face beside it
    /// and may be split.
    fn encroached(&self, e: FixedUndirectedEdgeHandle) -> Option<FixedUndirectedEdgeHandle> {
        if e.index() >= self.cdt.num_undirected_edges() || !self.cdt.is_constraint_edge(e) {
            return None;
        }
        if self.is_fixed_edge(e) {
            return None;
        }
        let de = self.cdt.directed_edge(e.as_directed());
        let [a, b] = de.positions();
        for side in [de, de.rev()] {
            if let Some(f) = side.face().as_inner() {
                if !self.meshed[*f.data() as usize] {
                    continue;
                }
                if let Some(o) = side.opposite_position() {
                    if in_diametral(pt(a), pt(b), pt(o)) {
                        return Some(e);
                    }
                }
            }
        }
        None
    }

    fn treat_face(&mut self, f: FixedFaceHandle<InnerTag>) -> Result<(), MeshError> {
        let face = self.cdt.face(f);
        let lab = *face.data();
        if !self.meshed[lab as usize] {
            return Ok(());
        }
        let vs = face.vertices();
        let p = vs.map(|v| pt(v.position()));
        let ids = vs.map(|v| v.fix().index() as u32);
        // Edge k is opposite vertex k.
        let l2 = [sq(p[1], p[2]), sq(p[2], p[0]), sq(p[0], p[1])];
        let (kmin, lmin2) = argmin(&l2);
        let lmax2 = l2[0].max(l2[1]).max(l2[2]);
        let area2 = cross(p[0], p[1], p[2]);
        if area2 <= 0.0 {
            return Ok(());
        }
        let centroid = Point2::new(
            (p[0].x + p[1].x + p[2].x) / 3.0,
            (p[0].y + p[1].y + p[2].y) / 3.0,
        );
        let h = self.local_size(centroid, lab);
        let too_large = lmax2 > h * h;
        // Circumradius R = abc / (4 area) = abc / (2 area2).
        let r = (l2[0] * l2[1] * l2[2]).sqrt() / (2.0 * area2);
        let skinny = r > self.bad_ratio * lmin2.sqrt();
        if !too_large && !skinny {
            return Ok(());
        }
        if !too_large {
            if lmin2.sqrt() < self.min_edge {
                return Ok(());
            }
            // The smallest angle lies at vertex kmin (opposite the shortest edge). If both
            // edges there are constraints, it is an input angle: keep it.
            let apex = vs[kmin];
            let (u, v) = (vs[(kmin + 1) % 3], vs[(kmin + 2) % 3]);
            let e1 = self.cdt.get_edge_from_neighbors(apex.fix(), u.fix());
            let e2 = self.cdt.get_edge_from_neighbors(apex.fix(), v.fix());
            if let (Some(e1), Some(e2)) = (e1, e2) {
                if self.cdt.is_constraint_edge(e1.fix().as_undirected())
                    && self.cdt.is_constraint_edge(e2.fix().as_undirected())
                {
                    return Ok(());
                }
            }
            // Shortest edge between two different pieces sharing a break point (the
            // small-angle rule of Miller, Pav and Walkington): refining cannot help.
            let (iu, iv) = (ids[(kmin + 1) % 3], ids[(kmin + 2) % 3]);
            if self.share_input_apex(iu, iv) {
                return Ok(());
            }
        }
        let c = circumcentre(p[0], p[1], p[2]);
        if !c.is_finite() {
            return Ok(());
        }
        let hint = vs[0].fix();
        let loc = self.cdt.locate_with_hint(sp(c), hint);
        let target_face = match loc {
            PositionInTriangulation::OnFace(g) => Some(g),
            PositionInTriangulation::OnEdge(e) => {
                if self.cdt.is_constraint_edge(e.as_undirected()) {
                    if !self.is_fixed_edge(e.as_undirected())
                        && self.split_segment(e.as_undirected())?
                    {
                        self.faces.push_back(f);
                    }
                    return Ok(());
                }
                self.cdt.directed_edge(e).face().as_inner().map(|g| g.fix())
            }
            PositionInTriangulation::OnVertex(_) => return Ok(()),
            _ => None,
        };
        let same_region = target_face.is_some_and(|g| *self.cdt.face(g).data() == lab);
        if !same_region {
            // The circumcentre lies across a constraint: split the first one crossed.
            if let Some(e) = self.first_constraint_crossed(centroid, c) {
                if !self.is_fixed_edge(e) {
                    if self.split_segment(e)? {
                        self.faces.push_back(f);
                    }
                } else if !self.insert_off_centre(&p, kmin, c, lab, hint)? {
                    self.insert_beside_fixed(e, centroid, lab, hint)?;
                }
            }
            return Ok(());
        }
        let g = target_face.unwrap_or(f);
        // Would the circumcentre encroach a constraint edge near it? Then split that edge
        // (or, for a fixed edge, insert a point beside it instead).
        if let Some(e) = self.encroached_by(g, c) {
            if self.is_fixed_edge(e) {
                if !self.insert_off_centre(&p, kmin, c, lab, hint)? {
                    self.insert_beside_fixed(e, centroid, lab, hint)?;
                }
            } else {
                if self.split_segment(e)? {
                    self.faces.push_back(f);
                }
            }
            return Ok(());
        }
        let near = self.cdt.face(g).vertices()[0].fix();
        self.insert_interior(c, near, lab)?;
        Ok(())
    }

    /// A bad triangle near a fixed edge `e` (never split) whose circumcentre would encroach
    /// it: insert the apex of a well-shaped triangle on `e` (an off-centre in the sense of
    /// Üngör, "Off-centers: a new type of Steiner points for computing size-optimal
    /// quality-guaranteed Delaunay triangulations", LATIN 2004) on the side of `towards`.
    /// The apex sits at the height of the equilateral triangle on `e`; where that point
    /// would cross or encroach another curve, that curve is split instead (if it is not
    /// fixed and not already shorter than half of `e`: this floor makes the process
    /// terminate), and the apex is tried again at lower heights (down to the one giving
    /// base angles of `min_angle`). Otherwise the triangle is left as it is (the quality
    /// report counts it).
    fn insert_beside_fixed(
        &mut self,
        e: FixedUndirectedEdgeHandle,
        towards: Point2,
        lab: u32,
        hint: FixedVertexHandle,
    ) -> Result<(), MeshError> {
        let [a, b] = self.cdt.undirected_edge(e).positions().map(pt);
        let len = a.distance(b);
        let (dx, dy) = (b.x - a.x, b.y - a.y);
        let mid = Point2::new(0.5 * (a.x + b.x), 0.5 * (a.y + b.y));
        let side = if cross(a, b, towards) > 0.0 {
            1.0
        } else {
            -1.0
        };
        // Heights as fractions of |e|: equilateral, then lower, down to base angles of
        // atan(2 h / |e|) = min angle + 1 degree.
        let lowest = 0.5 * (self.min_angle_deg + 1.0).to_radians().tan();
        let heights = [0.5 * 3f64.sqrt(), 0.6, 0.45, lowest.min(0.45)];
        for &hf in &heights {
            let k = side * hf;
            let q = Point2::new(mid.x - k * dy, mid.y + k * dx);
            // A curve between the edge and the apex: split it if allowed, else try lower.
            let start = Point2::new(mid.x + 1e-3 * (q.x - mid.x), mid.y + 1e-3 * (q.y - mid.y));
            if let Some(c) = self.first_constraint_crossed(start, q) {
                if c != e {
                    if self.split_near_fixed(c, len)? {
                        return Ok(());
                    }
                    continue;
                }
            }
            let g = match self.cdt.locate_with_hint(sp(q), hint) {
                PositionInTriangulation::OnFace(g) => g,
                _ => continue,
            };
            if *self.cdt.face(g).data() != lab {
                continue;
            }
            if let Some(c) = self.encroached_by(g, q) {
                if c != e && self.split_near_fixed(c, len)? {
                    return Ok(());
                }
                continue;
            }
            // Not too close to an existing vertex of the face it falls in.
            let near = self
                .cdt
                .face(g)
                .vertices()
                .iter()
                .map(|v| pt(v.position()).distance(q))
                .fold(f64::INFINITY, f64::min);
            if near < 0.4 * len {
                continue;
            }
            return self.insert_interior(q, hint, lab);
        }
        Ok(())
    }

    /// A bad triangle `p` (shortest edge opposite corner `kmin`) whose circumcentre `c`
    /// would encroach a fixed edge: try off-centres instead (Üngör 2004): points on the
    /// perpendicular bisector of the shortest edge, between its midpoint and `c`, at the
    /// height of the equilateral triangle on that edge and lower. A candidate is inserted
    /// if it lies in the same region, encroaches no curve edge and keeps at least 0.4 times
    /// the shortest edge from the vertices of the face it falls in. Returns whether a point
    /// was inserted.
    fn insert_off_centre(
        &mut self,
        p: &[Point2; 3],
        kmin: usize,
        c: Point2,
        lab: u32,
        hint: FixedVertexHandle,
    ) -> Result<bool, MeshError> {
        let (u, v) = (p[(kmin + 1) % 3], p[(kmin + 2) % 3]);
        let l = u.distance(v);
        let m = Point2::new(0.5 * (u.x + v.x), 0.5 * (u.y + v.y));
        let dc = m.distance(c);
        if dc.is_nan() || dc <= 0.0 || l < self.min_edge {
            return Ok(false);
        }
        let dir = Point2::new((c.x - m.x) / dc, (c.y - m.y) / dc);
        for hf in [0.5 * 3f64.sqrt(), 0.7, 0.55] {
            let d = (hf * l).min(dc);
            let q = Point2::new(m.x + d * dir.x, m.y + d * dir.y);
            let g = match self.cdt.locate_with_hint(sp(q), hint) {
                PositionInTriangulation::OnFace(g) => g,
                _ => continue,
            };
            if *self.cdt.face(g).data() != lab || self.encroached_by(g, q).is_some() {
                continue;
            }
            let near = self
                .cdt
                .face(g)
                .vertices()
                .iter()
                .map(|x| pt(x.position()).distance(q))
                .fold(f64::INFINITY, f64::min);
            if near < 0.4 * l {
                continue;
            }
            self.insert_interior(q, hint, lab)?;
            return Ok(true);
        }
        Ok(false)
    }

    /// Splits the constraint edge `c` met while placing a point beside a fixed edge of
    /// length `fixed_len`, unless it is fixed or shorter than `fixed_len / 2` (then no split
    /// can help that triangle). Returns whether it was split.
    fn split_near_fixed(
        &mut self,
        c: FixedUndirectedEdgeHandle,
        fixed_len: f64,
    ) -> Result<bool, MeshError> {
        if self.is_fixed_edge(c) {
            return Ok(false);
        }
        let [p, q] = self.cdt.undirected_edge(c).positions().map(pt);
        if p.distance(q) < 0.5 * fixed_len {
            return Ok(false);
        }
        self.split_segment(c)
    }

    /// True when `u` and `v` lie on two different pieces that share a break point.
    fn share_input_apex(&self, u: u32, v: u32) -> bool {
        let ends = |x: u32| -> Option<(u32, u32, u32)> {
            let p = self.vpiece[x as usize];
            (p != NONE).then(|| {
                let (a, b) = self.piece_ends[p as usize];
                (p, a, b)
            })
        };
        let apex = match (ends(u), ends(v)) {
            (Some((pu, a, b)), Some((pv, c, d))) if pu != pv => {
                if a == c || a == d {
                    a
                } else if b == c || b == d {
                    b
                } else {
                    return false;
                }
            }
            _ => return false,
        };
        if apex == NONE {
            return false;
        }
        // Only a small input angle (below 60 degrees) excuses the triangle.
        let pos = |x: u32| {
            pt(self
                .cdt
                .vertex(FixedVertexHandle::from_index(x as usize))
                .position())
        };
        let (s, pu, pv) = (pos(apex), pos(u), pos(v));
        let (ax, ay, bx, by) = (pu.x - s.x, pu.y - s.y, pv.x - s.x, pv.y - s.y);
        let dot = ax * bx + ay * by;
        dot > 0.5 * (ax * ax + ay * ay).sqrt() * (bx * bx + by * by).sqrt()
    }

    fn first_constraint_crossed(
        &self,
        from: Point2,
        to: Point2,
    ) -> Option<FixedUndirectedEdgeHandle> {
        let it = guarded("walking the triangulation", || {
            let mut found = None;
            for x in LineIntersectionIterator::new(&self.cdt, sp(from), sp(to)) {
                match x {
                    Intersection::EdgeIntersection(e) | Intersection::EdgeOverlap(e) => {
                        if self.cdt.is_constraint_edge(e.fix().as_undirected()) {
                            found = Some(e.fix().as_undirected());
                            break;
                        }
                    }
                    Intersection::VertexIntersection(_) => break,
                }
            }
            found
        });
        it.ok().flatten()
    }

    /// A constraint edge of face `g` or of its neighbours whose diametral circle
    /// contains `c`.
    fn encroached_by(
        &self,
        g: FixedFaceHandle<InnerTag>,
        c: Point2,
    ) -> Option<FixedUndirectedEdgeHandle> {
        let face = self.cdt.face(g);
        for e in face.adjacent_edges() {
            let ue = e.fix().as_undirected();
            if self.cdt.is_constraint_edge(ue) {
                let [a, b] = e.positions();
                if in_diametral(pt(a), pt(b), c) {
                    return Some(ue);
                }
            } else if let Some(n) = e.rev().face().as_inner() {
                for e2 in n.adjacent_edges() {
                    let ue2 = e2.fix().as_undirected();
                    if ue2 != ue && self.cdt.is_constraint_edge(ue2) {
                        let [a, b] = e2.positions();
                        if in_diametral(pt(a), pt(b), c) {
                            return Some(ue2);
                        }
                    }
                }
            }
        }
        None
    }

    fn insert_interior(
        &mut self,
        c: Point2,
        hint: FixedVertexHandle,
        lab: u32,
    ) -> Result<(), MeshError> {
        let before = self.cdt.num_vertices();
        let cdt = &mut self.cdt;
        let v =
            guarded("inserting a vertex", || cdt.insert_with_hint(sp(c), hint))?.map_err(|e| {
                MeshError::TriangulationFailed {
                    what: format!("inserting ({}, {}): {e:?}", c.x, c.y),
                }
            })?;
        if v.index() < before {
            return Ok(());
        }
        self.vpiece.push(NONE);
        let star: Vec<_> = self
            .cdt
            .vertex(v)
            .out_edges()
            .map(|e| {
                (
                    e.face().as_inner().map(|f| f.fix()),
                    e.next().fix().as_undirected(),
                )
            })
            .collect();
        for (f, opposite) in star {
            if let Some(f) = f {
                *self.cdt.face_data_mut(f) = lab;
                self.faces.push_back(f);
            }
            if self.cdt.is_constraint_edge(opposite) {
                self.segs.push_back(opposite);
            }
        }
        Ok(())
    }

    /// Splits a constraint edge (not fixed) at its middle, or at a power-of-two distance from
    /// an input vertex (concentric shells, so that runaway splitting next to small input
    /// angles stops). An edge of a paired piece is split together with its partner edge at
    /// the same fraction, so that paired curves keep matched nodes. Returns whether the
    /// edge was split (callers must not retry a triangle when it was not: no progress).
    pub fn split_segment(&mut self, e: FixedUndirectedEdgeHandle) -> Result<bool, MeshError> {
        let de = self.cdt.directed_edge(e.as_directed());
        let (u, v) = (de.from().fix(), de.to().fix());
        let (pu, pv) = (pt(de.from().position()), pt(de.to().position()));
        let piece = self.piece_of_edge(u.index() as u32, v.index() as u32);
        if piece == NONE {
            return Ok(false);
        }
        let len = pu.distance(pv);
        if len < 2.0 * self.min_edge {
            return Ok(false);
        }
        let u_input = (u.index()) < self.n_break;
        let v_input = (v.index()) < self.n_break;
        let t = if u_input != v_input {
            // Distance from the input vertex rounded to a power of two.
            let half = 0.5 * len;
            let d = 2f64.powf(half.log2().round());
            let frac = (d / len).clamp(0.25, 0.75);
            if u_input {
                frac
            } else {
                1.0 - frac
            }
        } else {
            0.5
        };
        let (ui, vi) = (u.index() as u32, v.index() as u32);
        let partner = self.pair_of[piece as usize].map(|other| {
            let pu2 = self.partner.get(&(ui, piece)).copied();
            let pv2 = self.partner.get(&(vi, piece)).copied();
            (other, pu2, pv2)
        });
        let Some(w) = self.split_at(u, v, t, piece)? else {
            return Ok(false);
        };
        if let Some((other, Some(u2), Some(v2))) = partner {
            let (hu2, hv2) = (
                FixedVertexHandle::from_index(u2 as usize),
                FixedVertexHandle::from_index(v2 as usize),
            );
            let Some(w2) = self.split_at(hu2, hv2, t, other)? else {
                return Err(MeshError::TriangulationFailed {
                    what: "a paired curve edge could not be split like its partner".into(),
                });
            };
            let (w, w2) = (w.index() as u32, w2.index() as u32);
            self.partner.insert((w, piece), w2);
            self.partner.insert((w2, other), w);
        } else if partner.is_some() {
            return Err(MeshError::TriangulationFailed {
                what: "a paired curve edge has no partner".into(),
            });
        }
        Ok(true)
    }

    /// Splits the constraint edge `u v` of `piece` at fraction `t` from `u`; returns the
    /// new vertex (None if the point already existed).
    fn split_at(
        &mut self,
        u: FixedVertexHandle,
        v: FixedVertexHandle,
        t: f64,
        piece: u32,
    ) -> Result<Option<FixedVertexHandle>, MeshError> {
        let Some(de) = self.cdt.get_edge_from_neighbors(u, v) else {
            return Err(MeshError::TriangulationFailed {
                what: "a curve edge to split is missing".into(),
            });
        };
        let (pu, pv) = (pt(de.from().position()), pt(de.to().position()));
        let (lab_left, lab_right) = (
            de.face().as_inner().map_or(0, |f| *f.data()),
            de.rev().face().as_inner().map_or(0, |f| *f.data()),
        );
        let mut m = Point2::new(pu.x + t * (pv.x - pu.x), pu.y + t * (pv.y - pu.y));
        // On an arc the node goes on the circle (the point of the arc on the ray from the
        // centre through the chord point), provided it falls in a triangle beside the edge
        // (then the two new edges cross nothing); otherwise it stays on the chord.
        let mut off_chord = false;
        if let Some(&Some((c, r))) = self.arcs.get(piece as usize) {
            let d = m.distance(c);
            if d > 0.0 {
                let q = Point2::new(c.x + r * (m.x - c.x) / d, c.y + r * (m.y - c.y) / d);
                let beside = match self.cdt.locate_with_hint(sp(q), u) {
                    PositionInTriangulation::OnFace(f) => [de.face(), de.rev().face()]
                        .iter()
                        .any(|x| x.as_inner().is_some_and(|x| x.fix() == f)),
                    _ => false,
                };
                if beside {
                    off_chord = q != m;
                    m = q;
                }
            }
        }
        let before = self.cdt.num_vertices();
        let cdt = &mut self.cdt;
        let w = guarded("splitting a curve edge", || cdt.insert_with_hint(sp(m), u))?.map_err(
            |err| MeshError::TriangulationFailed {
                what: format!("inserting ({}, {}): {err:?}", m.x, m.y),
            },
        )?;
        if w.index() < before {
            return Ok(None);
        }
        self.vpiece.push(piece);
        // Unless the point fell exactly on the edge (then spade split the constraint), make
        // the two halves constraints ourselves.
        let halves_ok = |cdt: &Cdt| {
            [u, v].iter().all(|&x| {
                cdt.get_edge_from_neighbors(x, w)
                    .is_some_and(|h| cdt.is_constraint_edge(h.fix().as_undirected()))
            })
        };
        let mut repaired = false;
        if !halves_ok(&self.cdt) {
            let cdt = &mut self.cdt;
            guarded("re-joining a split curve edge", || {
                if let Some(old) = cdt.get_edge_from_neighbors(u, v) {
                    let old = old.fix().as_undirected();
                    cdt.remove_constraint_edge(old);
                }
                cdt.add_constraint(u, w);
                cdt.add_constraint(w, v);
            })?;
            if !halves_ok(&self.cdt) {
                return Err(MeshError::TriangulationFailed {
                    what: format!("could not split the curve edge at ({}, {})", m.x, m.y),
                });
            }
            repaired = true;
        }
        // Label the faces around the new vertex by their side of the line u -> v.
        let star: Vec<_> = self
            .cdt
            .vertex(w)
            .out_edges()
            .map(|e| {
                (
                    e.face().as_inner().map(|f| f.fix()),
                    e.next().fix().as_undirected(),
                )
            })
            .collect();
        // Off the chord, the side is taken of the path u -> w -> v: the left of it at w is
        // the wedge turning counter-clockwise from the direction w -> v to w -> u.
        let wedge = |c: Point2| -> bool {
            let ang = |p: Point2| (p.y - m.y).atan2(p.x - m.x);
            let tau = std::f64::consts::TAU;
            let base = ang(pv);
            ((ang(c) - base).rem_euclid(tau)) < ((ang(pu) - base).rem_euclid(tau))
        };
        for (f, opposite) in star {
            if let Some(f) = f {
                let c = pt(self.cdt.face(f).center());
                let left = if off_chord {
                    wedge(c)
                } else {
                    cross(pu, pv, c) > 0.0
                };
                let lab = if left { lab_left } else { lab_right };
                *self.cdt.face_data_mut(f) = lab;
                if self.meshed[lab as usize] {
                    self.faces.push_back(f);
                }
                if repaired {
                    self.repair_labels_from(f);
                }
            }
            if self.cdt.is_constraint_edge(opposite) {
                self.segs.push_back(opposite);
            }
        }
        for x in [u, v] {
            if let Some(h) = self.cdt.get_edge_from_neighbors(x, w) {
                self.segs.push_back(h.fix().as_undirected());
            }
        }
        Ok(Some(w))
    }

    /// Spreads face `f`'s label to neighbours across non-constraint edges whose label
    /// differs (after spade re-triangulated an area while forcing a constraint).
    fn repair_labels_from(&mut self, f: FixedFaceHandle<InnerTag>) {
        let lab = *self.cdt.face(f).data();
        let mut stack = vec![f];
        while let Some(g) = stack.pop() {
            let next: Vec<_> = self
                .cdt
                .face(g)
                .adjacent_edges()
                .iter()
                .filter(|e| !self.cdt.is_constraint_edge(e.fix().as_undirected()))
                .filter_map(|e| e.rev().face().as_inner())
                .filter(|n| *n.data() != lab)
                .map(|n| n.fix())
                .collect();
            for n in next {
                *self.cdt.face_data_mut(n) = lab;
                if self.meshed[lab as usize] {
                    self.faces.push_back(n);
                }
                stack.push(n);
            }
        }
    }
}

/// A refinement state kept while trying vertex removals: the triangulation, the piece of
/// every vertex and the partner map of paired curves.
type Snapshot = (Cdt, Vec<u32>, HashMap<(u32, u32), u32>);

/// Even-odd test of `p` against the closed polygon `ring`.
fn inside_polygon(p: Point2, ring: &[Point2]) -> bool {
    let n = ring.len();
    let mut inside = false;
    for k in 0..n {
        let (a, b) = (ring[k], ring[(k + 1) % n]);
        if (a.y > p.y) != (b.y > p.y) {
            let x = a.x + (p.y - a.y) / (b.y - a.y) * (b.x - a.x);
            if p.x < x {
                inside = !inside;
            }
        }
    }
    inside
}

#[inline]
fn sq(a: Point2, b: Point2) -> f64 {
    let (dx, dy) = (a.x - b.x, a.y - b.y);
    dx * dx + dy * dy
}

/// Twice the signed area of triangle a b c (positive when counter-clockwise).
#[inline]
pub(crate) fn cross(a: Point2, b: Point2, c: Point2) -> f64 {
    (b.x - a.x) * (c.y - a.y) - (b.y - a.y) * (c.x - a.x)
}

fn argmin(v: &[f64; 3]) -> (usize, f64) {
    let mut k = 0;
    for i in 1..3 {
        if v[i] < v[k] {
            k = i;
        }
    }
    (k, v[k])
}

/// True when `p` lies strictly inside the circle with diameter `a b` (the angle a p b is
/// obtuse).
#[inline]
fn in_diametral(a: Point2, b: Point2, p: Point2) -> bool {
    (a.x - p.x) * (b.x - p.x) + (a.y - p.y) * (b.y - p.y) < 0.0
}

pub(crate) fn circumcentre(a: Point2, b: Point2, c: Point2) -> Point2 {
    let (bx, by) = (b.x - a.x, b.y - a.y);
    let (cx, cy) = (c.x - a.x, c.y - a.y);
    let d = 2.0 * (bx * cy - by * cx);
    let b2 = bx * bx + by * by;
    let c2 = cx * cx + cy * cy;
    Point2::new(a.x + (cy * b2 - by * c2) / d, a.y + (bx * c2 - cx * b2) / d)
}
