//! The mesher's error type.

use thiserror::Error;

/// Everything that can go wrong while describing or meshing a geometry. Each variant names
/// the offending item (and its position where useful). Coordinates are in metres.
#[derive(Debug, Clone, PartialEq, Error)]
#[non_exhaustive]
pub enum MeshError {
    /// A mesh whose structural invariants do not hold.
    #[error("invalid mesh: {what}")]
    InvalidMesh {
        /// The violated invariant.
        what: String,
    },
    /// One item of a mesh (a triangle, vertex, region, curve or curve pair, numbered from 1 as
    /// in every message of the project) breaks an invariant: typically a stored mesh read back
    /// with serde or built with [`Mesh::from_parts`](crate::Mesh::from_parts).
    #[error("invalid mesh: {item} {why}")]
    InvalidMeshItem {
        /// The offending item, e.g. `triangle 12 (vertices 3, 8, 9) in region "air"`.
        item: String,
        /// What is wrong with it.
        why: String,
    },
    /// An id passed to a `try_` accessor of a [`Mesh`](crate::Mesh) that the mesh does not hold.
    #[error("{kind} id {id} does not exist: the mesh has {count} of them (ids start at 0)")]
    UnknownId {
        /// What the id names: `vertex`, `triangle`, `region` or `curve`.
        kind: String,
        /// The id as given (ids are 0-based handles).
        id: u32,
        /// How many items of this kind the mesh holds.
        count: usize,
    },
    /// The geometry has no curves or no region.
    #[error("empty geometry: {what}")]
    EmptyGeometry {
        /// What is missing.
        what: String,
    },
    /// A coordinate (of a point, arc centre or region point) is NaN or infinite.
    #[error("{item} has a non-finite coordinate ({x}, {y})")]
    NonFiniteCoordinate {
        /// The offending item, e.g. `point 3` or `region "air"`.
        item: String,
        /// Abscissa as given.
        x: f64,
        /// Ordinate as given.
        y: f64,
    },
    /// A point with a coordinate the triangulation cannot hold: nonzero but below 1e-40 m in
    /// magnitude (write 0), or above 1e50 m.
    #[error("{item} has a coordinate out of range ({x}, {y}): nonzero coordinates must lie between 1e-40 m and 1e50 m in magnitude (write a vanishing one as 0)")]
    CoordinateOutOfRange {
        /// The offending item, e.g. `point 3`.
        item: String,
        /// Abscissa as given (m).
        x: f64,
        /// Ordinate as given (m).
        y: f64,
    },
    /// A curve refers to a point id that does not exist.
    #[error("curve {curve} refers to point {point}, which does not exist")]
    UnknownPoint {
        /// Index of the curve.
        curve: usize,
        /// The missing point id.
        point: usize,
    },
    /// A curve or pair refers to a curve id that does not exist.
    #[error("{item} refers to curve {curve}, which does not exist")]
    UnknownCurve {
        /// The referring item.
        item: String,
        /// The missing curve id.
        curve: usize,
    },
    /// A name (region of a rigid group, region of a size) that no region carries.
    #[error("{item} names region \"{name}\", which does not exist")]
    UnknownRegion {
        /// The referring item.
        item: String,
        /// The unknown name.
        name: String,
    },
    /// Two regions or holes with the same name.
    #[error("region name \"{name}\" is used twice")]
    DuplicateRegionName {
        /// The repeated name.
        name: String,
    },
    /// A segment or arc whose two ends coincide.
    #[error("curve {curve} has zero length (both ends at ({x}, {y}))")]
    ZeroLengthCurve {
        /// Index of the curve.
        curve: usize,
        /// Abscissa of the ends.
        x: f64,
        /// Ordinate of the ends.
        y: f64,
    },
    /// Two segments joining the same two points.
    #[error("curves {first} and {second} are the same segment from ({x0}, {y0}) to ({x1}, {y1})")]
    DuplicateSegment {
        /// The first curve.
        first: usize,
        /// The repeated curve.
        second: usize,
        /// Start abscissa.
        x0: f64,
        /// Start ordinate.
        y0: f64,
        /// End abscissa.
        x1: f64,
        /// End ordinate.
        y1: f64,
    },
    /// An arc whose ends lie at different distances from its centre.
    #[error("arc {curve} about ({cx}, {cy}) has inconsistent radii {r_start} m and {r_end} m")]
    InconsistentArcRadii {
        /// Index of the curve.
        curve: usize,
        /// Centre abscissa.
        cx: f64,
        /// Centre ordinate.
        cy: f64,
        /// Radius at the start point (m).
        r_start: f64,
        /// Radius at the end point (m).
        r_end: f64,
    },
    /// A size (or setting) that is zero, negative, non-finite or out of range.
    #[error("{item} has an invalid value {value}: {why}")]
    InvalidSize {
        /// The offending item, e.g. `region "gap" size`.
        item: String,
        /// The value as given.
        value: f64,
        /// Why it is refused.
        why: String,
    },
    /// The sizes ask for more triangles than the caller's limit.
    #[error("the sizes ask for about {estimated} triangles, more than the limit {limit} (raise MeshSettings::max_triangles or use larger sizes){detail}")]
    TooManyTriangles {
        /// Estimated (or reached) number of triangles.
        estimated: usize,
        /// The limit in force.
        limit: usize,
        /// Where the smallest size comes from, if known.
        detail: String,
    },
    /// A region's point lies outside every closed outline, or its outline is open.
    #[error("region \"{region}\": the area around its point ({x}, {y}) is not closed (open outline, or the point lies outside the drawing)")]
    RegionNotClosed {
        /// The region (or hole) name.
        region: String,
        /// Seed abscissa.
        x: f64,
        /// Seed ordinate.
        y: f64,
    },
    /// A region's point lies on a curve or on a point.
    #[error("region \"{region}\": its point ({x}, {y}) lies on a curve")]
    SeedOnCurve {
        /// The region (or hole) name.
        region: String,
        /// Seed abscissa.
        x: f64,
        /// Seed ordinate.
        y: f64,
    },
    /// Two region points in the same area.
    #[error("regions \"{first}\" and \"{second}\" have their points in the same area (second point at ({x}, {y}))")]
    SeedsInSameArea {
        /// The first region.
        first: String,
        /// The second region.
        second: String,
        /// Abscissa of the second point.
        x: f64,
        /// Ordinate of the second point.
        y: f64,
    },
    /// A closed area that no region or hole point lies in.
    #[error("the closed area around ({x}, {y}) has no region or hole point")]
    AreaWithoutRegion {
        /// Abscissa of a point inside the area.
        x: f64,
        /// Ordinate of a point inside the area.
        y: f64,
    },
    /// A curve pair whose curves cannot get matched nodes.
    #[error("curve pair {pair} (curves {first} and {second}): {why}")]
    CurvePairMismatch {
        /// Index of the pair.
        pair: usize,
        /// First curve.
        first: usize,
        /// Second curve.
        second: usize,
        /// What does not match.
        why: String,
    },
    /// A rigid group problem (unknown group, region in two groups, overlap after a move).
    #[error("rigid group \"{group}\": {why}")]
    RigidGroup {
        /// The group's name.
        group: String,
        /// What went wrong, with coordinates where useful.
        why: String,
    },
    /// The triangulation library failed on this input (a last line of defence; please report
    /// the geometry).
    #[error("triangulation failed: {what}")]
    TriangulationFailed {
        /// What failed.
        what: String,
    },
}
