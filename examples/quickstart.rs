//! Quick start, shown verbatim in README.md (tests/readme.rs keeps the two in step).
//!
//! A long round conductor carrying 1000 A inside a saturating 1010 steel ring, solved with P2
//! elements and Newton iteration. Ampere's law gives H = I / (2 pi r) in the ring for any B-H
//! curve, so the printed |B| at r = 15 mm can be checked by hand against the 1010 curve at
//! H = 1000 / (2 pi 0.015) = 10.6 kA/m.
use coercive::fem::{library, ElementOrder, Formulation, Material, Model};
use coercive::mesh::{Geometry, Point2};
use coercive::post::FieldProbe;

pub fn main() -> Result<(), Box<dyn std::error::Error>> {
    // README-BEGIN
    // Conductor r < 8 mm, air gap, steel ring 10..20 mm, air out to 60 mm (lengths in m).
    let mut geometry = Geometry::new();
    for (radius, name) in [
        (0.008, "wire"),
        (0.010, "ring_in"),
        (0.020, "ring_out"),
        (0.060, "outer"),
    ] {
        for curve in geometry.add_circle(Point2::new(0.0, 0.0), radius) {
            geometry.name_curve(curve, name);
        }
    }
    geometry.add_region("conductor", Point2::new(0.0, 0.0));
    geometry.add_region("gap", Point2::new(0.009, 0.0));
    geometry.add_region("ring", Point2::new(0.015, 0.0));
    geometry.add_region("air", Point2::new(0.040, 0.0));
    let mesh = geometry.mesh()?;

    let current = 1000.0; // A
    let model = Model::builder(mesh, Formulation::Planar { depth_m: 1.0 })
        .order(ElementOrder::P2)
        .material("ring", library::preset("steel-c10")?)
        .material("conductor", Material::vacuum())
        .material("gap", Material::vacuum())
        .material("air", Material::vacuum())
        .current_density(
            "conductor",
            current / (std::f64::consts::PI * 0.008 * 0.008),
        )
        .fixed_potential("outer", 0.0)
        .build()?;
    let solution = model.solve()?;
    let b = FieldProbe::new(&solution).flux_density_norm([0.015, 0.0])?;
    println!(
        "{} Newton iterations; stored energy {:.4} J/m; |B| at r = 15 mm: {:.3} T",
        solution.newton_report().iterations,
        solution.energy(),
        b
    );
    // README-END
    Ok(())
}
