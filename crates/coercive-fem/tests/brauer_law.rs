//! The closed-form Brauer law `Material::Brauer`: tangent, energy, co-energy, published
//! values, agreement with the sampled curve below its vacuum-slope point, validation.

use coercive_fem::{BhCurve, Material, MaterialError, SoftMagnetic, MU_0};

/// M-19 coefficients of Brauer, Magnetic Actuators and Sensors, 2nd ed., 2014, App. B.
fn m19() -> Material {
    Material::Brauer {
        k1: 2.150,
        k2: 2.477,
        k3: 83.03,
    }
}

/// The peer benchmark's iron (shared/peers/README.md): nu(B^2) = 3.8 exp(2.17 B^2) + 396.2.
fn peer_iron() -> Material {
    Material::Brauer {
        k1: 3.8,
        k2: 2.17,
        k3: 396.2,
    }
}

const E: [f64; 2] = [1.0, 0.0];

/// Composite 5-point Gauss-Legendre quadrature of f over [0, 1] with n panels.
fn integrate01(f: impl Fn(f64) -> f64, n: usize) -> f64 {
    const X: [f64; 5] = [
        0.0,
        -0.538_469_310_105_683_1,
        0.538_469_310_105_683_1,
        -0.906_179_845_938_664,
        0.906_179_845_938_664,
    ];
    const W: [f64; 5] = [
        0.568_888_888_888_888_9,
        0.478_628_670_499_366_5,
        0.478_628_670_499_366_5,
        0.236_926_885_056_189_1,
        0.236_926_885_056_189_1,
    ];
    let h = 1.0 / n as f64;
    let mut s = 0.0;
    for k in 0..n {
        let c = (k as f64 + 0.5) * h;
        for q in 0..5 {
            s += W[q] * f(c + 0.5 * h * X[q]);
        }
    }
    0.5 * h * s
}

#[test]
fn tangent_matches_central_finite_differences() {
    for m in [m19(), peer_iron()] {
        for &bm in &[0.0, 1e-6, 0.05, 0.5, 1.0, 1.5, 1.8, 2.2, 3.0] {
            for &a in &[0.0f64, 0.5, 1.3, 2.9, -2.0] {
                let b = [bm * a.cos(), bm * a.sin()];
                let r = m.response(b, E);
                let scale = r.dh_db[0][0].abs().max(r.dh_db[1][1].abs());
                let step = 1e-6 * bm.max(1e-3);
                for j in 0..2 {
                    let (mut bp, mut bn) = (b, b);
                    bp[j] += step;
                    bn[j] -= step;
                    let (hp, hn) = (m.response(bp, E).h, m.response(bn, E).h);
                    for i in 0..2 {
                        let fd = (hp[i] - hn[i]) / (2.0 * step);
                        assert!(
                            (fd - r.dh_db[i][j]).abs() <= 1e-6 * scale,
                            "{m:?} at B = {b:?} T: dH{i}/dB{j} = {} A/(m T), finite \
                             difference {fd} A/(m T)",
                            r.dh_db[i][j]
                        );
                    }
                }
                assert_eq!(r.dh_db[0][1], r.dh_db[1][0], "tangent not symmetric");
            }
        }
    }
}

#[test]
fn energy_is_the_integral_of_h_db_and_coenergy_the_legendre_transform() {
    for m in [m19(), peer_iron()] {
        for &(bm, a) in &[
            (1e-4, 0.3),
            (0.3, 0.2),
            (1.2, 1.9),
            (1.85, -0.6),
            (2.6, 3.0),
        ] {
            let b = [bm * f64::cos(a), bm * f64::sin(a)];
            // Straight path from B = 0 (the H = 0 state).
            let w_quad = integrate01(
                |s| {
                    let h = m.response([s * b[0], s * b[1]], E).h;
                    h[0] * b[0] + h[1] * b[1]
                },
                2000,
            );
            let w = m.energy_density(b, E);
            assert!(
                (w - w_quad).abs() <= 1e-10 * w_quad.abs().max(1e-12),
                "energy {w} J/m^3 vs quadrature of H dB {w_quad} J/m^3 at {bm} T"
            );
            // Co-energy against its own definition: the integral of B . dH along the path.
            let wc_quad = integrate01(
                |s| {
                    let bs = [s * b[0], s * b[1]];
                    let r = m.response(bs, E);
                    // dH/ds = (dH/dB) b
                    let dh = [
                        r.dh_db[0][0] * b[0] + r.dh_db[0][1] * b[1],
                        r.dh_db[1][0] * b[0] + r.dh_db[1][1] * b[1],
                    ];
                    bs[0] * dh[0] + bs[1] * dh[1]
                },
                2000,
            );
            let wc = m.coenergy_density(b, E);
            assert!(
                (wc - wc_quad).abs() <= 1e-10 * wc_quad.abs().max(1e-12),
                "co-energy {wc} J/m^3 vs quadrature of B dH {wc_quad} J/m^3 at {bm} T"
            );
        }
    }
}

#[test]
fn energy_has_the_linear_limit_when_k2_is_zero() {
    // k2 = 0: nu = k1 + k3 constant, w = nu B^2 / 2 (a linear law).
    let m = Material::Brauer {
        k1: 5.0,
        k2: 0.0,
        k3: 700.0,
    };
    assert!(m.is_linear());
    let w = m.energy_density([0.6, -0.8], E);
    assert!((w - 0.5 * 705.0).abs() <= 1e-12 * 352.5, "w = {w} J/m^3");
    assert!(!m19().is_linear());
}

#[test]
fn m19_reproduces_published_fit_values() {
    // check-values.md, Materials: H = (k1 exp(k2 B^2) + k3) B with the M-19 coefficients of
    // Brauer, Magnetic Actuators and Sensors, 2nd ed., 2014, App. B (computed values).
    let m = m19();
    for &(b, h) in &[(0.5, 43.5), (1.0, 108.6), (1.5, 973.7), (1.8, 11984.0)] {
        let got = m.response([0.0, b], E).h[1];
        assert!(
            (got - h).abs() <= 0.5e-3 * h + 0.05,
            "M-19 at {b} T: {got} A/m, expected {h} A/m"
        );
    }
}

#[test]
fn agrees_with_the_sampled_curve_below_its_vacuum_slope_point_and_departs_beyond() {
    // BhCurve::brauer samples the same law to 1e-7 relative error in H up to where
    // dB/dH = mu_0 (about 2.06 T for the peer iron), then continues at vacuum slope.
    let exact = peer_iron();
    let sampled = Material::Soft(SoftMagnetic {
        curve: BhCurve::brauer(3.8, 2.17, 396.2).unwrap(),
    });
    for &b in &[0.1, 0.8, 1.5, 1.9, 2.0] {
        let he = exact.response([b, 0.0], E).h[0];
        let hs = sampled.response([b, 0.0], E).h[0];
        assert!((he - hs).abs() <= 1e-6 * he, "{b} T: {he} vs {hs} A/m");
        let we = exact.energy_density([b, 0.0], E);
        let ws = sampled.energy_density([b, 0.0], E);
        assert!((we - ws).abs() <= 1e-6 * we, "{b} T: {we} vs {ws} J/m^3");
    }
    // At 2.3 T the law's slope is flatter than vacuum: the exact law needs more field.
    let he = exact.response([2.3, 0.0], E).h[0];
    let hs = sampled.response([2.3, 0.0], E).h[0];
    assert!(
        he > hs * 1.01,
        "exact {he} A/m vs sampled {hs} A/m at 2.3 T"
    );
    // And its tangent along B is then above 1/mu_0 (dB/dH below mu_0), still positive.
    let t = exact.response([2.3, 0.0], E).dh_db[0][0];
    assert!(t > 1.0 / MU_0);
}

#[test]
fn validation_rejects_bad_coefficients_and_names_them() {
    assert_eq!(m19().validate(), Ok(()));
    assert_eq!(peer_iron().validate(), Ok(()));
    let cases = [
        (-1.0, 2.0, 80.0, "k1 (A/(m T))"),
        (f64::NAN, 2.0, 80.0, "k1 (A/(m T))"),
        (1.0, -0.1, 80.0, "k2 (1/T^2)"),
        (1.0, f64::INFINITY, 80.0, "k2 (1/T^2)"),
        (1.0, 2.0, 0.0, "k3 (A/(m T))"),
        (1.0, 2.0, -5.0, "k3 (A/(m T))"),
    ];
    for (k1, k2, k3, name) in cases {
        match (Material::Brauer { k1, k2, k3 }).validate() {
            Err(MaterialError::InvalidParameter {
                material,
                parameter,
                ..
            }) => {
                assert_eq!(parameter, name);
                assert_eq!(material, "Brauer law");
            }
            other => panic!("k1 = {k1}, k2 = {k2}, k3 = {k3}: {other:?}"),
        }
    }
}
