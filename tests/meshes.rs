//! Every case file in `meshes/` reads, meshes, keeps its region names and meets the quality
//! promise of the mesher; rigid groups move.

use std::path::PathBuf;

use coercive::case::{geometry_to_toml, Case};
use coercive::mesh::{Placement, Point2};

fn case_files() -> Vec<PathBuf> {
    let dir = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("meshes");
    let mut files: Vec<PathBuf> = std::fs::read_dir(&dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|e| e == "toml"))
        .collect();
    files.sort();
    files
}

/// The smallest interior angle of a triangle (degrees), by the law of cosines.
fn min_angle_deg(p: [Point2; 3]) -> f64 {
    (0..3)
        .map(|k| {
            let (a, b, c) = (p[k], p[(k + 1) % 3], p[(k + 2) % 3]);
            let (ux, uy, vx, vy) = (b.x - a.x, b.y - a.y, c.x - a.x, c.y - a.y);
            let cos = (ux * vx + uy * vy) / (ux.hypot(uy) * vx.hypot(vy));
            cos.clamp(-1.0, 1.0).acos().to_degrees()
        })
        .fold(f64::INFINITY, f64::min)
}

#[test]
fn the_bench_geometries_are_all_there() {
    let names: Vec<String> = case_files()
        .iter()
        .map(|p| p.file_stem().unwrap().to_string_lossy().into_owned())
        .collect();
    for expected in [
        "switchable_pad",
        "latching_actuator",
        "srm_full",
        "srm_sector",
        "steel_ring_conductor",
        "peer_bench",
    ] {
        assert!(names.iter().any(|n| n == expected), "{expected} missing");
    }
}

#[test]
fn every_case_file_meshes_with_its_regions_and_quality() {
    for path in case_files() {
        let case = Case::from_file(&path).unwrap_or_else(|e| panic!("{}: {e}", path.display()));
        let geometry = case.geometry().unwrap();
        let (mesh, report) = case
            .mesh_with_report(&geometry)
            .unwrap_or_else(|e| panic!("{}: {e}", path.display()));
        let file = path.display();
        mesh.sanity_check().unwrap();

        // Every region that is not a hole is in the mesh, in file order, with triangles.
        let expected: Vec<&str> = geometry
            .regions
            .iter()
            .filter(|r| !r.hole)
            .map(|r| r.name.as_str())
            .collect();
        let meshed: Vec<&str> = mesh.regions().iter().map(|r| r.name.as_str()).collect();
        assert_eq!(meshed, expected, "{file}");
        for r in &report.regions {
            assert!(r.triangles > 0, "{file}: region {} is empty", r.name);
        }
        assert_eq!(
            report.regions.iter().map(|r| r.triangles).sum::<usize>(),
            mesh.triangles().len(),
            "{file}"
        );

        // Quality (issue 2): at least the requested minimum angle, except next to input
        // angles smaller than it and next to curves whose nodes are fixed before refinement
        // (curve pairs), where the mesher documents that it cannot always reach it. None of
        // our files has an input angle below 28 degrees.
        assert!(report.small_input_angles.is_empty(), "{file}");
        let requested = geometry.settings.min_angle_deg;
        // Nodes on curves of curve pairs (their distribution is fixed before refinement).
        let mut on_pair = vec![false; mesh.vertices().len()];
        for pair in mesh.curve_pairs() {
            for c in [pair.first, pair.second] {
                for v in mesh.curve_nodes(c) {
                    on_pair[v.index()] = true;
                }
            }
        }
        let mut below = 0;
        for (t, tri) in mesh.triangles().iter().enumerate() {
            let min = min_angle_deg(mesh.triangle_points(coercive::mesh::TriangleId(t as u32)));
            if min < requested - 1e-9 {
                below += 1;
                assert!(
                    tri.iter().any(|v| on_pair[v.index()]),
                    "{file}: triangle {t} has a {min} deg angle away from paired curves"
                );
            }
        }
        assert_eq!(below, report.triangles_below_min_angle, "{file}");
        if geometry.curve_pairs.is_empty() {
            assert!(report.min_angle_deg >= requested - 1e-9, "{file}");
        }
        // The report's extreme angles are those of the triangles (largest angle of a triangle
        // whose smallest is at least `requested` is at most 180 - 2 requested).
        assert!(report.max_angle_deg < 180.0, "{file}");

        // Named curves used by later sections are present.
        assert!(
            !mesh.curves_named("outer").is_empty(),
            "{file}: no `outer` curve"
        );
        for pair in mesh.curve_pairs() {
            assert_eq!(
                mesh.curve_nodes(pair.first).len(),
                mesh.curve_nodes(pair.second).len(),
                "{file}"
            );
        }
    }
}

#[test]
fn the_sector_is_half_of_the_full_machine() {
    let dir = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("meshes");
    let area = |name: &str| {
        let case = Case::from_file(dir.join(name)).unwrap();
        let mesh = case.geometry().unwrap().mesh().unwrap();
        mesh.regions()
            .iter()
            .enumerate()
            .map(|(i, r)| {
                (
                    r.name.clone(),
                    mesh.region_area(coercive::mesh::RegionId(i as u32)),
                )
            })
            .collect::<std::collections::BTreeMap<String, f64>>()
    };
    let full = area("srm_full.toml");
    let sector = area("srm_sector.toml");
    // Symmetry of the drawing: each shared region of the sector has half the area of the
    // full machine's (stator, rotor, shaft, air), within the arc chord error.
    for name in ["stator", "rotor", "shaft", "air"] {
        let (f, s) = (full[name], sector[name]);
        assert!(
            (2.0 * s - f).abs() < 2e-3 * f,
            "{name}: full {f} m^2, sector {s} m^2"
        );
    }
    // The sector's pair: the two radial edges, 60 mm each, with matched node counts.
    let case = Case::from_file(dir.join("srm_sector.toml")).unwrap();
    let mesh = case.geometry().unwrap().mesh().unwrap();
    assert_eq!(mesh.curve_pairs().len(), 1);
    let pair = mesh.curve_pairs()[0];
    let first = mesh.curve_nodes(pair.first);
    let second = mesh.curve_nodes(pair.second);
    assert_eq!(first.len(), second.len());
    // Node i of the first edge (+y axis) maps onto node i of the second (-y axis) under the
    // half-turn about the origin.
    for (a, b) in first.iter().zip(second) {
        let (p, q) = (mesh.vertex(*a), mesh.vertex(*b));
        assert!(
            (p.x + q.x).abs() < 1e-12 && (p.y + q.y).abs() < 1e-12,
            "{p:?} {q:?}"
        );
    }
}

#[test]
fn rigid_groups_of_the_bench_geometries_move() {
    let dir = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("meshes");
    for (file, group, placement) in [
        // Pad up by 0.45 mm: the gap closes from 0.5 mm to 0.05 mm.
        (
            "switchable_pad.toml",
            "pad",
            Placement::translation(0.0, 0.45e-3),
        ),
        // Not `latching_actuator.toml`: its plunger lies on the axis curve, and the mesher
        // refuses a rigid group touching a fixed curve (sliding along the axis is not
        // supported yet).
        // Rotor turned by 7.5 degrees about the shaft axis.
        (
            "srm_full.toml",
            "rotor",
            Placement::rotation(7.5f64.to_radians(), Point2::new(0.0, 0.0)),
        ),
    ] {
        let case = Case::from_file(dir.join(file)).unwrap();
        let geometry = case.geometry().unwrap();
        let rigid = geometry
            .prepare_rigid()
            .unwrap_or_else(|e| panic!("{file}: {e}"));
        let drawn = rigid.mesh_at(&[]).unwrap_or_else(|e| panic!("{file}: {e}"));
        let moved = rigid
            .mesh_at(&[(group, placement)])
            .unwrap_or_else(|e| panic!("{file}: {e}"));
        let n = rigid.group_node_count();
        assert!(n > 0, "{file}");
        for v in 0..n {
            let id = coercive::mesh::VertexId(v as u32);
            let expect = placement.apply(drawn.vertex(id));
            let got = moved.vertex(id);
            assert!(
                (expect.x - got.x).abs() < 1e-12 && (expect.y - got.y).abs() < 1e-12,
                "{file}: node {v} at {got:?}, expected {expect:?}"
            );
        }
        let t = rigid.group_triangle_count();
        assert_eq!(&drawn.triangles()[..t], &moved.triangles()[..t], "{file}");
    }
}

#[test]
fn every_case_geometry_round_trips_through_toml() {
    for path in case_files() {
        let geometry = Case::from_file(&path).unwrap().geometry().unwrap();
        let text = geometry_to_toml(&geometry).unwrap();
        let back = Case::from_toml_str(&text)
            .unwrap_or_else(|e| panic!("{}: {e}", path.display()))
            .geometry()
            .unwrap();
        assert_eq!(back, geometry, "{}", path.display());
    }
}
