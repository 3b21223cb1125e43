//! Convergence rates on manufactured solutions (method of manufactured solutions: choose the
//! exact field, derive the source from the strong form, measure the error; P. J. Roache,
//! Verification and Validation in Computational Science and Engineering, Hermosa, 1998).
//!
//! Expected rates for Lagrange elements on smooth solutions (a priori estimates, e.g.
//! Brenner & Scott, The Mathematical Theory of Finite Element Methods, 3rd ed., ch. 4-5):
//! P1: L2 error of the potential ~ h^2, error of B (a first derivative) ~ h;
//! P2: h^3 and h^2. Slopes are fitted over three refinements.

use std::f64::consts::PI;

use coercive_fem::quadrature::TriangleRule;
use coercive_fem::{ElementOrder, Formulation, Material, Model, ScalarField, Solution, MU_0};
use coercive_mesh::{structured::rectangle, TriangleId};

/// Least-squares slope of log(err) against log(h).
fn slope(h: &[f64], e: &[f64]) -> f64 {
    let n = h.len() as f64;
    let x: Vec<f64> = h.iter().map(|v| v.ln()).collect();
    let y: Vec<f64> = e.iter().map(|v| v.ln()).collect();
    let mx = x.iter().sum::<f64>() / n;
    let my = y.iter().sum::<f64>() / n;
    let num: f64 = x.iter().zip(&y).map(|(a, b)| (a - mx) * (b - my)).sum();
    let den: f64 = x.iter().map(|a| (a - mx) * (a - mx)).sum();
    num / den
}

/// L2 errors of the flux function (A_z planar, r A_phi axisymmetric) and of B over the
/// section, B's squared error weighted by `weight(x)` (1 here: the plain L2 norm, stronger
/// near the axis than the energy norm, weight r), by the degree 5 rule on every triangle.
fn errors(
    sol: &Solution,
    weight: impl Fn(f64) -> f64,
    u_exact: impl Fn(f64, f64) -> f64,
    b_exact: impl Fn(f64, f64) -> [f64; 2],
) -> (f64, f64) {
    let mesh = sol.model().mesh().clone();
    let rule = TriangleRule::of_degree(5);
    let (mut eu, mut eb) = (0.0, 0.0);
    for t in 0..mesh.triangles().len() {
        let tid = TriangleId(t as u32);
        let c = mesh.triangle_points(tid);
        let area = mesh.triangle_area(tid);
        for (l, w) in rule.points.iter().zip(rule.weights) {
            let p = [
                l[0] * c[0].x + l[1] * c[1].x + l[2] * c[2].x,
                l[0] * c[0].y + l[1] * c[1].y + l[2] * c[2].y,
            ];
            let u = sol.flux_function_at(tid, p).unwrap();
            let b = sol.flux_density_at(tid, p).unwrap();
            let be = b_exact(p[0], p[1]);
            eu += w * area * (u - u_exact(p[0], p[1])).powi(2);
            eb += weight(p[0]) * w * area * ((b[0] - be[0]).powi(2) + (b[1] - be[1]).powi(2));
        }
    }
    (eu.sqrt(), eb.sqrt())
}

/// Planar: A = sin(pi x) sin(pi y) on the unit square, A = 0 on the boundary, nu = 1/mu_0,
/// so -nu lap A = J gives J = 2 pi^2 nu A.
fn planar_errors(order: ElementOrder, n: usize) -> (f64, f64) {
    let mesh = rectangle(0.0, 0.0, 1.0, 1.0, n, n, "air").unwrap();
    let nu = 1.0 / MU_0;
    let model = Model::builder(mesh, Formulation::Planar { depth_m: 1.0 })
        .order(order)
        .material("air", Material::vacuum())
        .current_density_field(
            "air",
            ScalarField::new(move |p| 2.0 * PI * PI * nu * (PI * p.x).sin() * (PI * p.y).sin()),
        )
        .fixed_potential("bottom", 0.0)
        .fixed_potential("right", 0.0)
        .fixed_potential("top", 0.0)
        .fixed_potential("left", 0.0)
        .build()
        .unwrap();
    let sol = model.solve().unwrap();
    errors(
        &sol,
        |_| 1.0,
        |x, y| (PI * x).sin() * (PI * y).sin(),
        // B = (dA/dy, -dA/dx).
        |x, y| {
            [
                PI * (PI * x).sin() * (PI * y).cos(),
                -PI * (PI * x).cos() * (PI * y).sin(),
            ]
        },
    )
}

/// Axisymmetric: A_phi = r (1 - r^2) sin(pi z) on r, z in [0, 1] (odd in r, smooth on the
/// axis); with u = r A_phi = r^2 (1 - r^2) sin(pi z), B = (1/r)(-du/dz, du/dr) and
/// curl curl gives J = -nu [d/dr((1/r) du/dr) + (1/r) d2u/dz2]
/// = nu r sin(pi z) (8 + pi^2 (1 - r^2)). The potential error is measured on u.
fn axisymmetric_errors(order: ElementOrder, n: usize) -> (f64, f64) {
    let mesh = rectangle(0.0, 0.0, 1.0, 1.0, n, n, "air").unwrap();
    let nu = 1.0 / MU_0;
    let model = Model::builder(mesh, Formulation::Axisymmetric)
        .order(order)
        .material("air", Material::vacuum())
        .current_density_field(
            "air",
            ScalarField::new(move |p| {
                nu * p.x * (PI * p.y).sin() * (8.0 + PI * PI * (1.0 - p.x * p.x))
            }),
        )
        .fixed_potential("bottom", 0.0)
        .fixed_potential("right", 0.0)
        .fixed_potential("top", 0.0)
        .build()
        .unwrap();
    let sol = model.solve().unwrap();
    let on_axis = (1..10)
        .map(|k| {
            let z = k as f64 / 10.0;
            let t = (0..sol.model().mesh().triangles().len())
                .map(|t| TriangleId(t as u32))
                .find(|&t| sol.flux_density_at(t, [0.0, z]).is_ok())
                .unwrap();
            let b = sol.flux_density_at(t, [0.0, z]).unwrap();
            // On the axis B_z = (1/r) du/dr -> 2 sin(pi z), B_r = 0.
            (b[1] - 2.0 * (PI * z).sin()).abs().max(b[0].abs())
        })
        .fold(0.0, f64::max);
    eprintln!("axisymmetric {order:?} n = {n}: max on-axis |B - B_exact| = {on_axis:.3e} T");
    ON_AXIS.with(|c| c.borrow_mut().push(on_axis));
    errors(
        &sol,
        |_| 1.0,
        |r, z| r * r * (1.0 - r * r) * (PI * z).sin(),
        |r, z| {
            [
                -r * (1.0 - r * r) * PI * (PI * z).cos(),
                (2.0 - 4.0 * r * r) * (PI * z).sin(),
            ]
        },
    )
}

thread_local! {
    static ON_AXIS: std::cell::RefCell<Vec<f64>> = const { std::cell::RefCell::new(Vec::new()) };
}

fn rates(
    f: impl Fn(ElementOrder, usize) -> (f64, f64),
    order: ElementOrder,
    ns: &[usize],
) -> (f64, f64) {
    let h: Vec<f64> = ns.iter().map(|&n| 1.0 / n as f64).collect();
    let (eu, eb): (Vec<f64>, Vec<f64>) = ns.iter().map(|&n| f(order, n)).unzip();
    eprintln!("{order:?}: h {h:?}\n  L2(potential) {eu:?}\n  L2(B) {eb:?}");
    (slope(&h, &eu), slope(&h, &eb))
}

#[test]
fn planar_p1_rates_are_two_and_one() {
    let (ru, rb) = rates(planar_errors, ElementOrder::P1, &[8, 16, 32]);
    eprintln!("planar P1 rates: {ru:.3} {rb:.3}");
    assert!((ru - 2.0).abs() < 0.1, "L2 rate {ru}");
    assert!((rb - 1.0).abs() < 0.1, "B rate {rb}");
}

#[test]
fn planar_p2_rates_are_three_and_two() {
    let (ru, rb) = rates(planar_errors, ElementOrder::P2, &[8, 16, 32]);
    eprintln!("planar P2 rates: {ru:.3} {rb:.3}");
    assert!((ru - 3.0).abs() < 0.15, "L2 rate {ru}");
    assert!((rb - 2.0).abs() < 0.1, "B rate {rb}");
}

#[test]
fn axisymmetric_p1_rates_are_two_and_one() {
    let (ru, rb) = rates(axisymmetric_errors, ElementOrder::P1, &[8, 16, 32]);
    eprintln!("axisymmetric P1 rates: {ru:.3} {rb:.3}");
    let axis = ON_AXIS.with(|c| c.borrow().clone());
    let ra = slope(&[1.0 / 8.0, 1.0 / 16.0, 1.0 / 32.0], &axis);
    eprintln!("on-axis B rate {ra:.3}");
    assert!(ra > 0.9, "on-axis B rate {ra}");
    assert!((ru - 2.0).abs() < 0.15, "L2 rate {ru}");
    assert!((rb - 1.0).abs() < 0.15, "B rate {rb}");
}

#[test]
fn axisymmetric_p2_rates_are_three_and_two() {
    let (ru, rb) = rates(axisymmetric_errors, ElementOrder::P2, &[8, 16, 32]);
    eprintln!("axisymmetric P2 rates: {ru:.3} {rb:.3}");
    let axis = ON_AXIS.with(|c| c.borrow().clone());
    let ra = slope(&[1.0 / 8.0, 1.0 / 16.0, 1.0 / 32.0], &axis);
    eprintln!("on-axis B rate {ra:.3}");
    assert!(ra > 1.9, "on-axis B rate {ra}");
    assert!((ru - 3.0).abs() < 0.15, "L2 rate {ru}");
    assert!((rb - 2.0).abs() < 0.15, "B rate {rb}");
}
