//! The reported error bar of [`force_on`] against the true error on every closed-form force
//! and torque case of this crate's tests, with first- and second-order elements.
//!
//! Coverage (measured): the true error of the main result lies within the reported
//! uncertainty in 12 of 12 cases (five closed forms with P1 and P2; the round magnet gives a
//! torque and a zero force). The largest ratio of true error to uncertainty was 0.73 (P1,
//! coaxial coils); before the thickness-check term the method spread alone covered 9 of 12
//! (the three P1 cases with a non-zero force were 5.8 to 7.3 times outside it).

use std::f64::consts::PI;

use coercive_fem::{
    ElementOrder, Formulation, LinearMagnet, MagnetDirection, Material, Model, ScalarField, Sense,
    Solution, Winding, MU_0,
};
use coercive_mesh::{Geometry, MeshSettings, Point2};
use coercive_post::force::{force_on, Body, BodyForce, ForceSettings};

/// An air disc of radius `big_r` (curve `outer`) holding circles (name, centre, radius).
fn disc_with_circles(big_r: f64, circles: &[(&str, [f64; 2], f64)], size: f64) -> Geometry {
    let mut g = Geometry::new();
    for c in g.add_circle(Point2::new(0.0, 0.0), big_r) {
        g.name_curve(c, "outer");
    }
    g.add_region("air", Point2::new(0.0, 0.97 * big_r));
    for (name, c, r) in circles {
        g.add_circle(Point2::new(c[0], c[1]), *r);
        g.add_region(name, Point2::new(c[0], c[1]));
        g.set_region_size(name, size);
    }
    g.set_settings(MeshSettings {
        max_size: Some(big_r / 8.0),
        ..MeshSettings::default()
    });
    g
}

/// x-force per metre on a line current `ia` at (xa, 0) from line currents (current, x) on the
/// x axis: Ampere's force law F = mu_0 I_a I_b / (2 pi r), attractive for equal signs.
fn line_force_x(ia: f64, xa: f64, others: &[(f64, f64)]) -> f64 {
    others
        .iter()
        .map(|&(ib, xb)| MU_0 * ia * ib / (2.0 * PI * (xb - xa).abs()) * (xb - xa).signum())
        .sum()
}

/// Two parallel conductors, 1 A each, 10 mm apart (radius 2 mm) in a 0.2 m disc with A = 0:
/// the force per metre on c1 by Ampere's law with the rim's images -I at R^2 / x (BIPM SI
/// Brochure, 8th ed., sec. 2.1.1.4; images in a circle: Smythe, Static and Dynamic
/// Electricity, 3rd ed., sec. 4.15).
fn parallel_conductors(order: ElementOrder) -> (BodyForce, [f64; 2]) {
    let (d, a, big_r) = (0.01, 0.002, 0.2);
    let g = disc_with_circles(
        big_r,
        &[("c1", [-d / 2.0, 0.0], a), ("c2", [d / 2.0, 0.0], a)],
        0.0004,
    );
    let sol = Model::builder(g.mesh().unwrap(), Formulation::Planar { depth_m: 1.0 })
        .order(order)
        .material("air", Material::vacuum())
        .material("c1", Material::vacuum())
        .material("c2", Material::vacuum())
        .winding(Winding::new("w1", 1.0, 1.0).side("c1", Sense::Positive))
        .winding(Winding::new("w2", 1.0, 1.0).side("c2", Sense::Positive))
        .fixed_potential("outer", 0.0)
        .build()
        .unwrap()
        .solve()
        .unwrap();
    let (x1, x2) = (-d / 2.0, d / 2.0);
    let exact = line_force_x(
        1.0,
        x1,
        &[
            (1.0, x2),
            (-1.0, big_r * big_r / x1),
            (-1.0, big_r * big_r / x2),
        ],
    );
    let f = force_on(&sol, &Body::new(&["c1"]), &ForceSettings::default()).unwrap();
    (f, [exact, 0.0])
}

/// A round body (radius 5 mm for a conductor, 10 mm for a magnet) at the origin in a disc
/// whose rim carries A = -B0 x (a uniform field (0, B0) without the body).
fn body_in_uniform_field(
    order: ElementOrder,
    body: Material,
    current_a: f64,
    a: f64,
    b0: f64,
    size: f64,
) -> Solution {
    let big_r = 0.15;
    let mut g = Geometry::new();
    for c in g.add_circle(Point2::new(0.0, 0.0), big_r) {
        g.name_curve(c, "outer");
    }
    g.add_circle(Point2::new(0.0, 0.0), a);
    g.add_circle(Point2::new(0.0, 0.0), 1.5 * a);
    g.add_region("air", Point2::new(0.0, 0.5 * (1.5 * a + big_r)));
    g.add_region("inner_air", Point2::new(0.0, 1.25 * a));
    g.add_region("body", Point2::new(0.0, 0.0));
    g.set_region_size("body", size);
    g.set_region_size("inner_air", size);
    g.set_settings(MeshSettings {
        max_size: Some(big_r / 8.0),
        ..MeshSettings::default()
    });
    let mut b = Model::builder(g.mesh().unwrap(), Formulation::Planar { depth_m: 0.1 })
        .order(order)
        .material("air", Material::vacuum())
        .material("inner_air", Material::vacuum())
        .material("body", body)
        .fixed_potential_field("outer", ScalarField::new(move |p| -b0 * p.x));
    if current_a != 0.0 {
        b = b.winding(Winding::new("w", 1.0, current_a).side("body", Sense::Positive));
    }
    b.build().unwrap().solve().unwrap()
}

/// A 100 A conductor in 0.5 T: the Laplace force F = I L x B per metre, -I B0 along x
/// (Purcell & Morin, Electricity and Magnetism, 3rd ed., eq. 6.14).
fn conductor_in_uniform_field(order: ElementOrder) -> (BodyForce, [f64; 2]) {
    let (i, b0) = (100.0, 0.5);
    let sol = body_in_uniform_field(order, Material::vacuum(), i, 0.005, b0, 0.0008);
    let f = force_on(&sol, &Body::new(&["body"]), &ForceSettings::default()).unwrap();
    (f, [-i * b0, 0.0])
}

/// A round magnet (Br 1.2 T along x, recoil permeability 1) in 0.1 T along y: the torque per
/// metre m' x B0 with m' = Br (meshed area) / mu_0 and no net force (Jackson, Classical
/// Electrodynamics, 3rd ed., eq. 5.1, per unit length).
fn magnet_in_uniform_field(order: ElementOrder) -> (BodyForce, [f64; 2], f64) {
    let (br, b0, a) = (1.2, 0.1, 0.01);
    let magnet = Material::Magnet(LinearMagnet {
        knee_field: None,
        remanence: br,
        recoil_permeability: 1.0,
        perpendicular_permeability: 1.0,
        direction: MagnetDirection::Fixed { angle: 0.0 },
    });
    let sol = body_in_uniform_field(order, magnet, 0.0, a, b0, 0.0012);
    let mesh = sol.model().mesh();
    let area = mesh.region_area(mesh.region_by_name("body").unwrap());
    let f = force_on(&sol, &Body::new(&["body"]), &ForceSettings::default()).unwrap();
    (f, [0.0, 0.0], br * area / MU_0 * b0)
}

/// Complete elliptic integrals K(m), E(m) by the arithmetic-geometric mean (Abramowitz &
/// Stegun, Handbook of Mathematical Functions, 17.6).
fn elliptic_ke(m: f64) -> (f64, f64) {
    let (mut a, mut b) = (1.0_f64, (1.0 - m).sqrt());
    let (mut sum, mut pow) = (0.5 * m, 0.5);
    for _ in 0..40 {
        let c = 0.5 * (a - b);
        let an = 0.5 * (a + b);
        b = (a * b).sqrt();
        a = an;
        pow *= 2.0;
        sum += pow * c * c;
        if c.abs() < 1e-17 {
            break;
        }
    }
    let k = PI / (2.0 * a);
    (k, k * (1.0 - sum))
}

/// Axial force between coaxial filaments of radii a, b at axial distance z per unit current
/// product, dM/dz of Maxwell's mutual inductance (Smythe, sec. 7.13; check-values item 7).
fn filament_force(a: f64, b: f64, z: f64) -> f64 {
    let m = 4.0 * a * b / ((a + b).powi(2) + z * z);
    let (kk, ee) = elliptic_ke(m);
    -MU_0 * z / ((a + b).powi(2) + z * z).sqrt()
        * (-kk + (a * a + b * b + z * z) / ((a - b).powi(2) + z * z) * ee)
}

/// Two coaxial rings (R 50..60 mm, 10 mm high, faces 40 mm apart, J = 3 MA/m^2) in a 0.5 m
/// box: the force on the upper ring is the filament force integrated over both sections by
/// 8-point Gauss-Legendre in each direction (Coulomb & Meunier, IEEE Trans. Magn. 20(5), 1984).
fn coaxial_coils(order: ElementOrder) -> (BodyForce, [f64; 2]) {
    let (j, h, gap) = (3e6, 0.01, 0.04);
    let s1 = [-gap / 2.0 - h, -gap / 2.0];
    let s2 = [gap / 2.0, gap / 2.0 + h];
    let (x, w) = (
        [
            0.1834346424956498,
            0.525_532_409_916_329,
            0.7966664774136267,
            0.9602898564975363,
        ],
        [
            0.362_683_783_378_362,
            0.3137066458778873,
            0.2223810344533745,
            0.1012285362903763,
        ],
    );
    let gl: Vec<(f64, f64)> = (0..8)
        .map(|k| {
            if k < 4 {
                (-x[3 - k], w[3 - k])
            } else {
                (x[k - 4], w[k - 4])
            }
        })
        .collect();
    let map = |lo: f64, hi: f64, t: f64| 0.5 * (lo + hi) + 0.5 * (hi - lo) * t;
    let mut exact = 0.0;
    for &(xa, wa) in &gl {
        for &(za, wza) in &gl {
            for &(xb, wb) in &gl {
                for &(zb, wzb) in &gl {
                    exact += wa
                        * wza
                        * wb
                        * wzb
                        * filament_force(
                            map(0.05, 0.06, xa),
                            map(0.05, 0.06, xb),
                            map(s2[0], s2[1], zb) - map(s1[0], s1[1], za),
                        );
                }
            }
        }
    }
    exact *= (j * 0.005 * 0.5 * h).powi(2);
    let box_r = 0.5;
    let mut g = Geometry::new();
    let c = g.add_polygon(&[
        Point2::new(0.0, -box_r),
        Point2::new(box_r, -box_r),
        Point2::new(box_r, box_r),
        Point2::new(0.0, box_r),
    ]);
    for &k in &c[..3] {
        g.name_curve(k, "outer");
    }
    g.add_rectangle(Point2::new(0.05, s1[0]), Point2::new(0.06, s1[1]));
    g.add_rectangle(Point2::new(0.05, s2[0]), Point2::new(0.06, s2[1]));
    g.add_region("air", Point2::new(0.3, 0.3));
    g.add_region("coil1", Point2::new(0.055, s1[0] + h / 2.0));
    g.add_region("coil2", Point2::new(0.055, s2[0] + h / 2.0));
    g.set_region_size("coil1", 0.0012);
    g.set_region_size("coil2", 0.0012);
    g.set_settings(MeshSettings {
        max_size: Some(0.05),
        ..MeshSettings::default()
    });
    let sol = Model::builder(g.mesh().unwrap(), Formulation::Axisymmetric)
        .order(order)
        .material("air", Material::vacuum())
        .material("coil1", Material::vacuum())
        .material("coil2", Material::vacuum())
        .current_density("coil1", j)
        .current_density("coil2", j)
        .fixed_potential("outer", 0.0)
        .build()
        .unwrap()
        .solve()
        .unwrap();
    let f = force_on(&sol, &Body::new(&["coil2"]), &ForceSettings::default()).unwrap();
    (f, [0.0, exact])
}

/// Two bar magnets 10 x 20 mm side by side, 2 mm apart, polarisation 1.2 T along y, in a
/// 1 m box: magpylib 6.3.0's planar limit 2798.482535 N/m of repulsion (see
/// force_magpylib.rs for the reference run and its Richardson extrapolation in length).
fn bar_magnets(order: ElementOrder) -> (BodyForce, [f64; 2]) {
    let (w, h, s, br) = (0.010, 0.020, 0.002, 1.2);
    let mut g = Geometry::new();
    for c in g.add_rectangle(Point2::new(-0.5, -0.5), Point2::new(0.5, 0.5)) {
        g.name_curve(c, "outer");
    }
    g.add_rectangle(
        Point2::new(-s / 2.0 - w, -h / 2.0),
        Point2::new(-s / 2.0, h / 2.0),
    );
    g.add_rectangle(
        Point2::new(s / 2.0, -h / 2.0),
        Point2::new(s / 2.0 + w, h / 2.0),
    );
    g.add_region("air", Point2::new(0.4, 0.4));
    g.add_region("left", Point2::new(-s / 2.0 - w / 2.0, 0.0));
    g.add_region("right", Point2::new(s / 2.0 + w / 2.0, 0.0));
    g.set_region_size("left", 0.001);
    g.set_region_size("right", 0.001);
    g.set_settings(MeshSettings {
        max_size: Some(0.05),
        ..MeshSettings::default()
    });
    let magnet = Material::Magnet(LinearMagnet {
        knee_field: None,
        remanence: br,
        recoil_permeability: 1.0,
        perpendicular_permeability: 1.0,
        direction: MagnetDirection::Fixed { angle: PI / 2.0 },
    });
    let sol = Model::builder(g.mesh().unwrap(), Formulation::Planar { depth_m: 1.0 })
        .order(order)
        .material("air", Material::vacuum())
        .material("left", magnet.clone())
        .material("right", magnet)
        .fixed_potential("outer", 0.0)
        .build()
        .unwrap()
        .solve()
        .unwrap();
    let f = force_on(&sol, &Body::new(&["right"]), &ForceSettings::default()).unwrap();
    (f, [2798.482535, 0.0])
}

fn bar_of(f: &BodyForce) -> f64 {
    f.force_uncertainty
}

#[test]
fn error_bar_covers_the_true_error_on_every_closed_form() {
    let mut rows = Vec::new();
    for order in [ElementOrder::P1, ElementOrder::P2] {
        let mut cases = vec![
            ("parallel conductors", parallel_conductors(order)),
            (
                "conductor in a uniform field",
                conductor_in_uniform_field(order),
            ),
            ("coaxial coils", coaxial_coils(order)),
            ("bar magnets", bar_magnets(order)),
        ];
        let (f, exact, torque) = magnet_in_uniform_field(order);
        let t_err = (f.torque() - torque).abs();
        let t_bar = f.torque_uncertainty;
        eprintln!(
            "{order:?} magnet torque: T {:.6e}, exact {torque:.6e}, error {:.2e}, bar {:.2e}, ratio {:.2}",
            f.torque(), t_err / torque, t_bar / torque, t_err / t_bar
        );
        rows.push((format!("{order:?} magnet torque"), t_err, t_bar));
        cases.push(("magnet force", (f, exact)));
        for (name, (f, exact)) in cases {
            let main = f.force();
            let err = (main[0] - exact[0]).hypot(main[1] - exact[1]);
            let bar = bar_of(&f);
            let s = exact[0].hypot(exact[1]).max(main[0].hypot(main[1]));
            eprintln!(
                "{order:?} {name}: F {main:?}, exact {exact:?}, error {:.2e}, bar {:.2e}, ratio {:.2}; methods {:?}",
                err / s, bar / s, err / bar, f.methods.iter().map(|m| m.force).collect::<Vec<_>>()
            );
            rows.push((format!("{order:?} {name}"), err, bar));
        }
    }
    let covered = rows.iter().filter(|r| r.1 <= r.2).count();
    eprintln!("coverage {covered} of {}", rows.len());
    for (name, err, bar) in &rows {
        assert!(
            err <= bar,
            "{name}: true error {err:e} outside the error bar {bar:e}"
        );
        // Not a vacuous bar: the uncertainty is a finite, positive number.
        assert!(bar.is_finite() && *bar > 0.0, "{name}: {bar}");
    }
    assert_eq!((covered, rows.len()), (12, 12));
}
