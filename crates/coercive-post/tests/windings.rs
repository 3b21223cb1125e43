//! Flux linkage, inductances and energy against closed forms: coaxial cable, toroid of
//! rectangular section, two planar windings (reciprocity, W = i^T L i / 2), coaxial coils
//! (Maxwell's mutual inductance formula) and a saturating steel ring (nonlinear flux
//! linkage, incremental inductance, W + W' = i psi). Currents other than 1 A catch unit slips.

mod p1_support;

use std::f64::consts::PI;

use coercive_fem::{
    BhCurve, ElementOrder, Formulation, Material, Model, Sense, SoftMagnetic, Solver, Winding, MU_0,
};
use coercive_post::{
    apparent_inductance, flux_linkage, flux_linkages, incremental_inductance,
    incremental_inductances, DifferenceSettings, EnergyTable, FieldProbe, PostError, Tabular,
};
use p1_support::{coil_mutual, gauss_legendre, polar_disc, steps};

fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs()
}

/// Gauss-Legendre integral of f over [a, b] (`n` panels of 8 points).
fn integral(f: impl Fn(f64) -> f64, a: f64, b: f64, n: usize) -> f64 {
    let (x, w) = gauss_legendre(8);
    let h = (b - a) / n as f64;
    let mut s = 0.0;
    for p in 0..n {
        for (xi, wi) in x.iter().zip(&w) {
            s += 0.5 * h * wi * f(a + h * (p as f64 + 0.5 * (xi + 1.0)));
        }
    }
    s
}

const COAX: [f64; 3] = [1e-3, 4e-3, 5e-3];

fn coax_model(n_theta: usize, current: f64) -> Model {
    let [a, b, c] = COAX;
    let mut radii = vec![0.0];
    radii.extend(steps(0.0, a, 8));
    radii.extend(steps(a, b, 24));
    radii.extend(steps(b, c, 8));
    let mut regions = vec!["inner"; 8];
    regions.extend(["gap"; 24]);
    regions.extend(["return"; 8]);
    let mesh = polar_disc(&radii, &regions, n_theta);
    Model::builder(mesh, Formulation::Planar { depth_m: 2.0 })
        .order(ElementOrder::P2)
        .material("inner", Material::vacuum())
        .material("gap", Material::vacuum())
        .material("return", Material::vacuum())
        .winding(
            Winding::new("cable", 1.0, current)
                .side("inner", Sense::Positive)
                .side("return", Sense::Negative),
        )
        .fixed_potential("outer", 0.0)
        .build()
        .unwrap()
}

#[test]
fn coaxial_cable_inductance_per_metre_from_flux_linkage() {
    let [a, b, c] = COAX;
    // Cheng, Field and Wave Electromagnetics (2nd ed.), sec. 6-12 (inductance of a coaxial
    // line with a solid inner conductor and a tubular outer conductor), shared/check-values.md
    // item 2: L' = mu0/(2 pi) [1/4 + ln(b/a) + c^4 ln(c/b)/(c^2-b^2)^2 - (3c^2-b^2)/(4(c^2-b^2))]
    // = 3.43838e-7 H/m for a = 1, b = 4, c = 5 mm (computed).
    let d = c * c - b * b;
    let exact = MU_0 / (2.0 * PI)
        * (0.25 + (b / a).ln() + c.powi(4) * (c / b).ln() / (d * d)
            - (3.0 * c * c - b * b) / (4.0 * d));
    assert!(rel(exact, 3.43838e-7) < 1e-5, "closed form {exact}");
    let current = 3.7;
    let mut errors = Vec::new();
    for n_theta in [32, 64, 128] {
        let model = coax_model(n_theta, current);
        let sol = model.solve().unwrap();
        let psi = flux_linkage(&sol, "cable").unwrap();
        let per_metre = psi.per_metre_wb_per_m.unwrap();
        let l = apparent_inductance(&sol, "cable").unwrap();
        assert!(rel(l.per_metre_h_per_m.unwrap(), per_metre / current) < 1e-14);
        // Totals are per metre times the 2 m depth.
        assert!(rel(psi.total_wb, 2.0 * per_metre) < 1e-14);
        assert!(rel(l.total_h, 2.0 * l.per_metre_h_per_m.unwrap()) < 1e-14);
        let err = rel(l.per_metre_h_per_m.unwrap(), exact);
        eprintln!(
            "coax n_theta {n_theta}: L' = {:.6e} H/m (exact {exact:.6e} H/m), error {err:.2e}",
            l.per_metre_h_per_m.unwrap()
        );
        errors.push(err);
        // Linear, no magnets: W = W' = L i^2 / 2 with L from the flux linkage (energy:
        // W = (1/2) integral A.J dV for linear media, e.g. Hammond, Electromagnetism for
        // Engineers, ch. 6), per metre and in total.
        let table = EnergyTable::new(&sol);
        let w = table.total.energy_per_metre_j_per_m.unwrap();
        assert!(rel(w, 0.5 * l.per_metre_h_per_m.unwrap() * current * current) < 1e-9);
        assert!(rel(table.total.coenergy_j, table.total.energy_j) < 1e-12);
        assert!(rel(table.total.energy_j, 2.0 * w) < 1e-14);
    }
    // The polygonal circles converge: the error shrinks with the angular resolution and ends
    // below 5e-6.
    assert!(
        errors[2] < errors[1] && errors[1] < errors[0] && errors[2] < 5e-6,
        "errors {errors:?}"
    );
}

#[test]
fn a_toroid_wound_in_parallel_paths_with_end_windings() {
    // The toroid below (N = 100 turns, h = 10 mm, a = 20 mm, b = 30 mm; L = mu0 N^2 h
    // ln(b/a) / (2 pi), shared/check-values.md item 8) with its conductors connected in two
    // parallel paths of N/2 turns each: every path links the whole core flux, so the
    // terminals see L = mu0 (N/2)^2 h ln(b/a) / (2 pi), a quarter of the series value
    // (Ampere's law with N conductors carrying i/2; e.g. Cheng, sec. 6-12), plus the stated
    // end-turn inductance. At a fixed current per conductor the field is the series one.
    let (n, h, a, b): (f64, f64, f64, f64) = (100.0, 0.010, 0.020, 0.030);
    let mut radii = vec![0.0];
    radii.extend(steps(0.0, a, 10));
    radii.extend(steps(a, b, 20));
    radii.extend(steps(b, b + 0.002, 2));
    let mut regions = vec!["inner_side"; 10];
    regions.extend(["core"; 20]);
    regions.extend(["outer_side"; 2]);
    let mesh = polar_disc(&radii, &regions, 96);
    let build = |paths: u32, end_h: f64, current: f64| {
        Model::builder(mesh.clone(), Formulation::Planar { depth_m: h })
            .order(ElementOrder::P2)
            .material("inner_side", Material::vacuum())
            .material("core", Material::vacuum())
            .material("outer_side", Material::vacuum())
            .winding(
                Winding::new("toroid", n, current)
                    .side("inner_side", Sense::Positive)
                    .side("outer_side", Sense::Negative)
                    .parallel_paths(paths)
                    .end_turn_inductance(end_h),
            )
            .fixed_potential("outer", 0.0)
            .build()
            .unwrap()
            .solve()
            .unwrap()
    };
    let i_coil = 1.9; // A in each conductor
    let end_h = 2.5e-6;
    let series = build(1, 0.0, i_coil);
    let parallel = build(2, end_h, 2.0 * i_coil);
    // Same conductor current, same field: energy and core flux agree.
    assert!(rel(parallel.energy(), series.energy()) < 1e-12);
    let psi_s = flux_linkage(&series, "toroid").unwrap();
    let psi_p = flux_linkage(&parallel, "toroid").unwrap();
    assert_eq!(psi_p.parallel_paths, 2);
    assert!((psi_p.end_winding_wb - end_h * 2.0 * i_coil).abs() < 1e-18);
    // Terminal flux linkage: half the series one (each path holds half the turns) plus
    // the end windings; the cross-section part per metre is the series one halved.
    let expected = 0.5 * psi_s.total_wb + end_h * 2.0 * i_coil;
    assert!(rel(psi_p.total_wb, expected) < 1e-12, "{psi_p:?}");
    assert!(
        rel(
            psi_p.per_metre_wb_per_m.unwrap(),
            0.5 * psi_s.per_metre_wb_per_m.unwrap()
        ) < 1e-12
    );
    // Against the closed form with the flux inside the sides (planar, uniform current
    // density: L = mu0 N^2 h / (2 pi) integral of f(r)^2 / r dr, f the enclosed fraction of
    // the current; the inner side fills r < a, where f = r^2 / a^2 gives 1/4).
    let b1 = b + 0.002;
    let f_out = |r: f64| ((b1 * b1 - r * r) / (b1 * b1 - b * b)).powi(2) / r;
    let l_series =
        MU_0 * n * n * h / (2.0 * PI) * (0.25 + (b / a).ln() + integral(f_out, b, b1, 4));
    let l_s = apparent_inductance(&series, "toroid").unwrap().total_h;
    let l_p = apparent_inductance(&parallel, "toroid").unwrap().total_h;
    eprintln!(
        "toroid: series {l_s:.6e} H (exact {l_series:.6e} H), two paths {l_p:.6e} H \
         (exact {:.6e} H with end windings {end_h:e} H)",
        0.25 * l_series + end_h
    );
    assert!(rel(l_s, l_series) < 5e-4);
    assert!(rel(l_p, 0.25 * l_series + end_h) < 5e-4);
    assert!(rel(l_p - end_h, 0.25 * l_s) < 1e-12);
    // Incremental inductance sees the end windings too (linear device: equal to apparent).
    let solver = Solver::new(parallel.model()).unwrap();
    let inc = incremental_inductance(
        &parallel,
        Some(&solver),
        "toroid",
        &DifferenceSettings::default(),
    )
    .unwrap();
    assert!(rel(inc.total_h, l_p) < 1e-6, "{inc:?} {l_p}");
    // Zero paths are refused by name.
    let e = Model::builder(mesh.clone(), Formulation::Planar { depth_m: h })
        .material("inner_side", Material::vacuum())
        .material("core", Material::vacuum())
        .material("outer_side", Material::vacuum())
        .winding(
            Winding::new("toroid", n, 1.0)
                .side("inner_side", Sense::Positive)
                .parallel_paths(0),
        )
        .build()
        .unwrap_err();
    assert!(e.to_string().contains("toroid"), "{e}");
}

#[test]
fn toroid_of_rectangular_section_from_core_flux_and_from_flux_linkage() {
    // Toroid with N = 100 turns, height h = 10 mm, core a = 20 mm to b = 30 mm: the planar
    // ring model with depth h (shared/check-values.md item 8): L = mu0 N^2 h ln(b/a)/(2 pi)
    // = 8.1093 uH (Ampere's law H = N i/(2 pi r) in the core; e.g. Cheng, sec. 6-12).
    let (n, h, a, b): (f64, f64, f64, f64) = (100.0, 0.010, 0.020, 0.030);
    let delta = 1e-4; // thickness of the winding layers
    let exact = MU_0 * n * n * h * (b / a).ln() / (2.0 * PI);
    assert!(rel(exact, 8.1093e-6) < 1e-4, "closed form {exact}");
    let mut radii = vec![0.0];
    radii.extend(steps(0.0, a - delta, 10));
    radii.extend(steps(a - delta, a, 2));
    radii.extend(steps(a, b, 20));
    radii.extend(steps(b, b + delta, 2));
    radii.extend(steps(b + delta, b + 0.002, 2));
    let mut regions = vec!["hole"; 10];
    regions.extend(["inner_side"; 2]);
    regions.extend(["core"; 20]);
    regions.extend(["outer_side"; 2]);
    regions.extend(["air"; 2]);
    let mesh = polar_disc(&radii, &regions, 192);
    let current = 3.7;
    let model = Model::builder(mesh, Formulation::Planar { depth_m: h })
        .order(ElementOrder::P2)
        .material("hole", Material::vacuum())
        .material("inner_side", Material::vacuum())
        .material("core", Material::vacuum())
        .material("outer_side", Material::vacuum())
        .material("air", Material::vacuum())
        .winding(
            Winding::new("toroid", n, current)
                .side("inner_side", Sense::Positive)
                .side("outer_side", Sense::Negative),
        )
        .fixed_potential("outer", 0.0)
        .build()
        .unwrap();
    let sol = model.solve().unwrap();
    // Core flux = h (A(a) - A(b)) (B_theta = -dA/dr), so L = N Phi / i.
    let probe = FieldProbe::new(&sol);
    let phi = h * (probe.potential([a, 0.0]).unwrap() - probe.potential([b, 0.0]).unwrap());
    let l_core = n * phi / current;
    eprintln!("toroid: L from core flux {l_core:.6e} H (closed form {exact:.6e} H)");
    assert!(rel(l_core, exact) < 5e-4);
    let crossing = probe.flux_between([a, 0.0], [b, 0.0]).unwrap();
    assert!(rel(crossing.total_wb.abs(), phi.abs()) < 1e-12);
    // The flux linkage also counts the flux inside the finite winding layers. Exact planar
    // value for layers of uniform current density: L = mu0 N^2 h/(2 pi) integral f(r)^2/r dr
    // with f the enclosed fraction of the current (Ampere's law and W = L i^2/2).
    let (a0, b1) = (a - delta, b + delta);
    let f_in = |r: f64| ((r * r - a0 * a0) / (a * a - a0 * a0)).powi(2) / r;
    let f_out = |r: f64| ((b1 * b1 - r * r) / (b1 * b1 - b * b)).powi(2) / r;
    let layered = MU_0 * n * n * h / (2.0 * PI)
        * (integral(f_in, a0, a, 4) + (b / a).ln() + integral(f_out, b, b1, 4));
    let l = apparent_inductance(&sol, "toroid").unwrap();
    eprintln!(
        "toroid: L from flux linkage {:.6e} H (layered exact {layered:.6e} H, thin-winding \
         limit {exact:.6e} H)",
        l.total_h
    );
    assert!(rel(l.total_h, layered) < 5e-4);
    assert!(rel(l.per_metre_h_per_m.unwrap() * h, l.total_h) < 1e-14);
    // W = L i^2 / 2 (device totals, J).
    let w = EnergyTable::new(&sol).total.energy_j;
    assert!(rel(w, 0.5 * l.total_h * current * current) < 1e-9);
}

/// A planar box with a linear iron bar and two windings.
fn two_winding_model(i1: f64, i2: f64) -> Model {
    let xs = p1_support::uniform_through(
        &[0.0, 0.02, 0.03, 0.04, 0.05, 0.06, 0.07, 0.08, 0.1],
        2.5e-3,
    );
    let ys = p1_support::uniform_through(
        &[0.0, 0.005, 0.015, 0.02, 0.04, 0.06, 0.08, 0.085, 0.095, 0.1],
        2.5e-3,
    );
    let inside = |x: f64, y: f64, b: [f64; 4]| x > b[0] && x < b[1] && y > b[2] && y < b[3];
    let names = ["air", "iron", "c1p", "c1m", "c2p", "c2m"];
    let mesh = p1_support::tensor_mesh(&xs, &ys, &names, |x, y| {
        Some(if inside(x, y, [0.04, 0.06, 0.02, 0.08]) {
            1
        } else if inside(x, y, [0.02, 0.03, 0.04, 0.06]) {
            2
        } else if inside(x, y, [0.07, 0.08, 0.04, 0.06]) {
            3
        } else if inside(x, y, [0.03, 0.05, 0.085, 0.095]) {
            4
        } else if inside(x, y, [0.05, 0.07, 0.005, 0.015]) {
            5
        } else {
            0
        })
    });
    let mut builder = Model::builder(mesh, Formulation::Planar { depth_m: 0.05 })
        .order(ElementOrder::P2)
        .material(
            "iron",
            Material::Linear {
                relative_permeability: 1000.0,
            },
        )
        .winding(
            Winding::new("one", 50.0, i1)
                .side("c1p", Sense::Positive)
                .side("c1m", Sense::Negative),
        )
        .winding(
            Winding::new("two", 20.0, i2)
                .side("c2p", Sense::Positive)
                .side("c2m", Sense::Negative),
        );
    for r in ["air", "c1p", "c1m", "c2p", "c2m"] {
        builder = builder.material(r, Material::vacuum());
    }
    for c in ["bottom", "right", "top", "left"] {
        builder = builder.fixed_potential(c, 0.0);
    }
    builder.build().unwrap()
}

#[test]
fn two_windings_are_reciprocal_and_store_half_i_l_i() {
    let (i1, i2) = (3.7, -1.3);
    let model = two_winding_model(i1, i2);
    let solver = Solver::new(&model).unwrap();
    let sol = solver.solve(&model, &Default::default()).unwrap();
    let matrix =
        incremental_inductances(&sol, Some(&solver), &DifferenceSettings::default()).unwrap();
    eprintln!(
        "inductance matrix (H): {:?}, asymmetry {:.2e}",
        matrix.total_h,
        matrix.asymmetry()
    );
    // Reciprocity M12 = M21 (Maxwell, Treatise, vol. 2, art. 86; the Galerkin matrix is
    // symmetric, so the discrete values agree to rounding).
    assert!(
        matrix.asymmetry() < 1e-8,
        "asymmetry {}",
        matrix.asymmetry()
    );
    let l = &matrix.total_h;
    assert!(
        l[0][0] > 0.0 && l[1][1] > 0.0 && l[0][1].abs() > 1e-3 * l[0][0].sqrt() * l[1][1].sqrt()
    );
    // Mutual inductance as psi_j due to i_k alone (secant), both ways, at 3.7 A.
    let only = |a: f64, b: f64| {
        solver
            .solve(&two_winding_model(a, b), &Default::default())
            .unwrap()
    };
    let s1 = only(3.7, 0.0);
    let s2 = only(0.0, 3.7);
    let m21 = flux_linkage(&s1, "two").unwrap().total_wb / 3.7;
    let m12 = flux_linkage(&s2, "one").unwrap().total_wb / 3.7;
    eprintln!("M21 = {m21:.6e} H, M12 = {m12:.6e} H");
    assert!(rel(m12, m21) < 1e-9);
    assert!(rel(m12, l[0][1]) < 1e-6 && rel(m21, l[1][0]) < 1e-6);
    // Self inductance by the secant equals the differential one (linear device).
    assert!(rel(apparent_inductance(&s1, "one").unwrap().total_h, l[0][0]) < 1e-6);
    // Stored energy of a linear system of windings W = (1/2) sum_jk L_jk i_j i_k
    // = (1/2) sum_j psi_j i_j (e.g. Hammond, Electromagnetism for Engineers, ch. 6).
    let i = [i1, i2];
    let quad: f64 = (0..2)
        .map(|j| (0..2).map(|k| l[j][k] * i[j] * i[k]).sum::<f64>())
        .sum();
    let table = flux_linkages(&sol).unwrap();
    let linked: f64 = table
        .rows
        .iter()
        .map(|r| r.linkage.total_wb * r.linkage.current_a)
        .sum();
    let w = EnergyTable::new(&sol).total.energy_j;
    eprintln!("W = {w:.6e} J, i.L.i/2 = {:.6e} J", 0.5 * quad);
    assert!(rel(w, 0.5 * quad) < 1e-6);
    assert!(rel(w, 0.5 * linked) < 1e-9);
    // Per metre values times the depth (0.05 m) are the totals.
    let pm = matrix.per_metre_h_per_m.as_ref().unwrap();
    assert!(rel(pm[0][1] * 0.05, l[0][1]) < 1e-14);
    // Tables: CSV with units, one line per pair; JSON that parses back.
    let csv = matrix.to_csv();
    assert!(csv.lines().next().unwrap().contains("(H)"));
    assert_eq!(csv.lines().count(), 1 + 4);
    let json: serde_json::Value = serde_json::from_str(&matrix.to_json().unwrap()).unwrap();
    assert_eq!(json["windings"][1], "two");
    let csv = table.to_csv();
    assert!(csv.contains("one,50,3.7,"), "{csv}");
    assert!(matches!(
        flux_linkage(&sol, "three"),
        Err(PostError::UnknownWinding { winding, .. }) if winding == "three"
    ));
    assert!(matches!(
        matrix.get("one", "nine"),
        Err(PostError::UnknownWinding { .. })
    ));
}

#[test]
fn coaxial_coils_mutual_inductance_matches_maxwell_formula() {
    // Two coaxial coils of rectangular section (m): [r0, r1, z0, z1].
    let c1 = [0.040, 0.050, 0.000, 0.010];
    let c2 = [0.055, 0.065, 0.040, 0.050];
    let (n1, n2) = (120.0, 80.0);
    // Reference: Maxwell's filament formula (Treatise, vol. 2, art. 701), complete elliptic
    // integrals by the AGM (Abramowitz & Stegun 17.6), averaged over both sections with
    // 8-point Gauss-Legendre in each of the 4 coordinates (integrand smooth: the sections
    // are 30 mm apart).
    let reference = coil_mutual(c1, n1, c2, n2, 8);
    let check = coil_mutual(c1, n1, c2, n2, 12);
    assert!(
        rel(reference, check) < 1e-10,
        "quadrature {reference} vs {check}"
    );
    let h = 1e-3;
    let mut xs = p1_support::uniform_through(&[0.0, 0.04, 0.05, 0.055, 0.065, 0.08], h);
    xs.extend(p1_support::graded(0.08, 1.0, 36, 1.12).into_iter().skip(1));
    let mut ys: Vec<f64> = p1_support::graded(-0.02, -1.0, 36, 1.12)
        .into_iter()
        .rev()
        .collect();
    ys.pop();
    ys.extend(p1_support::uniform_through(
        &[-0.02, 0.0, 0.01, 0.04, 0.05, 0.07],
        h,
    ));
    ys.extend(p1_support::graded(0.07, 1.0, 36, 1.12).into_iter().skip(1));
    let inside = |x: f64, y: f64, c: [f64; 4]| x > c[0] && x < c[1] && y > c[2] && y < c[3];
    let mesh = p1_support::tensor_mesh(&xs, &ys, &["air", "coil1", "coil2"], |x, y| {
        Some(if inside(x, y, c1) {
            1
        } else if inside(x, y, c2) {
            2
        } else {
            0
        })
    });
    let build = |i1: f64, i2: f64| {
        Model::builder(mesh.clone(), Formulation::Axisymmetric)
            .order(ElementOrder::P2)
            .material("air", Material::vacuum())
            .material("coil1", Material::vacuum())
            .material("coil2", Material::vacuum())
            .winding(Winding::new("coil1", n1, i1).side("coil1", Sense::Positive))
            .winding(Winding::new("coil2", n2, i2).side("coil2", Sense::Positive))
            .fixed_potential("right", 0.0)
            .fixed_potential("top", 0.0)
            .fixed_potential("bottom", 0.0)
            .build()
            .unwrap()
    };
    let model = build(3.7, 0.0);
    let solver = Solver::new(&model).unwrap();
    let sol = solver.solve(&model, &Default::default()).unwrap();
    let psi2 = flux_linkage(&sol, "coil2").unwrap();
    assert!(
        psi2.per_metre_wb_per_m.is_none(),
        "axisymmetric totals only"
    );
    let m21 = psi2.total_wb / 3.7;
    let sol_b = solver.solve(&build(0.0, 3.7), &Default::default()).unwrap();
    let m12 = flux_linkage(&sol_b, "coil1").unwrap().total_wb / 3.7;
    eprintln!(
        "coaxial coils: M21 = {m21:.6e} H, M12 = {m12:.6e} H, Maxwell (Gauss) {reference:.6e} H, \
         error {:.2e}",
        rel(m21, reference)
    );
    // Mesh 1 mm in the coils (P2) and the A = 0 box at 1 m (image error of order
    // (65 mm / 1 m)^3 = 3e-4).
    assert!(rel(m21, reference) < 1e-3);
    assert!(rel(m12, m21) < 1e-8);
    let matrix =
        incremental_inductances(&sol, Some(&solver), &DifferenceSettings::default()).unwrap();
    assert!(rel(matrix.total_h[1][0], m21) < 1e-6);
    assert!(matrix.per_metre_h_per_m.is_none());
    // W = L1 i^2 / 2 in the axisymmetric totals (J).
    let w = EnergyTable::new(&sol).total.energy_j;
    let l1 = apparent_inductance(&sol, "coil1").unwrap().total_h;
    assert!(rel(w, 0.5 * l1 * 3.7 * 3.7) < 1e-9);
    assert!(rel(matrix.total_h[0][0], l1) < 1e-6);
}

const RING_I: f64 = 1000.0;
const RING_A: f64 = 0.010;
const RING_B: f64 = 0.020;
const RING_OUT: f64 = 0.030;

fn ring_model(current: f64) -> Model {
    let mut radii = vec![0.0];
    radii.extend(steps(0.0, RING_A, 5));
    radii.extend(steps(RING_A, RING_B, 10));
    radii.extend(steps(RING_B, RING_OUT, 4));
    let mut regions = vec!["conductor"; 5];
    regions.extend(["steel"; 10]);
    regions.extend(["air"; 4]);
    let mesh = polar_disc(&radii, &regions, 96);
    Model::builder(mesh, Formulation::Planar { depth_m: 1.0 })
        .order(ElementOrder::P2)
        .material("conductor", Material::vacuum())
        .material("air", Material::vacuum())
        .material(
            "steel",
            Material::Soft(SoftMagnetic {
                curve: BhCurve::saturating(1.8, 200.0).unwrap(),
            }),
        )
        .winding(Winding::new("bar", 1.0, current).side("conductor", Sense::Positive))
        .fixed_potential("outer", 0.0)
        .build()
        .unwrap()
}

/// Flux linkage per metre of the bar at current i (A): internal mu0 i/(8 pi), the ring
/// mu0 c ln(b/a) + Js (c/H0) ln((c + H0 b)/(c + H0 a)) with c = i/(2 pi) (Ampere's law
/// H = i/(2 pi r) for any B-H law; shared/check-values.md item 4), and the air
/// mu0 c ln(r_out/b).
fn ring_linkage(i: f64) -> f64 {
    let (js, h0) = (1.8, 200.0);
    let c = i / (2.0 * PI);
    MU_0 * i / (8.0 * PI)
        + MU_0 * c * (RING_B / RING_A).ln()
        + js * c / h0 * ((c + h0 * RING_B) / (c + h0 * RING_A)).ln()
        + MU_0 * c * (RING_OUT / RING_B).ln()
}

#[test]
fn saturating_ring_flux_linkage_incremental_inductance_and_energy() {
    let model = ring_model(RING_I);
    let solver = Solver::new(&model).unwrap();
    let sol = solver.solve(&model, &Default::default()).unwrap();
    let psi = flux_linkage(&sol, "bar")
        .unwrap()
        .per_metre_wb_per_m
        .unwrap();
    let exact = ring_linkage(RING_I);
    eprintln!("ring: psi' = {psi:.6e} Wb/m, closed form {exact:.6e} Wb/m");
    // Polygonal circles with 96 sides (as in the solver's own ring test): 3e-3.
    assert!(rel(psi, exact) < 3e-3);
    // Nonlinear energy balance: W + W' = integral B.H dV = integral J A dV = i psi
    // (shared/check-values.md item 4), exact for the discrete solution at convergence.
    let table = EnergyTable::new(&sol);
    let (w, wc) = (table.total.energy_j, table.total.coenergy_j);
    eprintln!(
        "ring: W = {w:.5} J/m, W' = {wc:.4} J/m, i psi = {:.4} J/m",
        RING_I * psi
    );
    assert!(rel(w + wc, RING_I * psi) < 1e-6);
    assert!(wc > 5.0 * w, "saturated steel: co-energy far above energy");
    let steel = table.region("steel").unwrap();
    assert_eq!(steel.material, "soft (nonlinear)");
    // Incremental inductance d psi / d i against the derivative of the closed form (central
    // difference of the closed form with a 1e-3 A step: truncation far below 1e-9).
    let d_exact = (ring_linkage(RING_I + 1e-3) - ring_linkage(RING_I - 1e-3)) / 2e-3;
    let l_inc = incremental_inductance(&sol, Some(&solver), "bar", &DifferenceSettings::default())
        .unwrap()
        .per_metre_h_per_m
        .unwrap();
    let l_app = apparent_inductance(&sol, "bar")
        .unwrap()
        .per_metre_h_per_m
        .unwrap();
    eprintln!(
        "ring: incremental {l_inc:.6e} H/m (closed form {d_exact:.6e} H/m), apparent {l_app:.6e} H/m"
    );
    assert!(rel(l_inc, d_exact) < 1e-3);
    // Saturation: the incremental inductance is well below the apparent one.
    assert!(l_inc < 0.5 * l_app);
    // Step-size independence (central difference, O(h^2)).
    let coarse = DifferenceSettings {
        relative_step: 1e-2,
        ..DifferenceSettings::default()
    };
    let l_coarse = incremental_inductance(&sol, Some(&solver), "bar", &coarse)
        .unwrap()
        .per_metre_h_per_m
        .unwrap();
    assert!(rel(l_coarse, l_inc) < 1e-3, "{l_coarse} vs {l_inc}");
    // Bad steps are typed errors.
    let bad = DifferenceSettings {
        relative_step: -1.0,
        ..DifferenceSettings::default()
    };
    assert!(matches!(
        incremental_inductance(&sol, Some(&solver), "bar", &bad),
        Err(PostError::InvalidArgument { .. })
    ));
}

#[test]
fn zero_current_has_no_apparent_inductance_but_an_incremental_one() {
    let model = coax_model(32, 0.0);
    let sol = model.solve().unwrap();
    assert!(matches!(
        apparent_inductance(&sol, "cable"),
        Err(PostError::ZeroCurrent { winding, .. }) if winding == "cable"
    ));
    let table = flux_linkages(&sol).unwrap();
    assert!(table.rows[0].apparent_inductance.is_none());
    let l = incremental_inductance(&sol, None, "cable", &DifferenceSettings::default()).unwrap();
    let with_current = coax_model(32, 3.7).solve().unwrap();
    let l_app = apparent_inductance(&with_current, "cable").unwrap();
    assert!(rel(l.total_h, l_app.total_h) < 1e-6);
}
