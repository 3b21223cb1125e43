//! Plane points in metres.

use serde::{Deserialize, Serialize};

/// A point (or vector) of the plane, in metres. In axisymmetric models `x` is the radius r
/// and `y` the axial coordinate z.
#[derive(Clone, Copy, Debug, PartialEq, Default, Serialize, Deserialize)]
pub struct Point2 {
    /// Abscissa (m), or radius r in axisymmetric models.
    pub x: f64,
    /// Ordinate (m), or axial coordinate z in axisymmetric models.
    pub y: f64,
}

impl Point2 {
    /// A point from its coordinates in metres.
    #[inline]
    pub const fn new(x: f64, y: f64) -> Self {
        Self { x, y }
    }

    /// Euclidean distance to `other` (m).
    #[inline]
    pub fn distance(self, other: Point2) -> f64 {
        let (dx, dy) = (self.x - other.x, self.y - other.y);
        (dx * dx + dy * dy).sqrt()
    }

    /// True when both coordinates are finite.
    #[inline]
    pub fn is_finite(self) -> bool {
        self.x.is_finite() && self.y.is_finite()
    }
}
