//! Rigid re-meshing keeps the mesh quality next to the moved (never split) group outlines,
//! at every placement of a force-versus-gap study (the switchable pad) and of a
//! torque-versus-angle study (the switched reluctance machine), and the quality report
//! says so truthfully.

use std::path::PathBuf;

use coercive::case::Case;
use coercive::mesh::{
    triangle_angles_deg, Mesh, Placement, Point2, QualityReport, RigidMesher, TriangleId,
};

fn geometry(file: &str) -> coercive::mesh::Geometry {
    let path = PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("meshes")
        .join(file);
    Case::from_file(&path).unwrap().geometry().unwrap()
}

/// Smallest angle of each triangle (degrees), computed here independently of the report
/// (law of cosines; a triangle's angles sum to 180 degrees, checked).
fn min_angles(m: &Mesh) -> Vec<f64> {
    (0..m.triangles().len())
        .map(|t| {
            let p = m.triangle_points(TriangleId(t as u32));
            let a = triangle_angles_deg(p);
            assert!((a[0] + a[1] + a[2] - 180.0).abs() < 1e-9);
            a[0].min(a[1]).min(a[2])
        })
        .collect()
}

/// Checks one placement: the group is kept exactly, the report matches an independent
/// count, and returns (min angle in degrees, triangles below the requested minimum).
fn check(rigid: &RigidMesher, drawn: &Mesh, group: &str, pl: Placement) -> (f64, usize) {
    let (m, rep): (Mesh, QualityReport) = rigid.mesh_at_with_report(&[(group, pl)]).unwrap();
    m.sanity_check().unwrap();
    // The group's nodes are the drawn ones moved rigidly, its triangles the same.
    for v in 0..rigid.group_node_count() {
        let id = coercive::mesh::VertexId(v as u32);
        let (e, g) = (pl.apply(drawn.vertex(id)), m.vertex(id));
        assert!(e.distance(g) < 1e-12, "node {v}: {g:?} vs {e:?}");
    }
    let nt = rigid.group_triangle_count();
    assert_eq!(&drawn.triangles()[..nt], &m.triangles()[..nt]);
    assert_eq!(&drawn.triangle_regions()[..nt], &m.triangle_regions()[..nt]);
    // The report tells the truth.
    let mins = min_angles(&m);
    let lo = mins.iter().copied().fold(180.0, f64::min);
    let below = mins.iter().filter(|&&a| a < 28.0 - 1e-9).count();
    assert_eq!(rep.triangles, m.triangles().len());
    assert_eq!(rep.requested_min_angle_deg, 28.0);
    assert!(
        (rep.min_angle_deg - lo).abs() < 1e-9,
        "{} {lo}",
        rep.min_angle_deg
    );
    assert_eq!(rep.triangles_below_min_angle, below);
    // No small input angle in these drawings (all corners are 90 degrees or more, or
    // tangent-free arc/line joints), so nothing excuses a bad triangle but the outline.
    assert!(rep.small_input_angles.is_empty());
    (lo, below)
}

#[test]
fn the_pad_keeps_its_quality_from_a_closed_to_an_open_gap() {
    // meshes/switchable_pad.toml: drawn gap 0.5 mm; a move of +0.45 mm gives 0.05 mm,
    // -2.5 mm gives 3 mm. The outline is sized for the narrowest gap of the study.
    let rigid = geometry("switchable_pad.toml")
        .prepare_rigid_with_outline_size(0.05e-3)
        .unwrap();
    let drawn = rigid.mesh_at(&[]).unwrap();
    let mut worst = (180.0f64, 0usize);
    let mut clean = 0;
    for gap_mm in [0.05, 0.1, 0.2, 0.5, 1.0, 1.5, 2.0, 3.0] {
        let dy = (0.5 - gap_mm) * 1e-3;
        let (lo, below) = check(&rigid, &drawn, "pad", Placement::translation(0.0, dy));
        println!("pad gap {gap_mm} mm: min angle {lo:.3} deg, {below} triangles below 28 deg");
        worst = (worst.0.min(lo), worst.1.max(below));
        clean += usize::from(below == 0);
    }
    // Measured: 28.0 deg at every gap (before free air nodes next to the fixed outline were
    // removed after refinement: 26.93 deg at 1.5 mm, one triangle at a pole corner). The
    // requested minimum angle is met everywhere, so any regression fails.
    assert!(worst.0 >= 28.0 - 1e-9, "{worst:?}");
    assert_eq!(worst.1, 0, "{worst:?}");
    assert_eq!(clean, 8);
}

#[test]
fn the_rotor_keeps_its_quality_at_every_angle() {
    // meshes/srm_full.toml: 0.5 mm air gap; the outline is sized automatically at the
    // finest size found along it (the gap size), so any angle finds it fine enough.
    let rigid = geometry("srm_full.toml").prepare_rigid().unwrap();
    let drawn = rigid.mesh_at(&[]).unwrap();
    let mut worst = (180.0f64, 0usize);
    let mut clean = 0;
    for deg in [0.0, 1.0, 3.7, 7.5, 11.0, 15.0, 22.5, 30.0, 45.0] {
        let pl = Placement::rotation(f64::to_radians(deg), Point2::new(0.0, 0.0));
        let (lo, below) = check(&rigid, &drawn, "rotor", pl);
        println!("rotor {deg} deg: min angle {lo:.3} deg, {below} triangles below 28 deg");
        worst = (worst.0.min(lo), worst.1.max(below));
        clean += usize::from(below == 0);
    }
    // Measured: 28.0 deg at every angle (before free air nodes next to the fixed outline
    // were removed after refinement: 21.4 to 28.0 deg, up to 6 of about 100 000 triangles
    // below 28 deg, all beside the rotor outline).
    assert!(worst.0 >= 28.0 - 1e-9, "{worst:?}");
    assert_eq!(worst.1, 0, "{worst:?}");
    assert_eq!(clean, 9);
}

#[test]
fn a_bad_outline_size_is_refused() {
    let g = geometry("switchable_pad.toml");
    for h in [0.0, -1.0, f64::NAN, f64::INFINITY] {
        let e = g.prepare_rigid_with_outline_size(h).unwrap_err();
        assert!(
            matches!(e, coercive::mesh::MeshError::InvalidSize { .. }),
            "{e:?}"
        );
    }
}
