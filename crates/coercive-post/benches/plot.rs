//! Time of one field map (|B| colours, flux lines, outlines) at about 0.1M and 1M triangles.
//!
//! Run: `cargo bench -p coercive-post --bench plot`. The field is analytic (two antiparallel
//! line currents) on a structured rectangle; the picture work does not depend on where the
//! numbers came from.

use criterion::{criterion_group, criterion_main, BenchmarkId, Criterion};

use coercive_mesh::structured::rectangle;
use coercive_post::plot::{field_map_svg, FieldMapOptions};

fn field_map(c: &mut Criterion) {
    let mut group = c.benchmark_group("field_map_svg");
    group.sample_size(10);
    for cells in [274usize, 866] {
        let mesh = rectangle(-0.03, -0.02, 0.03, 0.02, cells, cells * 2 / 3, "air").unwrap();
        let a: Vec<f64> = mesh
            .vertices()
            .iter()
            .map(|p| {
                let r1 = ((p.x + 0.01).powi(2) + p.y * p.y).sqrt().max(5e-4);
                let r2 = ((p.x - 0.01).powi(2) + p.y * p.y).sqrt().max(5e-4);
                2e-4 * (r2 / r1).ln()
            })
            .collect();
        let b: Vec<f64> = mesh
            .triangles()
            .iter()
            .map(|t| {
                let p = t.map(|v| mesh.vertex(v));
                let (x, y) = (
                    (p[0].x + p[1].x + p[2].x) / 3.0,
                    (p[0].y + p[1].y + p[2].y) / 3.0,
                );
                2e-4 * (1.0 / (x + 0.01).hypot(y).max(5e-4) + 1.0 / (x - 0.01).hypot(y).max(5e-4))
            })
            .collect();
        let options = FieldMapOptions::default();
        group.bench_with_input(
            BenchmarkId::from_parameter(format!("{} triangles", mesh.triangles().len())),
            &(),
            |bench, _| bench.iter(|| field_map_svg(&mesh, &a, &b, &options).unwrap().len()),
        );
    }
    group.finish();
}

criterion_group!(benches, field_map);
criterion_main!(benches);
