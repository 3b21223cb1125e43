//! Field queries: B and H at points equal the solver's element values, a line average of |B|
//! and Ampere's circuital law along paths, region averages in a uniform field (planar and
//! axisymmetric), magnet working points in the open-circuit and keeper limits, typed errors
//! for paths and points outside the mesh, and the CSV/JSON tables.

mod p1_support;

use std::f64::consts::PI;

use coercive_fem::{
    ElementOrder, Formulation, LinearMagnet, MagnetDirection, Material, Model, ScalarField, Sense,
    Winding, MU_0,
};
use coercive_mesh::TriangleId;
use coercive_post::{FieldProbe, PostError, Tabular};
use p1_support::{polar_disc, steps, tensor_mesh, uniform_through};

fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs()
}

/// A planar box with a magnet, linear iron and a coil (P2).
fn device() -> Model {
    let xs = uniform_through(&[0.0, 0.02, 0.03, 0.05, 0.06, 0.08], 2e-3);
    let ys = uniform_through(&[0.0, 0.02, 0.03, 0.05, 0.06, 0.08], 2e-3);
    let inside = |x: f64, y: f64, b: [f64; 4]| x > b[0] && x < b[1] && y > b[2] && y < b[3];
    let mesh = tensor_mesh(&xs, &ys, &["air", "magnet", "iron", "coil"], |x, y| {
        Some(if inside(x, y, [0.02, 0.03, 0.02, 0.06]) {
            1
        } else if inside(x, y, [0.03, 0.06, 0.05, 0.06]) {
            2
        } else if inside(x, y, [0.05, 0.06, 0.02, 0.03]) {
            3
        } else {
            0
        })
    });
    let mut b = Model::builder(mesh, Formulation::Planar { depth_m: 0.03 })
        .order(ElementOrder::P2)
        .material("air", Material::vacuum())
        .material(
            "magnet",
            Material::Magnet(LinearMagnet {
                knee_field: None,
                remanence: 1.2,
                recoil_permeability: 1.05,
                perpendicular_permeability: 1.05,
                direction: MagnetDirection::Fixed { angle: 0.5 * PI },
            }),
        )
        .material(
            "iron",
            Material::Linear {
                relative_permeability: 500.0,
            },
        )
        .material("coil", Material::vacuum())
        .winding(Winding::new("coil", 40.0, 3.7).side("coil", Sense::Positive));
    for c in ["bottom", "right", "top", "left"] {
        b = b.fixed_potential(c, 0.0);
    }
    b.build().unwrap()
}

#[test]
fn point_queries_equal_the_solvers_element_values() {
    let model = device();
    let sol = model.solve().unwrap();
    let probe = FieldProbe::new(&sol);
    let mesh = model.mesh();
    let rule = sol.quadrature_rule();
    let mut checked = 0;
    for t in (0..mesh.triangles().len()).step_by(7) {
        let c = mesh.triangle_points(TriangleId(t as u32));
        for (q, l) in rule.points.iter().enumerate() {
            let p = [
                l[0] * c[0].x + l[1] * c[1].x + l[2] * c[2].x,
                l[0] * c[0].y + l[1] * c[1].y + l[2] * c[2].y,
            ];
            let f = probe.at(p).unwrap();
            assert_eq!(f.triangle as usize, t, "quadrature points are interior");
            let b = sol.flux_density_at_quadrature(TriangleId(t as u32))[q];
            let h = sol.field_strength_at_quadrature(TriangleId(t as u32))[q];
            let scale_b = b[0].hypot(b[1]).max(1e-6);
            let scale_h = h[0].hypot(h[1]).max(1.0);
            for k in 0..2 {
                assert!(
                    (f.flux_density[k] - b[k]).abs() < 1e-10 * scale_b,
                    "B at {p:?}"
                );
                assert!(
                    (f.field_strength[k] - h[k]).abs() < 1e-9 * scale_h,
                    "H at {p:?}"
                );
            }
            assert!((f.flux_density_norm - b[0].hypot(b[1])).abs() < 1e-10 * scale_b);
            assert_eq!(probe.flux_density(p).unwrap(), f.flux_density);
            assert_eq!(probe.potential(p).unwrap(), f.potential);
            assert_eq!(f.flux_function, f.potential, "planar flux function is A_z");
            checked += 1;
        }
    }
    assert!(checked > 1000);
    // Outside points are typed errors naming the point.
    assert!(matches!(
        probe.at([0.09, 0.01]),
        Err(PostError::PointOutsideMesh { x, y }) if x == 0.09 && y == 0.01
    ));
}

fn coax() -> Model {
    // Solid conductor r < 1 mm, air to 4 mm, return conductor 4..5 mm (A = 0 outside).
    let mut radii = vec![0.0];
    radii.extend(steps(0.0, 1e-3, 8));
    radii.extend(steps(1e-3, 4e-3, 24));
    radii.extend(steps(4e-3, 5e-3, 8));
    let mut regions = vec!["inner"; 8];
    regions.extend(["gap"; 24]);
    regions.extend(["return"; 8]);
    let mesh = polar_disc(&radii, &regions, 128);
    Model::builder(mesh, Formulation::Planar { depth_m: 1.0 })
        .order(ElementOrder::P2)
        .material("inner", Material::vacuum())
        .material("gap", Material::vacuum())
        .material("return", Material::vacuum())
        .winding(
            Winding::new("cable", 1.0, 3.7)
                .side("inner", Sense::Positive)
                .side("return", Sense::Negative),
        )
        .fixed_potential("outer", 0.0)
        .build()
        .unwrap()
}

#[test]
fn line_average_of_b_and_amperes_law_along_paths() {
    let sol = coax().solve().unwrap();
    let probe = FieldProbe::new(&sol);
    let current = 3.7;
    // |B| = mu0 I / (2 pi r) in the gap (Ampere's law for a straight conductor; BIPM SI
    // Brochure 8th ed. definition of the ampere uses the same field): its mean along a radial
    // segment r1..r2 is mu0 I ln(r2/r1) / (2 pi (r2 - r1)).
    let (r1, r2, th) = (1.5e-3, 3.5e-3, 0.3_f64);
    let path = [
        [r1 * th.cos(), r1 * th.sin()],
        [r2 * th.cos(), r2 * th.sin()],
    ];
    let samples = probe.sample_path(&path, 801).unwrap();
    assert_eq!(samples.samples.len(), 801);
    assert!(rel(samples.length_m, r2 - r1) < 1e-12);
    let exact = MU_0 * current * (r2 / r1).ln() / (2.0 * PI * (r2 - r1));
    let mean = samples.mean_flux_density_norm();
    eprintln!("mean |B| along the radius {mean:.6e} T, closed form {exact:.6e} T");
    assert!(rel(mean, exact) < 1e-4);
    // Ampere's circuital law: the integral of H.dl around the inner conductor is I, around
    // the whole cable 0 (a polygon of 720 sides inscribed in circles of 2.5 mm and ~5 mm).
    let circle = |r: f64, n: usize| {
        (0..=n)
            .map(|k| {
                let a = 2.0 * PI * k as f64 / n as f64;
                [r * a.cos(), r * a.sin()]
            })
            .collect::<Vec<_>>()
    };
    let mmf = probe
        .sample_path(&circle(2.5e-3, 720), 721)
        .unwrap()
        .magnetomotive_force();
    eprintln!("mmf around the inner conductor {mmf:.6} A (I = {current} A)");
    assert!(rel(mmf, current) < 1e-3);
    let mmf_out = probe
        .sample_path(&circle(4.99e-3, 720), 721)
        .unwrap()
        .magnetomotive_force();
    assert!(mmf_out.abs() < 2e-2 * current, "mmf outside {mmf_out}");
    // A path leaving the domain names its first sample outside (by index and position).
    match probe.sample_path(&[[0.0, 0.0], [0.01, 0.0]], 11) {
        Err(PostError::PathOutsideMesh { index, x, y }) => {
            assert_eq!(index, 6);
            assert!((x - 0.006).abs() < 1e-15 && y == 0.0);
        }
        other => panic!("expected PathOutsideMesh, got {other:?}"),
    }
    // Bad paths are typed errors.
    assert!(matches!(
        probe.sample_path(&[[0.0, 0.0]], 10),
        Err(PostError::InvalidArgument { .. })
    ));
    assert!(matches!(
        probe.sample_path(&[[0.0, 0.0], [0.0, 0.0]], 10),
        Err(PostError::InvalidArgument { .. })
    ));
    assert!(matches!(
        probe.sample_path(&path, 1),
        Err(PostError::InvalidArgument { .. })
    ));
    // The path table: one CSV line per sample with units in the header, JSON parses.
    let csv = samples.to_csv();
    assert!(csv.starts_with("distance (m),x (m),y (m),region,"));
    assert_eq!(csv.lines().count(), 802);
    assert!(csv.lines().nth(1).unwrap().contains(",gap,"));
    let json: serde_json::Value = serde_json::from_str(&samples.to_json().unwrap()).unwrap();
    assert_eq!(json["samples"].as_array().unwrap().len(), 801);
}

#[test]
fn region_averages_in_a_uniform_field_planar_and_axisymmetric() {
    let b0 = 0.37;
    let xs = uniform_through(&[0.1, 0.15, 0.2], 5e-3);
    let ys = uniform_through(&[-0.05, 0.0, 0.05], 5e-3);
    let mesh = tensor_mesh(&xs, &ys, &["lower", "upper"], |_, y| {
        Some(usize::from(y > 0.0))
    });
    // Planar: A = -B0 x gives B = (dA/dy, -dA/dx) = (0, B0) everywhere.
    let mut planar = Model::builder(mesh.clone(), Formulation::Planar { depth_m: 0.2 })
        .material("lower", Material::vacuum())
        .material(
            "upper",
            Material::Linear {
                relative_permeability: 4.0,
            },
        );
    for c in ["bottom", "right", "top", "left"] {
        planar = planar.fixed_potential_field(c, ScalarField::new(move |p| -b0 * p.x));
    }
    let sol = planar.build().unwrap().solve().unwrap();
    let probe = FieldProbe::new(&sol);
    let upper = probe.region_average("upper").unwrap();
    assert!(rel(upper.area_m2, 0.1 * 0.05) < 1e-12);
    assert!(rel(upper.volume_m3, 0.1 * 0.05 * 0.2) < 1e-12);
    assert!(upper.mean_flux_density[0].abs() < 1e-9 && rel(upper.mean_flux_density[1], b0) < 1e-9);
    assert!(rel(upper.mean_flux_density_norm, b0) < 1e-9);
    // H = B / (mu0 mu_r) in the upper region (mu_r = 4), tangential B continuous.
    assert!(rel(upper.mean_field_strength[1], b0 / (4.0 * MU_0)) < 1e-9);
    assert!(rel(upper.peak_flux_density_norm, b0) < 1e-9);
    // On the interface y = 0 the two sides differ in H (normal B continuous, mu_r 4 above).
    let above = probe.at_in_region([0.13, 0.0], "upper").unwrap();
    let below = probe.at_in_region([0.13, 0.0], "lower").unwrap();
    assert!(rel(above.field_strength[1], b0 / (4.0 * MU_0)) < 1e-9);
    assert!(rel(below.field_strength[1], b0 / MU_0) < 1e-9);
    assert!(matches!(
        probe.at_in_region([0.13, 0.03], "lower"),
        Err(PostError::PointOutsideMesh { .. })
    ));
    // Flux crossing a segment: B0 times its length across the field (left of travel, +y for
    // a segment along +x), none along it; per metre and for the 0.2 m depth.
    let across = probe.flux_between([0.1, 0.0], [0.2, 0.0]).unwrap();
    assert!(rel(across.per_metre_wb_per_m.unwrap(), b0 * 0.1) < 1e-9);
    assert!(rel(across.total_wb, b0 * 0.1 * 0.2) < 1e-9);
    let along = probe.flux_between([0.12, -0.04], [0.12, 0.04]).unwrap();
    assert!(along.total_wb.abs() < 1e-12);
    // Axisymmetric: A_phi = B0 r / 2 gives B = (-dA/dz, dA/dr + A/r) = (0, B0); the volume of
    // the region r in [0.1, 0.2], z in [0, 0.05] is pi (0.2^2 - 0.1^2) 0.05.
    let mut axi = Model::builder(mesh, Formulation::Axisymmetric)
        .material("lower", Material::vacuum())
        .material("upper", Material::vacuum());
    for c in ["bottom", "right", "top", "left"] {
        axi = axi.fixed_potential_field(c, ScalarField::new(move |p| 0.5 * b0 * p.x));
    }
    let sol = axi.build().unwrap().solve().unwrap();
    let probe = FieldProbe::new(&sol);
    let table = probe.region_averages();
    let upper = &table.rows[1];
    assert_eq!(upper.region, "upper");
    assert!(rel(upper.volume_m3, PI * (0.04 - 0.01) * 0.05) < 1e-12);
    assert!(rel(upper.mean_flux_density[1], b0) < 1e-9);
    assert!(upper.mean_flux_density[0].abs() < 1e-9);
    assert!(rel(probe.flux_density_norm([0.13, 0.01]).unwrap(), b0) < 1e-9);
    // flux function r A_phi = B0 r^2 / 2 (flux through the circle of radius r over 2 pi).
    let f = probe.at([0.13, 0.01]).unwrap();
    assert!(rel(f.flux_function, 0.5 * b0 * 0.13 * 0.13) < 1e-9);
    // Flux through the annulus swept by a radial segment: B0 pi (r2^2 - r1^2).
    let annulus = probe.flux_between([0.1, 0.01], [0.2, 0.01]).unwrap();
    assert!(annulus.per_metre_wb_per_m.is_none());
    assert!(rel(annulus.total_wb, b0 * PI * (0.04 - 0.01)) < 1e-9);
    assert!(matches!(
        probe.region_average("nowhere"),
        Err(PostError::UnknownRegion { region, .. }) if region == "nowhere"
    ));
    let csv = table.to_csv();
    assert!(csv.starts_with("region,area (m^2),volume (m^3),mean Bx (T)"));
    assert_eq!(csv.lines().count(), 3);
}

/// A magnet block [0, 0.02] x [0, 0.01] m magnetised along +y with the given boundaries.
fn magnet_block(fixed: &[&str]) -> Model {
    let xs = uniform_through(&[0.0, 0.02], 1e-3);
    let ys = uniform_through(&[0.0, 0.01], 1e-3);
    let mesh = tensor_mesh(&xs, &ys, &["magnet"], |_, _| Some(0));
    let mut b = Model::builder(mesh, Formulation::Planar { depth_m: 0.01 })
        .order(ElementOrder::P2)
        .material(
            "magnet",
            Material::Magnet(LinearMagnet {
                knee_field: None,
                remanence: 1.25,
                recoil_permeability: 1.05,
                perpendicular_permeability: 1.1,
                direction: MagnetDirection::Fixed { angle: 0.5 * PI },
            }),
        );
    for c in fixed {
        b = b.fixed_potential(c, 0.0);
    }
    b.build().unwrap()
}

#[test]
fn magnet_working_points_in_the_open_circuit_and_keeper_limits() {
    let (br, mu) = (1.25, 1.05);
    let hc = br / (MU_0 * mu);
    // Open circuit: A = 0 on the whole boundary lets no flux leave (a boundary of zero
    // permeance), so B = 0 and H = -Br/(mu0 mu_rec) along the axis (recoil line
    // B = mu0 mu_rec H + Br; Ampere's law with no current: uniform H is curl-free).
    let sol = magnet_block(&["bottom", "right", "top", "left"])
        .solve()
        .unwrap();
    let wp = FieldProbe::new(&sol).magnet_working_points();
    assert_eq!(wp.rows.len(), 1);
    let m = &wp.rows[0];
    eprintln!("open circuit: {m:?}");
    assert_eq!(m.region, "magnet");
    assert!(m.mean_flux_density_t.abs() < 1e-9 && m.min_flux_density_t.abs() < 1e-9);
    assert!(rel(m.mean_field_strength_a_per_m, -hc) < 1e-9);
    assert!(rel(m.min_field_strength_a_per_m, -hc) < 1e-9);
    assert!(rel(m.model_coercivity_a_per_m, hc) < 1e-12);
    assert!(m.permeance_coefficient.abs() < 1e-6);
    // Keeper: natural boundaries (field normal: ideal iron poles) on top, bottom and right,
    // A = 0 on the left: the magnet is short-circuited, B = Br and H = 0, infinite permeance.
    let sol = magnet_block(&["left"]).solve().unwrap();
    let wp = FieldProbe::new(&sol).magnet_working_points();
    let m = &wp.rows[0];
    eprintln!("keeper: {m:?}");
    assert!(rel(m.mean_flux_density_t, br) < 1e-9);
    assert!(rel(m.min_flux_density_t, br) < 1e-9 && rel(m.max_flux_density_t, br) < 1e-9);
    assert!(m.mean_field_strength_a_per_m.abs() < 1e-6 * hc);
    // A device: each working point lies on the recoil line B = mu0 mu_rec H + Br (the extremes
    // of B and H along the axis occur together) and the magnet works in the second quadrant.
    let sol = device().solve().unwrap();
    let wp = FieldProbe::new(&sol).magnet_working_points();
    let m = &wp.rows[0];
    eprintln!("device: {m:?}");
    let on_line = |h: f64| MU_0 * 1.05 * h + 1.2;
    assert!(
        rel(
            m.mean_flux_density_t,
            on_line(m.mean_field_strength_a_per_m)
        ) < 1e-9
    );
    assert!(rel(m.min_flux_density_t, on_line(m.min_field_strength_a_per_m)) < 1e-9);
    assert!(rel(m.max_flux_density_t, on_line(m.max_field_strength_a_per_m)) < 1e-9);
    assert!(m.mean_flux_density_t > 0.0 && m.mean_field_strength_a_per_m < 0.0);
    assert!(m.permeance_coefficient > 0.0);
    let csv = wp.to_csv();
    assert!(csv
        .lines()
        .next()
        .unwrap()
        .contains("min H along axis (A/m)"));
    assert!(csv.lines().nth(1).unwrap().starts_with("magnet,1.2,"));
}
