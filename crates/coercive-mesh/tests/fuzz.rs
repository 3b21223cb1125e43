//! Property tests: random polygons and random segment soups never panic; they give valid
//! meshes (sanity_check, exact areas) or typed errors.

mod common;

use coercive_mesh::{Geometry, MeshSettings, Point2, RegionId};
use proptest::prelude::*;

fn settings() -> MeshSettings {
    MeshSettings {
        max_size: Some(0.1),
        max_triangles: 200_000,
        ..MeshSettings::default()
    }
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 48, ..ProptestConfig::default() })]

    /// A star-shaped polygon (sorted angles, random radii) is simple; its mesh must cover
    /// exactly its shoelace area and satisfy Euler's formula for a disc (V - E + T = 1).
    #[test]
    fn random_star_polygons_mesh_exactly(
        radii in prop::collection::vec(0.2f64..1.0, 3..16),
        jitter in prop::collection::vec(0.0f64..0.8, 16),
    ) {
        let n = radii.len();
        let pts: Vec<Point2> = (0..n)
            .map(|i| {
                let a = (i as f64 + jitter[i]) / n as f64 * std::f64::consts::TAU;
                Point2::new(radii[i] * a.cos(), radii[i] * a.sin())
            })
            .collect();
        let mut g = Geometry::new();
        g.add_polygon(&pts);
        // The origin is inside the star polygon unless an angular gap exceeds 180 degrees.
        let origin = Point2::new(0.0, 0.0);
        let inside = common::in_polygon(origin, &pts);
        g.add_region("r", origin);
        g.set_settings(settings());
        match g.mesh() {
            Err(coercive_mesh::MeshError::RegionNotClosed { .. }) if !inside => {}
            Ok(_) | Err(_) if !inside => prop_assert!(false, "origin outside, yet no RegionNotClosed"),
            Ok(m) => {
                m.sanity_check().unwrap();
                let a = m.region_area(RegionId(0));
                let exact = common::polygon_area(&pts);
                prop_assert!((a - exact).abs() <= 1e-9 * exact, "area {} vs {}", a, exact);
                prop_assert_eq!(common::euler(&m), 1);
            }
            // The origin may fall on an edge of a degenerate star: a typed error is fine.
            Err(e) => prop_assert!(matches!(e, coercive_mesh::MeshError::SeedOnCurve { .. }
                | coercive_mesh::MeshError::TooManyTriangles { .. }), "{e:?}"),
        }
    }

    /// Random segments inside a box (crossing, touching, overlapping): meshing never
    /// panics; it returns a valid mesh or a typed error.
    #[test]
    fn random_segment_soups_never_panic(
        segs in prop::collection::vec((0.0f64..1.0, 0.0f64..1.0, 0.0f64..1.0, 0.0f64..1.0), 1..10),
        snap in prop::collection::vec(any::<bool>(), 10),
        seed in (0.0f64..1.0, 0.0f64..1.0),
    ) {
        let mut g = Geometry::new();
        g.add_rectangle(Point2::new(0.0, 0.0), Point2::new(1.0, 1.0));
        for (k, &(x0, y0, x1, y1)) in segs.iter().enumerate() {
            // Snap some coordinates to a coarse grid to provoke touching and overlaps.
            let q = |v: f64| if snap[k] { (v * 4.0).round() / 4.0 } else { v };
            let a = g.add_point(Point2::new(q(x0), q(y0)));
            let b = g.add_point(Point2::new(q(x1), q(y1)));
            g.add_segment(a, b);
        }
        g.add_region("air", Point2::new(seed.0, seed.1));
        g.set_settings(settings());
        let result = std::panic::catch_unwind(|| g.mesh());
        prop_assert!(result.is_ok(), "meshing panicked");
        if let Ok(Ok(m)) = result {
            m.sanity_check().unwrap();
        }
    }

    /// Random point clouds (sized points inside a box) never panic and give valid meshes
    /// with every sized point as a node.
    #[test]
    fn random_point_clouds_give_valid_meshes(
        pts in prop::collection::vec((0.01f64..0.99, 0.01f64..0.99, 0.01f64..0.2), 1..30),
    ) {
        let mut g = Geometry::new();
        g.add_rectangle(Point2::new(0.0, 0.0), Point2::new(1.0, 1.0));
        for &(x, y, h) in &pts {
            g.add_point_with_size(Point2::new(x, y), h);
        }
        g.add_region("air", Point2::new(0.005, 0.5));
        g.set_settings(settings());
        match std::panic::catch_unwind(|| g.mesh()) {
            Err(_) => prop_assert!(false, "meshing panicked"),
            Ok(Err(e)) => prop_assert!(matches!(e, coercive_mesh::MeshError::SeedOnCurve { .. }), "{e:?}"),
            Ok(Ok(m)) => {
                m.sanity_check().unwrap();
                prop_assert!((m.region_area(RegionId(0)) - 1.0).abs() < 1e-12);
                prop_assert_eq!(common::euler(&m), 1);
            }
        }
    }

    /// Random circles (arcs) overlapping each other and the box: never a panic; valid
    /// meshes or typed errors.
    #[test]
    fn random_circles_never_panic(
        circles in prop::collection::vec((0.1f64..0.9, 0.1f64..0.9, 0.02f64..0.4), 1..5),
        seed in (0.0f64..1.0, 0.0f64..1.0),
    ) {
        let mut g = Geometry::new();
        g.add_rectangle(Point2::new(0.0, 0.0), Point2::new(1.0, 1.0));
        for &(x, y, r) in &circles {
            g.add_circle(Point2::new(x, y), r);
        }
        g.add_region("air", Point2::new(seed.0, seed.1));
        g.set_settings(settings());
        match std::panic::catch_unwind(|| g.mesh()) {
            Err(_) => prop_assert!(false, "meshing panicked"),
            Ok(Ok(m)) => m.sanity_check().unwrap(),
            Ok(Err(_)) => {}
        }
    }

    /// A square rigid group moved anywhere in a box with a fixed bar: either a valid mesh
    /// whose group nodes are exactly the moved originals, or a rigid-group error.
    #[test]
    fn random_rigid_moves_keep_the_group_or_refuse(dx in -0.6f64..0.6, dy in -0.6f64..0.6, a in -3.2f64..3.2) {
        let mut g = Geometry::new();
        g.add_rectangle(Point2::new(0.0, 0.0), Point2::new(1.0, 1.0));
        g.add_rectangle(Point2::new(0.1, 0.1), Point2::new(0.9, 0.2));
        g.add_rectangle(Point2::new(0.4, 0.5), Point2::new(0.6, 0.7));
        g.add_region("air", Point2::new(0.05, 0.5));
        g.add_region("bar", Point2::new(0.5, 0.15));
        g.add_region("block", Point2::new(0.5, 0.6));
        g.add_rigid_group("mover", &["block"]);
        g.set_settings(settings());
        let rigid = g.prepare_rigid().unwrap();
        let m0 = rigid.mesh_at(&[]).unwrap();
        let pl = coercive_mesh::Placement {
            translation: Point2::new(dx, dy),
            rotation_rad: a,
            about: Point2::new(0.5, 0.6),
        };
        match std::panic::catch_unwind(|| rigid.mesh_at(&[("mover", pl)])) {
            Err(_) => prop_assert!(false, "meshing panicked"),
            Ok(Ok(m)) => {
                m.sanity_check().unwrap();
                for i in 0..rigid.group_node_count() {
                    prop_assert_eq!(m.vertices()[i], pl.apply(m0.vertices()[i]));
                }
                prop_assert!((m.region_area(RegionId(0)) + m.region_area(RegionId(1)) + m.region_area(RegionId(2)) - 1.0).abs() < 1e-9);
            }
            Ok(Err(e)) => prop_assert!(matches!(e, coercive_mesh::MeshError::RigidGroup { .. }), "{:?}", e),
        }
    }

    /// Nearly coincident and nearly collinear curves (offsets from 1e-12 to 1e-5 of the
    /// drawing): snapping, splitting and the triangle limit keep meshing panic-free.
    #[test]
    fn nearly_overlapping_segments_never_panic(
        e in prop::collection::vec(-1e-5f64..1e-5, 4),
        scale in prop::sample::select(vec![1e-7, 1e-3, 1.0]),
        x in prop::collection::vec(0.05f64..0.95, 4),
    ) {
        let mut g = Geometry::new();
        g.add_rectangle(Point2::new(0.0, 0.0), Point2::new(1.0, 1.0));
        let a = g.add_point(Point2::new(x[0].min(x[1]), 0.5));
        let b = g.add_point(Point2::new(x[0].max(x[1]) + 0.01, 0.5));
        g.add_segment(a, b);
        let c = g.add_point(Point2::new(x[2].min(x[3]), 0.5 + e[0] * scale));
        let d = g.add_point(Point2::new(x[2].max(x[3]) + 0.01, 0.5 + e[1] * scale));
        g.add_segment(c, d);
        let f = g.add_point(Point2::new(x[0] + e[2] * scale, 0.2));
        let h = g.add_point(Point2::new(x[0] + e[3] * scale, 0.5 + e[2] * scale));
        g.add_segment(f, h);
        g.add_region("air", Point2::new(0.02, 0.02));
        g.set_settings(MeshSettings { max_triangles: 20_000, ..settings() });
        match std::panic::catch_unwind(|| g.mesh()) {
            Err(_) => prop_assert!(false, "meshing panicked"),
            Ok(Ok(m)) => {
                m.sanity_check().unwrap();
                prop_assert!((m.region_area(RegionId(0)) - 1.0).abs() < 1e-9);
            }
            Ok(Err(_)) => {}
        }
    }
}
