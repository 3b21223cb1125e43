//! Axisymmetric checks against closed forms: the on-axis field of a finite solenoid.

mod common;

use coercive_fem::{
    ElementOrder, Formulation, LinearSolverKind, Material, Model, NewtonSettings, Sense, Solver,
    Winding, MU_0,
};

const R: f64 = 0.01;
const L: f64 = 0.1;
const T: f64 = 2e-4;

/// A thin solenoid (mean radius R = 10 mm, length L = 0.1 m, shell thickness 0.2 mm) with
/// n I = 1e4 A/m, in a 0.5 m box with zero potential on its outer sides.
fn solenoid(order: ElementOrder) -> Model {
    let h = |x: f64| (0.0005 * (1.0 + 20.0 * x.abs())).min(0.02);
    let rs = common::graded(&[0.0, R - T / 2.0, R + T / 2.0, 0.03, 0.5], |x| {
        if (x - R).abs() < T {
            T / 2.0
        } else {
            h(x)
        }
    });
    let zs = common::graded(&[-0.5, -L / 2.0, L / 2.0, 0.5], h);
    let mesh = common::tensor(&rs, &zs, |c| {
        if (c[0] - R).abs() < T / 2.0 && c[1].abs() < L / 2.0 {
            "coil"
        } else {
            "air"
        }
    });
    Model::builder(mesh, Formulation::Axisymmetric)
        .order(order)
        .material("air", Material::vacuum())
        .material("coil", Material::vacuum())
        // 1000 turns at 1 A over 0.1 m: n I = 1e4 A/m.
        .winding(Winding::new("solenoid", 1000.0, 1.0).side("coil", Sense::Positive))
        .fixed_potential("right", 0.0)
        .fixed_potential("top", 0.0)
        .fixed_potential("bottom", 0.0)
        .build()
        .unwrap()
}

/// On-axis field of a finite solenoid,
/// B = (mu_0 n I / 2) [(z + L/2)/sqrt((z + L/2)^2 + R^2) minus (z - L/2)/sqrt((z - L/2)^2 + R^2)]
/// (standard, e.g. Griffiths, Introduction to Electrodynamics, 4th ed., problem 5.11);
/// 12.3223 mT at the centre and 6.25200 mT at an end for n = 1e4 /m, I = 1 A (computed;
/// shared/check-values.md item 6).
fn b_axis(z: f64) -> f64 {
    let (p, m) = (z + L / 2.0, z - L / 2.0);
    0.5 * MU_0 * 1e4 * (p / (p * p + R * R).sqrt() - m / (m * m + R * R).sqrt())
}

#[test]
fn finite_solenoid_on_axis_field() {
    assert!((b_axis(0.0) - 12.3223e-3).abs() < 1e-7);
    assert!((b_axis(L / 2.0) - 6.25200e-3).abs() < 1e-8);
    for order in [ElementOrder::P1, ElementOrder::P2] {
        let model = solenoid(order);
        let sol = model.solve().unwrap();
        let mesh = model.mesh();
        for z in [0.0, 0.02, L / 2.0, 0.08] {
            let t = common::locate(mesh, [0.0, z]);
            let b = sol.flux_density_at(t, [0.0, z]).unwrap();
            // Error relative to the central field (the field outside decays to small values).
            let rel = (b[1] - b_axis(z)).abs() / b_axis(0.0);
            eprintln!(
                "{order:?} z = {z} m: Bz = {:.6e} T, closed form {:.6e} T",
                b[1],
                b_axis(z)
            );
            let tol = if order == ElementOrder::P1 {
                1e-2
            } else {
                3e-3
            };
            assert!(rel < tol, "{order:?} z = {z}: relative error {rel}");
            assert!(
                b[0].abs() < 1e-9,
                "B_r on the axis must vanish, got {}",
                b[0]
            );
            // Just off the axis the field is continuous with the on-axis value.
            let p = [1e-4, z];
            let t = common::locate(mesh, p);
            let b_off = sol.flux_density_at(t, p).unwrap();
            assert!((b_off[1] / b[1] - 1.0).abs() < 1e-2);
        }
    }
}

#[test]
fn lu_path_and_cholesky_agree() {
    let model = solenoid(ElementOrder::P1);
    let chol = model.solve().unwrap();
    let lu = Solver::with_linear_solver(&model, LinearSolverKind::Lu)
        .unwrap()
        .solve(&model, &NewtonSettings::default())
        .unwrap();
    let scale = chol.potential().iter().fold(0.0_f64, |m, x| m.max(x.abs()));
    let diff = chol
        .potential()
        .iter()
        .zip(lu.potential())
        .map(|(a, b)| (a - b).abs())
        .fold(0.0, f64::max);
    assert!(diff < 1e-9 * scale, "{diff} vs {scale}");
}

#[test]
fn p1_and_p2_energies_agree_within_a_fraction_of_a_percent() {
    // Energy of the solenoid on the same mesh: the two orders agree closely.
    let w1 = solenoid(ElementOrder::P1).solve().unwrap().energy();
    let w2 = solenoid(ElementOrder::P2).solve().unwrap().energy();
    eprintln!("energy P1 {w1:.6e} J, P2 {w2:.6e} J");
    assert!((w1 / w2 - 1.0).abs() < 3e-3);
    // Energy = (1/2) L I^2 with flux linkage: co-energy equals energy for linear materials.
    let s = solenoid(ElementOrder::P2).solve().unwrap();
    assert!((s.energy() / s.coenergy() - 1.0).abs() < 1e-12);
}
