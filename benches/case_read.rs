//! Reading and validating every case in meshes/: `Case::from_file` (the file read from disk,
//! parsed, every section checked, the geometry built in metres) followed by
//! `Case::geometry`. Meshing and solving are not included. Target: under 10 ms per case.
//!
//! The cases are found at run time (every `*.toml` in meshes/, in name order), so a new
//! case joins the benchmark by itself. Before the group the bench prints each case's size
//! and one untimed reading time; criterion's throughput line gives bytes per second.
//!
//! Run: `cargo bench --bench case_read` (under a minute).

use std::path::PathBuf;
use std::time::{Duration, Instant};

use coercive::case::Case;
use criterion::{criterion_group, criterion_main, BenchmarkId, Criterion, Throughput};

/// Every case file in meshes/, in name order.
fn cases() -> Vec<PathBuf> {
    let dir = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("meshes");
    let mut files: Vec<PathBuf> = std::fs::read_dir(&dir)
        .unwrap_or_else(|e| panic!("{}: {e}", dir.display()))
        .map(|e| e.expect("a directory entry").path())
        .filter(|p| p.extension().is_some_and(|x| x == "toml"))
        .collect();
    files.sort();
    files
}

/// Reads, validates and builds the geometry of one case; returns its region count so the
/// work cannot be optimised away.
fn read(path: &PathBuf) -> usize {
    let case = Case::from_file(path).unwrap_or_else(|e| panic!("{}: {e}", path.display()));
    let geometry = case
        .geometry()
        .unwrap_or_else(|e| panic!("{}: {e}", path.display()));
    geometry.regions.len() + case.boundaries().len()
}

fn bench_case_read(c: &mut Criterion) {
    let mut group = c.benchmark_group("case_read");
    group
        .sample_size(50)
        .warm_up_time(Duration::from_millis(500))
        .measurement_time(Duration::from_secs(2));
    for path in cases() {
        let name = path
            .file_stem()
            .and_then(|s| s.to_str())
            .expect("a UTF-8 file name")
            .to_string();
        let bytes = std::fs::metadata(&path).expect("the case file").len();
        let start = Instant::now();
        let items = read(&path);
        println!(
            "{name}: {bytes} bytes, {} lines, {items} regions and boundaries, one untimed read {:.3} ms",
            std::fs::read_to_string(&path).expect("the case file").lines().count(),
            start.elapsed().as_secs_f64() * 1e3
        );
        group.throughput(Throughput::Bytes(bytes));
        group.bench_with_input(BenchmarkId::from_parameter(&name), &path, |b, p| {
            b.iter(|| read(std::hint::black_box(p)))
        });
    }
    group.finish();
}

criterion_group!(benches, bench_case_read);
criterion_main!(benches);
