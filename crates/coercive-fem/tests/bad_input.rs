//! Every bad input gives a typed error naming the offending item, never a panic.

use coercive_fem::{
    ElementOrder, FemError, Formulation, Material, Model, OpenBoundary, Sense, Solver, Winding,
};
use coercive_mesh::structured::rectangle;

fn builder() -> coercive_fem::ModelBuilder {
    let mesh = rectangle(0.0, 0.0, 1.0, 1.0, 4, 4, "air").unwrap();
    Model::builder(mesh, Formulation::Planar { depth_m: 1.0 })
}

#[test]
fn region_without_material() {
    match builder().build() {
        Err(FemError::MissingMaterial { region }) => assert_eq!(region, "air"),
        other => panic!("{other:?}"),
    }
}

#[test]
fn material_for_unknown_region_and_duplicates() {
    let e = builder()
        .material("air", Material::vacuum())
        .material("iron", Material::vacuum())
        .build()
        .unwrap_err();
    assert!(
        matches!(e, FemError::UnknownRegion { ref region, .. } if region == "iron"),
        "{e}"
    );
    let e = builder()
        .material("air", Material::vacuum())
        .material("air", Material::vacuum())
        .build()
        .unwrap_err();
    assert!(matches!(e, FemError::DuplicateMaterial { ref region } if region == "air"));
}

#[test]
fn invalid_material_names_its_region() {
    let e = builder()
        .material(
            "air",
            Material::Linear {
                relative_permeability: -2.0,
            },
        )
        .build()
        .unwrap_err();
    assert!(
        matches!(e, FemError::InvalidMaterial { ref region, .. } if region == "air"),
        "{e}"
    );
}

#[test]
fn winding_errors() {
    let base = || {
        builder()
            .material("air", Material::vacuum())
            .fixed_potential("left", 0.0)
    };
    let e = base()
        .winding(Winding::new("coil", 10.0, 1.0).side("copper", Sense::Positive))
        .build()
        .unwrap_err();
    match e {
        FemError::UnknownRegion { what, region } => {
            assert!(what.contains("coil"), "{what}");
            assert_eq!(region, "copper");
        }
        other => panic!("{other:?}"),
    }
    let e = base()
        .winding(Winding::new("coil", 0.0, 1.0).side("air", Sense::Positive))
        .build()
        .unwrap_err();
    assert!(matches!(e, FemError::InvalidWinding { ref winding, .. } if winding == "coil"));
    let e = base()
        .winding(Winding::new("coil", 5.0, 1.0))
        .build()
        .unwrap_err();
    assert!(matches!(e, FemError::InvalidWinding { .. }));
    let e = base()
        .winding(Winding::new("coil", 5.0, f64::NAN).side("air", Sense::Negative))
        .build()
        .unwrap_err();
    assert!(matches!(e, FemError::NotFinite { .. }), "{e}");
}

#[test]
fn nan_inputs() {
    let base = || builder().material("air", Material::vacuum());
    assert!(matches!(
        base().current_density("air", f64::NAN).build(),
        Err(FemError::NotFinite { .. })
    ));
    assert!(matches!(
        base().fixed_potential("left", f64::INFINITY).build(),
        Err(FemError::NotFinite { .. })
    ));
    let mesh = rectangle(0.0, 0.0, 1.0, 1.0, 2, 2, "air").unwrap();
    let e = Model::builder(mesh, Formulation::Planar { depth_m: f64::NAN })
        .material("air", Material::vacuum())
        .build()
        .unwrap_err();
    assert!(matches!(e, FemError::NotFinite { .. }));
    let mesh = rectangle(0.0, 0.0, 1.0, 1.0, 2, 2, "air").unwrap();
    let e = Model::builder(mesh, Formulation::Planar { depth_m: -1.0 })
        .material("air", Material::vacuum())
        .build()
        .unwrap_err();
    assert!(matches!(e, FemError::OutOfRange { .. }));
}

#[test]
fn unknown_curves_and_unmatched_pairs() {
    let base = || builder().material("air", Material::vacuum());
    let e = base().fixed_potential("rim", 0.0).build().unwrap_err();
    assert!(matches!(e, FemError::UnknownCurve { ref curve, .. } if curve == "rim"));
    // The structured rectangle meshes left and right without a curve pair.
    let e = base().periodic("left", "right").build().unwrap_err();
    assert!(
        matches!(e, FemError::UnmatchedCurvePair { ref first, ref second, .. }
            if first == "left" && second == "right"),
        "{e}"
    );
}

#[test]
fn axisymmetric_open_boundary_needs_a_matched_pair() {
    // Axisymmetric open boundaries are supported (tests/open_boundary_axisymmetric.rs in the
    // umbrella crate); without a curve pair between the circles the error names both curves.
    let mesh = rectangle(0.0, 0.0, 1.0, 1.0, 2, 2, "air").unwrap();
    let e = Model::builder(mesh, Formulation::Axisymmetric)
        .open_boundary(OpenBoundary {
            circle: "right".into(),
            exterior_boundary: "left".into(),
            exterior_region: "air".into(),
            exterior_centre: [0.0, 0.0],
        })
        .build()
        .unwrap_err();
    assert!(
        matches!(e, FemError::UnmatchedCurvePair { ref first, ref second, .. }
            if first == "right" && second == "left"),
        "{e}"
    );
    let mesh = rectangle(-1.0, 0.0, 1.0, 1.0, 2, 2, "air").unwrap();
    let e = Model::builder(mesh, Formulation::Axisymmetric)
        .material("air", Material::vacuum())
        .build()
        .unwrap_err();
    assert!(matches!(e, FemError::OutOfRange { .. }), "{e}");
}

#[test]
fn floating_potential_is_reported_with_its_region() {
    let model = builder()
        .material("air", Material::vacuum())
        .current_density("air", 1.0)
        .build()
        .unwrap();
    match Solver::new(&model) {
        Err(FemError::FloatingRegions { regions }) => assert_eq!(regions, vec!["air".to_string()]),
        other => panic!("{other:?}"),
    }
    // A planar model on the positive half-plane has no automatic fixed potential either...
    // ...while an axisymmetric one touching the axis does (A_phi = 0 on r = 0).
    let mesh = rectangle(0.0, 0.0, 1.0, 1.0, 4, 4, "air").unwrap();
    let axi = Model::builder(mesh, Formulation::Axisymmetric)
        .material("air", Material::vacuum())
        .current_density("air", 1.0)
        .build()
        .unwrap();
    assert!(axi.solve().is_ok());
}

#[test]
fn solver_rejects_an_incompatible_model() {
    let m1 = builder()
        .material("air", Material::vacuum())
        .fixed_potential("left", 0.0)
        .build()
        .unwrap();
    let solver = Solver::new(&m1).unwrap();
    let m2 = m1.to_builder().order(ElementOrder::P2).build().unwrap();
    assert!(matches!(
        solver.solve(&m2, &Default::default()),
        Err(FemError::IncompatibleModel { .. })
    ));
    let m3 = m1
        .to_builder()
        .fixed_potential("right", 0.0)
        .build()
        .unwrap();
    assert!(matches!(
        solver.solve(&m3, &Default::default()),
        Err(FemError::IncompatibleModel { .. })
    ));
    // Same layout, different source and fixed value: accepted.
    let m4 = m1.to_builder().current_density("air", 3.0).build().unwrap();
    assert!(solver.solve(&m4, &Default::default()).is_ok());
}

#[test]
fn a_mesh_node_outside_every_triangle_is_harmless() {
    use coercive_mesh::{Mesh, Point2};
    let m = rectangle(0.0, 0.0, 1.0, 1.0, 2, 2, "air").unwrap();
    let mut vertices = m.vertices().to_vec();
    vertices.push(Point2::new(5.0, 5.0));
    let mesh = Mesh::from_parts(
        vertices,
        m.triangles().to_vec(),
        m.triangle_regions().to_vec(),
        m.regions().to_vec(),
        m.curves().to_vec(),
        Vec::new(),
    )
    .unwrap();
    let sol = Model::builder(mesh, Formulation::Planar { depth_m: 1.0 })
        .material("air", Material::vacuum())
        .current_density("air", 1e6)
        .fixed_potential("left", 0.0)
        .build()
        .unwrap()
        .solve()
        .unwrap();
    assert_eq!(*sol.potential().last().unwrap(), 0.0);
    assert!(sol.energy() > 0.0);
}

/// Ids from outside the mesh give typed errors through the `try_` getters, never a panic.
#[test]
fn try_getters_reject_ids_beyond_the_mesh() {
    use coercive_mesh::{TriangleId, VertexId};
    let solution = builder()
        .material("air", Material::vacuum())
        .fixed_potential("left", 0.0)
        .current_density("air", 1.0e6)
        .build()
        .unwrap()
        .solve()
        .unwrap();
    let triangles = solution.model().mesh().triangles().len() as u32;
    let vertices = solution.model().mesh().vertices().len() as u32;
    let last = TriangleId(triangles - 1);
    assert_eq!(
        solution.try_triangle_nodes(last).unwrap(),
        solution.triangle_nodes(last)
    );
    assert_eq!(
        solution.try_flux_density_at_quadrature(last).unwrap(),
        solution.flux_density_at_quadrature(last)
    );
    assert_eq!(
        solution.try_field_strength_at_quadrature(last).unwrap(),
        solution.field_strength_at_quadrature(last)
    );
    assert_eq!(
        solution
            .try_vertex_potential(VertexId(vertices - 1))
            .unwrap(),
        solution.vertex_potential(VertexId(vertices - 1))
    );
    for t in [TriangleId(triangles), TriangleId(u32::MAX)] {
        for e in [
            solution.try_triangle_nodes(t).unwrap_err(),
            solution.try_flux_density_at_quadrature(t).unwrap_err(),
            solution.try_field_strength_at_quadrature(t).unwrap_err(),
        ] {
            assert!(
                matches!(&e, FemError::OutOfRange { what, .. } if what == "triangle id"),
                "{e}"
            );
            assert!(
                e.to_string().contains(&format!("{triangles} triangles")),
                "{e}"
            );
        }
    }
    let e = solution
        .try_vertex_potential(VertexId(vertices))
        .unwrap_err();
    assert!(
        e.to_string().contains(&format!("{vertices} vertices")),
        "{e}"
    );
}

#[test]
fn model_try_getters_reject_regions_beyond_the_mesh() {
    use coercive_mesh::RegionId;
    let model = builder()
        .material("air", Material::vacuum())
        .fixed_potential("left", 0.0)
        .build()
        .unwrap();
    assert_eq!(model.try_region_name(RegionId(0)).unwrap(), "air");
    assert_eq!(
        model.try_material(RegionId(0)).unwrap(),
        model.material(RegionId(0))
    );
    for r in [RegionId(1), RegionId(u32::MAX)] {
        for e in [
            model.try_material(r).unwrap_err(),
            model.try_region_name(r).unwrap_err(),
        ] {
            assert!(
                matches!(&e, FemError::OutOfRange { what, .. } if what == "region id"),
                "{e}"
            );
            assert!(e.to_string().contains("1 regions"), "{e}");
        }
    }
}

/// A failed Newton solve's Debug output summarises the last iterate instead of listing it.
#[test]
fn newton_failure_debug_does_not_print_the_iterate() {
    let failure = coercive_fem::NewtonFailure {
        reason: coercive_fem::NewtonFailureReason::MaxIterations,
        report: coercive_fem::NewtonReport::default(),
        last_potential: vec![1.25e-3; 100_000],
    };
    let text = format!("{:?}", FemError::NewtonFailed(Box::new(failure)));
    assert!(text.len() < 1000, "{} characters", text.len());
    assert!(text.contains("100000 values"), "{text}");
    assert!(text.contains("MaxIterations"), "{text}");
}
