//! Input preparation: validation, snapping of nearly coincident points, arcs cut into
//! chords, and splitting of crossing, touching and overlapping curves into shared pieces.

use std::collections::HashMap;

use crate::{CurveShape, Geometry, MeshError, Point2};

/// A circular arc carried by one piece: the point at fraction `s` of the piece is
/// `centre + radius * (cos(angle_a + s * sweep), sin(angle_a + s * sweep))`.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct ArcInfo {
    pub centre: Point2,
    pub radius: f64,
    pub angle_a: f64,
    pub sweep: f64,
}

/// One unique piece of curve between two break points (stored from `a` to `b`).
#[derive(Clone, Debug)]
pub(crate) struct Piece {
    pub a: u32,
    pub b: u32,
    /// The arc the piece follows from `a` to `b`, if it is an unsplit arc chord.
    pub arc: Option<ArcInfo>,
    /// Input curves running along this piece (sorted, unique).
    pub owners: Vec<u32>,
    /// Smallest size asked by an owner curve (m).
    pub size: Option<f64>,
}

impl Piece {
    /// Position at fraction `s` in [0, 1] from `a` to `b`.
    pub fn at(&self, points: &[Point2], s: f64) -> Point2 {
        match self.arc {
            Some(arc) => {
                let ang = arc.angle_a + s * arc.sweep;
                Point2::new(
                    arc.centre.x + arc.radius * ang.cos(),
                    arc.centre.y + arc.radius * ang.sin(),
                )
            }
            None => {
                let (p, q) = (points[self.a as usize], points[self.b as usize]);
                Point2::new(p.x + s * (q.x - p.x), p.y + s * (q.y - p.y))
            }
        }
    }
}

/// The prepared input.
#[derive(Clone, Debug)]
pub(crate) struct Prepared {
    /// Break points: user points (snapped), arc chord points and intersections.
    pub points: Vec<Point2>,
    /// User size at each point, if any.
    pub point_size: Vec<Option<f64>>,
    /// Unique curve pieces.
    pub pieces: Vec<Piece>,
    /// For every input curve, its pieces from start to end: (piece, runs from a to b).
    pub chains: Vec<Vec<(u32, bool)>>,
    /// Lower-left corner of the bounding box (m).
    pub min: Point2,
    /// Upper-right corner of the bounding box (m).
    pub max: Point2,
    /// The drawing's diagonal (m).
    pub diag: f64,
    /// Snapping distance (m).
    pub tol: f64,
    /// Resolved settings.
    pub max_size: f64,
}

fn finite(item: impl FnOnce() -> String, p: Point2) -> Result<(), MeshError> {
    if p.is_finite() {
        Ok(())
    } else {
        Err(MeshError::NonFiniteCoordinate {
            item: item(),
            x: p.x,
            y: p.y,
        })
    }
}

/// The smallest nonzero coordinate magnitude (m) the triangulation takes (its exact
/// predicates stop at about 1.8e-43; a margin is kept).
const MIN_COORDINATE: f64 = 1e-40;
/// The largest coordinate magnitude (m) the triangulation takes (its limit is about 3.2e60,
/// and the bounding box it adds around the drawing is three times wider).
const MAX_COORDINATE: f64 = 1e50;

/// Refuses a point the triangulation cannot hold: a nonzero coordinate below
/// [`MIN_COORDINATE`] in magnitude (a value that means zero, e.g. 1e-300) or one above
/// [`MAX_COORDINATE`].
fn representable(item: impl FnOnce() -> String, p: Point2) -> Result<(), MeshError> {
    let ok = |v: f64| v == 0.0 || (MIN_COORDINATE..=MAX_COORDINATE).contains(&v.abs());
    if ok(p.x) && ok(p.y) {
        Ok(())
    } else {
        Err(MeshError::CoordinateOutOfRange {
            item: item(),
            x: p.x,
            y: p.y,
        })
    }
}

fn positive_size(item: impl FnOnce() -> String, v: f64, diag: f64) -> Result<(), MeshError> {
    if !(v.is_finite() && v > 0.0) {
        return Err(MeshError::InvalidSize {
            item: item(),
            value: v,
            why: "sizes must be positive and finite (m)".into(),
        });
    }
    if diag > 0.0 && v < diag * 1e-7 {
        return Err(MeshError::InvalidSize {
            item: item(),
            value: v,
            why: format!(
                "absurdly small for a drawing {diag:.6e} m across (below 1e-7 of its diagonal)"
            ),
        });
    }
    Ok(())
}

/// Checks settings, coordinates, references and names that need no geometry work.
pub(crate) fn validate(g: &Geometry) -> Result<(), MeshError> {
    let s = &g.settings;
    let bad = |item: &str, value: f64, why: &str| MeshError::InvalidSize {
        item: item.to_string(),
        value,
        why: why.to_string(),
    };
    if !(s.growth.is_finite() && s.growth > 0.0 && s.growth <= 10.0) {
        return Err(bad("growth", s.growth, "must lie in (0, 10]"));
    }
    if !(s.min_angle_deg.is_finite() && s.min_angle_deg > 0.0 && s.min_angle_deg <= 33.0) {
        return Err(bad(
            "min_angle_deg",
            s.min_angle_deg,
            "must lie in (0, 33] degrees (refinement may not terminate above)",
        ));
    }
    if s.max_triangles == 0 {
        return Err(bad("max_triangles", 0.0, "must be at least 1"));
    }
    if !(s.elements_across_gap.is_finite()
        && s.elements_across_gap >= 0.0
        && s.elements_across_gap <= 100.0)
    {
        return Err(bad(
            "elements_across_gap",
            s.elements_across_gap,
            "must lie in [0, 100]",
        ));
    }
    if !(s.snap_tolerance.is_finite() && s.snap_tolerance > 0.0 && s.snap_tolerance <= 1e-3) {
        return Err(bad(
            "snap_tolerance",
            s.snap_tolerance,
            "must lie in (0, 1e-3] (fraction of the diagonal)",
        ));
    }
    if g.curves.is_empty() {
        return Err(MeshError::EmptyGeometry {
            what: "no curves".into(),
        });
    }
    if !g.regions.iter().any(|r| !r.hole) {
        return Err(MeshError::EmptyGeometry {
            what: "no region (only holes or nothing)".into(),
        });
    }
    for (i, p) in g.points.iter().enumerate() {
        finite(|| format!("point {i}"), p.position)?;
        representable(|| format!("point {i}"), p.position)?;
    }
    for (i, c) in g.curves.iter().enumerate() {
        for p in [c.shape.start(), c.shape.end()] {
            if p.index() >= g.points.len() {
                return Err(MeshError::UnknownPoint {
                    curve: i,
                    point: p.index(),
                });
            }
        }
        if let CurveShape::Arc { centre, .. } = c.shape {
            finite(|| format!("centre of arc {i}"), centre)?;
        }
    }
    let mut names = std::collections::HashSet::new();
    for r in &g.regions {
        finite(|| format!("point of region \"{}\"", r.name), r.seed)?;
        if !names.insert(r.name.as_str()) {
            return Err(MeshError::DuplicateRegionName {
                name: r.name.clone(),
            });
        }
    }
    for (i, pair) in g.curve_pairs.iter().enumerate() {
        for c in [pair.first, pair.second] {
            if c.index() >= g.curves.len() {
                return Err(MeshError::UnknownCurve {
                    item: format!("curve pair {i}"),
                    curve: c.index(),
                });
            }
        }
        if pair.first == pair.second {
            return Err(MeshError::CurvePairMismatch {
                pair: i,
                first: pair.first.index(),
                second: pair.second.index(),
                why: "a curve cannot be paired with itself".into(),
            });
        }
    }
    let mut group_of = HashMap::new();
    let mut group_names = std::collections::HashSet::new();
    for grp in &g.rigid_groups {
        if !group_names.insert(grp.name.as_str()) {
            return Err(MeshError::RigidGroup {
                group: grp.name.clone(),
                why: "the group name is used twice".into(),
            });
        }
        for r in &grp.regions {
            match g.regions.iter().find(|x| &x.name == r) {
                None => {
                    return Err(MeshError::UnknownRegion {
                        item: format!("rigid group \"{}\"", grp.name),
                        name: r.clone(),
                    })
                }
                Some(x) if x.hole => {
                    return Err(MeshError::RigidGroup {
                        group: grp.name.clone(),
                        why: format!("\"{r}\" is a hole, not a region"),
                    })
                }
                _ => {}
            }
            if let Some(other) = group_of.insert(r.as_str(), grp.name.as_str()) {
                return Err(MeshError::RigidGroup {
                    group: grp.name.clone(),
                    why: format!("region \"{r}\" is also in group \"{other}\""),
                });
            }
        }
    }
    Ok(())
}

/// Builds the prepared input: snapping, arcs to chords, intersections split.
pub(crate) fn prepare(g: &Geometry) -> Result<Prepared, MeshError> {
    validate(g)?;
    let s = &g.settings;
    // Bounding box of the points and of the full circles of the arcs (conservative).
    let mut min = Point2::new(f64::INFINITY, f64::INFINITY);
    let mut max = Point2::new(f64::NEG_INFINITY, f64::NEG_INFINITY);
    let mut grow = |p: Point2| {
        min.x = min.x.min(p.x);
        min.y = min.y.min(p.y);
        max.x = max.x.max(p.x);
        max.y = max.y.max(p.y);
    };
    let mut used = vec![false; g.points.len()];
    for c in &g.curves {
        used[c.shape.start().index()] = true;
        used[c.shape.end().index()] = true;
        grow(g.points[c.shape.start().index()].position);
        grow(g.points[c.shape.end().index()].position);
    }
    for c in &g.curves {
        if let CurveShape::Arc { start, centre, .. } = c.shape {
            let r = centre.distance(g.points[start.index()].position);
            grow(Point2::new(centre.x - r, centre.y - r));
            grow(Point2::new(centre.x + r, centre.y + r));
        }
    }
    let diag = (max.x - min.x).hypot(max.y - min.y);
    if !(diag > 0.0 && diag.is_finite()) {
        return Err(MeshError::EmptyGeometry {
            what: "all curve points coincide".into(),
        });
    }
    let tol = s.snap_tolerance * diag;
    // Sizes.
    for (i, p) in g.points.iter().enumerate() {
        if let Some(v) = p.size {
            positive_size(|| format!("size of point {i}"), v, diag)?;
        }
    }
    for (i, c) in g.curves.iter().enumerate() {
        if let Some(v) = c.size {
            positive_size(|| format!("size of curve {i}"), v, diag)?;
        }
    }
    for r in &g.regions {
        if let Some(v) = r.size {
            positive_size(|| format!("size of region \"{}\"", r.name), v, diag)?;
        }
    }
    let max_size = match s.max_size {
        Some(v) => {
            positive_size(|| "max_size".to_string(), v, diag)?;
            v
        }
        None => diag / 20.0,
    };
    let chord_tolerance = match s.chord_tolerance {
        Some(v) => {
            positive_size(|| "chord_tolerance".to_string(), v, diag)?;
            v
        }
        None => diag * 2e-4,
    };

    // Snap user points: sort by x and merge points within `tol` (lowest index wins).
    let n = g.points.len();
    let mut order: Vec<usize> = (0..n).collect();
    order.sort_by(|&i, &j| {
        g.points[i]
            .position
            .x
            .total_cmp(&g.points[j].position.x)
            .then(i.cmp(&j))
    });
    let mut canon: Vec<usize> = (0..n).collect();
    for (k, &i) in order.iter().enumerate() {
        let pi = g.points[i].position;
        for &j in &order[k + 1..] {
            let pj = g.points[j].position;
            if pj.x - pi.x > tol {
                break;
            }
            if pi.distance(pj) <= tol {
                let (ci, cj) = (root(&canon, i), root(&canon, j));
                let lo = ci.min(cj);
                canon[ci] = lo;
                canon[cj] = lo;
            }
        }
    }
    let mut points = Vec::new();
    let mut point_size: Vec<Option<f64>> = Vec::new();
    let mut new_id = vec![u32::MAX; n];
    for i in 0..n {
        let r = root(&canon, i);
        if new_id[r] == u32::MAX {
            new_id[r] = points.len() as u32;
            points.push(g.points[r].position);
            point_size.push(None);
        }
        new_id[i] = new_id[r];
        if let Some(v) = g.points[i].size {
            let slot = &mut point_size[new_id[i] as usize];
            *slot = Some(slot.map_or(v, |w: f64| w.min(v)));
        }
    }
    let mut point_used = vec![false; points.len()];
    for i in 0..n {
        if used[i] {
            point_used[new_id[i] as usize] = true;
        }
    }

    // Curve checks and raw pieces (segments, or arc chords).
    struct Raw {
        a: u32,
        b: u32,
        arc: Option<ArcInfo>,
    }
    let mut raws: Vec<Raw> = Vec::new();
    let mut seg_seen: HashMap<(u32, u32), usize> = HashMap::new();
    let mut curve_raws: Vec<std::ops::Range<usize>> = Vec::with_capacity(g.curves.len());
    for (ci, c) in g.curves.iter().enumerate() {
        let a = new_id[c.shape.start().index()];
        let b = new_id[c.shape.end().index()];
        let (pa, pb) = (points[a as usize], points[b as usize]);
        if a == b {
            return Err(MeshError::ZeroLengthCurve {
                curve: ci,
                x: pa.x,
                y: pa.y,
            });
        }
        let first = raws.len();
        match c.shape {
            CurveShape::Segment { .. } => {
                let key = (a.min(b), a.max(b));
                if let Some(&other) = seg_seen.get(&key) {
                    return Err(MeshError::DuplicateSegment {
                        first: other,
                        second: ci,
                        x0: pa.x,
                        y0: pa.y,
                        x1: pb.x,
                        y1: pb.y,
                    });
                }
                seg_seen.insert(key, ci);
                raws.push(Raw { a, b, arc: None });
            }
            CurveShape::Arc { centre, .. } => {
                let (ra, rb) = (centre.distance(pa), centre.distance(pb));
                if (ra - rb).abs() > 1e-6 * ra.max(rb) + tol || ra <= tol {
                    return Err(MeshError::InconsistentArcRadii {
                        curve: ci,
                        cx: centre.x,
                        cy: centre.y,
                        r_start: ra,
                        r_end: rb,
                    });
                }
                let r = 0.5 * (ra + rb);
                let ang_a = (pa.y - centre.y).atan2(pa.x - centre.x);
                let ang_b = (pb.y - centre.y).atan2(pb.x - centre.x);
                let mut sweep = ang_b - ang_a;
                while sweep <= 0.0 {
                    sweep += std::f64::consts::TAU;
                }
                // Angular step from the chord tolerance: sagitta r (1 - cos(d/2)) <= tol,
                // and at most 22.5 degrees so that chords follow the arc closely enough for
                // intersections and gap detection.
                let step_tol = 2.0 * (1.0 - (chord_tolerance / r).min(1.0)).acos();
                let step = step_tol.clamp(1e-4, std::f64::consts::PI / 8.0);
                let nseg = ((sweep / step).ceil() as usize).clamp(2, 100_000);
                let mut prev = a;
                for k in 1..=nseg {
                    let next = if k == nseg {
                        b
                    } else {
                        let ang = ang_a + sweep * k as f64 / nseg as f64;
                        points.push(Point2::new(
                            centre.x + r * ang.cos(),
                            centre.y + r * ang.sin(),
                        ));
                        point_size.push(None);
                        point_used.push(true);
                        (points.len() - 1) as u32
                    };
                    raws.push(Raw {
                        a: prev,
                        b: next,
                        arc: Some(ArcInfo {
                            centre,
                            radius: r,
                            angle_a: ang_a + sweep * (k - 1) as f64 / nseg as f64,
                            sweep: sweep / nseg as f64,
                        }),
                    });
                    prev = next;
                }
            }
        }
        curve_raws.push(first..raws.len());
    }

    // Split points of every raw piece, as (parameter along the piece, point id).
    let mut splits: Vec<Vec<(f64, u32)>> = (0..raws.len()).map(|_| Vec::new()).collect();
    let pos = |points: &Vec<Point2>, i: u32| points[i as usize];
    // Sort raw pieces by their smallest x for a sweep.
    let mut by_x: Vec<usize> = (0..raws.len()).collect();
    let minx = |points: &Vec<Point2>, r: &Raw| pos(points, r.a).x.min(pos(points, r.b).x);
    let maxx = |points: &Vec<Point2>, r: &Raw| pos(points, r.a).x.max(pos(points, r.b).x);
    by_x.sort_by(|&i, &j| {
        minx(&points, &raws[i])
            .total_cmp(&minx(&points, &raws[j]))
            .then(i.cmp(&j))
    });
    let mut new_points: Vec<Point2> = Vec::new();
    for (k, &i) in by_x.iter().enumerate() {
        let (ai, bi) = (raws[i].a, raws[i].b);
        let (p0, p1) = (pos(&points, ai), pos(&points, bi));
        let xmax = maxx(&points, &raws[i]) + tol;
        let (ylo, yhi) = (p0.y.min(p1.y) - tol, p0.y.max(p1.y) + tol);
        for &j in &by_x[k + 1..] {
            if minx(&points, &raws[j]) > xmax {
                break;
            }
            let (aj, bj) = (raws[j].a, raws[j].b);
            let (q0, q1) = (pos(&points, aj), pos(&points, bj));
            if q0.y.max(q1.y) < ylo || q0.y.min(q1.y) > yhi {
                continue;
            }
            // Endpoints of one lying on the other (T-junctions, touching, overlaps).
            let mut touched = false;
            for (id, p, other) in [(aj, q0, i), (bj, q1, i), (ai, p0, j), (bi, p1, j)] {
                let r = &raws[other];
                if id == r.a || id == r.b {
                    continue;
                }
                let (s0, s1) = (pos(&points, r.a), pos(&points, r.b));
                if let Some(t) = on_segment(p, s0, s1, tol) {
                    splits[other].push((t, id));
                    touched = true;
                }
            }
            if touched {
                continue;
            }
            if ai == aj || ai == bj || bi == aj || bi == bj {
                continue;
            }
            // Proper crossing.
            if let Some((t, u, x)) = crossing(p0, p1, q0, q1, tol) {
                let id = (points.len() + new_points.len()) as u32;
                new_points.push(x);
                splits[i].push((t, id));
                splits[j].push((u, id));
            }
        }
    }
    let n_before = points.len();
    points.extend(new_points);
    point_size.resize(points.len(), None);
    point_used.resize(points.len(), true);
    // Free points (on no curve) lying on a piece split it.
    let free_candidates: Vec<u32> = (0..n_before as u32)
        .filter(|&p| !point_used[p as usize])
        .collect();
    for &fp in &free_candidates {
        let p = points[fp as usize];
        for (ri, r) in raws.iter().enumerate() {
            let (s0, s1) = (pos(&points, r.a), pos(&points, r.b));
            if let Some(t) = on_segment(p, s0, s1, tol) {
                splits[ri].push((t, fp));
                point_used[fp as usize] = true;
            }
        }
    }

    // Merge points closer than `tol` (intersections meeting at one place, for example).
    let np = points.len();
    let mut canon2: Vec<usize> = (0..np).collect();
    let mut ord: Vec<usize> = (0..np).collect();
    ord.sort_by(|&i, &j| points[i].x.total_cmp(&points[j].x).then(i.cmp(&j)));
    for (k, &i) in ord.iter().enumerate() {
        for &j in &ord[k + 1..] {
            if points[j].x - points[i].x > tol {
                break;
            }
            if points[i].distance(points[j]) <= tol {
                let (ci, cj) = (root(&canon2, i), root(&canon2, j));
                let lo = ci.min(cj);
                canon2[ci] = lo;
                canon2[cj] = lo;
            }
        }
    }
    let mut remap = vec![u32::MAX; np];
    let mut final_points = Vec::new();
    let mut final_size: Vec<Option<f64>> = Vec::new();
    let mut final_used = Vec::new();
    for i in 0..np {
        let r = root(&canon2, i);
        if remap[r] == u32::MAX {
            remap[r] = final_points.len() as u32;
            final_points.push(points[r]);
            final_size.push(None);
            final_used.push(false);
        }
        remap[i] = remap[r];
        let k = remap[i] as usize;
        if let Some(v) = point_size[i] {
            final_size[k] = Some(final_size[k].map_or(v, |w: f64| w.min(v)));
        }
        final_used[k] |= point_used[i];
    }
    let changed_points = final_points.len() != np;

    // Sub-pieces, unique pieces and the chains of every curve.
    let mut pieces: Vec<Piece> = Vec::new();
    let mut piece_of: HashMap<(u32, u32), u32> = HashMap::new();
    let mut chains: Vec<Vec<(u32, bool)>> = vec![Vec::new(); g.curves.len()];
    for (ci, range) in curve_raws.iter().enumerate() {
        let mut seq: Vec<u32> = Vec::new();
        let mut seq_arc: Vec<Option<ArcInfo>> = Vec::new();
        for ri in range.clone() {
            let r = &raws[ri];
            let mut sp = std::mem::take(&mut splits[ri]);
            sp.sort_by(|x, y| x.0.total_cmp(&y.0).then(x.1.cmp(&y.1)));
            let unsplit = sp.iter().all(|&(_, id)| {
                remap[id as usize] == remap[r.a as usize]
                    || remap[id as usize] == remap[r.b as usize]
            });
            let arc = if unsplit { r.arc } else { None };
            let mut ids = vec![remap[r.a as usize]];
            ids.extend(sp.iter().map(|&(_, id)| remap[id as usize]));
            ids.push(remap[r.b as usize]);
            for &id in &ids {
                if seq.last() != Some(&id) {
                    if !seq.is_empty() {
                        seq_arc.push(arc);
                    }
                    seq.push(id);
                }
            }
        }
        if seq.len() < 2 {
            let p = final_points[seq[0] as usize];
            return Err(MeshError::ZeroLengthCurve {
                curve: ci,
                x: p.x,
                y: p.y,
            });
        }
        for w in 0..seq.len() - 1 {
            let (u, v) = (seq[w], seq[w + 1]);
            let key = (u.min(v), u.max(v));
            let pid = match piece_of.get(&key) {
                Some(&pid) => {
                    let piece = &mut pieces[pid as usize];
                    // Shared by several curves: keep the arc only if it is the same arc.
                    let same_arc = match (piece.arc, seq_arc[w]) {
                        (Some(x), Some(y)) => {
                            x.centre.distance(y.centre) <= tol && (x.radius - y.radius).abs() <= tol
                        }
                        _ => false,
                    };
                    if !same_arc {
                        piece.arc = None;
                    }
                    if !piece.owners.contains(&(ci as u32)) {
                        piece.owners.push(ci as u32);
                    }
                    pid
                }
                None => {
                    let arc = seq_arc[w].map(|mut arc| {
                        if u != key.0 {
                            // Store from the smaller id: reverse the arc.
                            arc.angle_a += arc.sweep;
                            arc.sweep = -arc.sweep;
                        }
                        arc
                    });
                    pieces.push(Piece {
                        a: key.0,
                        b: key.1,
                        arc,
                        owners: vec![ci as u32],
                        size: None,
                    });
                    let pid = (pieces.len() - 1) as u32;
                    piece_of.insert(key, pid);
                    pid
                }
            };
            let c_size = g.curves[ci].size;
            if let Some(v) = c_size {
                let p = &mut pieces[pid as usize];
                p.size = Some(p.size.map_or(v, |w| w.min(v)));
            }
            chains[ci].push((pid, u == pieces[pid as usize].a));
        }
    }
    let _ = changed_points;
    for p in &mut pieces {
        p.owners.sort_unstable();
    }
    Ok(Prepared {
        points: final_points,
        point_size: final_size,
        pieces,
        chains,
        min,
        max,
        diag,
        tol,
        max_size,
    })
}

fn root(canon: &[usize], mut i: usize) -> usize {
    while canon[i] != i {
        i = canon[i];
    }
    i
}

/// If `p` lies on segment `s0 s1` strictly between its ends (within `tol`), its parameter.
fn on_segment(p: Point2, s0: Point2, s1: Point2, tol: f64) -> Option<f64> {
    let (dx, dy) = (s1.x - s0.x, s1.y - s0.y);
    let len2 = dx * dx + dy * dy;
    if len2 == 0.0 {
        return None;
    }
    let len = len2.sqrt();
    let t = ((p.x - s0.x) * dx + (p.y - s0.y) * dy) / len2;
    if t * len <= tol || (1.0 - t) * len <= tol {
        return None;
    }
    let dist = ((p.x - s0.x) * dy - (p.y - s0.y) * dx).abs() / len;
    (dist <= tol).then_some(t)
}

/// Proper crossing of segments `p0 p1` and `q0 q1` (endpoints strictly on opposite sides):
/// parameters along both and the crossing point.
fn crossing(
    p0: Point2,
    p1: Point2,
    q0: Point2,
    q1: Point2,
    tol: f64,
) -> Option<(f64, f64, Point2)> {
    let side = |a: Point2, b: Point2, c: Point2| {
        let (dx, dy) = (b.x - a.x, b.y - a.y);
        ((c.x - a.x) * dy - (c.y - a.y) * dx) / dx.hypot(dy)
    };
    let (d0, d1) = (side(p0, p1, q0), side(p0, p1, q1));
    let (e0, e1) = (side(q0, q1, p0), side(q0, q1, p1));
    let strictly = |a: f64, b: f64| (a > tol && b < -tol) || (a < -tol && b > tol);
    if !(strictly(d0, d1) && strictly(e0, e1)) {
        return None;
    }
    let u = d0 / (d0 - d1);
    let t = e0 / (e0 - e1);
    let x = Point2::new(p0.x + t * (p1.x - p0.x), p0.y + t * (p1.y - p0.y));
    Some((t, u, x))
}
