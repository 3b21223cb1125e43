//! Stored energy and co-energy per region and in total.
//!
//! The values are the solver's own integrals of the material laws at its quadrature points:
//! energy W = integral of (integral of H . dB) dV and co-energy W' = integral of
//! (integral of B . dH) dV = integral of B . H dV - W, exact for the interpolated B-H curve
//! of a nonlinear material (not the linear shortcut B . H / 2). Magnets count from their
//! H = 0 state. For a linear device without magnets W = W' = psi i / 2 summed over windings.
//!
//! Planar values are per metre of depth (J/m) and, multiplied by the depth, for the stack
//! (J); axisymmetric values are totals (J).

use coercive_fem::{Material, Solution};
use serde::{Deserialize, Serialize};

use crate::table::{csv_line, Tabular};

/// Energy and co-energy of one region.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct RegionEnergy {
    /// The region (`total` for the sum row).
    pub region: String,
    /// The kind of material law: `linear`, `anisotropic`, `soft (nonlinear)`, `magnet`.
    pub material: String,
    /// Planar: stored energy per metre of depth (J/m); `None` axisymmetric.
    pub energy_per_metre_j_per_m: Option<f64>,
    /// Planar: co-energy per metre of depth (J/m); `None` axisymmetric.
    pub coenergy_per_metre_j_per_m: Option<f64>,
    /// Stored energy of the device part (J).
    pub energy_j: f64,
    /// Co-energy of the device part (J).
    pub coenergy_j: f64,
}

/// Energy and co-energy of every region, and the total.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct EnergyTable {
    /// The planar depth (m); `None` for axisymmetric models.
    pub depth_m: Option<f64>,
    /// One row per mesh region, by region id.
    pub regions: Vec<RegionEnergy>,
    /// The sum over all regions.
    pub total: RegionEnergy,
}

fn material_kind(m: &Material) -> &'static str {
    match m {
        Material::Linear { .. } => "linear",
        Material::Anisotropic { .. } => "anisotropic",
        Material::Soft(_) => "soft (nonlinear)",
        Material::Magnet(_) => "magnet",
        Material::Brauer { .. } => "Brauer law (nonlinear)",
        _ => "other",
    }
}

impl EnergyTable {
    /// The energy table of `solution`.
    pub fn new(solution: &Solution) -> EnergyTable {
        let model = solution.model();
        let depth = solution.depth_m();
        let row = |region: String, material: String, w: f64, wc: f64| RegionEnergy {
            region,
            material,
            energy_per_metre_j_per_m: depth.map(|_| w),
            coenergy_per_metre_j_per_m: depth.map(|_| wc),
            energy_j: w * depth.unwrap_or(1.0),
            coenergy_j: wc * depth.unwrap_or(1.0),
        };
        let regions = model
            .mesh()
            .regions()
            .iter()
            .enumerate()
            .map(|(r, reg)| {
                row(
                    reg.name.clone(),
                    material_kind(&model.materials()[r]).into(),
                    solution.region_energies()[r],
                    solution.region_coenergies()[r],
                )
            })
            .collect();
        let total = row(
            "total".into(),
            "all".into(),
            solution.energy(),
            solution.coenergy(),
        );
        EnergyTable {
            depth_m: depth,
            regions,
            total,
        }
    }

    /// The row of the region named `region`, if any.
    pub fn region(&self, region: &str) -> Option<&RegionEnergy> {
        self.regions.iter().find(|r| r.region == region)
    }
}

impl Tabular for EnergyTable {
    fn header(&self) -> Vec<String> {
        [
            "region",
            "material",
            "energy per metre (J/m)",
            "co-energy per metre (J/m)",
            "energy (J)",
            "co-energy (J)",
        ]
        .iter()
        .map(|s| s.to_string())
        .collect()
    }
    fn csv_rows(&self) -> Vec<String> {
        self.regions
            .iter()
            .chain(std::iter::once(&self.total))
            .map(|r| {
                csv_line(
                    &[r.region.clone(), r.material.clone()],
                    &[
                        r.energy_per_metre_j_per_m.unwrap_or(f64::NAN),
                        r.coenergy_per_metre_j_per_m.unwrap_or(f64::NAN),
                        r.energy_j,
                        r.coenergy_j,
                    ],
                    0,
                )
            })
            .collect()
    }
}
