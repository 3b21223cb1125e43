//! Material laws: tangents, energies, B-H curve processing, errors and the preset library.

use coercive_fem::library;
use coercive_fem::{
    BhCurve, BhTable, LinearMagnet, MagnetDirection, Material, MaterialError, SoftMagnetic, MU_0,
};
use proptest::prelude::*;

/// Composite 5-point Gauss-Legendre quadrature of f over [a, b] with n panels.
fn integrate(f: impl Fn(f64) -> f64, a: f64, b: f64, n: usize) -> f64 {
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
    let h = (b - a) / n as f64;
    let mut s = 0.0;
    for k in 0..n {
        let c = a + (k as f64 + 0.5) * h;
        for q in 0..5 {
            s += W[q] * f(c + 0.5 * h * X[q]);
        }
    }
    0.5 * h * s
}

/// Check law (not a preset): Brauer's law with the M-19 coefficients k1 = 2.150, k2 = 2.477,
/// k3 = 83.03 (Brauer, Magnetic Actuators and Sensors, 2nd ed., 2014, App. B; check-values.md).
fn m19_curve() -> BhCurve {
    BhCurve::brauer(2.150, 2.477, 83.03).unwrap()
}

fn m19() -> Material {
    Material::Soft(SoftMagnetic { curve: m19_curve() })
}

fn magnet(angle: f64) -> (Material, [f64; 2]) {
    let m = Material::Magnet(LinearMagnet {
        knee_field: None,
        remanence: 1.2,
        recoil_permeability: 1.05,
        perpendicular_permeability: 1.2,
        direction: MagnetDirection::Fixed { angle },
    });
    (m, [angle.cos(), angle.sin()])
}

fn all_laws() -> Vec<(&'static str, Material, [f64; 2])> {
    let (mag, e) = magnet(0.7);
    vec![
        (
            "linear",
            Material::Linear {
                relative_permeability: 800.0,
            },
            [1.0, 0.0],
        ),
        (
            "anisotropic",
            Material::Anisotropic {
                parallel: 2000.0,
                perpendicular: 30.0,
                angle: 0.4,
            },
            [1.0, 0.0],
        ),
        ("brauer m-19", m19(), [1.0, 0.0]),
        (
            "steel-c10",
            library::preset("steel-c10").unwrap(),
            [1.0, 0.0],
        ),
        (
            "steel-c45",
            library::preset("steel-c45").unwrap(),
            [1.0, 0.0],
        ),
        (
            "steel-11smn30",
            library::preset("steel-11smn30").unwrap(),
            [1.0, 0.0],
        ),
        (
            "cast-iron-gjl-250",
            library::preset("cast-iron-gjl-250").unwrap(),
            [1.0, 0.0],
        ),
        ("m400-50a", library::preset("m400-50a").unwrap(), [1.0, 0.0]),
        ("magnet", mag, e),
    ]
}

/// Central finite differences of H(B) against the returned tangent dH/dB.
fn check_tangent(name: &str, m: &Material, b: [f64; 2], e: [f64; 2]) {
    let r = m.response(b, e);
    let bm = b[0].hypot(b[1]);
    let step = 1e-6 * bm.max(1e-3);
    let scale = r.dh_db[0][0].abs().max(r.dh_db[1][1].abs());
    for j in 0..2 {
        let mut bp = b;
        let mut bn = b;
        bp[j] += step;
        bn[j] -= step;
        let (hp, hn) = (m.response(bp, e).h, m.response(bn, e).h);
        for i in 0..2 {
            let fd = (hp[i] - hn[i]) / (2.0 * step);
            assert!(
                (fd - r.dh_db[i][j]).abs() <= 1e-5 * scale,
                "{name} at B = {b:?} T: dH{i}/dB{j} = {} but finite difference {fd}",
                r.dh_db[i][j]
            );
        }
    }
    assert!(
        (r.dh_db[0][1] - r.dh_db[1][0]).abs() <= 1e-12 * scale,
        "{name}: tangent not symmetric"
    );
}

#[test]
fn tangent_matches_finite_differences_for_every_law() {
    let directions = [0.0f64, 0.5, 1.3, 2.9, -2.0];
    // Magnitudes from near zero to deep saturation (M-19's table ends near 1.98 T).
    let magnitudes = [1e-7, 1e-3, 0.05, 0.5, 1.0, 1.5, 1.8, 1.97, 2.3, 3.5];
    for (name, m, e) in all_laws() {
        for &bm in &magnitudes {
            for &a in &directions {
                check_tangent(name, &m, [bm * a.cos(), bm * a.sin()], e);
            }
        }
    }
}

#[test]
fn reluctivity_and_slope_agree_with_separate_evaluations() {
    let curve = m19_curve();
    for &b in &[0.0, 1e-9, 0.01, 0.7, 1.5, 1.99, 2.5] {
        let (nu, slope) = curve.reluctivity_and_slope(b);
        let (nu2, _) = curve.reluctivity(b);
        let (_, slope2) = curve.h_of_b(b);
        assert!((nu - nu2).abs() <= 1e-12 * nu2 && (slope - slope2).abs() <= 1e-12 * slope2);
    }
}

#[test]
fn soft_tangent_is_smooth_at_zero_flux_density() {
    let m = m19();
    let at_zero = m.response([0.0, 0.0], [1.0, 0.0]);
    let near = m.response([1e-12, 1e-12], [1.0, 0.0]);
    assert_eq!(at_zero.h, [0.0, 0.0]);
    for i in 0..2 {
        for j in 0..2 {
            assert!((at_zero.dh_db[i][j] - near.dh_db[i][j]).abs() < 1e-6 * at_zero.dh_db[0][0]);
        }
    }
    // Brauer's law has initial reluctivity k1 + k3 (Brauer, IEEE Trans. Magn. 11(1), 1975;
    // M-19 coefficients from Brauer 2014, App. B).
    assert!((at_zero.dh_db[0][0] - (2.150 + 83.03)).abs() < 1e-6 * 85.18);
}

#[test]
fn energy_equals_quadrature_of_h_db_and_coenergy_of_b_dh() {
    for (name, m, e) in all_laws() {
        for &(bm, a) in &[(0.3, 0.2), (1.2, 1.9), (1.85, -0.6), (2.6, 3.0)] {
            let b = [bm * f64::cos(a), bm * f64::sin(a)];
            // Path from the H = 0 state: B = 0 for soft laws, B = Br e for magnets.
            let b0 = match &m {
                Material::Magnet(mg) => [mg.remanence * e[0], mg.remanence * e[1]],
                _ => [0.0, 0.0],
            };
            let d = [b[0] - b0[0], b[1] - b0[1]];
            let w_quad = integrate(
                |s| {
                    let h = m.response([b0[0] + s * d[0], b0[1] + s * d[1]], e).h;
                    h[0] * d[0] + h[1] * d[1]
                },
                0.0,
                1.0,
                2000,
            );
            let w = m.energy_density(b, e);
            assert!(
                (w - w_quad).abs() <= 1e-8 * w_quad.abs().max(1.0),
                "{name}: energy {w} J/m^3 vs quadrature {w_quad} J/m^3"
            );
            // Co-energy: w' = B.H - w (Legendre transform); check it against its own
            // definition for the isotropic curve, the integral of B dH from 0 to H.
            let r = m.response(b, e);
            let wc = m.coenergy_density(b, e);
            assert!((w + wc - (b[0] * r.h[0] + b[1] * r.h[1])).abs() <= 1e-9 * w.abs().max(1.0));
        }
    }
    let curve = m19_curve();
    for &bm in &[0.4, 1.6, 1.99, 2.4] {
        let h = curve.h_of_b(bm).0;
        let wc_quad = integrate(|x| curve.b_of_h(x), 0.0, h, 4000);
        let wc = curve.coenergy_density(bm);
        assert!(
            (wc - wc_quad).abs() <= 1e-7 * wc_quad,
            "co-energy {wc} vs quadrature of B dH {wc_quad} J/m^3 at {bm} T"
        );
    }
}

#[test]
fn brauer_m19_reproduces_published_fit_values() {
    // check-values.md, Materials: H = (k1 exp(k2 B^2) + k3) B with the M-19 coefficients of
    // Brauer, Magnetic Actuators and Sensors, 2nd ed., 2014, App. B (computed values).
    let curve = m19_curve();
    for &(b, h) in &[(0.5, 43.5), (1.0, 108.6), (1.5, 973.7), (1.8, 11984.0)] {
        let got = curve.h_of_b(b).0;
        assert!(
            (got - h).abs() <= 0.5e-3 * h + 0.05,
            "M-19 at {b} T: {got} A/m, expected {h} A/m"
        );
    }
}

#[test]
fn sampled_brauer_laws_interpolation_error_is_below_1e_5() {
    // The sampled curve against the law itself on a fine grid: the coefficients of Brauer,
    // Magnetic Actuators and Sensors, 2nd ed., 2014, App. B (check-values.md) for annealed
    // 1010 and 1020 steel, M-15, M-19 and M-36.
    for (name, k1, k2, k3) in [
        ("1010", 4.847, 1.908, 227.3),
        ("1020", 4.770, 2.055, 302.2),
        ("M-15", 0.8795, 2.666, 94.27),
        ("M-19", 2.150, 2.477, 83.03),
        ("M-36", 1.683, 2.432, 103.5),
    ] {
        let curve = BhCurve::brauer(k1, k2, k3).unwrap();
        let end = curve.last_b();
        for i in 1..=5000 {
            let b = end * i as f64 / 5000.0 * 0.999_999;
            let law = (k1 * (k2 * b * b).exp() + k3) * b;
            let got = curve.h_of_b(b).0;
            assert!(
                (got - law).abs() <= 1e-5 * law,
                "{name} at {b} T: {got} vs {law} A/m"
            );
        }
        // The table ends where the law's slope dB/dH reaches mu_0 (vacuum).
        let slope = k1 * (k2 * end * end).exp() * (1.0 + 2.0 * k2 * end * end) + k3;
        assert!((slope * MU_0 - 1.0).abs() < 1e-6, "{name}");
    }
}

#[test]
fn saturating_law_reproduces_ring_check_values() {
    // check-values.md item 4: B = mu_0 H + Js H/(H + H0), Js = 1.8 T, H0 = 200 A/m, ring
    // a = 10 mm .. b = 20 mm around I = 1000 A, H = I/(2 pi r) by Ampere's law (computed values).
    let curve = BhCurve::saturating(1.8, 200.0).unwrap();
    let c = 1000.0 / (2.0 * std::f64::consts::PI);
    let (a, b) = (0.010, 0.020);
    assert!((curve.b_of_h(c / a) - 1.79766).abs() < 1e-5);
    assert!((curve.b_of_h(c / b) - 1.76587).abs() < 1e-5);
    let flux = integrate(|r| curve.b_of_h(c / r), a, b, 200);
    assert!((flux - 1.780584e-2).abs() < 1e-7, "flux {flux} Wb/m");
    let two_pi = 2.0 * std::f64::consts::PI;
    let energy = integrate(
        |r| curve.energy_density(curve.b_of_h(c / r)) * two_pi * r,
        a,
        b,
        200,
    );
    let coenergy = integrate(
        |r| curve.coenergy_density(curve.b_of_h(c / r)) * two_pi * r,
        a,
        b,
        200,
    );
    assert!((energy - 1.08415).abs() < 2e-5, "energy {energy} J/m");
    assert!(
        (coenergy - 16.7217).abs() < 2e-4,
        "co-energy {coenergy} J/m"
    );
    assert!((energy + coenergy - 1000.0 * flux).abs() < 1e-6 * 1000.0 * flux);
    // The sampled curve against the closed form at many fields (relative 1e-5).
    for i in 0..400 {
        let h = 10f64.powf(-1.0 + 9.0 * i as f64 / 399.0);
        let law = MU_0 * h + 1.8 * h / (h + 200.0);
        let got = curve.b_of_h(h);
        assert!(
            (got - law).abs() <= 1e-5 * law,
            "H = {h} A/m: {got} vs {law} T"
        );
    }
}

#[test]
fn slope_beyond_last_point_is_vacuum() {
    let curve = BhCurve::from_points(&[(100.0, 0.5), (300.0, 1.2), (2000.0, 1.6)]).unwrap();
    for &d in &[0.01, 0.5, 3.0] {
        let (h, slope) = curve.h_of_b(1.6 + d);
        assert!((h - (2000.0 + d / MU_0)).abs() < 1e-9 * h);
        assert_eq!(slope, 1.0 / MU_0);
        let b = curve.b_of_h(2000.0 + d / MU_0);
        assert!((b - (1.6 + d)).abs() < 1e-12);
    }
    let knots = curve.points();
    assert_eq!(knots.len(), 4);
    assert_eq!((knots[0].h, knots[0].b), (0.0, 0.0));
    assert_eq!((knots[3].h, knots[3].b), (2000.0, 1.6));
}

#[test]
fn stacking_factor_mixes_steel_and_vacuum() {
    let steel = m19_curve();
    let stack = steel.with_stacking_factor(0.95).unwrap();
    for &h in &[10.0, 80.0, 500.0, 3000.0, 30000.0, 1e6] {
        let expect = 0.95 * steel.b_of_h(h) + 0.05 * MU_0 * h;
        let got = stack.b_of_h(h);
        assert!(
            (got - expect).abs() < 1e-5 * expect,
            "H = {h}: {got} vs {expect} T"
        );
    }
    assert!(steel.with_stacking_factor(0.0).is_err());
    assert!(steel.with_stacking_factor(1.2).is_err());
    assert!(steel.with_stacking_factor(f64::NAN).is_err());
}

#[test]
fn bad_curves_give_errors_naming_the_point() {
    let e = BhCurve::from_points(&[(100.0, 0.5), (90.0, 0.9), (300.0, 1.2)]).unwrap_err();
    assert!(
        matches!(e, MaterialError::NotMonotone { index: 1, .. }),
        "{e}"
    );
    assert!(e.to_string().contains("point 1"));
    let e = BhCurve::from_points(&[(100.0, 0.5), (200.0, 0.4), (300.0, 1.2)]).unwrap_err();
    assert!(matches!(e, MaterialError::NotMonotone { index: 1, .. }));
    let e = BhCurve::from_points(&[(100.0, 0.5), (200.0, f64::NAN)]).unwrap_err();
    assert!(matches!(e, MaterialError::NotFinite { index: 1, .. }));
    let e = BhCurve::from_points(&[(100.0, -0.5), (200.0, 1.0)]).unwrap_err();
    assert!(matches!(e, MaterialError::Negative { index: 0, .. }));
    let e = BhCurve::from_points(&[(0.0, 0.0), (100.0, 0.5)]).unwrap_err();
    assert!(matches!(e, MaterialError::TooFewPoints { count: 1, .. }));
    let e = BhCurve::from_points(&[(0.0, 0.2), (100.0, 0.5), (200.0, 0.9)]).unwrap_err();
    assert!(matches!(e, MaterialError::OffOrigin { index: 0, .. }));
    // 1e5 A/m more for 0.1 T: dB/dH = 1e-6 H/m < mu_0 = 1.257e-6 H/m.
    let e = BhCurve::from_points(&[(100.0, 0.5), (1000.0, 1.5), (101000.0, 1.6)]).unwrap_err();
    match e {
        MaterialError::FlatterThanVacuum {
            index,
            relative_slope,
            ..
        } => {
            assert_eq!(index, 2);
            assert!((relative_slope - 1e-6 / MU_0).abs() < 1e-9);
        }
        other => panic!("unexpected {other}"),
    }
    assert!(BhCurve::brauer(-1.0, 2.0, 80.0).is_err());
    assert!(BhCurve::saturating(1.8, 0.0).is_err());
}

#[test]
fn material_validation_rejects_bad_values() {
    let (mut m, _) = magnet(0.0);
    assert!(m.validate().is_ok());
    if let Material::Magnet(mg) = &mut m {
        mg.recoil_permeability = 0.9;
    }
    let e = m.validate().unwrap_err();
    assert!(e.to_string().contains("recoil permeability = 0.9"), "{e}");
    let bad = [
        Material::Linear {
            relative_permeability: 0.0,
        },
        Material::Linear {
            relative_permeability: f64::NAN,
        },
        Material::Anisotropic {
            parallel: 100.0,
            perpendicular: -1.0,
            angle: 0.0,
        },
        Material::Anisotropic {
            parallel: 100.0,
            perpendicular: 1.0,
            angle: f64::INFINITY,
        },
        Material::Magnet(LinearMagnet {
            knee_field: None,
            remanence: f64::NAN,
            recoil_permeability: 1.05,
            perpendicular_permeability: 1.05,
            direction: MagnetDirection::Fixed { angle: 0.0 },
        }),
        Material::Magnet(LinearMagnet {
            knee_field: None,
            remanence: 1.0,
            recoil_permeability: 1.05,
            perpendicular_permeability: 1.05,
            direction: MagnetDirection::Radial {
                centre: [f64::NAN, 0.0],
                outward: true,
            },
        }),
    ];
    for m in bad {
        assert!(m.validate().is_err(), "{m:?} accepted");
    }
}

#[test]
fn magnet_law_has_remanence_at_zero_field_and_model_coercivity_at_zero_flux() {
    let (m, e) = magnet(1.1);
    let r = m.response([1.2 * e[0], 1.2 * e[1]], e);
    assert!(r.h[0].abs() < 1e-9 && r.h[1].abs() < 1e-9);
    let r = m.response([0.0, 0.0], e);
    let hc = 1.2 / (MU_0 * 1.05);
    assert!((r.h[0] + hc * e[0]).abs() < 1e-6 && (r.h[1] + hc * e[1]).abs() < 1e-6);
    // Across the easy axis the law is linear with the perpendicular permeability.
    let p = [-e[1], e[0]];
    let r = m.response([1.2 * e[0] + 0.1 * p[0], 1.2 * e[1] + 0.1 * p[1]], e);
    let hp = r.h[0] * p[0] + r.h[1] * p[1];
    assert!((hp - 0.1 / (MU_0 * 1.2)).abs() < 1e-6);
    assert!(m.is_linear() && !m19().is_linear());
}

#[test]
fn anisotropic_law_follows_its_principal_direction() {
    let angle = 0.9f64;
    let m = Material::Anisotropic {
        parallel: 2000.0,
        perpendicular: 10.0,
        angle,
    };
    let (c, s) = (angle.cos(), angle.sin());
    let h = m.response([c, s], [1.0, 0.0]).h;
    assert!((h[0] - c / (MU_0 * 2000.0)).abs() < 1e-9 && (h[1] - s / (MU_0 * 2000.0)).abs() < 1e-9);
    let h = m.response([-s, c], [1.0, 0.0]).h;
    assert!((h[0] + s / (MU_0 * 10.0)).abs() < 1e-6 && (h[1] - c / (MU_0 * 10.0)).abs() < 1e-6);
}

#[test]
fn easy_axis_patterns() {
    let radial = MagnetDirection::Radial {
        centre: [1.0, 1.0],
        outward: true,
    };
    let e = radial.easy_axis_at([1.0, 3.0], [5.0, 1.0]);
    assert!((e[0]).abs() < 1e-15 && (e[1] - 1.0).abs() < 1e-15);
    // On the centre: falls back to the centroid direction.
    let e = radial.easy_axis_at([1.0, 1.0], [5.0, 1.0]);
    assert_eq!(e, [1.0, 0.0]);
    let parallel = MagnetDirection::Parallel {
        centre: [0.0, 0.0],
        outward: false,
    };
    let e = parallel.easy_axis_at([7.0, 7.0], [3.0, 4.0]);
    assert!((e[0] + 0.6).abs() < 1e-15 && (e[1] + 0.8).abs() < 1e-15);
    let fixed = MagnetDirection::Fixed { angle: 0.5 };
    let e = fixed.easy_axis_at([0.0, 0.0], [0.0, 0.0]);
    assert!((e[0].hypot(e[1]) - 1.0).abs() < 1e-15);
}

#[test]
fn curve_round_trips_through_json_and_rejects_tampered_tables() {
    let curve = BhCurve::brauer(1.683, 2.432, 103.5).unwrap();
    let text = serde_json::to_string(&curve).unwrap();
    let back: BhCurve = serde_json::from_str(&text).unwrap();
    // serde_json's default float parser may differ in the last bit; compare to 1e-14.
    let (p, q) = (curve.points(), back.points());
    assert_eq!(p.len(), q.len());
    for (a, b) in p.iter().zip(&q) {
        for (x, y) in [(a.h, b.h), (a.b, b.b), (a.dh_db, b.dh_db)] {
            assert!((x - y).abs() <= 1e-14 * x.abs());
        }
    }
    for &bm in &[0.3, 1.7, 2.5] {
        assert!(
            (curve.energy_density(bm) - back.energy_density(bm)).abs()
                < 1e-12 * curve.energy_density(bm)
        );
    }
    let bad = r#"{"b":[0.0,1.0,0.5],"h":[0.0,100.0,200.0],"dh_db":[100.0,100.0,100.0]}"#;
    assert!(serde_json::from_str::<BhCurve>(bad).is_err());
    let m = library::preset("ndfeb-n42").unwrap();
    let back: Material = serde_json::from_str(&serde_json::to_string(&m).unwrap()).unwrap();
    assert!(back.validate().is_ok() && back.is_linear());
}

/// A table whose secants rise from the first piece (a coarse table that starts near the knee,
/// like the one in docs/case-format.md) used to get Steffen's end slope clipped to zero, so
/// dH/dB vanished at B = 0 and the Newton tangent with it. The slope at the origin is now at
/// least half the first secant, and the whole curve strictly increases.
#[test]
fn coarse_table_keeps_a_positive_slope_at_the_origin() {
    let curve =
        BhCurve::from_points(&[(0.0, 0.0), (100.0, 0.8), (300.0, 1.3), (1000.0, 1.55)]).unwrap();
    let first_secant = 100.0 / 0.8;
    let (h0, slope0) = curve.h_of_b(0.0);
    assert_eq!(h0, 0.0);
    assert!(
        slope0 >= 0.5 * first_secant && slope0 <= 2.0 * first_secant,
        "dH/dB(0) = {slope0} A/(m T)"
    );
    let (nu0, _) = curve.reluctivity(0.0);
    assert!(nu0 > 0.0, "reluctivity at B = 0: {nu0} m/H");
    for j in 0..=400 {
        let b = 1.6 * j as f64 / 400.0;
        assert!(curve.h_of_b(b).1 > 0.0, "flat at {b} T");
    }
    // The last knot keeps a positive slope too.
    let last = curve.points().last().copied().unwrap();
    assert!(last.dh_db > 0.0);
}

/// Deserialised tables are re-checked: a zero slope (flat H at a knot) or a piece whose end
/// slopes are too steep for its secant (the cubic would dip and rise again) is a typed error.
#[test]
fn deserialised_tables_must_be_strictly_monotone() {
    let good = r#"{"b":[0.0,1.0,2.0],"h":[0.0,100.0,1000.0],"dh_db":[100.0,300.0,900.0]}"#;
    assert!(serde_json::from_str::<BhCurve>(good).is_ok());
    let zero_slope = r#"{"b":[0.0,1.0,2.0],"h":[0.0,100.0,1000.0],"dh_db":[0.0,300.0,900.0]}"#;
    let e = serde_json::from_str::<BhCurve>(zero_slope).unwrap_err();
    assert!(e.to_string().contains("knot 0"), "{e}");
    // Piece 0 has secant 100; slopes 400 and 400 (alpha = beta = 4) make the cubic decrease
    // inside the piece.
    let overshoot = r#"{"b":[0.0,1.0,2.0],"h":[0.0,100.0,1000.0],"dh_db":[400.0,400.0,900.0]}"#;
    let e = serde_json::from_str::<BhCurve>(overshoot).unwrap_err();
    assert!(e.to_string().contains("not strictly increasing"), "{e}");
    let table: BhTable = serde_json::from_str(overshoot).unwrap();
    assert!(matches!(
        BhCurve::try_from(table),
        Err(MaterialError::InvalidTable { .. })
    ));
}

#[test]
fn every_preset_validates_and_unknown_names_list_the_known_ones() {
    for name in library::names() {
        let m = library::preset(name).unwrap();
        m.validate().unwrap();
    }
    assert!(library::preset("NdFeB_N42").is_ok());
    let e = library::preset("unobtainium").unwrap_err();
    let text = e.to_string();
    assert!(
        text.contains("unobtainium") && text.contains("m400-50a") && text.contains("ndfeb-n52")
    );
}

#[test]
fn magnet_presets_match_their_published_ranges() {
    // ASTM A1101-16: sintered NdFeB grades span Br 1.08-1.5 T.
    for g in [
        library::ndfeb_n35(),
        library::ndfeb_n42(),
        library::ndfeb_n42sh(),
        library::ndfeb_n52(),
    ] {
        assert!((1.08..=1.5).contains(&g.remanence), "{}", g.name);
    }
    // GB/T 13560 vendor tables (check-values.md): N35 Br 1.17-1.22 T, N42 1.28-1.32 T,
    // N52 1.43-1.48 T.
    assert!((1.17..=1.22).contains(&library::ndfeb_n35().remanence));
    assert!((1.28..=1.32).contains(&library::ndfeb_n42().remanence));
    assert!((1.43..=1.48).contains(&library::ndfeb_n52().remanence));
    // ASTM A1070-16: cast AlNiCo grades span Br 0.52-1.35 T, HcB 38-175 kA/m.
    for g in [library::alnico_5(), library::alnico_8()] {
        assert!((0.52..=1.35).contains(&g.remanence), "{}", g.name);
        assert!((38e3..=175e3).contains(&g.coercivity), "{}", g.name);
    }
    // Consistency of the linear model, stated as such: for N35 and N42 the straight recoil line
    // HcB = Br/(mu_0 mu_rec) (906 and 985 kA/m) lies at or above the published minimum HcB
    // (868 and 915 kA/m, GB/T 13560), and within 10 % of it.
    for g in [library::ndfeb_n35(), library::ndfeb_n42()] {
        let model = g.model_coercivity();
        assert!(
            model >= g.coercivity && model <= 1.1 * g.coercivity,
            "{}: {model} A/m",
            g.name
        );
    }
    // Grades with a knee (N52, ferrite, AlNiCo): the line overestimates HcB; the published
    // HcB is always below the line's value and HcJ is at least HcB.
    for name in library::names() {
        if let library::Grade::Magnet(g) = library::grade(name).unwrap() {
            assert!(g.model_coercivity() >= g.coercivity, "{}", g.name);
            assert!(g.intrinsic_coercivity >= g.coercivity, "{}", g.name);
        }
    }
    // AlNiCo 5: recoil line through Br 1.275 T with mu_rec 3.6 reaches B = 0 at 282 kA/m,
    // over five times the published HcB 50 kA/m (vendor tables): the linear model is a recoil
    // model only.
    let a5 = library::alnico_5();
    assert!(a5.model_coercivity() > 5.0 * a5.coercivity);
    // A user override reaches the material.
    let mut g = library::ndfeb_n42();
    g.remanence = 1.31;
    match g.to_material().unwrap() {
        Material::Magnet(m) => assert_eq!(m.remanence, 1.31),
        _ => unreachable!(),
    }
    g.recoil_permeability = 0.5;
    let e = g.to_material().unwrap_err();
    assert!(e.to_string().contains("ndfeb-n42"), "{e}");
}

/// Random strictly increasing (H, B) data that is never flatter than vacuum.
fn monotone_points() -> impl Strategy<Value = Vec<(f64, f64)>> {
    prop::collection::vec((1e-2f64..1e4, 0.0f64..8.0), 2..25).prop_map(|steps| {
        let (mut h, mut b) = (0.0, 0.0);
        steps
            .into_iter()
            .map(|(dh, log_excess)| {
                h += dh;
                // dB = mu_0 dH (1 + 10^log_excess - 1): relative secant permeability 1 .. 1e8.
                b += MU_0 * dh * 10f64.powf(log_excess);
                (h, b)
            })
            .collect()
    })
}

proptest! {
    #[test]
    fn interpolant_of_monotone_data_is_monotone(points in monotone_points()) {
        let curve = BhCurve::from_points(&points).unwrap();
        // Passes through the data.
        for &(h, b) in &points {
            let got = curve.h_of_b(b).0;
            prop_assert!((got - h).abs() <= 1e-9 * h);
            prop_assert!((curve.b_of_h(h) - b).abs() <= 1e-9 * b);
        }
        // Strictly increasing on a fine grid inside every piece, slopes positive and at most
        // 1/mu_0 at the knots.
        let knots = curve.points();
        for k in &knots {
            prop_assert!(k.dh_db > 0.0 && k.dh_db <= 1.0 / MU_0 * (1.0 + 1e-12));
        }
        let mut previous = -1.0;
        for w in knots.windows(2) {
            for j in 0..=50 {
                let b = w[0].b + (w[1].b - w[0].b) * j as f64 / 50.0;
                let (h, slope) = curve.h_of_b(b);
                prop_assert!(h >= previous - 1e-12 * h.abs(), "decreasing at {} T", b);
                prop_assert!(slope > 0.0, "slope {} at {} T", slope, b);
                previous = h;
            }
        }
        // b_of_h inverts h_of_b.
        let top = knots[knots.len() - 1].b * 1.2;
        for j in 1..40 {
            let b = top * j as f64 / 40.0;
            let h = curve.h_of_b(b).0;
            prop_assert!((curve.b_of_h(h) - b).abs() <= 1e-9 * b);
        }
    }

    #[test]
    fn swapping_two_points_is_rejected(points in monotone_points(), pick in 0usize..1000) {
        let mut points = points;
        let i = pick % (points.len() - 1);
        points.swap(i, i + 1);
        let e = BhCurve::from_points(&points).unwrap_err();
        let expected = i + 1;
        prop_assert!(
            matches!(e, MaterialError::NotMonotone { index, .. } if index == expected),
            "{}", e
        );
    }
}
