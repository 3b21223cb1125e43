//! Rigid groups: meshed once, moved as a whole; only the rest is meshed again.

mod common;

use approx::assert_relative_eq;
use coercive_mesh::{Geometry, MeshError, MeshSettings, Placement, Point2, RegionId};

/// A holding magnet (magnet + pole piece, a rigid group) 1 mm above a fixed steel plate.
fn holding_magnet() -> Geometry {
    let mut g = Geometry::new();
    g.add_rectangle(Point2::new(0.0, 0.0), Point2::new(0.1, 0.06));
    g.add_rectangle(Point2::new(0.02, 0.01), Point2::new(0.08, 0.02));
    g.add_rectangle(Point2::new(0.03, 0.021), Point2::new(0.07, 0.03));
    g.add_rectangle(Point2::new(0.03, 0.03), Point2::new(0.07, 0.036));
    g.add_region("air", Point2::new(0.005, 0.005));
    g.add_region("plate", Point2::new(0.05, 0.015));
    g.add_region("magnet", Point2::new(0.05, 0.025));
    g.add_region("pole", Point2::new(0.05, 0.033));
    g.add_rigid_group("mover", &["magnet", "pole"]);
    g.set_settings(MeshSettings {
        max_size: Some(0.004),
        ..MeshSettings::default()
    });
    g
}

#[test]
fn a_translated_group_keeps_its_triangles_and_nodes_exactly() {
    let g = holding_magnet();
    let rigid = g.prepare_rigid().unwrap();
    let (ng, nt) = (rigid.group_node_count(), rigid.group_triangle_count());
    assert!(ng > 10 && nt > 10);
    let m0 = rigid.mesh_at(&[]).unwrap();
    let (dx, dy) = (0.0013, 0.0005);
    let m1 = rigid
        .mesh_at(&[("mover", Placement::translation(dx, dy))])
        .unwrap();
    for m in [&m0, &m1] {
        m.sanity_check().unwrap();
        // One connected domain without holes (common::euler): V - E + T = 1.
        assert_eq!(common::euler(m), 1);
    }
    // Group nodes come first and are the original ones moved by the offset, exactly.
    for i in 0..ng {
        let (p, q) = (m0.vertices()[i], m1.vertices()[i]);
        assert_eq!(q, Point2::new(p.x + dx, p.y + dy), "node {i}");
    }
    // Group triangles come first, with the same nodes and regions.
    assert_eq!(&m0.triangles()[..nt], &m1.triangles()[..nt]);
    assert_eq!(&m0.triangle_regions()[..nt], &m1.triangle_regions()[..nt]);
    // Only group regions among the first triangles, none after.
    let magnet = m0.region_by_name("magnet").unwrap();
    let pole = m0.region_by_name("pole").unwrap();
    for m in [&m0, &m1] {
        for (t, r) in m.triangle_regions().iter().enumerate() {
            assert_eq!(t < nt, *r == magnet || *r == pole, "triangle {t}");
        }
    }
    // Group curves (magnet 8-11, pole 12-14: its bottom is the magnet top) keep their
    // node ids.
    for c in 8..15 {
        let id = coercive_mesh::CurveId(c);
        assert_eq!(m0.curve_nodes(id), m1.curve_nodes(id), "curve {c}");
    }
    // Areas: regions keep their exact areas; the air fills the rest of the box.
    for m in [&m0, &m1] {
        assert_relative_eq!(m.region_area(magnet), 0.04 * 0.009, max_relative = 1e-12);
        assert_relative_eq!(m.region_area(pole), 0.04 * 0.006, max_relative = 1e-12);
        let total: f64 = (0..m.regions().len())
            .map(|r| m.region_area(RegionId(r as u32)))
            .sum();
        assert_relative_eq!(total, 0.1 * 0.06, max_relative = 1e-12);
    }
    // Re-meshing the same placement gives the same mesh.
    let m2 = rigid
        .mesh_at(&[("mover", Placement::translation(dx, dy))])
        .unwrap();
    assert_eq!(m1, m2);
    // The air next to the fixed outline keeps a decent quality (points are inserted
    // beside the fixed outline instead of encroaching it), and the report agrees.
    assert!(common::min_angle(&m1) > 20.0, "{}", common::min_angle(&m1));
    let (m3, report) = rigid
        .mesh_at_with_report(&[("mover", Placement::translation(dx, dy))])
        .unwrap();
    assert_eq!(m3, m1);
    assert_eq!(report.triangles, m1.triangles().len());
    assert_relative_eq!(report.min_angle_deg, common::min_angle(&m1), epsilon = 1e-9);
}

#[test]
fn a_rotated_rotor_keeps_its_nodes() {
    // A rotor disc with a magnet, inside a stator ring, with an air gap between.
    let mut g = Geometry::new();
    let o = Point2::new(0.0, 0.0);
    g.add_circle(o, 0.05);
    g.add_circle(o, 0.03);
    g.add_circle(o, 0.02);
    g.add_rectangle(Point2::new(0.005, -0.004), Point2::new(0.015, 0.004));
    // An off-centre vent hole in the rotor: it turns with the rotor.
    g.add_circle(Point2::new(-0.01, 0.008), 0.003);
    g.add_hole("vent", Point2::new(-0.01, 0.008));
    g.add_region("stator", Point2::new(0.04, 0.0));
    g.add_region("gap", Point2::new(0.025, 0.0));
    g.add_region("rotor", Point2::new(-0.01, 0.0));
    g.add_region("magnet", Point2::new(0.01, 0.0));
    g.add_rigid_group("rotor", &["rotor", "magnet"]);
    g.set_settings(MeshSettings {
        max_size: Some(0.004),
        ..MeshSettings::default()
    });
    let rigid = g.prepare_rigid().unwrap();
    let m0 = rigid.mesh_at(&[]).unwrap();
    let a = 7.5f64.to_radians();
    let m1 = rigid
        .mesh_at(&[("rotor", Placement::rotation(a, o))])
        .unwrap();
    m1.sanity_check().unwrap();
    let ng = rigid.group_node_count();
    for i in 0..ng {
        let (p, q) = (m0.vertices()[i], m1.vertices()[i]);
        let r = Point2::new(p.x * a.cos() - p.y * a.sin(), p.x * a.sin() + p.y * a.cos());
        assert!(r.distance(q) < 1e-15, "node {i}");
    }
    let nt = rigid.group_triangle_count();
    assert_eq!(&m0.triangles()[..nt], &m1.triangles()[..nt]);
    // Areas unchanged by the rotation (the rotor's polygon is moved rigidly), and the
    // vent stays empty: all areas sum to the same total in both meshes.
    let rotor = m0.region_by_name("rotor").unwrap();
    assert_relative_eq!(
        m0.region_area(rotor),
        m1.region_area(rotor),
        max_relative = 1e-12
    );
    let total = |m: &coercive_mesh::Mesh| -> f64 {
        (0..m.regions().len())
            .map(|r| m.region_area(RegionId(r as u32)))
            .sum()
    };
    // All nodes of the circles lie on them, so the total is the disc minus the vent
    // (pi r^2 each) less the circular segments cut off by the chords: each at most 2/3 of
    // chord times sagitta (parabolic segment bound), the sagitta at most the default chord
    // tolerance (2e-4 times the 0.1 m x 0.1 m box diagonal).
    let pi = std::f64::consts::PI;
    let exact = pi * (0.05f64.powi(2) - 0.003f64.powi(2));
    let tol = 2e-4 * 0.1 * 2f64.sqrt();
    let bound = 2.0 / 3.0 * 2.0 * pi * (0.05 + 0.003) * tol;
    for m in [&m0, &m1] {
        let err = (total(m) - exact).abs();
        assert!(err <= bound, "{err} m^2 > {bound} m^2");
    }
    assert!(m1.region_by_name("vent").is_none());
    // No triangle of the mesh lies in the moved vent.
    let vent = Point2::new(
        -0.01 * a.cos() - 0.008 * a.sin(),
        -0.01 * a.sin() + 0.008 * a.cos(),
    );
    for t in 0..m1.triangles().len() {
        assert!(
            common::centroid(&m1, t).distance(vent) > 0.0029,
            "triangle {t} in the vent"
        );
    }
}

#[test]
fn a_group_moved_into_fixed_parts_is_refused() {
    let g = holding_magnet();
    let rigid = g.prepare_rigid().unwrap();
    // 2 mm down: the magnet would overlap the plate.
    let e = rigid
        .mesh_at(&[("mover", Placement::translation(0.0, -0.002))])
        .unwrap_err();
    assert!(
        matches!(e, MeshError::RigidGroup { ref group, .. } if group == "mover"),
        "{e:?}"
    );
    // Out of the box.
    let e = rigid
        .mesh_at(&[("mover", Placement::translation(0.2, 0.0))])
        .unwrap_err();
    assert!(matches!(e, MeshError::RigidGroup { .. }), "{e:?}");
    // Unknown group name.
    let e = rigid
        .mesh_at(&[("rotor", Placement::default())])
        .unwrap_err();
    assert!(matches!(e, MeshError::RigidGroup { ref group, .. } if group == "rotor"));
}

#[test]
fn a_group_touching_fixed_parts_is_refused_when_prepared() {
    let mut g = holding_magnet();
    // Put the magnet right on the plate.
    g.curves.clear();
    g.points.clear();
    g.add_rectangle(Point2::new(0.0, 0.0), Point2::new(0.1, 0.06));
    g.add_rectangle(Point2::new(0.02, 0.01), Point2::new(0.08, 0.02));
    g.add_rectangle(Point2::new(0.03, 0.02), Point2::new(0.07, 0.03));
    g.add_rectangle(Point2::new(0.03, 0.03), Point2::new(0.07, 0.036));
    g.regions[2].seed = Point2::new(0.05, 0.025);
    let e = g.prepare_rigid().unwrap_err();
    assert!(matches!(e, MeshError::RigidGroup { .. }), "{e:?}");
}
