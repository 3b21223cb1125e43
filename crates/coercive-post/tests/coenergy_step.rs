//! The co-energy difference's step: Richardson's estimate of its truncation error against
//! closed-form co-energies, and the sign of a body's force from its role (moving part or
//! fixed reaction).

use std::f64::consts::PI;

use coercive_fem::MU_0;
use coercive_post::force::{Body, BodyRole, CoenergyRichardson};
use coercive_post::PostError;

/// Central differences of the closed-form co-energy `w` at x0 with step h and the estimate.
fn richardson_of(w: impl Fn(f64) -> f64, x0: f64, h: f64) -> CoenergyRichardson {
    CoenergyRichardson::from_coenergies([w(x0 - h), w(x0 - 0.5 * h), w(x0 + 0.5 * h), w(x0 + h)], h)
        .unwrap()
}

#[test]
fn richardson_estimate_bounds_the_step_error_of_two_parallel_conductors() {
    // Two line currents d apart: mutual inductance per metre M' = (mu_0 / 2 pi) ln(R / d)
    // (e.g. Smythe, Static and Dynamic Electricity, 3rd ed., sec. 7.13 for parallel wires), so
    // W'(d) = I1 I2 M'(d) at constant currents and the force on the moved conductor is
    // dW'/dd = -mu_0 I1 I2 / (2 pi d) (BIPM SI Brochure, 8th ed., sec. 2.1.1.4: 2e-7 N/m at
    // 1 A and 1 m).
    let (i1, i2, big_r) = (3.0, 2.0, 1.0);
    let w = |d: f64| i1 * i2 * MU_0 / (2.0 * PI) * (big_r / d).ln();
    for d in [1e-3, 1e-2, 0.1] {
        let exact = -MU_0 * i1 * i2 / (2.0 * PI * d);
        let mut last_error = f64::INFINITY;
        for fraction in [0.4, 0.2, 0.1, 0.05, 0.025] {
            let r = richardson_of(w, d, fraction * d);
            let true_error = (r.force - exact).abs();
            // Bound: the estimate is at least the true error of D(h/2), and not a gross
            // overstatement (within a factor 1.5: asymptotically exact, Richardson 1911).
            assert!(
                r.step_error >= true_error && r.step_error <= 1.5 * true_error,
                "d {d} m, h {fraction} d: estimate {:e}, true {true_error:e}",
                r.step_error
            );
            // The extrapolated value is far better than either difference: its error is
            // 0.6 (h/d)^2 times that of D(h/2) to leading order (series of atanh).
            assert!((r.extrapolated - exact).abs() < 0.7 * fraction * fraction * true_error);
            // Second-order: halving the step quarters the error.
            assert!(true_error < 0.26 * last_error || last_error.is_infinite());
            last_error = true_error;
        }
        // A tenth of the gap for h/2 costs (h/2)^2 / (3 d^2) = 0.33 % on a 1/d law: the
        // size of the error the fixed tenth-of-the-gap step hid.
        let r = richardson_of(w, d, 0.2 * d);
        assert!(((r.force - exact) / exact - 0.01 / 3.0).abs() < 1e-4);
    }
}

#[test]
fn richardson_estimate_bounds_the_step_error_of_a_magnet_over_an_iron_plate() {
    // A planar line dipole at height g over an ideal iron plate (mu_r -> infinity) meets its
    // image at 2g (method of images, e.g. Jackson, Classical Electrodynamics, 3rd ed., sec.
    // 5.12 for the permeable half-space limit); the 2D dipole-dipole co-energy falls as the
    // inverse square of the distance, W'(g) = C / g^2, so F = -2 C / g^3. C is arbitrary here.
    let c = 7.5e-5;
    let w = |g: f64| c / (g * g);
    for g in [0.5e-3_f64, 2e-3, 1e-2] {
        let exact = -2.0 * c / g.powi(3);
        for fraction in [0.4, 0.2, 0.1, 0.05] {
            let r = richardson_of(w, g, fraction * g);
            let true_error = (r.force - exact).abs();
            assert!(
                r.step_error >= true_error && r.step_error <= 1.5 * true_error,
                "g {g} m, h {fraction} g: estimate {:e}, true {true_error:e}",
                r.step_error
            );
            assert_eq!(r.step_m, fraction * g);
        }
    }
}

#[test]
fn richardson_values_are_the_two_central_differences_exactly() {
    // Hand-computed: W' = [1, 2, 4, 8] at -1, -0.5, 0.5, 1 (m): D(1) = (8 - 1) / 2 = 3.5,
    // D(0.5) = (4 - 2) / 1 = 2, extrapolated (8 - 3.5) / 3 = 1.5, estimate 1.5 / 3 = 0.5.
    let r = CoenergyRichardson::from_coenergies([1.0, 2.0, 4.0, 8.0], 1.0).unwrap();
    assert_eq!(r.force, 2.0);
    assert_eq!(r.coarse_force, 3.5);
    assert_eq!(r.extrapolated, 1.5);
    assert_eq!(r.step_error, 0.5);
    assert_eq!(r.step_m, 1.0);
    // A linear co-energy has no truncation error.
    let r = CoenergyRichardson::from_coenergies([-2.0, -1.0, 1.0, 2.0], 2.0).unwrap();
    assert_eq!((r.force, r.coarse_force, r.step_error), (1.0, 1.0, 0.0));
    for bad in [0.0, -1e-3, f64::NAN, f64::INFINITY] {
        let e = CoenergyRichardson::from_coenergies([0.0; 4], bad).unwrap_err();
        assert!(matches!(e, PostError::InvalidArgument { .. }), "{e}");
    }
}

#[test]
fn the_body_role_gives_the_sign_of_the_coenergy_force() {
    let plate = Body::new(&["plate"]);
    let pad = Body::new(&["magnet", "pole_n", "pole_s"]);
    // dW'/dx is the moving part's own force; a disjoint body gets the reaction.
    assert_eq!(BodyRole::of(&plate, &plate).unwrap(), BodyRole::Moving);
    assert_eq!(BodyRole::Moving.sign(), 1.0);
    assert_eq!(BodyRole::of(&plate, &pad).unwrap(), BodyRole::Reaction);
    assert_eq!(BodyRole::Reaction.sign(), -1.0);
    // Order of the regions does not matter.
    let pad2 = Body::new(&["pole_s", "magnet", "pole_n"]);
    assert_eq!(BodyRole::of(&pad2, &pad).unwrap(), BodyRole::Moving);
    // Part of the moving part, or the moving part and more, is refused naming both.
    for body in [
        Body::new(&["magnet"]),
        Body::new(&["magnet", "pole_n", "pole_s", "plate"]),
    ] {
        let e = BodyRole::of(&body, &pad).unwrap_err();
        assert!(
            matches!(&e, PostError::BodyOverlapsMovingPart { body: b, moving }
                if *b == body.label() && moving == "magnet+pole_n+pole_s"),
            "{e}"
        );
    }
}
