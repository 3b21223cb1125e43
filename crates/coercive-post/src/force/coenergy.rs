//! Force from the co-energy difference between positions of a moving part: one central
//! difference, or two (steps h and h/2) with a Richardson estimate of the step's own
//! truncation error; and the sign that turns the moving part's force into a body's force.

use coercive_fem::{Formulation, Solution};
use serde::{Deserialize, Serialize};

use super::Body;
use crate::PostError;

/// The force component along a displacement from the co-energy difference of two solves.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct CoenergyForce {
    /// Force component along `direction`: N/m planar (per metre of depth), N axisymmetric.
    pub force: f64,
    /// Unit vector of the displacement from the first to the second position.
    pub direction: [f64; 2],
    /// Length of the displacement (m).
    pub step_m: f64,
    /// Co-energy at the first position (J/m planar, J axisymmetric).
    pub coenergy_a: f64,
    /// Co-energy at the second position (J/m planar, J axisymmetric).
    pub coenergy_b: f64,
    /// Planar stack depth (m), `None` axisymmetric.
    pub depth_m: Option<f64>,
}

impl CoenergyForce {
    /// The force component for the whole device (N).
    pub fn force_total_n(&self) -> f64 {
        self.force * self.depth_m.unwrap_or(1.0)
    }
}

fn check_compatible(a: &Solution, b: &Solution) -> Result<(), PostError> {
    let fa = a.model().formulation();
    let fb = b.model().formulation();
    let same = match (fa, fb) {
        (Formulation::Planar { depth_m: a }, Formulation::Planar { depth_m: b }) => a == b,
        (Formulation::Axisymmetric, Formulation::Axisymmetric) => true,
        _ => false,
    };
    if same {
        Ok(())
    } else {
        Err(PostError::IncompatibleSolutions {
            reason: format!("formulations differ: {fa:?} and {fb:?}"),
        })
    }
}

fn check_step(what: &str, step: f64) -> Result<(), PostError> {
    if step.is_finite() && step > 0.0 {
        Ok(())
    } else {
        Err(PostError::InvalidArgument {
            what: what.into(),
            value: step,
            reason: "must be finite and non-zero".into(),
        })
    }
}

/// F . u = (W'(b) - W'(a)) / |b - a|: the force on the moved part along the displacement
/// `displacement` (m) that takes it from the position of `at_a` to that of `at_b`, at
/// constant currents and fixed remanence (virtual work with co-energy; e.g. Woodson & Melcher,
/// Electromechanical Dynamics, Part I, 1968, ch. 3). This is a secant: it is the force at the
/// mid position with an error of order |b - a|^2 times the third derivative of W'
/// ([`coenergy_force_richardson`] estimates that error).
///
/// The result is the force on the part that moved. The force on another body follows from
/// [`BodyRole`] (the moving part itself, or the fixed rest by action-reaction).
///
/// Use meshes that differ only where the part moves (a rigid group) or the re-meshing noise
/// in W' (of order the discretisation error of the energy) is divided by the step.
///
/// # Errors
/// [`PostError::IncompatibleSolutions`] when the two solutions have different formulations or
/// depths; [`PostError::InvalidArgument`] for a zero or non-finite displacement.
pub fn coenergy_force(
    at_a: &Solution,
    at_b: &Solution,
    displacement: [f64; 2],
) -> Result<CoenergyForce, PostError> {
    let step = displacement[0].hypot(displacement[1]);
    check_step("displacement (m)", step)?;
    check_compatible(at_a, at_b)?;
    let (wa, wb) = (at_a.coenergy(), at_b.coenergy());
    Ok(CoenergyForce {
        force: (wb - wa) / step,
        direction: [displacement[0] / step, displacement[1] / step],
        step_m: step,
        coenergy_a: wa,
        coenergy_b: wb,
        depth_m: at_a.depth_m(),
    })
}

/// Two central differences of the co-energy, with steps h and h/2, and the Richardson
/// estimate of the truncation error of the finer one.
///
/// With W'(x) smooth, the central difference D(s) = (W'(s) - W'(-s)) / (2 s) equals
/// dW'/dx + c s^2 + O(s^4), so D(h/2) - D(h) = -3 c h^2 / 4 + O(h^4) and
/// |D(h/2) - D(h)| / 3 estimates the error c h^2 / 4 of D(h/2) (L. F. Richardson, Phil. Trans.
/// R. Soc. A 210, 1911; e.g. Press et al., Numerical Recipes, 3rd ed., sec. 5.7). The estimate
/// is asymptotically exact; it does not see the re-meshing noise of W', which grows as the
/// step shrinks (noise / step) and is what the comparison with the stress methods shows.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct CoenergyRichardson {
    /// The force on the moving part along the direction, from the finer central difference
    /// D(h/2): N/m planar (per metre of depth), N axisymmetric.
    pub force: f64,
    /// The coarser central difference D(h) (same unit).
    pub coarse_force: f64,
    /// Richardson's extrapolation (4 D(h/2) - D(h)) / 3 (same unit).
    pub extrapolated: f64,
    /// Estimated truncation error of `force`, |D(h/2) - D(h)| / 3 (same unit, >= 0).
    pub step_error: f64,
    /// The larger step h (m); the finer difference uses h/2 either side.
    pub step_m: f64,
}

impl CoenergyRichardson {
    /// From the co-energies at the offsets -h, -h/2, +h/2, +h along the motion (J/m planar,
    /// J axisymmetric) and the step h (m).
    ///
    /// # Errors
    /// [`PostError::InvalidArgument`] for a zero, negative or non-finite step.
    pub fn from_coenergies(coenergies: [f64; 4], step_m: f64) -> Result<Self, PostError> {
        check_step("co-energy step (m)", step_m)?;
        let [w_m, w_mh, w_ph, w_p] = coenergies;
        let coarse = (w_p - w_m) / (2.0 * step_m);
        let fine = (w_ph - w_mh) / step_m;
        Ok(CoenergyRichardson {
            force: fine,
            coarse_force: coarse,
            extrapolated: (4.0 * fine - coarse) / 3.0,
            step_error: (fine - coarse).abs() / 3.0,
            step_m,
        })
    }
}

/// The co-energy force on the moving part along the unit vector `direction` from four solves
/// with the part at offsets -h, -h/2, +h/2 and +h (in that order) along it, with the
/// Richardson estimate of the step's truncation error (see [`CoenergyRichardson`]).
///
/// # Errors
/// [`PostError::IncompatibleSolutions`] when the formulations or depths differ;
/// [`PostError::InvalidArgument`] for a bad step or a direction that is not a unit vector.
pub fn coenergy_force_richardson(
    solutions: [&Solution; 4],
    direction: [f64; 2],
    step_m: f64,
) -> Result<CoenergyRichardson, PostError> {
    let norm = direction[0].hypot(direction[1]);
    if !(norm.is_finite() && (norm - 1.0).abs() < 1e-9) {
        return Err(PostError::InvalidArgument {
            what: "co-energy direction length".into(),
            value: norm,
            reason: "must be a unit vector".into(),
        });
    }
    for s in &solutions[1..] {
        check_compatible(solutions[0], s)?;
    }
    CoenergyRichardson::from_coenergies(solutions.map(Solution::coenergy), step_m)
}

/// How a body whose force is wanted relates to the part moved between co-energy solves.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[non_exhaustive]
pub enum BodyRole {
    /// The body is the moving part (the same regions): it gets dW'/dx itself.
    Moving,
    /// The body shares no region with the moving part: it gets -dW'/dx by action-reaction,
    /// which holds when the body and the moving part are the only things that exchange force
    /// across the air (the rest is air, or fixed and carries no net force).
    Reaction,
}

impl BodyRole {
    /// The role of `body` when `moving` is displaced.
    ///
    /// # Errors
    /// [`PostError::BodyOverlapsMovingPart`] when the body holds some but not all of the moving
    /// part's regions, or more than them: the co-energy difference gives the force on the
    /// moving part as a whole, which is then not the body's force.
    pub fn of(body: &Body, moving: &Body) -> Result<BodyRole, PostError> {
        let in_moving = |r: &String| moving.regions.contains(r);
        let shared = body.regions.iter().filter(|r| in_moving(r)).count();
        let same_set =
            shared == body.regions.len() && moving.regions.iter().all(|r| body.regions.contains(r));
        if shared == 0 {
            Ok(BodyRole::Reaction)
        } else if same_set {
            Ok(BodyRole::Moving)
        } else {
            Err(PostError::BodyOverlapsMovingPart {
                body: body.label(),
                moving: moving.label(),
            })
        }
    }

    /// +1 for [`BodyRole::Moving`], -1 for [`BodyRole::Reaction`]: the factor taking the
    /// moving part's dW'/dx to the body's force along the motion.
    pub fn sign(self) -> f64 {
        match self {
            BodyRole::Moving => 1.0,
            BodyRole::Reaction => -1.0,
        }
    }
}
