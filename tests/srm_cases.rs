//! The switched reluctance machine cases of `meshes/` solve, and the half sector (an
//! anti-periodic model) times two reproduces the full cross-section: energy, flux linkage of
//! each phase and the torque on the rotor by every method, each reported for the whole
//! machine.
//!
//! The check is the symmetry of the drawing itself (a rotation by 180 degrees maps the
//! machine onto itself with every winding and magnet reversed), not an outside value: the two
//! models are meshed independently, so they agree to the discretisation error.

use std::path::PathBuf;

use coercive::case::Case;
use coercive::fem::Solution;
use coercive::post::force::{arkkio_torque, force_on, AirGap, Body, ForceMethod, ForceSettings};
use coercive::post::winding::flux_linkages;
use coercive::solve::{model_from_case, study_model};
use coercive::study::{torque_sweep, TorqueSweepSettings};

fn solve(file: &str) -> Solution {
    let path = PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("meshes")
        .join(file);
    let case = Case::from_file(&path).unwrap();
    let (mesh, _) = case.mesh_with_report(&case.geometry().unwrap()).unwrap();
    let model = model_from_case(&case, mesh).unwrap();
    model.solve().unwrap()
}

fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs()
}

/// Torque on the rotor iron by every stress method and by Arkkio's method, for the whole
/// machine (N m per metre of depth), with the number of sectors the model stands for.
fn torques(sol: &Solution, sectors: f64) -> Vec<(String, f64)> {
    let f = force_on(sol, &Body::new(&["rotor"]), &ForceSettings::default()).unwrap();
    let mut out: Vec<(String, f64)> = f
        .methods
        .iter()
        .map(|m| (m.method.to_string(), sectors * m.torque))
        .collect();
    let ark = arkkio_torque(
        sol,
        &AirGap::Region {
            name: "airgap".into(),
            centre: [0.0, 0.0],
        },
    )
    .unwrap();
    assert_eq!(f64::from(ark.sectors), sectors);
    assert!((ark.whole_machine_torque() - sectors * ark.torque).abs() < 1e-15);
    out.push(("Arkkio (air-gap band)".into(), ark.whole_machine_torque()));
    out
}

#[test]
fn the_half_sector_times_two_is_the_full_machine() {
    let full = solve("srm_full.toml");
    let half = solve("srm_sector.toml");
    let depth = full.depth_m().unwrap();
    assert_eq!(depth, 0.06);

    let (wf, wh) = (full.energy(), half.energy());
    eprintln!("energy: full {wf:.6} J/m, 2 x sector {:.6} J/m", 2.0 * wh);
    // Measured: 1e-4.
    assert!(rel(2.0 * wh, wf) < 5e-4, "{wf} {wh}");

    // Flux linkage of each phase: the sector holds one of the phase's two coils.
    let (lf, lh) = (flux_linkages(&full).unwrap(), flux_linkages(&half).unwrap());
    let scale = lf
        .rows
        .iter()
        .fold(0.0_f64, |m, r| m.max(r.linkage.total_wb.abs()));
    for (a, b) in lf.rows.iter().zip(&lh.rows) {
        assert_eq!(a.linkage.winding, b.linkage.winding);
        let (pf, ph) = (a.linkage.total_wb, 2.0 * b.linkage.total_wb);
        eprintln!(
            "{}: flux linkage full {pf:.6e} Wb, 2 x sector {ph:.6e} Wb",
            a.linkage.winding
        );
        // Measured: below 2e-4 of the largest linkage.
        assert!((pf - ph).abs() < 1e-3 * scale, "{pf} {ph}");
    }

    // Torque on the rotor for the whole machine by every method.
    let tf = torques(&full, 1.0);
    let th = torques(&half, 2.0);
    let reference = tf[0].1;
    assert!(
        reference.abs() > 1.0,
        "phase B at 5 A pulls the rotor: {reference} N m/m"
    );
    for ((name, a), (_, b)) in tf.iter().zip(&th) {
        eprintln!(
            "torque, {name}: full {a:.5} N m/m ({:.5} N m), 2 x sector {b:.5} N m/m",
            a * depth
        );
        // The methods agree with each other and the sector with the full model.
        // Measured: sector versus full within 2e-3 (eggshells, Arkkio) and 1.2 % (mid-line
        // stress, the weakest method: one path through one element layer); Arkkio within
        // 1e-3 of the two-layer eggshell, the mid-line within 2.6 %.
        let tol = if name == &ForceMethod::StressMidLine.to_string() {
            5e-2
        } else {
            5e-3
        };
        assert!(rel(*b, *a) < tol, "{name}: {a} {b}");
        assert!(rel(*a, reference) < tol, "{name}: {a} {reference}");
    }
}

#[test]
fn the_full_machine_turns_and_its_torque_methods_agree() {
    // The rotor turned 5 degrees towards phase B's poles (2 and 5 at 60 and 240 degrees; the
    // drawn rotor poles sit at 45 and 225), phase B at 5 A. The co-energy torque
    // dW'/dtheta at constant current is independent of the stress methods (virtual work,
    // Coulomb, IEEE Trans. Magn. 19(6), 1983).
    let path = PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("meshes")
        .join("srm_full.toml");
    let case = Case::from_file(&path).unwrap();
    let rigid = case.geometry().unwrap().prepare_rigid().unwrap();
    let settings = TorqueSweepSettings {
        group: "rotor".into(),
        centre: [0.0, 0.0],
        body: Body::new(&["rotor"]),
        gap: Some(AirGap::Region {
            name: "airgap".into(),
            centre: [0.0, 0.0],
        }),
        sectors: 1,
        coenergy_step_rad: Some(1f64.to_radians()),
        windings: vec!["phase_b".into()],
        force: ForceSettings::default(),
    };
    let points = torque_sweep(&rigid, &[5f64.to_radians()], &[], &settings, |m| {
        study_model(&case, m)
    })
    .unwrap();
    let p = &points[0];
    let (egg, ark, co) = (p.eggshell_nm, p.arkkio_nm.unwrap(), p.coenergy_nm.unwrap());
    eprintln!(
        "rotor at 5 deg: eggshell {egg:.5} N m, Arkkio {ark:.5} N m, co-energy {co:.5} N m, \
         mid-line {:.5} N m; phase B flux linkage {:.5} Wb; {} triangles",
        p.stress_nm, p.flux_linkage_wb[0].1, p.triangles
    );
    assert_eq!(p.flux_linkage_wb[0].0, "phase_b");
    assert!(
        egg > 0.0,
        "the rotor turns towards phase B (counter-clockwise)"
    );
    assert!(rel(ark, egg) < 5e-3, "{ark} {egg}");
    // Measured: Arkkio 1.4e-3 from the eggshell, the co-energy difference 0.2 % at a 1 degree
    // step (it was -1.2 % with the direction-dependent size field, and +2 % at a 0.25 degree
    // step): the fixed parts are meshed again at each angle, and the difference of two
    // co-energies of about 30 J/m carries that meshing noise.
    assert!(rel(co, egg) < 2e-2, "{co} {egg}");
}

#[test]
fn the_six_identical_poles_mesh_alike_at_every_rotor_angle() {
    // Issue 9 item 6. Before: 983 and 964 triangles in the tips of poles 1 and 4 against
    // 1945-1980 in the others. Two causes: the automatic gap size followed the rotor's
    // drawn position (rotor poles at 45 degrees face stator poles 2, 3, 5 and 6 across the
    // 0.5 mm gap, not 1 and 4), and the size field grew by a chamfer distance that is exact
    // only along the grid's axes and diagonals (poles 1 and 4 lie on an axis). Now the air-gap
    // band gives every pole the same gap whatever the rotor angle, and the size field grows
    // alike in every direction.
    let path = PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("meshes")
        .join("srm_full.toml");
    let case = Case::from_file(&path).unwrap();
    let rigid = case.geometry().unwrap().prepare_rigid().unwrap();
    for deg in [0.0_f64, 7.5, 15.0, 22.5] {
        let pl = coercive::mesh::Placement::rotation(
            deg.to_radians(),
            coercive::mesh::Point2::new(0.0, 0.0),
        );
        let mesh = rigid.mesh_at(&[("rotor", pl)]).unwrap();
        let count = |name: &str| {
            let r = mesh.region_by_name(name).unwrap();
            mesh.triangle_regions().iter().filter(|&&t| t == r).count()
        };
        for (what, tol) in [("pole{}_tip", 0.05), ("magnet{}", 0.12)] {
            let counts: Vec<usize> = (1..=6)
                .map(|k| count(&what.replace("{}", &k.to_string())))
                .collect();
            let (lo, hi) = (
                *counts.iter().min().unwrap() as f64,
                *counts.iter().max().unwrap() as f64,
            );
            eprintln!(
                "rotor {deg} deg: {what} triangles {counts:?}, spread {:.2} %",
                100.0 * (hi - lo) / hi
            );
            // Measured: pole tips within 3.4 % at every angle, magnets within 9 % (Delaunay
            // refinement order still differs between rotated copies).
            assert!((hi - lo) / hi < tol, "{what}: {counts:?}");
        }
    }
}
