//! `Mesh::gap_along`: the distance a set of regions travels along a direction before it
//! touches another, checked against the drawn coordinates (exact up to round-off).

use coercive_mesh::{Geometry, Mesh, MeshSettings, Point2, RegionId};

const TOL: f64 = 1e-12;

/// An air box around a moving pair (a block [0, 1] x [0, 1] with a wedge on top whose apex is
/// at (0.4, 1.1)) and a plate [-1, 2] x [plate_y, plate_y + 0.2].
fn scene(plate_y: f64) -> Mesh {
    let mut g = Geometry::new();
    g.add_rectangle(Point2::new(-3.0, -3.0), Point2::new(4.0, 4.0));
    g.add_rectangle(Point2::new(0.0, 0.0), Point2::new(1.0, 1.0));
    g.add_polygon(&[
        Point2::new(0.2, 1.0),
        Point2::new(0.6, 1.0),
        Point2::new(0.4, 1.1),
    ]);
    g.add_rectangle(Point2::new(-1.0, plate_y), Point2::new(2.0, plate_y + 0.2));
    g.add_region("air", Point2::new(-2.5, -2.5));
    g.add_region("block", Point2::new(0.5, 0.5));
    g.add_region("wedge", Point2::new(0.4, 1.03));
    g.add_region("plate", Point2::new(1.5, plate_y + 0.1));
    g.set_settings(MeshSettings {
        max_size: Some(0.3),
        ..MeshSettings::default()
    });
    g.mesh().unwrap()
}

fn ids(m: &Mesh, names: &[&str]) -> Vec<RegionId> {
    names.iter().map(|n| m.region_by_name(n).unwrap()).collect()
}

#[test]
fn the_gap_along_the_motion_is_the_drawn_one() {
    let m = scene(1.3);
    let (block, plate) = (ids(&m, &["block"]), ids(&m, &["plate"]));
    // Block alone: its top face meets the plate's bottom face after 0.3.
    let g = m.gap_along(&block, &plate, [0.0, 1.0]).unwrap();
    assert!((g - 0.3).abs() < TOL, "{g}");
    // With the wedge, its apex (a vertex against an edge) closes first: 0.2.
    let both = ids(&m, &["block", "wedge"]);
    let g = m.gap_along(&both, &plate, [0.0, 1.0]).unwrap();
    assert!((g - 0.2).abs() < TOL, "{g}");
    // The direction need not be normalised; the answer is a distance along it.
    let g = m.gap_along(&both, &plate, [0.0, 5.0]).unwrap();
    assert!((g - 0.2).abs() < TOL, "{g}");
    // Diagonally (1, 1)/sqrt 2 the apex still arrives first, after 0.2 sqrt 2.
    let g = m.gap_along(&both, &plate, [1.0, 1.0]).unwrap();
    assert!((g - 0.2 * 2f64.sqrt()).abs() < TOL, "{g}");
    // The plate seen from the other side: the same gap along the opposite motion.
    let g = m.gap_along(&plate, &both, [0.0, -1.0]).unwrap();
    assert!((g - 0.2).abs() < TOL, "{g}");
}

#[test]
fn parts_that_never_meet_or_already_touch() {
    let m = scene(1.3);
    let (block, plate) = (ids(&m, &["block"]), ids(&m, &["plate"]));
    assert_eq!(m.gap_along(&block, &plate, [0.0, -1.0]), None);
    assert_eq!(m.gap_along(&block, &plate, [1.0, 0.0]), None);
    assert_eq!(m.gap_along(&block, &plate, [0.0, 0.0]), None);
    assert_eq!(m.gap_along(&block, &plate, [f64::NAN, 1.0]), None);
    assert_eq!(m.gap_along(&block, &[RegionId(99)], [0.0, 1.0]), None);
    assert_eq!(m.gap_along(&[], &plate, [0.0, 1.0]), None);
    // The wedge sits on the block: touching, gap 0.
    let wedge = ids(&m, &["wedge"]);
    assert_eq!(m.gap_along(&block, &wedge, [0.0, 1.0]), Some(0.0));
}
