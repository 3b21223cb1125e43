//! Constitutive laws: H(B) and its tangent dH/dB at one point, energy and co-energy densities.
//!
//! Materials are pure functions of the flux density (and, for later hysteretic laws, of a
//! committed state). The solver precomputes each magnet's easy axis per quadrature point and
//! passes it in, so position-dependent magnetisation patterns cost nothing here.

use serde::{Deserialize, Serialize};

use crate::bh::BhCurve;

/// Vacuum permeability mu_0 (H/m), the pre-2019 exact value 4 pi 1e-7 (the 2019 SI value
/// differs by less than 1e-9 relative).
pub const MU_0: f64 = 4.0e-7 * std::f64::consts::PI;

/// H (A/m) and the tangent dH/dB (A/(m T)) at one point.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Response {
    /// Field strength H (A/m).
    pub h: [f64; 2],
    /// Tangent dH_i/dB_j (A/(m T)), row i, column j. Symmetric for every law in this module.
    pub dh_db: [[f64; 2]; 2],
}

/// How a magnet's easy axis is laid out over its region.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
#[serde(tag = "pattern", rename_all = "snake_case")]
pub enum MagnetDirection {
    /// The same direction everywhere, at `angle` (radians, counter-clockwise from +x).
    Fixed {
        /// Angle of the easy axis (rad) from the +x axis.
        angle: f64,
    },
    /// Along the radius from `centre` at each point (outward, or inward if `outward` is false).
    Radial {
        /// Centre of the pattern (m).
        centre: [f64; 2],
        /// True for outward magnetisation.
        outward: bool,
    },
    /// Uniform over the region, along the line from `centre` to the region's centroid
    /// (outward, or inward if `outward` is false): parallel magnetisation of a machine pole.
    Parallel {
        /// Centre of the pattern (m).
        centre: [f64; 2],
        /// True for outward magnetisation.
        outward: bool,
    },
}

/// A linear permanent magnet: B = mu_0 mu_rec H + Br e along the easy axis e, and
/// B = mu_0 mu_perp H across it.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct LinearMagnet {
    /// Remanence Br (T), positive.
    pub remanence: f64,
    /// Recoil relative permeability along the easy axis (at least 1).
    pub recoil_permeability: f64,
    /// Relative permeability across the easy axis (usually equal to the recoil value).
    pub perpendicular_permeability: f64,
    /// Layout of the easy axis.
    pub direction: MagnetDirection,
}

/// A nonlinear isotropic soft magnetic material from a B-H curve.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct SoftMagnetic {
    /// The processed (monotone, stacking-factor-corrected) curve.
    pub curve: BhCurve,
}

/// A material law assigned to a region.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[non_exhaustive]
pub enum Material {
    /// Linear isotropic, B = mu_0 mu_r H.
    Linear {
        /// Relative permeability (positive).
        relative_permeability: f64,
    },
    /// Linear anisotropic (laminated stacks): principal relative permeabilities along and across
    /// the direction at `angle` (rad from +x).
    Anisotropic {
        /// Relative permeability along the principal direction.
        parallel: f64,
        /// Relative permeability across it.
        perpendicular: f64,
        /// Principal direction (rad from +x).
        angle: f64,
    },
    /// Nonlinear soft magnetic material.
    Soft(SoftMagnetic),
    /// Linear permanent magnet.
    Magnet(LinearMagnet),
}
