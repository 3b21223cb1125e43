//! Post-processing of a large solution against the solve itself (issue 4, "Speed").
//!
//! The model: a holding magnet in a 0.2 m x 0.2 m air box (A = 0 on its sides), planar, 50 mm
//! deep, first-order (P1) elements, about 1M triangles (uniform size from the peer mesh
//! calibration of `common/peer.rs`). Two linear steel poles (mu_r = 1000) clamp a linear
//! NdFeB-class magnet (B_r = 1.2 T, mu_rec = 1.05, magnetised along +x); a steel plate
//! (mu_r = 1000) sits 2 mm above the pole faces; a two-sided coil (200 turns, 3 A) encloses
//! the poles. Linear materials make the solve one exact step: the worst case for the ratio
//! post / solve (a nonlinear solve takes several Newton steps, the post-processing the same).
//!
//! The mesh, the model and one solution are built once, outside the timed loops. Timed:
//! - `solve`: `Solver::new` (pattern, symbolic analysis) then `Solver::solve` (assembly,
//!   numeric factorisation, triangular solves, B and H at quadrature points, energies); the
//!   time of `Solver::solve` alone (what every further solve on the mesh costs) is printed
//!   as well.
//! - `bundle`: everything below in sequence, from the solution alone.
//! - each piece: point locator build (`FieldProbe::new`); 10k point queries; a 1k-sample path
//!   across the gap; region averages; magnet working points; flux linkage of the coil; the
//!   energy table; the force on the plate (`force_on`: eggshell 2 layers, eggshell 1 layer,
//!   mid-line stress); the flux map (|B| per triangle and `field_map_svg` with 40 flux lines).
//!
//! Medians of each benchmark's own timings and the ratios post / solve are printed to
//! stderr. Size: `COERCIVE_POST_BENCH_TRIANGLES` (default 1000000).
//!
//! Run: `cargo bench --bench post` (about 2-3 minutes on 2 shared cores).

#[path = "common/peer.rs"]
mod peer;

use std::hint::black_box;
use std::sync::Arc;
use std::time::{Duration, Instant};

use coercive::fem::{
    Formulation, LinearMagnet, MagnetDirection, Material, Model, NewtonSettings, Sense, Solution,
    Solver, Winding,
};
use coercive::mesh::{Geometry, Mesh, MeshSettings, Point2, TriangleId};
use coercive::post::force::{force_on, Body, ForceSettings};
use coercive::post::plot::{field_map_svg, FieldMapOptions};
use coercive::post::{flux_linkage, EnergyTable, FieldProbe};
use criterion::measurement::WallTime;
use criterion::{criterion_group, criterion_main, BenchmarkGroup, Criterion, SamplingMode};

/// Number of point queries in the bundle.
const POINTS: usize = 10_000;
/// Samples on the path across the gap.
const PATH_SAMPLES: usize = 1_000;

fn target_triangles() -> usize {
    std::env::var("COERCIVE_POST_BENCH_TRIANGLES")
        .ok()
        .and_then(|s| s.trim().parse().ok())
        .unwrap_or(1_000_000)
}

/// The holding-magnet geometry meshed with uniform size `h` (m).
fn mesh(h: f64) -> Mesh {
    let mut g = Geometry::new();
    for c in g.add_rectangle(Point2::new(-0.1, -0.1), Point2::new(0.1, 0.1)) {
        g.name_curve(c, "outer");
    }
    // Poles and magnet share whole sides (one interface curve each).
    g.add_rectangle(Point2::new(-0.03, -0.03), Point2::new(-0.01, 0.01));
    g.add_rectangle(Point2::new(-0.01, -0.03), Point2::new(0.01, 0.01));
    g.add_rectangle(Point2::new(0.01, -0.03), Point2::new(0.03, 0.01));
    g.add_rectangle(Point2::new(-0.04, 0.012), Point2::new(0.04, 0.022));
    g.add_rectangle(Point2::new(-0.05, -0.03), Point2::new(-0.035, 0.0));
    g.add_rectangle(Point2::new(0.035, -0.03), Point2::new(0.05, 0.0));
    g.add_region("air", Point2::new(0.0, 0.08));
    g.add_region("pole_left", Point2::new(-0.02, 0.0));
    g.add_region("magnet", Point2::new(0.0, 0.0));
    g.add_region("pole_right", Point2::new(0.02, 0.0));
    g.add_region("plate", Point2::new(0.0, 0.017));
    g.add_region("coil_plus", Point2::new(-0.04, -0.01));
    g.add_region("coil_minus", Point2::new(0.04, -0.01));
    g.set_settings(MeshSettings {
        max_size: Some(h),
        min_angle_deg: 30.0,
        ..MeshSettings::default()
    });
    g.mesh().expect("the holding-magnet geometry meshes")
}

fn model(mesh: &Arc<Mesh>) -> Model {
    let steel = Material::Linear {
        relative_permeability: 1000.0,
    };
    Model::builder(mesh.clone(), Formulation::Planar { depth_m: 0.05 })
        .material("air", Material::vacuum())
        .material("pole_left", steel.clone())
        .material("pole_right", steel.clone())
        .material("plate", steel)
        .material(
            "magnet",
            Material::Magnet(LinearMagnet {
                knee_field: None,
                remanence: 1.2,
                recoil_permeability: 1.05,
                perpendicular_permeability: 1.05,
                direction: MagnetDirection::Fixed { angle: 0.0 },
            }),
        )
        .material("coil_plus", Material::vacuum())
        .material("coil_minus", Material::vacuum())
        .winding(
            Winding::new("coil", 200.0, 3.0)
                .side("coil_plus", Sense::Positive)
                .side("coil_minus", Sense::Negative),
        )
        .fixed_potential("outer", 0.0)
        .build()
        .expect("holding-magnet model")
}

/// Everything the post-processing bundle needs besides the solution.
struct Inputs {
    points: Vec<[f64; 2]>,
    path: Vec<[f64; 2]>,
    body: Body,
    force: ForceSettings,
    map: FieldMapOptions,
}

impl Inputs {
    fn new() -> Inputs {
        // Quasi-random points (additive recurrences) over the whole box.
        let points = (0..POINTS)
            .map(|k| {
                let f = |a: f64| -0.0999 + 0.1998 * ((k as f64 + 0.5) * a).fract();
                [f(0.618_033_988_749_895), f(0.414_213_562_373_095)]
            })
            .collect();
        Inputs {
            points,
            // Mid-gap between the pole faces (y = 10 mm) and the plate (y = 12 mm).
            path: vec![[-0.05, 0.011], [0.05, 0.011]],
            body: Body::new(&["plate"]),
            force: ForceSettings::default(),
            map: FieldMapOptions {
                title: "Holding magnet: |B| and flux lines".into(),
                flux_lines: 40,
                ..FieldMapOptions::default()
            },
        }
    }
}

/// |B| per triangle (mean over the quadrature points) and the SVG flux map.
fn flux_map(sol: &Solution, options: &FieldMapOptions) -> String {
    let mesh = sol.model().mesh();
    let nv = mesh.vertices().len();
    let cells: Vec<f64> = (0..mesh.triangles().len())
        .map(|t| {
            let b = sol.flux_density_at_quadrature(TriangleId(t as u32));
            b.iter().map(|b| b[0].hypot(b[1])).sum::<f64>() / b.len() as f64
        })
        .collect();
    field_map_svg(mesh, &sol.potential()[..nv], &cells, options).expect("flux map")
}

/// The whole post-processing bundle; returns a few numbers so nothing is optimised away.
fn bundle(sol: &Solution, inputs: &Inputs) -> [f64; 8] {
    let probe = FieldProbe::new(sol);
    let fields = probe.at_points(&inputs.points).expect("points in the box");
    let path = probe
        .sample_path(&inputs.path, PATH_SAMPLES)
        .expect("path in the box");
    let averages = probe.region_averages();
    let working = probe.magnet_working_points();
    let linkage = flux_linkage(sol, "coil").expect("coil linkage");
    let energy = EnergyTable::new(sol);
    let force = force_on(sol, &inputs.body, &inputs.force).expect("force on the plate");
    let svg = flux_map(sol, &inputs.map);
    [
        fields.iter().map(|f| f.flux_density_norm).sum::<f64>(),
        path.mean_flux_density_norm(),
        averages.rows[0].mean_flux_density_norm,
        working.rows[0].mean_flux_density_t,
        linkage.total_wb,
        energy.total.energy_j,
        force.force()[1],
        svg.len() as f64,
    ]
}

/// Benchmarks `f`, returning the median of its own timings (s) over every run criterion made.
fn measure<O>(
    group: &mut BenchmarkGroup<'_, WallTime>,
    name: &str,
    mut f: impl FnMut() -> O,
) -> f64 {
    let mut times = Vec::new();
    group.bench_function(name, |b| {
        b.iter_custom(|iters| {
            let mut total = Duration::ZERO;
            for _ in 0..iters {
                let t = Instant::now();
                black_box(f());
                let e = t.elapsed();
                total += e;
                times.push(e.as_secs_f64());
            }
            total
        })
    });
    median(&mut times)
}

fn median(v: &mut [f64]) -> f64 {
    if v.is_empty() {
        return f64::NAN;
    }
    v.sort_by(f64::total_cmp);
    let n = v.len();
    if n % 2 == 1 {
        v[n / 2]
    } else {
        0.5 * (v[n / 2 - 1] + v[n / 2])
    }
}

fn bench_post(c: &mut Criterion) {
    let t0 = Instant::now();
    let mesh = Arc::new(mesh(peer::size_for(target_triangles())));
    let mesh_s = t0.elapsed().as_secs_f64();
    let label = format!("{}k", (mesh.triangles().len() + 500) / 1000);
    let model = model(&mesh);
    let settings = NewtonSettings::default();
    let sol = Solver::new(&model)
        .and_then(|s| s.solve(&model, &settings))
        .expect("solution");
    let inputs = Inputs::new();
    eprintln!(
        "post bench model: {} triangles, {} vertices (P1), meshed in {mesh_s:.2} s",
        mesh.triangles().len(),
        mesh.vertices().len()
    );
    // The physical results once, as a sanity check of what is being timed.
    let out = bundle(&sol, &inputs);
    eprintln!(
        "  mean |B| on the mid-gap path {:.4} T, mean B along the magnet's axis {:.4} T, coil \
         flux linkage {:.4e} Wb, stored energy {:.4} J, force on the plate (y) {:.2} N/m, flux \
         map {:.0} bytes",
        out[1], out[3], out[4], out[5], out[6], out[7]
    );

    let mut group = c.benchmark_group(format!("post_{label}"));
    group.sample_size(10);
    group.sampling_mode(SamplingMode::Flat);
    group.warm_up_time(Duration::from_millis(300));
    group.measurement_time(Duration::from_secs(2));

    // The solve: set-up plus numeric solve per iteration; the numeric part recorded apart.
    let mut numeric = Vec::new();
    let mut total = Vec::new();
    group.bench_function("solve", |b| {
        b.iter_custom(|iters| {
            let mut sum = Duration::ZERO;
            for _ in 0..iters {
                let t = Instant::now();
                let solver = Solver::new(&model).expect("solver set-up");
                let t1 = Instant::now();
                black_box(solver.solve(&model, &settings).expect("solution"));
                let e = t.elapsed();
                numeric.push(t1.elapsed().as_secs_f64());
                total.push(e.as_secs_f64());
                sum += e;
            }
            sum
        })
    });
    let solve_total = median(&mut total);
    let solve_numeric = median(&mut numeric);

    let whole = measure(&mut group, "bundle", || bundle(&sol, &inputs));
    let probe = FieldProbe::new(&sol);
    let pieces = [
        (
            "locator",
            measure(&mut group, "locator", || FieldProbe::new(&sol)),
        ),
        (
            "points_10k",
            measure(&mut group, "points_10k", || {
                probe.at_points(&inputs.points).expect("points")
            }),
        ),
        (
            "path_1k",
            measure(&mut group, "path_1k", || {
                probe.sample_path(&inputs.path, PATH_SAMPLES).expect("path")
            }),
        ),
        (
            "region_averages",
            measure(&mut group, "region_averages", || probe.region_averages()),
        ),
        (
            "working_points",
            measure(&mut group, "working_points", || {
                probe.magnet_working_points()
            }),
        ),
        (
            "flux_linkage",
            measure(&mut group, "flux_linkage", || {
                flux_linkage(&sol, "coil").expect("linkage")
            }),
        ),
        (
            "energy_table",
            measure(&mut group, "energy_table", || EnergyTable::new(&sol)),
        ),
        (
            "force_on",
            measure(&mut group, "force_on", || {
                force_on(&sol, &inputs.body, &inputs.force).expect("force")
            }),
        ),
        (
            "flux_map",
            measure(&mut group, "flux_map", || flux_map(&sol, &inputs.map)),
        ),
    ];
    group.finish();

    eprintln!(
        "post_{label} medians: solve {solve_total:.3} s (set-up + numeric), numeric solve alone \
         {solve_numeric:.3} s; post bundle {whole:.3} s"
    );
    let sum: f64 = pieces.iter().map(|p| p.1).sum();
    for (name, s) in pieces {
        eprintln!("  {name:<16} {:>9.4} s", s);
    }
    eprintln!("  {:<16} {:>9.4} s", "sum of pieces", sum);
    eprintln!(
        "post / solve: {:.2} (against set-up + numeric solve), {:.2} (against the numeric solve \
         alone)",
        whole / solve_total,
        whole / solve_numeric
    );
}

criterion_group!(benches, bench_post);
criterion_main!(benches);
