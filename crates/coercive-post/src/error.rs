//! The post-processing error type.

use coercive_fem::FemError;
use thiserror::Error;

/// Invalid input to a post-processing query, naming the offending point, path, region or
/// winding.
#[derive(Debug, Error)]
#[non_exhaustive]
pub enum PostError {
    /// A point lies outside every triangle of the mesh (outside the domain or in a hole).
    #[error("point ({x} m, {y} m) is outside the mesh")]
    PointOutsideMesh {
        /// Abscissa, or radius r in axisymmetric models (m).
        x: f64,
        /// Ordinate, or axial coordinate z in axisymmetric models (m).
        y: f64,
    },
    /// A path leaves the meshed domain; the first sample outside is named.
    #[error("path leaves the mesh at sample {index}, point ({x} m, {y} m)")]
    PathOutsideMesh {
        /// Index of the first sample outside the mesh.
        index: usize,
        /// Its abscissa (m).
        x: f64,
        /// Its ordinate (m).
        y: f64,
    },
    /// A region name that the mesh does not have.
    #[error("{what}: unknown region `{region}`")]
    UnknownRegion {
        /// What asked for the region.
        what: String,
        /// The name given.
        region: String,
    },
    /// A region without any area (no triangles, or zero area).
    #[error("{what}: region `{region}` is empty")]
    EmptyRegion {
        /// What asked for the region.
        what: String,
        /// The region's name.
        region: String,
    },
    /// A winding name that the model does not have.
    #[error("unknown winding `{winding}`; the model has {known:?}")]
    UnknownWinding {
        /// The name given.
        winding: String,
        /// The windings the model has.
        known: Vec<String>,
    },
    /// A winding with zero (or non-finite) turns.
    #[error("winding `{winding}` has {turns} turns; a winding needs a non-zero number of turns")]
    ZeroTurns {
        /// The winding's name.
        winding: String,
        /// Its number of turns.
        turns: f64,
    },
    /// A quantity that divides by the winding current (apparent inductance) at zero current.
    #[error("winding `{winding}` carries zero current: {what} is undefined")]
    ZeroCurrent {
        /// The winding's name.
        winding: String,
        /// The quantity asked for.
        what: String,
    },
    /// A numeric argument out of range (e.g. fewer than 2 samples, a negative step).
    #[error("{what} = {value} is invalid: {reason}")]
    InvalidArgument {
        /// The argument.
        what: String,
        /// Its value.
        value: f64,
        /// Why it is rejected.
        reason: String,
    },
    /// A point locator built for another mesh was given with a solution.
    #[error("the point locator was built for a different mesh ({locator_triangles} triangles, the solution's mesh has {mesh_triangles})")]
    LocatorMeshMismatch {
        /// Triangles of the locator's mesh.
        locator_triangles: usize,
        /// Triangles of the solution's mesh.
        mesh_triangles: usize,
    },
    /// The solver failed in an extra solve (e.g. the perturbed solves of an incremental
    /// inductance).
    #[error("{what}: {source}")]
    Solve {
        /// What the extra solve was for.
        what: String,
        /// The solver's error.
        #[source]
        source: FemError,
    },
    /// A table could not be serialised.
    #[error("could not write {what}: {reason}")]
    Serialise {
        /// The table.
        what: String,
        /// The serialiser's message.
        reason: String,
    },
    /// A force body without any triangle (no region named, or its regions are empty).
    #[error("force body `{body}` is empty: name at least one meshed region")]
    EmptyBody {
        /// The body's regions joined by `+`.
        body: String,
    },
    /// A force body touches a region that is neither air nor part of the body, so no air
    /// shell can separate them (include that region in the body).
    #[error(
        "the air shell around body `{body}` cannot separate its region `{body_region}` from          region `{region}` (not air) at ({x} m, {y} m): include `{region}` in the body or leave          air between them"
    )]
    ShellNotInAir {
        /// The body's regions joined by `+`.
        body: String,
        /// The body region at the contact.
        body_region: String,
        /// The non-air region it touches.
        region: String,
        /// Abscissa of a contact node (m).
        x: f64,
        /// Ordinate of a contact node (m).
        y: f64,
    },
    /// A force body touches the outer boundary of the mesh (allowed in axisymmetric models
    /// only on the axis).
    #[error(
        "force body `{body}` touches the outer boundary at ({x} m, {y} m): surround it with air"
    )]
    BodyOnBoundary {
        /// The body's regions joined by `+`.
        body: String,
        /// Abscissa of a boundary node of the body (m).
        x: f64,
        /// Ordinate of a boundary node of the body (m).
        y: f64,
    },
    /// A force path or air gap crosses a region that is not air (relative permeability 1
    /// and no current).
    #[error("{what} crosses region `{region}`, which is not air, at ({x} m, {y} m)")]
    NotInAir {
        /// The path or gap.
        what: String,
        /// The region crossed.
        region: String,
        /// Abscissa of a point in that region (m).
        x: f64,
        /// Ordinate of a point in that region (m).
        y: f64,
    },
    /// A triangle straddles a radius of an air-gap annulus.
    #[error(
        "triangle {triangle} near ({x} m, {y} m) straddles a radius of the air-gap annulus:          give radii on which the mesh has nodes, or the gap region's name"
    )]
    AnnulusCutsMesh {
        /// The triangle's index.
        triangle: usize,
        /// Abscissa of its centroid (m).
        x: f64,
        /// Ordinate of its centroid (m).
        y: f64,
    },
    /// A method that does not apply to this kind of model.
    #[error("unsupported: {what}")]
    Unsupported {
        /// What was asked.
        what: String,
    },
    /// Two solutions that cannot be combined (e.g. a co-energy difference between a planar
    /// and an axisymmetric model).
    #[error("incompatible solutions: {reason}")]
    IncompatibleSolutions {
        /// Why.
        reason: String,
    },
    /// A force body that holds part of a moving part (or the moving part and more): the
    /// co-energy difference gives the moving part's force as a whole, not the body's.
    #[error(
        "force body `{body}` overlaps the moving part `{moving}` without being it: the \
         co-energy difference gives the force on `{moving}` as a whole; choose the moving \
         part's regions or regions disjoint from them"
    )]
    BodyOverlapsMovingPart {
        /// The body's regions joined by `+`.
        body: String,
        /// The moving part's regions joined by `+`.
        moving: String,
    },
    /// An internal evaluation failed where it should not (a bug: please report it).
    #[error("internal error: {reason}")]
    Internal {
        /// What failed.
        reason: String,
    },
}
