//! The switching study of the switchable pad (`meshes/switchable_pad.toml`, P2) and its
//! kernel, one coil pulse solved as a load history (issue 8, "Targets").
//!
//! Timed:
//! - `pulse`: one full OFF pulse (0 A, -150 A per turn, 0 A: 21 load steps) from the
//!   as-magnetised state, on the pad at the 0.05 mm pulse gap (mesh and solver set-up outside).
//! - `hysteretic_step` and `single_valued_step`: the Newton solve of one load step with the
//!   magnets hysteretic (from the state a full OFF pulse left) and the same step with every
//!   hysteretic magnet replaced by a linear recoil magnet of the same remanence and recoil
//!   permeability (a single-valued law of the same slope); their Newton iterations are printed
//!   (target: hysteretic at most 1.5 times the single-valued count).
//! - `study` (with `COERCIVE_BENCH_STUDY=1` only, one timed run): the whole `[switching]`
//!   section, meshing included (target: under 60 s on 2 cores).
//!
//! Run: `cargo bench --bench switching` (about 2 minutes; 10 more with the study).

use std::hint::black_box;
use std::time::{Duration, Instant};

use coercive::case::Case;
use coercive::fem::{
    HistorySettings, LinearMagnet, MagnetState, Material, Model, NewtonSettings, Pulse, Solver,
};
use coercive::mesh::Placement;
use criterion::{criterion_group, criterion_main, Criterion};

fn pad() -> (Case, Model) {
    let case = Case::from_file(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/meshes/switchable_pad.toml"
    ))
    .expect("the pad case reads");
    let sw = case.switching().expect("a [switching] section").clone();
    let rigid = case.geometry().unwrap().prepare_rigid().unwrap();
    let mesh = rigid
        .mesh_at(&[(
            sw.moving_part.as_str(),
            Placement::translation(0.0, sw.drawn_gap_m - sw.pulse_gap_m),
        )])
        .unwrap();
    let model = coercive::solve::study_model(&case, mesh).unwrap();
    (case, model)
}

/// The model with every hysteretic magnet replaced by its linear recoil counterpart.
fn single_valued(model: &Model) -> Model {
    let mut b = model.to_builder();
    for (r, region) in model.mesh().regions().iter().enumerate() {
        if let Material::Hysteretic(m) = &model.materials()[r] {
            let saturated = coercive::fem::History::saturated(true);
            let (br, slope) = m.law.flux_density(&saturated, 0.0);
            b = b.replace_material(
                &region.name,
                Material::Magnet(LinearMagnet {
                    remanence: br,
                    recoil_permeability: slope / coercive::fem::MU_0,
                    perpendicular_permeability: m.perpendicular_permeability,
                    direction: m.direction,
                    knee_field: None,
                }),
            );
        }
    }
    b.build().unwrap()
}

fn benches(c: &mut Criterion) {
    let (case, model) = pad();
    let solver = Solver::new(&model).unwrap();
    let settings = HistorySettings::default();
    let start = MagnetState::initial(&model);
    let off = Pulse::single("coil", -150.0);
    let run = solver
        .solve_history(&model, &start, &off, &settings)
        .unwrap();
    eprintln!(
        "pulse: {} load steps, {} Newton iterations, {} unknowns",
        run.steps.len(),
        run.iterations(),
        solver.unknowns()
    );
    let mut group = c.benchmark_group("switching");
    group.sample_size(10);
    group.measurement_time(Duration::from_secs(30));
    group.bench_function("pulse", |b| {
        b.iter(|| {
            black_box(
                solver
                    .solve_history(&model, &start, &off, &settings)
                    .unwrap(),
            )
        })
    });
    // One load step at -60 A per turn from the OFF state, hysteretic and single-valued.
    let step = model.with_winding_current("coil", -60.0).unwrap();
    let linear = single_valued(&step);
    let newton = NewtonSettings::default();
    let h = solver
        .solve_with_state(&step, &run.state, None, &newton)
        .unwrap();
    let l = Solver::new(&linear)
        .unwrap()
        .solve(&linear, &newton)
        .unwrap();
    eprintln!(
        "one step: hysteretic {} Newton iterations, single-valued law of the same slope {} \
         (ratio {:.2})",
        h.newton_report().iterations,
        l.newton_report().iterations,
        h.newton_report().iterations as f64 / l.newton_report().iterations as f64
    );
    group.bench_function("hysteretic_step", |b| {
        b.iter(|| {
            black_box(
                solver
                    .solve_with_state(&step, &run.state, None, &newton)
                    .unwrap(),
            )
        })
    });
    let linear_solver = Solver::new(&linear).unwrap();
    group.bench_function("single_valued_step", |b| {
        b.iter(|| black_box(linear_solver.solve(&linear, &newton).unwrap()))
    });
    group.finish();
    if std::env::var("COERCIVE_BENCH_STUDY").is_ok() {
        let t0 = Instant::now();
        let report = coercive::switching::run_case(&case).unwrap();
        let worst = report
            .force_on
            .iter()
            .chain(&report.force_off)
            .map(|p| p.spread)
            .fold(0.0_f64, f64::max);
        eprintln!(
            "study: {:.1} s, largest force spread {:.2} %",
            t0.elapsed().as_secs_f64(),
            100.0 * worst
        );
    }
}

criterion_group!(switching, benches);
criterion_main!(switching);
