//! The preset library: every grade against its published source, the EN 10106 minima, and
//! the errors for retired and unknown names.

use coercive_fem::library::{self, Grade, SteelLaw};
use coercive_fem::{MaterialError, MU_0};

fn steel(name: &str) -> library::SteelGrade {
    match library::grade(name).unwrap() {
        Grade::Steel(s) => s,
        other => panic!("{name} is not a soft grade: {other:?}"),
    }
}

fn polarisation(name: &str, h: f64) -> f64 {
    steel(name).curve().unwrap().b_of_h(h) - MU_0 * h
}

#[test]
fn electrical_steels_meet_the_en_10106_minimum_polarisation() {
    // EN 10106 guarantees a minimum polarisation at H = 2500, 5000 and 10000 A/m for each
    // grade (minima from memory, shared/check-values.md: 1.49/1.60/1.70 T for M270-50A and
    // M330-50A, 1.53/1.63/1.73 T for M400-50A; 1.60/1.70/1.78 T for M800-50A, from memory).
    // The typical curves (voestalpine measurements) must pass at or above them.
    let expected = [
        ("m270-50a", [1.49, 1.60, 1.70]),
        ("m330-50a", [1.49, 1.60, 1.70]),
        ("m400-50a", [1.53, 1.63, 1.73]),
        ("m800-50a", [1.60, 1.70, 1.78]),
    ];
    for (name, minima) in expected {
        let grade = steel(name);
        assert!(grade.designation.contains("EN 10106"), "{name}");
        let stated: Vec<(f64, f64)> = library::EN_10106_FIELDS
            .iter()
            .copied()
            .zip(minima)
            .collect();
        assert_eq!(grade.minimum_polarisation, stated, "{name}");
        for (h, j_min) in stated {
            let j = polarisation(name, h);
            assert!(
                j >= j_min,
                "{name}: J({h} A/m) = {j} T below the minimum {j_min} T"
            );
            // Typical values sit above the minima, but not by more than 0.1 T (a curve far
            // above its grade's minimum would be a slip in the table).
            assert!(j <= j_min + 0.1, "{name}: J({h} A/m) = {j} T");
        }
    }
    // Lower loss grades carry more silicon and polarise less at a given field: at 5000 A/m,
    // M270-50A < M330-50A < M400-50A < M800-50A.
    let j5: Vec<f64> = expected
        .iter()
        .map(|(n, _)| polarisation(n, 5000.0))
        .collect();
    assert!(j5.windows(2).all(|w| w[0] < w[1]), "{j5:?}");
}

#[test]
fn electrical_steel_curves_pass_through_the_measured_points() {
    // The table is interpolated, not smoothed: at each measured (H, J) point of the producer's
    // curve (voestalpine, see the library's sources) the curve gives B = J + mu_0 H.
    for name in ["m270-50a", "m330-50a", "m400-50a", "m800-50a"] {
        let grade = steel(name);
        let curve = grade.curve().unwrap();
        let SteelLaw::Table { points } = &grade.law else {
            panic!("{name} should be a table")
        };
        assert!(points.len() >= 30, "{name}");
        for &(h, b) in points {
            assert!((curve.b_of_h(h) - b).abs() < 1e-9, "{name} at {h} A/m");
        }
        // voestalpine M400-50A at 2498.48 A/m: J = 1.57443 T (raw data).
        if name == "m400-50a" {
            let b = curve.b_of_h(2498.48);
            assert!((b - (1.57443 + MU_0 * 2498.48)).abs() < 1e-9);
        }
    }
}

#[test]
fn low_carbon_steel_is_brauers_1010_law() {
    // Brauer, Magnetic Actuators and Sensors, 2nd ed., 2014, App. B: annealed 1010,
    // k1 = 4.847, k2 = 1.908, k3 = 227.3 (check-values.md); H = (k1 exp(k2 B^2) + k3) B.
    let curve = steel("steel-c10").curve().unwrap();
    for b in [0.5f64, 1.0, 1.5, 1.8] {
        let law = (4.847 * (1.908 * b * b).exp() + 227.3) * b;
        let got = curve.h_of_b(b).0;
        assert!((got - law).abs() <= 1e-5 * law, "{b} T: {got} vs {law} A/m");
    }
}

#[test]
fn free_cutting_steel_follows_roschkes_law() {
    // Roschke 2000, as tabulated for 9SMn28K (1.0715, now 11SMn30): mu_i = 500,
    // B_mumax = 1.036 T, c_a = 43414, c_b = 35.8, n = 14;
    // mu_r(B) = 1 + (mu_i - 1 + c_a B_N)/(1 + c_b B_N + B_N^n), B_N = B/B_mumax.
    let curve = steel("steel-11smn30").curve().unwrap();
    for b in [0.5, 1.0, 1.4, 1.8] {
        let bn: f64 = b / 1.036;
        let mu_r = 1.0 + (499.0 + 43414.0 * bn) / (1.0 + 35.8 * bn + bn.powf(14.0));
        let law = b / (MU_0 * mu_r);
        let got = curve.h_of_b(b).0;
        // Sampled every 0.02 T and interpolated: within 1 % between the samples.
        assert!((got - law).abs() <= 1e-2 * law, "{b} T: {got} vs {law} A/m");
    }
}

#[test]
fn cast_iron_passes_through_its_published_points() {
    // Pearlitic grey iron (3.12 % C, 2.22 % Si): maximum permeability 396 uH/m at 637 A/m and
    // 15.9 kA/m for B = 1 T (handbook table reproduced by a foundry's technical note, see the
    // library's sources).
    let curve = steel("cast-iron-gjl-250").curve().unwrap();
    assert!((curve.b_of_h(637.0) - 396e-6 * 637.0).abs() < 1e-4);
    assert!((curve.b_of_h(15.9e3) - 1.0).abs() < 1e-4);
    // Cast iron holds less than low carbon steel: at every field up to 100 kA/m its flux
    // density is lower (common practice: about half the holding force).
    let c10 = steel("steel-c10").curve().unwrap();
    let c45 = steel("steel-c45").curve().unwrap();
    for h in [200.0, 1000.0, 5000.0, 20e3, 100e3] {
        let (iron, low, medium) = (curve.b_of_h(h), c10.b_of_h(h), c45.b_of_h(h));
        assert!(
            iron < medium && medium < low,
            "{h} A/m: {iron} {medium} {low} T"
        );
    }
}

#[test]
fn magnet_grades_meet_their_class_minima() {
    // IEC 60404-8-1 hard ferrite class HF 26/18: (BH)max >= 26 kJ/m^3, HcJ >= 180 kA/m (from
    // memory); the linear model's (BH)max = Br^2/(4 mu_0 mu_rec).
    let f = library::ferrite_hf_26_18();
    assert!(f.designation.contains("HF 26/18"));
    assert!(f.intrinsic_coercivity >= 180e3);
    let bh = f.model_energy_product();
    assert!((26e3..30e3).contains(&bh), "(BH)max {bh} J/m^3");
    // GB/T 13560 temperature class SH: HcJ >= 1592 kA/m (20 kOe); N42SH's Br lies in the N42
    // range 1.28-1.32 T (vendor tables, from memory).
    let sh = library::ndfeb_n42sh();
    assert!(sh.intrinsic_coercivity >= 1592e3);
    assert!((1.28..=1.32).contains(&sh.remanence), "{}", sh.remanence);
    // Every magnet and soft grade names its source; every grade builds.
    for name in library::names() {
        let g = library::grade(name).unwrap();
        assert!(!g.source().is_empty(), "{name}");
        g.to_material().unwrap().validate().unwrap();
        if let Grade::Magnet(m) = &g {
            assert_eq!(&m.name, name);
            assert!(!m.designation.is_empty());
        }
        if let Grade::Steel(s) = &g {
            assert_eq!(&s.name, name);
        }
    }
}

#[test]
fn retired_names_say_what_to_write_instead() {
    for (old, new) in [
        ("steel-1010", "steel-c10"),
        ("steel-1020", "steel-c10"),
        ("M-19", "m400-50a"),
        ("m-15", "m270-50a"),
        ("m-36", "m400-50a"),
        ("ferrite-c5", "ferrite-hf-26-18"),
        ("ferrite_y30", "ferrite-hf-26-18"),
    ] {
        let e = library::preset(old).unwrap_err();
        assert!(
            matches!(e, MaterialError::RetiredPreset { .. }),
            "{old}: {e:?}"
        );
        let text = e.to_string();
        assert!(
            text.contains(&format!("`{old}` is not a preset")) && text.contains(new),
            "{text}"
        );
        // The suggested name is a preset.
        library::preset(new).unwrap();
    }
    // Unknown names still list the known ones.
    let e = library::grade("steel-s999").unwrap_err();
    assert!(matches!(e, MaterialError::UnknownPreset { .. }));
    assert!(e.to_string().contains("steel-11smn30"));
}

#[test]
fn linear_magnet_grades_share_the_hysteresis_datasheets() {
    // One source of truth: a grade known to both models has the same Br, HcB, HcJ and recoil
    // permeability in each, and its linear law carries the knee of the fitted loop.
    for name in coercive_fem::datasheet_names() {
        let sheet = coercive_fem::datasheet(name).unwrap();
        let coercive_fem::library::Grade::Magnet(g) = coercive_fem::library::grade(name).unwrap()
        else {
            panic!("{name} is not a magnet grade of the library");
        };
        assert_eq!(g.remanence, sheet.remanence, "{name}");
        assert_eq!(g.coercivity, sheet.coercivity, "{name}");
        assert_eq!(g.intrinsic_coercivity, sheet.intrinsic_coercivity, "{name}");
        assert_eq!(g.recoil_permeability, sheet.recoil_permeability, "{name}");
        let knee = g.to_material().unwrap().knee_field().unwrap();
        // The knee (J = 0.9 Br) lies before HcJ on the demagnetisation curve.
        assert!(
            knee > 0.0 && knee < sheet.intrinsic_coercivity,
            "{name}: {knee}"
        );
    }
}
