//! Case files: one TOML file describing one device (geometry, mesh settings and, in later
//! sections, materials, windings and boundary conditions). The format is documented in
//! `docs/case-format.md`.
//!
//! Reading a case checks the whole geometry part at once: unknown keys, unknown point names,
//! non-finite or negative numbers are reported as a [`CaseError`] carrying the line and column
//! (1-based) in the file. Lengths are converted from the declared `unit` to metres by dividing
//! by the exact number of units per metre, so `12.5` millimetres become the `f64` nearest to
//! 0.0125 m.

use std::collections::BTreeMap;
use std::fmt;
use std::path::{Path, PathBuf};

use coercive_fem::{
    library, BhCurve, HystereticMagnet, InitialMagnetisation, LinearMagnet, MagnetDirection,
    Material, MaterialError, OpenBoundary, Sense, SoftMagnetic, Winding,
};
use coercive_mesh::{
    CurveId, CurveShape, Geometry, GeometryPoint, GeometryRegion, Mesh, MeshError, MeshSettings,
    Point2, PointId, QualityReport, RigidGroup,
};
use serde::Deserialize;
use thiserror::Error;
use toml::Spanned;

/// A 1-based line and column in a case file.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Position {
    /// Line number, starting at 1.
    pub line: usize,
    /// Column (in characters), starting at 1.
    pub column: usize,
}

impl fmt::Display for Position {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "line {}, column {}", self.line, self.column)
    }
}

impl Position {
    /// The position of byte `offset` of `source` (clamped to the end of the text).
    pub fn of_offset(source: &str, offset: usize) -> Self {
        let mut offset = offset.min(source.len());
        while !source.is_char_boundary(offset) {
            offset -= 1;
        }
        let before = &source[..offset];
        let line = before.matches('\n').count() + 1;
        let line_start = before.rfind('\n').map_or(0, |i| i + 1);
        Self {
            line,
            column: source[line_start..offset].chars().count() + 1,
        }
    }
}

fn at(p: &Option<Position>) -> String {
    p.map_or_else(String::new, |p| format!(" ({p})"))
}

/// Everything that can go wrong while reading a case file or building its geometry.
#[derive(Debug, Clone, PartialEq, Error)]
#[non_exhaustive]
pub enum CaseError {
    /// The file could not be read.
    #[error("cannot read case file {}: {message}", path.display())]
    Io {
        /// The file.
        path: PathBuf,
        /// The operating system's message.
        message: String,
    },
    /// The text is not valid TOML, or does not follow the case format (an unknown key, a
    /// missing key, a value of the wrong type).
    #[error("{message}{}", at(position))]
    Syntax {
        /// What is wrong, as the TOML reader says it.
        message: String,
        /// Where, when known.
        position: Option<Position>,
    },
    /// A name refers to a point, curve or region that the file does not define.
    #[error("unknown {kind} `{name}` ({position})")]
    UnknownName {
        /// `point`, `curve`, `region`, ...
        kind: &'static str,
        /// The name as written.
        name: String,
        /// Where it is referred to.
        position: Position,
    },
    /// A name is defined twice where names must be unique.
    #[error("duplicate {kind} `{name}` ({position})")]
    DuplicateName {
        /// `point`, `region`, ...
        kind: &'static str,
        /// The name.
        name: String,
        /// Where the second definition is.
        position: Position,
    },
    /// Something is wrong inside a `[[material]]`, `[[winding]]` or `[[boundary]]` entry (an
    /// unknown key, two material laws, an unknown preset, region or curve, a bad value).
    #[error("[[{section}]] entry {index}{}: {what} ({position})", name.as_ref().map(|n| format!(" `{n}`")).unwrap_or_default())]
    Entry {
        /// `material`, `winding` or `boundary`.
        section: &'static str,
        /// Position of the entry among the section's entries, counted from 1.
        index: usize,
        /// The entry's name (a boundary's kind), when known.
        name: Option<String>,
        /// What is wrong.
        what: String,
        /// Where.
        position: Position,
    },
    /// A value is out of range or inconsistent (a non-finite coordinate, a negative size, an
    /// unknown unit, ...).
    #[error("{what} ({position})")]
    InvalidValue {
        /// What is wrong, naming the item.
        what: String,
        /// Where.
        position: Position,
    },
    /// The mesher rejected the geometry (or failed to mesh it). The position is that of the
    /// curve, region or curve pair the mesher names, when it names one.
    #[error("{source}{}", at(position))]
    Mesh {
        /// The mesher's error.
        source: coercive_mesh::MeshError,
        /// Where the offending item is defined in the case file, if known.
        position: Option<Position>,
    },
    /// A geometry that cannot be written as a case file (a non-finite number, a paired
    /// curve without a unique name).
    #[error("cannot write the geometry as a case file: {what}")]
    NotWritable {
        /// What prevents it.
        what: String,
    },
}

/// The length unit a case file declares with `unit = "..."`.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[non_exhaustive]
pub enum LengthUnit {
    /// `"m"`.
    Metre,
    /// `"cm"`.
    Centimetre,
    /// `"mm"`.
    Millimetre,
    /// `"um"` (micrometre).
    Micrometre,
    /// `"in"` (inch, 25.4 mm exactly).
    Inch,
}

impl LengthUnit {
    /// The unit spelled as in case files (`"m"`, `"cm"`, `"mm"`, `"um"`, `"in"`).
    pub fn symbol(self) -> &'static str {
        match self {
            Self::Metre => "m",
            Self::Centimetre => "cm",
            Self::Millimetre => "mm",
            Self::Micrometre => "um",
            Self::Inch => "in",
        }
    }

    /// Parses a unit symbol; `None` when unknown.
    pub fn from_symbol(s: &str) -> Option<Self> {
        Some(match s {
            "m" => Self::Metre,
            "cm" => Self::Centimetre,
            "mm" => Self::Millimetre,
            "um" | "µm" => Self::Micrometre,
            "in" => Self::Inch,
            _ => return None,
        })
    }

    /// Converts a length in this unit to metres. Decimal units divide by the exact number
    /// of units per metre (so the result is the double nearest to the true value); inches
    /// multiply by 0.0254 m.
    pub fn to_metres(self, v: f64) -> f64 {
        match self {
            Self::Metre => v,
            Self::Centimetre => v / 100.0,
            Self::Millimetre => v / 1e3,
            Self::Micrometre => v / 1e6,
            Self::Inch => v * 0.0254,
        }
    }

    /// Converts a length in metres to this unit (inverse of [`LengthUnit::to_metres`]).
    pub fn from_metres(self, v: f64) -> f64 {
        match self {
            Self::Metre => v,
            Self::Centimetre => v * 100.0,
            Self::Millimetre => v * 1e3,
            Self::Micrometre => v * 1e6,
            Self::Inch => v / 0.0254,
        }
    }
}

/// The field formulation a case declares with `formulation = "..."`.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[non_exhaustive]
pub enum CaseFormulation {
    /// `"planar"` (the default): x-y cross-section of a device of finite depth.
    Planar,
    /// `"axisymmetric"`: the r-z half plane, x is the radius r >= 0.
    Axisymmetric,
}

// ---------------------------------------------------------------------------------------------
// Raw file structure (serde). Unknown keys are rejected everywhere.

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawCase {
    unit: Spanned<String>,
    #[serde(default)]
    title: Option<String>,
    #[serde(default)]
    description: Option<String>,
    #[serde(default)]
    formulation: Option<Spanned<String>>,
    #[serde(default)]
    depth: Option<Spanned<f64>>,
    #[serde(default)]
    element_order: Option<Spanned<i64>>,
    #[serde(default)]
    mesh: RawMesh,
    #[serde(default)]
    geometry: RawGeometry,
    #[serde(default)]
    regions: BTreeMap<Spanned<String>, RawRegion>,
    // Sections for the solver.
    #[serde(default)]
    material: Vec<Spanned<RawMaterial>>,
    #[serde(default)]
    winding: Vec<Spanned<RawWinding>>,
    #[serde(default)]
    boundary: Vec<Spanned<RawBoundary>>,
    #[serde(default)]
    sweep: Option<Spanned<RawSweep>>,
    #[serde(default)]
    switching: Option<Spanned<RawSwitching>>,
    #[serde(default)]
    rotation: Option<Spanned<RawRotation>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawRotation {
    group: Spanned<String>,
    centre: Spanned<[f64; 2]>,
    body: Spanned<Vec<Spanned<String>>>,
    #[serde(default)]
    airgap: Option<Spanned<String>>,
    #[serde(default)]
    sectors: Option<Spanned<i64>>,
    from_deg: Spanned<f64>,
    to_deg: Spanned<f64>,
    step_deg: Spanned<f64>,
    #[serde(default)]
    phase: Option<Spanned<String>>,
    #[serde(default)]
    currents: Option<Spanned<Vec<f64>>>,
}

/// The optional `[rotation]` section: a moving part (rigid group) turned about a centre,
/// with the torque on a body and the flux linkage of every winding at each angle, or, with
/// a `phase`, the psi(theta, i) and T(theta, i) maps of that phase (see
/// `docs/case-format.md`). Lengths in metres, angles in radians.
#[derive(Clone, Debug, PartialEq)]
pub struct CaseRotation {
    /// The rigid group that turns.
    pub group: String,
    /// Centre of rotation (m).
    pub centre_m: [f64; 2],
    /// Regions whose torque is reported.
    pub body: Vec<String>,
    /// The air-gap band region for Arkkio's torque, if any.
    pub airgap: Option<String>,
    /// Number of sectors the model stands for (1: full cross-section).
    pub sectors: u32,
    /// Angles from the drawn position (rad), increasing.
    pub angles_rad: Vec<f64>,
    /// The phase whose maps are computed, if any.
    pub phase: Option<String>,
    /// Phase currents of the maps (A), as written.
    pub currents_a: Vec<f64>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawSwitching {
    moving_part: Spanned<String>,
    direction: Spanned<[f64; 2]>,
    drawn_gap: Spanned<f64>,
    gaps: Spanned<Vec<f64>>,
    workpiece: Spanned<Vec<Spanned<String>>>,
    pulse_gap: Spanned<f64>,
    coil: Spanned<String>,
    switched_magnet: Spanned<String>,
    guarded_magnet: Spanned<String>,
    off_current_sign: Spanned<f64>,
    full_pulse: Spanned<f64>,
    #[serde(default)]
    switched_fraction: Option<Spanned<f64>>,
    #[serde(default)]
    amplitude_tolerance: Option<Spanned<f64>>,
    #[serde(default)]
    recommended_margin: Option<Spanned<f64>>,
    #[serde(default)]
    partial_amplitudes: Option<Spanned<i64>>,
    #[serde(default)]
    pulse_duration_ms: Option<Spanned<f64>>,
    #[serde(default)]
    max_step: Option<Spanned<f64>>,
}

/// The optional `[switching]` section: the pulses that switch a switchable magnet ON and OFF
/// and the holding force in each state (see [`crate::switching`]). Lengths in metres,
/// currents in amperes per turn.
#[derive(Clone, Debug, PartialEq)]
pub struct CaseSwitching {
    /// The moving part (rigid group) carrying the magnets, poles and coil.
    pub moving_part: String,
    /// Unit vector of the moving part's motion that closes the gap.
    pub direction: [f64; 2],
    /// The gap as drawn (m).
    pub drawn_gap_m: f64,
    /// Gaps of the ON and OFF force curves (m).
    pub gaps_m: Vec<f64>,
    /// The workpiece's regions.
    pub workpiece: Vec<String>,
    /// The gap at which pulses are applied with the workpiece in place (m).
    pub pulse_gap_m: f64,
    /// The coil's winding.
    pub coil: String,
    /// The low-coercivity magnet's region.
    pub switched_magnet: String,
    /// The high-coercivity magnet's region.
    pub guarded_magnet: String,
    /// +1 or -1: the coil current sign that drives the switched magnet against its easy axis.
    pub off_current_sign: f64,
    /// A pulse (A per turn) that certainly switches fully.
    pub full_pulse_a: f64,
    /// Fraction of the full switch that counts as switched.
    pub switched_fraction: f64,
    /// Relative tolerance of the threshold.
    pub amplitude_tolerance: f64,
    /// Recommended pulse / threshold.
    pub recommended_margin: f64,
    /// Amplitudes of the partial-switching curve.
    pub partial_amplitudes: usize,
    /// Intended pulse duration (s), for the eddy-current note.
    pub pulse_duration_s: f64,
    /// Largest current change per load step as a fraction of the pulse's peak.
    pub max_step: f64,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawSweep {
    group: Spanned<String>,
    direction: Spanned<[f64; 2]>,
    #[serde(default)]
    offsets: Option<Spanned<Vec<f64>>>,
    #[serde(default)]
    gaps: Option<Spanned<Vec<f64>>>,
    #[serde(default)]
    drawn_gap: Option<Spanned<f64>>,
    body: Spanned<Vec<Spanned<String>>>,
}

/// What a `[sweep]`'s values are.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[non_exhaustive]
pub enum SweepParameter {
    /// `offsets`: displacements of the group along the direction.
    Offset,
    /// `gaps` with `drawn_gap`: the offset is `drawn_gap - gap`.
    Gap,
}

/// The optional `[sweep]` section: a rigid group moved along a direction, with the force on
/// a body reported at each point (see `docs/case-format.md`). Lengths in metres.
#[derive(Clone, Debug, PartialEq)]
pub struct CaseSweep {
    /// The rigid group that moves.
    pub group: String,
    /// Unit vector of the motion (normalised from the file's `direction`).
    pub direction: [f64; 2],
    /// Whether `values_m` are offsets or gaps.
    pub parameter: SweepParameter,
    /// The swept values as written, converted to metres (offsets or gaps).
    pub values_m: Vec<f64>,
    /// The displacement of the group along `direction` at each point (m).
    pub offsets_m: Vec<f64>,
    /// Regions whose force is reported.
    pub body: Vec<String>,
}

#[derive(Deserialize, Default)]
#[serde(deny_unknown_fields)]
struct RawMesh {
    #[serde(default)]
    max_size: Option<Spanned<f64>>,
    #[serde(default)]
    growth: Option<Spanned<f64>>,
    #[serde(default)]
    min_angle: Option<Spanned<f64>>,
    #[serde(default)]
    max_triangles: Option<Spanned<i64>>,
    #[serde(default)]
    chord_tolerance: Option<Spanned<f64>>,
    #[serde(default)]
    elements_across_gap: Option<Spanned<f64>>,
    #[serde(default)]
    snap_tolerance: Option<Spanned<f64>>,
}

#[derive(Deserialize, Default)]
#[serde(deny_unknown_fields)]
struct RawGeometry {
    #[serde(default)]
    points: BTreeMap<Spanned<String>, Spanned<toml::Value>>,
    #[serde(default)]
    segments: Vec<RawSegment>,
    #[serde(default)]
    arcs: Vec<RawArc>,
    #[serde(default)]
    polylines: Vec<RawPolyline>,
    #[serde(default)]
    rectangles: Vec<RawRectangle>,
    #[serde(default)]
    circles: Vec<RawCircle>,
    #[serde(default)]
    curve_pairs: Vec<RawCurvePair>,
    #[serde(default)]
    rigid_groups: BTreeMap<Spanned<String>, Vec<Spanned<String>>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawSegment {
    from: Spanned<String>,
    to: Spanned<String>,
    #[serde(default)]
    name: Option<Spanned<String>>,
    #[serde(default)]
    size: Option<Spanned<f64>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawArc {
    from: Spanned<String>,
    to: Spanned<String>,
    centre: Spanned<toml::Value>,
    #[serde(default)]
    clockwise: bool,
    #[serde(default)]
    name: Option<Spanned<String>>,
    #[serde(default)]
    size: Option<Spanned<f64>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawPolyline {
    points: Spanned<Vec<Spanned<toml::Value>>>,
    #[serde(default)]
    closed: bool,
    #[serde(default)]
    name: Option<Spanned<String>>,
    #[serde(default)]
    size: Option<Spanned<f64>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawRectangle {
    min: Spanned<[f64; 2]>,
    max: Spanned<[f64; 2]>,
    #[serde(default)]
    name: Option<Spanned<String>>,
    #[serde(default)]
    size: Option<Spanned<f64>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawCircle {
    centre: Spanned<toml::Value>,
    radius: Spanned<f64>,
    #[serde(default)]
    name: Option<Spanned<String>>,
    #[serde(default)]
    size: Option<Spanned<f64>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawCurvePair {
    first: Spanned<String>,
    second: Spanned<String>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawRegion {
    at: Spanned<[f64; 2]>,
    #[serde(default)]
    max_size: Option<Spanned<f64>>,
    #[serde(default)]
    hole: bool,
    #[serde(default)]
    material: Option<Spanned<String>>,
}

// ---------------------------------------------------------------------------------------------
// Solver sections: `[[material]]`, `[[winding]]`, `[[boundary]]`. Read with the rest of the
// case (one reader, positions kept) and checked against the geometry's names.

/// `[[material]]`: a name, exactly one law, and the modifiers that apply to that law.
///
/// A new law is one more optional field here and one more [`RawLaw`] variant (see
/// [`RawMaterial::laws`]).
#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawMaterial {
    name: Spanned<String>,
    // The laws (exactly one).
    #[serde(default)]
    preset: Option<Spanned<String>>,
    #[serde(default)]
    relative_permeability: Option<Spanned<f64>>,
    #[serde(default)]
    anisotropic: Option<Spanned<RawAnisotropic>>,
    #[serde(default)]
    bh: Option<Spanned<Vec<Spanned<[f64; 2]>>>>,
    #[serde(default)]
    saturating: Option<Spanned<RawSaturating>>,
    #[serde(default)]
    brauer: Option<Spanned<RawBrauer>>,
    #[serde(default)]
    remanence: Option<Spanned<f64>>,
    #[serde(default)]
    hysteresis: Option<Spanned<String>>,
    // Modifiers.
    #[serde(default)]
    stacking_factor: Option<Spanned<f64>>,
    #[serde(default)]
    recoil_permeability: Option<Spanned<f64>>,
    #[serde(default)]
    perpendicular_permeability: Option<Spanned<f64>>,
    #[serde(default)]
    direction_deg: Option<Spanned<f64>>,
    #[serde(default)]
    radial_centre: Option<Spanned<[f64; 2]>>,
    #[serde(default)]
    parallel_centre: Option<Spanned<[f64; 2]>>,
    #[serde(default)]
    outward: Option<Spanned<bool>>,
    #[serde(default)]
    initial: Option<Spanned<String>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawAnisotropic {
    parallel: f64,
    perpendicular: f64,
    #[serde(default)]
    angle_deg: f64,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawSaturating {
    js: f64,
    h0: f64,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawBrauer {
    k1: f64,
    k2: f64,
    k3: f64,
    #[serde(default)]
    exact: bool,
}

/// The law of a `[[material]]` entry, as written.
enum RawLaw<'a> {
    Preset(&'a Spanned<String>),
    Linear(&'a Spanned<f64>),
    Anisotropic(&'a Spanned<RawAnisotropic>),
    Table(&'a Spanned<Vec<Spanned<[f64; 2]>>>),
    Saturating(&'a Spanned<RawSaturating>),
    Brauer(&'a Spanned<RawBrauer>),
    Magnet(&'a Spanned<f64>),
    Hysteretic(&'a Spanned<String>),
}

impl RawMaterial {
    /// The laws given, with their key and the byte offset of their value, in key order.
    /// `remanence` next to a `preset` is an override of the preset (checked later), not a law.
    fn laws(&self) -> Vec<(&'static str, usize, RawLaw<'_>)> {
        let mut laws = Vec::new();
        if let Some(v) = &self.preset {
            laws.push(("preset", v.span().start, RawLaw::Preset(v)));
        }
        if let Some(v) = &self.relative_permeability {
            laws.push(("relative_permeability", v.span().start, RawLaw::Linear(v)));
        }
        if let Some(v) = &self.anisotropic {
            laws.push(("anisotropic", v.span().start, RawLaw::Anisotropic(v)));
        }
        if let Some(v) = &self.bh {
            laws.push(("bh", v.span().start, RawLaw::Table(v)));
        }
        if let Some(v) = &self.saturating {
            laws.push(("saturating", v.span().start, RawLaw::Saturating(v)));
        }
        if let Some(v) = &self.brauer {
            laws.push(("brauer", v.span().start, RawLaw::Brauer(v)));
        }
        if let (Some(v), None) = (&self.remanence, &self.preset) {
            laws.push(("remanence", v.span().start, RawLaw::Magnet(v)));
        }
        if let Some(v) = &self.hysteresis {
            laws.push(("hysteresis", v.span().start, RawLaw::Hysteretic(v)));
        }
        laws.sort_by_key(|l| l.1);
        laws
    }
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawWinding {
    name: Spanned<String>,
    turns: Spanned<f64>,
    current: Spanned<f64>,
    #[serde(default)]
    positive: Vec<Spanned<String>>,
    #[serde(default)]
    negative: Vec<Spanned<String>>,
    #[serde(default)]
    parallel_paths: Option<Spanned<i64>>,
    #[serde(default)]
    end_winding_inductance_mh: Option<Spanned<f64>>,
}

/// `[[boundary]]`: `kind` selects which of the other keys apply (checked after reading, so
/// that every key keeps its position).
#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawBoundary {
    kind: Spanned<String>,
    #[serde(default)]
    curve: Option<Spanned<String>>,
    #[serde(default)]
    value: Option<Spanned<f64>>,
    #[serde(default)]
    first: Option<Spanned<String>>,
    #[serde(default)]
    second: Option<Spanned<String>>,
    #[serde(default)]
    circle: Option<Spanned<String>>,
    #[serde(default)]
    exterior_boundary: Option<Spanned<String>>,
    #[serde(default)]
    exterior_region: Option<Spanned<String>>,
    #[serde(default)]
    exterior_centre: Option<Spanned<[f64; 2]>>,
}

/// One `[[material]]` entry: a named material law, ready for the solver (SI units).
#[derive(Clone, Debug, PartialEq)]
pub struct CaseMaterial {
    /// The entry's name (what regions write in `material = "..."`).
    pub name: String,
    /// The material law, built and validated when the file was read.
    pub material: Material,
    /// Electrical resistivity (Ohm m) when the law comes from a hysteretic magnet datasheet.
    pub resistivity_ohm_m: Option<f64>,
    /// Where the entry's name is written in the file.
    pub position: Position,
}

/// One `[[boundary]]` entry (curve names as in the geometry, lengths in metres).
#[derive(Clone, Debug, PartialEq)]
#[non_exhaustive]
pub enum CaseBoundary {
    /// `kind = "fixed"`: the potential on `curve` is `value` (Wb/m).
    FixedPotential {
        /// The curve name.
        curve: String,
        /// The potential (Wb/m); 0 makes the curve a flux line.
        value: f64,
    },
    /// `kind = "periodic"`: the potential on `second` equals that on `first`.
    Periodic {
        /// The first curve of the curve pair.
        first: String,
        /// The second curve of the curve pair.
        second: String,
    },
    /// `kind = "anti_periodic"`: the potential on `second` is minus that on `first`.
    AntiPeriodic {
        /// The first curve of the curve pair.
        first: String,
        /// The second curve of the curve pair.
        second: String,
    },
    /// `kind = "open"`: an open boundary by Kelvin transformation.
    Open(OpenBoundary),
}

/// The checked solver sections: materials, windings, boundaries.
type SolverSections = (Vec<CaseMaterial>, Vec<Winding>, Vec<CaseBoundary>);

/// The section, 1-based index and name of the `[[material]]`, `[[winding]]` or
/// `[[boundary]]` entry that contains byte `offset` of `source`, read from the table headers
/// before it. `None` outside these sections (or for entries written inline).
fn entry_at(source: &str, offset: usize) -> Option<(&'static str, usize, Option<String>)> {
    let mut current: Option<(&'static str, usize, usize)> = None; // (section, index, line)
    let mut counts = [0usize; 3];
    const SECTIONS: [&str; 3] = ["material", "winding", "boundary"];
    let mut line_start = 0;
    let lines: Vec<&str> = source.split('\n').collect();
    for (line_no, line) in lines.iter().enumerate() {
        if line_start > offset {
            break;
        }
        let t = line.trim();
        if let Some(rest) = t.strip_prefix("[[") {
            let header = rest.split("]]").next().unwrap_or("").trim();
            current = SECTIONS.iter().position(|s| *s == header).map(|k| {
                counts[k] += 1;
                (SECTIONS[k], counts[k], line_no)
            });
        } else if t.starts_with('[') {
            current = None;
        }
        line_start += line.len() + 1;
    }
    let (section, index, header_line) = current?;
    // The entry's `name = "..."`, between its header and the next header.
    let name = lines[header_line + 1..]
        .iter()
        .take_while(|l| !l.trim().starts_with('['))
        .find_map(|l| {
            let (key, value) = l.split_once('=')?;
            if key.trim() != "name" {
                return None;
            }
            let v = value.trim();
            let v = v.strip_prefix('"')?;
            Some(v[..v.find('"')?].to_string())
        });
    Some((section, index, name))
}

/// The TOML reader's message in the case file's words (no Rust type names).
fn plain_message(message: &str) -> String {
    let mut m = message.trim().to_string();
    for (from, to) in [
        ("expected f64", "expected a number"),
        ("expected i64", "expected an integer"),
        ("expected u8", "expected an integer"),
        ("expected usize", "expected an integer"),
        ("expected a sequence", "expected an array"),
        ("expected a map", "expected a table"),
        ("expected a string", "expected a string in quotes"),
        ("expected a borrowed string", "expected a string in quotes"),
        ("floating point", "number"),
    ] {
        m = m.replace(from, to);
    }
    while let Some(i) = m.find("struct ") {
        // `expected struct RawWinding` and similar: the case file only knows tables.
        let end = m[i + 7..]
            .find(|c: char| !c.is_alphanumeric() && c != '_')
            .map_or(m.len(), |e| i + 7 + e);
        m.replace_range(i..end, "a table");
    }
    m
}

// ---------------------------------------------------------------------------------------------

/// One curve-producing item of `[geometry]`.
enum CurveItem<'a> {
    Segment(&'a RawSegment),
    Arc(&'a RawArc),
    Polyline(&'a RawPolyline),
    Rectangle(&'a RawRectangle),
    Circle(&'a RawCircle),
}

/// Where each item of the built geometry comes from in the file.
#[derive(Clone, Debug, Default)]
struct Positions {
    curves: Vec<Position>,
    regions: Vec<Position>,
    curve_pairs: Vec<Position>,
    rigid_groups: Vec<Position>,
}

/// A case read from a TOML file. See `docs/case-format.md` for the format.
#[derive(Clone, Debug)]
pub struct Case {
    source: String,
    path: Option<PathBuf>,
    unit: LengthUnit,
    title: Option<String>,
    description: Option<String>,
    formulation: CaseFormulation,
    depth_m: Option<f64>,
    element_order: Option<u8>,
    geometry: Geometry,
    positions: Positions,
    region_materials: Vec<(String, Option<String>)>,
    materials: Vec<CaseMaterial>,
    windings: Vec<Winding>,
    boundaries: Vec<CaseBoundary>,
    sweep: Option<CaseSweep>,
    switching: Option<CaseSwitching>,
    rotation: Option<CaseRotation>,
}

impl Case {
    /// Reads a case from TOML text, checking the format and the geometry part (names,
    /// numbers, units).
    ///
    /// # Errors
    /// [`CaseError::Syntax`] for invalid TOML, unknown or missing keys and wrong types;
    /// [`CaseError::UnknownName`], [`CaseError::DuplicateName`] and
    /// [`CaseError::InvalidValue`] for bad references and values. All carry the line and
    /// column.
    pub fn from_toml_str(source: &str) -> Result<Self, CaseError> {
        let raw: RawCase = toml::from_str(source).map_err(|e| {
            let message = plain_message(e.message());
            match e.span() {
                Some(span) => match entry_at(source, span.start) {
                    Some((section, index, name)) => CaseError::Entry {
                        section,
                        index,
                        name,
                        what: message,
                        position: Position::of_offset(source, span.start),
                    },
                    None => CaseError::Syntax {
                        message,
                        position: Some(Position::of_offset(source, span.start)),
                    },
                },
                None => CaseError::Syntax {
                    message,
                    position: None,
                },
            }
        })?;
        Reader::new(source).case(raw)
    }

    /// Reads a case file.
    ///
    /// # Errors
    /// [`CaseError::Io`] when the file cannot be read, otherwise as
    /// [`Case::from_toml_str`].
    pub fn from_file(path: impl AsRef<Path>) -> Result<Self, CaseError> {
        let path = path.as_ref();
        let source = std::fs::read_to_string(path).map_err(|e| CaseError::Io {
            path: path.to_path_buf(),
            message: e.to_string(),
        })?;
        let mut case = Self::from_toml_str(&source)?;
        case.path = Some(path.to_path_buf());
        Ok(case)
    }

    /// The TOML text the case was read from (later sections parse their parts from it).
    pub fn source(&self) -> &str {
        &self.source
    }

    /// The file the case was read from, if it came from a file.
    pub fn path(&self) -> Option<&Path> {
        self.path.as_deref()
    }

    /// The declared length unit of the file (everything the case returns is in metres).
    pub fn unit(&self) -> LengthUnit {
        self.unit
    }

    /// The optional `title`.
    pub fn title(&self) -> Option<&str> {
        self.title.as_deref()
    }

    /// The optional `description`.
    pub fn description(&self) -> Option<&str> {
        self.description.as_deref()
    }

    /// The declared formulation (`planar` when not given).
    pub fn formulation(&self) -> CaseFormulation {
        self.formulation
    }

    /// The planar stack depth (m), if declared.
    pub fn depth(&self) -> Option<f64> {
        self.depth_m
    }

    /// The declared element order (1 or 2), if any.
    pub fn element_order(&self) -> Option<u8> {
        self.element_order
    }

    /// Region and hole names in file order.
    pub fn region_names(&self) -> Vec<&str> {
        self.geometry
            .regions
            .iter()
            .map(|r| r.name.as_str())
            .collect()
    }

    /// The `material` named in a region's `[regions.NAME]` table, if any.
    pub fn region_material(&self, region: &str) -> Option<&str> {
        self.region_materials
            .iter()
            .find(|(r, _)| r == region)
            .and_then(|(_, m)| m.as_deref())
    }

    /// The `[[material]]` entries, in file order, each with its validated law.
    pub fn materials(&self) -> &[CaseMaterial] {
        &self.materials
    }

    /// The material law a region's `material = "..."` names: a `[[material]]` entry of that
    /// name, else the library preset (magnets of presets point along +y).
    ///
    /// # Errors
    /// [`MaterialError::UnknownPreset`] when the name is neither (the reader already refuses
    /// such names in `[regions.NAME]` tables).
    pub fn material(&self, name: &str) -> Result<Material, MaterialError> {
        match self.materials.iter().find(|m| m.name == name) {
            Some(m) => Ok(m.material.clone()),
            None => library::preset(name),
        }
    }

    /// The `[[winding]]` entries, in file order (regions checked against the geometry).
    pub fn windings(&self) -> &[Winding] {
        &self.windings
    }

    /// The `[[boundary]]` entries, in file order (curves checked against the geometry).
    pub fn boundaries(&self) -> &[CaseBoundary] {
        &self.boundaries
    }

    /// The `[sweep]` section, if any (checked when the file was read).
    pub fn sweep(&self) -> Option<&CaseSweep> {
        self.sweep.as_ref()
    }

    /// The `[rotation]` section, if any (checked when the file was read).
    pub fn rotation(&self) -> Option<&CaseRotation> {
        self.rotation.as_ref()
    }

    /// The `[switching]` section, if any (checked when the file was read).
    pub fn switching(&self) -> Option<&CaseSwitching> {
        self.switching.as_ref()
    }

    /// The geometry part of the case, in metres, with the `[mesh]` settings.
    ///
    /// # Errors
    /// None today (every check of the file is done when reading it); the `Result` leaves
    /// room for geometry built from later sections.
    pub fn geometry(&self) -> Result<Geometry, CaseError> {
        Ok(self.geometry.clone())
    }

    /// Meshes the case's geometry and returns the mesh and its quality report.
    ///
    /// # Errors
    /// [`CaseError::Mesh`] with the mesher's error and, when it names a curve, region,
    /// curve pair or rigid group, the position of that item in the file.
    pub fn mesh_with_report(
        &self,
        geometry: &Geometry,
    ) -> Result<(Mesh, QualityReport), CaseError> {
        geometry
            .mesh_with_report()
            .map_err(|e| self.locate_mesh_error(e))
    }

    /// Wraps a mesher error on this case's geometry into [`CaseError::Mesh`], adding the
    /// file position of the item it names (curve, region, curve pair or rigid group) when
    /// known.
    pub fn locate_mesh_error(&self, source: MeshError) -> CaseError {
        let p = &self.positions;
        let region = |name: &str| {
            self.geometry
                .regions
                .iter()
                .position(|r| r.name == name)
                .and_then(|i| p.regions.get(i).copied())
        };
        let position = match &source {
            MeshError::UnknownPoint { curve, .. }
            | MeshError::ZeroLengthCurve { curve, .. }
            | MeshError::InconsistentArcRadii { curve, .. } => p.curves.get(*curve).copied(),
            MeshError::DuplicateSegment { second, .. } => p.curves.get(*second).copied(),
            MeshError::CurvePairMismatch { pair, .. } => p.curve_pairs.get(*pair).copied(),
            MeshError::RegionNotClosed { region: r, .. }
            | MeshError::SeedOnCurve { region: r, .. } => region(r),
            MeshError::SeedsInSameArea { second, .. } => region(second),
            MeshError::RigidGroup { group, .. } => self
                .geometry
                .rigid_groups
                .iter()
                .position(|g| &g.name == group)
                .and_then(|i| p.rigid_groups.get(i).copied()),
            _ => None,
        };
        CaseError::Mesh { source, position }
    }
}

/// Turns raw, spanned values into the geometry, converting lengths to metres.
struct Reader<'a> {
    source: &'a str,
    /// The byte offset of the start of every line of `source`, for positions in O(log n)
    /// (every item records its position, so a scan from the start of the file for each
    /// would make reading quadratic in the file's length).
    line_starts: Vec<usize>,
}

/// Lengths converted to metres, with the position of the value for messages.
impl Reader<'_> {
    fn new(source: &str) -> Reader<'_> {
        let line_starts = std::iter::once(0)
            .chain(source.match_indices('\n').map(|(i, _)| i + 1))
            .collect();
        Reader {
            source,
            line_starts,
        }
    }

    fn pos<T>(&self, s: &Spanned<T>) -> Position {
        self.position(s.span().start)
    }

    /// The position of byte `offset` of the source, as [`Position::of_offset`] gives it.
    fn position(&self, offset: usize) -> Position {
        let mut offset = offset.min(self.source.len());
        while !self.source.is_char_boundary(offset) {
            offset -= 1;
        }
        // The last line starting at or before `offset`.
        let line = self.line_starts.partition_point(|&start| start <= offset);
        let line_start = self.line_starts[line - 1];
        Position {
            line,
            column: self.source[line_start..offset].chars().count() + 1,
        }
    }

    fn invalid<T>(&self, s: &Spanned<T>, what: String) -> CaseError {
        CaseError::InvalidValue {
            what,
            position: self.pos(s),
        }
    }

    /// A strictly positive, finite length (a size or radius), in metres.
    fn positive(
        &self,
        unit: LengthUnit,
        v: &Option<Spanned<f64>>,
        what: &str,
    ) -> Result<Option<f64>, CaseError> {
        let Some(v) = v else { return Ok(None) };
        let x = *v.get_ref();
        if !(x.is_finite() && x > 0.0) {
            return Err(self.invalid(
                v,
                format!(
                    "{what} must be a positive length, got {x} {}",
                    unit.symbol()
                ),
            ));
        }
        Ok(Some(unit.to_metres(x)))
    }

    /// A positive, finite dimensionless number.
    fn positive_number(
        &self,
        v: &Option<Spanned<f64>>,
        what: &str,
        default: f64,
    ) -> Result<f64, CaseError> {
        match v {
            None => Ok(default),
            Some(v) if v.get_ref().is_finite() && *v.get_ref() > 0.0 => Ok(*v.get_ref()),
            Some(v) => Err(self.invalid(
                v,
                format!("{what} must be a positive number, got {}", v.get_ref()),
            )),
        }
    }

    /// Finite coordinates converted to metres (and, in axisymmetric cases, r >= 0).
    fn coords(
        &self,
        unit: LengthUnit,
        xy: [f64; 2],
        pos: Position,
        what: &str,
        axisymmetric: bool,
    ) -> Result<Point2, CaseError> {
        if !(xy[0].is_finite() && xy[1].is_finite()) {
            return Err(CaseError::InvalidValue {
                what: format!(
                    "{what}: coordinates must be finite, got [{}, {}]",
                    xy[0], xy[1]
                ),
                position: pos,
            });
        }
        if axisymmetric && xy[0] < 0.0 {
            return Err(CaseError::InvalidValue {
                what: format!(
                    "{what}: negative radius r = {} {} in an axisymmetric case",
                    xy[0],
                    unit.symbol()
                ),
                position: pos,
            });
        }
        Ok(Point2::new(unit.to_metres(xy[0]), unit.to_metres(xy[1])))
    }

    /// Reads `[x, y]` from a TOML value.
    fn value_xy(v: &toml::Value) -> Option<[f64; 2]> {
        let arr = v.as_array()?;
        if arr.len() != 2 {
            return None;
        }
        let num = |v: &toml::Value| v.as_float().or_else(|| v.as_integer().map(|i| i as f64));
        Some([num(&arr[0])?, num(&arr[1])?])
    }

    fn case(&self, raw: RawCase) -> Result<Case, CaseError> {
        let unit = LengthUnit::from_symbol(raw.unit.get_ref()).ok_or_else(|| {
            self.invalid(
                &raw.unit,
                format!(
                    "unknown length unit `{}` (use \"m\", \"cm\", \"mm\", \"um\" or \"in\")",
                    raw.unit.get_ref()
                ),
            )
        })?;
        let formulation = match &raw.formulation {
            None => CaseFormulation::Planar,
            Some(f) => match f.get_ref().as_str() {
                "planar" => CaseFormulation::Planar,
                "axisymmetric" => CaseFormulation::Axisymmetric,
                other => {
                    return Err(self.invalid(
                        f,
                        format!(
                            "unknown formulation `{other}` (use \"planar\" or \"axisymmetric\")"
                        ),
                    ))
                }
            },
        };
        let axi = formulation == CaseFormulation::Axisymmetric;
        let depth_m = self.positive(unit, &raw.depth, "depth")?;
        if let (true, Some(d)) = (axi, &raw.depth) {
            return Err(self.invalid(d, "an axisymmetric case has no depth".into()));
        }
        let element_order = match &raw.element_order {
            None => None,
            Some(o) if matches!(o.get_ref(), 1 | 2) => Some(*o.get_ref() as u8),
            Some(o) => {
                return Err(self.invalid(
                    o,
                    format!("element_order must be 1 or 2, got {}", o.get_ref()),
                ))
            }
        };
        let mut geometry = Geometry::new();
        geometry.settings = self.mesh_settings(unit, &raw.mesh)?;
        let mut positions = Positions::default();
        self.geometry(unit, &raw.geometry, axi, &mut geometry, &mut positions)?;

        // Regions in file order.
        let mut regions: Vec<(Spanned<String>, RawRegion)> = raw.regions.into_iter().collect();
        regions.sort_by_key(|(k, _)| k.span().start);
        let mut region_materials = Vec::new();
        for (name, r) in &regions {
            let what = format!("region `{}`", name.get_ref());
            let seed = self.coords(unit, *r.at.get_ref(), self.pos(&r.at), &what, axi)?;
            if let (true, Some(m)) = (r.hole, &r.material) {
                return Err(self.invalid(m, format!("{what} is a hole: it takes no material")));
            }
            geometry.regions.push(GeometryRegion {
                name: name.get_ref().clone(),
                seed,
                hole: r.hole,
                size: self.positive(unit, &r.max_size, &format!("{what}: max_size"))?,
            });
            positions.regions.push(self.pos(name));
            region_materials.push((
                name.get_ref().clone(),
                r.material.as_ref().map(|m| m.get_ref().clone()),
            ));
        }

        // Rigid groups (they name regions, so they are read after them).
        let mut groups: Vec<_> = raw.geometry.rigid_groups.iter().collect();
        groups.sort_by_key(|(k, _)| k.span().start);
        for (name, members) in groups {
            let mut names = Vec::with_capacity(members.len());
            for m in members {
                if !geometry.regions.iter().any(|r| &r.name == m.get_ref()) {
                    return Err(CaseError::UnknownName {
                        kind: "region",
                        name: m.get_ref().clone(),
                        position: self.pos(m),
                    });
                }
                if names.contains(m.get_ref()) {
                    return Err(CaseError::DuplicateName {
                        kind: "region in a rigid group",
                        name: m.get_ref().clone(),
                        position: self.pos(m),
                    });
                }
                if let Some(other) = geometry
                    .rigid_groups
                    .iter()
                    .find(|g| g.regions.contains(m.get_ref()))
                {
                    return Err(self.invalid(
                        m,
                        format!(
                            "region `{}` is already in rigid group `{}`",
                            m.get_ref(),
                            other.name
                        ),
                    ));
                }
                names.push(m.get_ref().clone());
            }
            if names.is_empty() {
                return Err(self.invalid(
                    name,
                    format!("rigid group `{}` has no region", name.get_ref()),
                ));
            }
            geometry.rigid_groups.push(RigidGroup {
                name: name.get_ref().clone(),
                regions: names,
            });
            positions.rigid_groups.push(self.pos(name));
        }

        let sweep = match &raw.sweep {
            None => None,
            Some(sw) => Some(self.sweep(unit, sw, &geometry)?),
        };

        let switching = match &raw.switching {
            None => None,
            Some(sw) => Some(self.switching(unit, sw, &geometry)?),
        };

        let spanned_materials: Vec<(&Spanned<String>, Option<&Spanned<String>>)> = regions
            .iter()
            .map(|(name, r)| (name, r.material.as_ref()))
            .collect();
        let (materials, windings, boundaries) = self.solver_sections(
            unit,
            axi,
            &geometry,
            &raw.material,
            &raw.winding,
            &raw.boundary,
            &spanned_materials,
        )?;
        let rotation = match &raw.rotation {
            None => None,
            Some(r) => Some(self.rotation(unit, r, &geometry, &windings)?),
        };
        if let (Some(sw), Some(raw_sw)) = (&switching, &raw.switching) {
            if !windings.iter().any(|w| w.name == sw.coil) {
                return Err(CaseError::UnknownName {
                    kind: "winding",
                    name: sw.coil.clone(),
                    position: self.pos(&raw_sw.get_ref().coil),
                });
            }
        }
        Ok(Case {
            source: self.source.to_string(),
            path: None,
            unit,
            title: raw.title,
            description: raw.description,
            formulation,
            depth_m,
            element_order,
            geometry,
            positions,
            region_materials,
            materials,
            windings,
            boundaries,
            sweep,
            switching,
            rotation,
        })
    }

    /// An error inside a solver-section entry.
    fn entry_error(
        &self,
        section: &'static str,
        index: usize,
        name: &str,
        offset: usize,
        what: String,
    ) -> CaseError {
        CaseError::Entry {
            section,
            index,
            name: Some(name.to_string()),
            what,
            position: self.position(offset),
        }
    }

    /// Reads one `[[material]]` entry (1-based `index`) into a validated material law.
    fn material(
        &self,
        unit: LengthUnit,
        axi: bool,
        index: usize,
        m: &RawMaterial,
    ) -> Result<CaseMaterial, CaseError> {
        let name = m.name.get_ref().as_str();
        let fail =
            |offset: usize, what: String| self.entry_error("material", index, name, offset, what);
        let laws = m.laws();
        let (law_key, law_offset, law) = match laws.len() {
            0 => {
                return Err(fail(
                    m.name.span().start,
                    "no material law: give one of `preset`, `relative_permeability`, \
                     `anisotropic`, `bh`, `saturating`, `brauer` or `remanence`"
                        .into(),
                ))
            }
            1 => laws
                .into_iter()
                .next()
                .ok_or_else(|| fail(0, String::new()))?,
            _ => {
                return Err(fail(
                    laws[1].1,
                    format!(
                        "two material laws, `{}` and `{}`: give exactly one per entry",
                        laws[0].0, laws[1].0
                    ),
                ))
            }
        };
        // A material error from the solver crate, in the file's words (points count from 1).
        let material_error = |offset: usize, e: MaterialError| {
            let text = match &e {
                MaterialError::NotFinite { index, .. }
                | MaterialError::Negative { index, .. }
                | MaterialError::OffOrigin { index, .. }
                | MaterialError::NotMonotone { index, .. }
                | MaterialError::FlatterThanVacuum { index, .. } => e.to_string().replacen(
                    &format!("point {index} "),
                    &format!("point {} ", index + 1),
                    1,
                ),
                _ => e.to_string(),
            };
            fail(offset, text)
        };
        let grade = match &law {
            RawLaw::Preset(p) => {
                Some(library::grade(p.get_ref()).map_err(|e| material_error(p.span().start, e))?)
            }
            _ => None,
        };
        let is_magnet = matches!(law, RawLaw::Magnet(_) | RawLaw::Hysteretic(_))
            || matches!(grade, Some(library::Grade::Magnet(_)));
        let hysteretic_sheet = match &law {
            RawLaw::Hysteretic(name) => Some(
                coercive_fem::datasheet(name.get_ref())
                    .map_err(|e| material_error(name.span().start, e))?,
            ),
            _ => None,
        };
        if let Some(init) = &m.initial {
            if hysteretic_sheet.is_none() {
                return Err(fail(
                    init.span().start,
                    "`initial` applies to hysteretic magnets (`hysteresis = \"...\"`) only".into(),
                ));
            }
        }
        if let (Some(r), Some(_)) = (&m.remanence, &hysteretic_sheet) {
            return Err(fail(
                r.span().start,
                "two material laws, `hysteresis` and `remanence`: give exactly one per entry"
                    .into(),
            ));
        }
        if let (Some(r), Some(_)) = (&m.recoil_permeability, &hysteretic_sheet) {
            return Err(fail(
                r.span().start,
                "`recoil_permeability` of a hysteretic magnet comes from its datasheet preset"
                    .into(),
            ));
        }
        let brauer_exact = matches!(&law, RawLaw::Brauer(b) if b.get_ref().exact);
        let is_curve = matches!(
            law,
            RawLaw::Table(_) | RawLaw::Saturating(_) | RawLaw::Brauer(_)
        ) || matches!(grade, Some(library::Grade::Steel(_)));
        let what_law = match &law {
            RawLaw::Preset(p) => format!("preset `{}`", p.get_ref()),
            _ => format!("`{law_key}`"),
        };
        // Modifiers that do not apply to this law are errors, never silently ignored.
        if let Some(r) = &m.remanence {
            if !is_magnet {
                return Err(fail(
                    r.span().start,
                    format!(
                        "two material laws, {what_law} and `remanence`: give exactly one per entry"
                    ),
                ));
            }
        }
        let magnet_keys = [
            (
                "recoil_permeability",
                m.recoil_permeability.as_ref().map(|v| v.span().start),
            ),
            (
                "perpendicular_permeability",
                m.perpendicular_permeability
                    .as_ref()
                    .map(|v| v.span().start),
            ),
            (
                "direction_deg",
                m.direction_deg.as_ref().map(|v| v.span().start),
            ),
            (
                "radial_centre",
                m.radial_centre.as_ref().map(|v| v.span().start),
            ),
            (
                "parallel_centre",
                m.parallel_centre.as_ref().map(|v| v.span().start),
            ),
            ("outward", m.outward.as_ref().map(|v| v.span().start)),
        ];
        if !is_magnet {
            if let Some((key, Some(offset))) = magnet_keys.iter().find(|(_, o)| o.is_some()) {
                return Err(fail(
                    *offset,
                    format!(
                        "`{key}` applies to magnets (`remanence` or a magnet preset), not to \
                         {what_law}"
                    ),
                ));
            }
        }
        let stacking = match &m.stacking_factor {
            None => None,
            Some(k) if brauer_exact => {
                return Err(fail(
                    k.span().start,
                    "`stacking_factor` needs a B-H table; it cannot be combined with \
                     `brauer.exact = true`"
                        .into(),
                ))
            }
            Some(k) if !is_curve => {
                return Err(fail(
                    k.span().start,
                    format!(
                        "`stacking_factor` applies to B-H curves (a steel preset, `bh`, \
                         `saturating` or `brauer`), not to {what_law}"
                    ),
                ))
            }
            Some(k) => Some(k),
        };
        let with_stacking = |c: BhCurve| match stacking {
            Some(k) => c
                .with_stacking_factor(*k.get_ref())
                .map_err(|e| material_error(k.span().start, e)),
            None => Ok(c),
        };
        // The easy axis: at most one of three keys.
        let directions: Vec<(&str, usize)> = magnet_keys[2..5]
            .iter()
            .filter_map(|(k, o)| o.map(|o| (*k, o)))
            .collect();
        if directions.len() > 1 {
            return Err(fail(
                directions[1].1,
                format!(
                    "two magnet directions, `{}` and `{}`: give one",
                    directions[0].0, directions[1].0
                ),
            ));
        }
        let outward = m.outward.as_ref().is_none_or(|o| *o.get_ref());
        if let (Some(o), None, None) = (&m.outward, &m.radial_centre, &m.parallel_centre) {
            return Err(fail(
                o.span().start,
                "`outward` goes with `radial_centre` or `parallel_centre`".into(),
            ));
        }
        let centre = |c: &Spanned<[f64; 2]>, key: &str| -> Result<[f64; 2], CaseError> {
            let p = self.coords(unit, *c.get_ref(), self.pos(c), key, axi)?;
            Ok([p.x, p.y])
        };
        let direction = if let Some(a) = &m.direction_deg {
            if !a.get_ref().is_finite() {
                return Err(fail(
                    a.span().start,
                    "`direction_deg` must be finite".into(),
                ));
            }
            Some(MagnetDirection::Fixed {
                angle: a.get_ref().to_radians(),
            })
        } else if let Some(c) = &m.radial_centre {
            Some(MagnetDirection::Radial {
                centre: centre(c, "radial_centre")?,
                outward,
            })
        } else if let Some(c) = &m.parallel_centre {
            Some(MagnetDirection::Parallel {
                centre: centre(c, "parallel_centre")?,
                outward,
            })
        } else {
            None
        };
        let recoil = m.recoil_permeability.as_ref().map(|v| *v.get_ref());
        let perpendicular = m.perpendicular_permeability.as_ref().map(|v| *v.get_ref());
        let material = match law {
            RawLaw::Preset(p) => match grade {
                Some(library::Grade::Magnet(mut g)) => {
                    if let Some(b) = &m.remanence {
                        g.remanence = *b.get_ref();
                    }
                    if let Some(r) = recoil {
                        g.recoil_permeability = r;
                        g.perpendicular_permeability = perpendicular.unwrap_or(r);
                    } else if let Some(q) = perpendicular {
                        g.perpendicular_permeability = q;
                    }
                    if let Some(d) = direction {
                        g = g.with_direction(d);
                    }
                    g.to_material()
                        .map_err(|e| material_error(p.span().start, e))?
                }
                Some(library::Grade::Steel(s)) => Material::Soft(SoftMagnetic {
                    curve: with_stacking(
                        s.curve().map_err(|e| material_error(p.span().start, e))?,
                    )?,
                }),
                Some(g) => g
                    .to_material()
                    .map_err(|e| material_error(p.span().start, e))?,
                None => return Err(fail(p.span().start, "unknown preset".into())),
            },
            RawLaw::Linear(mu) => Material::Linear {
                relative_permeability: *mu.get_ref(),
            },
            RawLaw::Anisotropic(a) => Material::Anisotropic {
                parallel: a.get_ref().parallel,
                perpendicular: a.get_ref().perpendicular,
                angle: a.get_ref().angle_deg.to_radians(),
            },
            RawLaw::Table(points) => {
                let pts: Vec<(f64, f64)> = points
                    .get_ref()
                    .iter()
                    .map(|p| (p.get_ref()[0], p.get_ref()[1]))
                    .collect();
                let curve = BhCurve::from_points(&pts).map_err(|e| {
                    let at = match &e {
                        MaterialError::NotFinite { index, .. }
                        | MaterialError::Negative { index, .. }
                        | MaterialError::OffOrigin { index, .. }
                        | MaterialError::NotMonotone { index, .. }
                        | MaterialError::FlatterThanVacuum { index, .. } => points
                            .get_ref()
                            .get(*index)
                            .map_or(points.span().start, |p| p.span().start),
                        _ => points.span().start,
                    };
                    material_error(at, e)
                })?;
                Material::Soft(SoftMagnetic {
                    curve: with_stacking(curve)?,
                })
            }
            RawLaw::Saturating(s) => Material::Soft(SoftMagnetic {
                curve: with_stacking(
                    BhCurve::saturating(s.get_ref().js, s.get_ref().h0)
                        .map_err(|e| material_error(s.span().start, e))?,
                )?,
            }),
            RawLaw::Brauer(b) => {
                let RawBrauer { k1, k2, k3, exact } = *b.get_ref();
                if exact {
                    // The closed-form law at every flux density, without the vacuum-slope
                    // continuation of the sampled curve.
                    Material::Brauer { k1, k2, k3 }
                } else {
                    Material::Soft(SoftMagnetic {
                        curve: with_stacking(
                            BhCurve::brauer(k1, k2, k3)
                                .map_err(|e| material_error(b.span().start, e))?,
                        )?,
                    })
                }
            }
            RawLaw::Hysteretic(name) => {
                let sheet = hysteretic_sheet
                    .as_ref()
                    .expect("a hysteresis law reads its sheet above");
                let fitted = coercive_fem::HysteresisLaw::fit(sheet)
                    .map_err(|e| material_error(name.span().start, e))?;
                let initial = match m.initial.as_ref().map(|i| i.get_ref().as_str()) {
                    None | Some("forward") => InitialMagnetisation::Forward,
                    Some("reverse") => InitialMagnetisation::Reverse,
                    Some(other) => {
                        let at = m.initial.as_ref().map_or(0, |i| i.span().start);
                        return Err(fail(
                            at,
                            format!("`initial` is \"forward\" or \"reverse\", got \"{other}\""),
                        ));
                    }
                };
                Material::Hysteretic(HystereticMagnet {
                    law: fitted.law,
                    perpendicular_permeability: perpendicular.unwrap_or(sheet.recoil_permeability),
                    direction: direction.ok_or_else(|| {
                        fail(
                            name.span().start,
                            "a magnet needs `direction_deg`, `radial_centre` or \
                             `parallel_centre`"
                                .into(),
                        )
                    })?,
                    initial,
                })
            }
            RawLaw::Magnet(br) => {
                let recoil = recoil.ok_or_else(|| {
                    fail(
                        br.span().start,
                        "a magnet needs `recoil_permeability`".into(),
                    )
                })?;
                Material::Magnet(LinearMagnet {
                    knee_field: None,
                    remanence: *br.get_ref(),
                    recoil_permeability: recoil,
                    perpendicular_permeability: perpendicular.unwrap_or(recoil),
                    direction: direction.ok_or_else(|| {
                        fail(
                            br.span().start,
                            "a magnet needs `direction_deg`, `radial_centre` or \
                             `parallel_centre`"
                                .into(),
                        )
                    })?,
                })
            }
        };
        material
            .validate()
            .map_err(|e| material_error(law_offset, e))?;
        Ok(CaseMaterial {
            resistivity_ohm_m: hysteretic_sheet.map(|s| s.resistivity),
            name: name.to_string(),
            material,
            position: self.pos(&m.name),
        })
    }

    /// Reads `[[material]]`, `[[winding]]` and `[[boundary]]` and checks every name they use
    /// (regions, curves, materials) against the geometry.
    #[allow(clippy::too_many_arguments)]
    fn solver_sections(
        &self,
        unit: LengthUnit,
        axi: bool,
        geometry: &Geometry,
        raw_materials: &[Spanned<RawMaterial>],
        raw_windings: &[Spanned<RawWinding>],
        raw_boundaries: &[Spanned<RawBoundary>],
        region_materials: &[(&Spanned<String>, Option<&Spanned<String>>)],
    ) -> Result<SolverSections, CaseError> {
        let mut materials: Vec<CaseMaterial> = Vec::new();
        for (i, m) in raw_materials.iter().enumerate() {
            let m = m.get_ref();
            if materials.iter().any(|x| &x.name == m.name.get_ref()) {
                return Err(CaseError::DuplicateName {
                    kind: "material",
                    name: m.name.get_ref().clone(),
                    position: self.pos(&m.name),
                });
            }
            materials.push(self.material(unit, axi, i + 1, m)?);
        }
        // Every region's material names an entry or a preset.
        for (region, material) in region_materials {
            let Some(material) = material else { continue };
            let name = material.get_ref();
            if materials.iter().any(|m| &m.name == name) {
                continue;
            }
            match library::grade(name) {
                Ok(_) => {}
                Err(e @ MaterialError::RetiredPreset { .. }) => {
                    return Err(
                        self.invalid(material, format!("region `{}`: {e}", region.get_ref()))
                    )
                }
                Err(_) => {
                    return Err(self.invalid(
                        material,
                        format!(
                            "region `{}`: unknown material `{name}` (not a [[material]] name; \
                             presets: {})",
                            region.get_ref(),
                            library::names().join(", ")
                        ),
                    ))
                }
            }
        }
        let region_exists = |r: &str| geometry.regions.iter().any(|g| g.name == r && !g.hole);
        let curve_exists = |c: &str| geometry.curves.iter().any(|g| g.name.as_deref() == Some(c));
        let mut windings: Vec<Winding> = Vec::new();
        for (i, w) in raw_windings.iter().enumerate() {
            let w = w.get_ref();
            let name = w.name.get_ref();
            let fail = |offset: usize, what: String| {
                self.entry_error("winding", i + 1, name, offset, what)
            };
            if windings.iter().any(|x| &x.name == name) {
                return Err(CaseError::DuplicateName {
                    kind: "winding",
                    name: name.clone(),
                    position: self.pos(&w.name),
                });
            }
            let turns = *w.turns.get_ref();
            if !(turns.is_finite() && turns != 0.0) {
                return Err(fail(
                    w.turns.span().start,
                    format!("`turns` must be finite and non-zero, got {turns}"),
                ));
            }
            let current = *w.current.get_ref();
            if !current.is_finite() {
                return Err(fail(
                    w.current.span().start,
                    format!("`current` must be finite, got {current} A"),
                ));
            }
            let mut winding = Winding::new(name, turns, current);
            if let Some(a) = &w.parallel_paths {
                let paths = *a.get_ref();
                if !(1..=1000).contains(&paths) {
                    return Err(fail(
                        a.span().start,
                        format!(
                            "`parallel_paths` must be a whole number from 1 to 1000, got {paths}"
                        ),
                    ));
                }
                winding = winding.parallel_paths(paths as u32);
            }
            if let Some(l) = &w.end_winding_inductance_mh {
                let mh = *l.get_ref();
                if !(mh.is_finite() && mh >= 0.0) {
                    return Err(fail(
                        l.span().start,
                        format!("`end_winding_inductance_mh` must be finite and >= 0, got {mh} mH"),
                    ));
                }
                winding = winding.end_turn_inductance(mh * 1e-3);
            }
            for (sides, sense) in [
                (&w.positive, Sense::Positive),
                (&w.negative, Sense::Negative),
            ] {
                for r in sides {
                    if !region_exists(r.get_ref()) {
                        return Err(fail(
                            r.span().start,
                            format!(
                                "unknown region `{}` (a side must be a meshed region)",
                                r.get_ref()
                            ),
                        ));
                    }
                    if winding.sides.iter().any(|s| &s.region == r.get_ref()) {
                        return Err(fail(
                            r.span().start,
                            format!("region `{}` is listed twice", r.get_ref()),
                        ));
                    }
                    winding = winding.side(r.get_ref(), sense);
                }
            }
            if winding.sides.is_empty() {
                return Err(fail(
                    w.name.span().start,
                    "a winding needs at least one side in `positive` or `negative`".into(),
                ));
            }
            windings.push(winding);
        }
        let mut boundaries = Vec::new();
        for (i, b) in raw_boundaries.iter().enumerate() {
            let b = b.get_ref();
            let kind = b.kind.get_ref().as_str();
            let fail = |offset: usize, what: String| CaseError::Entry {
                section: "boundary",
                index: i + 1,
                name: Some(kind.to_string()),
                what,
                position: self.position(offset),
            };
            let keys: [(&str, Option<usize>); 8] = [
                ("curve", b.curve.as_ref().map(|v| v.span().start)),
                ("value", b.value.as_ref().map(|v| v.span().start)),
                ("first", b.first.as_ref().map(|v| v.span().start)),
                ("second", b.second.as_ref().map(|v| v.span().start)),
                ("circle", b.circle.as_ref().map(|v| v.span().start)),
                (
                    "exterior_boundary",
                    b.exterior_boundary.as_ref().map(|v| v.span().start),
                ),
                (
                    "exterior_region",
                    b.exterior_region.as_ref().map(|v| v.span().start),
                ),
                (
                    "exterior_centre",
                    b.exterior_centre.as_ref().map(|v| v.span().start),
                ),
            ];
            let allowed: &[&str] = match kind {
                "fixed" => &["curve", "value"],
                "periodic" | "anti_periodic" => &["first", "second"],
                "open" => &[
                    "circle",
                    "exterior_boundary",
                    "exterior_region",
                    "exterior_centre",
                ],
                other => {
                    return Err(fail(
                        b.kind.span().start,
                        format!(
                            "unknown kind `{other}`, expected \"fixed\", \"periodic\", \
                             \"anti_periodic\" or \"open\""
                        ),
                    ))
                }
            };
            if let Some((key, Some(offset))) = keys
                .iter()
                .find(|(k, o)| o.is_some() && !allowed.contains(k))
            {
                return Err(fail(
                    *offset,
                    format!(
                        "`{key}` does not apply to kind \"{kind}\" (it takes {})",
                        allowed
                            .iter()
                            .map(|k| format!("`{k}`"))
                            .collect::<Vec<_>>()
                            .join(", ")
                    ),
                ));
            }
            let curve = |v: &Option<Spanned<String>>, key: &str| -> Result<String, CaseError> {
                let v = v
                    .as_ref()
                    .ok_or_else(|| fail(b.kind.span().start, format!("missing `{key}`")))?;
                if !curve_exists(v.get_ref()) {
                    return Err(fail(
                        v.span().start,
                        format!("unknown curve `{}` (no curve has this name)", v.get_ref()),
                    ));
                }
                Ok(v.get_ref().clone())
            };
            boundaries.push(match kind {
                "fixed" => {
                    let value = b.value.as_ref().map_or(0.0, |v| *v.get_ref());
                    if !value.is_finite() {
                        return Err(fail(
                            b.value.as_ref().map_or(0, |v| v.span().start),
                            format!("`value` must be finite, got {value} Wb/m"),
                        ));
                    }
                    CaseBoundary::FixedPotential {
                        curve: curve(&b.curve, "curve")?,
                        value,
                    }
                }
                "periodic" => CaseBoundary::Periodic {
                    first: curve(&b.first, "first")?,
                    second: curve(&b.second, "second")?,
                },
                "anti_periodic" => CaseBoundary::AntiPeriodic {
                    first: curve(&b.first, "first")?,
                    second: curve(&b.second, "second")?,
                },
                _ => {
                    let region = b.exterior_region.as_ref().ok_or_else(|| {
                        fail(b.kind.span().start, "missing `exterior_region`".into())
                    })?;
                    if !region_exists(region.get_ref()) {
                        return Err(fail(
                            region.span().start,
                            format!("unknown region `{}`", region.get_ref()),
                        ));
                    }
                    let c = b.exterior_centre.as_ref().ok_or_else(|| {
                        fail(b.kind.span().start, "missing `exterior_centre`".into())
                    })?;
                    let centre =
                        self.coords(unit, *c.get_ref(), self.pos(c), "exterior_centre", axi)?;
                    CaseBoundary::Open(OpenBoundary {
                        circle: curve(&b.circle, "circle")?,
                        exterior_boundary: curve(&b.exterior_boundary, "exterior_boundary")?,
                        exterior_region: region.get_ref().clone(),
                        exterior_centre: [centre.x, centre.y],
                    })
                }
            });
        }
        Ok((materials, windings, boundaries))
    }

    /// Checks a `[sweep]` against the geometry's rigid groups and regions.
    fn sweep(
        &self,
        unit: LengthUnit,
        raw: &Spanned<RawSweep>,
        geometry: &Geometry,
    ) -> Result<CaseSweep, CaseError> {
        let sw = raw.get_ref();
        if !geometry
            .rigid_groups
            .iter()
            .any(|g| &g.name == sw.group.get_ref())
        {
            return Err(CaseError::UnknownName {
                kind: "rigid group",
                name: sw.group.get_ref().clone(),
                position: self.pos(&sw.group),
            });
        }
        let [dx, dy] = *sw.direction.get_ref();
        let norm = dx.hypot(dy);
        if !(norm.is_finite() && norm > 0.0) {
            return Err(self.invalid(
                &sw.direction,
                format!("sweep direction must be a non-zero vector, got [{dx}, {dy}]"),
            ));
        }
        let (parameter, values) = match (&sw.offsets, &sw.gaps) {
            (Some(o), None) => {
                if let Some(d) = &sw.drawn_gap {
                    return Err(self.invalid(
                        d,
                        "sweep `drawn_gap` goes with `gaps`, not `offsets`".into(),
                    ));
                }
                (SweepParameter::Offset, o)
            }
            (None, Some(g)) => (SweepParameter::Gap, g),
            (Some(o), Some(_)) => {
                return Err(self.invalid(o, "sweep: give `offsets` or `gaps`, not both".into()))
            }
            (None, None) => {
                return Err(self.invalid(
                    raw,
                    "sweep: give `offsets` or `gaps` (with `drawn_gap`)".into(),
                ))
            }
        };
        if values.get_ref().is_empty() {
            return Err(self.invalid(values, "sweep values must not be empty".into()));
        }
        if let Some(v) = values.get_ref().iter().find(|v| !v.is_finite()) {
            return Err(self.invalid(values, format!("sweep value {v} is not finite")));
        }
        let values_m: Vec<f64> = values
            .get_ref()
            .iter()
            .map(|&v| unit.to_metres(v))
            .collect();
        let offsets_m = match parameter {
            SweepParameter::Offset => values_m.clone(),
            _ => {
                let drawn = sw
                    .drawn_gap
                    .as_ref()
                    .ok_or_else(|| self.invalid(values, "sweep `gaps` need `drawn_gap`".into()))?;
                if !drawn.get_ref().is_finite() {
                    return Err(self.invalid(drawn, "sweep `drawn_gap` must be finite".into()));
                }
                if let Some(g) = values.get_ref().iter().find(|g| **g <= 0.0) {
                    return Err(self.invalid(values, format!("sweep gap {g} must be positive")));
                }
                let d = unit.to_metres(*drawn.get_ref());
                values_m.iter().map(|g| d - g).collect()
            }
        };
        let mut body = Vec::new();
        for r in sw.body.get_ref() {
            if !geometry.regions.iter().any(|g| &g.name == r.get_ref()) {
                return Err(CaseError::UnknownName {
                    kind: "region",
                    name: r.get_ref().clone(),
                    position: self.pos(r),
                });
            }
            body.push(r.get_ref().clone());
        }
        if body.is_empty() {
            return Err(self.invalid(&sw.body, "sweep `body` names no region".into()));
        }
        Ok(CaseSweep {
            group: sw.group.get_ref().clone(),
            direction: [dx / norm, dy / norm],
            parameter,
            values_m,
            offsets_m,
            body,
        })
    }

    /// Checks a `[rotation]` against the geometry's rigid groups and regions and the
    /// windings.
    fn rotation(
        &self,
        unit: LengthUnit,
        raw: &Spanned<RawRotation>,
        geometry: &Geometry,
        windings: &[Winding],
    ) -> Result<CaseRotation, CaseError> {
        let r = raw.get_ref();
        if !geometry
            .rigid_groups
            .iter()
            .any(|g| &g.name == r.group.get_ref())
        {
            return Err(CaseError::UnknownName {
                kind: "rigid group",
                name: r.group.get_ref().clone(),
                position: self.pos(&r.group),
            });
        }
        let region = |name: &Spanned<String>| {
            if geometry.regions.iter().any(|g| &g.name == name.get_ref()) {
                Ok(name.get_ref().clone())
            } else {
                Err(CaseError::UnknownName {
                    kind: "region",
                    name: name.get_ref().clone(),
                    position: self.pos(name),
                })
            }
        };
        let body = r
            .body
            .get_ref()
            .iter()
            .map(region)
            .collect::<Result<Vec<_>, _>>()?;
        if body.is_empty() {
            return Err(self.invalid(&r.body, "rotation `body` names no region".into()));
        }
        let airgap = r.airgap.as_ref().map(region).transpose()?;
        let phase = match &r.phase {
            None => None,
            Some(p) if windings.iter().any(|w| &w.name == p.get_ref()) => Some(p.get_ref().clone()),
            Some(p) => {
                return Err(CaseError::UnknownName {
                    kind: "winding",
                    name: p.get_ref().clone(),
                    position: self.pos(p),
                })
            }
        };
        let [cx, cy] = *r.centre.get_ref();
        if !(cx.is_finite() && cy.is_finite()) {
            return Err(self.invalid(&r.centre, "rotation `centre` must be finite".into()));
        }
        let sectors = match &r.sectors {
            None => 1,
            Some(n) if (1..=360).contains(n.get_ref()) => *n.get_ref() as u32,
            Some(n) => {
                return Err(self.invalid(
                    n,
                    format!(
                        "rotation `sectors` must be a whole number from 1 to 360 (the model is \
                         360/sectors degrees of the machine), got {}",
                        n.get_ref()
                    ),
                ))
            }
        };
        let (from, to, step) = (
            *r.from_deg.get_ref(),
            *r.to_deg.get_ref(),
            *r.step_deg.get_ref(),
        );
        for (v, s) in [(from, &r.from_deg), (to, &r.to_deg)] {
            if !(v.is_finite() && v.abs() <= 360.0) {
                return Err(self.invalid(
                    s,
                    format!("rotation angles must lie within -360..360 degrees, got {v}"),
                ));
            }
        }
        if to <= from {
            return Err(self.invalid(
                &r.to_deg,
                format!("rotation `to_deg` ({to}) must exceed `from_deg` ({from})"),
            ));
        }
        let period = 360.0 / f64::from(sectors);
        if to - from > period * (1.0 + 1e-12) {
            return Err(self.invalid(
                &r.to_deg,
                format!(
                    "rotation angles from {from} to {to} degrees span more than the model's \
                     period of {period} degrees (360 / sectors = {sectors}): the field repeats"
                ),
            ));
        }
        if !(step.is_finite() && step > 0.0 && (to - from) / step <= 10_000.0) {
            return Err(self.invalid(
                &r.step_deg,
                format!(
                    "rotation `step_deg` must be positive and give at most 10 000 steps, got {step}"
                ),
            ));
        }
        let count = ((to - from) / step * (1.0 + 1e-12)).floor() as usize;
        let angles_rad: Vec<f64> = (0..=count)
            .map(|k| (from + k as f64 * step).to_radians())
            .collect();
        let currents_a = match (&r.currents, &phase) {
            (None, _) => Vec::new(),
            (Some(c), None) => {
                return Err(self.invalid(c, "rotation `currents` go with a `phase`".into()))
            }
            (Some(c), Some(_)) => {
                let v = c.get_ref().clone();
                if let Some(x) = v.iter().find(|x| !x.is_finite()) {
                    return Err(self.invalid(c, format!("rotation current {x} is not finite")));
                }
                let mut sorted = v.clone();
                sorted.sort_by(f64::total_cmp);
                if sorted.windows(2).any(|w| w[0] == w[1]) || v.is_empty() {
                    return Err(self.invalid(
                        c,
                        "rotation `currents` must be distinct and not empty".into(),
                    ));
                }
                v
            }
        };
        if phase.is_some() && (currents_a.is_empty() || angles_rad.len() < 2) {
            return Err(self.invalid(
                raw,
                "a rotation map (`phase`) needs `currents` and at least two angles".into(),
            ));
        }
        Ok(CaseRotation {
            group: r.group.get_ref().clone(),
            centre_m: [unit.to_metres(cx), unit.to_metres(cy)],
            body,
            airgap,
            sectors,
            angles_rad,
            phase,
            currents_a,
        })
    }

    /// Checks a `[switching]` section against the geometry's moving parts and regions (the
    /// coil and the magnets' laws are checked with the solver sections).
    fn switching(
        &self,
        unit: LengthUnit,
        raw: &Spanned<RawSwitching>,
        geometry: &Geometry,
    ) -> Result<CaseSwitching, CaseError> {
        let sw = raw.get_ref();
        if !geometry
            .rigid_groups
            .iter()
            .any(|g| &g.name == sw.moving_part.get_ref())
        {
            return Err(CaseError::UnknownName {
                kind: "moving part",
                name: sw.moving_part.get_ref().clone(),
                position: self.pos(&sw.moving_part),
            });
        }
        let region = |r: &Spanned<String>| {
            if geometry.regions.iter().any(|g| &g.name == r.get_ref()) {
                Ok(r.get_ref().clone())
            } else {
                Err(CaseError::UnknownName {
                    kind: "region",
                    name: r.get_ref().clone(),
                    position: self.pos(r),
                })
            }
        };
        let [dx, dy] = *sw.direction.get_ref();
        let norm = dx.hypot(dy);
        if !(norm.is_finite() && norm > 0.0) {
            return Err(self.invalid(
                &sw.direction,
                format!("switching direction must be a non-zero vector, got [{dx}, {dy}]"),
            ));
        }
        let positive = |v: &Spanned<f64>, what: &str| {
            let x = *v.get_ref();
            if x.is_finite() && x > 0.0 {
                Ok(x)
            } else {
                Err(self.invalid(v, format!("switching `{what}` must be positive, got {x}")))
            }
        };
        let length = |v: &Spanned<f64>, what: &str| Ok(unit.to_metres(positive(v, what)?));
        if sw.gaps.get_ref().is_empty() {
            return Err(self.invalid(&sw.gaps, "switching `gaps` must not be empty".into()));
        }
        if let Some(g) = sw
            .gaps
            .get_ref()
            .iter()
            .find(|g| !(g.is_finite() && **g > 0.0))
        {
            return Err(self.invalid(&sw.gaps, format!("switching gap {g} must be positive")));
        }
        let workpiece = sw
            .workpiece
            .get_ref()
            .iter()
            .map(region)
            .collect::<Result<Vec<_>, _>>()?;
        if workpiece.is_empty() {
            return Err(self.invalid(
                &sw.workpiece,
                "switching `workpiece` names no region".into(),
            ));
        }
        let sign = *sw.off_current_sign.get_ref();
        if sign != 1.0 && sign != -1.0 {
            return Err(self.invalid(
                &sw.off_current_sign,
                format!("`off_current_sign` is +1 or -1, got {sign}"),
            ));
        }
        let optional = |v: &Option<Spanned<f64>>, what: &str, default: f64| match v {
            None => Ok(default),
            Some(v) => positive(v, what),
        };
        let fraction = optional(&sw.switched_fraction, "switched_fraction", 0.95)?;
        if fraction >= 1.0 {
            let at = sw.switched_fraction.as_ref().unwrap_or(&sw.full_pulse);
            return Err(self.invalid(
                at,
                format!("`switched_fraction` must be below 1, got {fraction}"),
            ));
        }
        let tolerance = optional(&sw.amplitude_tolerance, "amplitude_tolerance", 0.01)?;
        if tolerance >= 0.5 {
            let at = sw.amplitude_tolerance.as_ref().unwrap_or(&sw.full_pulse);
            return Err(self.invalid(
                at,
                format!("`amplitude_tolerance` must be below 0.5, got {tolerance}"),
            ));
        }
        let partial = match &sw.partial_amplitudes {
            None => 8,
            Some(n) if *n.get_ref() >= 1 && *n.get_ref() <= 1000 => *n.get_ref() as usize,
            Some(n) => {
                return Err(self.invalid(
                    n,
                    format!(
                        "`partial_amplitudes` must be 1 to 1000, got {}",
                        n.get_ref()
                    ),
                ))
            }
        };
        Ok(CaseSwitching {
            moving_part: sw.moving_part.get_ref().clone(),
            direction: [dx / norm, dy / norm],
            drawn_gap_m: length(&sw.drawn_gap, "drawn_gap")?,
            gaps_m: sw
                .gaps
                .get_ref()
                .iter()
                .map(|g| unit.to_metres(*g))
                .collect(),
            workpiece,
            pulse_gap_m: length(&sw.pulse_gap, "pulse_gap")?,
            coil: sw.coil.get_ref().clone(),
            switched_magnet: region(&sw.switched_magnet)?,
            guarded_magnet: region(&sw.guarded_magnet)?,
            off_current_sign: sign,
            full_pulse_a: positive(&sw.full_pulse, "full_pulse")?,
            switched_fraction: fraction,
            amplitude_tolerance: tolerance,
            recommended_margin: optional(&sw.recommended_margin, "recommended_margin", 1.25)?,
            partial_amplitudes: partial,
            pulse_duration_s: 1e-3 * optional(&sw.pulse_duration_ms, "pulse_duration_ms", 1.0)?,
            max_step: optional(&sw.max_step, "max_step", 0.1)?,
        })
    }

    fn mesh_settings(&self, unit: LengthUnit, m: &RawMesh) -> Result<MeshSettings, CaseError> {
        let d = MeshSettings::default();
        let min_angle_deg = match &m.min_angle {
            None => d.min_angle_deg,
            Some(a) if a.get_ref().is_finite() && *a.get_ref() > 0.0 && *a.get_ref() < 60.0 => {
                *a.get_ref()
            }
            Some(a) => {
                return Err(self.invalid(
                    a,
                    format!(
                        "mesh min_angle must be between 0 and 60 degrees, got {}",
                        a.get_ref()
                    ),
                ))
            }
        };
        let max_triangles = match &m.max_triangles {
            None => d.max_triangles,
            Some(n) if *n.get_ref() > 0 => *n.get_ref() as usize,
            Some(n) => {
                return Err(self.invalid(
                    n,
                    format!("mesh max_triangles must be positive, got {}", n.get_ref()),
                ))
            }
        };
        let elements_across_gap = match &m.elements_across_gap {
            None => d.elements_across_gap,
            Some(v) if v.get_ref().is_finite() && *v.get_ref() >= 0.0 => *v.get_ref(),
            Some(v) => {
                return Err(self.invalid(
                    v,
                    format!(
                        "mesh elements_across_gap must be zero or positive, got {}",
                        v.get_ref()
                    ),
                ))
            }
        };
        Ok(MeshSettings {
            max_size: self.positive(unit, &m.max_size, "mesh max_size")?,
            growth: self.positive_number(&m.growth, "mesh growth", d.growth)?,
            min_angle_deg,
            max_triangles,
            chord_tolerance: self.positive(unit, &m.chord_tolerance, "mesh chord_tolerance")?,
            elements_across_gap,
            snap_tolerance: self.positive_number(
                &m.snap_tolerance,
                "mesh snap_tolerance",
                d.snap_tolerance,
            )?,
        })
    }

    fn geometry(
        &self,
        unit: LengthUnit,
        raw: &RawGeometry,
        axi: bool,
        g: &mut Geometry,
        positions: &mut Positions,
    ) -> Result<(), CaseError> {
        // Named points, in file order. They are kept as given (not merged with other points
        // at the same place), so a written geometry reads back with the same numbering.
        let mut by_name: BTreeMap<String, PointId> = BTreeMap::new();
        let mut named: Vec<_> = raw.points.iter().collect();
        named.sort_by_key(|(k, _)| k.span().start);
        for (name, value) in named {
            let what = format!("point `{}`", name.get_ref());
            let pos = self.pos(value);
            let syntax = |message: String| CaseError::Syntax {
                message,
                position: Some(pos),
            };
            let (xy, size) = if let Some(xy) = Self::value_xy(value.get_ref()) {
                (xy, None)
            } else if let Some(t) = value.get_ref().as_table() {
                if let Some(k) = t.keys().find(|k| *k != "at" && *k != "size") {
                    return Err(syntax(format!(
                        "{what}: unknown key `{k}`, expected `at` or `size`"
                    )));
                }
                let xy = t
                    .get("at")
                    .and_then(Self::value_xy)
                    .ok_or_else(|| syntax(format!("{what}: expected `at = [x, y]`")))?;
                let size = match t.get("size") {
                    None => None,
                    Some(s) => {
                        let s = s
                            .as_float()
                            .or_else(|| s.as_integer().map(|i| i as f64))
                            .filter(|s| s.is_finite() && *s > 0.0)
                            .ok_or_else(|| CaseError::InvalidValue {
                                what: format!("{what}: size must be a positive length"),
                                position: pos,
                            })?;
                        Some(unit.to_metres(s))
                    }
                };
                (xy, size)
            } else {
                return Err(syntax(format!(
                    "{what}: expected `[x, y]` or `{{ at = [x, y], size = s }}`"
                )));
            };
            let position = self.coords(unit, xy, pos, &what, axi)?;
            by_name.insert(name.get_ref().clone(), PointId(g.points.len() as u32));
            g.points.push(GeometryPoint { position, size });
        }

        let lookup = |name: &str, pos: Position| -> Result<PointId, CaseError> {
            by_name
                .get(name)
                .copied()
                .ok_or_else(|| CaseError::UnknownName {
                    kind: "point",
                    name: name.to_string(),
                    position: pos,
                })
        };
        // A point given by name or as `[x, y]`.
        let point_ref = |g: &mut Geometry, v: &Spanned<toml::Value>, what: &str| {
            let pos = self.pos(v);
            if let Some(name) = v.get_ref().as_str() {
                return lookup(name, pos);
            }
            let xy = Self::value_xy(v.get_ref()).ok_or_else(|| CaseError::Syntax {
                message: format!("{what}: expected a point name or `[x, y]`"),
                position: Some(pos),
            })?;
            Ok(g.add_point(self.coords(unit, xy, pos, what, axi)?))
        };
        // A position given by point name or as `[x, y]` (arc and circle centres: not added
        // as points).
        let coord_ref = |g: &Geometry, v: &Spanned<toml::Value>, what: &str| {
            let pos = self.pos(v);
            if let Some(name) = v.get_ref().as_str() {
                return lookup(name, pos).map(|id| g.points[id.index()].position);
            }
            let xy = Self::value_xy(v.get_ref()).ok_or_else(|| CaseError::Syntax {
                message: format!("{what}: expected a point name or `[x, y]`"),
                position: Some(pos),
            })?;
            self.coords(unit, xy, pos, what, false)
        };
        let finish = |g: &mut Geometry,
                      positions: &mut Positions,
                      ids: &[CurveId],
                      name: &Option<Spanned<String>>,
                      size: Option<f64>,
                      pos: Position| {
            for &c in ids {
                if c.index() >= positions.curves.len() {
                    // A new curve.
                    if let Some(n) = name {
                        g.name_curve(c, n.get_ref());
                    }
                    if let Some(s) = size {
                        g.set_curve_size(c, s);
                    }
                    positions.curves.push(pos);
                } else {
                    // A side that coincides with an earlier segment is that segment: it
                    // keeps its first name and takes the smaller size.
                    let curve = &mut g.curves[c.index()];
                    if curve.name.is_none() {
                        curve.name = name.as_ref().map(|n| n.get_ref().clone());
                    }
                    if let Some(s) = size {
                        curve.size = Some(curve.size.map_or(s, |old| old.min(s)));
                    }
                }
            }
        };

        // Curves are added in file order across all kinds (the items of an array of tables
        // are contiguous in the text, so the position of any of their keys orders them).
        let mut items: Vec<(usize, CurveItem)> = Vec::new();
        items.extend(raw.segments.iter().map(|s| {
            (
                s.from.span().start.min(s.to.span().start),
                CurveItem::Segment(s),
            )
        }));
        items.extend(raw.arcs.iter().map(|a| {
            (
                a.from.span().start.min(a.to.span().start),
                CurveItem::Arc(a),
            )
        }));
        items.extend(
            raw.polylines
                .iter()
                .map(|p| (p.points.span().start, CurveItem::Polyline(p))),
        );
        items.extend(raw.rectangles.iter().map(|r| {
            (
                r.min.span().start.min(r.max.span().start),
                CurveItem::Rectangle(r),
            )
        }));
        items.extend(raw.circles.iter().map(|c| {
            (
                c.centre.span().start.min(c.radius.span().start),
                CurveItem::Circle(c),
            )
        }));
        items.sort_by_key(|(k, _)| *k);
        for (_, item) in items {
            match item {
                CurveItem::Segment(s) => {
                    let a = lookup(s.from.get_ref(), self.pos(&s.from))?;
                    let b = lookup(s.to.get_ref(), self.pos(&s.to))?;
                    let size = self.positive(unit, &s.size, "segment size")?;
                    let c = g.add_segment(a, b);
                    finish(g, positions, &[c], &s.name, size, self.pos(&s.from));
                }
                CurveItem::Arc(a) => {
                    let from = lookup(a.from.get_ref(), self.pos(&a.from))?;
                    let to = lookup(a.to.get_ref(), self.pos(&a.to))?;
                    let centre = coord_ref(g, &a.centre, "arc centre")?;
                    let size = self.positive(unit, &a.size, "arc size")?;
                    // The mesher's arcs run counter-clockwise: a clockwise arc from A to B is the
                    // counter-clockwise arc from B to A.
                    let c = if a.clockwise {
                        g.add_arc(to, from, centre)
                    } else {
                        g.add_arc(from, to, centre)
                    };
                    finish(g, positions, &[c], &a.name, size, self.pos(&a.from));
                }
                CurveItem::Polyline(p) => {
                    let mut ids = Vec::with_capacity(p.points.get_ref().len());
                    for v in p.points.get_ref() {
                        ids.push(point_ref(g, v, "polyline point")?);
                    }
                    let min = if p.closed { 3 } else { 2 };
                    if ids.len() < min {
                        return Err(self.invalid(
                            &p.points,
                            format!(
                                "a {} polyline needs at least {min} points, got {}",
                                if p.closed { "closed" } else { "open" },
                                ids.len()
                            ),
                        ));
                    }
                    let size = self.positive(unit, &p.size, "polyline size")?;
                    let n = ids.len();
                    let edges = if p.closed { n } else { n - 1 };
                    let curves: Vec<CurveId> = (0..edges)
                        .map(|k| {
                            let (a, b) = (ids[k], ids[(k + 1) % n]);
                            g.find_segment(a, b).unwrap_or_else(|| g.add_segment(a, b))
                        })
                        .collect();
                    finish(g, positions, &curves, &p.name, size, self.pos(&p.points));
                }
                CurveItem::Rectangle(r) => {
                    let lo = self.coords(
                        unit,
                        *r.min.get_ref(),
                        self.pos(&r.min),
                        "rectangle min",
                        axi,
                    )?;
                    let hi = self.coords(
                        unit,
                        *r.max.get_ref(),
                        self.pos(&r.max),
                        "rectangle max",
                        axi,
                    )?;
                    if !(hi.x > lo.x && hi.y > lo.y) {
                        return Err(self.invalid(
                            &r.max,
                            format!(
                                "rectangle max {:?} must lie above and right of min {:?}",
                                r.max.get_ref(),
                                r.min.get_ref()
                            ),
                        ));
                    }
                    let size = self.positive(unit, &r.size, "rectangle size")?;
                    let curves = g.add_rectangle(lo, hi);
                    finish(g, positions, &curves, &r.name, size, self.pos(&r.min));
                }
                CurveItem::Circle(c) => {
                    let centre = coord_ref(g, &c.centre, "circle centre")?;
                    let radius = self
                        .positive(unit, &Some(c.radius.clone()), "circle radius")?
                        .expect("given");
                    if axi && centre.x - radius < 0.0 {
                        return Err(self.invalid(
                            &c.radius,
                            "circle crosses the axis r = 0 in an axisymmetric case".into(),
                        ));
                    }
                    let size = self.positive(unit, &c.size, "circle size")?;
                    let curves = g.add_circle(centre, radius);
                    finish(g, positions, &curves, &c.name, size, self.pos(&c.centre));
                }
            }
        }

        for p in &raw.curve_pairs {
            let mut ids = [CurveId(0); 2];
            for (k, n) in [&p.first, &p.second].into_iter().enumerate() {
                let named: Vec<usize> = g
                    .curves
                    .iter()
                    .enumerate()
                    .filter(|(_, c)| c.name.as_ref() == Some(n.get_ref()))
                    .map(|(i, _)| i)
                    .collect();
                match named.as_slice() {
                    [] => {
                        return Err(CaseError::UnknownName {
                            kind: "curve",
                            name: n.get_ref().clone(),
                            position: self.pos(n),
                        })
                    }
                    [i] => ids[k] = CurveId(*i as u32),
                    many => {
                        return Err(self.invalid(
                            n,
                            format!(
                                "a curve pair needs names of single curves: `{}` names {} curves",
                                n.get_ref(),
                                many.len()
                            ),
                        ))
                    }
                }
            }
            if ids[0] == ids[1] {
                return Err(self.invalid(
                    &p.second,
                    format!("curve `{}` cannot be paired with itself", p.first.get_ref()),
                ));
            }
            if let Some(q) = g.curve_pairs.iter().find(|q| {
                [q.first, q.second]
                    .iter()
                    .any(|c| *c == ids[0] || *c == ids[1])
            }) {
                let _ = q;
                return Err(CaseError::DuplicateName {
                    kind: "curve in two curve pairs",
                    name: format!("{} / {}", p.first.get_ref(), p.second.get_ref()),
                    position: self.pos(&p.first),
                });
            }
            g.add_curve_pair(ids[0], ids[1]);
            positions.curve_pairs.push(self.pos(&p.first));
        }
        Ok(())
    }
}

/// Writes a geometry as a case file in metres (`unit = "m"`): every point as a named point
/// `p0`, `p1`, ..., every curve as a segment or counter-clockwise arc, the regions, curve
/// pairs (by curve name), rigid groups and mesh settings. Reading the text back with
/// [`Case::from_toml_str`] and calling [`Case::geometry`] gives a geometry equal to
/// `geometry` (numbers are written with the shortest decimal form that reads back exactly).
///
/// # Errors
/// [`CaseError::NotWritable`] for a non-finite number or a paired curve that has no name
/// unique among the curves.
pub fn geometry_to_toml(geometry: &Geometry) -> Result<String, CaseError> {
    use std::fmt::Write as _;
    let not = |what: String| CaseError::NotWritable { what };
    let num = |v: f64, what: &dyn Fn() -> String| -> Result<String, CaseError> {
        if v.is_finite() {
            Ok(format!("{v:?}"))
        } else {
            Err(not(format!("{} is {v}", what())))
        }
    };
    let quote = |s: &str| toml::Value::String(s.to_string()).to_string();
    let xy = |p: Point2, what: &dyn Fn() -> String| -> Result<String, CaseError> {
        Ok(format!("[{}, {}]", num(p.x, what)?, num(p.y, what)?))
    };
    let mut o = String::new();
    o.push_str(
        "# Written by coercive::case::geometry_to_toml. Lengths in metres.\nunit = \"m\"\n\n",
    );

    let s = &geometry.settings;
    o.push_str("[mesh]\n");
    if let Some(v) = s.max_size {
        let _ = writeln!(o, "max_size = {}", num(v, &|| "max_size".into())?);
    }
    let _ = writeln!(o, "growth = {}", num(s.growth, &|| "growth".into())?);
    let _ = writeln!(
        o,
        "min_angle = {}",
        num(s.min_angle_deg, &|| "min_angle".into())?
    );
    let _ = writeln!(o, "max_triangles = {}", s.max_triangles);
    if let Some(v) = s.chord_tolerance {
        let _ = writeln!(
            o,
            "chord_tolerance = {}",
            num(v, &|| "chord_tolerance".into())?
        );
    }
    let _ = writeln!(
        o,
        "elements_across_gap = {}",
        num(s.elements_across_gap, &|| "elements_across_gap".into())?
    );
    let _ = writeln!(
        o,
        "snap_tolerance = {}",
        num(s.snap_tolerance, &|| "snap_tolerance".into())?
    );

    o.push_str("\n[geometry.points]\n");
    for (i, p) in geometry.points.iter().enumerate() {
        let what = || format!("point {i}");
        match p.size {
            None => {
                let _ = writeln!(o, "p{i} = {}", xy(p.position, &what)?);
            }
            Some(sz) => {
                let _ = writeln!(
                    o,
                    "p{i} = {{ at = {}, size = {} }}",
                    xy(p.position, &what)?,
                    num(sz, &what)?
                );
            }
        }
    }
    if !geometry.rigid_groups.is_empty() {
        o.push_str("\n[geometry.rigid_groups]\n");
        for grp in &geometry.rigid_groups {
            let members: Vec<String> = grp.regions.iter().map(|r| quote(r)).collect();
            let _ = writeln!(o, "{} = [{}]", quote(&grp.name), members.join(", "));
        }
    }
    let n_points = geometry.points.len();
    let point_name = |id: PointId, c: usize| -> Result<String, CaseError> {
        if id.index() < n_points {
            Ok(format!("\"p{}\"", id.0))
        } else {
            Err(not(format!("curve {c} refers to missing point {}", id.0)))
        }
    };
    for (i, c) in geometry.curves.iter().enumerate() {
        match c.shape {
            CurveShape::Segment { start, end } => {
                let _ = writeln!(
                    o,
                    "\n[[geometry.segments]]\nfrom = {}\nto = {}",
                    point_name(start, i)?,
                    point_name(end, i)?
                );
            }
            CurveShape::Arc { start, end, centre } => {
                let _ = writeln!(
                    o,
                    "\n[[geometry.arcs]]\nfrom = {}\nto = {}\ncentre = {}",
                    point_name(start, i)?,
                    point_name(end, i)?,
                    xy(centre, &|| format!("centre of curve {i}"))?
                );
            }
        }
        if let Some(n) = &c.name {
            let _ = writeln!(o, "name = {}", quote(n));
        }
        if let Some(sz) = c.size {
            let _ = writeln!(o, "size = {}", num(sz, &|| format!("size of curve {i}"))?);
        }
    }
    for (k, pair) in geometry.curve_pairs.iter().enumerate() {
        let name = |c: CurveId| -> Result<String, CaseError> {
            let n = geometry
                .curves
                .get(c.index())
                .and_then(|cv| cv.name.clone())
                .ok_or_else(|| not(format!("curve pair {k}: curve {} has no name", c.0)))?;
            if geometry
                .curves
                .iter()
                .filter(|cv| cv.name.as_ref() == Some(&n))
                .count()
                > 1
            {
                return Err(not(format!(
                    "curve pair {k}: curve name `{n}` is shared by several curves"
                )));
            }
            Ok(quote(&n))
        };
        let _ = writeln!(
            o,
            "\n[[geometry.curve_pairs]]\nfirst = {}\nsecond = {}",
            name(pair.first)?,
            name(pair.second)?
        );
    }
    for r in &geometry.regions {
        let what = || format!("region `{}`", r.name);
        let _ = writeln!(
            o,
            "\n[regions.{}]\nat = {}",
            quote(&r.name),
            xy(r.seed, &what)?
        );
        if r.hole {
            o.push_str("hole = true\n");
        }
        if let Some(sz) = r.size {
            let _ = writeln!(o, "max_size = {}", num(sz, &what)?);
        }
    }
    Ok(o)
}

#[cfg(test)]
mod tests {
    use super::*;

    const SMALL: &str = r#"
unit = "mm"
title = "two squares"

[mesh]
max_size = 2.5
growth = 0.25

[geometry.points]
a = [0, 0]
b = [10, 0]
c = { at = [10, 10], size = 0.5 }
d = [0, 10]
o = [5, 5]

[[geometry.polylines]]
points = ["a", "b", "c", "d"]
closed = true
name = "outer"

[[geometry.rectangles]]
min = [2, 2]
max = [4, 4]
name = "magnet_edge"
size = 0.25

[[geometry.circles]]
centre = "o"
radius = 0.8
name = "hole_edge"

[regions.air]
at = [1, 1]
material = "air"

[regions.magnet]
at = [3, 3]
max_size = 0.5
material = "ndfeb-n42"

[regions.hole]
at = [5, 5.5]
hole = true

[geometry.rigid_groups]
mover = ["magnet"]
"#;

    fn expect_position(err: &CaseError) -> Position {
        match err {
            CaseError::Syntax {
                position: Some(p), ..
            } => *p,
            CaseError::UnknownName { position, .. }
            | CaseError::DuplicateName { position, .. }
            | CaseError::InvalidValue { position, .. } => *position,
            other => panic!("no position in {other:?}"),
        }
    }

    #[test]
    fn millimetres_convert_exactly_to_metres() {
        let case = Case::from_toml_str(SMALL).unwrap();
        assert_eq!(case.unit(), LengthUnit::Millimetre);
        let g = case.geometry().unwrap();
        // 10 mm is the double nearest to 0.01 m; a 0.8 mm radius gives the point at 5.8 mm.
        assert_eq!(g.points[1].position, Point2::new(0.01, 0.0));
        assert_eq!(g.points[2].size, Some(0.0005));
        assert_eq!(g.settings.max_size, Some(0.0025));
        assert_eq!(g.settings.growth, 0.25);
        // The circle's points are placed by the mesher's builder in metres (centre + radius).
        assert!(g
            .points
            .iter()
            .any(|p| p.position == Point2::new(0.005 + 0.0008, 0.005)));
        assert_eq!(g.regions[1].size, Some(0.0005));
        // Other units: 12.5 cm, 12.5 um, 1 in = 25.4 mm (exact by definition).
        assert_eq!(LengthUnit::Centimetre.to_metres(12.5), 0.125);
        assert_eq!(LengthUnit::Micrometre.to_metres(12.5), 0.0000125);
        assert_eq!(LengthUnit::Inch.to_metres(1.0), 0.0254);
        assert_eq!(LengthUnit::from_symbol("um"), Some(LengthUnit::Micrometre));
    }

    #[test]
    fn geometry_parts_are_built_in_file_order() {
        let case = Case::from_toml_str(SMALL).unwrap();
        let g = case.geometry().unwrap();
        // 4 polyline segments, 4 rectangle sides, 4 quarter arcs.
        assert_eq!(g.curves.len(), 12);
        assert_eq!(
            g.curves
                .iter()
                .filter(|c| c.name.as_deref() == Some("outer"))
                .count(),
            4
        );
        assert!(g.curves[4..8].iter().all(|c| c.size == Some(0.00025)));
        assert!(matches!(g.curves[8].shape, CurveShape::Arc { .. }));
        assert_eq!(case.region_names(), vec!["air", "magnet", "hole"]);
        assert!(g.regions[2].hole);
        assert_eq!(case.region_material("magnet"), Some("ndfeb-n42"));
        assert_eq!(case.region_material("hole"), None);
        assert_eq!(g.rigid_groups.len(), 1);
        assert_eq!(g.rigid_groups[0].regions, vec!["magnet".to_string()]);
        assert_eq!(case.title(), Some("two squares"));
        assert_eq!(case.formulation(), CaseFormulation::Planar);
    }

    #[test]
    fn unknown_key_is_reported_with_line_and_column() {
        let text = SMALL.replace("max_size = 0.5\n", "max_size = 0.5\ncolour = \"red\"\n");
        let err = Case::from_toml_str(&text).unwrap_err();
        let line = text.lines().position(|l| l.starts_with("colour")).unwrap() + 1;
        assert_eq!(expect_position(&err), Position { line, column: 1 });
        let msg = err.to_string();
        assert!(msg.contains("colour"), "{msg}");
        assert!(msg.contains(&format!("line {line}, column 1")), "{msg}");
        // At the top level as well.
        let err = Case::from_toml_str("unit = \"mm\"\nfoo = 1\n").unwrap_err();
        assert_eq!(expect_position(&err), Position { line: 2, column: 1 });
    }

    #[test]
    fn unknown_point_name_is_reported_with_line_and_column() {
        let text = SMALL.replace(
            r#"points = ["a", "b", "c", "d"]"#,
            r#"points = ["a", "b", "cc", "d"]"#,
        );
        let err = Case::from_toml_str(&text).unwrap_err();
        let line = text.lines().position(|l| l.contains("\"cc\"")).unwrap() + 1;
        let column = text.lines().nth(line - 1).unwrap().find("\"cc\"").unwrap() + 1;
        assert_eq!(
            err,
            CaseError::UnknownName {
                kind: "point",
                name: "cc".into(),
                position: Position { line, column }
            }
        );
        assert!(err.to_string().contains("unknown point `cc`"));
        // In a segment's `to`.
        let err = Case::from_toml_str(
            "unit = \"m\"\n[geometry.points]\na = [0, 0]\n[[geometry.segments]]\nfrom = \"a\"\nto = \"zz\"\n",
        )
        .unwrap_err();
        assert_eq!(
            err,
            CaseError::UnknownName {
                kind: "point",
                name: "zz".into(),
                position: Position { line: 6, column: 6 }
            }
        );
    }

    #[test]
    fn unknown_curve_and_region_names_are_reported() {
        let text = format!(
            "{SMALL}\n[[geometry.curve_pairs]]\nfirst = \"nope\"\nsecond = \"hole_edge\"\n"
        );
        let err = Case::from_toml_str(&text).unwrap_err();
        assert!(
            matches!(&err, CaseError::UnknownName { kind: "curve", name, .. } if name == "nope"),
            "{err:?}"
        );
        assert_eq!(expect_position(&err).line, text.lines().count() - 1);
        // A curve pair needs single curves: `outer` names four.
        let text = format!(
            "{SMALL}\n[[geometry.curve_pairs]]\nfirst = \"outer\"\nsecond = \"magnet_edge\"\n"
        );
        let err = Case::from_toml_str(&text).unwrap_err();
        assert!(err.to_string().contains("`outer` names 4 curves"), "{err}");
        let text = SMALL.replace(r#"mover = ["magnet"]"#, r#"mover = ["magnet", "plate"]"#);
        let err = Case::from_toml_str(&text).unwrap_err();
        assert!(
            matches!(&err, CaseError::UnknownName { kind: "region", name, .. } if name == "plate"),
            "{err:?}"
        );
    }

    #[test]
    fn duplicate_names_are_rejected_with_position() {
        // A point defined twice: TOML itself forbids the duplicate key.
        let text = SMALL.replace("d = [0, 10]\n", "d = [0, 10]\nb = [1, 1]\n");
        let err = Case::from_toml_str(&text).unwrap_err();
        let line = text.lines().position(|l| l == "b = [1, 1]").unwrap() + 1;
        assert_eq!(expect_position(&err).line, line);
        assert!(err.to_string().contains("duplicate"), "{err}");
        // A region defined twice.
        let text = format!("{SMALL}\n[regions.air]\nat = [9, 9]\n");
        let err = Case::from_toml_str(&text).unwrap_err();
        assert!(
            matches!(
                err,
                CaseError::Syntax {
                    position: Some(_),
                    ..
                }
            ),
            "{err:?}"
        );
        // A region listed twice in a rigid group.
        let text = SMALL.replace(r#"mover = ["magnet"]"#, r#"mover = ["magnet", "magnet"]"#);
        let err = Case::from_toml_str(&text).unwrap_err();
        assert!(matches!(err, CaseError::DuplicateName { .. }), "{err:?}");
    }

    #[test]
    fn bad_values_are_rejected_with_position() {
        for (from, to, needle) in [
            ("unit = \"mm\"", "unit = \"furlong\"", "unknown length unit"),
            (
                "radius = 0.8",
                "radius = -0.8",
                "circle radius must be a positive length",
            ),
            (
                "max_size = 2.5",
                "max_size = 0",
                "mesh max_size must be a positive length",
            ),
            ("a = [0, 0]", "a = [nan, 0]", "coordinates must be finite"),
            ("at = [1, 1]", "at = [1, inf]", "coordinates must be finite"),
            (
                "growth = 0.25",
                "growth = -1",
                "growth must be a positive number",
            ),
            (
                "min = [2, 2]",
                "min = [5, 2]",
                "must lie above and right of min",
            ),
            (
                "at = [5, 5.5]\nhole = true",
                "at = [5, 5.5]\nhole = true\nmaterial = \"x\"",
                "is a hole",
            ),
        ] {
            let text = SMALL.replacen(from, to, 1);
            assert_ne!(text, SMALL, "{from}");
            let err = Case::from_toml_str(&text).unwrap_err();
            assert!(err.to_string().contains(needle), "{from}: {err}");
            expect_position(&err);
        }
        // Axisymmetric cases refuse negative radii.
        let text = SMALL
            .replace("title = \"two squares\"", "formulation = \"axisymmetric\"")
            .replace("a = [0, 0]", "a = [-1, 0]");
        let err = Case::from_toml_str(&text).unwrap_err();
        assert!(err.to_string().contains("negative radius"), "{err}");
        // Not TOML at all.
        let err = Case::from_toml_str("unit = \"mm\"\n[mesh\n").unwrap_err();
        assert_eq!(expect_position(&err).line, 2);
        // Missing unit.
        let err = Case::from_toml_str("[mesh]\nmax_size = 1\n").unwrap_err();
        assert!(err.to_string().contains("unit"), "{err}");
    }

    #[test]
    fn clockwise_arc_is_stored_counter_clockwise() {
        let text = "unit = \"m\"\n[geometry.points]\na = [1, 0]\nb = [0, 1]\n[[geometry.arcs]]\nfrom = \"b\"\nto = \"a\"\ncentre = [0, 0]\nclockwise = true\n";
        let g = Case::from_toml_str(text).unwrap().geometry().unwrap();
        assert_eq!(
            g.curves[0].shape,
            CurveShape::Arc {
                start: PointId(0),
                end: PointId(1),
                centre: Point2::new(0.0, 0.0)
            }
        );
    }

    #[test]
    fn geometry_round_trips_through_toml() {
        let mut g = Case::from_toml_str(SMALL).unwrap().geometry().unwrap();
        // Add a curve pair, awkward numbers and names needing quotes.
        let a = g.add_point(Point2::new(0.1 + 0.2, -1e-7));
        let b = g.add_point_with_size(Point2::new(1.0 / 3.0, 2.0e5), 1e-9);
        let c1 = g.add_segment(a, b);
        let c2 = g.add_arc(b, a, Point2::new(std::f64::consts::PI, 0.0));
        g.name_curve(c1, "left \"edge\"");
        g.name_curve(c2, "right.edge");
        g.add_curve_pair(c1, c2);
        g.settings.chord_tolerance = Some(1.234e-6);
        g.settings.max_triangles = 123_456;
        let text = geometry_to_toml(&g).unwrap();
        let back = Case::from_toml_str(&text)
            .unwrap_or_else(|e| panic!("{e}\n{text}"))
            .geometry()
            .unwrap();
        assert_eq!(back, g);
        // A paired curve without a name cannot be written.
        let mut h = g.clone();
        h.curves[c1.index()].name = None;
        assert!(matches!(
            geometry_to_toml(&h),
            Err(CaseError::NotWritable { .. })
        ));
        h.curves[c1.index()].name = Some("x".into());
        h.points[0].position.x = f64::NAN;
        assert!(matches!(
            geometry_to_toml(&h),
            Err(CaseError::NotWritable { .. })
        ));
    }

    #[test]
    fn mesher_errors_carry_the_position_of_the_item() {
        // The example itself meshes.
        let case = Case::from_toml_str(SMALL).unwrap();
        let (mesh, _) = case.mesh_with_report(&case.geometry().unwrap()).unwrap();
        assert_eq!(mesh.regions().len(), 2);
        // A region point outside the drawing: the position of `[regions.lost]`'s name.
        let text = format!("{SMALL}\n[regions.lost]\nat = [50, 50]\n");
        let case = Case::from_toml_str(&text).unwrap();
        let err = case
            .mesh_with_report(&case.geometry().unwrap())
            .unwrap_err();
        let line = text.lines().position(|l| l == "[regions.lost]").unwrap() + 1;
        match &err {
            CaseError::Mesh {
                source: MeshError::RegionNotClosed { region, .. },
                position: Some(p),
            } => {
                assert_eq!(region, "lost");
                assert_eq!(*p, Position { line, column: 10 });
            }
            other => panic!("{other:?}"),
        }
        assert!(err.to_string().contains(&format!("line {line}, column 10")));
        // An arc whose ends are at different distances from its centre: the position of
        // the arc's `from`.
        let text =
            format!("{SMALL}\n[[geometry.arcs]]\nfrom = \"a\"\nto = \"c\"\ncentre = [1, 0]\n");
        let case = Case::from_toml_str(&text).unwrap();
        let err = case
            .mesh_with_report(&case.geometry().unwrap())
            .unwrap_err();
        let line = text.lines().position(|l| l == "from = \"a\"").unwrap() + 1;
        match &err {
            CaseError::Mesh {
                source: MeshError::InconsistentArcRadii { .. },
                position: Some(p),
            } => assert_eq!(p.line, line),
            other => panic!("{other:?}"),
        }
    }

    #[test]
    fn solver_sections_are_read_with_the_case() {
        let text = format!(
            "{SMALL}\n[[material]]\nname = \"N42\"\nremanence = 1.3\nrecoil_permeability = 1.05\n\
             direction_deg = 90\n\n[[winding]]\nname = \"coil\"\nturns = 200\ncurrent = 2\n\
             positive = [\"magnet\"]\n\n[[boundary]]\nkind = \"fixed\"\ncurve = \"outer\"\n"
        );
        let case = Case::from_toml_str(&text).unwrap();
        assert_eq!(case.materials().len(), 1);
        assert_eq!(case.materials()[0].name, "N42");
        assert!(matches!(case.material("N42"), Ok(Material::Magnet(_))));
        assert_eq!(case.material("air"), Ok(Material::vacuum()));
        assert_eq!(case.windings()[0].turns, 200.0);
        assert_eq!(case.windings()[0].current_a, 2.0);
        assert_eq!(
            case.boundaries(),
            &[CaseBoundary::FixedPotential {
                curve: "outer".into(),
                value: 0.0
            }]
        );
    }

    #[test]
    fn entries_are_located_by_their_headers() {
        let text = "unit = \"m\"\n[[winding]]\nname = \"a\"\n[[material]]\nname = \"m\"\n\n[[winding]]\n# c\nname = \"b\"\nturn = 3\n";
        let offset = text.find("turn =").unwrap();
        assert_eq!(
            entry_at(text, offset),
            Some(("winding", 2, Some("b".into())))
        );
        assert_eq!(entry_at(text, 0), None);
        assert_eq!(
            plain_message("invalid type: string \"x\", expected f64"),
            "invalid type: string \"x\", expected a number"
        );
        assert_eq!(
            plain_message("invalid type: integer `3`, expected struct RawBrauer"),
            "invalid type: integer `3`, expected a table"
        );
    }

    proptest::proptest! {
        #![proptest_config(proptest::prelude::ProptestConfig::with_cases(300))]
        /// Damaged case files (a slice replaced by random TOML-ish text) never panic the
        /// reader: they read, or fail with a typed error.
        #[test]
        fn damaged_files_never_panic(
            start in 0usize..2000,
            len in 0usize..40,
            junk in "[a-z0-9_=\\[\\]{}\",. \n-]{0,30}",
        ) {
            let start = start.min(SMALL.len());
            let end = (start + len).min(SMALL.len());
            if SMALL.is_char_boundary(start) && SMALL.is_char_boundary(end) {
                let text = format!("{}{}{}", &SMALL[..start], junk, &SMALL[end..]);
                if let Ok(case) = Case::from_toml_str(&text) {
                    case.geometry().unwrap();
                }
            }
        }
    }

    #[test]
    fn position_counts_lines_and_characters() {
        let s = "ab\ncµd\n";
        assert_eq!(Position::of_offset(s, 0), Position { line: 1, column: 1 });
        assert_eq!(Position::of_offset(s, 3), Position { line: 2, column: 1 });
        // 'd' is after a two-byte character: column 3.
        assert_eq!(Position::of_offset(s, 6), Position { line: 2, column: 3 });
        assert_eq!(Position::of_offset(s, 100), Position { line: 3, column: 1 });
    }

    #[test]
    fn the_reader_line_index_agrees_with_the_scan_at_every_offset() {
        for s in ["ab\ncµd\n", "", "\n\nx", "µ\n\nµµ\nend", SMALL] {
            let reader = Reader::new(s);
            for offset in 0..=s.len() + 2 {
                assert_eq!(
                    reader.position(offset),
                    Position::of_offset(s, offset),
                    "offset {offset} of {s:?}"
                );
            }
        }
    }
}
