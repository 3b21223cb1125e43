//! Solver benchmarks on the peer problem of `shared/peers` (air box, iron square with a hole,
//! two coil sides; linear and saturated nonlinear iron), P1 and P2.
//!
//! Per configuration: `setup` (node layout, sparsity pattern and symbolic Cholesky analysis
//! with its fill-reducing ordering, done once per mesh) and `solve` (assembly, numeric
//! factorisation, triangular solves and the post-processing of B, H and energies; for the
//! nonlinear case the whole Newton iteration). The solver's own phase timers (assembly,
//! numeric factorisation, triangular solves) and the Newton iteration count are averaged over
//! the `solve` runs and printed to stderr.
//!
//! Sizes: `COERCIVE_BENCH_SIZES` (comma-separated triangle counts; default
//! `100000,400000`; add `1600000` for the largest size). Single-thread figures comparable
//! with the peers: `RAYON_NUM_THREADS=1 cargo bench --bench solve`.

#[path = "common/peer.rs"]
mod peer;

use std::sync::Arc;
use std::time::{Duration, Instant};

use coercive::fem::{ElementOrder, NewtonSettings, Solver};
use criterion::{criterion_group, criterion_main, BenchmarkId, Criterion, SamplingMode};

fn sizes() -> Vec<usize> {
    std::env::var("COERCIVE_BENCH_SIZES")
        .ok()
        .map(|s| s.split(',').filter_map(|x| x.trim().parse().ok()).collect())
        .filter(|v: &Vec<usize>| !v.is_empty())
        .unwrap_or_else(|| vec![100_000, 400_000])
}

fn bench_peer(c: &mut Criterion) {
    let settings = NewtonSettings::default();
    for n in sizes() {
        let mesh = Arc::new(peer::mesh(peer::size_for(n)));
        let label = format!("{}k", n / 1000);
        for (case, order) in [
            ("linear", ElementOrder::P1),
            ("linear", ElementOrder::P2),
            ("nonlinear", ElementOrder::P1),
            ("nonlinear", ElementOrder::P2),
        ] {
            let model = if case == "linear" {
                peer::linear_model(&mesh, order)
            } else {
                peer::nonlinear_model(&mesh, order)
            };
            let name = format!(
                "peer_{case}_P{}",
                if order == ElementOrder::P1 { 1 } else { 2 }
            );
            let mut group = c.benchmark_group(&name);
            group.sample_size(10);
            group.sampling_mode(SamplingMode::Flat);
            group.warm_up_time(Duration::from_millis(500));
            group.measurement_time(Duration::from_secs(match n {
                0..=150_000 => 10,
                150_001..=500_000 => 20,
                _ => 60,
            }));
            group.bench_function(BenchmarkId::new("setup", &label), |b| {
                b.iter(|| Solver::new(&model).expect("solver set-up"))
            });
            let solver = Solver::new(&model).expect("solver set-up");
            let mut phases = [0.0f64; 3];
            let mut runs = 0usize;
            let mut iterations = 0usize;
            group.bench_function(BenchmarkId::new("solve", &label), |b| {
                b.iter_custom(|iters| {
                    let mut total = Duration::ZERO;
                    for _ in 0..iters {
                        let t = Instant::now();
                        let sol = solver.solve(&model, &settings).expect("solution");
                        total += t.elapsed();
                        let r = sol.newton_report();
                        phases[0] += r.times.assembly_s;
                        phases[1] += r.times.factorisation_s;
                        phases[2] += r.times.solve_s;
                        iterations += r.iterations;
                        runs += 1;
                    }
                    total
                })
            });
            group.finish();
            let k = runs.max(1) as f64;
            eprintln!(
                "{name}/{label}: {} triangles, {} unknowns; mean over {runs} solves: assembly \
                 {:.3} s, numeric factorisation {:.3} s, triangular solves {:.3} s, Newton \
                 iterations {:.1}",
                mesh.triangles().len(),
                solver.unknowns(),
                phases[0] / k,
                phases[1] / k,
                phases[2] / k,
                iterations as f64 / k
            );
        }
    }
}

criterion_group!(benches, bench_peer);
criterion_main!(benches);
