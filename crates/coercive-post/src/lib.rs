//! Post-processing for Coercive: fields, flux linkage, energy, co-energy, force, torque, plots.
#![warn(missing_docs)]
#![deny(rustdoc::broken_intra_doc_links)]
