//! Invariants of meshes made from geometries: topology, areas, curve coverage, regions,
//! quality and size bounds, curve pairs, determinism, serde.

mod common;

use approx::assert_relative_eq;
use coercive_mesh::{CurveId, Geometry, MeshSettings, Point2, RegionId};
use common::*;

fn settings(max_size: f64) -> MeshSettings {
    MeshSettings {
        max_size: Some(max_size),
        ..MeshSettings::default()
    }
}

/// A 100 mm x 60 mm box with a steel plate, a magnet 0.1 mm above it and a round wire.
fn device() -> Geometry {
    let mut g = Geometry::new();
    g.add_rectangle(Point2::new(0.0, 0.0), Point2::new(0.1, 0.06));
    g.add_rectangle(Point2::new(0.02, 0.01), Point2::new(0.08, 0.02));
    g.add_rectangle(Point2::new(0.03, 0.0201), Point2::new(0.07, 0.035));
    g.add_circle(Point2::new(0.05, 0.048), 0.006);
    g.add_region("air", Point2::new(0.005, 0.005));
    g.add_region("plate", Point2::new(0.05, 0.015));
    g.add_region("magnet", Point2::new(0.05, 0.03));
    g.add_region("wire", Point2::new(0.05, 0.048));
    g.set_settings(settings(0.005));
    g
}

#[test]
fn device_mesh_is_valid_with_exact_areas_and_euler_characteristic() {
    let g = device();
    let (m, report) = g.mesh_with_report().unwrap();
    m.sanity_check().unwrap();
    // One connected domain without holes: V - E + T = 1 (see common::euler).
    assert_eq!(euler(&m), 1);
    // Straight-sided regions are meshed exactly (their outlines are mesh edges).
    let plate = m.region_by_name("plate").unwrap();
    let magnet = m.region_by_name("magnet").unwrap();
    assert_relative_eq!(m.region_area(plate), 0.06 * 0.01, max_relative = 1e-12);
    assert_relative_eq!(m.region_area(magnet), 0.04 * 0.0149, max_relative = 1e-12);
    // The wire is a polygon inscribed in the circle: its area is below pi r^2 by at most
    // the chord tolerance times the perimeter (each chord cuts a segment of height <= tol).
    let wire = m.region_by_name("wire").unwrap();
    let r: f64 = 0.006;
    let exact = std::f64::consts::PI * r * r;
    let tol = 2e-4 * (0.1f64.hypot(0.06) + 0.0); // default chord tolerance: 2e-4 x diagonal
    let a = m.region_area(wire);
    assert!(
        a <= exact && a >= exact - tol * 2.0 * std::f64::consts::PI * r,
        "wire area {a}"
    );
    // All areas sum to the box.
    let total: f64 = (0..m.regions().len())
        .map(|r| m.region_area(RegionId(r as u32)))
        .sum();
    assert_relative_eq!(total, 0.1 * 0.06, max_relative = 1e-12);
    // Quality: the input has only right angles and a smooth circle, so every triangle
    // must meet the requested 28 degrees (Ruppert-style refinement guarantee).
    assert!(min_angle(&m) >= 28.0 - 1e-9, "min angle {}", min_angle(&m));
    assert_eq!(report.triangles_below_min_angle, 0);
    assert!(report.small_input_angles.is_empty());
    // No triangle larger than its local size (refinement splits every triangle whose
    // longest edge exceeds the size at its centroid).
    assert!(
        report.max_size_ratio <= 1.0 + 1e-9,
        "{}",
        report.max_size_ratio
    );
    assert_eq!(report.triangles, m.triangles().len());
}

#[test]
fn every_triangle_lies_in_its_region() {
    let g = device();
    let m = g.mesh().unwrap();
    let rect = |x0: f64, y0: f64, x1: f64, y1: f64| {
        vec![
            Point2::new(x0, y0),
            Point2::new(x1, y0),
            Point2::new(x1, y1),
            Point2::new(x0, y1),
        ]
    };
    let plate = rect(0.02, 0.01, 0.08, 0.02);
    let magnet = rect(0.03, 0.0201, 0.07, 0.035);
    for t in 0..m.triangles().len() {
        let c = centroid(&m, t);
        let in_wire = c.distance(Point2::new(0.05, 0.048)) < 0.006;
        let expected = if in_polygon(c, &plate) {
            "plate"
        } else if in_polygon(c, &magnet) {
            "magnet"
        } else if in_wire {
            "wire"
        } else {
            "air"
        };
        let got = &m.regions()[m.triangle_regions()[t].index()].name;
        assert_eq!(got, expected, "triangle {t} at ({}, {})", c.x, c.y);
    }
}

#[test]
fn curves_are_covered_exactly_by_mesh_edges() {
    let g = device();
    let m = g.mesh().unwrap();
    for (ci, c) in g.curves.iter().enumerate() {
        let nodes = m.curve_nodes(CurveId(ci as u32));
        let start = g.points[c.shape.start().index()].position;
        let end = g.points[c.shape.end().index()].position;
        assert!(nodes.len() >= 2, "curve {ci} has no nodes");
        assert_eq!(m.vertex(nodes[0]), start, "curve {ci} start");
        assert_eq!(m.vertex(*nodes.last().unwrap()), end, "curve {ci} end");
        match c.shape {
            coercive_mesh::CurveShape::Segment { .. } => {
                // Every node lies on the segment and the chain's length is the segment's
                // length: the chain covers it exactly, without back-tracking.
                let mut len = 0.0;
                for w in nodes.windows(2) {
                    len += m.vertex(w[0]).distance(m.vertex(w[1]));
                }
                assert_relative_eq!(len, start.distance(end), max_relative = 1e-12);
                for &v in nodes {
                    assert!(dist_to_segment(m.vertex(v), start, end) < 1e-12);
                }
            }
            coercive_mesh::CurveShape::Arc { centre, .. } => {
                let r = centre.distance(start);
                for &v in nodes {
                    // Nodes on the arc itself or on a chord (within the chord tolerance).
                    let d = (m.vertex(v).distance(centre) - r).abs();
                    assert!(d <= 2e-4 * 0.1f64.hypot(0.06), "node off the arc by {d}");
                }
            }
        }
        // Consecutive nodes are joined by mesh edges (checked by sanity_check too).
        let e = edges(&m);
        for w in nodes.windows(2) {
            assert!(e.contains(&(w[0].min(w[1]), w[0].max(w[1]))));
        }
    }
}

#[test]
fn meshing_is_deterministic() {
    let g = device();
    let a = g.mesh().unwrap();
    let b = g.mesh().unwrap();
    assert_eq!(a, b);
    // Also from a pool with another thread count (the mesher must not depend on it).
    let pool = rayon::ThreadPoolBuilder::new()
        .num_threads(2)
        .build()
        .unwrap();
    let c = pool.install(|| g.mesh().unwrap());
    assert_eq!(a, c);
}

#[test]
fn geometry_and_mesh_round_trip_through_serde() {
    let g = device();
    let json = serde_json::to_string(&g).unwrap();
    let g2: Geometry = serde_json::from_str(&json).unwrap();
    assert_eq!(g, g2);
    let m = g.mesh().unwrap();
    let m2: coercive_mesh::Mesh =
        serde_json::from_str(&serde_json::to_string(&m).unwrap()).unwrap();
    assert_eq!(m, m2);
}

#[test]
fn a_tenth_of_a_millimetre_gap_gets_elements_across_without_a_fine_domain() {
    // Two 40 mm x 20 mm blocks 0.1 mm apart in a 100 mm box, with the default sizes.
    let mut g = Geometry::new();
    g.add_rectangle(Point2::new(0.0, 0.0), Point2::new(0.1, 0.1));
    g.add_rectangle(Point2::new(0.03, 0.03), Point2::new(0.07, 0.05));
    g.add_rectangle(Point2::new(0.03, 0.0501), Point2::new(0.07, 0.07));
    g.add_region("air", Point2::new(0.01, 0.01));
    g.add_region("lower", Point2::new(0.05, 0.04));
    g.add_region("upper", Point2::new(0.05, 0.06));
    let (m, report) = g.mesh_with_report().unwrap();
    m.sanity_check().unwrap();
    // Elements across the gap: walk up a vertical line through the gap and count the
    // distinct triangles met. The automatic size is gap / 3 along both sides, so the
    // refinement must put at least two layers of triangles across.
    let x = 0.050_123_4;
    let mut met = std::collections::BTreeSet::new();
    for k in 1..1000 {
        let p = Point2::new(x, 0.05 + 0.1e-3 * k as f64 / 1000.0);
        for t in 0..m.triangles().len() {
            let q = m.triangle_points(coercive_mesh::TriangleId(t as u32));
            let s = |a: Point2, b: Point2| (b.x - a.x) * (p.y - a.y) - (b.y - a.y) * (p.x - a.x);
            if s(q[0], q[1]) >= 0.0 && s(q[1], q[2]) >= 0.0 && s(q[2], q[0]) >= 0.0 {
                met.insert(t);
                break;
            }
        }
    }
    assert!(
        met.len() >= 2 && met.len() <= 12,
        "{} triangles across the gap",
        met.len()
    );
    // Gap triangles are small: longest edge below 3 gap widths.
    for &t in &met {
        let p = m.triangle_points(coercive_mesh::TriangleId(t as u32));
        let l = p[0]
            .distance(p[1])
            .max(p[1].distance(p[2]))
            .max(p[2].distance(p[0]));
        assert!(l < 0.3e-3, "gap triangle with a {l} m edge");
    }
    // And the rest is not uniformly fine: a uniform mesh at gap/3 would need
    // 0.01 m^2 / (0.433 (3.3e-5 m)^2) ~ 2e7 triangles.
    assert!(
        m.triangles().len() < 60_000,
        "{} triangles",
        m.triangles().len()
    );
    assert!(report.min_angle_deg >= 28.0 - 1e-9);
    // Size grading: triangles far from the gap are much larger than the gap size.
    let far = (0..m.triangles().len())
        .filter(|&t| centroid(&m, t).distance(Point2::new(0.005, 0.095)) < 0.005)
        .map(|t| m.triangle_area(coercive_mesh::TriangleId(t as u32)))
        .fold(0.0, f64::max);
    assert!(far > 100.0 * (0.1e-3f64).powi(2), "far triangles {far} m^2");
}

#[test]
fn nested_regions_and_holes_follow_euler_and_areas() {
    // A square with a square hole and a nested square region inside another region: the
    // labelling must not use loop parity (which would make the nested region a hole).
    let mut g = Geometry::new();
    g.add_rectangle(Point2::new(0.0, 0.0), Point2::new(1.0, 1.0));
    g.add_rectangle(Point2::new(0.1, 0.1), Point2::new(0.3, 0.3));
    g.add_rectangle(Point2::new(0.5, 0.5), Point2::new(0.9, 0.9));
    g.add_rectangle(Point2::new(0.6, 0.6), Point2::new(0.8, 0.8));
    g.add_region("outer", Point2::new(0.05, 0.05));
    g.add_hole("bore", Point2::new(0.2, 0.2));
    g.add_region("ring", Point2::new(0.55, 0.55));
    g.add_region("core", Point2::new(0.7, 0.7));
    g.set_settings(settings(0.1));
    let m = g.mesh().unwrap();
    m.sanity_check().unwrap();
    // One connected domain with one hole: V - E + T = 1 - 1 = 0.
    assert_eq!(euler(&m), 0);
    let area = |n: &str| m.region_area(m.region_by_name(n).unwrap());
    assert_relative_eq!(area("outer"), 1.0 - 0.04 - 0.16, max_relative = 1e-12);
    assert_relative_eq!(area("ring"), 0.16 - 0.04, max_relative = 1e-12);
    assert_relative_eq!(area("core"), 0.04, max_relative = 1e-12);
    assert!(m.region_by_name("bore").is_none());
}

#[test]
fn crossing_and_touching_curves_are_split_into_shared_pieces() {
    // A magnet rectangle sitting on the plate's top edge (shared partial edge), and a
    // line crossing the air: both must mesh, with the shared piece one curve.
    let mut g = Geometry::new();
    g.add_rectangle(Point2::new(0.0, 0.0), Point2::new(0.1, 0.1));
    let plate = g.add_rectangle(Point2::new(0.02, 0.02), Point2::new(0.08, 0.04));
    let magnet = g.add_rectangle(Point2::new(0.04, 0.04), Point2::new(0.06, 0.05));
    // A T-junction: a segment from the box's left side ending on the plate's left side
    // (it does not close an area: air lies on both sides).
    let a = g.add_point(Point2::new(0.0, 0.03));
    let b = g.add_point(Point2::new(0.02, 0.03));
    let t = g.add_segment(a, b);
    // A diagonal crossing the top air (a dangling curve inside "air" is allowed).
    let c = g.add_point(Point2::new(0.01, 0.09));
    let d = g.add_point(Point2::new(0.09, 0.07));
    let e = g.add_point(Point2::new(0.05, 0.095));
    let f = g.add_point(Point2::new(0.05, 0.06));
    let diag = g.add_segment(c, d);
    let cross = g.add_segment(e, f);
    g.add_region("air", Point2::new(0.01, 0.01));
    g.add_region("plate", Point2::new(0.03, 0.03));
    g.add_region("magnet", Point2::new(0.05, 0.045));
    g.set_settings(settings(0.01));
    let m = g.mesh().unwrap();
    m.sanity_check().unwrap();
    assert_relative_eq!(
        m.region_area(m.region_by_name("magnet").unwrap()),
        0.02 * 0.01,
        max_relative = 1e-12
    );
    // The plate's top side runs through the magnet's bottom corners; the magnet's bottom
    // side is part of it, so its nodes are a contiguous run of the plate top's nodes.
    let top = m.curve_nodes(plate[2]);
    let bottom = m.curve_nodes(magnet[0]);
    let pos = top
        .iter()
        .position(|&v| v == bottom[bottom.len() - 1])
        .unwrap();
    let rev: Vec<_> = bottom.iter().rev().copied().collect();
    assert_eq!(&top[pos..pos + bottom.len()], &rev[..]);
    // Crossing curves share the crossing node.
    let dn = m.curve_nodes(diag);
    let cn = m.curve_nodes(cross);
    assert!(dn.iter().any(|v| cn.contains(v)), "no shared crossing node");
    let xing = dn.iter().find(|v| cn.contains(v)).unwrap();
    let p = m.vertex(*xing);
    // The crossing of y = 0.09 - 0.25 (x - 0.01) with x = 0.05 is y = 0.08.
    assert_relative_eq!(p.x, 0.05, epsilon = 1e-12);
    assert_relative_eq!(p.y, 0.08, epsilon = 1e-12);
    assert!(m.curve_nodes(t).len() >= 2);
}

#[test]
fn curve_pair_gets_matched_nodes_under_refinement() {
    // A 30-degree annular sector: the two radial sides form a pair (periodic boundary);
    // a small region size next to one side forces refinement there only.
    let mut g = Geometry::new();
    let (r0, r1) = (0.02, 0.05);
    let ang = 30f64.to_radians();
    let o = Point2::new(0.0, 0.0);
    let p0 = g.add_point(Point2::new(r0, 0.0));
    let p1 = g.add_point(Point2::new(r1, 0.0));
    let q0 = g.add_point(Point2::new(r0 * ang.cos(), r0 * ang.sin()));
    let q1 = g.add_point(Point2::new(r1 * ang.cos(), r1 * ang.sin()));
    let first = g.add_segment(p0, p1);
    let outer = g.add_arc(p1, q1, o);
    let second = g.add_segment(q0, q1);
    let inner = g.add_arc(p0, q0, o);
    let _ = (outer, inner);
    g.add_curve_pair(first, second);
    // A small sized point near the first side only.
    g.add_point_with_size(Point2::new(0.03, 0.002), 0.0003);
    g.add_region("iron", Point2::new(0.035, 0.01));
    g.set_settings(settings(0.004));
    let (m, report) = g.mesh_with_report().unwrap();
    m.sanity_check().unwrap();
    let (a, b) = (m.curve_nodes(first), m.curve_nodes(second));
    assert_eq!(a.len(), b.len());
    assert!(a.len() > 10, "refined side has {} nodes", a.len());
    // Node i of the second side is node i of the first rotated by 30 degrees.
    for (&u, &v) in a.iter().zip(b) {
        let (pu, pv) = (m.vertex(u), m.vertex(v));
        let rot = Point2::new(
            pu.x * ang.cos() - pu.y * ang.sin(),
            pu.x * ang.sin() + pu.y * ang.cos(),
        );
        assert!(rot.distance(pv) < 1e-12, "{rot:?} vs {pv:?}");
    }
    assert_eq!(m.curve_pairs().len(), 1);
    // Paired edges are split in step with their partners, so quality is not lost there.
    assert!(
        report.min_angle_deg >= 28.0 - 1e-9,
        "{}",
        report.min_angle_deg
    );
}

#[test]
fn arcs_follow_the_chord_tolerance_or_the_size_whichever_is_finer() {
    let mut g = Geometry::new();
    g.add_circle(Point2::new(0.0, 0.0), 0.01);
    g.add_region("disc", Point2::new(0.0, 0.0));
    // Coarse size, tight chord tolerance: the chord tolerance decides.
    g.set_settings(MeshSettings {
        max_size: Some(0.02),
        chord_tolerance: Some(1e-6),
        ..MeshSettings::default()
    });
    let m = g.mesh().unwrap();
    // Polygon area of n equal chords: (n/2) r^2 sin(2 pi / n); the sagitta r (1 - cos(pi/n))
    // <= 1e-6 needs n >= pi / acos(1 - 1e-4) ~ 222.
    let r: f64 = 0.01;
    let a = m.region_area(RegionId(0));
    let exact = std::f64::consts::PI * r * r;
    assert!(
        exact - a <= 1e-6 * 2.0 * std::f64::consts::PI * r,
        "area defect {}",
        exact - a
    );
    // Fine size, loose chord tolerance: the size decides (about 2 pi r / h boundary nodes).
    g.set_settings(MeshSettings {
        max_size: Some(0.0005),
        chord_tolerance: Some(1e-3),
        ..MeshSettings::default()
    });
    let m = g.mesh().unwrap();
    let n: usize = (0..4).map(|c| m.curve_nodes(CurveId(c)).len() - 1).sum();
    assert!(
        n as f64 >= 2.0 * std::f64::consts::PI * r / 0.0005,
        "{n} boundary edges"
    );
    // Nodes placed by the size lie on the circle itself.
    for c in 0..4 {
        for &v in m.curve_nodes(CurveId(c)) {
            assert!((m.vertex(v).distance(Point2::new(0.0, 0.0)) - r).abs() < 1e-12 + 1e-3);
        }
    }
}

#[test]
fn region_and_curve_and_point_sizes_are_respected() {
    let mut g = Geometry::new();
    g.add_rectangle(Point2::new(0.0, 0.0), Point2::new(0.1, 0.05));
    let fine = g.add_rectangle(Point2::new(0.06, 0.01), Point2::new(0.09, 0.04));
    g.add_region("air", Point2::new(0.01, 0.01));
    g.add_region("coil", Point2::new(0.07, 0.02));
    g.set_region_size("coil", 0.002);
    g.set_curve_size(fine[0], 0.0005);
    g.add_point_with_size(Point2::new(0.02, 0.025), 0.0004);
    g.set_settings(settings(0.02));
    let (m, report) = g.mesh_with_report().unwrap();
    assert!(report.max_size_ratio <= 1.0 + 1e-9);
    // Every coil triangle's longest edge is at most the region size.
    let coil = m.region_by_name("coil").unwrap();
    for t in 0..m.triangles().len() {
        if m.triangle_regions()[t] == coil {
            let p = m.triangle_points(coercive_mesh::TriangleId(t as u32));
            let l = p[0]
                .distance(p[1])
                .max(p[1].distance(p[2]))
                .max(p[2].distance(p[0]));
            assert!(l <= 0.002 * (1.0 + 1e-9));
        }
    }
    // The sized curve's edges are at most its size.
    for w in m.curve_nodes(fine[0]).windows(2) {
        assert!(m.vertex(w[0]).distance(m.vertex(w[1])) <= 0.0005 * 1.0001);
    }
    // The sized point is a node, and edges at it are at most its size.
    let v = m
        .vertices()
        .iter()
        .position(|&p| p == Point2::new(0.02, 0.025))
        .expect("sized point is a mesh node");
    for t in m.triangles() {
        if t.iter().any(|x| x.index() == v) {
            for k in 0..3 {
                let (a, b) = (t[k], t[(k + 1) % 3]);
                if a.index() == v || b.index() == v {
                    assert!(m.vertex(a).distance(m.vertex(b)) <= 0.0004 * 1.2);
                }
            }
        }
    }
}

#[test]
fn small_input_angles_are_reported_and_excused() {
    // A thin wedge (10 degrees) inside a box.
    let mut g = Geometry::new();
    g.add_rectangle(Point2::new(-0.01, -0.03), Point2::new(0.11, 0.03));
    let a = 10f64.to_radians();
    g.add_polygon(&[
        Point2::new(0.0, 0.0),
        Point2::new(0.1, 0.0),
        Point2::new(0.1 * a.cos(), 0.1 * a.sin()),
    ]);
    g.add_region("air", Point2::new(0.0, -0.02));
    g.add_region("wedge", Point2::new(0.09, 0.005));
    g.set_settings(settings(0.01));
    let (m, report) = g.mesh_with_report().unwrap();
    m.sanity_check().unwrap();
    assert_eq!(report.small_input_angles.len(), 1);
    let s = &report.small_input_angles[0];
    assert_relative_eq!(s.angle_deg, 10.0, epsilon = 1e-6);
    assert!(s.at.distance(Point2::new(0.0, 0.0)) < 1e-12);
    // Triangles below 28 degrees only next to the small angle's apex.
    for t in 0..m.triangles().len() {
        let ang = coercive_mesh::triangle_angles_deg(
            m.triangle_points(coercive_mesh::TriangleId(t as u32)),
        );
        if ang.iter().any(|&x| x < 28.0 - 1e-9) {
            let c = centroid(&m, t);
            assert!(
                c.distance(Point2::new(0.0, 0.0)) < 0.05,
                "bad triangle at {c:?}"
            );
        }
    }
}

#[test]
fn sizes_grow_at_most_linearly_away_from_a_small_feature() {
    // One sized point (0.2 mm) in a 100 mm square with a 10 mm global size.
    let mut g = Geometry::new();
    g.add_rectangle(Point2::new(0.0, 0.0), Point2::new(0.1, 0.1));
    let f = Point2::new(0.03, 0.04);
    let (hf, growth) = (0.0002, 0.3);
    g.add_point_with_size(f, hf);
    g.add_region("air", Point2::new(0.09, 0.09));
    g.set_settings(MeshSettings {
        max_size: Some(0.01),
        growth,
        ..MeshSettings::default()
    });
    let m = g.mesh().unwrap();
    // Documented bound (mesher::size): every triangle's longest edge is at most the size
    // at its centroid, and that size is at most h_f + g d with the distance d spread over
    // the background grid, overestimated by at most 8 % (chamfer distance) plus two cell
    // diagonals (the query reads the nearest grid nodes). The grid here has cells of at
    // most 0.1 m / 2^9 ~ 0.2 mm, so allow h_f + g (1.09 d + 0.6 mm).
    for t in 0..m.triangles().len() {
        let p = m.triangle_points(coercive_mesh::TriangleId(t as u32));
        let longest = p[0]
            .distance(p[1])
            .max(p[1].distance(p[2]))
            .max(p[2].distance(p[0]));
        let d = centroid(&m, t).distance(f);
        let bound = (hf + growth * (1.09 * d + 0.6e-3)).min(0.01);
        assert!(
            longest <= bound * (1.0 + 1e-9),
            "triangle {t}: {longest} m at {d} m (bound {bound} m)"
        );
    }
    // And the mesh is graded, not uniformly fine: about (0.1 / 0.01)^2 x 2.3 triangles far
    // away plus the graded zone, far below the 5.8e5 a uniform 0.2 mm mesh would need.
    assert!(m.triangles().len() < 20_000, "{}", m.triangles().len());
}

#[test]
fn a_thirty_degree_minimum_angle_is_met() {
    let mut g = device();
    g.settings.min_angle_deg = 30.0;
    let (m, report) = g.mesh_with_report().unwrap();
    m.sanity_check().unwrap();
    assert!(
        report.min_angle_deg >= 30.0 - 1e-9,
        "{}",
        report.min_angle_deg
    );
    assert_eq!(report.triangles_below_min_angle, 0);
}

#[test]
fn curve_pair_with_opposite_directions_matches_from_each_start() {
    // The same sector, but the second side drawn from the outer arc inwards (as for an
    // anti-periodic pairing drawn the other way): node i of the second curve, counted from
    // its start, matches node i of the first, counted from its start.
    let mut g = Geometry::new();
    let (r0, r1) = (0.02, 0.05);
    let ang = 45f64.to_radians();
    let o = Point2::new(0.0, 0.0);
    let p0 = g.add_point(Point2::new(r0, 0.0));
    let p1 = g.add_point(Point2::new(r1, 0.0));
    let q0 = g.add_point(Point2::new(r0 * ang.cos(), r0 * ang.sin()));
    let q1 = g.add_point(Point2::new(r1 * ang.cos(), r1 * ang.sin()));
    let first = g.add_segment(p0, p1);
    g.add_arc(p1, q1, o);
    let second = g.add_segment(q1, q0);
    g.add_arc(p0, q0, o);
    g.add_curve_pair(first, second);
    g.add_point_with_size(Point2::new(0.045, 0.003), 0.0004);
    g.add_region("iron", Point2::new(0.035, 0.01));
    g.set_settings(settings(0.004));
    let (m, report) = g.mesh_with_report().unwrap();
    m.sanity_check().unwrap();
    let (a, b) = (m.curve_nodes(first), m.curve_nodes(second));
    assert_eq!(a.len(), b.len());
    // Matching is by position along each curve from its own start (the documented
    // contract): node i of both curves lies at the same distance from the curve's start.
    let (s1, s2) = (m.vertex(a[0]), m.vertex(b[0]));
    assert_eq!(s1, Point2::new(r0, 0.0));
    assert_eq!(s2, Point2::new(r1 * ang.cos(), r1 * ang.sin()));
    for i in 0..a.len() {
        let (d1, d2) = (m.vertex(a[i]).distance(s1), m.vertex(b[i]).distance(s2));
        assert!((d1 - d2).abs() < 1e-12, "node {i}: {d1} vs {d2}");
    }
    assert!(
        report.min_angle_deg >= 28.0 - 1e-9,
        "{}",
        report.min_angle_deg
    );
}

#[test]
fn every_node_of_an_arc_lies_on_its_circle() {
    // A disc in a box with a small size on the circle, so refinement splits arc edges too
    // (encroachment by the fine interior); nodes of the arcs must lie on the circle.
    let mut g = Geometry::new();
    g.add_rectangle(Point2::new(-0.02, -0.02), Point2::new(0.02, 0.02));
    let c = Point2::new(0.001, -0.0005);
    let r = 0.012;
    let arcs = g.add_circle(c, r);
    g.add_region("air", Point2::new(-0.019, -0.019));
    g.add_region("disc", c);
    g.set_settings(MeshSettings {
        max_size: Some(0.004),
        ..MeshSettings::default()
    });
    // A fine point near the circle forces splits of its chords during refinement.
    g.add_point_with_size(Point2::new(c.x + r * 0.95, c.y), 1e-4);
    let m = g.mesh().unwrap();
    m.sanity_check().unwrap();
    let mut count = 0;
    for a in arcs {
        for &v in m.curve_nodes(a) {
            let q = m.vertex(v);
            let d = q.distance(c);
            assert!(
                (d - r).abs() <= 1e-12 * r,
                "node {v:?} at {q:?}: {d} m from the centre"
            );
            count += 1;
        }
    }
    assert!(count > 100, "{count}");
}
