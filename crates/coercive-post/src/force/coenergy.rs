//! Force from the co-energy difference between two positions of a body.

use coercive_fem::{Formulation, Solution};
use serde::{Deserialize, Serialize};

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

/// F . u = (W'(b) - W'(a)) / |b - a|: the force on the moved body along the displacement
/// `displacement` (m) that takes it from the position of `at_a` to that of `at_b`, at
/// constant currents and fixed remanence (virtual work with co-energy; e.g. Woodson & Melcher,
/// Electromechanical Dynamics, Part I, 1968, ch. 3). This is a secant: it is the force at the
/// mid position with an error of order |b - a|^2 times the third derivative of W'.
///
/// Use meshes that differ only where the body moves (a rigid group) or the re-meshing noise
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
    if !(step.is_finite() && step > 0.0) {
        return Err(PostError::InvalidArgument {
            what: "displacement (m)".into(),
            value: step,
            reason: "must be finite and non-zero".into(),
        });
    }
    let fa = at_a.model().formulation();
    let fb = at_b.model().formulation();
    let same = match (fa, fb) {
        (Formulation::Planar { depth_m: a }, Formulation::Planar { depth_m: b }) => a == b,
        (Formulation::Axisymmetric, Formulation::Axisymmetric) => true,
        _ => false,
    };
    if !same {
        return Err(PostError::IncompatibleSolutions {
            reason: format!("formulations differ: {fa:?} and {fb:?}"),
        });
    }
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
