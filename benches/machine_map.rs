//! The target benchmark of the machine maps (issue 9, "Targets"): the psi(theta, i) and
//! T(theta, i) maps of one phase of the 6/4 switched reluctance machine with stator-pole
//! magnets (`meshes/srm_full.toml`, P2), meshed at about 33 000 triangles (coarser than
//! the case: `max_size` 4 mm, growth 0.3, 0.35 elements across the 0.15 mm gaps beside the
//! air-gap band), over 31 angles (one stroke, 0 to 45 degrees at 1.5 degree steps) and 12
//! currents of each sign (1 to 12 A) plus the cogging column: 31 x 25 = 775 nonlinear
//! solves (744 with current). Each angle is meshed once (only the band and the stator's air
//! are meshed again), its symbolic factorisation is shared by its 25 currents, and each
//! current is warm-started from its neighbour; angles run in parallel.
//!
//! Timed once (the whole map, meshing included), with the time per solve, the process's
//! CPU time (the load-independent figure on a shared machine) and the Newton iterations
//! printed; then `one_point` (criterion, 10 samples): one map point warm-started
//! from its neighbouring current on a prepared mesh and solver.
//!
//! Run: `cargo bench --bench machine_map` (target: the map in under 3 minutes on 2 cores).

use std::hint::black_box;
use std::time::{Duration, Instant};

use coercive::case::Case;
use coercive::fem::{NewtonSettings, Solver};
use coercive::post::force::{AirGap, Body, ForceSettings};
use coercive::solve::study_model;
use coercive::study::{machine_map, TorqueSweepSettings};
use criterion::{criterion_group, criterion_main, Criterion};

fn case() -> Case {
    let text =
        std::fs::read_to_string(concat!(env!("CARGO_MANIFEST_DIR"), "/meshes/srm_full.toml"))
            .expect("the machine case reads")
            .replace("elements_across_gap = 1 ", "elements_across_gap = 0.35 ")
            .replace("max_size = 3.0", "max_size = 4.0")
            .replace("growth = 0.2", "growth = 0.3")
            .replace("current = 5.0", "current = 0.0");
    Case::from_toml_str(&text).expect("the modified case reads")
}

/// CPU time of this process so far (s, user + system), from /proc/self/stat on Linux
/// (`None` elsewhere): on a shared machine the wall time follows the other users' load, the
/// CPU time does not.
fn cpu_seconds() -> Option<f64> {
    let stat = std::fs::read_to_string("/proc/self/stat").ok()?;
    // Fields after the parenthesised command name; utime and stime are fields 14 and 15.
    let rest = &stat[stat.rfind(')')? + 2..];
    let fields: Vec<&str> = rest.split_whitespace().collect();
    let ticks: f64 = fields.get(11)?.parse::<f64>().ok()? + fields.get(12)?.parse::<f64>().ok()?;
    // The kernel's USER_HZ is 100 on every mainstream Linux configuration.
    Some(ticks / 100.0)
}

fn benches(c: &mut Criterion) {
    let case = case();
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
        coenergy_step_rad: None,
        windings: Vec::new(),
        force: ForceSettings::default(),
    };
    let angles: Vec<f64> = (0..31).map(|k| (1.5 * f64::from(k)).to_radians()).collect();
    let currents: Vec<f64> = (1..=12)
        .flat_map(|k| [f64::from(k), -f64::from(k)])
        .collect();
    let drawn = study_model(&case, rigid.mesh_at(&[]).unwrap()).unwrap();
    let cpu0 = cpu_seconds();
    let t0 = Instant::now();
    let map = machine_map(&rigid, &angles, &currents, "phase_a", &settings, |m| {
        study_model(&case, m)
    })
    .unwrap();
    let seconds = t0.elapsed().as_secs_f64();
    let cpu = cpu_seconds().zip(cpu0).map(|(b, a)| b - a);
    let solves = angles.len() * map.currents_a.len();
    let iterations: usize = map.newton_iterations.iter().flatten().sum();
    let worst = map.newton_iterations.iter().flatten().max().unwrap();
    let r = map.reciprocity();
    eprintln!(
        "machine map: {} triangles, {} unknowns; {solves} solves ({} with current) in {seconds:.1} s \
         on {} threads: {:.3} s per solve (wall), {:.2} Newton iterations per solve (at most \
         {worst}); reciprocity {:.3} %",
        drawn.mesh().triangles().len(),
        Solver::new(&drawn).unwrap().unknowns(),
        angles.len() * currents.len(),
        rayon::current_num_threads(),
        seconds / solves as f64,
        iterations as f64 / solves as f64,
        100.0 * r.relative()
    );
    if let Some(cpu) = cpu {
        eprintln!(
            "machine map: {cpu:.1} s of CPU time ({:.3} s per solve): {:.1} s of wall time on 2 \
             otherwise idle cores",
            cpu / solves as f64,
            cpu / 2.0
        );
    }

    // One point: the aligned rotor (45 degrees) at 6 A, warm-started from 5 A.
    let pl = coercive::mesh::Placement::rotation(
        45f64.to_radians(),
        coercive::mesh::Point2::new(0.0, 0.0),
    );
    let model = study_model(&case, rigid.mesh_at(&[("rotor", pl)]).unwrap()).unwrap();
    let solver = Solver::new(&model).unwrap();
    let newton = NewtonSettings::default();
    let at5 = model.with_winding_current("phase_a", 5.0).unwrap();
    let at6 = model.with_winding_current("phase_a", 6.0).unwrap();
    let start = solver.solve(&at5, &newton).unwrap();
    let mut group = c.benchmark_group("machine_map");
    group.sample_size(10);
    group.measurement_time(Duration::from_secs(20));
    group.bench_function("one_point", |b| {
        b.iter(|| black_box(solver.solve_from(&at6, &start, &newton).unwrap()))
    });
    group.finish();
}

criterion_group!(machine_map_bench, benches);
criterion_main!(machine_map_bench);
