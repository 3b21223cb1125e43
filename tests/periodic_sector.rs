//! A periodic or anti-periodic sector gives the same field as the full model (issue 3).
//! Geometry: an annulus with four coil sectors of alternating current (period 180 degrees,
//! anti-period 90 degrees) inside a saturable steel ring; the sector meshes are exact
//! sub-meshes of the full one, so the answers must agree to the solver's tolerance.

mod common;

use std::f64::consts::PI;

use coercive::fem::{BhCurve, ElementOrder, Formulation, Material, Model, SoftMagnetic, Solution};
use coercive::mesh::Mesh;
use common::meshes::{polar_mesh, ring_radii};
use common::*;

const J: f64 = 1e8;

fn mesh(sectors: usize) -> (Mesh, String) {
    let radii = ring_radii(&[0.01, 0.03, 0.04, 0.045, 0.06, 0.08], |_| 1.5e-3);
    let names: &[&str] = &["air", "steel", "plus", "minus"];
    let m = polar_mesh(
        &radii,
        16, // rays every 22.5 degrees are mesh edges: the coil sides follow them exactly
        4 * sectors,
        names,
        |r, th| {
            let q = (th / (PI / 2.0)).floor() as usize; // quarter index
            let local = th - q as f64 * PI / 2.0;
            if r > 0.03 && r < 0.04 && local > PI / 8.0 && local < 3.0 * PI / 8.0 {
                if q % 2 == 0 {
                    2
                } else {
                    3
                }
            } else if r > 0.045 && r < 0.06 {
                1
            } else {
                0
            }
        },
        true,
    );
    (m, format!("ring{}", radii.len() - 1))
}

fn solve(sectors: usize, order: ElementOrder) -> Solution {
    let (m, outer) = mesh(sectors);
    let has_minus = m.region_area(m.region_by_name("minus").unwrap()) > 0.0;
    let steel = Material::Soft(SoftMagnetic {
        curve: BhCurve::saturating(1.6, 300.0).expect("valid law"),
    });
    let mut b = Model::builder(m, Formulation::Planar { depth_m: 1.0 })
        .order(order)
        .material("air", Material::vacuum())
        .material("steel", steel)
        .material("plus", Material::vacuum())
        .material("minus", Material::vacuum())
        .current_density("plus", J)
        .fixed_potential(&outer, 0.0);
    if has_minus {
        b = b.current_density("minus", -J);
    }
    b = match sectors {
        4 => b,
        2 => b.periodic("start", "end"),
        1 => b.anti_periodic("start", "end"),
        _ => unreachable!(),
    };
    b.build().expect("model").solve().expect("solution")
}

#[test]
fn periodic_and_anti_periodic_sectors_match_the_full_model() {
    for order in [ElementOrder::P1, ElementOrder::P2] {
        let full = solve(4, order);
        let half = solve(2, order);
        let quarter = solve(1, order);
        let (wf, wh, wq) = (full.energy(), half.energy(), quarter.energy());
        eprintln!(
            "{order:?}: W' full {wf} J/m, 2 x half {} J/m, 4 x quarter {} J/m",
            2.0 * wh,
            4.0 * wq
        );
        // Symmetry: the full energy is twice the half's and four times the quarter's; the
        // Newton tolerance (1e-8 relative residual) bounds the difference.
        assert!((wf - 2.0 * wh).abs() < 1e-7 * wf);
        assert!((wf - 4.0 * wq).abs() < 1e-7 * wf);
        // The steel is driven into its knee (B = 0.95 T where its permeability has fallen to
        // 40 % of the initial value), so the sector constraints are tested under Newton.
        let peak = full.peak_flux_density("steel").unwrap();
        assert!(peak > 0.8, "peak {peak} T in the steel");
        assert!(full.newton_report().iterations > 2);
        // Potentials at the same points: A(theta + 90 deg) = -A(theta) in the full model
        // (anti-periodicity of the sources), and the sector solutions reproduce it.
        let scale = full.potential().iter().fold(0.0f64, |m, v| m.max(v.abs()));
        for (r, th) in [(0.02, 0.3), (0.035, 0.7), (0.05, 1.2), (0.07, 0.1)] {
            let p = |t: f64| [r * f64::cos(t), r * f64::sin(t)];
            let af = a_at(&full, p(th));
            let af_rot = a_at(&full, p(th + PI / 2.0));
            let ah = a_at(&half, p(th + PI / 2.0));
            let aq = a_at(&quarter, p(th));
            assert!(
                (af + af_rot).abs() < 1e-6 * scale,
                "full model anti-periodic at r={r}"
            );
            assert!((af_rot - ah).abs() < 1e-6 * scale, "half sector at r={r}");
            assert!((af - aq).abs() < 1e-6 * scale, "quarter sector at r={r}");
        }
    }
}
