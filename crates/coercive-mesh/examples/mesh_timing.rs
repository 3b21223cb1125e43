//! Meshes a plate with a round conductor and a narrow gap at a chosen size and prints the
//! triangle count, time and quality (a quick look, not a benchmark).
//!
//! `cargo run --release -p coercive-mesh --example mesh_timing -- 0.001`

use coercive_mesh::{Geometry, MeshSettings, Point2};

fn main() {
    let h: f64 = std::env::args()
        .nth(1)
        .and_then(|s| s.parse().ok())
        .unwrap_or(0.002);
    let mut g = Geometry::new();
    // 100 mm x 60 mm air box, a steel plate 0.1 mm below a magnet, a round wire.
    g.add_rectangle(Point2::new(0.0, 0.0), Point2::new(0.1, 0.06));
    g.add_rectangle(Point2::new(0.02, 0.01), Point2::new(0.08, 0.02));
    g.add_rectangle(Point2::new(0.03, 0.0201), Point2::new(0.07, 0.035));
    g.add_circle(Point2::new(0.05, 0.048), 0.006);
    g.add_region("air", Point2::new(0.005, 0.005));
    g.add_region("plate", Point2::new(0.05, 0.015));
    g.add_region("magnet", Point2::new(0.05, 0.03));
    g.add_region("wire", Point2::new(0.05, 0.048));
    g.set_settings(MeshSettings {
        max_size: Some(h),
        ..MeshSettings::default()
    });
    let t0 = std::time::Instant::now();
    let c0 = cpu_seconds();
    let (mesh, report) = g.mesh_with_report().expect("meshing failed");
    let dt = t0.elapsed().as_secs_f64();
    let dc = cpu_seconds() - c0;
    println!("wall {dt:.3} s, CPU of this thread {dc:.3} s (the machine may be shared)");
    let dt = if dc > 0.0 { dc } else { dt };
    println!(
        "{} triangles, {} nodes in {:.3} s ({:.3} M triangles/s); min angle {:.2} deg, max angle {:.2} deg, max size ratio {:.3}, below min angle {}",
        mesh.triangles().len(),
        mesh.vertices().len(),
        dt,
        mesh.triangles().len() as f64 / dt / 1e6,
        report.min_angle_deg,
        report.max_angle_deg,
        report.max_size_ratio,
        report.triangles_below_min_angle
    );
    for r in &report.regions {
        println!(
            "  {}: {} triangles, {:.6e} m^2, min angle {:.2} deg",
            r.name, r.triangles, r.area, r.min_angle_deg
        );
    }
    mesh.sanity_check().expect("sanity");
}

/// CPU time of the current thread (s) from Linux's schedstat, or 0 elsewhere.
fn cpu_seconds() -> f64 {
    std::fs::read_to_string("/proc/thread-self/schedstat")
        .ok()
        .and_then(|s| s.split_whitespace().next()?.parse::<f64>().ok())
        .map_or(0.0, |ns| ns * 1e-9)
}
