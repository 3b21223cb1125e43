//! Point location against brute force: random points (proptest), every vertex and edge
//! midpoint, points in a hole and outside, and a strongly graded mesh. The oracle is the
//! definition: a point belongs to a triangle when its barycentric coordinates are all
//! non-negative (within the documented tolerance).

mod p1_support;

use std::sync::OnceLock;

use coercive_mesh::{Mesh, TriangleId};
use coercive_post::locate::BARYCENTRIC_TOLERANCE;
use coercive_post::{PointLocator, PostError};
use proptest::prelude::*;

/// A graded tensor mesh of [0, 1] x [0, 0.5] m with a square hole [0.4, 0.6] x [0.2, 0.3]
/// and two regions, cells shrinking by a factor 1.15 towards x = 0.
fn holed_mesh() -> &'static (Mesh, PointLocator) {
    static MESH: OnceLock<(Mesh, PointLocator)> = OnceLock::new();
    MESH.get_or_init(|| {
        let mut xs = p1_support::graded(0.0, 1.0, 40, 1.15);
        xs.insert(1, 1e-5); // a very thin first column
        let ys = p1_support::graded(0.0, 0.5, 25, 1.0);
        let mesh = p1_support::tensor_mesh(&xs, &ys, &["steel", "air"], |x, y| {
            if (0.4..0.6).contains(&x) && (0.2..0.3).contains(&y) {
                None
            } else if x < 0.3 {
                Some(0)
            } else {
                Some(1)
            }
        });
        let loc = PointLocator::new(mesh.clone());
        (mesh, loc)
    })
}

fn barycentric(mesh: &Mesh, t: usize, p: [f64; 2]) -> [f64; 3] {
    let c = mesh.triangle_points(TriangleId(t as u32));
    let area2 = (c[1].x - c[0].x) * (c[2].y - c[0].y) - (c[2].x - c[0].x) * (c[1].y - c[0].y);
    let sub = |a: usize, b: usize| {
        ((c[a].x - p[0]) * (c[b].y - p[1]) - (c[b].x - p[0]) * (c[a].y - p[1])) / area2
    };
    [sub(1, 2), sub(2, 0), sub(0, 1)]
}

/// Every triangle containing `p` by brute force, with its smallest barycentric coordinate.
fn brute_force(mesh: &Mesh, p: [f64; 2]) -> Vec<(usize, f64)> {
    (0..mesh.triangles().len())
        .filter_map(|t| {
            let l = barycentric(mesh, t, p);
            let m = l[0].min(l[1]).min(l[2]);
            (m >= -BARYCENTRIC_TOLERANCE).then_some((t, m))
        })
        .collect()
}

fn check_point(mesh: &Mesh, loc: &PointLocator, p: [f64; 2]) {
    let brute = brute_force(mesh, p);
    match loc.locate(p) {
        Ok(found) => {
            let t = found.triangle.index();
            let best = brute.iter().map(|b| b.1).fold(f64::NEG_INFINITY, f64::max);
            let mine = brute.iter().find(|b| b.0 == t);
            assert!(
                mine.is_some(),
                "point {p:?}: locator says triangle {t}, brute force {brute:?}"
            );
            assert_eq!(
                mine.unwrap().1,
                best,
                "point {p:?}: not the most-inside triangle"
            );
            let all: Vec<usize> = loc
                .locate_all(p)
                .iter()
                .map(|l| l.triangle.index())
                .collect();
            let brute_ids: Vec<usize> = brute.iter().map(|b| b.0).collect();
            assert_eq!(all, brute_ids, "point {p:?}: locate_all");
            let s: f64 = found.barycentric.iter().sum();
            assert!((s - 1.0).abs() < 1e-12);
        }
        Err(PostError::PointOutsideMesh { x, y }) => {
            assert_eq!([x, y], p);
            assert!(
                brute.is_empty(),
                "point {p:?} missed; brute force {brute:?}"
            );
        }
        Err(e) => panic!("unexpected error {e}"),
    }
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(2000))]

    #[test]
    fn random_points_agree_with_brute_force(x in -0.1_f64..1.1, y in -0.1_f64..0.6) {
        let (mesh, loc) = holed_mesh();
        check_point(mesh, loc, [x, y]);
    }

    #[test]
    fn points_near_the_hole_and_the_thin_column_agree(x in 0.39_f64..0.41, y in 0.0_f64..2e-5) {
        let (mesh, loc) = holed_mesh();
        check_point(mesh, loc, [x, 0.19 + 0.12 * y / 2e-5]);
        check_point(mesh, loc, [y, x]);
    }
}

#[test]
fn every_vertex_and_edge_midpoint_is_found() {
    let (mesh, loc) = holed_mesh();
    let mut used = vec![false; mesh.vertices().len()];
    for tri in mesh.triangles() {
        for v in tri {
            used[v.index()] = true;
        }
        for k in 0..3 {
            let (a, b) = (mesh.vertex(tri[k]), mesh.vertex(tri[(k + 1) % 3]));
            check_point(mesh, loc, [0.5 * (a.x + b.x), 0.5 * (a.y + b.y)]);
        }
    }
    for (v, p) in mesh.vertices().iter().enumerate() {
        if used[v] {
            let found = loc.locate([p.x, p.y]);
            assert!(found.is_ok(), "vertex {v} at ({}, {}) not found", p.x, p.y);
            check_point(mesh, loc, [p.x, p.y]);
        }
    }
}

#[test]
fn holes_and_outside_points_are_typed_errors_naming_the_point() {
    let (_, loc) = holed_mesh();
    for p in [[0.5, 0.25], [1.5, 0.25], [-0.001, 0.1], [0.5, 0.5000001]] {
        match loc.locate(p) {
            Err(PostError::PointOutsideMesh { x, y }) => {
                assert_eq!([x, y], p);
                let text = PostError::PointOutsideMesh { x, y }.to_string();
                assert!(text.contains(&format!("{}", p[0])), "{text}");
            }
            other => panic!("{p:?}: expected PointOutsideMesh, got {other:?}"),
        }
    }
    assert!(loc.locate([f64::NAN, 0.1]).is_err());
    assert!(loc.locate([0.1, f64::INFINITY]).is_err());
}

#[test]
fn location_is_deterministic_across_builds_and_threads() {
    let (mesh, loc) = holed_mesh();
    let again = PointLocator::new(mesh.clone());
    let pool = rayon::ThreadPoolBuilder::new()
        .num_threads(1)
        .build()
        .unwrap();
    for i in 0..500 {
        let p = [
            (i as f64 * 0.618_033_988_7).fract(),
            0.5 * (i as f64 * 0.414_213_562_3).fract(),
        ];
        let a = loc.try_locate(p);
        let b = pool.install(|| again.try_locate(p));
        assert_eq!(a, b);
    }
}

#[test]
fn a_large_mesh_built_on_one_or_many_threads_gives_the_same_answers() {
    // 2 x 160 x 130 = 41,600 triangles: above the size where subtrees build in parallel.
    let xs = p1_support::graded(0.0, 1.0, 160, 1.01);
    let ys = p1_support::graded(0.0, 0.8, 130, 0.99);
    let mesh = p1_support::tensor_mesh(&xs, &ys, &["a", "b"], |x, y| {
        if (x - 0.5).hypot(y - 0.4) < 0.1 {
            None
        } else {
            Some(usize::from(x > 0.7))
        }
    });
    let many = PointLocator::new(mesh.clone());
    let pool = rayon::ThreadPoolBuilder::new()
        .num_threads(1)
        .build()
        .unwrap();
    let one = pool.install(|| PointLocator::new(mesh.clone()));
    for i in 0..3000 {
        let p = [
            1.02 * (i as f64 * 0.618_033_988_7).fract() - 0.01,
            0.82 * (i as f64 * 0.414_213_562_3).fract() - 0.01,
        ];
        assert_eq!(many.try_locate(p), one.try_locate(p), "point {p:?}");
        if i % 10 == 0 {
            check_point(&mesh, &many, p);
        }
    }
}
