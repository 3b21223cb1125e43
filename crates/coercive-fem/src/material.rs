//! Constitutive laws: H(B) and its tangent dH/dB at one point, energy and co-energy densities.
//!
//! Materials are pure functions of the flux density (and, for later hysteretic laws, of a
//! committed state). The solver precomputes each magnet's easy axis per quadrature point and
//! passes it in, so position-dependent magnetisation patterns cost nothing here.

use serde::{Deserialize, Serialize};
use thiserror::Error;

use crate::bh::BhCurve;
use crate::hysteresis::{History, HysteresisLaw};

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
    /// Around `centre` at each point (counter-clockwise, or clockwise if `counter_clockwise`
    /// is false): a circumferentially magnetised ring.
    Azimuthal {
        /// Centre of the pattern (m).
        centre: [f64; 2],
        /// True for counter-clockwise magnetisation.
        counter_clockwise: bool,
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
    /// The grade's knee field Hk (A/m, positive): the reverse field along the easy axis at
    /// which the real magnet's polarisation has fallen to 90 % of its remanence. The linear
    /// law is valid only for H along the axis above -Hk; results report the volume driven
    /// beyond it. `None` when unknown.
    #[serde(default)]
    pub knee_field: Option<f64>,
}

/// The magnetisation a hysteretic magnet starts from when no [`MagnetState`](crate::MagnetState)
/// is given: saturated along its easy axis (as delivered), or against it.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum InitialMagnetisation {
    /// Saturated along the easy axis, then the field removed (the remanent state).
    #[default]
    Forward,
    /// Saturated against the easy axis, then the field removed.
    Reverse,
}

/// A permanent magnet with magnetic history: along its easy axis e the flux density is
/// B_e = mu_0 H_e + J(H_e; history) (the scalar hysteresis law of [`HysteresisLaw`]), across it
/// B_p = mu_0 mu_perp H_p (reversible, linear).
///
/// The history of every quadrature point lives in a [`MagnetState`](crate::MagnetState),
/// committed only after a load step converges; within a step the law seen by Newton's method
/// is the branch that leaves the committed state, which is single-valued and monotone in B_e,
/// so each step is a convex minimisation and the tangent stays symmetric positive definite.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct HystereticMagnet {
    /// The scalar law along the easy axis.
    pub law: HysteresisLaw,
    /// Relative permeability across the easy axis (at least 1).
    pub perpendicular_permeability: f64,
    /// Layout of the easy axis.
    pub direction: MagnetDirection,
    /// The state used when a solve starts without a [`MagnetState`](crate::MagnetState).
    #[serde(default)]
    pub initial: InitialMagnetisation,
}

impl HystereticMagnet {
    /// The history of a point that has not been solved yet.
    pub fn initial_history(&self) -> History {
        History::saturated(self.initial == InitialMagnetisation::Forward)
    }

    /// Response at `b` (T) with easy axis `e` and the committed `history` of this point.
    pub fn response(&self, b: [f64; 2], e: [f64; 2], history: &History) -> Response {
        let p = [-e[1], e[0]];
        let be = b[0] * e[0] + b[1] * e[1];
        let bp = b[0] * p[0] + b[1] * p[1];
        let (he, dhe) = self.law.field_strength(history, be);
        let nu_p = 1.0 / (MU_0 * self.perpendicular_permeability);
        let hp = nu_p * bp;
        let mut dh_db = [[0.0; 2]; 2];
        for (i, row) in dh_db.iter_mut().enumerate() {
            for (j, v) in row.iter_mut().enumerate() {
                *v = dhe * e[i] * e[j] + nu_p * p[i] * p[j];
            }
        }
        Response {
            h: [he * e[0] + hp * p[0], he * e[1] + hp * p[1]],
            dh_db,
        }
    }

    /// Co-energy density (J/m^3) at `b` along the branch leaving `history`: the integral of
    /// B dH from H = 0 along the easy axis plus mu_0 mu_perp H_p^2 / 2 across it.
    pub fn coenergy_density(&self, b: [f64; 2], e: [f64; 2], history: &History) -> f64 {
        let p = [-e[1], e[0]];
        let be = b[0] * e[0] + b[1] * e[1];
        let bp = b[0] * p[0] + b[1] * p[1];
        let (he, _) = self.law.field_strength(history, be);
        self.law.coenergy_density(history, he)
            + 0.5 * bp * bp / (MU_0 * self.perpendicular_permeability)
    }
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
    /// Brauer's analytic law H = nu(|B|^2) B with nu(b^2) = k1 exp(k2 b^2) + k3 (Brauer, IEEE
    /// Trans. Magn. 11(1), 1975), evaluated in closed form at every point.
    ///
    /// Unlike [`BhCurve::brauer`], which samples the law and continues at vacuum slope where
    /// the law's dB/dH falls below mu_0, this variant is the law as written at every flux
    /// density: it is accepted as a model even where its slope is flatter than vacuum (no
    /// measured table may be), and it stays convex (H is monotone in B) for the accepted
    /// coefficients, so the energy functional keeps a unique minimum.
    Brauer {
        /// k1 (A/(m T)), non-negative.
        k1: f64,
        /// k2 (1/T^2), non-negative.
        k2: f64,
        /// k3 (A/(m T)), positive: the reluctivity nu(0) = k1 + k3 is then positive.
        k3: f64,
    },
    /// Permanent magnet with magnetic history (hysteresis along its easy axis).
    Hysteretic(HystereticMagnet),
}

/// Invalid material data: B-H points, law parameters, magnet values or an unknown or retired
/// preset.
///
/// Point indices are 0-based positions in the slice given by the caller.
#[derive(Clone, Debug, PartialEq, Error)]
#[non_exhaustive]
pub enum MaterialError {
    /// A B-H point holds a NaN or an infinity.
    #[error("B-H point {index} (H = {h} A/m, B = {b} T) is not finite")]
    NotFinite {
        /// Index of the point.
        index: usize,
        /// Its H (A/m).
        h: f64,
        /// Its B (T).
        b: f64,
    },
    /// A B-H point has a negative coordinate (give the first-quadrant branch only).
    #[error(
        "B-H point {index} (H = {h} A/m, B = {b} T) is negative; give the curve for H >= 0, B >= 0"
    )]
    Negative {
        /// Index of the point.
        index: usize,
        /// Its H (A/m).
        h: f64,
        /// Its B (T).
        b: f64,
    },
    /// A point has exactly one zero coordinate, or the origin appears other than first.
    #[error(
        "B-H point {index} (H = {h} A/m, B = {b} T) lies on an axis; a soft-material curve \
         starts at the origin (given first or omitted) and has H > 0, B > 0 elsewhere"
    )]
    OffOrigin {
        /// Index of the point.
        index: usize,
        /// Its H (A/m).
        h: f64,
        /// Its B (T).
        b: f64,
    },
    /// H or B does not increase strictly from the previous point.
    #[error(
        "B-H point {index} (H = {h} A/m, B = {b} T) does not increase strictly from the \
         previous point (H = {previous_h} A/m, B = {previous_b} T); a B-H curve must be \
         strictly increasing in both H and B"
    )]
    NotMonotone {
        /// Index of the point.
        index: usize,
        /// Its H (A/m).
        h: f64,
        /// Its B (T).
        b: f64,
        /// H of the previous accepted point (A/m).
        previous_h: f64,
        /// B of the previous accepted point (T).
        previous_b: f64,
    },
    /// The secant from the previous point to this one is flatter than vacuum (dB/dH < mu_0).
    #[error(
        "B-H point {index} (H = {h} A/m, B = {b} T): the slope dB/dH from the previous point is \
         {relative_slope} mu_0, below the vacuum slope mu_0, which no material shows; check the \
         units (A/m, T) and that B, not the polarisation J, was given"
    )]
    FlatterThanVacuum {
        /// Index of the point.
        index: usize,
        /// Its H (A/m).
        h: f64,
        /// Its B (T).
        b: f64,
        /// The secant slope divided by mu_0.
        relative_slope: f64,
    },
    /// Fewer measured points than needed.
    #[error("a B-H curve needs at least {required} points besides the origin, got {count}")]
    TooFewPoints {
        /// Points given (origin excluded).
        count: usize,
        /// Points required.
        required: usize,
    },
    /// A processed table (deserialised) is inconsistent.
    #[error("invalid processed B-H table: {reason}")]
    InvalidTable {
        /// What is wrong.
        reason: String,
    },
    /// A scalar parameter is out of range.
    #[error("{material}: {parameter} = {value} {reason}")]
    InvalidParameter {
        /// The material or law concerned.
        material: String,
        /// The parameter name (with its unit where it has one).
        parameter: &'static str,
        /// The value given.
        value: f64,
        /// Why it is rejected.
        reason: &'static str,
    },
    /// A preset name that is not in the library.
    #[error("unknown material preset {name:?}; known presets: {}", known.join(", "))]
    UnknownPreset {
        /// The name asked for.
        name: String,
        /// The names the library knows.
        known: Vec<String>,
    },
    /// A hysteresis history (flat slots or serialised form) that breaks its invariants.
    #[error("hysteresis history slot {slot} = {value}: {reason}")]
    InvalidHistory {
        /// Index of the offending slot in the flat layout of `History::SLOTS` (0: initial
        /// saturation, 1: last input, 2: extremum count, 3 + k: extremum k).
        slot: usize,
        /// The value found there.
        value: f64,
        /// What is wrong.
        reason: &'static str,
    },
    /// Magnet datasheet numbers that contradict each other or cannot be met by the
    /// hysteresis model's loop shape.
    #[error("magnet datasheet {grade}: {quantity} = {value} {reason} (limit {bound})")]
    InconsistentDatasheet {
        /// The grade's name.
        grade: String,
        /// The quantity at fault, with its unit.
        quantity: &'static str,
        /// The value given.
        value: f64,
        /// The limit it breaks (same unit).
        bound: f64,
        /// Why it is rejected.
        reason: &'static str,
    },
    /// A preset name of an earlier library, no longer accepted.
    #[error("`{name}` is not a preset; {instead}")]
    RetiredPreset {
        /// The name asked for.
        name: String,
        /// What to write instead.
        instead: String,
    },
}

impl MagnetDirection {
    /// Unit easy-axis vector at `point` (m) of a magnet whose region has centroid
    /// `region_centroid` (m).
    ///
    /// `Fixed` ignores both arguments; `Radial` points from the centre to `point`; `Azimuthal`
    /// is the radial direction turned by +90 degrees (or -90); `Parallel`
    /// points from the centre to the region centroid (uniform over the region). Inward patterns
    /// are reversed. A degenerate radial direction (point on the centre) falls back to the
    /// centroid direction, and a degenerate centroid direction to +x, so the result is always a
    /// unit vector.
    pub fn easy_axis_at(&self, point: [f64; 2], region_centroid: [f64; 2]) -> [f64; 2] {
        let unit = |v: [f64; 2]| {
            let n = v[0].hypot(v[1]);
            if n > 0.0 && n.is_finite() {
                Some([v[0] / n, v[1] / n])
            } else {
                None
            }
        };
        let towards = |c: [f64; 2], p: [f64; 2]| unit([p[0] - c[0], p[1] - c[1]]);
        match *self {
            MagnetDirection::Fixed { angle } => [angle.cos(), angle.sin()],
            MagnetDirection::Radial { centre, outward } => {
                let e = towards(centre, point)
                    .or_else(|| towards(centre, region_centroid))
                    .unwrap_or([1.0, 0.0]);
                if outward {
                    e
                } else {
                    [-e[0], -e[1]]
                }
            }
            MagnetDirection::Azimuthal {
                centre,
                counter_clockwise,
            } => {
                let r = towards(centre, point)
                    .or_else(|| towards(centre, region_centroid))
                    .unwrap_or([1.0, 0.0]);
                if counter_clockwise {
                    [-r[1], r[0]]
                } else {
                    [r[1], -r[0]]
                }
            }
            MagnetDirection::Parallel { centre, outward } => {
                let e = towards(centre, region_centroid).unwrap_or([1.0, 0.0]);
                if outward {
                    e
                } else {
                    [-e[0], -e[1]]
                }
            }
        }
    }

    fn validate(&self) -> Result<(), MaterialError> {
        let bad = |parameter: &'static str, value: f64| MaterialError::InvalidParameter {
            material: "magnet direction".into(),
            parameter,
            value,
            reason: "must be finite",
        };
        match *self {
            MagnetDirection::Fixed { angle } if !angle.is_finite() => {
                Err(bad("angle (rad)", angle))
            }
            MagnetDirection::Radial { centre, .. }
            | MagnetDirection::Parallel { centre, .. }
            | MagnetDirection::Azimuthal { centre, .. } => {
                for v in centre {
                    if !v.is_finite() {
                        return Err(bad("centre (m)", v));
                    }
                }
                Ok(())
            }
            _ => Ok(()),
        }
    }
}

/// The field Hk (A/m, positive) where the polarisation on the descending major branch (from
/// positive saturation, irreversible and reversible parts) falls to 90 % of its value at
/// H = 0, by bisection.
pub(crate) fn knee_of(law: &HysteresisLaw) -> Option<f64> {
    let saturated = History::saturated(true);
    let j = |h: f64| law.polarisation(&saturated, h).0;
    let target = 0.9 * j(0.0);
    if target.is_nan() || target <= 0.0 {
        return None;
    }
    let mut hi = law.coercive_field.abs().max(law.width.abs()) * 2.0 + 1.0;
    let mut guard = 0;
    while j(-hi) > target && guard < 60 {
        hi *= 2.0;
        guard += 1;
    }
    let mut lo = 0.0;
    for _ in 0..100 {
        let mid = 0.5 * (lo + hi);
        if j(-mid) > target {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    Some(0.5 * (lo + hi))
}

/// Response of the orthotropic linear law H = nu_par (B.e - b_shift) e + nu_perp (B.e_perp)
/// e_perp, with e_perp = e rotated by +90 degrees.
fn orthotropic(b: [f64; 2], e: [f64; 2], nu_par: f64, nu_perp: f64, b_shift: f64) -> Response {
    let p = [-e[1], e[0]];
    let bp = b[0] * e[0] + b[1] * e[1] - b_shift;
    let bq = b[0] * p[0] + b[1] * p[1];
    let mut dh_db = [[0.0; 2]; 2];
    for (i, row) in dh_db.iter_mut().enumerate() {
        for (j, v) in row.iter_mut().enumerate() {
            *v = nu_par * e[i] * e[j] + nu_perp * p[i] * p[j];
        }
    }
    Response {
        h: [
            nu_par * bp * e[0] + nu_perp * bq * p[0],
            nu_par * bp * e[1] + nu_perp * bq * p[1],
        ],
        dh_db,
    }
}

fn check_permeability(
    material: &str,
    parameter: &'static str,
    value: f64,
    minimum_one: bool,
) -> Result<(), MaterialError> {
    let reason = if !value.is_finite() {
        Some("must be finite")
    } else if value <= 0.0 {
        Some("must be positive")
    } else if minimum_one && value < 1.0 {
        Some("is below 1: a permanent magnet's recoil permeability is at least that of vacuum")
    } else {
        None
    };
    match reason {
        Some(reason) => Err(MaterialError::InvalidParameter {
            material: material.into(),
            parameter,
            value,
            reason,
        }),
        None => Ok(()),
    }
}

impl LinearMagnet {
    /// Coercivity of this linear model, HcB = Br / (mu_0 mu_rec) (A/m): the field along the
    /// easy axis at which B vanishes on the straight recoil line. Real grades with a knee
    /// (ferrite, AlNiCo, high-remanence NdFeB) have a smaller published HcB.
    pub fn model_coercivity(&self) -> f64 {
        self.remanence / (MU_0 * self.recoil_permeability)
    }
}

impl Material {
    /// Air or any non-magnetic material (relative permeability 1).
    pub fn vacuum() -> Material {
        Material::Linear {
            relative_permeability: 1.0,
        }
    }

    /// H (A/m) and the exact tangent dH/dB (A/(m T)) at flux density `b` (T).
    ///
    /// `easy_axis` is the unit easy-axis vector at this point for magnets (see
    /// [`MagnetDirection::easy_axis_at`]); other laws ignore it (an anisotropic material uses
    /// its own principal angle).
    ///
    /// - Linear: H = nu B, nu = 1/(mu_0 mu_r).
    /// - Anisotropic: H = nu_par (B.e) e + nu_perp (B.e_perp) e_perp.
    /// - Soft: H = nu(|B|) B, tangent nu I + (dH/db - nu) B B^T/|B|^2 (= nu I + (dnu/db)/|B|
    ///   B B^T), which tends smoothly to nu(0) I as B -> 0.
    /// - Magnet: H = nu_par (B.e - Br) e + nu_perp (B.e_perp) e_perp with nu = 1/(mu_0 mu_r).
    /// - Brauer: H = nu B with nu = k1 exp(k2 |B|^2) + k3, tangent
    ///   nu I + 2 k1 k2 exp(k2 |B|^2) B B^T.
    ///
    /// A hysteretic magnet is evaluated from its initial state here; the solver passes each
    /// point's committed history through [`Material::response_with`].
    pub fn response(&self, b: [f64; 2], easy_axis: [f64; 2]) -> Response {
        self.response_with(b, easy_axis, None)
    }

    /// As [`Material::response`], with the committed `history` of the point for a hysteretic
    /// magnet (`None`: its initial state); other laws ignore `history`.
    pub fn response_with(
        &self,
        b: [f64; 2],
        easy_axis: [f64; 2],
        history: Option<&History>,
    ) -> Response {
        match self {
            Material::Hysteretic(m) => match history {
                Some(h) => m.response(b, easy_axis, h),
                None => m.response(b, easy_axis, &m.initial_history()),
            },
            Material::Linear {
                relative_permeability,
            } => {
                let nu = 1.0 / (MU_0 * relative_permeability);
                Response {
                    h: [nu * b[0], nu * b[1]],
                    dh_db: [[nu, 0.0], [0.0, nu]],
                }
            }
            Material::Anisotropic {
                parallel,
                perpendicular,
                angle,
            } => orthotropic(
                b,
                [angle.cos(), angle.sin()],
                1.0 / (MU_0 * parallel),
                1.0 / (MU_0 * perpendicular),
                0.0,
            ),
            Material::Soft(soft) => {
                let bm = b[0].hypot(b[1]);
                let (nu, slope) = soft.curve.reluctivity_and_slope(bm);
                let mut dh_db = [[nu, 0.0], [0.0, nu]];
                if bm > 0.0 {
                    let u = [b[0] / bm, b[1] / bm];
                    let extra = slope - nu;
                    for (i, row) in dh_db.iter_mut().enumerate() {
                        for (j, v) in row.iter_mut().enumerate() {
                            *v += extra * u[i] * u[j];
                        }
                    }
                }
                Response {
                    h: [nu * b[0], nu * b[1]],
                    dh_db,
                }
            }
            Material::Magnet(m) => orthotropic(
                b,
                easy_axis,
                1.0 / (MU_0 * m.recoil_permeability),
                1.0 / (MU_0 * m.perpendicular_permeability),
                m.remanence,
            ),
            Material::Brauer { k1, k2, k3 } => {
                let e = k1 * (k2 * (b[0] * b[0] + b[1] * b[1])).exp();
                let nu = e + k3;
                let c = 2.0 * k2 * e;
                let off = c * b[0] * b[1];
                Response {
                    h: [nu * b[0], nu * b[1]],
                    dh_db: [[nu + c * b[0] * b[0], off], [off, nu + c * b[1] * b[1]]],
                }
            }
        }
    }

    /// Energy density w (J/m^3): the integral of H . dB from the state H = 0 to `b` (T).
    /// For magnets the H = 0 state is B = Br e. Exact for the interpolated B-H curve.
    ///
    /// A hysteretic magnet's energy density is B.H - w' with w' its co-energy density along the
    /// branch leaving the point's state (see [`Material::coenergy_density_with`]).
    pub fn energy_density(&self, b: [f64; 2], easy_axis: [f64; 2]) -> f64 {
        self.energy_density_with(b, easy_axis, None)
    }

    /// As [`Material::energy_density`], with the committed history of a hysteretic point.
    pub fn energy_density_with(
        &self,
        b: [f64; 2],
        easy_axis: [f64; 2],
        history: Option<&History>,
    ) -> f64 {
        match self {
            Material::Hysteretic(_) => {
                let r = self.response_with(b, easy_axis, history);
                b[0] * r.h[0] + b[1] * r.h[1] - self.coenergy_density_with(b, easy_axis, history)
            }
            Material::Linear { .. } | Material::Anisotropic { .. } | Material::Magnet(_) => {
                let r = self.response(b, easy_axis);
                // Quadratic laws: w = (B - B_r).H / 2 with H linear in (B - B_r).
                let shift = match self {
                    Material::Magnet(m) => m.remanence,
                    _ => 0.0,
                };
                let d = [b[0] - shift * easy_axis[0], b[1] - shift * easy_axis[1]];
                0.5 * (d[0] * r.h[0] + d[1] * r.h[1])
            }
            Material::Soft(soft) => soft.curve.energy_density(b[0].hypot(b[1])),
            Material::Brauer { k1, k2, k3 } => {
                // w = int_0^|B| nu(s^2) s ds = k1 (exp(k2 b^2) - 1) / (2 k2) + k3 b^2 / 2,
                // with expm1 for accuracy at small k2 b^2 and the limit k1 b^2 / 2 at k2 = 0.
                let bb = b[0] * b[0] + b[1] * b[1];
                let exp_part = if *k2 > 0.0 {
                    k1 * (k2 * bb).exp_m1() / (2.0 * k2)
                } else {
                    0.5 * k1 * bb
                };
                exp_part + 0.5 * k3 * bb
            }
        }
    }

    /// Co-energy density w' = B.H - w (J/m^3) at `b` (T).
    pub fn coenergy_density(&self, b: [f64; 2], easy_axis: [f64; 2]) -> f64 {
        self.coenergy_density_with(b, easy_axis, None)
    }

    /// As [`Material::coenergy_density`], with the committed history of a hysteretic point:
    /// the integral of B dH from H = 0 along the branch that leaves that history (the law
    /// seen during the current load step, frozen for virtual displacements).
    pub fn coenergy_density_with(
        &self,
        b: [f64; 2],
        easy_axis: [f64; 2],
        history: Option<&History>,
    ) -> f64 {
        match self {
            Material::Hysteretic(m) => match history {
                Some(h) => m.coenergy_density(b, easy_axis, h),
                None => m.coenergy_density(b, easy_axis, &m.initial_history()),
            },
            _ => {
                let r = self.response(b, easy_axis);
                b[0] * r.h[0] + b[1] * r.h[1] - self.energy_density(b, easy_axis)
            }
        }
    }

    /// The knee field Hk (A/m, positive) of a magnet: the reverse field along the easy axis
    /// at which the polarisation of the major loop has fallen to 90 % of its remanence (the
    /// usual squareness measure of magnet grades). For a linear magnet this is the value it
    /// carries (the limit of its validity); for a hysteretic magnet it is computed from its
    /// loop. `None` for other materials or a linear magnet without one.
    pub fn knee_field(&self) -> Option<f64> {
        match self {
            Material::Magnet(m) => m.knee_field,
            Material::Hysteretic(m) => knee_of(&m.law),
            _ => None,
        }
    }

    /// The easy-axis layout of a magnet (`None` for other materials).
    pub fn magnet_direction(&self) -> Option<&MagnetDirection> {
        match self {
            Material::Magnet(m) => Some(&m.direction),
            Material::Hysteretic(m) => Some(&m.direction),
            _ => None,
        }
    }

    /// True for laws with magnetic history (their state is kept per quadrature point).
    pub fn is_hysteretic(&self) -> bool {
        matches!(self, Material::Hysteretic(_))
    }

    /// True when H is affine in B (the tangent is constant): one linear solve suffices.
    /// A Brauer law is linear only when k1 or k2 is zero.
    pub fn is_linear(&self) -> bool {
        match self {
            Material::Soft(_) | Material::Hysteretic(_) => false,
            Material::Brauer { k1, k2, .. } => *k1 == 0.0 || *k2 == 0.0,
            _ => true,
        }
    }

    /// Checks every parameter: positive finite permeabilities, recoil permeability at least 1,
    /// finite non-negative remanence, finite angles and centres; for a Brauer law finite
    /// k1 >= 0, k2 >= 0 and k3 > 0. A Brauer law is accepted even where its slope dB/dH is
    /// flatter than vacuum (it is a model, not a measured table: see [`Material::Brauer`]).
    ///
    /// # Errors
    /// [`MaterialError::InvalidParameter`] naming the parameter and its value.
    pub fn validate(&self) -> Result<(), MaterialError> {
        match self {
            Material::Linear {
                relative_permeability,
            } => check_permeability(
                "linear material",
                "relative permeability",
                *relative_permeability,
                false,
            ),
            Material::Anisotropic {
                parallel,
                perpendicular,
                angle,
            } => {
                check_permeability(
                    "anisotropic material",
                    "parallel permeability",
                    *parallel,
                    false,
                )?;
                check_permeability(
                    "anisotropic material",
                    "perpendicular permeability",
                    *perpendicular,
                    false,
                )?;
                if !angle.is_finite() {
                    return Err(MaterialError::InvalidParameter {
                        material: "anisotropic material".into(),
                        parameter: "angle (rad)",
                        value: *angle,
                        reason: "must be finite",
                    });
                }
                Ok(())
            }
            // The curve was checked when it was built or deserialised.
            Material::Soft(_) => Ok(()),
            Material::Hysteretic(m) => {
                m.law.validate()?;
                check_permeability(
                    "hysteretic magnet",
                    "perpendicular permeability",
                    m.perpendicular_permeability,
                    true,
                )?;
                m.direction.validate()
            }
            Material::Magnet(m) => {
                if !(m.remanence.is_finite() && m.remanence >= 0.0) {
                    return Err(MaterialError::InvalidParameter {
                        material: "magnet".into(),
                        parameter: "remanence (T)",
                        value: m.remanence,
                        reason: "must be finite and non-negative (reverse the easy axis instead)",
                    });
                }
                check_permeability("magnet", "recoil permeability", m.recoil_permeability, true)?;
                check_permeability(
                    "magnet",
                    "perpendicular permeability",
                    m.perpendicular_permeability,
                    true,
                )?;
                m.direction.validate()
            }
            Material::Brauer { k1, k2, k3 } => {
                for (parameter, value, positive) in [
                    ("k1 (A/(m T))", *k1, false),
                    ("k2 (1/T^2)", *k2, false),
                    ("k3 (A/(m T))", *k3, true),
                ] {
                    let reason = if !value.is_finite() {
                        Some("must be finite")
                    } else if positive && value <= 0.0 {
                        Some("must be positive")
                    } else if value < 0.0 {
                        Some("must be non-negative")
                    } else {
                        None
                    };
                    if let Some(reason) = reason {
                        return Err(MaterialError::InvalidParameter {
                            material: "Brauer law".into(),
                            parameter,
                            value,
                            reason,
                        });
                    }
                }
                Ok(())
            }
        }
    }
}
