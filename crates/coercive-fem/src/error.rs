//! The error type of the field solver.

use thiserror::Error;

use crate::newton::NewtonFailure;

/// Everything that can go wrong while building a [`Model`](crate::Model) or solving it.
/// Each variant names the offending item.
#[derive(Debug, Clone, PartialEq, Error)]
#[non_exhaustive]
pub enum FemError {
    /// A meshed region has no material.
    #[error("region `{region}` has no material")]
    MissingMaterial {
        /// The region's name.
        region: String,
    },
    /// A material, source or boundary condition names a region the mesh does not have.
    #[error("{what} names region `{region}`, which is not a region of the mesh")]
    UnknownRegion {
        /// What referred to the region (e.g. "material", "winding `coil` side").
        what: String,
        /// The unknown region name.
        region: String,
    },
    /// A boundary condition names a curve the mesh does not have.
    #[error("{what} names curve `{curve}`, which is not a curve of the mesh")]
    UnknownCurve {
        /// What referred to the curve.
        what: String,
        /// The unknown curve name.
        curve: String,
    },
    /// Two materials were given for the same region.
    #[error("region `{region}` has more than one material")]
    DuplicateMaterial {
        /// The region's name.
        region: String,
    },
    /// A material's parameters are invalid.
    #[error("material of region `{region}` is invalid: {reason}")]
    InvalidMaterial {
        /// The region's name.
        region: String,
        /// Why (from the material's own validation).
        reason: String,
    },
    /// A winding is invalid (zero or non-finite turns, no sides, non-finite current).
    #[error("winding `{winding}` is invalid: {reason}")]
    InvalidWinding {
        /// The winding's name.
        winding: String,
        /// Why.
        reason: String,
    },
    /// A magnet state does not belong to the model it is used with.
    #[error("the magnet state does not fit this model: {reason}")]
    IncompatibleState {
        /// What differs.
        reason: String,
    },
    /// A pulse or load history is invalid (no steps, an unknown winding, a non-finite current).
    #[error("pulse: {reason}")]
    InvalidPulse {
        /// What is wrong.
        reason: String,
    },
    /// A number that must be finite is NaN or infinite.
    #[error("{what} is not a finite number ({value})")]
    NotFinite {
        /// Which input.
        what: String,
        /// The offending value.
        value: f64,
    },
    /// A parameter is out of its valid range.
    #[error("{what} = {value} is out of range: {reason}")]
    OutOfRange {
        /// Which input.
        what: String,
        /// The offending value.
        value: f64,
        /// The valid range.
        reason: String,
    },
    /// An open boundary whose circle leaves part of the rim it lies on without a condition:
    /// a boundary edge of the mesh on the circle (or on the exterior disc's circle) that no
    /// curve of the open boundary, and no other boundary condition, covers, so it would
    /// silently stay natural and the field there would not see the unbounded exterior.
    #[error(
        "open boundary on curve `{curve}`: only {covered_percent:.1} % of the rim of radius \
         {radius} m about ({centre_x} m, {centre_y} m) carries a boundary condition; the rim \
         edge from ({x0} m, {y0} m) to ({x1} m, {y1} m) belongs to no curve `{curve}` and has \
         no other condition, so it would silently be natural (name every arc of the rim \
         `{curve}`)"
    )]
    PartialOpenBoundary {
        /// The open boundary's curve name whose rim is incomplete (the circle, or the
        /// exterior disc's boundary).
        curve: String,
        /// The rim's radius (m).
        radius: f64,
        /// Abscissa of the rim's centre (m).
        centre_x: f64,
        /// Ordinate of the rim's centre (m).
        centre_y: f64,
        /// How much of the rim's length carries a boundary condition (%).
        covered_percent: f64,
        /// Abscissa of the first uncovered edge's start (m).
        x0: f64,
        /// Ordinate of the first uncovered edge's start (m).
        y0: f64,
        /// Abscissa of the first uncovered edge's end (m).
        x1: f64,
        /// Ordinate of the first uncovered edge's end (m).
        y1: f64,
    },
    /// A periodic, anti-periodic or open-boundary curve pair whose nodes do not match.
    #[error("curve pair `{first}` / `{second}` is not matched: {reason}")]
    UnmatchedCurvePair {
        /// Name of the first curve.
        first: String,
        /// Name of the second curve.
        second: String,
        /// What does not match.
        reason: String,
    },
    /// Constraints on one node contradict each other (e.g. two different fixed potentials).
    #[error("conflicting constraints at node {node} ({x} m, {y} m): {reason}")]
    ConflictingConstraints {
        /// The node (degree of freedom) index.
        node: usize,
        /// Abscissa of the node (m).
        x: f64,
        /// Ordinate of the node (m).
        y: f64,
        /// The conflict.
        reason: String,
    },
    /// The system is singular because part of the model has no fixed potential.
    #[error(
        "no fixed potential reaches regions {regions:?}: the potential there is undetermined \
         (add a fixed potential on one of their boundary curves)"
    )]
    FloatingRegions {
        /// Names of the regions whose potential floats.
        regions: Vec<String>,
    },
    /// The tangent matrix is not positive definite (at the node named).
    #[error(
        "the tangent matrix is not positive definite at node {node} ({x} m, {y} m) in region \
         `{region}`"
    )]
    NotPositiveDefinite {
        /// The node (degree of freedom) index.
        node: usize,
        /// Abscissa of the node (m).
        x: f64,
        /// Ordinate of the node (m).
        y: f64,
        /// A region containing the node.
        region: String,
    },
    /// The sparse factorisation failed for another reason (e.g. out of memory).
    #[error("sparse factorisation failed: {reason}")]
    Factorisation {
        /// The linear-algebra library's message.
        reason: String,
    },
    /// The requested combination is not implemented.
    #[error("unsupported: {what}")]
    Unsupported {
        /// What is unsupported, and why.
        what: String,
    },
    /// A solver (layout) built for one model was used with an incompatible one.
    #[error("the solver was prepared for a different mesh or constraint layout: {reason}")]
    IncompatibleModel {
        /// What differs.
        reason: String,
    },
    /// Newton-Raphson did not converge. The boxed report carries the last iterate and the
    /// residual history.
    #[error("{0}")]
    NewtonFailed(Box<NewtonFailure>),
    /// A point lies outside the triangle it was evaluated in.
    #[error("point ({x} m, {y} m) is outside triangle {triangle}")]
    PointOutsideTriangle {
        /// The triangle index.
        triangle: usize,
        /// Abscissa (m).
        x: f64,
        /// Ordinate (m).
        y: f64,
    },
}
