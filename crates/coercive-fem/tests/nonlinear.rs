//! Nonlinear magnetostatics: a round conductor inside a saturating steel ring.
//!
//! By symmetry and Ampere's law H = I / (2 pi r) in the ring exactly, whatever the B-H law
//! (any electromagnetics text, e.g. Cheng, Field and Wave Electromagnetics, sec. 6-2). With
//! B = mu_0 H + Js H / (H + H0), I = 1000 A, a = 10 mm, b = 20 mm, Js = 1.8 T, H0 = 200 A/m
//! the ring's flux per metre is mu_0 c ln(b/a) + Js (c/H0) ln((c + H0 b)/(c + H0 a)),
//! c = I/(2 pi): 1.780584e-2 Wb/m; co-energy 16.7217 J/m, energy 1.08415 J/m
//! (computed; shared/check-values.md item 4).

mod common;

use std::f64::consts::PI;

use coercive_fem::{
    BhCurve, ElementOrder, Formulation, Material, Model, NewtonSettings, Sense, SoftMagnetic,
    Solver, Winding, MU_0,
};
use coercive_mesh::TriangleId;

const I: f64 = 1000.0;
const A: f64 = 0.010;
const B: f64 = 0.020;

fn ring_model(order: ElementOrder, n_theta: usize) -> Model {
    let mut radii = vec![0.0];
    radii.extend(common::linspace(0.002, A, 4));
    radii.extend(common::linspace(A, B, 10).into_iter().skip(1));
    radii.extend(common::linspace(B, 0.03, 4).into_iter().skip(1));
    let regions: Vec<&str> = radii
        .windows(2)
        .map(|w| {
            if w[1] <= A + 1e-12 {
                "conductor"
            } else if w[1] <= B + 1e-12 {
                "steel"
            } else {
                "air"
            }
        })
        .collect();
    let mesh = common::polar([0.0, 0.0], &radii, &regions, n_theta, 2.0 * PI);
    Model::builder(mesh, Formulation::Planar { depth_m: 1.0 })
        .order(order)
        .material("conductor", Material::vacuum())
        .material("air", Material::vacuum())
        .material(
            "steel",
            Material::Soft(SoftMagnetic {
                curve: BhCurve::saturating(1.8, 200.0).unwrap(),
            }),
        )
        .winding(Winding::new("bar", 1.0, I).side("conductor", Sense::Positive))
        .fixed_potential("outer", 0.0)
        .build()
        .unwrap()
}

fn b_exact(r: f64) -> f64 {
    let h = I / (2.0 * PI * r);
    MU_0 * h + 1.8 * h / (h + 200.0)
}

#[test]
fn steel_ring_matches_amperes_law_and_newton_converges_quadratically() {
    let model = ring_model(ElementOrder::P2, 96);
    let sol = model.solve().unwrap();
    let rep = sol.newton_report();
    eprintln!(
        "iterations {} residuals {:?} steps {:?}",
        rep.iterations, rep.residual_norms, rep.step_lengths
    );
    assert!(
        rep.converged && rep.iterations <= 12,
        "{} iterations",
        rep.iterations
    );
    // Quadratic convergence: order estimate log(r3/r2)/log(r2/r1) near the solution.
    let r = &rep.residual_norms;
    let order = r
        .windows(3)
        .filter(|w| w[2] > 1e-13 && w[1] < 1e-2)
        .map(|w| (w[2] / w[1]).ln() / (w[1] / w[0]).ln())
        .fold(0.0_f64, f64::max);
    eprintln!("observed convergence order {order:.2}");
    assert!(order > 1.8, "Newton convergence order {order}");

    // B in the ring against H = I/(2 pi r) through the law (0.5 %: polygonal circles).
    let mesh = model.mesh();
    for r in [0.011, 0.015, 0.019] {
        for th in [0.1_f64, 1.3, 4.0] {
            let p = [r * th.cos(), r * th.sin()];
            let t: TriangleId = common::locate(mesh, p);
            let b = sol.flux_density_at(t, p).unwrap();
            let bm = b[0].hypot(b[1]);
            assert!(
                (bm / b_exact(r) - 1.0).abs() < 5e-3,
                "r = {r} m: |B| = {bm} T, expected {} T",
                b_exact(r)
            );
        }
    }
    // Ring flux per metre = A(a) - A(b) (B_theta = -dA/dr), check value 1.780584e-2 Wb/m.
    let on_circle = |r: f64| {
        let v = mesh
            .vertices()
            .iter()
            .position(|p| (p.x - r).abs() < 1e-12 && p.y.abs() < 1e-12)
            .unwrap();
        sol.potential()[v]
    };
    let flux = on_circle(A) - on_circle(B);
    eprintln!("ring flux {flux:.6e} Wb/m");
    assert!((flux / 1.780584e-2 - 1.0).abs() < 2e-3, "flux {flux}");
    // Energy and co-energy of the ring (check values, computed) and their sum = I x flux.
    let steel = mesh.region_by_name("steel").unwrap().index();
    let (w, wc) = (sol.region_energies()[steel], sol.region_coenergies()[steel]);
    eprintln!("ring energy {w:.5} J/m, co-energy {wc:.4} J/m");
    assert!((w / 1.08415 - 1.0).abs() < 1e-2, "energy {w}");
    assert!((wc / 16.7217 - 1.0).abs() < 5e-3, "co-energy {wc}");
    assert!(((w + wc) / (I * flux) - 1.0).abs() < 5e-3);
    // Peak |B| in the ring is at its inner radius: B(a) = 1.79766 T (check value).
    let peak = sol.peak_flux_density("steel").unwrap();
    assert!(
        peak < 1.79766 * 1.005 && peak > b_exact(0.0105) * 0.995,
        "peak {peak}"
    );
}

#[test]
fn newton_failure_is_typed_and_carries_the_history() {
    let model = ring_model(ElementOrder::P1, 32);
    let solver = Solver::new(&model).unwrap();
    let settings = NewtonSettings {
        max_iterations: 2,
        ..Default::default()
    };
    match solver.solve(&model, &settings) {
        Err(coercive_fem::FemError::NewtonFailed(f)) => {
            assert_eq!(f.report.iterations, 2);
            assert_eq!(f.report.residual_norms.len(), 3);
            assert_eq!(f.last_potential.len(), solver.nodes());
            assert!(f.last_potential.iter().any(|&a| a != 0.0));
        }
        other => panic!("expected a Newton failure, got {other:?}"),
    }
}

#[test]
fn load_steps_reach_the_same_solution_and_warm_starts_converge_faster() {
    let model = ring_model(ElementOrder::P1, 32);
    let solver = Solver::new(&model).unwrap();
    let settings = NewtonSettings::default();
    let direct = solver.solve(&model, &settings).unwrap();
    let steps = solver
        .solve_load_steps(&model, &[0.25, 0.5, 1.0], None, &settings)
        .unwrap();
    assert_eq!(steps.len(), 3);
    let last = &steps[2];
    let diff = direct
        .potential()
        .iter()
        .zip(last.potential())
        .map(|(x, y)| (x - y).abs())
        .fold(0.0, f64::max);
    let scale = direct
        .potential()
        .iter()
        .fold(0.0_f64, |m, x| m.max(x.abs()));
    assert!(diff <= 1e-7 * scale, "{diff} vs {scale}");
    let warm = solver.solve_from(&model, &direct, &settings).unwrap();
    assert!(warm.newton_report().iterations <= 1);
}
