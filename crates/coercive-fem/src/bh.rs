//! Monotone B-H curves for nonlinear soft magnetic materials.

use serde::{Deserialize, Serialize};

/// A processed B-H curve: monotone interpolation of measured points, slope mu_0 beyond the
/// last point.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct BhCurve {
    /// Flux densities of the processed table (T), increasing from 0.
    b: Vec<f64>,
    /// Field strengths of the processed table (A/m), increasing from 0.
    h: Vec<f64>,
}
