//! Vector-potential finite-element magnetostatics for Coercive.
#![warn(missing_docs)]
#![deny(rustdoc::broken_intra_doc_links)]

mod assembly;
pub mod bh;
mod dof;
pub mod element;
mod error;
pub mod hysteresis;
pub mod library;
mod linsolve;
pub mod material;
pub mod model;
pub mod newton;
mod pulse;
pub mod quadrature;
mod solution;
mod solver;
mod state;

pub use bh::{BhCurve, BhKnot, BhTable};
pub use element::ElementOrder;
pub use error::FemError;
pub use hysteresis::{
    datasheet, datasheet_names, FittedLaw, History, HysteresisLaw, MagnetDatasheet, Sigmoid,
};
pub use linsolve::LinearSolverKind;
pub use material::{
    HystereticMagnet, InitialMagnetisation, LinearMagnet, MagnetDirection, Material, MaterialError,
    Response, SoftMagnetic, MU_0,
};
pub use model::{
    BoundaryCondition, Formulation, Model, ModelBuilder, OpenBoundary, PotentialValue, ScalarField,
    Sense, Winding, WindingSide,
};
pub use newton::{NewtonFailure, NewtonFailureReason, NewtonReport, NewtonSettings, PhaseTimes};
pub use pulse::{
    EnergyBalance, HistoryError, HistoryRun, HistorySettings, HistoryStep, KeepSolutions, Pulse,
};
pub use solution::Solution;
pub use solver::Solver;
pub use state::MagnetState;
