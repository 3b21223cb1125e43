//! The open boundary (Kelvin transformation, Freeman & Lowther, IEEE Trans. Magn. 25(5),
//! 1989) against the unbounded closed form: two conductors of opposite current (annular
//! sectors) whose potential in unbounded space is the logarithmic potential of their current
//! integrated over their sections, A = -(mu0 / 2 pi) int J ln|p - p'| dA' (net current zero,
//! so A -> 0 at infinity).

mod common;

use std::f64::consts::PI;

use coercive::fem::{ElementOrder, Formulation, Material, Model, OpenBoundary, Solution};
use coercive::mesh::Mesh;
use common::meshes::{join_meshes, polar_mesh, ring_radii};
use common::*;

const J: f64 = 1e6;
const R: f64 = 0.1; // radius of the modelled disc (m)
const H: f64 = 2e-3;

/// The + conductor: r in [20, 30] mm, |theta| < 30 degrees; the - conductor: the same turned
/// by 180 degrees.
fn sector_of(r: f64, th: f64) -> usize {
    if !(0.02..0.03).contains(&r) {
        return 0;
    }
    let d = |c: f64| {
        let x = (th - c).rem_euclid(2.0 * PI);
        x.min(2.0 * PI - x)
    };
    if d(0.0) < PI / 6.0 {
        1
    } else if d(PI) < PI / 6.0 {
        2
    } else {
        0
    }
}

/// Unbounded potential at p by Gauss-Legendre quadrature over both sections (p outside them).
fn exact_potential(p: [f64; 2]) -> f64 {
    let one = |c: f64| {
        integrate(
            |r| {
                integrate(
                    |t| {
                        let (x, y) = (r * t.cos(), r * t.sin());
                        -(p[0] - x).hypot(p[1] - y).ln() * r
                    },
                    c - PI / 6.0,
                    c + PI / 6.0,
                    8,
                    8,
                )
            },
            0.02,
            0.03,
            4,
            8,
        )
    };
    MU_0 * J / (2.0 * PI) * (one(0.0) - one(PI))
}

fn interior_mesh() -> Mesh {
    let radii = ring_radii(&[0.0, 0.02, 0.03, R], |_| H);
    polar_mesh(&radii, 12, 12, &["air", "plus", "minus"], sector_of, false)
}

fn solve(open: bool) -> Solution {
    let inner = interior_mesh();
    let outer_ring = format!("ring{}", inner.curves().len());
    let builder = if open {
        // The exterior disc: same radius and the same ring spacing at its rim, so its rim nodes
        // are translates of the interior rim's; its centre is the image of infinity.
        let radii = ring_radii(&[0.0, R], |_| H);
        let exterior = polar_mesh(&radii, 12, 12, &["exterior"], |_, _| 0, false);
        let ext_ring = format!("ring{}", exterior.curves().len());
        let mesh = join_meshes(
            &inner,
            "in_",
            &exterior,
            "ex_",
            [3.0 * R, 0.0],
            &outer_ring,
            &ext_ring,
        );
        Model::builder(mesh, Formulation::Planar { depth_m: 1.0 }).open_boundary(OpenBoundary {
            circle: format!("in_{outer_ring}"),
            exterior_boundary: format!("ex_{ext_ring}"),
            exterior_region: "exterior".into(),
            exterior_centre: [3.0 * R, 0.0],
        })
    } else {
        Model::builder(inner, Formulation::Planar { depth_m: 1.0 })
            .fixed_potential(&outer_ring, 0.0)
    };
    builder
        .order(ElementOrder::P2)
        .material("air", Material::vacuum())
        .material("plus", Material::vacuum())
        .material("minus", Material::vacuum())
        .current_density("plus", J)
        .current_density("minus", -J)
        .build()
        .expect("model")
        .solve()
        .expect("solution")
}

#[test]
fn open_boundary_reproduces_the_unbounded_potential() {
    let open = solve(true);
    let closed = solve(false);
    let scale = exact_potential([0.05, 0.0]).abs();
    let (mut worst_open, mut worst_closed) = (0.0f64, 0.0f64);
    for p in [
        [0.05, 0.0],
        [0.0, 0.06],
        [0.07, 0.05],
        [-0.08, 0.02],
        [0.0, 0.0],
        [0.095, 0.0],
    ] {
        let exact = exact_potential(p);
        let (ao, ac) = (a_at(&open, p), a_at(&closed, p));
        eprintln!("{p:?}: open {ao:.6e}, A=0 box {ac:.6e}, unbounded {exact:.6e} Wb/m");
        worst_open = worst_open.max((ao - exact).abs() / scale);
        worst_closed = worst_closed.max((ac - exact).abs() / scale);
    }
    eprintln!("worst relative error: open {worst_open:.2e}, A = 0 at R {worst_closed:.2e}");
    // P2 with h = 2 mm on polygonal sections of chord error (h/r)^2/8 ~ 1e-3 at r = 20 mm.
    assert!(worst_open < 3e-3, "open boundary error {worst_open:.2e}");
    // The truncated model is visibly wrong near its edge: the test can tell them apart.
    assert!(
        worst_closed > 10.0 * worst_open,
        "A = 0 error {worst_closed:.2e}"
    );
}
