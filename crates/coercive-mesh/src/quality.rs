//! The quality report of a mesh: counts, angles, size ratios, per-region figures.

use serde::{Deserialize, Serialize};

use crate::Point2;

/// Figures of one meshed region.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct RegionQuality {
    /// The region's name.
    pub name: String,
    /// Number of triangles.
    pub triangles: usize,
    /// Total area (m^2).
    pub area: f64,
    /// Smallest angle of its triangles (degrees).
    pub min_angle_deg: f64,
}

/// An input angle smaller than the requested minimum angle: triangles there keep it.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct SmallInputAngle {
    /// The apex (m).
    pub at: Point2,
    /// The angle between the two curves (degrees).
    pub angle_deg: f64,
}

/// Figures describing a mesh's quality.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct QualityReport {
    /// Number of nodes.
    pub nodes: usize,
    /// Number of triangles.
    pub triangles: usize,
    /// Smallest angle of any triangle (degrees).
    pub min_angle_deg: f64,
    /// Largest angle of any triangle (degrees).
    pub max_angle_deg: f64,
    /// The requested minimum angle (degrees).
    pub requested_min_angle_deg: f64,
    /// Triangles with an angle below the requested minimum (all next to small input angles
    /// or fixed curves).
    pub triangles_below_min_angle: usize,
    /// Largest ratio of a triangle's longest edge to the local size at its centroid.
    pub max_size_ratio: f64,
    /// Per-region figures, in mesh region order.
    pub regions: Vec<RegionQuality>,
    /// Input angles smaller than the requested minimum.
    pub small_input_angles: Vec<SmallInputAngle>,
}
