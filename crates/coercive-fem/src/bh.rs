//! Monotone B-H curves for nonlinear soft magnetic materials.
//!
//! A [`BhCurve`] stores the field strength H (A/m) as a piecewise cubic Hermite function of the
//! flux density magnitude b = |B| (T), through knots that start at the origin. Beyond the last
//! knot the curve continues with slope dB/dH = mu_0 (the material is saturated and behaves like
//! vacuum plus a constant polarisation).
//!
//! # Guarantees
//! - H(b) is strictly increasing and continuous, C1 inside the table, with dH/dB > 0
//!   everywhere (also at B = 0, so the Newton tangent never degenerates); at the last knot the
//!   slope jumps to the vacuum value 1/mu_0 unless the data already end at vacuum slope (the
//!   analytic constructors [`BhCurve::brauer`] and [`BhCurve::saturating`] sample far enough
//!   that the jump is negligible).
//! - Knot slopes satisfy 0 < dH/dB <= 1/mu_0: the processed curve is never flatter than vacuum
//!   at a knot (the usual physical bound dB/dH >= mu_0).
//! - The energy density w(b) = integral of H db is evaluated in closed form from the cubic
//!   pieces, so energy and co-energy are exact for the interpolant.
//!
//! # Interpolation
//! Measured points are interpolated by the monotone piecewise cubic of Steffen
//! (M. Steffen, "A simple method for monotonic interpolation in one dimension", Astronomy and
//! Astrophysics 239, 443-450, 1990): knot slopes are the slope of the parabola through three
//! neighbouring points, limited to twice the smaller neighbouring secant, which keeps every
//! cubic piece monotone and free of overshoot. Analytic laws are sampled with their exact
//! derivatives at the knots (Hermite interpolation, error of fourth order in the knot spacing);
//! those slopes are passed through the monotonicity limiter of Fritsch and Carlson
//! (F. N. Fritsch, R. E. Carlson, "Monotone piecewise cubic interpolation", SIAM J. Numer.
//! Anal. 17(2), 238-246, 1980), which leaves them untouched on smooth, densely sampled data.
//!
//! # Limitations
//! Only the magnitude of B enters (isotropic materials); negative arguments are treated by odd
//! symmetry. Hysteresis is not represented.

use serde::{Deserialize, Serialize};

use crate::material::{MaterialError, MU_0};

/// Relative tolerance applied to the vacuum-slope test on measured data.
const VACUUM_SLOPE_TOLERANCE: f64 = 1e-9;

/// A processed B-H curve: monotone interpolation of measured points, slope mu_0 beyond the
/// last point.
///
/// (De)serialised as its processed table `{ b, h, dh_db }`; deserialisation re-checks the table
/// (finite, starting at the origin, strictly increasing knots, slopes in (0, 1/mu_0], and
/// every cubic piece strictly increasing), so a stored table cannot bring back a flat or
/// decreasing curve.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(try_from = "BhTable", into = "BhTable")]
pub struct BhCurve {
    /// Flux densities of the processed table (T), increasing from 0.
    b: Vec<f64>,
    /// Field strengths of the processed table (A/m), increasing from 0.
    h: Vec<f64>,
    /// Slope dH/dB at each knot (A/(m T)).
    slope: Vec<f64>,
    /// Energy density integral of H db from 0 to each knot (J/m^3).
    energy: Vec<f64>,
}

/// The serialised form of a [`BhCurve`]: the processed knots and their slopes.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct BhTable {
    /// Flux densities (T), strictly increasing from 0.
    pub b: Vec<f64>,
    /// Field strengths (A/m), strictly increasing from 0.
    pub h: Vec<f64>,
    /// Slopes dH/dB at the knots (A/(m T)).
    pub dh_db: Vec<f64>,
}

/// One knot of a processed curve, for inspection.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct BhKnot {
    /// Field strength H (A/m).
    pub h: f64,
    /// Flux density B (T).
    pub b: f64,
    /// Slope dH/dB of the interpolant at this knot (A/(m T)).
    pub dh_db: f64,
}

impl From<BhCurve> for BhTable {
    fn from(c: BhCurve) -> Self {
        BhTable {
            b: c.b,
            h: c.h,
            dh_db: c.slope,
        }
    }
}

impl TryFrom<BhTable> for BhCurve {
    type Error = MaterialError;
    fn try_from(t: BhTable) -> Result<Self, MaterialError> {
        if t.b.len() != t.h.len() || t.b.len() != t.dh_db.len() {
            return Err(MaterialError::InvalidTable {
                reason: format!(
                    "columns differ in length: b {}, h {}, dh_db {}",
                    t.b.len(),
                    t.h.len(),
                    t.dh_db.len()
                ),
            });
        }
        if t.b.len() < 2 || t.b[0] != 0.0 || t.h[0] != 0.0 {
            return Err(MaterialError::InvalidTable {
                reason: "a processed table starts at the origin and has at least two knots".into(),
            });
        }
        for i in 0..t.b.len() {
            let ok = t.b[i].is_finite()
                && t.h[i].is_finite()
                && t.dh_db[i].is_finite()
                && t.dh_db[i] > 0.0
                && t.dh_db[i] <= (1.0 + VACUUM_SLOPE_TOLERANCE) / MU_0
                && (i == 0 || (t.b[i] > t.b[i - 1] && t.h[i] > t.h[i - 1]));
            if !ok {
                return Err(MaterialError::InvalidTable {
                    reason: format!(
                        "knot {i} (H = {} A/m, B = {} T, dH/dB = {} A/(m T)) is not finite, not \
                         increasing or has a slope outside (0, 1/mu_0]",
                        t.h[i], t.b[i], t.dh_db[i]
                    ),
                });
            }
        }
        for i in 0..t.b.len() - 1 {
            let secant = (t.h[i + 1] - t.h[i]) / (t.b[i + 1] - t.b[i]);
            if !hermite_piece_increasing(t.dh_db[i] / secant, t.dh_db[i + 1] / secant) {
                return Err(MaterialError::InvalidTable {
                    reason: format!(
                        "the piece from knot {i} (B = {} T) to knot {} (B = {} T) is not strictly \
                         increasing: its slopes {} and {} A/(m T) are too steep for its secant \
                         {secant} A/(m T)",
                        t.b[i],
                        i + 1,
                        t.b[i + 1],
                        t.dh_db[i],
                        t.dh_db[i + 1]
                    ),
                });
            }
        }
        Ok(BhCurve::from_knots(t.b, t.h, t.dh_db))
    }
}

impl BhCurve {
    /// Builds a curve from measured (H, B) points: H in A/m, B in T.
    ///
    /// The origin is optional (it is added when missing). The remaining points must be finite,
    /// positive, strictly increasing in both H and B, at least two of them, and no secant may be
    /// flatter than vacuum (dB/dH >= mu_0: a measured curve of a material cannot rise more
    /// slowly than the vacuum contribution mu_0 H; such data usually comes from a unit slip,
    /// e.g. kA/m entered as A/m, or from a polarisation J entered as B). The curve is
    /// interpolated by Steffen's monotone cubic (see the module documentation).
    ///
    /// # Errors
    /// [`MaterialError`] naming the offending point by its index in `points` (0-based) and its
    /// values.
    pub fn from_points(points: &[(f64, f64)]) -> Result<BhCurve, MaterialError> {
        let mut b = vec![0.0];
        let mut h = vec![0.0];
        let mut indices = vec![usize::MAX];
        for (index, &(hi, bi)) in points.iter().enumerate() {
            if !hi.is_finite() || !bi.is_finite() {
                return Err(MaterialError::NotFinite {
                    index,
                    h: hi,
                    b: bi,
                });
            }
            if hi < 0.0 || bi < 0.0 {
                return Err(MaterialError::Negative {
                    index,
                    h: hi,
                    b: bi,
                });
            }
            if hi == 0.0 && bi == 0.0 && index == 0 {
                continue;
            }
            if hi == 0.0 || bi == 0.0 {
                return Err(MaterialError::OffOrigin {
                    index,
                    h: hi,
                    b: bi,
                });
            }
            let (ph, pb) = (*h.last().unwrap_or(&0.0), *b.last().unwrap_or(&0.0));
            if hi <= ph || bi <= pb {
                return Err(MaterialError::NotMonotone {
                    index,
                    h: hi,
                    b: bi,
                    previous_h: ph,
                    previous_b: pb,
                });
            }
            let secant = (bi - pb) / (hi - ph);
            if secant < MU_0 * (1.0 - VACUUM_SLOPE_TOLERANCE) {
                return Err(MaterialError::FlatterThanVacuum {
                    index,
                    h: hi,
                    b: bi,
                    relative_slope: secant / MU_0,
                });
            }
            b.push(bi);
            h.push(hi);
            indices.push(index);
        }
        let measured = b.len() - 1;
        if measured < 2 {
            return Err(MaterialError::TooFewPoints {
                count: measured,
                required: 2,
            });
        }
        let slope = steffen_slopes(&b, &h);
        Ok(BhCurve::from_knots(b, h, slope))
    }

    /// Brauer's law H = (k1 exp(k2 B^2) + k3) B (Brauer, IEEE Trans. Magn. 11(1), 1975), with
    /// k1, k3 in A/(m T) and k2 in 1/T^2, sampled adaptively so that the interpolant's relative
    /// error in H is below 1e-7 up to the flux density where the law's slope dB/dH falls to
    /// mu_0; beyond it the curve continues at vacuum slope (the law itself would become flatter
    /// than vacuum there, which no material does).
    ///
    /// # Errors
    /// [`MaterialError::InvalidParameter`] if a coefficient is negative or not finite, or if
    /// k1 + k3 is not positive.
    pub fn brauer(k1: f64, k2: f64, k3: f64) -> Result<BhCurve, MaterialError> {
        for (name, v) in [("k1", k1), ("k2", k2), ("k3", k3)] {
            if !v.is_finite() || v < 0.0 {
                return Err(MaterialError::InvalidParameter {
                    material: "Brauer law".into(),
                    parameter: name,
                    value: v,
                    reason: "must be finite and non-negative",
                });
            }
        }
        if k1 + k3 <= 0.0 {
            return Err(MaterialError::InvalidParameter {
                material: "Brauer law".into(),
                parameter: "k1 + k3",
                value: k1 + k3,
                reason: "the initial reluctivity k1 + k3 must be positive",
            });
        }
        let law = move |bb: f64| {
            let e = k1 * (k2 * bb * bb).exp();
            ((e + k3) * bb, e * (1.0 + 2.0 * k2 * bb * bb) + k3)
        };
        // End of the table: where dH/dB reaches 1/mu_0 (bisection on the increasing slope),
        // capped at 10 T (then the law is linear enough, e.g. k1 = 0).
        let vacuum = 1.0 / MU_0;
        let mut hi = 10.0;
        if law(hi).1 > vacuum {
            let mut lo = 0.0;
            for _ in 0..200 {
                let mid = 0.5 * (lo + hi);
                if law(mid).1 > vacuum {
                    hi = mid;
                } else {
                    lo = mid;
                }
            }
            hi = lo;
        }
        if law(0.0).1 > vacuum {
            return Err(MaterialError::InvalidParameter {
                material: "Brauer law".into(),
                parameter: "k1 + k3",
                value: k1 + k3,
                reason:
                    "the initial reluctivity exceeds that of vacuum (relative permeability below 1)",
            });
        }
        Ok(sample_law(law, hi))
    }

    /// The saturating law B = mu_0 H + Js H / (H + H0) (polarisation Js in T, half-saturation
    /// field H0 in A/m), sampled adaptively (relative error in H below 1e-7) up to
    /// H = 1e7 H0, beyond which the vacuum-slope extrapolation differs from the law by less
    /// than 1e-7 Js.
    ///
    /// # Errors
    /// [`MaterialError::InvalidParameter`] if Js or H0 is not finite and positive.
    pub fn saturating(js: f64, h0: f64) -> Result<BhCurve, MaterialError> {
        for (name, v) in [("Js", js), ("H0", h0)] {
            if !v.is_finite() || v <= 0.0 {
                return Err(MaterialError::InvalidParameter {
                    material: "saturating law".into(),
                    parameter: name,
                    value: v,
                    reason: "must be finite and positive",
                });
            }
        }
        let law = move |bb: f64| {
            let hh = saturating_h_of_b(js, h0, bb);
            let db_dh = MU_0 + js * h0 / ((hh + h0) * (hh + h0));
            (hh, 1.0 / db_dh)
        };
        let h_end = 1e7 * h0;
        let b_end = MU_0 * h_end + js * h_end / (h_end + h0);
        Ok(sample_law(law, b_end))
    }

    /// The same steel in a laminated stack with stacking factor `k` (0 < k <= 1): the effective
    /// flux density over the stack is B_eff(H) = k B_steel(H) + (1 - k) mu_0 H.
    ///
    /// Each piece of the curve is subdivided four times and mapped with exact slopes, so the
    /// result follows the mapped interpolant closely; it is monotone and keeps vacuum slope
    /// beyond its last knot.
    ///
    /// # Errors
    /// [`MaterialError::InvalidParameter`] if `k` is not in (0, 1].
    pub fn with_stacking_factor(&self, k: f64) -> Result<BhCurve, MaterialError> {
        if !(k.is_finite() && k > 0.0 && k <= 1.0) {
            return Err(MaterialError::InvalidParameter {
                material: "B-H curve".into(),
                parameter: "stacking factor",
                value: k,
                reason: "must lie in (0, 1]",
            });
        }
        if k == 1.0 {
            return Ok(self.clone());
        }
        let subdivisions = 4;
        let mut b = Vec::with_capacity(self.b.len() * subdivisions);
        let mut h = Vec::with_capacity(b.capacity());
        let mut slope = Vec::with_capacity(b.capacity());
        let mut push = |bs: f64, (hs, ms): (f64, f64)| {
            b.push(k * bs + (1.0 - k) * MU_0 * hs);
            h.push(hs);
            // dH/dB_eff = 1 / (k dB/dH + (1 - k) mu_0) with dB/dH = 1/ms.
            slope.push(ms / (k + (1.0 - k) * MU_0 * ms));
        };
        for i in 0..self.b.len() - 1 {
            for j in 0..subdivisions {
                let bs = self.b[i] + (self.b[i + 1] - self.b[i]) * j as f64 / subdivisions as f64;
                push(bs, self.h_of_b(bs));
            }
        }
        let last = self.b.len() - 1;
        push(self.b[last], (self.h[last], self.slope[last]));
        let slope = fritsch_carlson_limit(&b, &h, slope);
        Ok(BhCurve::from_knots(b, h, slope))
    }

    /// H (A/m) and dH/dB (A/(m T)) at flux density magnitude `b` (T). Odd in `b`.
    pub fn h_of_b(&self, b: f64) -> (f64, f64) {
        if b < 0.0 {
            let (h, d) = self.h_of_b(-b);
            return (-h, d);
        }
        let n = self.b.len() - 1;
        if b >= self.b[n] {
            return (self.h[n] + (b - self.b[n]) / MU_0, 1.0 / MU_0);
        }
        let i = self.interval(b);
        let (c1, c2, c3) = self.coefficients(i);
        let t = b - self.b[i];
        (
            self.h[i] + t * (c1 + t * (c2 + t * c3)),
            c1 + t * (2.0 * c2 + 3.0 * t * c3),
        )
    }

    /// B (T) at field strength `h` (A/m): the inverse of [`BhCurve::h_of_b`]. Odd in `h`.
    pub fn b_of_h(&self, h: f64) -> f64 {
        if h < 0.0 {
            return -self.b_of_h(-h);
        }
        let n = self.h.len() - 1;
        if h >= self.h[n] {
            return self.b[n] + MU_0 * (h - self.h[n]);
        }
        let i = self
            .h
            .partition_point(|&x| x <= h)
            .saturating_sub(1)
            .min(n - 1);
        let (c1, c2, c3) = self.coefficients(i);
        let width = self.b[i + 1] - self.b[i];
        let target = h - self.h[i];
        // Safeguarded Newton on the increasing cubic p(t) = c1 t + c2 t^2 + c3 t^3 over
        // [0, width].
        let (mut lo, mut hi) = (0.0, width);
        let mut t = width * target / (self.h[i + 1] - self.h[i]);
        for _ in 0..100 {
            let p = t * (c1 + t * (c2 + t * c3)) - target;
            if p == 0.0 {
                break;
            }
            if p > 0.0 {
                hi = t;
            } else {
                lo = t;
            }
            let dp = c1 + t * (2.0 * c2 + 3.0 * t * c3);
            let mut next = if dp > 0.0 { t - p / dp } else { f64::NAN };
            if !(next >= lo && next <= hi) {
                next = 0.5 * (lo + hi);
            }
            if (next - t).abs() <= 1e-15 * width.max(f64::MIN_POSITIVE) {
                t = next;
                break;
            }
            t = next;
        }
        self.b[i] + t
    }

    /// Reluctivity nu = H/b (m/H) and its derivative dnu/db (m/(H T)) at `b` = |B| >= 0 (T).
    ///
    /// Smooth at b -> 0: on the first piece H(b) = c1 b + c2 b^2 + c3 b^3, so nu = c1 + c2 b +
    /// c3 b^2 is evaluated without division.
    pub fn reluctivity(&self, b: f64) -> (f64, f64) {
        let b = b.abs();
        if b < self.b[1] {
            let (c1, c2, c3) = self.coefficients(0);
            return (c1 + b * (c2 + b * c3), c2 + 2.0 * b * c3);
        }
        let (h, d) = self.h_of_b(b);
        let nu = h / b;
        (nu, (d - nu) / b)
    }

    /// Reluctivity nu = H/b (m/H) and slope dH/db (A/(m T)) at `b` = |B| >= 0 (T) with one
    /// table look-up (what the tangent nu I + (dH/db - nu) B B^T/|B|^2 needs).
    pub fn reluctivity_and_slope(&self, b: f64) -> (f64, f64) {
        let b = b.abs();
        if b < self.b[1] {
            let (c1, c2, c3) = self.coefficients(0);
            return (c1 + b * (c2 + b * c3), c1 + b * (2.0 * c2 + 3.0 * b * c3));
        }
        let (h, d) = self.h_of_b(b);
        (h / b, d)
    }

    /// Energy density w(b) = integral from 0 to b of H db' (J/m^3), exact for the interpolant.
    pub fn energy_density(&self, b: f64) -> f64 {
        let b = b.abs();
        let n = self.b.len() - 1;
        if b >= self.b[n] {
            let t = b - self.b[n];
            return self.energy[n] + self.h[n] * t + 0.5 * t * t / MU_0;
        }
        let i = self.interval(b);
        let (c1, c2, c3) = self.coefficients(i);
        let t = b - self.b[i];
        self.energy[i] + t * (self.h[i] + t * (c1 / 2.0 + t * (c2 / 3.0 + t * c3 / 4.0)))
    }

    /// Co-energy density w'(b) = b H(b) - w(b) = integral from 0 to H of B dH' (J/m^3).
    pub fn coenergy_density(&self, b: f64) -> f64 {
        let b = b.abs();
        b * self.h_of_b(b).0 - self.energy_density(b)
    }

    /// The processed knots (the origin first), to inspect what the interpolation made of the
    /// input.
    pub fn points(&self) -> Vec<BhKnot> {
        (0..self.b.len())
            .map(|i| BhKnot {
                h: self.h[i],
                b: self.b[i],
                dh_db: self.slope[i],
            })
            .collect()
    }

    /// Flux density of the last knot (T), beyond which the slope is mu_0.
    pub fn last_b(&self) -> f64 {
        self.b[self.b.len() - 1]
    }

    /// Initial relative permeability 1 / (mu_0 dH/dB at the origin).
    pub fn initial_relative_permeability(&self) -> f64 {
        1.0 / (MU_0 * self.slope[0])
    }

    /// Builds the curve from checked knots and slopes, computing the energy prefix sums.
    fn from_knots(b: Vec<f64>, h: Vec<f64>, slope: Vec<f64>) -> BhCurve {
        let mut energy = vec![0.0; b.len()];
        for i in 0..b.len() - 1 {
            let w = b[i + 1] - b[i];
            energy[i + 1] =
                energy[i] + 0.5 * w * (h[i] + h[i + 1]) + w * w * (slope[i] - slope[i + 1]) / 12.0;
        }
        BhCurve {
            b,
            h,
            slope,
            energy,
        }
    }

    /// Index i of the piece [b_i, b_{i+1}) containing `b` (0 <= b < last knot).
    fn interval(&self, b: f64) -> usize {
        let n = self.b.len() - 1;
        self.b
            .partition_point(|&x| x <= b)
            .saturating_sub(1)
            .min(n - 1)
    }

    /// Power-form coefficients of piece i: H = h_i + c1 t + c2 t^2 + c3 t^3, t = b - b_i.
    fn coefficients(&self, i: usize) -> (f64, f64, f64) {
        let w = self.b[i + 1] - self.b[i];
        let delta = (self.h[i + 1] - self.h[i]) / w;
        let (m0, m1) = (self.slope[i], self.slope[i + 1]);
        (
            m0,
            (3.0 * delta - 2.0 * m0 - m1) / w,
            (m0 + m1 - 2.0 * delta) / (w * w),
        )
    }
}

/// H of the saturating law B = mu_0 H + Js H/(H + H0), from the positive root of
/// mu_0 H^2 + (mu_0 H0 + Js - B) H - B H0 = 0, in a cancellation-free form.
pub(crate) fn saturating_h_of_b(js: f64, h0: f64, b: f64) -> f64 {
    let p = MU_0 * h0 + js - b;
    let disc = (p * p + 4.0 * MU_0 * b * h0).sqrt();
    if p > 0.0 {
        2.0 * b * h0 / (p + disc)
    } else {
        (disc - p) / (2.0 * MU_0)
    }
}

/// Whether the cubic Hermite piece with end-slope ratios `alpha` = m_i/delta and
/// `beta` = m_{i+1}/delta (delta the piece's secant, positive) is strictly increasing: with
/// t in [0, 1] its normalised derivative is (3 alpha + 3 beta - 6) t^2 + (6 - 4 alpha - 2 beta)
/// t + alpha, which must stay positive (the exact form of the region of Fritsch and Carlson,
/// SIAM J. Numer. Anal. 17(2), 1980, made strict).
fn hermite_piece_increasing(alpha: f64, beta: f64) -> bool {
    if !(alpha > 0.0 && beta > 0.0 && alpha.is_finite() && beta.is_finite()) {
        return false;
    }
    let a = 3.0 * alpha + 3.0 * beta - 6.0;
    let b = 6.0 - 4.0 * alpha - 2.0 * beta;
    if a > 0.0 {
        let t = -b / (2.0 * a);
        if t > 0.0 && t < 1.0 {
            return alpha - b * b / (4.0 * a) > 0.0;
        }
    }
    true
}

/// Steffen (1990) knot slopes for strictly increasing data, clamped to at most 1/mu_0.
fn steffen_slopes(x: &[f64], y: &[f64]) -> Vec<f64> {
    let n = x.len();
    let w: Vec<f64> = (0..n - 1).map(|i| x[i + 1] - x[i]).collect();
    let s: Vec<f64> = (0..n - 1).map(|i| (y[i + 1] - y[i]) / w[i]).collect();
    let mut m = vec![0.0; n];
    for i in 1..n - 1 {
        // Slope at x_i of the parabola through the three neighbouring points (Steffen eq. 7),
        // limited as in Steffen eq. 11 (all secants positive here).
        let p = (s[i - 1] * w[i] + s[i] * w[i - 1]) / (w[i - 1] + w[i]);
        m[i] = p.min(2.0 * s[i - 1]).min(2.0 * s[i]);
    }
    // End points: the slope at the end of the parabola through the first (last) three
    // points (Steffen eqs. 26-27), limited to [s/2, 2s] with s the end secant. Steffen sets a
    // non-positive end slope to zero; here that would make dH/dB vanish at B = 0 (infinite
    // initial permeability and a singular Newton tangent there), so the slope keeps at least
    // half the end secant. With 1/2 <= alpha <= 2 and 0 < beta <= 2 every end piece stays
    // inside the disc alpha^2 + beta^2 < 9 of Fritsch and Carlson (1980), hence strictly
    // increasing.
    let end = |p: f64, s: f64| p.clamp(0.5 * s, 2.0 * s);
    if n == 2 {
        m[0] = s[0];
        m[1] = s[0];
    } else {
        let p0 = s[0] * (1.0 + w[0] / (w[0] + w[1])) - s[1] * w[0] / (w[0] + w[1]);
        m[0] = end(p0, s[0]);
        let (a, c) = (w[n - 2], w[n - 3]);
        let pn = s[n - 2] * (1.0 + a / (a + c)) - s[n - 3] * a / (a + c);
        m[n - 1] = end(pn, s[n - 2]);
    }
    for v in &mut m {
        *v = v.min(1.0 / MU_0);
    }
    m
}

/// Fritsch-Carlson (1980) limiter: for each piece with secant delta, if the slope ratios
/// alpha = m_i/delta, beta = m_{i+1}/delta leave the disc alpha^2 + beta^2 <= 9, both are scaled
/// back onto it; negative slopes are set to zero; all slopes are clamped to at most 1/mu_0.
/// Lowering a slope keeps earlier pieces inside their monotone region.
fn fritsch_carlson_limit(x: &[f64], y: &[f64], mut m: Vec<f64>) -> Vec<f64> {
    for v in &mut m {
        *v = v.clamp(0.0, 1.0 / MU_0);
    }
    for i in 0..x.len() - 1 {
        let delta = (y[i + 1] - y[i]) / (x[i + 1] - x[i]);
        let (a, b) = (m[i] / delta, m[i + 1] / delta);
        let r2 = a * a + b * b;
        if r2 > 9.0 {
            let tau = 3.0 / r2.sqrt();
            m[i] = tau * a * delta;
            m[i + 1] = tau * b * delta;
        }
    }
    m
}

/// Samples an analytic increasing law b -> (H, dH/dB) on [0, b_end] with Hermite knots, bisecting
/// pieces until the relative error of H at the quarter points is below 1e-7 (at most 16384
/// pieces).
fn sample_law(law: impl Fn(f64) -> (f64, f64), b_end: f64) -> BhCurve {
    const TOLERANCE: f64 = 1e-7;
    const MAX_PIECES: usize = 16384;
    let mut knots: Vec<f64> = (0..=32).map(|i| b_end * i as f64 / 32.0).collect();
    loop {
        let mut refined = Vec::with_capacity(knots.len() * 2);
        let mut changed = false;
        for i in 0..knots.len() - 1 {
            refined.push(knots[i]);
            let (b0, b1) = (knots[i], knots[i + 1]);
            let (h0, m0) = law(b0);
            let (h1, m1) = law(b1);
            let w = b1 - b0;
            let bad = [0.25, 0.5, 0.75].iter().any(|&s| {
                let (ht, _) = law(b0 + s * w);
                let hermite = (2.0 * s * s * s - 3.0 * s * s + 1.0) * h0
                    + (s * s * s - 2.0 * s * s + s) * w * m0
                    + (-2.0 * s * s * s + 3.0 * s * s) * h1
                    + (s * s * s - s * s) * w * m1;
                (hermite - ht).abs() > TOLERANCE * ht.abs()
            });
            if bad && knots.len() + refined.len() < MAX_PIECES {
                refined.push(0.5 * (b0 + b1));
                changed = true;
            }
        }
        refined.push(*knots.last().unwrap_or(&b_end));
        knots = refined;
        if !changed {
            break;
        }
    }
    let h: Vec<f64> = knots.iter().map(|&b| law(b).0).collect();
    let slope: Vec<f64> = knots.iter().map(|&b| law(b).1).collect();
    let slope = fritsch_carlson_limit(&knots, &h, slope);
    BhCurve::from_knots(knots, h, slope)
}
