//! Scalar hysteresis of a permanent magnet along its easy axis: a classical Preisach model
//! with a closed-form Everett function, a saturating reversible part, and identification from
//! datasheet numbers.
//!
//! The finite-element code handles the vector geometry (the component of H along the easy axis
//! and the linear perpendicular part); this module maps the axial field strength H (A/m) and
//! the committed [`History`] of one point to the axial polarisation J (T) and flux density
//! B = mu_0 H + J (T), and back.
//!
//! # The model
//! B = mu_0 H + J_irr(H; history) + J_rev(H) along the easy axis.
//!
//! ## Irreversible part: classical Preisach model
//! J_irr is the classical Preisach model (I. D. Mayergoyz, *Mathematical Models of
//! Hysteresis*, Springer 1991, ch. 1): a superposition of rectangular hysterons switching up
//! at alpha and down at beta <= alpha, weighted by a density mu(alpha, beta) >= 0. For a
//! history with alternating dominant input extrema x_1, x_2, ..., x_n after an initial
//! saturation x_0 = +inf or -inf, and the present input h, the output is the staircase sum
//! (Mayergoyz 1991, ch. 1, the formulas in terms of the Everett function)
//!
//! J_irr = (+/-) Js + sum over the segments x_(k-1) -> x_k and x_n -> h of
//! (+2 E(x_k, x_(k-1)) for an ascending segment, -2 E(x_(k-1), x_k) for a descending one),
//!
//! where E(a, b) (a >= b) is the Everett function, the weight of the triangle
//! b <= beta <= alpha <= a. Wiping-out: an input beyond a stored maximum (minimum) erases it
//! together with the minimum (maximum) stored after it.
//!
//! ## The closed-form Everett function
//! We use the antisymmetrised product form (after Yamaguchi, Ueda & Yamamoto, IEEE Transl. J.
//! Magn. Japan 4(6), 1989):
//!
//! E(a, b) = Js [F((a - Hc)/s) F((-b - Hc)/s) - F((-a - Hc)/s) F((b - Hc)/s)],
//!
//! with F a symmetric sigmoid cumulative distribution (F(-z) = 1 - F(z)) and S = 2F - 1 the
//! odd sigmoid ([`Sigmoid::Logistic`]: S = tanh, F(z) = 1/(1 + exp(-2z));
//! [`Sigmoid::Erf`]: S = erf). Derivation, checked here and by the tests:
//! - E(a, a) = 0 by inspection, and E(+inf, -inf) = Js: the total weight is Js.
//! - Descending major branch, from positive saturation: J = Js - 2 E(+inf, h) =
//!   Js (1 - 2 F((-h - Hc)/s)) = Js S((h + Hc)/s). Ascending from negative saturation:
//!   J = -Js + 2 E(h, -inf) = Js S((h - Hc)/s). So Hc is the coercive field of the
//!   irreversible part and s the width of its switching (squareness).
//! - The density is mu(alpha, beta) = -d2E/(dalpha dbeta) =
//!   (Js/s^2) [f(za-) f(zb+) - f(za+) f(zb-)] with za-/+ = (alpha -/+ Hc)/s,
//!   zb+/- = (beta +/- Hc)/s and f = F'. Both pairs of arguments have the same sum; the first
//!   pair is the less spread one when alpha > beta and Hc > 0, so for a strictly log-concave
//!   f (logistic and Gaussian are) the density is strictly positive for alpha > beta.
//! - E is not only the integral of that density over the triangle: its derivative along the
//!   diagonal, dE/da(a, b = a) = (Js/s) [f(za-) F(-zb+) + f(za+) F(zb-)] at b = a, is not
//!   zero. Writing E = E_off + G(a) - G(b), the difference G is the weight of hysterons on the
//!   diagonal alpha = beta, i.e. a reversible (single-valued) component with density
//!   G'(h) >= 0. The staircase sum telescopes G into 2 G(h) + constant, so the model is a
//!   classical Preisach model whose density has a non-negative diagonal part. Its density is
//!   at most of order (Js/s) exp(-4 Hc/s) for the logistic sigmoid and
//!   (Js/s) exp(-2 (Hc/s)^2) for erf, negligible for the square loops of magnets (Hc/s is
//!   3 to 40 for the presets), so the irreversible part alone has a recoil slope of about
//!   mu_0 (relative permeability 1).
//!
//! ## Reversible part
//! J_rev(H) = J_r tanh(mu_0 (mu_rec - 1) H / J_r): slope mu_0 (mu_rec - 1) at H = 0, so the
//! recoil permeability near remanence is mu_rec, saturating at +/- J_r. J_r is a modelling
//! choice per grade (a linear reversible part would overshoot: for AlNiCo 5 at 240 kA/m it
//! would give about 2.4 T); the presets document theirs.
//!
//! ## Memory
//! A [`History`] stores the initial saturation, the dominant extrema (oldest first, at most
//! [`MAX_REVERSALS`]) and the last committed input. Two rules keep it bounded:
//! - a reversal pair whose amplitude is below [`REVERSAL_TOLERANCE`] times s is forgotten when
//!   the input turns back (numerical noise of converged load steps leaves no trace); the
//!   error is of order Js (tolerance)^2;
//! - when a new reversal would exceed the cap, the stored pair (x_k, x_(k+1)) whose removal
//!   changes the present output least is dropped (the pair that includes the new extremum is
//!   kept; ties go to the oldest pair). Removing a pair replaces the segments
//!   x_(k-1) -> x_k -> x_(k+1) -> x_(k+2) by x_(k-1) -> x_(k+2), so the change is a sum of
//!   four Everett terms, computed exactly; the choice depends on the history only. In a
//!   long decaying pulse train this drops the outer pairs that lie in saturation and later
//!   the inner pulses far below Hc, both of negligible weight. Two fixed rules were tried
//!   and rejected: dropping the newest pair forgets the later pulses that set the final
//!   state, and dropping the oldest pair eventually exposes the initial saturation; with a
//!   ratio 0.98 train both left the magnet near full magnetisation instead of near zero.
//!
//! A decaying alternating pulse train keeps one extremum per pulse until the cap.
//!
//! # Energy
//! A hysteron (alpha >= beta) of weight mu switching up at H = alpha takes the work
//! 2 mu alpha from the field (its polarisation changes by 2 mu), switching down at beta gives
//! back 2 mu beta. Split each work into a stored part +/-(alpha + beta) mu and a loss
//! (alpha - beta) mu >= 0 (the classical energy reading of the Preisach model: Mayergoyz
//! 1991, ch. 1; Bertotti, *Hysteresis in Magnetism*, Academic Press 1998, the chapter on the
//! Preisach model's energy and dissipation). So a state stores U_irr = integral of
//! ((alpha + beta)/2) gamma dmu (gamma = +/-1 the hysterons' states), and a monotone step
//! dissipates the integral of (alpha - beta) dmu over the hysterons it switches. Both follow
//! the staircase sum of J with the Everett function replaced by a moment:
//!
//! M(a, b) = (Js/2) [(Q(a) + Q(b)) (P1(a) - P1(b)) - (P(a) + P(b)) (Q1(a) - Q1(b))],
//! D(a, b) = Js [(P(a) - P(b)) (Q1(a) - Q1(b)) - (Q(a) - Q(b)) (P1(a) - P1(b))],
//!
//! with E = Js [P(a) Q(b) - Q(a) P(b)], P(x) = F((x - Hc)/s), Q(x) = F(-(x + Hc)/s) and
//! P1, Q1 antiderivatives of x P'(x) and x Q'(x) (through the sigmoid's partial first moment,
//! closed form for both sigmoids). Derivation: the density is a sum of products of
//! functions of alpha and of beta, so the triangle integrals reduce to one-dimensional ones;
//! the diagonal (reversible) part adds x G'(x) to M and nothing to D, and the remaining
//! diagonal integral is the exact derivative of P Q~ - Q P~ with P~' = P, Q~' = Q. D is
//! the integral over the square [b, a]^2 of (t - u) P'(u) Q'(t), non-negative. The tests
//! check M, D and E against two-dimensional quadrature of the density. Over a closed major
//! cycle the loss is 2 D(+inf, -inf) = 4 Js Hc, the loop area of the irreversible part.
//!
//! The stored energy density along the easy axis is then mu_0 H^2/2 + (integral of
//! H dJ_rev) + U_irr ([`HysteresisLaw::stored_energy_density`]), and the energy H dB supplied over a step
//! equals its change plus [`HysteresisLaw::dissipation_density`] exactly.
//!
//! # Trial and commit
//! [`HysteresisLaw::polarisation`], [`HysteresisLaw::flux_density`] and
//! [`HysteresisLaw::field_strength`] evaluate the input applied next after the committed
//! history without changing it; [`HysteresisLaw::apply`] commits an input once the load step
//! has converged. Evaluations are allocation-free and cost O(number of stored extrema);
//! [`HysteresisLaw::field_strength_near`] takes the solver's previous iterate as a start.
//!
//! # Limits
//! A scalar model of the easy-axis component only: rotational hysteresis, temperature, eddy
//! currents (see [`MagnetDatasheet::resistivity`]) and minor-loop accommodation are outside
//! it. Classical Preisach minor loops are congruent, which real AlNiCo only approximates.

use std::f64::consts::LN_2;

use serde::{Deserialize, Serialize};

use crate::material::{MaterialError, MU_0};

/// Maximum number of dominant extrema a [`History`] keeps (besides the initial saturation).
pub const MAX_REVERSALS: usize = 64;

/// Reversal pairs closer than this fraction of the width s are forgotten (see the module
/// docs).
pub const REVERSAL_TOLERANCE: f64 = 1e-6;

const FRAC_1_SQRT_PI: f64 = 0.564_189_583_547_756_3;

/// The odd sigmoid S of the major-loop branches J = Js S((H -/+ Hc)/s).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Sigmoid {
    /// S(z) = tanh(z): the logistic distribution F(z) = 1/(1 + exp(-2z)).
    Logistic,
    /// S(z) = erf(z): the Gaussian distribution F(z) = erfc(-z)/2.
    Erf,
}

impl Sigmoid {
    /// S(z), odd, from -1 to 1.
    pub fn value(self, z: f64) -> f64 {
        match self {
            Sigmoid::Logistic => z.tanh(),
            Sigmoid::Erf => {
                let (big, small) = self.cdf_pair(z.abs());
                (big - small).copysign(z)
            }
        }
    }

    /// dS/dz.
    pub fn slope(self, z: f64) -> f64 {
        2.0 * self.density(z)
    }

    /// The inverse S^(-1)(y) for -1 < y < 1 (infinite at +/-1, NaN outside).
    pub fn inverse(self, y: f64) -> f64 {
        if !(-1.0..=1.0).contains(&y) {
            return f64::NAN;
        }
        if y.abs() == 1.0 {
            return f64::INFINITY.copysign(y);
        }
        match self {
            Sigmoid::Logistic => y.atanh(),
            Sigmoid::Erf => {
                // Solve erfc(z) = 1 - |y| for z >= 0: safeguarded Newton on a bracket.
                let target = 1.0 - y.abs();
                let (mut lo, mut hi) = (0.0_f64, 6.5_f64);
                let mut z = y.abs().atanh().min(6.0);
                for _ in 0..200 {
                    let r = erfc_nonnegative(z) - target; // decreasing in z
                    if r > 0.0 {
                        lo = z;
                    } else {
                        hi = z;
                    }
                    if r == 0.0 || hi - lo <= 4.0 * f64::EPSILON * hi {
                        break;
                    }
                    let d = -2.0 * FRAC_1_SQRT_PI * (-z * z).exp();
                    let mut next = z - r / d;
                    if !(next > lo && next < hi) {
                        next = 0.5 * (lo + hi);
                    }
                    if next == z {
                        break;
                    }
                    z = next;
                }
                z.copysign(y)
            }
        }
    }

    /// (F(z), F(-z)), each computed without cancellation.
    fn cdf_pair(self, z: f64) -> (f64, f64) {
        match self {
            Sigmoid::Logistic => {
                let e = (-2.0 * z.abs()).exp();
                let big = 1.0 / (1.0 + e);
                let small = e * big;
                if z >= 0.0 {
                    (big, small)
                } else {
                    (small, big)
                }
            }
            Sigmoid::Erf => {
                let small = 0.5 * erfc_nonnegative(z.abs());
                let big = 1.0 - small;
                if z >= 0.0 {
                    (big, small)
                } else {
                    (small, big)
                }
            }
        }
    }

    /// The antiderivative of the distribution, Phi(z) = integral of F from -infinity to z
    /// (>= 0, Phi(z) - z -> 0 as z -> infinity), without cancellation for large |z|:
    /// logistic Phi(z) = ln(1 + exp(2z))/2 = max(z, 0) + ln(1 + exp(-2|z|))/2; Gaussian
    /// Phi(z) = z F(z) + exp(-z^2)/(2 sqrt(pi)) (differentiate to check: F + z f - z f = F).
    fn antiderivative(self, z: f64) -> f64 {
        match self {
            Sigmoid::Logistic => z.max(0.0) + 0.5 * (-2.0 * z.abs()).exp().ln_1p(),
            Sigmoid::Erf => {
                let tail = 0.5 * FRAC_1_SQRT_PI * (-z * z).exp();
                if z >= 0.0 {
                    // z F(z) = z - z F(-z)
                    z - z * 0.5 * erfc_nonnegative(z) + tail
                } else {
                    z * 0.5 * erfc_nonnegative(-z) + tail
                }
            }
        }
    }

    /// The partial first moment m(z) = integral from -inf to z of t f(t) dt (even, at most 0,
    /// zero at +/-inf): logistic m = (z tanh z - ln cosh z - ln 2)/2, written with
    /// e = exp(-2|z|) as -(2|z| e/(1 + e) + ln(1 + e))/2 so that it never overflows;
    /// Gaussian m = -exp(-z^2)/(2 sqrt(pi)).
    fn partial_moment(self, z: f64) -> f64 {
        match self {
            Sigmoid::Logistic => {
                let a = z.abs();
                let e = (-2.0 * a).exp();
                -0.5 * (2.0 * a * e / (1.0 + e) + e.ln_1p())
            }
            Sigmoid::Erf => -0.5 * FRAC_1_SQRT_PI * (-z * z).exp(),
        }
    }

    /// f(z) = dF/dz (even).
    fn density(self, z: f64) -> f64 {
        match self {
            Sigmoid::Logistic => {
                let e = (-2.0 * z.abs()).exp();
                2.0 * e / ((1.0 + e) * (1.0 + e))
            }
            Sigmoid::Erf => FRAC_1_SQRT_PI * (-z * z).exp(),
        }
    }
}

/// erfc(x) for x >= 0 (NaN for NaN), relative accuracy about 1e-13 or better.
///
/// For x < 2 the series of Abramowitz & Stegun 7.1.6 (all terms positive, so no
/// cancellation): erf x = (2/sqrt(pi)) exp(-x^2) sum_n 2^n x^(2n+1) / (1 3 5 ... (2n+1)),
/// then erfc = 1 - erf. For x >= 2 the continued fraction of Abramowitz & Stegun 7.1.14,
/// erfc x = (exp(-x^2)/sqrt(pi)) / (x + (1/2)/(x + 1/(x + (3/2)/(x + ...)))), evaluated by the
/// modified Lentz method; at most about 60 terms at x = 2.
fn erfc_nonnegative(x: f64) -> f64 {
    if x.is_nan() {
        return f64::NAN;
    }
    if x < 2.0 {
        let x2 = x * x;
        let mut term = x;
        let mut sum = x;
        for n in 1..200 {
            term *= 2.0 * x2 / (2 * n + 1) as f64;
            sum += term;
            if term <= 1e-17 * sum {
                break;
            }
        }
        1.0 - 2.0 * FRAC_1_SQRT_PI * (-x2).exp() * sum
    } else if x > 27.3 {
        0.0 // below the smallest subnormal
    } else {
        const TINY: f64 = 1e-300;
        let mut f = x;
        let mut c = f;
        let mut d = 0.0_f64;
        for n in 1..400 {
            let a = 0.5 * n as f64;
            d = x + a * d;
            if d == 0.0 {
                d = TINY;
            }
            c = x + a / c;
            if c == 0.0 {
                c = TINY;
            }
            d = 1.0 / d;
            let delta = c * d;
            f *= delta;
            if (delta - 1.0).abs() < 1e-16 {
                break;
            }
        }
        FRAC_1_SQRT_PI * (-x * x).exp() / f
    }
}

/// The memory of one point: initial saturation, dominant extrema and last committed input.
///
/// Invariants (checked by [`History::from_slots`] and by deserialisation): every stored
/// extremum is finite and lies strictly between the two before it (the initial saturation
/// counts as +/-infinity), extrema alternate between minima and maxima, and the last input lies
/// on the current branch between the newest extremum (inclusive) and the one before it
/// (exclusive).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(try_from = "HistoryRecord", into = "HistoryRecord")]
pub struct History {
    positive_start: bool,
    last_input: f64,
    reversals: Vec<f64>,
}

/// Serialised form of a [`History`] (validated when read back).
#[derive(Clone, Debug, Serialize, Deserialize)]
struct HistoryRecord {
    /// True if the history starts from positive saturation.
    positive_start: bool,
    /// Last committed input (A/m).
    last_input: f64,
    /// Dominant extrema, oldest first (A/m).
    reversals: Vec<f64>,
}

impl From<History> for HistoryRecord {
    fn from(h: History) -> HistoryRecord {
        HistoryRecord {
            positive_start: h.positive_start,
            last_input: h.last_input,
            reversals: h.reversals,
        }
    }
}

impl TryFrom<HistoryRecord> for History {
    type Error = MaterialError;
    fn try_from(r: HistoryRecord) -> Result<History, MaterialError> {
        check_history(r.positive_start, r.last_input, &r.reversals)?;
        Ok(History {
            positive_start: r.positive_start,
            last_input: r.last_input,
            reversals: r.reversals,
        })
    }
}

/// True if element `index` of the sequence (0 = the initial saturation) is a maximum.
#[inline]
fn is_maximum(positive_start: bool, index: usize) -> bool {
    (index % 2 == 0) == positive_start
}

fn history_error(slot: usize, value: f64, reason: &'static str) -> MaterialError {
    MaterialError::InvalidHistory {
        slot,
        value,
        reason,
    }
}

/// Checks the invariants of a history (slot numbers as in [`History::write_slots`]).
fn check_history(
    positive_start: bool,
    last_input: f64,
    reversals: &[f64],
) -> Result<(), MaterialError> {
    if reversals.len() > MAX_REVERSALS {
        return Err(history_error(
            2,
            reversals.len() as f64,
            "more extrema than History::SLOTS holds",
        ));
    }
    let infinity = |maximum: bool| {
        if maximum {
            f64::INFINITY
        } else {
            f64::NEG_INFINITY
        }
    };
    // element(i) for i = -1, 0, 1, ...: -1 and 0 are the infinities.
    let element = |i: isize| -> f64 {
        if i <= 0 {
            infinity(is_maximum(positive_start, i.rem_euclid(2) as usize))
        } else {
            reversals[i as usize - 1]
        }
    };
    for (k, &x) in reversals.iter().enumerate() {
        let index = k as isize + 1;
        if !x.is_finite() {
            return Err(history_error(3 + k, x, "extremum is not finite"));
        }
        let (before, outer) = (element(index - 1), element(index - 2));
        let inside = if is_maximum(positive_start, k + 1) {
            before < x && x < outer
        } else {
            outer < x && x < before
        };
        if !inside {
            return Err(history_error(
                3 + k,
                x,
                "extremum does not lie strictly inside the two before it (wrong order)",
            ));
        }
    }
    if !last_input.is_finite() {
        return Err(history_error(1, last_input, "last input is not finite"));
    }
    let n = reversals.len() as isize;
    let (start, bound) = (element(n), element(n - 1));
    let on_branch = if is_maximum(positive_start, reversals.len()) {
        bound < last_input && last_input <= start
    } else {
        start <= last_input && last_input < bound
    };
    if !on_branch {
        return Err(history_error(
            1,
            last_input,
            "last input lies outside the branch of the newest extremum",
        ));
    }
    Ok(())
}

impl History {
    /// Number of f64 slots of the flat form: initial saturation (+1 or -1), last input (A/m),
    /// number of extrema, then [`MAX_REVERSALS`] extrema (unused ones written as 0).
    pub const SLOTS: usize = 3 + MAX_REVERSALS;

    /// The state after a very large positive (`positive`) or negative field, returned to 0.
    pub fn saturated(positive: bool) -> History {
        History {
            positive_start: positive,
            last_input: 0.0,
            reversals: Vec::new(),
        }
    }

    /// H of the last committed input (A/m).
    pub fn last_input(&self) -> f64 {
        self.last_input
    }

    /// True if the history starts from positive saturation.
    pub fn starts_positive(&self) -> bool {
        self.positive_start
    }

    /// The dominant extrema (A/m), oldest first; they alternate, starting with a minimum after
    /// positive saturation and with a maximum after negative saturation.
    pub fn reversals(&self) -> &[f64] {
        &self.reversals
    }

    /// Writes the flat form into `out` (layout in [`History::SLOTS`]).
    ///
    /// # Panics
    /// If `out.len() != History::SLOTS` (a programming error of the caller, not bad input).
    pub fn write_slots(&self, out: &mut [f64]) {
        assert_eq!(
            out.len(),
            History::SLOTS,
            "History::write_slots needs SLOTS values"
        );
        out[0] = if self.positive_start { 1.0 } else { -1.0 };
        out[1] = self.last_input;
        out[2] = self.reversals.len() as f64;
        out[3..].fill(0.0);
        out[3..3 + self.reversals.len()].copy_from_slice(&self.reversals);
    }

    /// Reads the flat form written by [`History::write_slots`]; unused extremum slots are
    /// ignored.
    ///
    /// # Errors
    /// [`MaterialError::InvalidHistory`] naming the first bad slot: a wrong slot count, an
    /// initial saturation other than +/-1, a count that is not an integer in
    /// 0..=[`MAX_REVERSALS`], a non-finite value, extrema in the wrong order, or a last input
    /// off the current branch.
    pub fn from_slots(slots: &[f64]) -> Result<History, MaterialError> {
        if slots.len() != History::SLOTS {
            return Err(history_error(
                slots.len(),
                slots.len() as f64,
                "slot count differs from History::SLOTS",
            ));
        }
        let positive_start = if slots[0] == 1.0 {
            true
        } else if slots[0] == -1.0 {
            false
        } else {
            return Err(history_error(
                0,
                slots[0],
                "initial saturation must be +1 or -1",
            ));
        };
        let count = slots[2];
        if !(count >= 0.0 && count <= MAX_REVERSALS as f64 && count.fract() == 0.0) {
            return Err(history_error(
                2,
                count,
                "extremum count must be an integer from 0 to MAX_REVERSALS",
            ));
        }
        let reversals = slots[3..3 + count as usize].to_vec();
        check_history(positive_start, slots[1], &reversals)?;
        Ok(History {
            positive_start,
            last_input: slots[1],
            reversals,
        })
    }
}

/// Values of the distribution at one input x: `up` = F((x - Hc)/s) and
/// `down_c` = F(-(x + Hc)/s), the two the Everett function needs.
#[derive(Clone, Copy, Debug)]
struct Node {
    up: f64,
    down_c: f64,
}

impl Node {
    fn infinite(positive: bool) -> Node {
        let (up, down_c) = if positive { (1.0, 0.0) } else { (0.0, 1.0) };
        Node { up, down_c }
    }
}

/// The distribution values and their partial first moments at one input x, the four
/// numbers the energy moments need (see [`HysteresisLaw::stored_moment`]): P(x) =
/// F((x - Hc)/s), Q(x) = F(-(x + Hc)/s), and antiderivatives P1' = x P', Q1' = x Q'.
#[derive(Clone, Copy, Debug)]
struct MomentNode {
    p: f64,
    q: f64,
    p1: f64,
    q1: f64,
}

/// How the trial input h changes the committed memory: the stored extrema kept (a prefix),
/// possibly the last input pushed as a new extremum, and the pair dropped at the cap.
#[derive(Clone, Copy, Debug)]
struct Resolved {
    kept: usize,
    pushed: Option<f64>,
    /// At the cap: the 0-based position (in `x[..kept]` then `pushed`) of the first element
    /// of the pair dropped.
    skip: Option<usize>,
}

/// The hysteresis law of a magnet grade along its easy axis (see the module docs).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct HysteresisLaw {
    /// Js (T): saturation polarisation of the irreversible part.
    pub saturation_polarisation: f64,
    /// Hc (A/m): coercive field of the irreversible part.
    pub coercive_field: f64,
    /// s (A/m): switching width (squareness) of the irreversible part.
    pub width: f64,
    /// The sigmoid of the major branches.
    pub sigmoid: Sigmoid,
    /// J_r (T): saturation of the reversible part (a modelling choice).
    pub reversible_polarisation: f64,
    /// mu_rec (>= 1): relative recoil permeability near remanence.
    pub recoil_permeability: f64,
}

/// 5-point Gauss-Legendre rule on [-1, 1]: (node, weight).
#[cfg(test)]
fn gauss_legendre_5() -> [(f64, f64); 5] {
    let r = (10.0_f64 / 7.0).sqrt();
    let x1 = (5.0 - 2.0 * r).sqrt() / 3.0;
    let x2 = (5.0 + 2.0 * r).sqrt() / 3.0;
    let s70 = 70.0_f64.sqrt();
    let w1 = (322.0 + 13.0 * s70) / 900.0;
    let w2 = (322.0 - 13.0 * s70) / 900.0;
    [
        (-x2, w2),
        (-x1, w1),
        (0.0, 128.0 / 225.0),
        (x1, w1),
        (x2, w2),
    ]
}

impl HysteresisLaw {
    /// Checks every parameter.
    ///
    /// # Errors
    /// [`MaterialError::InvalidParameter`] for a non-finite value, Js, Hc or s not positive,
    /// mu_rec below 1, or J_r not positive while mu_rec > 1 (J_r may be 0 when mu_rec = 1).
    pub fn validate(&self) -> Result<(), MaterialError> {
        let bad = |parameter: &'static str, value: f64, reason: &'static str| {
            Err(MaterialError::InvalidParameter {
                material: "hysteresis law".into(),
                parameter,
                value,
                reason,
            })
        };
        let positive = [
            (
                "saturation polarisation Js (T)",
                self.saturation_polarisation,
            ),
            ("coercive field Hc (A/m)", self.coercive_field),
            ("width s (A/m)", self.width),
        ];
        check_positive(&positive, &bad)?;
        check_reversible(self.recoil_permeability, self.reversible_polarisation, bad)?;
        Ok(())
    }

    #[inline]
    fn node(&self, x: f64) -> Node {
        let hc = self.coercive_field;
        let s = self.width;
        let up = self.sigmoid.cdf_pair((x - hc) / s).0;
        let down_c = self.sigmoid.cdf_pair((x + hc) / s).1;
        Node { up, down_c }
    }

    /// E(a, b) from the node values of a and b.
    #[inline]
    fn everett_nodes(&self, a: &Node, b: &Node) -> f64 {
        self.saturation_polarisation * (a.up * b.down_c - a.down_c * b.up)
    }

    /// The Everett function E(a, b) (T) for a >= b (see the module docs); infinite arguments
    /// are allowed.
    pub fn everett(&self, a: f64, b: f64) -> f64 {
        let node = |x: f64| {
            if x.is_infinite() {
                Node::infinite(x > 0.0)
            } else {
                self.node(x)
            }
        };
        self.everett_nodes(&node(a), &node(b))
    }

    /// The Preisach density mu(alpha, beta) = -d2E/(dalpha dbeta) (T/(A/m)^2) for
    /// alpha > beta, in closed form (the diagonal part is not included).
    pub fn preisach_density(&self, alpha: f64, beta: f64) -> f64 {
        let (hc, s) = (self.coercive_field, self.width);
        let f = |z: f64| self.sigmoid.density(z);
        self.saturation_polarisation / (s * s)
            * (f((alpha - hc) / s) * f((beta + hc) / s) - f((alpha + hc) / s) * f((beta - hc) / s))
    }

    /// P, Q and their partial first moments at `x` (infinite `x` allowed).
    #[inline]
    fn moment_node(&self, x: f64) -> MomentNode {
        let hc = self.coercive_field;
        if x.is_infinite() {
            return if x > 0.0 {
                MomentNode {
                    p: 1.0,
                    q: 0.0,
                    p1: hc,
                    q1: 0.0,
                }
            } else {
                MomentNode {
                    p: 0.0,
                    q: 1.0,
                    p1: 0.0,
                    q1: -hc,
                }
            };
        }
        let s = self.width;
        let (z_minus, z_plus) = ((x - hc) / s, (x + hc) / s);
        let p = self.sigmoid.cdf_pair(z_minus).0;
        let q = self.sigmoid.cdf_pair(z_plus).1;
        // P1 = Hc P + s m(z-), Q1 = -Hc Q - s m(z+): d/dx gives x P' and x Q' (see
        // `Sigmoid::partial_moment`); the constants cancel in every moment.
        MomentNode {
            p,
            q,
            p1: hc * p + s * self.sigmoid.partial_moment(z_minus),
            q1: -hc * q - s * self.sigmoid.partial_moment(z_plus),
        }
    }

    /// M(a, b) from the moment nodes of a and b.
    #[inline]
    fn stored_moment_nodes(&self, a: &MomentNode, b: &MomentNode) -> f64 {
        0.5 * self.saturation_polarisation
            * ((a.q + b.q) * (a.p1 - b.p1) - (a.p + b.p) * (a.q1 - b.q1))
    }

    /// D(a, b) from the moment nodes of a and b.
    #[inline]
    fn loss_moment_nodes(&self, a: &MomentNode, b: &MomentNode) -> f64 {
        self.saturation_polarisation * ((a.p - b.p) * (a.q1 - b.q1) - (a.q - b.q) * (a.p1 - b.p1))
    }

    /// The stored-energy moment M(a, b) (J/m^3) for a >= b: the integral of
    /// (alpha + beta)/2 times the Preisach weight over the triangle b <= beta <= alpha <= a,
    /// diagonal (reversible) part included, in closed form (see the module docs, "Energy").
    /// Infinite arguments are allowed; M(a, a) = 0 and M(+inf, -inf) = 0 (odd symmetry).
    pub fn stored_moment(&self, a: f64, b: f64) -> f64 {
        self.stored_moment_nodes(&self.moment_node(a), &self.moment_node(b))
    }

    /// The loss moment D(a, b) (J/m^3) for a >= b: the integral of (alpha - beta) times the
    /// Preisach weight over the triangle b <= beta <= alpha <= a (the diagonal part carries
    /// no loss), in closed form (see the module docs, "Energy"). Non-negative; infinite
    /// arguments are allowed, and D(+inf, -inf) = 2 Js Hc.
    pub fn loss_moment(&self, a: f64, b: f64) -> f64 {
        self.loss_moment_nodes(&self.moment_node(a), &self.moment_node(b))
    }

    /// Sum of the staircase segments from `start` (a maximum if `start_is_max`) through
    /// `inputs`: +2 X(x_k, x_(k-1)) ascending, -2 X(x_(k-1), x_k) descending.
    fn moment_staircase(
        &self,
        start: MomentNode,
        start_is_max: bool,
        inputs: impl Iterator<Item = f64>,
        moment: impl Fn(&MomentNode, &MomentNode) -> f64,
    ) -> f64 {
        let mut previous = start;
        let mut previous_is_max = start_is_max;
        let mut sum = 0.0;
        for x in inputs {
            let node = self.moment_node(x);
            sum += if previous_is_max {
                -2.0 * moment(&previous, &node)
            } else {
                2.0 * moment(&node, &previous)
            };
            previous = node;
            previous_is_max = !previous_is_max;
        }
        sum
    }

    /// Stored energy density of the irreversible part (J/m^3): the integral of
    /// (alpha + beta)/2 gamma over the Preisach weight, gamma = +/-1 the hysterons' states in
    /// the committed `history` (zero for either saturated state at zero field, by symmetry).
    pub fn irreversible_stored_energy(&self, history: &History) -> f64 {
        let ps = history.positive_start;
        let start = self.moment_node(if ps { f64::INFINITY } else { f64::NEG_INFINITY });
        let total = self.stored_moment(f64::INFINITY, f64::NEG_INFINITY);
        let sum = self.moment_staircase(
            start,
            ps,
            history
                .reversals
                .iter()
                .copied()
                .chain([history.last_input]),
            |a, b| self.stored_moment_nodes(a, b),
        );
        if ps {
            total + sum
        } else {
            -total + sum
        }
    }

    /// Stored energy density of the reversible part at field `h` (J/m^3): the integral of
    /// h' dJ_rev from 0 to h, h J_rev(h) - (J_r^2/k) ln cosh(k h/J_r) with
    /// k = mu_0 (mu_rec - 1).
    pub fn reversible_stored_energy(&self, h: f64) -> f64 {
        let k = MU_0 * (self.recoil_permeability - 1.0);
        let jr = self.reversible_polarisation;
        if k == 0.0 || jr == 0.0 {
            return 0.0;
        }
        let x = k * h / jr;
        let a = x.abs();
        let ln_cosh = a + (-2.0 * a).exp().ln_1p() - std::f64::consts::LN_2;
        h * jr * x.tanh() - jr * jr / k * ln_cosh
    }

    /// Stored (recoverable) energy density (J/m^3) of a committed state along the easy
    /// axis: mu_0 H^2/2 + the reversible part's + the irreversible part's, at H = the
    /// history's last input. The energy a step supplies, the integral of H dB along it,
    /// equals the change of this value plus [`HysteresisLaw::dissipation_density`].
    pub fn stored_energy_density(&self, history: &History) -> f64 {
        let h = history.last_input;
        0.5 * MU_0 * h * h
            + self.reversible_stored_energy(h)
            + self.irreversible_stored_energy(history)
    }

    /// Hysteresis loss density (J/m^3) when input `h` (A/m) is applied next after the
    /// committed `history` (as [`HysteresisLaw::apply`] would commit it): the integral of
    /// (alpha - beta) over the weight of the hysterons that switch. A step is monotone from
    /// the last input to `h`, so every switch goes one way and the loss is the change of
    /// V = integral of (alpha - beta)/2 gamma, taken over the staircase segments that differ
    /// (the shared older ones cancel exactly). Never negative (a rounding error of order
    /// 1e-16 of the terms that would dip below zero is returned as 0); 0 for `h` equal to
    /// the last input or not finite.
    ///
    /// # Limits
    /// The memory rules that are not physics (forgetting a pair below
    /// [`REVERSAL_TOLERANCE`], dropping a pair at [`MAX_REVERSALS`]) change the state
    /// without a path; the loss of such a step includes that change (of order
    /// Js (tolerance s)^2 and the dropped pair's weight times its field respectively).
    pub fn dissipation_density(&self, history: &History, h: f64) -> f64 {
        let u = history.last_input;
        if !h.is_finite() || h == u {
            return 0.0;
        }
        let ps = history.positive_start;
        let x = &history.reversals;
        let r = self.resolve(history, h);
        let common = r.kept.min(r.skip.unwrap_or(usize::MAX));
        let (start, start_is_max) = if common == 0 {
            (
                self.moment_node(if ps { f64::INFINITY } else { f64::NEG_INFINITY }),
                ps,
            )
        } else {
            (self.moment_node(x[common - 1]), is_maximum(ps, common))
        };
        let half_loss = |a: &MomentNode, b: &MomentNode| 0.5 * self.loss_moment_nodes(a, b);
        let before = self.moment_staircase(
            start,
            start_is_max,
            x[common..].iter().copied().chain([u]),
            half_loss,
        );
        let kept = &x[..r.kept];
        let after_inputs = kept
            .iter()
            .copied()
            .chain(r.pushed)
            .enumerate()
            .skip(common)
            .filter(|(position, _)| match r.skip {
                Some(k) => *position != k && *position != k + 1,
                None => true,
            })
            .map(|(_, v)| v)
            .chain([h]);
        let after = self.moment_staircase(start, start_is_max, after_inputs, half_loss);
        let loss = if h > u {
            after - before
        } else {
            before - after
        };
        // Exactly non-negative; rounding (of order 1e-16 of the terms) may dip below zero.
        loss.max(0.0)
    }

    /// How applying `h` next changes the memory (wiping-out, tolerance and cap rules).
    fn resolve(&self, history: &History, h: f64) -> Resolved {
        let x = &history.reversals;
        let n = x.len();
        let ps = history.positive_start;
        let u = history.last_input;
        let descending = is_maximum(ps, n);
        let reversal = if descending { h > u } else { h < u };
        let mut kept = n;
        let mut pushed = None;
        if reversal {
            if n >= 1 && (u - x[n - 1]).abs() < REVERSAL_TOLERANCE * self.width {
                kept = n - 1; // forget the tiny newest pair (x_n, u)
            } else {
                pushed = Some(u);
            }
        }
        loop {
            let len = kept + usize::from(pushed.is_some());
            if len < 2 {
                break; // the bound is an initial saturation, never crossed by a finite input
            }
            let bound = if pushed.is_some() {
                x[kept - 1]
            } else {
                x[len - 2]
            };
            let wiped = if is_maximum(ps, len) {
                h <= bound
            } else {
                h >= bound
            };
            if !wiped {
                break;
            }
            if pushed.is_some() {
                pushed = None;
                kept -= 1;
            } else {
                kept -= 2;
            }
        }
        let len = kept + usize::from(pushed.is_some());
        let skip = if len > MAX_REVERSALS {
            Some(self.least_influential_pair(history.positive_start, &x[..kept], pushed))
        } else {
            None
        };
        Resolved { kept, pushed, skip }
    }

    /// Signed contribution of the segment from `a` (a maximum if `a_is_max`) to `b`.
    #[inline]
    fn segment(&self, a: &Node, a_is_max: bool, b: &Node) -> f64 {
        if a_is_max {
            -2.0 * self.everett_nodes(a, b)
        } else {
            2.0 * self.everett_nodes(b, a)
        }
    }

    /// The 0-based position k of the stored pair (y_(k+1), y_(k+2)) in the sequence
    /// `stored` then `pushed` whose removal changes the output least (see the module docs).
    fn least_influential_pair(
        &self,
        positive_start: bool,
        stored: &[f64],
        pushed: Option<f64>,
    ) -> usize {
        let mut nodes = [Node::infinite(positive_start); MAX_REVERSALS + 2];
        let mut count = 1;
        for &x in stored.iter().chain(pushed.iter()) {
            if count < nodes.len() {
                nodes[count] = self.node(x);
                count += 1;
            }
        }
        let nodes = &nodes[..count];
        let mut best = (0, f64::INFINITY);
        // pairs (i, i + 1) with 1 <= i and i + 2 <= count - 1 (the newest element stays)
        for i in 1..count.saturating_sub(2) {
            let before_is_max = is_maximum(positive_start, i - 1);
            let (y0, y1, y2, y3) = (&nodes[i - 1], &nodes[i], &nodes[i + 1], &nodes[i + 2]);
            let change = self.segment(y0, before_is_max, y3)
                - self.segment(y0, before_is_max, y1)
                - self.segment(y1, !before_is_max, y2)
                - self.segment(y2, before_is_max, y3);
            if change.abs() < best.1 {
                best = (i - 1, change.abs());
            }
        }
        best.0
    }

    /// The trial branch on which input `h` lies: J_irr = C + 2 Js (F_up(h) P.down_c -
    /// F_down_c(h) P.up) with the constant C (T, the staircase up to the last extremum P that
    /// `h` does not wipe out) and the node of P returned here. Both are constant while `h`
    /// stays between two neighbouring points of the committed memory (its stored extrema and
    /// last input), which is what makes the co-energy a closed form.
    fn branch_start(&self, history: &History, h: f64) -> (f64, Node) {
        let js = self.saturation_polarisation;
        let ps = history.positive_start;
        let r = self.resolve(history, h);
        let mut j = if ps { js } else { -js };
        let mut previous = Node::infinite(ps);
        let mut previous_is_max = ps;
        let kept = &history.reversals[..r.kept];
        for (position, &x) in kept.iter().chain(r.pushed.iter()).enumerate() {
            if let Some(k) = r.skip {
                if position == k || position == k + 1 {
                    continue;
                }
            }
            let node = self.node(x);
            j += if previous_is_max {
                -2.0 * self.everett_nodes(&previous, &node)
            } else {
                2.0 * self.everett_nodes(&node, &previous)
            };
            previous = node;
            previous_is_max = !previous_is_max;
        }
        (j, previous)
    }

    /// The last staircase segment from the extremum `p` to the input node `h`: ascending
    /// from a minimum 2 E(h, p), descending from a maximum -2 E(p, h); both are the one
    /// expression 2 Js (h.up p.down_c - h.down_c p.up).
    #[inline]
    fn last_segment(&self, p: &Node, h: &Node) -> f64 {
        2.0 * self.saturation_polarisation * (h.up * p.down_c - h.down_c * p.up)
    }

    /// J_irr (T) and dJ_irr/dH (T m/A) of the irreversible (Preisach) part when `h` is applied
    /// next after the committed history. At h equal to the last input the slope is the
    /// reversible one of both branches.
    pub fn irreversible_part(&self, history: &History, h: f64) -> (f64, f64) {
        let js = self.saturation_polarisation;
        let (mut j, previous) = self.branch_start(history, h);
        let node = self.node(h);
        j += self.last_segment(&previous, &node);
        let (hc, s) = (self.coercive_field, self.width);
        let f_up = self.sigmoid.density((h - hc) / s);
        let f_down = self.sigmoid.density((h + hc) / s);
        let scale = 2.0 * js / s;
        // Ascending from P: dE/da (a = h, b = P) = (Js/s)[f_up P.down_c + f_down P.up];
        // descending from P: -dE/db (a = P, b = h) = (Js/s)[P.up f_down + P.down_c f_up], the
        // same expression. At h equal to the last input both reversing branches start with
        // P = h (the diagonal part only).
        let p = if h == history.last_input {
            node
        } else {
            previous
        };
        let slope = scale * (f_up * p.down_c + f_down * p.up);
        (j, slope)
    }

    /// J_rev (T) and dJ_rev/dH (T m/A) of the reversible part, a function of h alone.
    pub fn reversible_part(&self, h: f64) -> (f64, f64) {
        let k = MU_0 * (self.recoil_permeability - 1.0);
        let jr = self.reversible_polarisation;
        if k == 0.0 || jr == 0.0 {
            return (0.0, 0.0);
        }
        let t = (k * h / jr).tanh();
        (jr * t, k * (1.0 - t * t))
    }

    /// Commits input `h` (A/m) to the history: wiping-out, tolerance and cap rules (see the
    /// module docs). A non-finite `h` is ignored.
    pub fn apply(&self, history: &mut History, h: f64) {
        if !h.is_finite() {
            return;
        }
        let r = self.resolve(history, h);
        history.reversals.truncate(r.kept);
        if let Some(u) = r.pushed {
            history.reversals.push(u);
        }
        if let Some(k) = r.skip {
            history.reversals.drain(k..k + 2);
        }
        history.last_input = h;
    }

    /// J (T) along the axis and dJ/dH (T m/A) when `h` (A/m) is applied next after the
    /// committed history (the history is not changed). The branch is the ascending one if h
    /// is above the last input, the descending one if below; at h equal to the last input the
    /// slope is the smaller, reversible one.
    pub fn polarisation(&self, history: &History, h: f64) -> (f64, f64) {
        let (ji, di) = self.irreversible_part(history, h);
        let (jr, dr) = self.reversible_part(h);
        (ji + jr, di + dr)
    }

    /// B = mu_0 h + J (T) and dB/dH (H/m, at least mu_0) on the trial branch.
    pub fn flux_density(&self, history: &History, h: f64) -> (f64, f64) {
        let (j, d) = self.polarisation(history, h);
        (MU_0 * h + j, MU_0 + d)
    }

    /// The inverse of [`HysteresisLaw::flux_density`] with the history fixed: H (A/m) and
    /// dH/dB (A/(m T)) for flux density `b` (T) along the axis, starting from the last input.
    /// See [`HysteresisLaw::field_strength_near`].
    pub fn field_strength(&self, history: &History, b: f64) -> (f64, f64) {
        self.field_strength_near(history, b, history.last_input)
    }

    /// The inverse of [`HysteresisLaw::flux_density`] starting from `guess` (A/m), e.g. the
    /// point's H at the previous Newton iteration of the field solver.
    ///
    /// B(h) is continuous and strictly increasing (slope >= mu_0) with |B - mu_0 h| <= Js + J_r,
    /// so the solution is unique and lies in [(b - Js - J_r)/mu_0, (b + Js + J_r)/mu_0].
    /// Newton's method is safeguarded by that bracket: a step that leaves it, or that is not
    /// shorter than half the step before last, is replaced by bisection, so the bracket at
    /// least halves every two evaluations. At most 200 evaluations, never a panic. The residual reached is about
    /// 1e-14 (|b| + Js + J_r) unless the bracket collapses to adjacent floating-point numbers
    /// first. A non-finite `b` gives NaN; for |b| beyond about 1e302 T the result overflows to
    /// infinity.
    pub fn field_strength_near(&self, history: &History, b: f64, guess: f64) -> (f64, f64) {
        if !b.is_finite() {
            return (f64::NAN, f64::NAN);
        }
        let span = self.saturation_polarisation + self.reversible_polarisation;
        let mut lo = (b - span) / MU_0;
        let mut hi = (b + span) / MU_0;
        if !(lo.is_finite() && hi.is_finite()) {
            return (b / MU_0, 1.0 / MU_0);
        }
        let tolerance = 1e-14 * (b.abs() + span);
        let mut h = if guess.is_finite() {
            guess.clamp(lo, hi)
        } else {
            history.last_input.clamp(lo, hi)
        };
        let mut best = (h, 1.0 / MU_0, f64::INFINITY);
        // the step before last, for the safeguard: a Newton step must be less than half of it
        let mut step_before = hi - lo;
        let mut step = step_before;
        for _ in 0..200 {
            let (bh, slope) = self.flux_density(history, h);
            let r = bh - b;
            if r.abs() < best.2 {
                best = (h, 1.0 / slope, r.abs());
            }
            if r.abs() <= tolerance || !r.is_finite() {
                break;
            }
            if r > 0.0 {
                hi = h;
            } else {
                lo = h;
            }
            if hi - lo <= 4.0 * f64::EPSILON * lo.abs().max(hi.abs()).max(1.0) {
                break;
            }
            let newton = r / slope;
            let next = h - newton;
            if next > lo && next < hi && 2.0 * newton.abs() <= step_before.abs() {
                step_before = step;
                step = newton;
                h = next;
            } else {
                step_before = step;
                step = 0.5 * (hi - lo);
                h = lo + step;
            }
        }
        (best.0, best.1)
    }

    /// Integral of B(h'; history) dh' (J/m^3) from `from` to `to` along the trial function of
    /// the committed history, in closed form: between neighbouring points of the memory (the
    /// stored extrema and the last input, where the branch changes) J_irr is
    /// C + 2 Js (F_up(h') P.down_c - F_down_c(h') P.up) with C and P fixed (see
    /// `branch_start`), and F integrates to the sigmoid's antiderivative; the reversible part
    /// integrates to (J_r^2 / k) ln cosh(k h / J_r) and the vacuum part to mu_0 h^2 / 2.
    fn branch_integral(&self, history: &History, from: f64, to: f64) -> f64 {
        if !from.is_finite() || !to.is_finite() {
            return f64::NAN;
        }
        if from == to {
            return 0.0;
        }
        let (a, b, sign) = if from < to {
            (from, to, 1.0)
        } else {
            (to, from, -1.0)
        };
        let mut cuts = [0.0_f64; MAX_REVERSALS + 3];
        let mut count = 0;
        cuts[count] = a;
        count += 1;
        for &x in history.reversals.iter().chain([history.last_input].iter()) {
            if x > a && x < b {
                cuts[count] = x;
                count += 1;
            }
        }
        cuts[count] = b;
        count += 1;
        let cuts = &mut cuts[..count];
        cuts.sort_unstable_by(f64::total_cmp);
        let (hc, s) = (self.coercive_field, self.width);
        let phi = |z: f64| self.sigmoid.antiderivative(z);
        let mut total = 0.5 * MU_0 * (b * b - a * a);
        for w in cuts.windows(2) {
            let (x0, x1) = (w[0], w[1]);
            if x1 <= x0 {
                continue;
            }
            let (c, p) = self.branch_start(history, 0.5 * (x0 + x1));
            let up = s * (phi((x1 - hc) / s) - phi((x0 - hc) / s));
            let down_c = s * (phi(-(x0 + hc) / s) - phi(-(x1 + hc) / s));
            total += c * (x1 - x0)
                + 2.0 * self.saturation_polarisation * (p.down_c * up - p.up * down_c);
        }
        let k = MU_0 * (self.recoil_permeability - 1.0);
        let jr = self.reversible_polarisation;
        if k != 0.0 && jr != 0.0 {
            // ln cosh x = |x| + ln(1 + exp(-2|x|)) - ln 2, without overflow
            let ln_cosh = |x: f64| x.abs() + (-2.0 * x.abs()).exp().ln_1p() - LN_2;
            total += jr * jr / k * (ln_cosh(k * b / jr) - ln_cosh(k * a / jr));
        }
        sign * total
    }

    /// The same integral by 5-point Gauss-Legendre on pieces no wider than s/2 between the
    /// points where the slope jumps: the reference of the closed form in the tests.
    #[cfg(test)]
    fn branch_integral_numeric(&self, history: &History, from: f64, to: f64) -> f64 {
        let (a, b, sign) = if from < to {
            (from, to, 1.0)
        } else {
            (to, from, -1.0)
        };
        let mut cuts = vec![a];
        for &x in history.reversals.iter().chain([history.last_input].iter()) {
            if x > a && x < b {
                cuts.push(x);
            }
        }
        cuts.push(b);
        cuts.sort_unstable_by(f64::total_cmp);
        let rule = gauss_legendre_5();
        let max_piece = 0.5 * self.width;
        let mut total = 0.0;
        for w in cuts.windows(2) {
            let (x0, x1) = (w[0], w[1]);
            if x1 <= x0 {
                continue;
            }
            let pieces = ((x1 - x0) / max_piece).ceil().clamp(1.0, 4096.0) as usize;
            let step = (x1 - x0) / pieces as f64;
            for p in 0..pieces {
                let mid = x0 + (p as f64 + 0.5) * step;
                let half = 0.5 * step;
                let mut sum = 0.0;
                for &(t, weight) in &rule {
                    sum += weight * self.flux_density(history, mid + half * t).0;
                }
                total += half * sum;
            }
        }
        sign * total
    }

    /// Co-energy density (J/m^3): the integral from 0 to `h` of B(h'; history) dh' along the
    /// trial function of the committed history (closed form, see `branch_integral`).
    /// The energy density is then b h - w' with b = B(h).
    pub fn coenergy_density(&self, history: &History, h: f64) -> f64 {
        self.branch_integral(history, 0.0, h)
    }

    /// Applies `inputs` (A/m) in turn to `history` (committing each) and returns the integral
    /// of H dB (J/m^3) along the path from the last input through all of them, computed as
    /// [h B] - integral B dh on each branch. Over a closed cycle it is the hysteresis loss per
    /// unit volume, the loop area (>= 0). Non-finite inputs are skipped.
    pub fn loop_loss(&self, history: &mut History, inputs: &[f64]) -> f64 {
        let mut work = 0.0;
        for &h in inputs {
            if !h.is_finite() {
                continue;
            }
            let h0 = history.last_input;
            let b0 = self.flux_density(history, h0).0;
            let b1 = self.flux_density(history, h).0;
            work += h * b1 - h0 * b0 - self.branch_integral(history, h0, h);
            self.apply(history, h);
        }
        work
    }

    /// J (T) on the major loop, without history: the descending branch (`ascending` false,
    /// from positive saturation) Js S((h + Hc)/s) + J_rev(h), or the ascending one
    /// Js S((h - Hc)/s) + J_rev(h).
    pub fn major_branch(&self, h: f64, ascending: bool) -> f64 {
        let shift = if ascending {
            -self.coercive_field
        } else {
            self.coercive_field
        };
        self.saturation_polarisation * self.sigmoid.value((h + shift) / self.width)
            + self.reversible_part(h).0
    }
}

/// Checks a recoil permeability (finite, at least 1) and the reversible part's saturation J_r
/// (finite, non-negative, positive when the recoil permeability exceeds 1), reporting through
/// `bad` (the caller names the law or grade).
/// Each (name, value) finite and positive, or `bad` naming the first that is not.
fn check_positive(
    values: &[(&'static str, f64)],
    bad: &impl Fn(&'static str, f64, &'static str) -> Result<(), MaterialError>,
) -> Result<(), MaterialError> {
    for &(name, value) in values {
        if !value.is_finite() {
            return bad(name, value, "must be finite");
        }
        if value <= 0.0 {
            return bad(name, value, "must be positive");
        }
    }
    Ok(())
}

fn check_reversible(
    mu: f64,
    jr: f64,
    bad: impl Fn(&'static str, f64, &'static str) -> Result<(), MaterialError>,
) -> Result<(), MaterialError> {
    if !mu.is_finite() {
        return bad("recoil permeability", mu, "must be finite");
    }
    if mu < 1.0 {
        return bad(
            "recoil permeability",
            mu,
            "is below 1: a magnet's recoil permeability is at least that of vacuum",
        );
    }
    if !jr.is_finite() {
        return bad("reversible polarisation J_r (T)", jr, "must be finite");
    }
    if jr < 0.0 || (jr == 0.0 && mu > 1.0) {
        return bad(
            "reversible polarisation J_r (T)",
            jr,
            "must be positive when the recoil permeability exceeds 1",
        );
    }
    Ok(())
}

/// Datasheet numbers of a magnet grade (the major loop's second quadrant and more).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct MagnetDatasheet {
    /// Grade name, e.g. `alnico-5`.
    pub name: String,
    /// Remanence Br (T).
    pub remanence: f64,
    /// Normal coercivity HcB (A/m, positive): B = 0 on the demagnetisation curve.
    pub coercivity: f64,
    /// Intrinsic coercivity HcJ (A/m, positive): J = 0 on the demagnetisation curve.
    pub intrinsic_coercivity: f64,
    /// Maximum energy product (BH)max (J/m^3).
    pub max_energy_product: f64,
    /// Relative recoil permeability mu_rec (>= 1).
    pub recoil_permeability: f64,
    /// Electrical resistivity (Ohm m), for the eddy-current caution of pulsed studies.
    pub resistivity: f64,
    /// Field for full magnetisation (A/m), from the datasheet.
    pub saturation_field: f64,
    /// J_r (T) of the reversible part: a modelling choice, not a datasheet number (see the
    /// module docs and each preset).
    pub reversible_polarisation: f64,
}

/// A law identified from a datasheet, with the figures of its own major loop and their
/// signed relative errors against the sheet, (fitted - sheet) / sheet.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct FittedLaw {
    /// The identified law.
    pub law: HysteresisLaw,
    /// Br of the fitted loop (T).
    pub remanence: f64,
    /// HcB of the fitted loop (A/m).
    pub coercivity: f64,
    /// HcJ of the fitted loop (A/m).
    pub intrinsic_coercivity: f64,
    /// (BH)max of the fitted loop (J/m^3).
    pub max_energy_product: f64,
    /// Relative recoil permeability of the fitted loop at remanence.
    pub recoil_permeability: f64,
    /// Relative error of Br.
    pub remanence_error: f64,
    /// Relative error of HcB.
    pub coercivity_error: f64,
    /// Relative error of HcJ.
    pub intrinsic_coercivity_error: f64,
    /// Relative error of (BH)max.
    pub max_energy_product_error: f64,
    /// Relative error of the recoil permeability.
    pub recoil_permeability_error: f64,
}

/// The figures of a law's descending major loop: (Br (T), HcB (A/m), HcJ (A/m),
/// (BH)max (J/m^3), recoil relative permeability at remanence).
fn loop_figures(law: &HysteresisLaw) -> (f64, f64, f64, f64, f64) {
    let j = |h: f64| law.major_branch(h, false);
    let b = |h: f64| MU_0 * h + j(h);
    // Root of an increasing function on (-inf, 0] that is positive at 0.
    let root = |f: &dyn Fn(f64) -> f64| -> f64 {
        let mut lo = -law.coercive_field;
        let mut n = 0;
        while f(lo) >= 0.0 && n < 200 {
            lo *= 2.0;
            n += 1;
        }
        let mut hi = 0.0;
        for _ in 0..200 {
            let mid = 0.5 * (lo + hi);
            if mid == lo || mid == hi {
                break;
            }
            if f(mid) < 0.0 {
                lo = mid;
            } else {
                hi = mid;
            }
        }
        0.5 * (lo + hi)
    };
    let hcj = root(&j);
    let hcb = root(&b);
    let product = |h: f64| -h * b(h);
    let samples = 2000;
    let mut best = 0;
    let mut best_value = f64::NEG_INFINITY;
    for i in 0..=samples {
        let h = hcb * i as f64 / samples as f64;
        if product(h) > best_value {
            best_value = product(h);
            best = i;
        }
    }
    let at = |i: usize| hcb * i.min(samples) as f64 / samples as f64;
    let (mut lo, mut hi) = (at(best.saturating_sub(1)), at(best + 1));
    let ratio = 0.5 * (5.0_f64.sqrt() - 1.0);
    for _ in 0..200 {
        let x1 = hi - ratio * (hi - lo);
        let x2 = lo + ratio * (hi - lo);
        if product(x1) < product(x2) {
            lo = x1;
        } else {
            hi = x2;
        }
    }
    let bh_max = product(0.5 * (lo + hi)).max(best_value);
    let recoil = law.flux_density(&History::saturated(true), 0.0).1 / MU_0;
    (j(0.0), -hcb, -hcj, bh_max, recoil)
}

impl MagnetDatasheet {
    /// Checks the numbers of the sheet.
    ///
    /// # Errors
    /// [`MaterialError::InvalidParameter`] naming the grade for a non-finite or non-positive
    /// number or mu_rec below 1; [`MaterialError::InconsistentDatasheet`] for HcB >= HcJ,
    /// mu_0 HcB >= Br, (BH)max above Br^2/(4 mu_0 mu_rec), or a saturation field not above
    /// HcJ.
    pub fn validate(&self) -> Result<(), MaterialError> {
        let bad = |parameter: &'static str, value: f64, reason: &'static str| {
            Err(MaterialError::InvalidParameter {
                material: self.name.clone(),
                parameter,
                value,
                reason,
            })
        };
        let positive = [
            ("remanence Br (T)", self.remanence),
            ("coercivity HcB (A/m)", self.coercivity),
            ("intrinsic coercivity HcJ (A/m)", self.intrinsic_coercivity),
            ("(BH)max (J/m^3)", self.max_energy_product),
            ("resistivity (Ohm m)", self.resistivity),
            ("saturation field (A/m)", self.saturation_field),
        ];
        check_positive(&positive, &bad)?;
        check_reversible(self.recoil_permeability, self.reversible_polarisation, bad)?;
        let inconsistent = |quantity: &'static str, value: f64, bound: f64, reason| {
            Err(MaterialError::InconsistentDatasheet {
                grade: self.name.clone(),
                quantity,
                value,
                bound,
                reason,
            })
        };
        if self.coercivity >= self.intrinsic_coercivity {
            return inconsistent(
                "coercivity HcB (A/m)",
                self.coercivity,
                self.intrinsic_coercivity,
                "is not below the intrinsic coercivity HcJ",
            );
        }
        if MU_0 * self.coercivity >= self.remanence {
            return inconsistent(
                "coercivity HcB (A/m)",
                self.coercivity,
                self.remanence / MU_0,
                "is not below Br / mu_0 (J would have to rise above Br at -HcB)",
            );
        }
        let ideal = self.remanence * self.remanence / (4.0 * MU_0 * self.recoil_permeability);
        if self.max_energy_product > ideal {
            return inconsistent(
                "(BH)max (J/m^3)",
                self.max_energy_product,
                ideal,
                "exceeds Br^2 / (4 mu_0 mu_rec), the product of a loop with a straight recoil line",
            );
        }
        if self.saturation_field <= self.intrinsic_coercivity {
            return inconsistent(
                "saturation field (A/m)",
                self.saturation_field,
                self.intrinsic_coercivity,
                "does not exceed HcJ, so it cannot magnetise the grade",
            );
        }
        Ok(())
    }
}

impl HysteresisLaw {
    /// Identifies a law from datasheet numbers with the logistic sigmoid; see
    /// [`HysteresisLaw::fit_with`].
    ///
    /// # Errors
    /// As [`HysteresisLaw::fit_with`].
    pub fn fit(sheet: &MagnetDatasheet) -> Result<FittedLaw, MaterialError> {
        HysteresisLaw::fit_with(sheet, Sigmoid::Logistic)
    }

    /// Identifies Js, Hc and s from Br, HcB, HcJ with mu_rec and J_r given, so that the
    /// descending major branch B = mu_0 H + Js S((H + Hc)/s) + J_rev(H) passes exactly
    /// through (0, Br), B = 0 at -HcB and J = 0 at -HcJ. (BH)max is not fitted: the result
    /// reports the fitted loop's (BH)max and its error against the sheet.
    ///
    /// With R_J = J_rev(HcJ) and R_B = mu_0 HcB + J_rev(HcB), the conditions at -HcJ and -HcB
    /// read Js S((Hc - HcJ)/s) = R_J and Js S((Hc - HcB)/s) = R_B; for a given Js they give s
    /// and Hc in closed form through S^(-1), which leaves one equation Js S(Hc/s) = Br in Js,
    /// solved by bisection on (R_B, infinity). Note that Hc exceeds HcJ: the reversible part
    /// is negative at -HcJ, so the irreversible part is still positive there.
    ///
    /// # Errors
    /// [`MagnetDatasheet::validate`]'s errors, and [`MaterialError::InconsistentDatasheet`]
    /// when no loop of this shape meets the three numbers (HcB beyond the recoil line, a gap
    /// HcJ - HcB too large for the reversible part, or Br too high for the slope between HcB
    /// and HcJ).
    pub fn fit_with(sheet: &MagnetDatasheet, sigmoid: Sigmoid) -> Result<FittedLaw, MaterialError> {
        sheet.validate()?;
        let (br, hcb, hcj) = (
            sheet.remanence,
            sheet.coercivity,
            sheet.intrinsic_coercivity,
        );
        let shape = HysteresisLaw {
            saturation_polarisation: br,
            coercive_field: hcj,
            width: 1.0,
            sigmoid,
            reversible_polarisation: sheet.reversible_polarisation,
            recoil_permeability: sheet.recoil_permeability,
        };
        let jrev = |h: f64| shape.reversible_part(h).0;
        let r_j = jrev(hcj);
        let r_b = MU_0 * hcb + jrev(hcb);
        let inconsistent = |quantity: &'static str, value: f64, bound: f64, reason| {
            Err(MaterialError::InconsistentDatasheet {
                grade: sheet.name.clone(),
                quantity,
                value,
                bound,
                reason,
            })
        };
        // The largest h with g(h) < target for an increasing g, by bisection on [0, hi].
        let limit = |g: &dyn Fn(f64) -> f64, target: f64, mut hi: f64| {
            let mut lo = 0.0;
            let mut n = 0;
            while g(hi) < target && n < 200 {
                hi *= 2.0;
                n += 1;
            }
            for _ in 0..200 {
                let mid = 0.5 * (lo + hi);
                if g(mid) < target {
                    lo = mid;
                } else {
                    hi = mid;
                }
            }
            lo
        };
        if r_b >= br {
            let bound = limit(&|h| MU_0 * h + jrev(h), br, hcb);
            return inconsistent(
                "coercivity HcB (A/m)",
                hcb,
                bound,
                "lies beyond the recoil line's own B = 0 (reversible part with this J_r)",
            );
        }
        if r_b <= r_j {
            let bound = if r_b < sheet.reversible_polarisation {
                limit(&jrev, r_b, hcj)
            } else {
                f64::INFINITY
            };
            return inconsistent(
                "intrinsic coercivity HcJ (A/m)",
                hcj,
                bound,
                "is too far above HcB for this recoil permeability and J_r",
            );
        }
        let parameters = |js: f64| -> (f64, f64) {
            let z_b = sigmoid.inverse(r_b / js);
            let z_j = sigmoid.inverse(r_j / js);
            let s = (hcj - hcb) / (z_b - z_j);
            (hcb + s * z_b, s)
        };
        let residual = |js: f64| {
            let (hc, s) = parameters(js);
            js * sigmoid.value(hc / s) - br
        };
        let mut lo = r_b;
        let mut hi = 2.0 * br;
        let mut n = 0;
        while residual(hi).partial_cmp(&0.0) != Some(std::cmp::Ordering::Greater) && n < 60 {
            lo = hi;
            hi *= 2.0;
            n += 1;
        }
        if residual(hi).partial_cmp(&0.0) != Some(std::cmp::Ordering::Greater) {
            return inconsistent(
                "remanence Br (T)",
                br,
                residual(hi) + br,
                "is too high for a loop of this shape through the given HcB and HcJ",
            );
        }
        for _ in 0..200 {
            let mid = 0.5 * (lo + hi);
            if mid == lo || mid == hi {
                break;
            }
            if residual(mid) < 0.0 {
                lo = mid;
            } else {
                hi = mid;
            }
        }
        let js = 0.5 * (lo + hi);
        let (hc, s) = parameters(js);
        let law = HysteresisLaw {
            saturation_polarisation: js,
            coercive_field: hc,
            width: s,
            ..shape
        };
        law.validate()?;
        let (f_br, f_hcb, f_hcj, f_bh, f_mu) = loop_figures(&law);
        let relative = |fitted: f64, sheet: f64| (fitted - sheet) / sheet;
        Ok(FittedLaw {
            remanence_error: relative(f_br, br),
            coercivity_error: relative(f_hcb, hcb),
            intrinsic_coercivity_error: relative(f_hcj, hcj),
            max_energy_product_error: relative(f_bh, sheet.max_energy_product),
            recoil_permeability_error: relative(f_mu, sheet.recoil_permeability),
            law,
            remanence: f_br,
            coercivity: f_hcb,
            intrinsic_coercivity: f_hcj,
            max_energy_product: f_bh,
            recoil_permeability: f_mu,
        })
    }
}

const KA_PER_M: f64 = 1e3;

const DATASHEET_NAMES: [&str; 5] = [
    "alnico-5",
    "alnico-8",
    "ndfeb-n42",
    "ndfeb-n42sh",
    "ferrite-hf-26-18",
];

/// The preset names [`datasheet`] accepts (case is ignored; `_` and spaces read as `-`).
pub fn datasheet_names() -> &'static [&'static str] {
    &DATASHEET_NAMES
}

/// Datasheet presets for the hysteretic magnet model; every number carries its source.
///
/// Sources: `[vendor AlNiCo]` vendor tables of cast AlNiCo following the MMPA 0100-00 grade
/// list (Br 1.25-1.30 T, HcB 48-52 kA/m, (BH)max 38-44 kJ/m^3, recoil mu_r about 3.6, full
/// magnetisation at about 240 kA/m for AlNiCo 5; Br 0.83-0.90 T, HcB 110-123 kA/m for
/// AlNiCo 8; resistivity about 0.47 uOhm m); `[GB/T 13560]` vendor tables of sintered NdFeB
/// following GB/T 13560 (N42: Br 1.28-1.32 T, HcB >= 915 kA/m, HcJ >= 955 kA/m, (BH)max
/// 318-342 kJ/m^3, recoil mu_r about 1.05); `[IEC 60404-8-1]` the hard-ferrite class
/// designation HF (BH)max/HcJ-in-10-kA/m, with typical values of the equivalent vendor class
/// Y30/C5 (Br 0.37-0.40 T, HcB 175-210 kA/m, HcJ 180-220 kA/m); `from memory` a value
/// recalled, not re-read. Published ranges give the middle; published minima are used as
/// given (then (BH)max is the minimum too, so the sheet stays self-consistent).
///
/// The reversible saturation J_r is a modelling choice (see the module docs): about the gap
/// between the grade's remanence and the saturation polarisation of its phase, `from memory`
/// (AlNiCo about 1.4 T, Nd2Fe14B about 1.6 T, strontium ferrite about 0.47 T), and large
/// enough that the recoil line stays nearly straight across the second quadrant.
///
/// # Errors
/// [`MaterialError::UnknownPreset`] listing the known names.
pub fn datasheet(name: &str) -> Result<MagnetDatasheet, MaterialError> {
    let key = crate::library::preset_key(name);
    let sheet = |name: &str,
                 remanence: f64,
                 coercivity: f64,
                 intrinsic_coercivity: f64,
                 max_energy_product: f64,
                 recoil_permeability: f64,
                 resistivity: f64,
                 saturation_field: f64,
                 reversible_polarisation: f64| MagnetDatasheet {
        name: name.into(),
        remanence,
        coercivity,
        intrinsic_coercivity,
        max_energy_product,
        recoil_permeability,
        resistivity,
        saturation_field,
        reversible_polarisation,
    };
    Ok(match key.as_str() {
        // Cast AlNiCo 5: Br 1.275 T (middle of 1.25-1.30), HcB 50 kA/m (middle of 48-52),
        // (BH)max 41 kJ/m^3 (middle of 38-44), mu_rec 3.6, resistivity 0.47 uOhm m,
        // saturation field 240 kA/m [vendor AlNiCo]. HcJ ALNICO5_HCJ: see its constant.
        // J_r 0.15 T (modelling choice).
        "alnico-5" => sheet(
            "alnico-5",
            1.275,
            50.0 * KA_PER_M,
            ALNICO5_HCJ,
            41.0 * KA_PER_M,
            3.6,
            0.47e-6,
            240.0 * KA_PER_M,
            0.15,
        ),
        // Cast AlNiCo 8: Br 0.865 T (middle of 0.83-0.90), HcB 116.5 kA/m (middle of 110-123)
        // [vendor AlNiCo]; HcJ, (BH)max: see the constants; mu_rec 1.9 `from memory`;
        // resistivity 0.47 uOhm m [vendor AlNiCo, as for AlNiCo 5]; saturation field
        // 480 kA/m `from memory` (about 4 HcJ, within the three-to-five-times rule of
        // Bavendiek et al., Int. J. Numer. Model. 2019). J_r 0.15 T (modelling choice).
        "alnico-8" => sheet(
            "alnico-8",
            0.865,
            116.5 * KA_PER_M,
            ALNICO8_HCJ,
            ALNICO8_BHMAX,
            1.9,
            0.47e-6,
            480.0 * KA_PER_M,
            0.15,
        ),
        // Sintered NdFeB N42: Br 1.30 T (middle of 1.28-1.32), HcB 915 kA/m and HcJ
        // 955 kA/m (published minima), (BH)max 318 kJ/m^3 (published minimum), mu_rec 1.05
        // [GB/T 13560]; resistivity 1.5 uOhm m (vendor tables, `from memory`: 1.4-1.6);
        // saturation field 2400 kA/m (vendor tables, `from memory`: at least 30 kOe).
        // J_r 0.3 T (modelling choice).
        "ndfeb-n42" => sheet(
            "ndfeb-n42",
            1.30,
            915.0 * KA_PER_M,
            955.0 * KA_PER_M,
            318.0 * KA_PER_M,
            1.05,
            1.5e-6,
            2400.0 * KA_PER_M,
            0.3,
        ),
        // Sintered NdFeB N42SH (high-temperature class): Br 1.305 T (middle of 1.29-1.32),
        // HcB 979 kA/m (12.3 kOe, published minimum), HcJ 1592 kA/m (20 kOe, published
        // minimum), (BH)max 318 kJ/m^3 (published minimum), all vendor tables following
        // GB/T 13560 `from memory`; mu_rec 1.05 [GB/T 13560]; resistivity 1.5 uOhm m
        // `from memory`; saturation field 3200 kA/m (`from memory`: at least 40 kOe).
        // J_r 0.3 T (modelling choice). The knee lies beyond B = 0, so HcB sits on the recoil
        // line and only bounds the knee's shape.
        "ndfeb-n42sh" => sheet(
            "ndfeb-n42sh",
            1.305,
            979.0 * KA_PER_M,
            1592.0 * KA_PER_M,
            318.0 * KA_PER_M,
            1.05,
            1.5e-6,
            3200.0 * KA_PER_M,
            0.3,
        ),
        // Hard ferrite, IEC 60404-8-1 class HF 26/18 ((BH)max >= 26 kJ/m^3, HcJ >= 180 kA/m,
        // `from memory`): Br 0.385 T (middle of 0.37-0.40), HcB 192.5 kA/m (middle of
        // 175-210), HcJ 200 kA/m (middle of 180-220) [vendor class Y30/C5]; (BH)max 26 kJ/m^3
        // (the class minimum); mu_rec 1.1 `from memory`; resistivity 1e4 Ohm m (an insulator
        // for eddy currents, order of magnitude `from memory`); saturation field 800 kA/m
        // (four times HcJ, the three-to-five-times rule of Bavendiek et al. 2019).
        // J_r 0.1 T (modelling choice).
        "ferrite-hf-26-18" => sheet(
            "ferrite-hf-26-18",
            0.385,
            192.5 * KA_PER_M,
            200.0 * KA_PER_M,
            26.0 * KA_PER_M,
            1.1,
            1e4,
            800.0 * KA_PER_M,
            0.1,
        ),
        _ => {
            return Err(MaterialError::UnknownPreset {
                name: name.into(),
                known: DATASHEET_NAMES.iter().map(|s| s.to_string()).collect(),
            })
        }
    })
}

/// HcJ of cast AlNiCo 5 (A/m): 50.33 kA/m (computed). Grade tables list AlNiCo 5's
/// intrinsic coercivity equal to its normal coercivity at their rounding (640 Oe both in the
/// MMPA 0100-00 list, `from memory`): J falls almost vertically at HcB, so the sheet does not
/// pin the gap HcJ - HcB that sets this model's width s. We take the HcJ for which the fitted
/// logistic loop (Br 1.275 T, HcB 50 kA/m, mu_rec 3.6, J_r 0.15 T) has the middle (BH)max of
/// the vendor range, 41 kJ/m^3; 51 kJ/m^3 would give a loop 33 % short of it.
const ALNICO5_HCJ: f64 = 50.33 * KA_PER_M;
/// HcJ of cast AlNiCo 8 (A/m): 124 kA/m, `from memory`.
const ALNICO8_HCJ: f64 = 124.0 * KA_PER_M;
/// (BH)max of cast AlNiCo 8 (J/m^3): 42 kJ/m^3, `from memory` (5.3 MGOe).
const ALNICO8_BHMAX: f64 = 42.0 * KA_PER_M;

#[cfg(test)]
mod tests {
    use super::erfc_nonnegative;

    /// erfc against the reference library Python `math.erfc` (the C library's erfc), across
    /// the series (x < 2) and continued-fraction (x >= 2) ranges and deep into the tail.
    #[test]
    fn erfc_matches_reference_library() {
        let reference = [
            (0.0, 1.0),
            (0.1, 0.8875370839817152),
            (0.5, 0.4795001221869535),
            (1.0, 0.15729920705028513),
            (1.5, 0.033894853524689274),
            (1.99, 0.004888586800383003),
            (2.0, 0.004677734981047265),
            (2.5, 0.0004069520174449589),
            (3.0, 2.2090496998585438e-05),
            (4.0, 1.541725790028002e-08),
            (5.0, 1.5374597944280351e-12),
            (10.0, 2.088487583762545e-45),
            (26.0, 5.663192408856143e-296),
        ];
        for (x, expected) in reference {
            let got = erfc_nonnegative(x);
            let relative = ((got - expected) / expected).abs();
            assert!(relative < 2e-13, "erfc({x}) = {got}, expected {expected}");
        }
        assert_eq!(erfc_nonnegative(40.0), 0.0);
        assert!(erfc_nonnegative(f64::NAN).is_nan());
    }

    /// The closed-form co-energy against 5-point Gauss-Legendre quadrature (pieces of s/2,
    /// split where the slope jumps) of the same trial function, for both sigmoids, grades of
    /// very different squareness, and histories with minor loops and wiped extrema.
    #[test]
    fn closed_form_coenergy_matches_quadrature() {
        use super::{datasheet, HysteresisLaw, Sigmoid};
        for name in ["alnico-5", "ndfeb-n42", "ferrite-hf-26-18"] {
            for sigmoid in [Sigmoid::Logistic, Sigmoid::Erf] {
                let sheet = datasheet(name).unwrap();
                let law = HysteresisLaw::fit_with(&sheet, sigmoid).unwrap().law;
                let hc = law.coercive_field;
                let mut history = super::History::saturated(true);
                let inputs = [-0.8, 0.3, -1.1, 2.5, -0.2, 0.9, -3.0, 1.05, 0.4];
                for (k, &x) in inputs.iter().enumerate() {
                    for &to in &[-4.0, -1.3, -0.5, 0.0, 0.7, 1.2, 4.0] {
                        for &from in &[0.0, x * hc, -2.0 * hc] {
                            let closed = law.branch_integral(&history, from, to * hc);
                            let numeric = law.branch_integral_numeric(&history, from, to * hc);
                            let scale = (law.saturation_polarisation + law.reversible_polarisation)
                                * (to * hc - from).abs()
                                + 1e-300;
                            assert!(
                                (closed - numeric).abs() <= 1e-9 * scale,
                                "{name} {sigmoid:?} step {k}: integral from {from} to {} \
                                 closed {closed} numeric {numeric}",
                                to * hc
                            );
                        }
                    }
                    law.apply(&mut history, x * hc);
                }
            }
        }
    }
}
