//! Switching the switchable magnet pad ON and OFF with a coil pulse.
//!
//! Run: `cargo run --release --example switching [-- OUTPUT_DIR]`.

use std::time::Instant;

use coercive::case::Case;
use coercive::fem::hysteresis::Sigmoid;
use coercive::fem::{
    library, ElementOrder, Formulation, HysteresisLaw, HystereticMagnet, InitialMagnetisation,
    MagnetDirection, Material, Model, Sense, Winding,
};
use coercive::post::force::{Body, ForceSettings};
use coercive::study::ForceSweepSettings;
use coercive::switching::{switching_study, SwitchingSettings, SwitchingSetup, Workpiece};

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let case_path = concat!(env!("CARGO_MANIFEST_DIR"), "/meshes/switchable_pad.toml");
    let case = Case::from_file(case_path)?;
    let depth_m = case.depth().unwrap_or(0.05);
    let started = Instant::now();
    let rigid = case.geometry()?.prepare_rigid()?;
    let alnico = HysteresisLaw {
        saturation_polarisation: 1.2,
        coercive_field: 50.0e3,
        width: 8.0e3,
        sigmoid: Sigmoid::Logistic,
        reversible_polarisation: 0.15,
        recoil_permeability: 3.0,
    };
    let ndfeb = HysteresisLaw {
        saturation_polarisation: 1.25,
        coercive_field: 1000.0e3,
        width: 30.0e3,
        sigmoid: Sigmoid::Logistic,
        reversible_polarisation: 0.3,
        recoil_permeability: 1.05,
    };
    let magnet = |law: HysteresisLaw| {
        Material::Hysteretic(HystereticMagnet {
            law,
            perpendicular_permeability: 1.05,
            direction: MagnetDirection::Fixed { angle: 0.0 },
            initial: InitialMagnetisation::Forward,
        })
    };
    let steel = library::preset("steel-1010")?;
    let build = |mesh, workpiece: Workpiece| {
        let plate = match workpiece {
            Workpiece::Present => steel.clone(),
            Workpiece::Removed => Material::vacuum(),
        };
        Model::builder(mesh, Formulation::Planar { depth_m })
            .order(ElementOrder::P2)
            .material("air", Material::vacuum())
            .material("window_air", Material::vacuum())
            .material("coil_upper", Material::vacuum())
            .material("coil_lower", Material::vacuum())
            .material("pole_left", steel.clone())
            .material("pole_right", steel.clone())
            .material("plate", plate)
            .material("magnet_ndfeb", magnet(ndfeb.clone()))
            .material("magnet_alnico", magnet(alnico.clone()))
            .winding(
                Winding::new("coil", 100.0, 0.0)
                    .side("coil_upper", Sense::Positive)
                    .side("coil_lower", Sense::Negative),
            )
            .fixed_potential("outer", 0.0)
            .build()
    };
    let pad = [
        "pole_left",
        "pole_right",
        "magnet_ndfeb",
        "magnet_alnico",
        "window_air",
        "coil_upper",
        "coil_lower",
    ];
    let setup = SwitchingSetup {
        group: "pad".into(),
        direction: [0.0, 1.0],
        drawn_gap_m: 0.5e-3,
        workpiece: Body::new(&["plate"]),
        group_body: Body::new(&pad),
        coil: "coil".into(),
        switched_magnet: "magnet_alnico".into(),
        guarded_magnet: "magnet_ndfeb".into(),
        pulse_gap_m: 0.05e-3,
        off_current_sign: 1.0,
    };
    let settings = SwitchingSettings {
        gaps_m: [
            0.05, 0.1, 0.2, 0.3, 0.5, 0.75, 1.0, 1.25, 1.5, 2.0, 2.5, 3.0,
        ]
        .iter()
        .map(|g| g * 1e-3)
        .collect(),
        full_pulse_a: 150.0,
        switched_fraction: 0.95,
        amplitude_tolerance: 0.01,
        recommended_margin: 1.25,
        partial_amplitudes: 8,
        pulse_duration_s: 1e-3,
        switched_resistivity_ohm_m: 0.47e-6,
        history: Default::default(),
        sweep: ForceSweepSettings {
            group: "pad".into(),
            direction: [0.0, 1.0],
            body: Body::new(&["plate"]),
            group_body: Body::new(&pad),
            relative_step: 0.1,
            min_step_m: 2e-6,
            force: ForceSettings::default(),
        },
    };
    let report = switching_study(&rigid, &setup, &settings, build)?;
    println!("study in {:.1} s", started.elapsed().as_secs_f64());
    for t in [&report.on_to_off, &report.off_to_on] {
        println!(
            "{}: threshold {:.1} A-turns; recommended {:.1} A-turns, {:.3} J, J_switched {:.3} T, NdFeB margin {:.3}, beyond knee {:.2e}, evals {:?}",
            t.direction,
            t.ampere_turns,
            t.recommended.ampere_turns,
            t.recommended.supplied_energy_j,
            t.recommended.switched_polarisation_t,
            t.recommended.guarded_knee_margin,
            t.recommended.guarded_beyond_knee_fraction,
            t.evaluations
        );
    }
    for (on, off) in report.force_on.iter().zip(&report.force_off) {
        println!(
            "gap {:.2} mm: ON {:.1} N (spread {:.2} %), OFF {:.2} N (spread {:.2} %)",
            on.point.parameter * 1e3,
            -on.eggshell_n,
            100.0 * on.spread,
            -off.eggshell_n,
            100.0 * off.spread
        );
    }
    for p in &report.partial {
        println!(
            "partial {:.1} A: fraction {:.3}, force {:.1} N",
            p.amplitude_a, p.switched_fraction, -p.force.eggshell_n
        );
    }
    println!(
        "removed: ON {:.1} N, OFF {:.1} N",
        -report.force_removed[0].eggshell_n, -report.force_removed[1].eggshell_n
    );
    println!("{}", report.eddy_current_note);
    Ok(())
}
