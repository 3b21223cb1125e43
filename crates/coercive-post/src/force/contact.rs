//! Force at contact (zero gap) as the limit of the force at small gaps.
//!
//! A body pressed against a workpiece has no air between them, so no air-based method
//! (eggshell, stress path) sees the force across the contact. The holding force is the limit
//! of the pull as the gap closes, F0 = lim F(g) for g -> 0+, i.e. -dW'/dg at the contact
//! (virtual work at zero gap). Where a pole edge meets a flat workpiece, the gap's permeance
//! carries a logarithmic term (the mutual inductance of touching loops grows like ln(1/g);
//! Maxwell's formula, e.g. Smythe, Static and Dynamic Electricity, 3rd ed., sec. 7.13), so
//! the force near contact behaves as
//!
//! F(g) = F0 + a g ln g + b g + O(g^2 ln g),
//!
//! and a plain linear extrapolation in g misses F0 by the g ln g term (1.4 % from 0.1 and
//! 0.05 mm on the magnet over an ideal iron plate of the tests). [`contact_force`] fits the
//! three terms exactly through the three smallest gaps (extrapolation with a logarithmic
//! term, e.g. Sidi, Practical Extrapolation Methods, Cambridge University Press, 2003, ch. 1,
//! from memory), and the same fit through the three largest gaps gives the uncertainty.
//!
//! # Limits
//! The expansion assumes a force that depends smoothly on the gap apart from the logarithm:
//! linear or ideal iron, and magnets on their recoil lines. A workpiece that saturates as the
//! gap closes, or a surface finish that keeps a real air film, changes the limit; the gaps
//! must be small against the pole (a few per cent of its width) for the O(g^2 ln g) rest to
//! be negligible, and the forces at neighbouring gaps should come from the same mesh layout
//! (a rigid group) so that their discretisation errors, which the weights of the fit amplify,
//! largely cancel.

use serde::{Deserialize, Serialize};

use crate::PostError;

/// The force at contact extrapolated from forces at small gaps.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct ContactForce {
    /// The force at zero gap, from the three smallest gaps (same unit as the inputs: N
    /// axisymmetric, N/m planar per metre of depth).
    pub force: f64,
    /// |force - the same fit through the three largest gaps| (same unit, >= 0): the
    /// extrapolation's error estimate.
    pub uncertainty: f64,
    /// The force at the smallest gap given (same unit).
    pub smallest_gap_force: f64,
    /// The smallest gap given (m).
    pub smallest_gap_m: f64,
}

/// The force at contact from forces at four or more small gaps (m), by the fit
/// F(g) = F0 + a g ln g + b g through the three smallest (see the module doc); the fit through
/// the three largest gives [`ContactForce::uncertainty`]. The gaps may come in any order.
///
/// # Errors
/// [`PostError::InvalidArgument`] when the slices differ in length, hold fewer than four
/// points, or a gap is not finite and positive, two gaps coincide, or a force is not finite.
pub fn contact_force(gaps_m: &[f64], forces: &[f64]) -> Result<ContactForce, PostError> {
    if gaps_m.len() != forces.len() {
        return Err(PostError::InvalidArgument {
            what: "number of forces for the contact extrapolation".into(),
            value: forces.len() as f64,
            reason: format!("must equal the number of gaps ({})", gaps_m.len()),
        });
    }
    if gaps_m.len() < 4 {
        return Err(PostError::InvalidArgument {
            what: "number of gaps for the contact extrapolation".into(),
            value: gaps_m.len() as f64,
            reason: "needs at least 4 (3 for the fit, 1 more for its error estimate)".into(),
        });
    }
    let mut points: Vec<(f64, f64)> = Vec::with_capacity(gaps_m.len());
    for (&g, &f) in gaps_m.iter().zip(forces) {
        if !(g.is_finite() && g > 0.0) {
            return Err(PostError::InvalidArgument {
                what: "gap (m) for the contact extrapolation".into(),
                value: g,
                reason: "must be finite and positive".into(),
            });
        }
        if !f.is_finite() {
            return Err(PostError::InvalidArgument {
                what: format!("force at the gap {g} m"),
                value: f,
                reason: "must be finite".into(),
            });
        }
        points.push((g, f));
    }
    points.sort_by(|a, b| a.0.total_cmp(&b.0));
    for w in points.windows(2) {
        if w[1].0 <= w[0].0 * (1.0 + 1e-9) {
            return Err(PostError::InvalidArgument {
                what: "gap (m) for the contact extrapolation".into(),
                value: w[1].0,
                reason: "appears twice".into(),
            });
        }
    }
    let n = points.len();
    let small = zero_gap_limit([points[0], points[1], points[2]]);
    let large = zero_gap_limit([points[n - 3], points[n - 2], points[n - 1]]);
    Ok(ContactForce {
        force: small,
        uncertainty: (small - large).abs(),
        smallest_gap_force: points[0].1,
        smallest_gap_m: points[0].0,
    })
}

/// F0 of F(g) = F0 + a x ln x + b x, x = g / s, through three points with s the largest gap
/// (the scaling keeps the system well conditioned; a change of s only mixes a into b, not
/// F0). At x = 1, F(s) = F0 + b, so F(x_k) - F(s) = a x_k ln x_k + b (x_k - 1) for the two
/// smaller points gives a and b, and F0 = F(s) - b.
fn zero_gap_limit(p: [(f64, f64); 3]) -> f64 {
    let s = p[2].0;
    let (x1, x2) = (p[0].0 / s, p[1].0 / s);
    let (d1, d2) = (p[0].1 - p[2].1, p[1].1 - p[2].1);
    let (l1, l2) = (x1 * x1.ln(), x2 * x2.ln());
    let (e1, e2) = (x1 - 1.0, x2 - 1.0);
    // a l_k + b e_k = d_k (k = 1, 2), by Cramer's rule.
    let b = (l1 * d2 - l2 * d1) / (l1 * e2 - l2 * e1);
    p[2].1 - b
}
