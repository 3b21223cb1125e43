//! Meshing speed on the peer benchmark geometry (`meshes/peer_bench.toml`, the geometry of
//! shared/peers) and on the switched reluctance machine (`meshes/srm_full.toml`), each at
//! about 100k, 400k and 1.6M triangles.
//!
//! Sizes are scaled from the case file: every length size (global, per region, per curve,
//! per point) is multiplied by `s` and the automatic gap refinement by `1/s`, with `s`
//! calibrated once (untimed) so that the triangle count lands near the target. Before each
//! group the bench prints the triangle count, the minimum angle and the triangles per second
//! of one untimed run; criterion's throughput line gives triangles per second over the
//! samples.
//!
//! Run: `cargo bench --bench mesh` (about 3 minutes on 2 cores). Single thread:
//! `RAYON_NUM_THREADS=1 cargo bench --bench mesh`.

use std::path::PathBuf;
use std::time::{Duration, Instant};

use coercive::case::Case;
use coercive::mesh::Geometry;
use criterion::{criterion_group, criterion_main, BenchmarkId, Criterion, Throughput};

/// The case's geometry with every size multiplied by `s` (the gap refinement by `1/s`).
fn scaled(g: &Geometry, s: f64) -> Geometry {
    let mut g = g.clone();
    let st = &mut g.settings;
    st.max_size = st.max_size.map(|h| h * s);
    st.elements_across_gap /= s;
    st.max_triangles = 20_000_000;
    for p in &mut g.points {
        p.size = p.size.map(|h| h * s);
    }
    for c in &mut g.curves {
        c.size = c.size.map(|h| h * s);
    }
    for r in &mut g.regions {
        r.size = r.size.map(|h| h * s);
    }
    g
}

fn load(file: &str) -> Geometry {
    let path = PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("meshes")
        .join(file);
    Case::from_file(&path)
        .and_then(|c| c.geometry())
        .unwrap_or_else(|e| panic!("{}: {e}", path.display()))
}

fn bench_geometry(c: &mut Criterion, name: &str, file: &str) {
    let base = load(file);
    let n0 = base.mesh().expect("the case meshes").triangles().len() as f64;
    let mut group = c.benchmark_group(format!("mesh/{name}"));
    group.sample_size(10);
    for (label, target) in [("100k", 1.0e5), ("400k", 4.0e5), ("1600k", 1.6e6)] {
        // Triangle count ~ 1/s^2; two correction steps absorb the fixed features and the
        // grading.
        let mut s = (n0 / target).sqrt();
        for _ in 0..2 {
            let n = scaled(&base, s).mesh().expect("meshes").triangles().len() as f64;
            s *= (n / target).sqrt();
        }
        let g = scaled(&base, s);
        let start = Instant::now();
        let (mesh, report) = g.mesh_with_report().expect("meshes");
        let secs = start.elapsed().as_secs_f64();
        let n = mesh.triangles().len();
        println!(
            "{name} {label}: {n} triangles, {} nodes, min angle {:.2} deg, max angle {:.2} deg, \
             {secs:.3} s, {:.0} triangles/s (size scale {s:.4})",
            report.nodes,
            report.min_angle_deg,
            report.max_angle_deg,
            n as f64 / secs
        );
        group.throughput(Throughput::Elements(n as u64));
        group.measurement_time(Duration::from_secs_f64((secs * 12.0).clamp(3.0, 60.0)));
        group.warm_up_time(Duration::from_secs_f64(secs.clamp(0.5, 3.0)));
        group.bench_with_input(BenchmarkId::from_parameter(label), &g, |b, g| {
            b.iter(|| g.mesh().expect("meshes"))
        });
    }
    group.finish();
}

fn mesh_benches(c: &mut Criterion) {
    bench_geometry(c, "peer", "peer_bench.toml");
    bench_geometry(c, "srm", "srm_full.toml");
}

criterion_group!(benches, mesh_benches);
criterion_main!(benches);
