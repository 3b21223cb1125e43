//! Draws a demonstration field map and chart from an analytic field (no solver needed).
//!
//! The potential is that of two long antiparallel line currents, +-I at (-d, 0) and (d, 0),
//! A_z = (mu_0 I / 2 pi) ln(r2 / r1) (planar magnetostatics; any electromagnetics text), on a
//! structured rectangle whose triangles are split into an `iron` band, two `coil` squares and
//! `air`, so that region outlines show. |B| per triangle comes from the gradient of the linear
//! interpolant of A: B = (dA/dy, -dA/dx).
//!
//! Run: `cargo run --release -p coercive-post --example plot_demo -- [OUT_DIR] [CELLS]`
//! (default /tmp/coercive-plot-demo and 120 cells across; 700 gives about 1M triangles).

use std::time::Instant;

use coercive_mesh::{structured::rectangle, Mesh, MeshRegion, RegionId};
use coercive_post::plot::{
    field_map_svg, table_csv, table_json, xy_chart_svg, ChartOptions, FieldMapOptions, Series,
};

const MU_0: f64 = 4.0e-7 * std::f64::consts::PI;

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let mut args = std::env::args().skip(1);
    let dir = args
        .next()
        .unwrap_or_else(|| "/tmp/coercive-plot-demo".into());
    let cells: usize = args.next().map(|s| s.parse()).transpose()?.unwrap_or(120);
    std::fs::create_dir_all(&dir)?;

    // 60 mm x 40 mm box, in metres.
    let base = rectangle(-0.03, -0.02, 0.03, 0.02, cells, cells * 2 / 3, "air")?;
    let regions = vec![
        MeshRegion {
            name: "air".into(),
            rigid_group: None,
        },
        MeshRegion {
            name: "iron".into(),
            rigid_group: None,
        },
        MeshRegion {
            name: "coil".into(),
            rigid_group: None,
        },
    ];
    let region_of = |x: f64, y: f64| -> RegionId {
        if (x.abs() - 0.01).abs() < 0.004 && y.abs() < 0.004 {
            RegionId(2)
        } else if y > 0.008 && y < 0.014 {
            RegionId(1)
        } else {
            RegionId(0)
        }
    };
    let tri_regions = base
        .triangles()
        .iter()
        .map(|t| {
            let p = t.map(|v| base.vertex(v));
            region_of(
                (p[0].x + p[1].x + p[2].x) / 3.0,
                (p[0].y + p[1].y + p[2].y) / 3.0,
            )
        })
        .collect();
    let mesh = Mesh::from_parts(
        base.vertices().to_vec(),
        base.triangles().to_vec(),
        tri_regions,
        regions,
        base.curves().to_vec(),
        Vec::new(),
    )?;

    let (current, d) = (1000.0, 0.01);
    let potential: Vec<f64> = mesh
        .vertices()
        .iter()
        .map(|p| {
            let r1 = ((p.x + d).powi(2) + p.y * p.y).sqrt().max(5e-4);
            let r2 = ((p.x - d).powi(2) + p.y * p.y).sqrt().max(5e-4);
            MU_0 * current / (2.0 * std::f64::consts::PI) * (r2 / r1).ln()
        })
        .collect();
    let b_abs: Vec<f64> = mesh
        .triangles()
        .iter()
        .map(|t| {
            let p = t.map(|v| mesh.vertex(v));
            let a = t.map(|v| potential[v.index()]);
            let det = (p[1].x - p[0].x) * (p[2].y - p[0].y) - (p[2].x - p[0].x) * (p[1].y - p[0].y);
            let dadx =
                ((a[1] - a[0]) * (p[2].y - p[0].y) - (a[2] - a[0]) * (p[1].y - p[0].y)) / det;
            let dady =
                ((a[2] - a[0]) * (p[1].x - p[0].x) - (a[1] - a[0]) * (p[2].x - p[0].x)) / det;
            dady.hypot(dadx)
        })
        .collect();

    let start = Instant::now();
    let svg = field_map_svg(
        &mesh,
        &potential,
        &b_abs,
        &FieldMapOptions {
            title: format!("Two line currents, +-{current} A: |B| and flux lines"),
            value_range: Some((0.0, 0.1)),
            ..FieldMapOptions::default()
        },
    )?;
    let elapsed = start.elapsed();
    std::fs::write(format!("{dir}/field.svg"), &svg)?;
    println!(
        "field map: {} triangles, {:.2} MB, {:.2} s",
        mesh.triangles().len(),
        svg.len() as f64 / 1e6,
        elapsed.as_secs_f64()
    );
    let zoom = field_map_svg(
        &mesh,
        &potential,
        &b_abs,
        &FieldMapOptions {
            title: "Zoom on the right conductor".into(),
            window: Some([0.002, -0.008, 0.02, 0.006]),
            flux_lines: 30,
            ..FieldMapOptions::default()
        },
    )?;
    std::fs::write(format!("{dir}/field_zoom.svg"), &zoom)?;

    // B along the x axis by two "methods" (the analytic line-current field and the mesh),
    // the kind of comparison a force-versus-gap chart shows.
    let exact: Vec<(f64, f64)> = (0..=60)
        .map(|i| {
            let x = -0.03 + 0.06 * i as f64 / 60.0;
            let b = MU_0 * current / (2.0 * std::f64::consts::PI)
                * (1.0 / (x + d).abs().max(1e-3) + 1.0 / (x - d).abs().max(1e-3));
            (x * 1e3, b * 1e3)
        })
        .collect();
    let coarse: Vec<(f64, f64)> = exact
        .iter()
        .step_by(4)
        .map(|&(x, b)| (x, b * 0.97))
        .collect();
    let series = vec![
        Series::new("closed form", exact),
        Series::new("coarse estimate (x 0.97)", coarse),
    ];
    let options = ChartOptions {
        title: "|B| along y = 0".into(),
        x_label: "x (mm)".into(),
        y_label: "|B| (mT)".into(),
        include_zero_y: true,
        ..ChartOptions::default()
    };
    std::fs::write(format!("{dir}/chart.svg"), xy_chart_svg(&series, &options)?)?;
    let log_series: Vec<Series> = vec![Series::new(
        "1/gap law",
        (1..=30)
            .map(|i| (0.05 * 1.2f64.powi(i), 50.0 / (1.0 + 1.2f64.powi(i))))
            .collect(),
    )];
    let log_options = ChartOptions {
        title: "Holding force versus gap (illustration)".into(),
        x_label: "gap (mm)".into(),
        y_label: "force (N)".into(),
        log_x: true,
        include_zero_y: true,
        ..ChartOptions::default()
    };
    std::fs::write(
        format!("{dir}/chart_log.svg"),
        xy_chart_svg(&log_series, &log_options)?,
    )?;
    std::fs::write(
        format!("{dir}/chart.csv"),
        table_csv(&series, "x (mm)", "|B| (mT)"),
    )?;
    std::fs::write(
        format!("{dir}/chart.json"),
        table_json(&series, "x (mm)", "|B| (mT)"),
    )?;
    println!(
        "wrote {dir}/field.svg, field_zoom.svg, chart.svg, chart_log.svg, chart.csv, chart.json"
    );
    Ok(())
}
