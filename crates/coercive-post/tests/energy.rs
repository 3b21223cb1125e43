//! The energy and co-energy table: region rows add up to the total, per metre times depth is
//! the device value, linear regions store W = W', a linear magnet's W' - W equals Br times
//! the integral of H along its easy axis, and the CSV/JSON outputs carry units and parse.

mod p1_support;

use std::f64::consts::PI;

use coercive_fem::{
    ElementOrder, Formulation, LinearMagnet, MagnetDirection, Material, Model, Sense, Winding,
};
use coercive_post::{flux_linkages, EnergyTable, FieldProbe, Tabular};
use p1_support::{tensor_mesh, uniform_through};

fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs()
}

fn device(remanence: f64) -> Model {
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
                remanence,
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
fn energy_table_rows_totals_units_and_magnet_coenergy() {
    let sol = device(1.2).solve().unwrap();
    let table = EnergyTable::new(&sol);
    let depth = 0.03;
    assert_eq!(table.depth_m, Some(depth));
    assert_eq!(table.regions.len(), 4);
    let sum: f64 = table.regions.iter().map(|r| r.energy_j).sum();
    let sum_c: f64 = table.regions.iter().map(|r| r.coenergy_j).sum();
    assert!(rel(sum, table.total.energy_j) < 1e-12);
    assert!(rel(sum_c, table.total.coenergy_j) < 1e-12);
    for r in table.regions.iter().chain([&table.total]) {
        assert!(rel(r.energy_j, depth * r.energy_per_metre_j_per_m.unwrap()) < 1e-14);
        assert!(rel(r.coenergy_j, depth * r.coenergy_per_metre_j_per_m.unwrap()) < 1e-14);
    }
    assert!(rel(table.total.energy_j, sol.total_energy()) < 1e-14);
    // Linear isotropic media store w = w' = B.H/2 (e.g. Jackson, Classical Electrodynamics,
    // 3rd ed., sec. 5.16).
    for name in ["air", "iron", "coil"] {
        let r = table.region(name).unwrap();
        assert!(rel(r.coenergy_j, r.energy_j) < 1e-12, "{name}: {r:?}");
        assert_eq!(r.material, "linear");
    }
    // Linear magnet, B = mu0 mu_rec H + Br e: w = (B - Br e).H / 2 and w' = B.H - w, so
    // w' - w = Br H.e; integrated, Br times the mean of H along the axis times the area per
    // metre (the working-point table's mean is area-weighted over the same quadrature).
    let magnet = table.region("magnet").unwrap();
    assert_eq!(magnet.material, "magnet");
    let wp = FieldProbe::new(&sol).magnet_working_points();
    let area = 0.01 * 0.04;
    let expected = 1.2 * wp.rows[0].mean_field_strength_a_per_m * area;
    let got = magnet.coenergy_per_metre_j_per_m.unwrap() - magnet.energy_per_metre_j_per_m.unwrap();
    eprintln!("magnet W' - W = {got:.6e} J/m, Br <H_e> S = {expected:.6e} J/m");
    assert!(rel(got, expected) < 1e-9);
    // Without the magnet the device is linear with one winding: W = W' = psi i / 2.
    let sol0 = device(0.0).solve().unwrap();
    let t0 = EnergyTable::new(&sol0);
    let psi = flux_linkages(&sol0).unwrap().rows[0].linkage.total_wb;
    assert!(rel(t0.total.energy_j, 0.5 * psi * 3.7) < 1e-9);
    assert!(rel(t0.total.coenergy_j, t0.total.energy_j) < 1e-12);
    // CSV: header with units, one line per region and the total; JSON parses back.
    let csv = table.to_csv();
    let mut lines = csv.lines();
    assert_eq!(
        lines.next().unwrap(),
        "region,material,energy per metre (J/m),co-energy per metre (J/m),energy (J),co-energy (J)"
    );
    assert_eq!(csv.lines().count(), 1 + 4 + 1);
    assert!(csv.lines().last().unwrap().starts_with("total,all,"));
    let json: serde_json::Value = serde_json::from_str(&table.to_json().unwrap()).unwrap();
    assert!(
        rel(
            json["total"]["energy_j"].as_f64().unwrap(),
            table.total.energy_j
        ) < 1e-15
    );
    assert_eq!(json["regions"][1]["region"], "magnet");
}

#[test]
fn axisymmetric_energy_is_a_total_without_per_metre_columns() {
    let xs = uniform_through(&[0.0, 0.01, 0.02, 0.05], 2e-3);
    let ys = uniform_through(&[-0.03, 0.0, 0.01, 0.04], 2e-3);
    let mesh = tensor_mesh(&xs, &ys, &["air", "coil"], |x, y| {
        Some(usize::from(x > 0.01 && x < 0.02 && y > 0.0 && y < 0.01))
    });
    let model = Model::builder(mesh, Formulation::Axisymmetric)
        .order(ElementOrder::P2)
        .material("air", Material::vacuum())
        .material("coil", Material::vacuum())
        .winding(Winding::new("coil", 30.0, 3.7).side("coil", Sense::Positive))
        .fixed_potential("right", 0.0)
        .fixed_potential("top", 0.0)
        .fixed_potential("bottom", 0.0)
        .build()
        .unwrap();
    let sol = model.solve().unwrap();
    let table = EnergyTable::new(&sol);
    assert_eq!(table.depth_m, None);
    assert!(table.total.energy_per_metre_j_per_m.is_none());
    assert!(rel(table.total.energy_j, sol.energy()) < 1e-14);
    let psi = flux_linkages(&sol).unwrap().rows[0].linkage.total_wb;
    // W = psi i / 2 for a linear device (axisymmetric totals, J).
    assert!(rel(table.total.energy_j, 0.5 * psi * 3.7) < 1e-9);
    let csv = table.to_csv();
    assert!(csv.lines().nth(1).unwrap().starts_with("air,linear,,,"));
}
