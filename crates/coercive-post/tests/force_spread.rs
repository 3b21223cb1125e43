//! The spread, uncertainty and warning code of the force module pinned on hand-computed
//! inputs (every expected value below is worked out in the comment beside it).

use coercive_post::force::{
    relative_spread, vector_spread, Body, BodyForce, ForceMethod, ForceSettings, MethodForce,
    THICKNESS_CHECK_FACTOR, TORQUE_THICKNESS_CHECK_FACTOR,
};

fn method(method: ForceMethod, force: [f64; 2], torque: f64, planar: bool) -> MethodForce {
    MethodForce {
        method,
        force,
        torque,
        depth_m: planar.then_some(0.1),
    }
}

/// A body force holding only its main result, as force_on would build it before the other
/// methods are added.
fn start(main: MethodForce, settings: &ForceSettings) -> BodyForce {
    let mut f = BodyForce {
        body: Body::new(&["b"]),
        methods: Vec::new(),
        force_spread: -7.0,
        torque_spread: -7.0,
        force_uncertainty: -7.0,
        torque_uncertainty: -7.0,
        relative_uncertainty: -7.0,
        warning: true,
        torque_centre: [0.0; 2],
        shell_layers_reached: 2,
    };
    f.add_method(main, settings);
    f
}

const EGG2: ForceMethod = ForceMethod::Eggshell { layers: 2 };
const EGG1: ForceMethod = ForceMethod::Eggshell { layers: 1 };

#[test]
fn relative_spread_is_range_over_largest_magnitude_or_floor() {
    // (3 - 1) / 3.
    assert_eq!(relative_spread(&[1.0, 3.0, 2.0], 0.0), 2.0 / 3.0);
    // (2 - (-4)) / 4: the scale is the largest magnitude, not the largest value.
    assert_eq!(relative_spread(&[-4.0, 2.0], 0.0), 1.5);
    // (-1 - (-3)) / 3.
    assert_eq!(relative_spread(&[-1.0, -3.0], 0.0), 2.0 / 3.0);
    // A floor above the values: (2 - 1) / 10, whatever its sign.
    assert_eq!(relative_spread(&[1.0, 2.0], 10.0), 0.1);
    assert_eq!(relative_spread(&[1.0, 2.0], -10.0), 0.1);
    // A floor below the values changes nothing: (2 - 1) / 2.
    assert_eq!(relative_spread(&[1.0, 2.0], 0.5), 0.5);
    // One value, all zeros, and no values at all (with or without a floor) give 0.
    assert_eq!(relative_spread(&[5.0], 0.0), 0.0);
    assert_eq!(relative_spread(&[0.0, 0.0], 0.0), 0.0);
    assert_eq!(relative_spread(&[], 0.0), 0.0);
    assert_eq!(relative_spread(&[], 1.0), 0.0);
}

#[test]
fn vector_spread_is_largest_distance_over_largest_magnitude_or_floor() {
    // |(3, 4) - (0, 0)| / |(3, 4)| = 5 / 5.
    assert_eq!(vector_spread(&[[3.0, 4.0], [0.0, 0.0]], 0.0), 1.0);
    // The farthest pair is (1, 0) and (-1, 0): 2 / 1.
    assert_eq!(
        vector_spread(&[[1.0, 0.0], [0.0, 1.0], [-1.0, 0.0]], 0.0),
        2.0
    );
    // Distance (6 - 2, 8 - 5) = (4, 3): 5, over |(6, 8)| = 10.
    assert_eq!(vector_spread(&[[2.0, 5.0], [6.0, 8.0]], 0.0), 0.5);
    // Distance 1 over a floor of 4 (either sign), or over |(1, 1)| when the floor is smaller.
    assert_eq!(vector_spread(&[[1.0, 0.0], [1.0, 1.0]], 4.0), 0.25);
    assert_eq!(vector_spread(&[[1.0, 0.0], [1.0, 1.0]], -4.0), 0.25);
    assert_eq!(
        vector_spread(&[[1.0, 0.0], [1.0, 1.0]], 1.0),
        1.0 / 2.0_f64.sqrt()
    );
    // Nothing to compare, or nothing but zeros.
    assert_eq!(vector_spread(&[], 0.0), 0.0);
    assert_eq!(vector_spread(&[[0.0, 0.0], [0.0, 0.0]], 0.0), 0.0);
    assert_eq!(vector_spread(&[[2.0, 1.0]], 0.0), 0.0);
}

#[test]
fn uncertainty_is_the_spread_or_the_weighted_thickness_check_whichever_is_larger() {
    assert_eq!(THICKNESS_CHECK_FACTOR, 10.0);
    assert_eq!(TORQUE_THICKNESS_CHECK_FACTOR, 20.0);
    let settings = ForceSettings::default();
    let mut f = start(method(EGG2, [10.0, 0.0], 1.0, true), &settings);
    // One method: nothing to compare.
    assert_eq!(
        (f.force_spread, f.force_uncertainty, f.relative_uncertainty),
        (0.0, 0.0, 0.0)
    );
    assert_eq!((f.torque_spread, f.torque_uncertainty), (0.0, 0.0));
    assert!(!f.warning);
    f.add_method(method(EGG1, [10.0, 0.2], 1.5, true), &settings);
    f.add_method(
        method(ForceMethod::StressMidLine, [10.5, 0.0], 3.0, true),
        &settings,
    );
    assert_eq!(f.methods.len(), 3);
    // Forces: the largest pairwise distance is |(10.5, 0) - (10, 0.2)| = sqrt(0.29), the
    // thickness check |(10, 0.2) - (10, 0)| = 0.2, times 10 = 2 (the mid-line is not an
    // eggshell: 10 x 0.5 = 5 would be wrong). Scale: |(10.5, 0)| = 10.5.
    assert_eq!(f.force_spread, 0.29_f64.sqrt() / 10.5);
    assert_eq!(f.force_uncertainty, 2.0);
    assert_eq!(f.relative_uncertainty, 2.0 / 10.5);
    // Torques 1, 1.5, 3: spread (3 - 1) / 3, uncertainty max(2, 20 x 0.5) = 10.
    assert_eq!(f.torque_spread, 2.0 / 3.0);
    assert_eq!(f.torque_uncertainty, 10.0);
    // 2 / 10.5 = 0.19 is above the default tolerance of 0.05.
    assert!(f.warning);
    // The spread wins when the eggshells agree: (8, 0), (8, 0), (6, 0): 2, and 10 x 0 = 0.
    let f = [
        method(EGG2, [8.0, 0.0], -2.0, true),
        method(EGG1, [8.0, 0.0], -2.0, true),
        method(ForceMethod::StressPath, [6.0, 0.0], 4.0, true),
    ]
    .into_iter()
    .fold(None::<BodyForce>, |acc, m| match acc {
        None => Some(start(m, &settings)),
        Some(mut f) => {
            f.add_method(m, &settings);
            Some(f)
        }
    })
    .unwrap();
    assert_eq!(f.force_uncertainty, 2.0);
    assert_eq!(f.relative_uncertainty, 0.25);
    // Torques -2, -2, 4: (4 - (-2)) / 4 and 6.
    assert_eq!(f.torque_spread, 1.5);
    assert_eq!(f.torque_uncertainty, 6.0);
}

#[test]
fn warning_is_set_exactly_when_the_relative_uncertainty_exceeds_the_tolerance() {
    // Main (8, 0) and mid-line (6, 0): uncertainty 2, relative 2 / 8 = 0.25 exactly.
    for (tolerance, warn) in [(0.25, false), (0.2499, true), (0.3, false), (0.0, true)] {
        let settings = ForceSettings {
            spread_warning: tolerance,
            ..ForceSettings::default()
        };
        let mut f = start(method(EGG2, [8.0, 0.0], 0.0, true), &settings);
        f.add_method(
            method(ForceMethod::StressMidLine, [6.0, 0.0], 0.0, true),
            &settings,
        );
        assert_eq!(f.relative_uncertainty, 0.25);
        assert_eq!(f.warning, warn, "tolerance {tolerance}");
    }
    // A force floor of 16 halves the relative values: 2 / 16 and 2 / 16.
    let settings = ForceSettings {
        force_floor: 16.0,
        spread_warning: 0.2,
        ..ForceSettings::default()
    };
    let mut f = start(method(EGG2, [8.0, 0.0], 0.0, true), &settings);
    f.add_method(
        method(ForceMethod::StressMidLine, [6.0, 0.0], 0.0, true),
        &settings,
    );
    assert_eq!((f.force_spread, f.relative_uncertainty), (0.125, 0.125));
    assert_eq!(f.force_uncertainty, 2.0);
    assert!(!f.warning);
    // No force at all: nothing relative to warn about (0, not 0 / 0).
    let settings = ForceSettings::default();
    let mut f = start(method(EGG2, [0.0, 0.0], 0.0, true), &settings);
    f.add_method(method(EGG1, [0.0, 0.0], 0.0, true), &settings);
    assert_eq!(
        (f.force_spread, f.force_uncertainty, f.relative_uncertainty),
        (0.0, 0.0, 0.0)
    );
    assert!(!f.warning);
}

#[test]
fn axisymmetric_results_carry_no_torque_spread() {
    // Axisymmetric (no depth): torques are 0 by construction; even inconsistent ones are not
    // reported as a spread. The force part still works: (0, -3) and (0, -4): 1 / 4.
    let settings = ForceSettings::default();
    let mut f = start(method(EGG2, [0.0, -3.0], 1.0, false), &settings);
    f.add_method(method(EGG1, [0.0, -4.0], 5.0, false), &settings);
    assert_eq!((f.torque_spread, f.torque_uncertainty), (0.0, 0.0));
    assert_eq!(f.force_spread, 0.25);
    // max(1, 10 x 1) = 10, relative 10 / 4.
    assert_eq!(f.force_uncertainty, 10.0);
    assert_eq!(f.relative_uncertainty, 2.5);
    assert!(f.warning);
}
