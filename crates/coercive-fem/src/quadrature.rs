//! Symmetric quadrature rules on triangles.
//!
//! Points are given in barycentric coordinates and weights sum to 1, so that
//! `integral over T of f = area(T) * sum_q w_q f(x_q)`. Every rule here has all its points
//! strictly inside the triangle, so an integrand with a 1/r factor is never evaluated on the
//! axis r = 0 of an axisymmetric model.
//!
//! # References
//! D. A. Dunavant, "High degree efficient symmetrical Gaussian quadrature rules for the
//! triangle", Int. J. Numer. Meth. Eng. 21 (1985) 1129-1148: the degree 2 (3 points),
//! degree 4 (6 points) and degree 5 (7 points) rules below are from its tables.

/// A quadrature rule on the reference triangle.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct TriangleRule {
    /// Barycentric coordinates of each point.
    pub points: &'static [[f64; 3]],
    /// Weights, summing to 1 (multiply by the triangle's area).
    pub weights: &'static [f64],
    /// Highest total polynomial degree integrated exactly.
    pub degree: u32,
}

impl TriangleRule {
    /// Number of points.
    #[inline]
    pub fn len(&self) -> usize {
        self.weights.len()
    }

    /// True for a rule without points (never the case for the rules of this module).
    #[inline]
    pub fn is_empty(&self) -> bool {
        self.weights.is_empty()
    }

    /// The rule with the fewest points integrating polynomials of `degree` exactly
    /// (degrees above 5 are not available and give the degree 5 rule).
    pub fn of_degree(degree: u32) -> TriangleRule {
        match degree {
            0 | 1 => CENTROID,
            2 => DUNAVANT_2,
            3 | 4 => DUNAVANT_4,
            _ => DUNAVANT_5,
        }
    }
}

const THIRD: f64 = 1.0 / 3.0;

/// One point at the centroid, degree 1.
pub const CENTROID: TriangleRule = TriangleRule {
    points: &[[THIRD, THIRD, THIRD]],
    weights: &[1.0],
    degree: 1,
};

/// Dunavant's 3-point rule, degree 2 (interior points).
pub const DUNAVANT_2: TriangleRule = TriangleRule {
    points: &[
        [2.0 / 3.0, 1.0 / 6.0, 1.0 / 6.0],
        [1.0 / 6.0, 2.0 / 3.0, 1.0 / 6.0],
        [1.0 / 6.0, 1.0 / 6.0, 2.0 / 3.0],
    ],
    weights: &[THIRD, THIRD, THIRD],
    degree: 2,
};

const D4_A1: f64 = 0.445_948_490_915_965;
const D4_B1: f64 = 0.108_103_018_168_070;
const D4_A2: f64 = 0.091_576_213_509_771;
const D4_B2: f64 = 0.816_847_572_980_459;
const D4_W1: f64 = 0.223_381_589_678_011;
const D4_W2: f64 = 0.109_951_743_655_322;

/// Dunavant's 6-point rule, degree 4.
pub const DUNAVANT_4: TriangleRule = TriangleRule {
    points: &[
        [D4_B1, D4_A1, D4_A1],
        [D4_A1, D4_B1, D4_A1],
        [D4_A1, D4_A1, D4_B1],
        [D4_B2, D4_A2, D4_A2],
        [D4_A2, D4_B2, D4_A2],
        [D4_A2, D4_A2, D4_B2],
    ],
    weights: &[D4_W1, D4_W1, D4_W1, D4_W2, D4_W2, D4_W2],
    degree: 4,
};

const D5_A1: f64 = 0.470_142_064_105_115;
const D5_B1: f64 = 0.059_715_871_789_770;
const D5_A2: f64 = 0.101_286_507_323_456;
const D5_B2: f64 = 0.797_426_985_353_087;
const D5_W0: f64 = 0.225;
const D5_W1: f64 = 0.132_394_152_788_506;
const D5_W2: f64 = 0.125_939_180_544_827;

/// Dunavant's 7-point rule, degree 5.
pub const DUNAVANT_5: TriangleRule = TriangleRule {
    points: &[
        [THIRD, THIRD, THIRD],
        [D5_B1, D5_A1, D5_A1],
        [D5_A1, D5_B1, D5_A1],
        [D5_A1, D5_A1, D5_B1],
        [D5_B2, D5_A2, D5_A2],
        [D5_A2, D5_B2, D5_A2],
        [D5_A2, D5_A2, D5_B2],
    ],
    weights: &[D5_W0, D5_W1, D5_W1, D5_W1, D5_W2, D5_W2, D5_W2],
    degree: 5,
};

#[cfg(test)]
mod tests {
    use super::*;

    /// Exact integral of x^i y^j over the reference triangle (0,0),(1,0),(0,1):
    /// i! j! / (i + j + 2)! (standard Beta-function identity).
    fn exact(i: u32, j: u32) -> f64 {
        let f = |n: u32| (1..=n).map(f64::from).product::<f64>();
        f(i) * f(j) / f(i + j + 2)
    }

    #[test]
    fn rules_integrate_monomials_up_to_their_degree() {
        for rule in [CENTROID, DUNAVANT_2, DUNAVANT_4, DUNAVANT_5] {
            assert!((rule.weights.iter().sum::<f64>() - 1.0).abs() < 1e-14);
            for p in rule.points {
                assert!(p.iter().all(|&l| l > 0.0), "point on the boundary");
                assert!((p.iter().sum::<f64>() - 1.0).abs() < 1e-14);
            }
            for i in 0..=rule.degree {
                for j in 0..=(rule.degree - i) {
                    // Point (x, y) = (l1, l2); area of the reference triangle 1/2.
                    let q: f64 = rule
                        .points
                        .iter()
                        .zip(rule.weights)
                        .map(|(p, w)| w * p[1].powi(i as i32) * p[2].powi(j as i32))
                        .sum::<f64>()
                        * 0.5;
                    assert!(
                        (q - exact(i, j)).abs() < 1e-13,
                        "degree {} rule fails on x^{i} y^{j}",
                        rule.degree
                    );
                }
            }
        }
    }

    #[test]
    fn degree_five_rule_is_not_exact_for_degree_six() {
        // Guards the test above against being vacuous.
        let q: f64 = DUNAVANT_5
            .points
            .iter()
            .zip(DUNAVANT_5.weights)
            .map(|(p, w)| w * p[1].powi(6))
            .sum::<f64>()
            * 0.5;
        assert!((q - exact(6, 0)).abs() > 1e-6);
    }
}
