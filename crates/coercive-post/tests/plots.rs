//! SVG pictures and tables: well-formed output, merged colour patches, errors, tables.
//!
//! roxmltree (a small XML parser) checks that every SVG is well-formed XML.

use coercive_mesh::{structured::rectangle, Mesh, MeshRegion, RegionId};
use coercive_post::plot::{
    axisymmetric_flux_function, field_map_svg, table_csv, table_json, working_point_chart_svg,
    working_point_series, xy_chart_svg, ChartOptions, FieldMapOptions, PlotError, Series, Table,
};
use coercive_post::MagnetWorkingPoint;

fn parse(svg: &str) -> roxmltree::Document<'_> {
    roxmltree::Document::parse(svg).unwrap_or_else(|e| panic!("malformed SVG: {e}"))
}

/// A 10 x 10 cell square with the middle 4 x 4 cells in a second region `core`.
fn two_region_mesh() -> Mesh {
    let base = rectangle(0.0, 0.0, 0.01, 0.01, 10, 10, "air").unwrap();
    let regions = base
        .triangles()
        .iter()
        .map(|t| {
            let p = t.map(|v| base.vertex(v));
            let (cx, cy) = (
                (p[0].x + p[1].x + p[2].x) / 3.0,
                (p[0].y + p[1].y + p[2].y) / 3.0,
            );
            if (0.003..0.007).contains(&cx) && (0.003..0.007).contains(&cy) {
                RegionId(1)
            } else {
                RegionId(0)
            }
        })
        .collect();
    Mesh::from_parts(
        base.vertices().to_vec(),
        base.triangles().to_vec(),
        regions,
        vec![
            MeshRegion {
                name: "air".into(),
                rigid_group: None,
            },
            MeshRegion {
                name: "core".into(),
                rigid_group: None,
            },
        ],
        base.curves().to_vec(),
        Vec::new(),
    )
    .unwrap()
}

fn filled_paths(doc: &roxmltree::Document) -> Vec<(String, String)> {
    doc.descendants()
        .filter(|n| n.has_tag_name("path"))
        .filter_map(|n| {
            let fill = n.attribute("fill")?;
            (fill != "none" && n.attribute("stroke") == Some(fill))
                .then(|| (fill.to_string(), n.attribute("d").unwrap_or("").to_string()))
        })
        .collect()
}

#[test]
fn equal_colours_merge_into_one_path_per_level_with_holes() {
    let mesh = two_region_mesh();
    let cells: Vec<f64> = mesh
        .triangle_regions()
        .iter()
        .map(|r| if r.0 == 1 { 1.5 } else { 0.2 })
        .collect();
    let a: Vec<f64> = mesh.vertices().iter().map(|p| p.x).collect();
    let svg = field_map_svg(
        &mesh,
        &a,
        &cells,
        &FieldMapOptions {
            title: "Test <map> & \"quotes\"".into(),
            value_range: Some((0.0, 2.0)),
            ..FieldMapOptions::default()
        },
    )
    .unwrap();
    let doc = parse(&svg);
    let paths = filled_paths(&doc);
    assert_eq!(paths.len(), 2, "two colours, two paths");
    let mut loops: Vec<usize> = paths.iter().map(|(_, d)| d.matches('m').count()).collect();
    loops.sort();
    // The core is one loop; the air around it is an outer loop plus the hole's loop.
    assert_eq!(loops, [1, 2]);
    // Each loop lists each boundary vertex once: core 4 x 4 cells -> 16 boundary edges.
    let core = paths
        .iter()
        .find(|(_, d)| d.matches('m').count() == 1)
        .unwrap();
    let numbers = core
        .1
        .split(['m', 'z', ' '])
        .filter(|s| !s.is_empty())
        .count();
    assert_eq!(numbers, 2 * 16);
    let texts: Vec<&str> = doc.descendants().filter_map(|n| n.text()).collect();
    assert!(texts.contains(&"Test <map> & \"quotes\""));
    assert!(texts.contains(&"|B| (T)"));
    assert!(texts.iter().any(|t| t.ends_with(" mm")), "scale bar label");
}

#[test]
fn region_outline_and_flux_lines_are_drawn() {
    let mesh = two_region_mesh();
    let cells = vec![0.5; mesh.triangles().len()];
    let a: Vec<f64> = mesh.vertices().iter().map(|p| p.x + 2.0 * p.y).collect();
    let svg = field_map_svg(&mesh, &a, &cells, &FieldMapOptions::default()).unwrap();
    let doc = parse(&svg);
    let strokes: Vec<(&str, &str)> = doc
        .descendants()
        .filter(|n| n.has_tag_name("path") && n.attribute("fill") == Some("none"))
        .map(|n| (n.attribute("stroke").unwrap(), n.attribute("d").unwrap()))
        .collect();
    // Flux lines: 24 straight contours of a linear potential, each one polyline.
    let flux = strokes.iter().find(|(s, _)| *s == "#111111").unwrap();
    assert_eq!(flux.1.matches('m').count(), 24);
    // Outlines: the outer boundary and the core's boundary.
    let outline = strokes.iter().find(|(s, _)| *s == "#000000").unwrap();
    assert!(outline.1.matches('m').count() >= 2);
    // Without outlines or flux lines, neither path is written.
    let bare = field_map_svg(
        &mesh,
        &a,
        &cells,
        &FieldMapOptions {
            outlines: false,
            flux_lines: 0,
            ..FieldMapOptions::default()
        },
    )
    .unwrap();
    assert!(!bare.contains("#111111") && !bare.contains("stroke=\"#000000\" stroke-width=\"12\""));
}

#[test]
fn large_mesh_stays_small() {
    // 200 x 200 cells = 80k triangles with a smooth field: merged colour patches keep the file
    // far below one path element per triangle.
    let mesh = rectangle(0.0, 0.0, 0.1, 0.1, 200, 200, "air").unwrap();
    let a: Vec<f64> = mesh
        .vertices()
        .iter()
        .map(|p| (30.0 * p.x).sin() * p.y)
        .collect();
    let cells: Vec<f64> = mesh
        .triangles()
        .iter()
        .map(|t| {
            let p = t.map(|v| mesh.vertex(v));
            ((p[0].x + p[1].x + p[2].x) * 10.0).cos().abs()
        })
        .collect();
    let svg = field_map_svg(&mesh, &a, &cells, &FieldMapOptions::default()).unwrap();
    parse(&svg);
    assert!(filled_paths(&parse(&svg)).len() <= 64);
    // One path element per triangle would take at least 40 bytes each; the merged patches on
    // a 0.1 px lattice with relative moves take about 5.
    assert!(
        svg.len() < 8 * mesh.triangles().len(),
        "{} bytes",
        svg.len()
    );
}

#[test]
fn window_draws_only_the_part_inside() {
    let mesh = two_region_mesh();
    let cells: Vec<f64> = (0..mesh.triangles().len()).map(|i| i as f64).collect();
    let a: Vec<f64> = mesh.vertices().iter().map(|p| p.y).collect();
    let full = field_map_svg(&mesh, &a, &cells, &FieldMapOptions::default()).unwrap();
    let part = field_map_svg(
        &mesh,
        &a,
        &cells,
        &FieldMapOptions {
            window: Some([0.0, 0.0, 0.002, 0.002]),
            ..FieldMapOptions::default()
        },
    )
    .unwrap();
    parse(&part);
    assert!(part.len() < full.len());
    let e = field_map_svg(
        &mesh,
        &a,
        &cells,
        &FieldMapOptions {
            window: Some([1.0, 1.0, 2.0, 2.0]),
            ..FieldMapOptions::default()
        },
    )
    .unwrap_err();
    assert!(matches!(e, PlotError::Empty { .. }), "{e}");
}

#[test]
fn bad_field_map_input_is_a_typed_error() {
    let mesh = two_region_mesh();
    let n = mesh.vertices().len();
    let t = mesh.triangles().len();
    let e = field_map_svg(
        &mesh,
        &vec![0.0; n - 1],
        &vec![0.0; t],
        &FieldMapOptions::default(),
    )
    .unwrap_err();
    assert!(matches!(e, PlotError::LengthMismatch { got, .. } if got == n - 1));
    let mut cells = vec![0.0; t];
    cells[7] = f64::NAN;
    let e = field_map_svg(&mesh, &vec![0.0; n], &cells, &FieldMapOptions::default()).unwrap_err();
    assert!(matches!(e, PlotError::NotFinite { index: 7, .. }), "{e}");
    let e = field_map_svg(
        &mesh,
        &vec![0.0; n],
        &vec![0.0; t],
        &FieldMapOptions {
            colour_levels: 1,
            ..FieldMapOptions::default()
        },
    )
    .unwrap_err();
    assert!(e.to_string().contains("colour_levels"));
    // A constant potential draws no flux line but is not an error.
    assert!(field_map_svg(
        &mesh,
        &vec![1.0; n],
        &vec![0.0; t],
        &FieldMapOptions::default()
    )
    .is_ok());
}

#[test]
fn axisymmetric_flux_function_is_r_times_a_phi() {
    let mesh = rectangle(0.0, -0.01, 0.02, 0.01, 4, 4, "air").unwrap();
    let a = vec![2.0; mesh.vertices().len()];
    let u = axisymmetric_flux_function(&mesh, &a).unwrap();
    for (p, v) in mesh.vertices().iter().zip(&u) {
        assert_eq!(*v, 2.0 * p.x);
    }
    assert!(axisymmetric_flux_function(&mesh, &[1.0]).is_err());
}

fn two_series() -> Vec<Series> {
    vec![
        Series::new(
            "stress tensor, path in air",
            (0..20)
                .map(|i| (0.05 + 0.15 * i as f64, 120.0 / (1.0 + i as f64)))
                .collect(),
        ),
        Series::new(
            "virtual work & <shell>",
            (0..20)
                .map(|i| (0.05 + 0.15 * i as f64, 118.0 / (1.0 + i as f64)))
                .collect(),
        ),
    ]
}

#[test]
fn chart_is_well_formed_with_ticks_units_and_legend() {
    let series = two_series();
    let svg = xy_chart_svg(
        &series,
        &ChartOptions {
            title: "Holding force".into(),
            x_label: "gap (mm)".into(),
            y_label: "force (N)".into(),
            include_zero_y: true,
            ..ChartOptions::default()
        },
    )
    .unwrap();
    let doc = parse(&svg);
    let texts: Vec<&str> = doc.descendants().filter_map(|n| n.text()).collect();
    for expected in [
        "gap (mm)",
        "force (N)",
        "Holding force",
        "virtual work & <shell>",
        "0",
        "120",
    ] {
        assert!(
            texts.contains(&expected),
            "missing text {expected:?} in {texts:?}"
        );
    }
    // One marker per point: 20 circles (series 0) and 20 squares (series 1), plus one each in
    // the legend.
    let circles = doc
        .descendants()
        .filter(|n| n.has_tag_name("circle"))
        .count();
    assert_eq!(circles, 21);
    let log = xy_chart_svg(
        &series,
        &ChartOptions {
            log_x: true,
            ..ChartOptions::default()
        },
    )
    .unwrap();
    let doc = parse(&log);
    let texts: Vec<&str> = doc.descendants().filter_map(|n| n.text()).collect();
    assert!(texts.contains(&"0.1") && texts.contains(&"1"), "{texts:?}");
}

#[test]
fn bad_chart_input_is_a_typed_error() {
    let mut series = two_series();
    series[1].points[3].1 = f64::INFINITY;
    let e = xy_chart_svg(&series, &ChartOptions::default()).unwrap_err();
    assert!(matches!(e, PlotError::NotFinite { index: 3, .. }), "{e}");
    assert!(e.to_string().contains("virtual work"));
    let mut series = two_series();
    series[0].points[0].0 = 0.0;
    let e = xy_chart_svg(
        &series,
        &ChartOptions {
            log_x: true,
            ..ChartOptions::default()
        },
    )
    .unwrap_err();
    assert!(
        matches!(e, PlotError::NonPositiveOnLogAxis { index: 0, .. }),
        "{e}"
    );
    let e = xy_chart_svg(&[Series::new("empty", vec![])], &ChartOptions::default()).unwrap_err();
    assert!(matches!(e, PlotError::Empty { .. }));
}

#[test]
fn tables_in_csv_and_json() {
    let series = two_series();
    let csv = table_csv(&series, "gap (mm)", "force (N)");
    let lines: Vec<&str> = csv.lines().collect();
    assert_eq!(lines[0], "series,gap (mm),force (N)");
    assert_eq!(lines.len(), 1 + 40);
    assert_eq!(lines[1], "\"stress tensor, path in air\",0.05,120");
    let json = table_json(&series, "gap (mm)", "force (N)");
    let value: serde_json::Value = serde_json::from_str(&json).unwrap();
    assert_eq!(value["x_label"], "gap (mm)");
    assert_eq!(value["series"][1]["points"][1][1], 59.0);
    let back: Vec<Series> = serde_json::from_value(value["series"].clone()).unwrap();
    // serde_json's default float parser may round the last bit differently.
    for (b, s) in back.iter().zip(&series) {
        assert_eq!(b.label, s.label);
        for (p, q) in b.points.iter().zip(&s.points) {
            assert!(
                (p.0 - q.0).abs() <= 1e-15 * q.0.abs() && (p.1 - q.1).abs() <= 1e-15 * q.1.abs()
            );
        }
    }

    let mut table = Table::new(vec!["gap (mm)".into(), "force, stress (N)".into()]);
    table.push(vec![0.05, 120.5]).unwrap();
    assert!(table.push(vec![1.0]).is_err());
    assert_eq!(
        table.to_csv(),
        "gap (mm),\"force, stress (N)\"\n0.05,120.5\n"
    );
    let back: Table = serde_json::from_str(&table.to_json()).unwrap();
    assert_eq!(back, table);
}

#[test]
fn working_point_chart_shows_recoil_and_load_lines() {
    // NdFeB N42 nominal (Br 1.30 T, mu_rec 1.05): model coercivity Br/(mu_0 mu_rec).
    let hc = 1.30 / (coercive_fem::MU_0 * 1.05);
    // A working point on the recoil line at permeance coefficient 2: B = -2 mu_0 H and
    // B = Br + mu_0 mu_rec H give H = -Br/(mu_0 (mu_rec + 2)).
    let h = -1.30 / (coercive_fem::MU_0 * 3.05);
    let b = -2.0 * coercive_fem::MU_0 * h;
    let p = MagnetWorkingPoint {
        region: "magnet & pole".into(),
        hysteretic: false,
        remanence_t: 1.30,
        mean_polarisation_t: b - coercive_fem::MU_0 * h,
        knee_field_a_per_m: None,
        beyond_knee_fraction: 0.0,
        model_coercivity_a_per_m: hc,
        mean_flux_density_t: b,
        min_flux_density_t: b - 0.1,
        max_flux_density_t: b + 0.1,
        mean_field_strength_a_per_m: h,
        min_field_strength_a_per_m: h - 0.1 / (coercive_fem::MU_0 * 1.05),
        max_field_strength_a_per_m: h + 0.1 / (coercive_fem::MU_0 * 1.05),
        permeance_coefficient: 2.0,
        weakest_point: [0.0, 0.0],
    };
    let series = working_point_series(std::slice::from_ref(&p));
    assert_eq!(series.len(), 4);
    assert_eq!(series[0].points, vec![(-hc * 1e-3, 0.0), (0.0, 1.30)]);
    // The mean point lies on the recoil line.
    let (x, y) = series[2].points[0];
    assert!((y - (1.30 + coercive_fem::MU_0 * 1.05 * x * 1e3)).abs() < 1e-12);
    let svg = working_point_chart_svg(&[p], &ChartOptions::default()).unwrap();
    let doc = parse(&svg);
    let texts: Vec<&str> = doc.descendants().filter_map(|n| n.text()).collect();
    assert!(texts.contains(&"H along the easy axis (kA/m)"));
    assert!(texts.contains(&"magnet & pole: mean working point"));
    assert!(working_point_chart_svg(&[], &ChartOptions::default()).is_err());
}

#[test]
fn filled_contours_are_well_formed_and_their_bands_ordered() {
    use coercive_post::plot::{filled_contour_svg, ContourOptions};
    // z = x + 2 y on [0, 4] x [0, 3]: the piecewise-linear interpolant is exact, so band k
    // is the strip levels[k] <= x + 2 y <= levels[k + 1].
    let x: Vec<f64> = (0..=8).map(|k| 0.5 * f64::from(k)).collect();
    let y: Vec<f64> = (0..=6).map(|k| 0.5 * f64::from(k)).collect();
    let z: Vec<Vec<f64>> = x
        .iter()
        .map(|&a| y.iter().map(|&b| a + 2.0 * b).collect())
        .collect();
    let options = ContourOptions {
        title: "a plane & its bands".into(),
        x_label: "angle (deg)".into(),
        y_label: "current (A)".into(),
        z_label: "flux linkage (Wb)".into(),
        ..ContourOptions::default()
    };
    let svg = filled_contour_svg(&x, &y, &z, &options).unwrap();
    let doc = parse(&svg);
    let band = |n: &roxmltree::Node, key: &str| n.attribute(key).unwrap().parse::<f64>().unwrap();
    let paths: Vec<_> = doc
        .descendants()
        .filter(|n| n.has_tag_name("path") && n.attribute("data-band").is_some())
        .collect();
    let bars: Vec<_> = doc
        .descendants()
        .filter(|n| n.has_tag_name("rect") && n.attribute("data-band").is_some())
        .collect();
    // Automatic levels span 0..10 (nice steps); every band meets the plane.
    assert!(paths.len() >= 4, "{}", paths.len());
    assert_eq!(paths.len(), bars.len());
    for (k, (p, b)) in paths.iter().zip(&bars).enumerate() {
        assert_eq!(p.attribute("data-band").unwrap(), k.to_string());
        assert_eq!(p.attribute("fill"), b.attribute("fill"));
        assert!(band(p, "data-low") < band(p, "data-high"));
        if k > 0 {
            // Levels increase band by band, and the bar runs bottom (low) to top (high).
            assert_eq!(band(p, "data-low"), band(&paths[k - 1], "data-high"));
            let (y_prev, y_here) = (band(&bars[k - 1], "y"), band(b, "y"));
            assert!(y_here < y_prev, "band {k} drawn below band {}", k - 1);
        }
    }
    assert!(band(&paths[0], "data-low") <= 0.0);
    assert!(band(paths.last().unwrap(), "data-high") >= 10.0);
    // Colours differ between neighbouring bands.
    assert!(paths
        .windows(2)
        .all(|w| w[0].attribute("fill") != w[1].attribute("fill")));
    assert!(svg.contains("a plane &amp; its bands"));

    // Given levels; values outside them are left blank (fewer bands drawn).
    let svg = filled_contour_svg(
        &x,
        &y,
        &z,
        &ContourOptions {
            levels: Some(vec![2.0, 4.0, 6.0]),
            ..ContourOptions::default()
        },
    )
    .unwrap();
    let doc = parse(&svg);
    assert_eq!(
        doc.descendants()
            .filter(|n| n.has_tag_name("path") && n.attribute("data-band").is_some())
            .count(),
        2
    );

    // Bad input is refused by name.
    let e = filled_contour_svg(&x, &y[..3], &z, &options).unwrap_err();
    assert!(matches!(e, PlotError::LengthMismatch { .. }), "{e}");
    let mut bad = z.clone();
    bad[2][3] = f64::NAN;
    let e = filled_contour_svg(&x, &y, &bad, &options).unwrap_err();
    assert!(matches!(e, PlotError::NotFinite { .. }), "{e}");
    let e = filled_contour_svg(
        &x,
        &y,
        &z,
        &ContourOptions {
            levels: Some(vec![3.0, 1.0]),
            ..ContourOptions::default()
        },
    )
    .unwrap_err();
    assert!(
        matches!(
            e,
            PlotError::InvalidOption {
                option: "levels",
                ..
            }
        ),
        "{e}"
    );
}
