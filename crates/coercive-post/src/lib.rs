//! Post-processing for Coercive: fields, flux linkage, energy, co-energy, force, torque, plots.
#![warn(missing_docs)]
#![deny(rustdoc::broken_intra_doc_links)]

pub mod energy;
mod error;
pub mod field;
pub mod force;
mod integrate;
pub mod locate;
pub mod plot;
pub mod table;
pub mod winding;

pub use energy::{EnergyTable, RegionEnergy};
pub use error::PostError;
pub use field::{
    FieldProbe, FluxCrossing, MagnetWorkingPoint, PathSample, PathSamples, PointField,
    RegionAverage, RegionAverageTable, WorkingPointTable,
};
pub use locate::{Location, PointLocator};
pub use table::Tabular;
pub use winding::{
    apparent_inductance, flux_linkage, flux_linkages, incremental_inductance,
    incremental_inductances, DifferenceSettings, FluxLinkage, FluxLinkageTable, Inductance,
    InductanceMatrix,
};
