//! Periodic and anti-periodic sectors against full models, and the Kelvin open boundary
//! against the unbounded closed form.

mod common;

use std::f64::consts::PI;

use coercive_fem::{ElementOrder, Formulation, Material, Model, OpenBoundary, ScalarField, MU_0};
use coercive_mesh::{CurveId, Mesh, MeshCurve, MeshCurvePair, MeshRegion, RegionId, VertexId};

fn disc_model(
    angle: f64,
    n_theta: usize,
    order: ElementOrder,
    j: ScalarField,
    anti: bool,
) -> Model {
    let radii = [0.0, 0.1, 0.2, 0.3, 0.45, 0.6, 0.8, 1.0];
    let regions = ["air"; 7];
    let mesh = common::polar([0.0, 0.0], &radii, &regions, n_theta, angle);
    let mut b = Model::builder(mesh, Formulation::Planar { depth_m: 1.0 })
        .order(order)
        .material("air", Material::vacuum())
        .current_density_field("air", j)
        .fixed_potential("outer", 0.0);
    if angle < 2.0 * PI - 1e-9 {
        b = if anti {
            b.anti_periodic("side0", "side1")
        } else {
            b.periodic("side0", "side1")
        };
    }
    b.build().unwrap()
}

/// Compares the sector solution with the full one at every sector node. The full mesh is
/// invariant under the sector's rotation, so the two discrete solutions agree to round-off
/// (a symmetry argument, no external source needed).
fn sector_matches_full(j: ScalarField, sector: f64, anti: bool) {
    for order in [ElementOrder::P1, ElementOrder::P2] {
        let full = disc_model(2.0 * PI, 64, order, j.clone(), false)
            .solve()
            .unwrap();
        let n_sector = (64.0 * sector / (2.0 * PI)).round() as usize;
        let part = disc_model(sector, n_sector, order, j.clone(), anti)
            .solve()
            .unwrap();
        let scale = full.potential().iter().fold(0.0_f64, |m, x| m.max(x.abs()));
        assert!(scale > 0.0);
        for (p, a) in part.node_points().iter().zip(part.potential()) {
            let k = full
                .node_points()
                .iter()
                .position(|q| (q[0] - p[0]).abs() < 1e-12 && (q[1] - p[1]).abs() < 1e-12)
                .unwrap();
            let b = full.potential()[k];
            assert!(
                (a - b).abs() <= 1e-9 * scale,
                "{order:?} at ({}, {}): sector {a}, full {b}",
                p[0],
                p[1]
            );
        }
        // Energies scale with the sector fraction.
        let frac = sector / (2.0 * PI);
        assert!((part.energy() / (frac * full.energy()) - 1.0).abs() < 1e-9);
    }
}

#[test]
fn periodic_quarter_sector_equals_full_model() {
    // J = J0 r^4 cos(4 theta) = J0 (x^4 - 6 x^2 y^2 + y^4): period 90 degrees.
    let j = ScalarField::new(|p| 1e6 * (p.x.powi(4) - 6.0 * p.x * p.x * p.y * p.y + p.y.powi(4)));
    sector_matches_full(j, PI / 2.0, false);
}

#[test]
fn anti_periodic_quarter_sector_equals_full_model() {
    // J = J0 r^2 cos(2 theta) = J0 (x^2 - y^2): changes sign over 90 degrees. The centre node
    // lies on both sides and is forced to zero by the anti-periodic link to itself.
    let j = ScalarField::new(|p| 1e6 * (p.x * p.x - p.y * p.y));
    sector_matches_full(j, PI / 2.0, true);
}

/// Joins two meshes (regions of the second renamed by the caller beforehand), renaming the
/// second's `outer` curve to `ext_rim` and pairing it with the first's `outer`.
fn join_with_exterior(interior: &Mesh, exterior: &Mesh) -> Mesh {
    let nv = interior.vertices().len() as u32;
    let nr = interior.regions().len() as u32;
    let mut vertices = interior.vertices().to_vec();
    vertices.extend_from_slice(exterior.vertices());
    let mut triangles = interior.triangles().to_vec();
    triangles.extend(
        exterior
            .triangles()
            .iter()
            .map(|t| t.map(|v| VertexId(v.0 + nv))),
    );
    let mut tri_regions = interior.triangle_regions().to_vec();
    tri_regions.extend(
        exterior
            .triangle_regions()
            .iter()
            .map(|r| RegionId(r.0 + nr)),
    );
    let mut regions = interior.regions().to_vec();
    regions.extend(exterior.regions().iter().map(|r| MeshRegion {
        name: format!("exterior_{}", r.name),
        rigid_group: None,
    }));
    let mut curves = interior.curves().to_vec();
    let n_int_curves = curves.len() as u32;
    curves.extend(exterior.curves().iter().map(|c| MeshCurve {
        name: c.name.as_ref().map(|n| {
            if n == "outer" {
                "ext_rim".into()
            } else {
                n.clone()
            }
        }),
        nodes: c.nodes.iter().map(|v| VertexId(v.0 + nv)).collect(),
    }));
    let outer = interior.curves_named("outer")[0];
    let ext = CurveId(n_int_curves + exterior.curves_named("outer")[0].0);
    Mesh::from_parts(
        vertices,
        triangles,
        tri_regions,
        regions,
        curves,
        vec![MeshCurvePair {
            first: outer,
            second: ext,
        }],
    )
    .unwrap()
}

/// A current density J = J0 x / a in the disc r < a (net current zero) in unbounded space.
/// Solving -lap A = mu_0 J with A = f(r) cos(theta): inside f = -mu_0 J0 r^3 / (8 a) + alpha r,
/// outside f = beta / r; continuity of f and f' at r = a gives beta = mu_0 J0 a^3 / 8
/// (derived here; a Poisson problem with a cos(theta) source, as in any potential-theory text,
/// e.g. Jackson, Classical Electrodynamics, 3rd ed., sec. 2.11 for the 2D harmonics).
fn a_exterior(j0: f64, a: f64, x: f64, y: f64) -> f64 {
    let r2 = x * x + y * y;
    MU_0 * j0 * a.powi(3) / 8.0 * x / r2
}

#[test]
fn kelvin_open_boundary_reproduces_the_unbounded_field() {
    let (a, big_r, j0) = (0.01, 0.02, 1e6);
    let mut radii = common::linspace(0.0, a, 8);
    radii.extend(common::linspace(a, big_r, 8).into_iter().skip(1));
    let regions: Vec<&str> = (0..radii.len() - 1)
        .map(|k| if k < 8 { "conductor" } else { "air" })
        .collect();
    let interior = common::polar([0.0, 0.0], &radii, &regions, 64, 2.0 * PI);
    let centre = [5.0 * big_r, 0.0];
    let exterior = common::polar(
        centre,
        &common::linspace(0.0, big_r, 16),
        &["disc"; 16],
        64,
        2.0 * PI,
    );
    let mesh = join_with_exterior(&interior, &exterior);
    let source = ScalarField::new(move |p| j0 * p.x / a);
    let open = Model::builder(mesh, Formulation::Planar { depth_m: 1.0 })
        .order(ElementOrder::P2)
        .material("conductor", Material::vacuum())
        .material("air", Material::vacuum())
        .current_density_field("conductor", source.clone())
        .open_boundary(OpenBoundary {
            circle: "outer".into(),
            exterior_boundary: "ext_rim".into(),
            exterior_region: "exterior_disc".into(),
            exterior_centre: centre,
        })
        .build()
        .unwrap();
    let sol = open.solve().unwrap();
    // The same interior truncated at R with A = 0: the error the open boundary removes.
    let truncated = Model::builder(interior, Formulation::Planar { depth_m: 1.0 })
        .order(ElementOrder::P2)
        .material("conductor", Material::vacuum())
        .material("air", Material::vacuum())
        .current_density_field("conductor", source)
        .fixed_potential("outer", 0.0)
        .build()
        .unwrap()
        .solve()
        .unwrap();
    let mesh = open.mesh();
    let mut worst_open = 0.0_f64;
    let mut worst_truncated = 0.0_f64;
    for (r, th) in [(0.012, 0.3), (0.016, 2.0), (0.019, 4.0), (0.015, 0.0)] {
        let p = [r * f64::cos(th), r * f64::sin(th)];
        let exact = a_exterior(j0, a, p[0], p[1]);
        let amp = a_exterior(j0, a, r, 0.0);
        let t = common::locate(mesh, p);
        let t_trunc = common::locate(truncated.model().mesh(), p);
        worst_open = worst_open.max((sol.potential_at(t, p).unwrap() - exact).abs() / amp);
        worst_truncated =
            worst_truncated.max((truncated.potential_at(t_trunc, p).unwrap() - exact).abs() / amp);
    }
    // Points outside the circle, seen through the inversion x' = c + R^2 x / |x|^2.
    for (r, th) in [(0.03, 0.5), (0.08, 1.0)] {
        let p = [r * f64::cos(th), r * f64::sin(th)];
        let s = big_r * big_r / (r * r);
        let q = [centre[0] + s * p[0], centre[1] + s * p[1]];
        let exact = a_exterior(j0, a, p[0], p[1]);
        let amp = a_exterior(j0, a, r, 0.0);
        let t = common::locate(mesh, q);
        worst_open = worst_open.max((sol.potential_at(t, q).unwrap() - exact).abs() / amp);
    }
    eprintln!("relative error of A: open {worst_open:.2e}, truncated {worst_truncated:.2e}");
    assert!(worst_open < 1e-2, "open boundary error {worst_open}");
    assert!(
        worst_truncated > 0.3,
        "truncation should matter here: {worst_truncated}"
    );
}

/// Splits every curve named `name` at its middle node: the first half keeps the name, the
/// second half is renamed `rest` (the pair's curve ids and lengths are kept, so the halves
/// of a matched pair stay matched).
fn split_rim(mesh: &Mesh, names: [&str; 2], rests: [&str; 2]) -> Mesh {
    let mut curves = mesh.curves().to_vec();
    let mut extra = Vec::new();
    for curve in &mut curves {
        for (name, rest) in names.iter().zip(rests) {
            if curve.name.as_deref() == Some(*name) {
                let half = curve.nodes.len() / 2;
                extra.push(MeshCurve {
                    name: Some(rest.into()),
                    nodes: curve.nodes[half..].to_vec(),
                });
                curve.nodes.truncate(half + 1);
            }
        }
    }
    curves.extend(extra);
    Mesh::from_parts(
        mesh.vertices().to_vec(),
        mesh.triangles().to_vec(),
        mesh.triangle_regions().to_vec(),
        mesh.regions().to_vec(),
        curves,
        mesh.curve_pairs().to_vec(),
    )
    .unwrap()
}

/// An open boundary whose circle covers only half of the interior rim (the other half would
/// silently stay natural) is refused, naming the curve and the uncovered edge; the same rim
/// with the other half under a fixed potential is accepted (every edge has a condition).
#[test]
fn an_open_boundary_covering_part_of_the_rim_is_refused() {
    let big_r = 0.02;
    let interior = common::polar(
        [0.0, 0.0],
        &common::linspace(0.0, big_r, 5),
        &["air"; 5],
        32,
        2.0 * PI,
    );
    let centre = [5.0 * big_r, 0.0];
    let exterior = common::polar(
        centre,
        &common::linspace(0.0, big_r, 5),
        &["disc"; 5],
        32,
        2.0 * PI,
    );
    let mesh = split_rim(
        &join_with_exterior(&interior, &exterior),
        ["outer", "ext_rim"],
        ["outer_rest", "ext_rest"],
    );
    let open = OpenBoundary {
        circle: "outer".into(),
        exterior_boundary: "ext_rim".into(),
        exterior_region: "exterior_disc".into(),
        exterior_centre: centre,
    };
    let builder = || {
        Model::builder(mesh.clone(), Formulation::Planar { depth_m: 1.0 })
            .material("air", Material::vacuum())
            .current_density("air", 1e6)
            .open_boundary(open.clone())
    };
    let e = builder().build().unwrap_err();
    match &e {
        coercive_fem::FemError::PartialOpenBoundary {
            curve,
            radius,
            covered_percent,
            x0,
            y0,
            ..
        } => {
            assert_eq!(curve, "outer");
            assert!((radius - big_r).abs() < 1e-12, "{e}");
            // Half of the 32 rim edges carry the open boundary.
            assert!((covered_percent - 50.0).abs() < 1e-9, "{e}");
            assert!(((x0.hypot(*y0)) - big_r).abs() < 1e-12, "{e}");
        }
        other => panic!("unexpected {other:?}"),
    }
    assert!(e.to_string().contains("silently be natural"), "{e}");
    // The interior's other half under a fixed potential: the exterior disc's rim is now the
    // incomplete one.
    let e = builder()
        .fixed_potential("outer_rest", 0.0)
        .build()
        .unwrap_err();
    assert!(
        matches!(&e, coercive_fem::FemError::PartialOpenBoundary { curve, .. } if curve == "ext_rim"),
        "{e}"
    );
    builder()
        .fixed_potential("outer_rest", 0.0)
        .fixed_potential("ext_rest", 0.0)
        .build()
        .unwrap();
}
