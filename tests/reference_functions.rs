//! Tests of the reference functions in `tests/common` against tabulated values, published
//! check values and independent re-derivations, so the solver tests compare against
//! something that was itself checked.

mod common;

use common::meshes::{polar_mesh, ring_radii, tensor_mesh};
use common::*;
use std::f64::consts::PI;

fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs()
}

#[test]
fn gauss_legendre_integrates_polynomials_exactly() {
    for n in 1..=12 {
        let (x, w) = gauss_legendre(n);
        // Exact for degree 2n - 1: int_{-1}^{1} x^d dx = 2/(d+1) for even d, 0 for odd d.
        for d in 0..2 * n {
            let q: f64 = x.iter().zip(&w).map(|(x, w)| w * x.powi(d as i32)).sum();
            let exact = if d % 2 == 0 {
                2.0 / (d as f64 + 1.0)
            } else {
                0.0
            };
            assert!((q - exact).abs() < 1e-13, "n={n} d={d}: {q} vs {exact}");
        }
    }
    // Not exact beyond: the 2-point rule misses x^4 (2/5 exact, 2/9 from the rule).
    let (x, w) = gauss_legendre(2);
    let q: f64 = x.iter().zip(&w).map(|(x, w)| w * x.powi(4)).sum();
    assert!((q - 2.0 / 9.0).abs() < 1e-14);
}

#[test]
fn elliptic_integrals_match_tables() {
    // Abramowitz & Stegun, Table 17.1 (parameter m = sin^2 alpha): K(0.5) = 1.8540746773,
    // E(0.5) = 1.3506438810; K(0) = E(0) = pi/2.
    let (k, e) = ellip_ke(0.5);
    assert!((k - 1.854_074_677_3).abs() < 1e-9, "K(0.5) = {k}");
    assert!((e - 1.350_643_881_0).abs() < 1e-9, "E(0.5) = {e}");
    let (k0, e0) = ellip_ke(0.0);
    assert!((k0 - PI / 2.0).abs() < 1e-15 && (e0 - PI / 2.0).abs() < 1e-15);
    // A&S Table 17.1, alpha = 80 degrees (m = sin^2 80 deg = 0.96984631):
    // K = 3.1533852519, E = 1.0401143957.
    let m = (80f64.to_radians()).sin().powi(2);
    let (k, e) = ellip_ke(m);
    assert!((k - 3.153_385_251_9).abs() < 1e-9, "K = {k}");
    assert!((e - 1.040_114_395_7).abs() < 1e-9, "E = {e}");
    // Legendre's relation E K' + E' K - K K' = pi/2 (A&S 17.3.13) at m = 0.3.
    let (k1, e1) = ellip_ke(0.3);
    let (k2, e2) = ellip_ke(0.7);
    assert!((e1 * k2 + e2 * k1 - k1 * k2 - PI / 2.0).abs() < 1e-14);
    // Against the defining integrals by quadrature: K = int_0^{pi/2} (1 - m sin^2)^(-1/2).
    for m in [0.1, 0.6, 0.9] {
        let kq = integrate(
            |t| 1.0 / (1.0 - m * t.sin().powi(2)).sqrt(),
            0.0,
            PI / 2.0,
            20,
            10,
        );
        let eq = integrate(
            |t| (1.0 - m * t.sin().powi(2)).sqrt(),
            0.0,
            PI / 2.0,
            20,
            10,
        );
        let (k, e) = ellip_ke(m);
        assert!(rel(k, kq) < 1e-13 && rel(e, eq) < 1e-13, "m = {m}");
    }
}

/// Field of a loop by direct Biot-Savart quadrature over the filament (independent of the
/// elliptic-integral form): dB = mu0 I dl x R / (4 pi |R|^3).
fn loop_field_biot_savart(a: f64, i: f64, r: f64, z: f64) -> (f64, f64) {
    let f = |phi: f64, comp: usize| {
        // Source point (a cos phi, a sin phi, 0), dl = a (-sin phi, cos phi, 0) dphi;
        // field point (r, 0, z).
        let (dx, dy, dz) = (r - a * phi.cos(), -a * phi.sin(), z);
        let d3 = (dx * dx + dy * dy + dz * dz).powf(1.5);
        let (lx, ly) = (-a * phi.sin(), a * phi.cos());
        // dl x R = (ly dz, -lx dz, lx dy - ly dx)
        let c = match comp {
            0 => ly * dz,
            _ => lx * dy - ly * dx,
        };
        MU_0 * i / (4.0 * PI) * c / d3
    };
    (
        integrate(|p| f(p, 0), 0.0, 2.0 * PI, 64, 10),
        integrate(|p| f(p, 2), 0.0, 2.0 * PI, 64, 10),
    )
}

#[test]
fn loop_field_matches_check_values_and_biot_savart() {
    // check-values item 5 (computed from Smythe 1950's formula): a = 0.1 m, I = 1 kA.
    let (a, i) = (0.1, 1000.0);
    let (_, bz) = loop_field(a, i, 0.0, 0.05);
    assert!((bz - 4.49588e-3).abs() < 1e-8, "Bz on axis {bz}");
    let (br, bz) = loop_field(a, i, 0.05, 0.05);
    assert!((br - 1.61689e-3).abs() < 1e-8, "Br {br}");
    assert!((bz - 4.34585e-3).abs() < 1e-8, "Bz {bz}");
    let (_, bz) = loop_field(a, i, 0.05, 0.0);
    assert!((bz - 7.82647e-3).abs() < 1e-8, "Bz {bz}");
    // Off-axis points against direct Biot-Savart integration.
    for (r, z) in [(0.05, 0.05), (0.15, -0.02), (0.02, 0.3), (0.09, 0.01)] {
        let (br, bz) = loop_field(a, i, r, z);
        let (brq, bzq) = loop_field_biot_savart(a, i, r, z);
        assert!(
            (br - brq).abs() < 1e-9 * bz.abs().max(br.abs()),
            "Br at ({r}, {z})"
        );
        assert!(
            (bz - bzq).abs() < 1e-9 * bz.abs().max(br.abs()),
            "Bz at ({r}, {z})"
        );
    }
    // Near the axis the off-axis formula tends to the on-axis one.
    let (_, bz_near) = loop_field(a, i, 1e-6, 0.05);
    assert!(rel(bz_near, 4.49588e-3) < 1e-5);
}

#[test]
fn loop_potential_is_consistent_with_field() {
    // B = curl (A_phi e_phi): Bz = (1/r) d(r A)/dr, Br = -dA/dz (central differences).
    let (a, i) = (0.1, 250.0);
    for (r, z) in [(0.05, 0.05), (0.2, 0.1), (0.12, -0.03)] {
        let h = 1e-6;
        let ra = |r: f64, z: f64| r * loop_potential(a, i, r, z);
        let bz = (ra(r + h, z) - ra(r - h, z)) / (2.0 * h * r);
        let br = -(loop_potential(a, i, r, z + h) - loop_potential(a, i, r, z - h)) / (2.0 * h);
        let (br0, bz0) = loop_field(a, i, r, z);
        assert!(rel(bz, bz0) < 1e-6 && rel(br, br0) < 1e-6, "({r}, {z})");
    }
    // Flux through a coaxial loop 2 pi b A_phi(b) equals M I (Maxwell's formula).
    let (b, d) = (0.07, 0.04);
    let flux = 2.0 * PI * b * loop_potential(a, i, b, d);
    assert!(rel(flux, loop_mutual_inductance(a, b, d) * i) < 1e-12);
}

#[test]
fn maxwell_mutual_inductance_limits_and_force() {
    // Far apart, M -> mu0 pi a^2 b^2 / (2 d^3) (two dipoles on a common axis).
    let (a, b, d): (f64, f64, f64) = (0.01, 0.02, 2.0);
    let far = MU_0 * PI * a * a * b * b / (2.0 * d.powi(3));
    assert!(rel(loop_mutual_inductance(a, b, d), far) < 1e-3);
    // Force = I1 I2 dM/dz (virtual work at constant currents), by central differences.
    let (a, b, z) = (0.05, 0.06, 0.03);
    let h = 1e-7;
    let dm =
        (loop_mutual_inductance(a, b, z + h) - loop_mutual_inductance(a, b, z - h)) / (2.0 * h);
    let f = loop_pair_force(a, b, z, 3.0, 5.0);
    assert!(rel(f, 15.0 * dm) < 1e-6, "{f} vs {}", 15.0 * dm);
    assert!(f < 0.0, "currents in the same sense attract");
}

#[test]
fn thick_ring_force_by_quadrature() {
    // check-values item 7: R1 = 50 mm, R2 = 60 mm, height 10 mm each, faces 40 mm apart,
    // J = 3 MA/m^2; the filament formula integrated over both sections gives 76.67 mN
    // (computed; Ravaud et al., PIER 102, 2010 treat the same configuration).
    let j = 3e6;
    let f = |n| ring_pair_force([0.05, 0.06, 0.0, 0.01], j, [0.05, 0.06, 0.05, 0.06], j, n);
    let f8 = f(8);
    let f12 = f(12);
    assert!((f8 - f12).abs() < 1e-6 * f12.abs(), "quadrature converged");
    assert!(
        (f12.abs() - 76.67e-3).abs() < 0.01e-3,
        "|F| = {} N",
        f12.abs()
    );
    assert!(f12 < 0.0, "attraction");
}

#[test]
fn thick_coil_field_tends_to_filament() {
    // A small square section at (a, 0) acts like a filament far away (error ~ (s/d)^2).
    let j = 1e7;
    let s = 1e-3;
    let coil = [0.1 - s / 2.0, 0.1 + s / 2.0, -s / 2.0, s / 2.0];
    let (br, bz) = thick_coil_field(coil, j, 0.05, 0.05, 6);
    let (br0, bz0) = loop_field(0.1, j * s * s, 0.05, 0.05);
    assert!(rel(br, br0) < 1e-3 && rel(bz, bz0) < 1e-3);
}

#[test]
fn solenoid_axis_field_matches_check_values_and_loop_sum() {
    // check-values item 6: n = 1e4 /m, L = 0.1 m, R = 0.01 m, I = 1 A: 12.3223 mT at the
    // centre, 6.25200 mT at an end (computed).
    let b0 = solenoid_axis_field(1e4, 1.0, 0.1, 0.01, 0.0);
    let be = solenoid_axis_field(1e4, 1.0, 0.1, 0.01, 0.05);
    assert!((b0 - 12.3223e-3).abs() < 1e-7, "{b0}");
    assert!((be - 6.25200e-3).abs() < 1e-8, "{be}");
    // The same by integrating the on-axis loop field over the winding (n dz loops of current I).
    for z in [0.0, 0.03, 0.05, 0.08] {
        let q = integrate(
            |zc| loop_field(0.01, 1e4, 0.0, z - zc).1,
            -0.05,
            0.05,
            40,
            10,
        );
        assert!(
            rel(q, solenoid_axis_field(1e4, 1.0, 0.1, 0.01, z)) < 1e-10,
            "z = {z}"
        );
    }
}

#[test]
fn coax_inductance_matches_energy_quadrature() {
    // check-values item 2: a = 1, b = 4, c = 5 mm: L' = 3.43838e-7 H/m (computed from the
    // closed form in Cheng, Field and Wave Electromagnetics). Re-derived here from the energy
    // W' = int mu0 H^2 / 2 dA with H from Ampere's law, L' = 2 W' / I^2.
    let (a, b, c) = (1e-3, 4e-3, 5e-3);
    let l = coax_inductance(a, b, c);
    assert!((l - 3.43838e-7).abs() < 1e-12, "{l}");
    let i = 7.0;
    let w = |lo: f64, hi: f64| {
        integrate(
            |r| 0.5 * MU_0 * coax_h(a, b, c, i, r).powi(2) * 2.0 * PI * r,
            lo,
            hi,
            50,
            8,
        )
    };
    let energy = w(0.0, a) + w(a, b) + w(b, c);
    assert!(rel(2.0 * energy / (i * i), l) < 1e-12);
}

#[test]
fn toroid_inductance_matches_check_value() {
    // check-values item 8: N = 100, h = 10 mm, a = 20 mm, b = 30 mm: 8.1093 uH.
    let l = toroid_inductance(100.0, 0.01, 0.02, 0.03);
    assert!((l - 8.1093e-6).abs() < 1e-10, "{l}");
}

#[test]
fn cylinder_solution_satisfies_interface_conditions() {
    // Continuity of A (normal B) and of H_theta = -(1/mu) dA/dr at r = a, uniform field far
    // away, interior field 2 mu_r/(mu_r + 1) B0 (planar analogue of Jackson sec. 5.12).
    let (a, mu_r, b0) = (0.02, 50.0, 0.3);
    let th: f64 = 0.7;
    let (x, y) = (a * th.cos(), a * th.sin());
    let e = 1e-9;
    let out = cylinder_potential(a, mu_r, b0, x * (1.0 + e), y * (1.0 + e));
    let inn = cylinder_potential(a, mu_r, b0, x * (1.0 - e), y * (1.0 - e));
    assert!((out - inn).abs() < 1e-8 * b0 * a);
    let dr = 1e-9;
    let pot = |r: f64| cylinder_potential(a, mu_r, b0, r * th.cos(), r * th.sin());
    let h_out = -(pot(a + 2.0 * dr) - pot(a + dr)) / dr / MU_0;
    let h_in = -(pot(a - dr) - pot(a - 2.0 * dr)) / dr / (MU_0 * mu_r);
    assert!(rel(h_out, h_in) < 1e-4, "{h_out} {h_in}");
    let far = cylinder_potential(a, mu_r, b0, 0.0, 100.0);
    assert!(rel(far, b0 * 100.0) < 1e-7);
    // check-values item 3: shell a = 90 mm, b = 100 mm, mu_r = 1000 gives 0.020659.
    assert!((shell_shielding_ratio(1000.0, 0.09, 0.1) - 0.020659).abs() < 1e-6);
    // A vanishing cavity (a -> 0): the solid cylinder's field 2 mu_r/(mu_r + 1) B0, times the
    // field ratio of a small round hole in a uniformly magnetised medium, 2/(mu_r + 1) (the
    // same two-media solution with the permeabilities swapped).
    let composed = 2.0 * mu_r / (mu_r + 1.0) * 2.0 / (mu_r + 1.0);
    assert!(rel(shell_shielding_ratio(mu_r, 0.0, 0.1), composed) < 1e-14);
    // Without permeability contrast there is no shielding.
    assert!(rel(shell_shielding_ratio(1.0, 0.09, 0.1), 1.0) < 1e-14);
}

#[test]
fn nonlinear_ring_closed_forms_match_own_quadrature() {
    // check-values item 4: I = 1000 A, a = 10 mm, b = 20 mm, Js = 1.8 T, H0 = 200 A/m:
    // flux 1.780584e-2 Wb/m, B(a) = 1.79766 T, B(b) = 1.76587 T, co-energy 16.7217 J/m,
    // energy 1.08415 J/m (computed). Re-derived here: H = I/(2 pi r) by Ampere's law, the flux
    // and energies by Gauss-Legendre quadrature over the ring, the densities by quadrature of
    // int B dH and int H dB.
    let law = SaturatingLaw { js: 1.8, h0: 200.0 };
    let (i, a, b) = (1000.0, 0.01, 0.02);
    let h = |r: f64| i / (2.0 * PI * r);
    let flux_q = integrate(|r| law.b(h(r)), a, b, 20, 10);
    let flux_c = ring_flux_closed_form(law, i, a, b);
    assert!(rel(flux_q, flux_c) < 1e-13);
    assert!((flux_c - 1.780584e-2).abs() < 1e-8, "{flux_c}");
    assert!((law.b(h(a)) - 1.79766).abs() < 1e-5);
    assert!((law.b(h(b)) - 1.76587).abs() < 1e-5);
    // Co-energy density by quadrature of B dH (graded panels: B bends sharply near H0).
    let hq = 15_000.0;
    let co_q =
        integrate(|x| law.b(x), 0.0, 2000.0, 200, 8) + integrate(|x| law.b(x), 2000.0, hq, 200, 8);
    assert!(rel(co_q, law.coenergy_density(hq)) < 1e-12);
    // Energy density int_0^B H dB' by quadrature in B (substituting the inverse law).
    let bq = law.b(hq);
    let en_q = integrate(|x| law.h(x), 0.0, bq, 400, 8);
    assert!(
        rel(en_q, law.energy_density(hq)) < 1e-7,
        "{en_q} vs {}",
        law.energy_density(hq)
    );
    let co = integrate(|r| law.coenergy_density(h(r)) * 2.0 * PI * r, a, b, 20, 10);
    let en = integrate(|r| law.energy_density(h(r)) * 2.0 * PI * r, a, b, 20, 10);
    assert!((co - 16.7217).abs() < 1e-4, "co-energy {co} J/m");
    assert!((en - 1.08415).abs() < 1e-5, "energy {en} J/m");
    assert!(rel(en + co, i * flux_c) < 1e-12);
}

#[test]
fn test_meshes_cover_their_domains() {
    // Tensor mesh area and region split.
    let xs = common::meshes::graded(0.0, 1.0, 10, 1.2);
    let ys = common::meshes::lines_through(&[-1.0, 0.0, 1.0], |_| 0.1);
    let m = tensor_mesh(&xs, &ys, &["a", "b"], |_, y| usize::from(y > 0.0));
    let ra = m.region_area(coercive::mesh::RegionId(0));
    let rb = m.region_area(coercive::mesh::RegionId(1));
    assert!((ra - 1.0).abs() < 1e-12 && (rb - 1.0).abs() < 1e-12);
    // Polar mesh: full disc area tends to pi R^2 (inscribed polygons), sectors tile the disc.
    let radii = ring_radii(&[0.0, 0.5, 1.0], |_| 0.02);
    let full = polar_mesh(
        &radii,
        4,
        4,
        &["in", "out"],
        |r, _| usize::from(r > 0.5),
        false,
    );
    let inner = full.region_area(coercive::mesh::RegionId(0));
    let outer = full.region_area(coercive::mesh::RegionId(1));
    assert!(rel(inner + outer, PI) < 2e-3, "{}", inner + outer);
    let quarter = polar_mesh(
        &radii,
        4,
        1,
        &["in", "out"],
        |r, _| usize::from(r > 0.5),
        true,
    );
    let qa: f64 = (0..2)
        .map(|k| quarter.region_area(coercive::mesh::RegionId(k)))
        .sum();
    assert!(rel(4.0 * qa, inner + outer) < 1e-12);
    assert_eq!(quarter.triangles().len() * 4, full.triangles().len());
    assert_eq!(quarter.curve_pairs().len(), 1);
}
