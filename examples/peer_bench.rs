//! Runs one size of the peer benchmark problem (shared/peers) and prints phase timings, so
//! that peak memory can be measured around it (`/usr/bin/time -v`).
//!
//! Usage: `peer_bench TRIANGLES ORDER CASE`, e.g. `peer_bench 100000 1 linear` or
//! `peer_bench 400000 1 nonlinear`. Set RAYON_NUM_THREADS=1 for single-thread figures.

#[path = "../benches/common/peer.rs"]
mod peer;

use std::sync::Arc;
use std::time::Instant;

use coercive::fem::{ElementOrder, NewtonSettings, Solver};

fn main() {
    let args: Vec<String> = std::env::args().collect();
    let triangles: usize = args.get(1).and_then(|s| s.parse().ok()).unwrap_or(100_000);
    let order = match args.get(2).map(String::as_str) {
        Some("2") => ElementOrder::P2,
        _ => ElementOrder::P1,
    };
    let nonlinear = args.get(3).map(String::as_str) == Some("nonlinear");

    let t0 = Instant::now();
    let mesh = Arc::new(peer::mesh(peer::size_for(triangles)));
    let t_mesh = t0.elapsed().as_secs_f64();
    let (model, j) = if nonlinear {
        (peer::nonlinear_model(&mesh, order), peer::J_NONLINEAR)
    } else {
        (peer::linear_model(&mesh, order), peer::J_LINEAR)
    };
    let t1 = Instant::now();
    let solver = Solver::new(&model).expect("solver set-up");
    let t_setup = t1.elapsed().as_secs_f64();
    let t2 = Instant::now();
    let sol = solver
        .solve(&model, &NewtonSettings::default())
        .expect("solution");
    let t_solve = t2.elapsed().as_secs_f64();
    let r = sol.newton_report();
    println!(
        "case {} P{} triangles {} unknowns {} matrix entries {} factor entries {}",
        if nonlinear { "nonlinear" } else { "linear" },
        if order == ElementOrder::P1 { 1 } else { 2 },
        mesh.triangles().len(),
        solver.unknowns(),
        solver.matrix_entries(),
        solver.factor_entries().unwrap_or(0),
    );
    println!(
        "mesh {t_mesh:.3} s; set-up (layout, pattern, symbolic) {t_setup:.3} s; \
         assembly {:.3} s; numeric factorisation {:.3} s; triangular solves {:.3} s; \
         solve total {t_solve:.3} s; set-up + solve {:.3} s",
        r.times.assembly_s,
        r.times.factorisation_s,
        r.times.solve_s,
        t_setup + t_solve,
    );
    println!(
        "Newton iterations {}; final relative residual {:.2e}",
        r.iterations,
        r.residual_norms.last().copied().unwrap_or(f64::NAN)
    );
    println!(
        "stored energy {:.10} J/m; energy functional W {:.6} J/m; mean |B| in iron {:.4} T; \
         peak |B| in iron {:.4} T\n",
        sol.energy(),
        peer::energy_functional(&sol, j),
        peer::mean_iron_b(&sol),
        sol.peak_flux_density("iron").unwrap_or(f64::NAN),
    );
}
