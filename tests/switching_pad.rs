//! The switching study on the switchable pad of `meshes/switchable_pad.toml` (a scenario of
//! our own), on a coarser mesh so that the whole study runs in seconds: trend checks of the
//! design rules, not exact oracles.

use coercive::case::Case;
use coercive::fem::{HistorySettings, MagnetState, Pulse, Solver};
use coercive::mesh::Placement;
use coercive::post::FieldProbe;
use coercive::switching::{holding_force_n, run_case};

/// The pad case with a coarser mesh, first-order elements, fewer gaps and a looser
/// threshold tolerance (every setting through the case file, the one reader).
fn coarse_pad() -> Case {
    let text = include_str!("../meshes/switchable_pad.toml")
        .replace("element_order = 2", "element_order = 1")
        .replace("max_size = 1.5", "max_size = 3.0")
        .replace("max_size = 2.0", "max_size = 4.0")
        .replace(
            "gaps = [0.05, 0.1, 0.2, 0.3, 0.5, 0.75, 1.0, 1.25, 1.5, 2.0, 2.5, 3.0]",
            "gaps = [0.05, 1.0, 3.0]",
        )
        .replace("amplitude_tolerance = 0.01", "amplitude_tolerance = 0.04")
        .replace("partial_amplitudes = 8", "partial_amplitudes = 6");
    Case::from_toml_str(&text).unwrap()
}

/// Bound on the energy balance's residual relative to the supplied energy at the case's
/// load steps (measured on this coarse pad: 6.2e-5 ON to OFF, 6.0e-5 OFF to ON).
const RESIDUAL_BOUND: f64 = 1e-3;

fn polarisation(solution: &coercive::fem::Solution, region: &str) -> f64 {
    FieldProbe::new(solution)
        .magnet_working_points()
        .rows
        .into_iter()
        .find(|r| r.region == region)
        .unwrap()
        .mean_polarisation_t
}

#[test]
fn the_pad_switches_off_and_on_and_holds_only_when_on() {
    let case = coarse_pad();
    let report = run_case(&case).unwrap();
    eprintln!("{report}");
    let on = holding_force_n(&report.force_on[0]);
    let off = holding_force_n(&report.force_off[0]);
    // ON holds far more than OFF (common practice: OFF leaves a few percent of the ON force).
    assert!(on > 10.0 * off.abs(), "ON {on} N, OFF {off} N");
    assert!(on > 100.0);
    // Both ways need a pulse; OFF reverses the AlNiCo, ON restores it.
    let (t_off, t_on) = (&report.on_to_off, &report.off_to_on);
    assert!(t_off.ampere_turns < 0.0 && t_on.ampere_turns > 0.0);
    assert!(t_off.recommended.switched_polarisation_t < 0.0);
    assert!(t_on.recommended.switched_polarisation_t > 0.0);
    // The guarded NdFeB stays above its knee for the recommended pulses, and keeps its
    // magnetisation within 1 % (common practice: a switching pulse changes the NdFeB's
    // magnetisation by less than 1 %).
    for t in [t_off, t_on] {
        let r = &t.recommended;
        assert!(r.guarded_knee_margin > 0.0, "{}", r.guarded_knee_margin);
        assert_eq!(r.guarded_beyond_knee_fraction, 0.0);
        assert!(r.supplied_energy_j > 0.0);
        // Energy balance per pulse: supplied = stored-energy change + hysteresis loss; the
        // residual is the trapezoidal rule's error over the load steps (see
        // coercive_fem::EnergyBalance). A switching pulse reverses the AlNiCo: it must lose
        // energy, and the split must close.
        eprintln!(
            "{}: supplied {:.4} J = stored change {:+.4} J + loss {:.4} J + residual {:+.2e} J",
            t.direction,
            r.supplied_energy_j,
            r.stored_energy_change_j,
            r.hysteresis_loss_j,
            r.energy_balance_residual_j
        );
        assert!(r.hysteresis_loss_j > 0.0);
        let sum = r.stored_energy_change_j + r.hysteresis_loss_j + r.energy_balance_residual_j;
        assert!((sum - r.supplied_energy_j).abs() < 1e-12 * r.supplied_energy_j);
        assert!(
            r.energy_balance_residual_j.abs() < RESIDUAL_BOUND * r.supplied_energy_j,
            "residual {} J of {} J supplied",
            r.energy_balance_residual_j,
            r.supplied_energy_j
        );
    }
    let n42 = coercive::fem::datasheet("ndfeb-n42").unwrap().remanence;
    let change =
        (t_off.recommended.guarded_polarisation_t - t_on.recommended.guarded_polarisation_t).abs();
    assert!(
        change < 0.01 * n42,
        "NdFeB polarisation changed by {change} T"
    );
    // A pulse a quarter of the threshold leaves the state nearly unchanged; the partial
    // curve falls monotonically from ON towards OFF.
    let first = &report.partial[0];
    assert!(
        (first.amplitude_a.abs() - 0.25 * t_off.amplitude_a.abs()).abs() < 1e-9,
        "{}",
        first.amplitude_a
    );
    assert!(
        first.switched_fraction < 0.02,
        "{}",
        first.switched_fraction
    );
    let forces: Vec<f64> = report
        .partial
        .iter()
        .map(|p| holding_force_n(&p.force))
        .collect();
    assert!(
        forces.windows(2).all(|w| w[1] <= w[0] * 1.001),
        "{forces:?}"
    );
    // The force spread stays small at every gap.
    for p in report.force_on.iter().chain(&report.force_off) {
        assert!(!p.warning, "{}: spread {}", p.point.label, p.spread);
    }
    assert!(report.eddy_current_note.contains("skin depth"));
}

#[test]
fn an_off_on_off_cycle_returns_to_the_same_off_state() {
    let case = coarse_pad();
    let sw = case.switching().unwrap();
    let rigid = case.geometry().unwrap().prepare_rigid().unwrap();
    let shift = sw.drawn_gap_m - sw.pulse_gap_m;
    let mesh = rigid
        .mesh_at(&[("pad", Placement::translation(0.0, shift))])
        .unwrap();
    let model = coercive::solve::study_model(&case, mesh).unwrap();
    let solver = Solver::new(&model).unwrap();
    let settings = HistorySettings::default();
    let off = Pulse::single("coil", -60.0);
    let on = Pulse::single("coil", 60.0);
    let start = MagnetState::initial(&model);
    let a = solver
        .solve_history(&model, &start, &off, &settings)
        .unwrap();
    let b = solver
        .solve_history(&model, &a.state, &on, &settings)
        .unwrap();
    let c = solver
        .solve_history(&model, &b.state, &off, &settings)
        .unwrap();
    let j = |run: &coercive::fem::HistoryRun| {
        polarisation(run.last_solution().unwrap(), "magnet_alnico")
    };
    let (ja, jb, jc) = (j(&a), j(&b), j(&c));
    eprintln!("AlNiCo J: OFF {ja:.5} T, ON {jb:.5} T, OFF again {jc:.5} T");
    assert!(ja < 0.0 && jb > 0.0);
    // Wiping-out (Mayergoyz 1991): the second OFF pulse of the same amplitude erases the ON
    // excursion, so the state returns to where the first OFF pulse left it.
    assert!((ja - jc).abs() < 1e-6, "{ja} vs {jc}");
    let pa = a.last_solution().unwrap().potential();
    let pc = c.last_solution().unwrap().potential();
    let scale = pa.iter().fold(0.0_f64, |m, x| m.max(x.abs()));
    let diff = pa
        .iter()
        .zip(pc)
        .fold(0.0_f64, |m, (x, y)| m.max((x - y).abs()));
    assert!(diff < 1e-6 * scale, "{diff} vs {scale}");
}

#[test]
fn a_linear_alnico_past_its_knee_is_reported_with_its_volume_fraction() {
    // The pad with both magnets as linear recoil presets and the plate 3 mm away: the AlNiCo
    // works far down its demagnetisation curve (its HcB is about 50 kA/m), where the linear
    // model overstates its flux; the summary must say so, with the fraction of its volume.
    let text = include_str!("../meshes/switchable_pad.toml")
        .replace("hysteresis = \"alnico-5\"", "preset = \"alnico-5\"")
        .replace("hysteresis = \"ndfeb-n42\"", "preset = \"ndfeb-n42\"")
        .replace("min = [-35, 30.5]", "min = [-35, 33.0]")
        .replace("max = [35, 40.5]", "max = [35, 43.0]")
        .replace("element_order = 2", "element_order = 1");
    let text = &text[..text.find("[switching]").unwrap()];
    let case = Case::from_toml_str(text).unwrap();
    let geometry = case.geometry().unwrap();
    let (mesh, _) = case.mesh_with_report(&geometry).unwrap();
    let model = coercive::solve::model_from_case(&case, mesh).unwrap();
    let (solution, summary) = coercive::solve::solve_and_summarise(&model).unwrap();
    eprintln!("{summary}");
    let alnico = summary
        .magnet_warnings
        .iter()
        .find(|w| w.contains("magnet_alnico"))
        .expect("a warning for the AlNiCo");
    assert!(alnico.starts_with("WARNING") && alnico.contains("% of its volume"));
    assert!(
        !summary
            .magnet_warnings
            .iter()
            .any(|w| w.contains("magnet_ndfeb")),
        "the NdFeB stays above its knee"
    );
    let row = FieldProbe::new(&solution)
        .magnet_working_points()
        .rows
        .into_iter()
        .find(|r| r.region == "magnet_alnico")
        .unwrap();
    // The knee of AlNiCo 5 from its fitted loop (J = 0.9 Br), between HcB/2 and HcB.
    let knee = row.knee_field_a_per_m.unwrap();
    assert!(knee > 25e3 && knee < 50.3e3, "{knee}");
    assert!(
        row.beyond_knee_fraction > 0.5,
        "{}",
        row.beyond_knee_fraction
    );
    assert!(!row.hysteretic);
}

#[test]
fn a_magnet_state_carries_over_to_every_gap_of_the_moving_part() {
    // The pad is a moving part: its triangles (both magnets among them) keep their numbers
    // and shapes at every position, so the state a pulse leaves at one gap fits the models at
    // all the others, while the air around is re-meshed.
    let case = coarse_pad();
    let rigid = case.geometry().unwrap().prepare_rigid().unwrap();
    let model_at = |shift_mm: f64| {
        let mesh = rigid
            .mesh_at(&[("pad", Placement::translation(0.0, shift_mm * 1e-3))])
            .unwrap();
        coercive::solve::study_model(&case, mesh).unwrap()
    };
    let near = model_at(0.45); // 0.05 mm gap
    let far = model_at(-2.5); // 3 mm gap
    assert_ne!(
        near.mesh().triangles().len(),
        far.mesh().triangles().len(),
        "the air is re-meshed"
    );
    let solver = Solver::new(&near).unwrap();
    let run = solver
        .solve_history(
            &near,
            &MagnetState::initial(&near),
            &Pulse::single("coil", -60.0),
            &HistorySettings::default(),
        )
        .unwrap();
    run.state.check(&far).unwrap();
    let far_solution = Solver::new(&far)
        .unwrap()
        .solve_with_state(&far, &run.state, None, &Default::default())
        .unwrap();
    // The AlNiCo stays reversed at the larger gap: the solve uses the state, not the initial
    // magnetisation (from which the open circuit at 3 mm demagnetises it differently).
    let with_state = polarisation(&far_solution, "magnet_alnico");
    let from_initial = polarisation(
        &Solver::new(&far)
            .unwrap()
            .solve(&far, &Default::default())
            .unwrap(),
        "magnet_alnico",
    );
    eprintln!("AlNiCo J at 3 mm: {with_state:.4} T after the OFF pulse, {from_initial:.4} T as magnetised");
    assert!(with_state < -1.0, "{with_state}");
    assert!((with_state - from_initial).abs() > 0.1);
}

#[test]
fn a_sweep_over_several_states_equals_one_sweep_per_state() {
    // The multi-state sweep shares each point's meshes and warm-starts each state from the
    // previous one's field: the forces must not depend on that (Newton tolerance only).
    use coercive::post::force::Body;
    use coercive::study::{force_sweep_with_state, force_sweep_with_states, TranslationPoint};
    let case = coarse_pad();
    let rigid = case.geometry().unwrap().prepare_rigid().unwrap();
    let build = |mesh| coercive::solve::study_model(&case, mesh);
    let near = build(
        rigid
            .mesh_at(&[("pad", Placement::translation(0.0, 0.45e-3))])
            .unwrap(),
    )
    .unwrap();
    let magnetised = MagnetState::initial(&near);
    let off = Solver::new(&near)
        .unwrap()
        .solve_history(
            &near,
            &magnetised,
            &Pulse::single("coil", -60.0),
            &HistorySettings::default(),
        )
        .unwrap()
        .state;
    let sw = case.switching().unwrap();
    let pad: Vec<String> = case
        .geometry()
        .unwrap()
        .rigid_groups
        .iter()
        .find(|g| g.name == "pad")
        .unwrap()
        .regions
        .clone();
    let settings = coercive::solve::sweep_settings(
        "pad",
        sw.direction,
        Body::new(&sw.workpiece),
        Body::new(&pad),
        0.1,
        true,
    );
    let points: Vec<TranslationPoint> = [0.1e-3, 1.0e-3]
        .iter()
        .map(|&g| TranslationPoint {
            label: format!("gap {g}"),
            parameter: g,
            offset: [0.0, 0.5e-3 - g],
        })
        .collect();
    let both =
        force_sweep_with_states(&rigid, &points, &settings, &[&magnetised, &off], build).unwrap();
    for (k, state) in [&magnetised, &off].into_iter().enumerate() {
        let one = force_sweep_with_state(&rigid, &points, &settings, state, build).unwrap();
        for (a, b) in both[k].iter().zip(&one) {
            for (x, y) in [(a.eggshell_n, b.eggshell_n), (a.coenergy_n, b.coenergy_n)] {
                assert!(
                    (x - y).abs() <= 1e-6 * y.abs().max(1e-3),
                    "state {k}, {}: {x} vs {y}",
                    a.point.label
                );
            }
        }
    }
    // The two states differ: the OFF state holds far less.
    assert!(both[1][0].eggshell_n.abs() < 0.5 * both[0][0].eggshell_n.abs());
}
