//! Every kind of bad drawing returns its own typed error naming the item, never a panic.

use coercive_mesh::{Geometry, MeshError, MeshSettings, Point2};

/// A valid unit square with one region, as the base for each broken variant.
fn square() -> Geometry {
    let mut g = Geometry::new();
    g.add_rectangle(Point2::new(0.0, 0.0), Point2::new(1.0, 1.0));
    g.add_region("air", Point2::new(0.5, 0.5));
    g.settings.max_size = Some(0.2);
    g
}

fn err(g: &Geometry) -> MeshError {
    g.mesh().expect_err("meshing should fail")
}

#[test]
fn the_base_square_meshes() {
    square().mesh().unwrap().sanity_check().unwrap();
}

#[test]
fn nan_and_infinite_coordinates_are_named() {
    let mut g = square();
    let a = g.add_point(Point2::new(f64::NAN, 0.5));
    let b = g.add_point(Point2::new(0.5, 0.5));
    g.add_segment(a, b);
    assert!(matches!(err(&g), MeshError::NonFiniteCoordinate { item, .. } if item == "point 4"));

    let mut g = square();
    let a = g.add_point(Point2::new(0.2, 0.5));
    let b = g.add_point(Point2::new(0.8, 0.5));
    g.add_arc(a, b, Point2::new(f64::INFINITY, 0.5));
    assert!(
        matches!(err(&g), MeshError::NonFiniteCoordinate { item, .. } if item.contains("arc 4"))
    );

    let mut g = square();
    g.add_region("bad", Point2::new(0.1, f64::NEG_INFINITY));
    assert!(
        matches!(err(&g), MeshError::NonFiniteCoordinate { item, .. } if item.contains("\"bad\""))
    );
}

#[test]
fn zero_length_and_duplicate_segments_are_refused() {
    let mut g = square();
    let a = g.add_point(Point2::new(0.5, 0.5));
    g.add_segment(a, a);
    assert!(matches!(
        err(&g),
        MeshError::ZeroLengthCurve { curve: 4, .. }
    ));

    // Two points closer than the snap tolerance are one point: the segment has no length.
    let mut g = square();
    let a = g.add_point(Point2::new(0.5, 0.5));
    let b = g.add_point(Point2::new(0.5, 0.5 + 1e-12));
    g.add_segment(a, b);
    assert!(matches!(
        err(&g),
        MeshError::ZeroLengthCurve { curve: 4, .. }
    ));

    let mut g = square();
    let a = g.add_point(Point2::new(0.2, 0.5));
    let b = g.add_point(Point2::new(0.8, 0.5));
    g.add_segment(a, b);
    g.add_segment(b, a);
    assert!(matches!(
        err(&g),
        MeshError::DuplicateSegment {
            first: 4,
            second: 5,
            ..
        }
    ));
}

#[test]
fn arcs_with_inconsistent_radii_are_refused() {
    let mut g = square();
    let a = g.add_point(Point2::new(0.7, 0.5));
    let b = g.add_point(Point2::new(0.5, 0.75));
    g.add_arc(a, b, Point2::new(0.5, 0.5));
    match err(&g) {
        MeshError::InconsistentArcRadii {
            curve,
            r_start,
            r_end,
            ..
        } => {
            assert_eq!(curve, 4);
            assert!((r_start - 0.2).abs() < 1e-12 && (r_end - 0.25).abs() < 1e-12);
        }
        e => panic!("{e:?}"),
    }
}

#[test]
fn bad_sizes_are_refused_before_meshing() {
    for v in [0.0, -1.0, f64::NAN] {
        let mut g = square();
        g.set_region_size("air", v);
        assert!(matches!(err(&g), MeshError::InvalidSize { item, .. } if item.contains("\"air\"")));
    }
    // Absurdly small for a 1.4 m drawing.
    let mut g = square();
    let c = g.curves.len();
    g.set_curve_size(coercive_mesh::CurveId(c as u32 - 1), 1e-9);
    assert!(matches!(err(&g), MeshError::InvalidSize { item, .. } if item.contains("curve 3")));
    // Small enough to be legal but asking for ~2e8 triangles: the guard refuses quickly.
    let mut g = square();
    g.settings.max_size = Some(1e-4);
    assert!(matches!(
        err(&g),
        MeshError::TooManyTriangles {
            limit: 10_000_000,
            ..
        }
    ));
    // The caller may lower (or raise) the limit.
    let mut g = square();
    g.settings.max_size = Some(0.01);
    g.settings.max_triangles = 1000;
    assert!(matches!(
        err(&g),
        MeshError::TooManyTriangles { limit: 1000, .. }
    ));
    // Settings out of range.
    let mut g = square();
    g.settings.min_angle_deg = 40.0;
    assert!(matches!(err(&g), MeshError::InvalidSize { item, .. } if item == "min_angle_deg"));
    let mut g = square();
    g.settings = MeshSettings {
        growth: 0.0,
        ..MeshSettings::default()
    };
    assert!(matches!(err(&g), MeshError::InvalidSize { item, .. } if item == "growth"));
}

#[test]
fn region_points_outside_on_curves_or_sharing_an_area_are_refused() {
    let mut g = square();
    g.add_region("lost", Point2::new(2.0, 0.5));
    assert!(matches!(err(&g), MeshError::RegionNotClosed { region, .. } if region == "lost"));

    let mut g = square();
    g.add_region("edge", Point2::new(1.0, 0.5));
    assert!(matches!(err(&g), MeshError::SeedOnCurve { region, .. } if region == "edge"));

    let mut g = square();
    g.add_region("corner", Point2::new(0.0, 0.0));
    assert!(matches!(err(&g), MeshError::SeedOnCurve { region, .. } if region == "corner"));

    let mut g = square();
    g.add_region("twin", Point2::new(0.25, 0.25));
    assert!(matches!(
        err(&g),
        MeshError::SeedsInSameArea { first, second, .. } if first == "air" && second == "twin"
    ));
}

#[test]
fn open_outlines_and_enclosed_areas_without_a_point_are_refused() {
    // Three sides of a square: the area is open.
    let mut g = Geometry::new();
    let p: Vec<_> = [(0.0, 0.0), (1.0, 0.0), (1.0, 1.0), (0.0, 1.0)]
        .iter()
        .map(|&(x, y)| g.add_point(Point2::new(x, y)))
        .collect();
    g.add_segment(p[0], p[1]);
    g.add_segment(p[1], p[2]);
    g.add_segment(p[2], p[3]);
    g.add_region("air", Point2::new(0.5, 0.5));
    assert!(matches!(err(&g), MeshError::RegionNotClosed { region, .. } if region == "air"));

    // A closed square inside the region with no point of its own.
    let mut g = square();
    g.add_rectangle(Point2::new(0.4, 0.4), Point2::new(0.6, 0.6));
    g.regions[0].seed = Point2::new(0.1, 0.1);
    match err(&g) {
        MeshError::AreaWithoutRegion { x, y } => {
            assert!((0.4..=0.6).contains(&x) && (0.4..=0.6).contains(&y));
        }
        e => panic!("{e:?}"),
    }
}

#[test]
fn unknown_references_and_names_are_refused() {
    let mut g = square();
    g.add_segment(coercive_mesh::PointId(0), coercive_mesh::PointId(99));
    assert!(matches!(
        err(&g),
        MeshError::UnknownPoint {
            curve: 4,
            point: 99
        }
    ));

    let mut g = square();
    g.add_curve_pair(coercive_mesh::CurveId(0), coercive_mesh::CurveId(42));
    assert!(matches!(err(&g), MeshError::UnknownCurve { curve: 42, .. }));

    let mut g = square();
    g.add_rigid_group("rotor", &["iron"]);
    assert!(matches!(err(&g), MeshError::UnknownRegion { name, .. } if name == "iron"));

    let mut g = square();
    g.add_region("air", Point2::new(0.2, 0.2));
    assert!(matches!(err(&g), MeshError::DuplicateRegionName { name } if name == "air"));

    assert!(matches!(
        Geometry::new().mesh().unwrap_err(),
        MeshError::EmptyGeometry { .. }
    ));
}

#[test]
fn curve_pairs_of_different_lengths_are_refused() {
    let mut g = square();
    // Bottom (1 m) paired with a 0.5 m segment inside.
    let a = g.add_point(Point2::new(0.25, 0.3));
    let b = g.add_point(Point2::new(0.75, 0.3));
    let inner = g.add_segment(a, b);
    g.add_curve_pair(coercive_mesh::CurveId(0), inner);
    assert!(matches!(
        err(&g),
        MeshError::CurvePairMismatch { pair: 0, .. }
    ));
}

#[test]
fn curves_almost_touching_ask_for_too_many_triangles() {
    // Two parallel segments 1e-8 m apart in a 1 m square: the automatic gap size
    // (gap / 3) would need ~1e8 boundary nodes; the guard refuses before allocating them.
    let mut g = square();
    let a = g.add_point(Point2::new(0.2, 0.5));
    let b = g.add_point(Point2::new(0.8, 0.5));
    let c = g.add_point(Point2::new(0.2, 0.5 + 1e-8));
    let d = g.add_point(Point2::new(0.8, 0.5 + 1e-8));
    g.add_segment(a, b);
    g.add_segment(c, d);
    g.regions[0].seed = Point2::new(0.1, 0.1);
    assert!(matches!(err(&g), MeshError::TooManyTriangles { .. }));
}

#[test]
fn coordinates_the_triangulation_cannot_hold_are_named() {
    for (x, y) in [(1e-300, 0.0), (0.0, -1e-45), (1e55, 0.0)] {
        let mut g = Geometry::new();
        g.add_rectangle(Point2::new(x, y), Point2::new(1.0, 1.0));
        g.add_region("r", Point2::new(0.5, 0.5));
        match err(&g) {
            MeshError::CoordinateOutOfRange { item, .. } => assert_eq!(item, "point 0"),
            other => panic!("({x}, {y}): {other:?}"),
        }
    }
    // Tiny but representable coordinates mesh as they are.
    let mut g = Geometry::new();
    g.add_rectangle(Point2::new(1e-30, 0.0), Point2::new(1.0, 1.0));
    g.add_region("r", Point2::new(0.5, 0.5));
    g.settings.max_size = Some(0.2);
    g.mesh().unwrap().sanity_check().unwrap();
}
