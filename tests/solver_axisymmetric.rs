//! Axisymmetric solver checks: a circular coil of small square section against the
//! elliptic-integral field of a current loop, and a finite solenoid's on-axis field.

mod common;

use coercive::fem::{ElementOrder, Formulation, Material, Model, ScalarField, Sense, Winding};
use coercive::mesh::Point2;
use common::meshes::{grown, join, lines_through, tensor_mesh};
use common::*;

/// A_phi (Wb/m) of a coil of rectangular section [r0, r1] x [z0, z1] with uniform current
/// density j: Gauss-Legendre quadrature of the filament potential (Smythe 1950, sec. 7.10)
/// over the section, `panels` panels of 6 points along each side.
fn thick_coil_potential(coil: [f64; 4], j: f64, r: f64, z: f64, panels: usize) -> f64 {
    let [r0, r1, z0, z1] = coil;
    integrate(
        |rc| integrate(|zc| loop_potential(rc, j, r, z - zc), z0, z1, panels, 6),
        r0,
        r1,
        2,
        6,
    )
}

#[test]
fn current_loop_field_matches_elliptic_integral_formula() {
    // A coil of 4 mm x 4 mm section centred at r = a = 0.1 m carrying I = 1 kA, against the
    // loop formula (Smythe, Static and Dynamic Electricity, 1950; Simpson et al., NASA 2001)
    // integrated over the section (check-values item 5 gives the filament values, e.g.
    // Bz = 4.49588 mT on the axis at z = 0.05 m). The exact potential of the coil is imposed
    // on the outer boundary, so only discretisation error remains.
    let (a, s, current) = (0.1, 4e-3, 1000.0);
    let coil = [a - s / 2.0, a + s / 2.0, -s / 2.0, s / 2.0];
    let j = current / (s * s);
    let rs = join(&[
        grown(a - s / 2.0, 0.0, 1e-3, 1.06),
        lines_through(&[a - s / 2.0, a + s / 2.0], |_| 1e-3),
        grown(a + s / 2.0, 0.3, 1e-3, 1.06),
    ]);
    let zs = join(&[
        grown(-s / 2.0, -0.3, 1e-3, 1.06),
        lines_through(&[-s / 2.0, s / 2.0], |_| 1e-3),
        grown(s / 2.0, 0.3, 1e-3, 1.06),
    ]);
    let in_coil = move |r: f64, z: f64| r > coil[0] && r < coil[1] && z > coil[2] && z < coil[3];
    let mesh = tensor_mesh(&rs, &zs, &["air", "coil"], |r, z| {
        usize::from(in_coil(r, z))
    });
    let boundary = ScalarField::new(move |p: Point2| thick_coil_potential(coil, j, p.x, p.y, 4));
    for (order, tol) in [(ElementOrder::P1, 3e-2), (ElementOrder::P2, 2e-3)] {
        let mut b = Model::builder(mesh.clone(), Formulation::Axisymmetric)
            .order(order)
            .material("air", Material::vacuum())
            .material("coil", Material::vacuum())
            .winding(Winding::new("loop", 1.0, current).side("coil", Sense::Positive));
        for side in ["right", "top", "bottom"] {
            b = b.fixed_potential_field(side, boundary.clone());
        }
        let sol = b.build().expect("model").solve().expect("solution");
        for (r, z) in [
            (0.0, 0.05),
            (0.0, -0.02),
            (0.05, 0.05),
            (0.05, 0.0),
            (0.15, 0.03),
        ] {
            let fe = b_at(&sol, [r, z]);
            let (br, bz) = thick_coil_field(coil, j, r, z, 8);
            let scale = br.hypot(bz);
            eprintln!(
                "{order:?} ({r}, {z}) m: B ({}, {}) T vs ({br}, {bz}) T",
                fe[0], fe[1]
            );
            if order == ElementOrder::P2 || r == 0.0 {
                // P2: O(h^2) gradients; on the axis B_z comes from the flux through a small
                // disc (see Solution::flux_density_at), as accurate as the potential.
                assert!(
                    (fe[0] - br).abs() < tol * scale,
                    "{order:?} Br at ({r}, {z})"
                );
                assert!(
                    (fe[1] - bz).abs() < tol * scale,
                    "{order:?} Bz at ({r}, {z})"
                );
            } else {
                // P1 gradients are piecewise constant (O(h) pointwise, h = 2-4 mm at the
                // probes): check the potential, O(h^2), instead.
                let exact = thick_coil_potential(coil, j, r, z, 4);
                let fe_a = a_at(&sol, [r, z]);
                eprintln!("    A_phi {fe_a} Wb/m vs {exact} Wb/m");
                assert!(
                    (fe_a - exact).abs() < tol * exact.abs(),
                    "{order:?} A at ({r}, {z})"
                );
            }
        }
        // The section is small: on the axis the coil's field is within 0.1 % of the filament
        // value of check-values item 5 (4.49588 mT at z = 0.05 m).
        let bz_axis = b_at(&sol, [0.0, 0.05])[1];
        assert!(
            (bz_axis - 4.49588e-3).abs() < (tol + 1e-3) * 4.49588e-3,
            "{bz_axis} T"
        );
    }
}

#[test]
fn finite_solenoid_on_axis() {
    // Finite solenoid, check-values item 6: n = 1e4 turns/m, L = 0.1 m, R = 10 mm, I = 1 A
    // gives 12.3223 mT at the centre and 6.25200 mT at an end for a thin winding. Here the
    // winding is 0.5 mm thick (r in [10, 10.5] mm, 1000 turns): the reference integrates the
    // thin-solenoid formula (B = mu0 n I / 2 [...], e.g. Griffiths, Introduction to
    // Electrodynamics, problem 5.11) over the thickness. A = 0 on a box 0.5 m away (the
    // solenoid's dipole field there is 1e-5 of the interior field).
    let (r0, t, len, turns, current) = (0.01, 0.5e-3, 0.1, 1000.0, 1.0);
    let j = turns * current / (t * len);
    let reference = |z: f64| {
        integrate(
            |rho| solenoid_axis_field(j, 1.0, len, rho, z),
            r0,
            r0 + t,
            2,
            6,
        )
    };
    assert!(
        (reference(0.0) - 12.3223e-3).abs() < 2e-2 * 12.3223e-3,
        "thin limit"
    );
    let rs = join(&[
        lines_through(&[0.0, r0], |_| 0.5e-3),
        lines_through(&[r0, r0 + t], |_| 0.25e-3),
        grown(r0 + t, 0.5, 0.25e-3, 1.1),
    ]);
    let zs = join(&[
        grown(-len / 2.0, -0.5, 1e-3, 1.08),
        lines_through(&[-len / 2.0, len / 2.0], |_| 1e-3),
        grown(len / 2.0, 0.5, 1e-3, 1.08),
    ]);
    let mesh = tensor_mesh(&rs, &zs, &["air", "winding"], |r, z| {
        usize::from(r > r0 && r < r0 + t && z.abs() < len / 2.0)
    });
    for (order, tol) in [(ElementOrder::P1, 5e-3), (ElementOrder::P2, 1e-3)] {
        let sol = Model::builder(mesh.clone(), Formulation::Axisymmetric)
            .order(order)
            .material("air", Material::vacuum())
            .material("winding", Material::vacuum())
            .winding(Winding::new("solenoid", turns, current).side("winding", Sense::Positive))
            .fixed_potential("right", 0.0)
            .fixed_potential("top", 0.0)
            .fixed_potential("bottom", 0.0)
            .build()
            .expect("model")
            .solve()
            .expect("solution");
        for z in [0.0, 0.02, len / 2.0, 0.08] {
            let fe = b_at(&sol, [0.0, z]);
            let exact = reference(z);
            eprintln!("{order:?} z={z} m: Bz {} T vs {exact} T", fe[1]);
            assert!(
                (fe[1] - exact).abs() < tol * reference(0.0),
                "{order:?} Bz at z = {z} m"
            );
            assert!(fe[0].abs() < 1e-9, "Br on the axis is zero by symmetry");
        }
    }
}
