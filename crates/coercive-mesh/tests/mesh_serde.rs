//! A mesh read with serde is validated: indices in range, no inverted or degenerate
//! triangles, finite coordinates, unique region names, curves along mesh edges; the error
//! names the item (numbered from 1). Mutated serialised meshes never panic the reader, and
//! the `try_` accessors never panic on ids the mesh does not hold.

use coercive_mesh::{
    structured, CurveId, Geometry, Mesh, MeshError, MeshSettings, Point2, RegionId, TriangleId,
    VertexId,
};
use proptest::prelude::*;
use serde_json::Value;

/// A 2 x 1 structured rectangle: 6 vertices, 4 triangles, one region, 4 curves.
fn small() -> Mesh {
    structured::rectangle(0.0, 0.0, 2.0, 1.0, 2, 1, "iron").unwrap()
}

/// A mesher-made mesh with two regions and an arc: a square of air around a disc of steel.
fn meshed() -> Mesh {
    let mut g = Geometry::new();
    g.add_rectangle(Point2::new(0.0, 0.0), Point2::new(1.0, 1.0));
    g.add_circle(Point2::new(0.5, 0.5), 0.2);
    g.add_region("air", Point2::new(0.05, 0.05));
    g.add_region("steel", Point2::new(0.5, 0.5));
    g.set_settings(MeshSettings {
        max_size: Some(0.25),
        ..MeshSettings::default()
    });
    g.mesh().unwrap()
}

fn json(m: &Mesh) -> Value {
    serde_json::to_value(m).unwrap()
}

/// Reads `v` back as a mesh and returns the error message (the test fails if it reads).
fn refused(v: &Value) -> String {
    match serde_json::from_value::<Mesh>(v.clone()) {
        Ok(_) => panic!("a broken mesh was accepted: {v}"),
        Err(e) => e.to_string(),
    }
}

#[test]
fn valid_meshes_round_trip() {
    for m in [small(), meshed()] {
        let text = serde_json::to_string(&m).unwrap();
        let back: Mesh = serde_json::from_str(&text).unwrap();
        assert_eq!(back, m);
    }
}

#[test]
fn a_vertex_index_out_of_range_names_the_triangle() {
    let mut v = json(&small());
    v["triangles"][2][1] = 6.into();
    let e = refused(&v);
    assert!(
        e.contains("triangle 3 (vertices") && e.contains("refers to vertex 7"),
        "{e}"
    );
    assert!(e.contains("6 vertices"), "{e}");
}

#[test]
fn a_region_index_out_of_range_names_the_triangle_and_the_count() {
    let mut v = json(&small());
    v["triangle_regions"][3] = 1.into();
    let e = refused(&v);
    assert!(e.contains("triangle 4") && e.contains("region 2"), "{e}");
    assert!(e.contains("1 regions"), "{e}");
}

#[test]
fn an_inverted_triangle_is_named_with_its_region() {
    let mut v = json(&small());
    // Swapping two corners turns the first triangle clockwise.
    let t = v["triangles"][0].clone();
    v["triangles"][0] = Value::Array(vec![t[1].clone(), t[0].clone(), t[2].clone()]);
    let e = refused(&v);
    assert!(e.contains("triangle 1") && e.contains("\"iron\""), "{e}");
    assert!(e.contains("inverted"), "{e}");
}

#[test]
fn degenerate_triangles_are_refused() {
    // A repeated corner (zero area).
    let mut v = json(&small());
    let t = v["triangles"][1].clone();
    v["triangles"][1] = Value::Array(vec![t[0].clone(), t[1].clone(), t[1].clone()]);
    let e = refused(&v);
    assert!(e.contains("triangle 2") && e.contains("degenerate"), "{e}");

    // Collinear corners up to round-off: move the middle vertex of the bottom edge's
    // neighbour so that a triangle collapses onto a line.
    let m = small();
    let mut v = json(&m);
    let [a, b, c] = m.triangles()[0];
    let (pa, pb) = (m.vertex(a), m.vertex(b));
    let mid = Point2::new(0.5 * (pa.x + pb.x), 0.5 * (pa.y + pb.y) + 1e-15);
    v["vertices"][c.index()] = serde_json::to_value(mid).unwrap();
    let e = refused(&v);
    assert!(e.contains("degenerate") || e.contains("inverted"), "{e}");
}

#[test]
fn a_non_finite_coordinate_is_refused() {
    // JSON has no NaN: serde_json writes it as null, which a coordinate refuses.
    let mut v = json(&small());
    v["vertices"][4]["x"] = Value::Null;
    assert!(serde_json::from_value::<Mesh>(v).is_err());
    // Through the constructor a NaN is named with its vertex.
    let m = small();
    let mut vertices = m.vertices().to_vec();
    vertices[4].y = f64::NAN;
    let e = Mesh::from_parts(
        vertices,
        m.triangles().to_vec(),
        m.triangle_regions().to_vec(),
        m.regions().to_vec(),
        m.curves().to_vec(),
        m.curve_pairs().to_vec(),
    )
    .unwrap_err();
    assert!(
        matches!(&e, MeshError::InvalidMeshItem { item, .. } if item == "vertex 5"),
        "{e:?}"
    );
    assert!(e.to_string().contains("non-finite"), "{e}");
}

#[test]
fn curves_must_follow_mesh_edges_and_stay_in_range() {
    let mut v = json(&small());
    // "bottom" runs 0 -> 1 -> 2; make it jump across the mesh from vertex 1 to vertex 6.
    v["curves"][0]["nodes"] = serde_json::json!([0, 5]);
    let e = refused(&v);
    assert!(
        e.contains("curve 1 \"bottom\"") && e.contains("vertex 1 to vertex 6"),
        "{e}"
    );

    let mut v = json(&small());
    v["curves"][2]["nodes"] = serde_json::json!([40]);
    let e = refused(&v);
    assert!(
        e.contains("curve 3 \"top\"") && e.contains("vertex 41"),
        "{e}"
    );
}

#[test]
fn curve_pairs_are_checked() {
    let mut v = json(&small());
    v["curve_pairs"] = serde_json::json!([{ "first": 0, "second": 9 }]);
    let e = refused(&v);
    assert!(
        e.contains("curve pair 1") && e.contains("curves 1 and 10"),
        "{e}"
    );

    let mut v = json(&small());
    // "bottom" has 3 nodes, "right" 2.
    v["curve_pairs"] = serde_json::json!([{ "first": 0, "second": 1 }]);
    let e = refused(&v);
    assert!(e.contains("curve pair 1") && e.contains("3 nodes"), "{e}");
}

#[test]
fn repeated_region_names_are_refused() {
    let mut v = json(&meshed());
    v["regions"][1]["name"] = "air".into();
    let e = refused(&v);
    assert!(
        e.contains("region 2 \"air\"") && e.contains("region 1"),
        "{e}"
    );
}

#[test]
fn lists_of_different_lengths_are_refused() {
    let mut v = json(&small());
    v["triangle_regions"].as_array_mut().unwrap().pop();
    let e = refused(&v);
    assert!(e.contains("4 triangles but 3 triangle regions"), "{e}");
}

#[test]
fn try_accessors_agree_with_the_panicking_ones_and_refuse_unknown_ids() {
    let m = meshed();
    for t in 0..m.triangles().len() {
        let t = TriangleId(t as u32);
        assert_eq!(m.try_triangle_region(t).unwrap(), m.triangle_region(t));
        assert_eq!(m.try_triangle_points(t).unwrap(), m.triangle_points(t));
        assert_eq!(m.try_triangle_area(t).unwrap(), m.triangle_area(t));
    }
    assert_eq!(m.try_vertex(VertexId(3)).unwrap(), m.vertex(VertexId(3)));
    assert_eq!(
        m.try_curve_nodes(CurveId(0)).unwrap(),
        m.curve_nodes(CurveId(0))
    );
    assert_eq!(m.try_region(RegionId(1)).unwrap().name, "steel");

    let nt = m.triangles().len();
    let e = m.try_triangle_area(TriangleId(nt as u32)).unwrap_err();
    assert_eq!(
        e,
        MeshError::UnknownId {
            kind: "triangle".into(),
            id: nt as u32,
            count: nt
        }
    );
    assert!(e.to_string().contains(&format!("triangle id {nt}")), "{e}");
    let nv = m.vertices().len() as u32;
    assert!(matches!(
        m.try_vertex(VertexId(nv)),
        Err(MeshError::UnknownId { .. })
    ));
    assert!(matches!(
        m.try_triangle_region(TriangleId(u32::MAX)),
        Err(MeshError::UnknownId { .. })
    ));
    assert!(matches!(
        m.try_region(RegionId(2)),
        Err(MeshError::UnknownId { .. })
    ));
    let nc = m.curves().len() as u32;
    assert!(matches!(
        m.try_curve_nodes(CurveId(nc)),
        Err(MeshError::UnknownId { .. })
    ));
}

/// One edit of a serialised mesh.
#[derive(Clone, Debug)]
enum Edit {
    /// Replace the k-th number with a value.
    Number(usize, f64),
    /// Remove the k-th array element (of any array).
    Remove(usize),
    /// Swap the k-th and l-th numbers.
    Swap(usize, usize),
}

fn edit() -> impl Strategy<Value = Edit> {
    prop_oneof![
        (
            any::<usize>(),
            prop::sample::select(vec![
                -1.0,
                0.0,
                1.0,
                2.0,
                5.0,
                1e-300,
                1e300,
                -1e300,
                0.5,
                4294967295.0,
                4294967296.0,
            ])
        )
            .prop_map(|(k, x)| Edit::Number(k, x)),
        any::<usize>().prop_map(Edit::Remove),
        (any::<usize>(), any::<usize>()).prop_map(|(a, b)| Edit::Swap(a, b)),
    ]
}

/// How many numbers and non-empty arrays `v` holds.
fn count(v: &Value) -> (usize, usize) {
    match v {
        Value::Number(_) => (1, 0),
        Value::Array(a) => a
            .iter()
            .map(count)
            .fold((0, usize::from(!a.is_empty())), |s, c| {
                (s.0 + c.0, s.1 + c.1)
            }),
        Value::Object(o) => o
            .values()
            .map(count)
            .fold((0, 0), |s, c| (s.0 + c.0, s.1 + c.1)),
        _ => (0, 0),
    }
}

/// The `k`-th number of `v` (depth first), counting down `k`.
fn nth_number<'a>(v: &'a mut Value, k: &mut usize) -> Option<&'a mut Value> {
    match v {
        Value::Number(_) if *k == 0 => Some(v),
        Value::Number(_) => {
            *k -= 1;
            None
        }
        Value::Array(a) => a.iter_mut().find_map(|x| nth_number(x, k)),
        Value::Object(o) => o.values_mut().find_map(|x| nth_number(x, k)),
        _ => None,
    }
}

/// The `k`-th non-empty array of `v` (depth first, parents before children).
fn nth_array<'a>(v: &'a mut Value, k: &mut usize) -> Option<&'a mut Vec<Value>> {
    match v {
        Value::Array(a) => {
            if !a.is_empty() {
                if *k == 0 {
                    return Some(a);
                }
                *k -= 1;
            }
            a.iter_mut().find_map(|x| nth_array(x, k))
        }
        Value::Object(o) => o.values_mut().find_map(|x| nth_array(x, k)),
        _ => None,
    }
}

fn apply(v: &mut Value, e: &Edit) {
    let (n_numbers, n_arrays) = count(v);
    match *e {
        Edit::Number(k, x) if n_numbers > 0 => {
            let value = if x.fract() == 0.0 && x.abs() < 1e18 {
                serde_json::json!(x as i64)
            } else {
                serde_json::json!(x)
            };
            *nth_number(v, &mut (k % n_numbers)).unwrap() = value;
        }
        Edit::Swap(a, b) if n_numbers > 1 => {
            let (a, b) = (a % n_numbers, b % n_numbers);
            let va = nth_number(v, &mut a.clone()).unwrap().clone();
            let vb = std::mem::replace(nth_number(v, &mut b.clone()).unwrap(), va);
            *nth_number(v, &mut a.clone()).unwrap() = vb;
        }
        Edit::Remove(k) if n_arrays > 0 => {
            let a = nth_array(v, &mut (k % n_arrays)).unwrap();
            let n = a.len();
            a.remove(k % n);
        }
        _ => {}
    }
}

/// The words one of the mesh's own errors uses to name its item.
const ITEMS: [&str; 6] = [
    "triangle",
    "vertex",
    "region",
    "curve",
    "curve pair",
    "vertices",
];

proptest! {
    #![proptest_config(ProptestConfig { cases: 300, rng_seed: proptest::test_runner::RngSeed::Fixed(7), ..ProptestConfig::default() })]

    /// Mutated serialised meshes (numbers replaced or swapped, array elements removed) never
    /// panic: either the mesh reads and every accessor works on every item, or the error
    /// names an item of the mesh or (for a value of the wrong type or count) what serde expected.
    #[test]
    fn mutated_meshes_never_panic(which in 0usize..2, edits in prop::collection::vec(edit(), 1..4)) {
        let mut v = json(&if which == 0 { small() } else { meshed() });
        for e in &edits {
            apply(&mut v, e);
        }
        let text = serde_json::to_string(&v).unwrap();
        let read = std::panic::catch_unwind(|| serde_json::from_str::<Mesh>(&text));
        prop_assert!(read.is_ok(), "reading panicked on {}", text);
        match read.unwrap() {
            Ok(m) => {
                m.sanity_check().unwrap();
                for t in 0..m.triangles().len() {
                    let t = TriangleId(t as u32);
                    prop_assert!(m.triangle_area(t) > 0.0);
                    let _ = m.region_area(m.triangle_region(t));
                    let _ = m.regions()[m.triangle_region(t).index()].name.len();
                }
                for c in 0..m.curves().len() {
                    for &n in m.curve_nodes(CurveId(c as u32)) {
                        prop_assert!(m.vertex(n).is_finite());
                    }
                }
            }
            Err(e) => {
                let msg = e.to_string();
                // serde_json appends the line and column to every message; the mesh's own
                // errors name the item, serde's own name the wrong type or length.
                let names_item = msg.starts_with("invalid mesh:") && ITEMS.iter().any(|w| msg.contains(w));
                let wrong_shape = ["invalid type", "invalid value", "invalid length", "missing field"]
                    .iter()
                    .any(|w| msg.starts_with(w));
                prop_assert!(names_item || wrong_shape, "{}", msg);
            }
        }
    }
}
