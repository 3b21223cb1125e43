//! Holding force of the switchable magnet pad versus air gap, by three methods.
//!
//! Loads `meshes/switchable_pad.toml` (a planar section, 50 mm deep: two steel poles, an NdFeB
//! N42 block and an AlNiCo 5 block both magnetised along +x, the ON state, under a 1010 steel
//! plate), moves the pad assembly (the rigid group `pad`) so that the gap runs from 0.05 mm
//! to 3 mm, solves every point in parallel (nonlinear steel, Newton) and reports the force on
//! the plate by the eggshell method, the Maxwell stress on the mid-line of the air layer and
//! the co-energy difference, with their spread. Writes, into the output directory
//! (first argument, default `./coercive-out`):
//! - `holding_force.csv`, `holding_force.json`: the table;
//! - `holding_force.svg`: force versus gap chart;
//! - `flux_smallest_gap.svg`, `flux_smallest_gap_zoom.svg`, `flux_largest_gap.svg`: |B| and
//!   flux lines at the smallest gap (whole pad and a zoom on a pole face) and at the largest.
//!
//! Run: `cargo run --release --example holding_force [-- OUTPUT_DIR]`.
//!
//! The linear magnet models hold on the recoil line only: AlNiCo 5 is modelled as magnetised
//! (ON state); its switching (hysteresis) is not modelled here.

use std::path::PathBuf;
use std::time::Instant;

use coercive::case::Case;
use coercive::post::force::{Body, ForceSettings};
use coercive::post::plot::{
    field_map_svg, xy_chart_svg, ChartOptions, FieldMapOptions, Series, Table,
};
use coercive::study::{force_sweep, ForceSweepSettings, TranslationPoint};

const DRAWN_GAP_MM: f64 = 0.5;
const GAPS_MM: [f64; 12] = [
    0.05, 0.1, 0.2, 0.3, 0.5, 0.75, 1.0, 1.25, 1.5, 2.0, 2.5, 3.0,
];

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let out: PathBuf = std::env::args_os()
        .nth(1)
        .map(PathBuf::from)
        .unwrap_or_else(|| PathBuf::from("coercive-out"));
    std::fs::create_dir_all(&out)?;
    print_cautions();

    let case_path = concat!(env!("CARGO_MANIFEST_DIR"), "/meshes/switchable_pad.toml");
    let case = Case::from_file(case_path)?;
    let depth_m = case.depth().unwrap_or(0.05);
    // The case file's mesh settings (two elements across the gap with P2, growth 0.4) keep the
    // sweep under a minute on 2 cores; finer settings moved the forces by less than 0.1 %
    // (1111.0 N against 1110.7 N at 0.05 mm, 171.50 N against 171.51 N at 3 mm).
    let geometry = case.geometry()?;
    let started = Instant::now();
    let rigid = geometry.prepare_rigid()?;
    // Materials, element order, depth and boundaries from the case file's sections, through
    // the same code as `coercive solve` (both magnets along +x, the ON state, as its
    // `[[material]]` entries say).
    let build = |mesh| coercive::solve::study_model(&case, mesh);
    let points: Vec<TranslationPoint> = GAPS_MM
        .iter()
        .map(|&g| TranslationPoint {
            label: format!("gap {g} mm"),
            parameter: g * 1e-3,
            // The pad moves up (+y) to close the gap.
            offset: [0.0, (DRAWN_GAP_MM - g) * 1e-3],
        })
        .collect();
    let pad: Vec<&str> = vec![
        "pole_left",
        "pole_right",
        "magnet_ndfeb",
        "magnet_alnico",
        "window_air",
        "coil_upper",
        "coil_lower",
    ];
    let settings = ForceSweepSettings {
        group: "pad".into(),
        direction: [0.0, 1.0],
        body: Body::new(&["plate"]),
        group_body: Body::new(&pad),
        relative_step: 0.2,
        size_step: 0.5,
        min_step_m: 2e-6,
        force: ForceSettings::default(),
    };
    let rows = force_sweep(&rigid, &points, &settings, build)?;
    let elapsed = started.elapsed().as_secs_f64();

    println!(
        "\nHolding force on the plate (pad ON, {:.0} mm deep), pulling the plate towards the pad:",
        depth_m * 1e3
    );
    println!(
        "{:>8} {:>12} {:>12} {:>12} {:>8} {:>12} {:>9} {:>9}",
        "gap", "eggshell", "stress", "co-energy", "spread", "pad+plate", "B plate", "triangles"
    );
    println!(
        "{:>8} {:>12} {:>12} {:>12} {:>8} {:>12} {:>9} {:>9}",
        "(mm)", "(N)", "(N)", "(N)", "(%)", "(N)", "(T)", ""
    );
    let mut table = Table::new(vec![
        "gap (mm)".into(),
        "holding force, eggshell (N)".into(),
        "holding force, mid-line stress (N)".into(),
        "holding force, co-energy difference (N)".into(),
        "spread (%)".into(),
        "action-reaction residual (N)".into(),
        "peak |B| in plate (T)".into(),
        "Newton iterations".into(),
        "triangles".into(),
    ]);
    for r in &rows {
        // Holding force: the pull on the plate towards the pad (-y), positive.
        let (e, s, c) = (-r.eggshell_n, -r.stress_n, -r.coenergy_n);
        let residual = r.eggshell_n + r.group_eggshell_n;
        println!(
            "{:>8.2} {:>12.2} {:>12.2} {:>12.2} {:>8.2} {:>12.3} {:>9.3} {:>9}{}",
            r.point.parameter * 1e3,
            e,
            s,
            c,
            100.0 * r.spread,
            residual,
            r.peak_flux_density_t,
            r.triangles,
            if r.warning {
                "  <- methods disagree"
            } else {
                ""
            }
        );
        table.push(vec![
            r.point.parameter * 1e3,
            e,
            s,
            c,
            100.0 * r.spread,
            residual,
            r.peak_flux_density_t,
            r.newton_iterations as f64,
            r.triangles as f64,
        ])?;
    }
    // Sanity check against the Maxwell pressure B^2 / (2 mu_0) (39.8 N/cm^2 at 1 T): the mean
    // flux density over both pole faces that the largest force implies.
    let pole_face_m2 = 2.0 * 0.010 * depth_m;
    let f_max = -rows[0].eggshell_n;
    println!(
        "At {} mm the force means a mean pole-face flux density sqrt(2 mu_0 F / A) = {:.2} T \
         over both pole faces ({:.0} mm^2).",
        GAPS_MM[0],
        (2.0 * coercive::fem::MU_0 * f_max / pole_face_m2).sqrt(),
        pole_face_m2 * 1e6
    );
    println!("{} sweep points x 3 solves in {elapsed:.1} s.", rows.len());
    std::fs::write(out.join("holding_force.csv"), table.to_csv())?;
    std::fs::write(out.join("holding_force.json"), table.to_json())?;

    let series = |label: &str, pick: &dyn Fn(&coercive::study::ForcePoint) -> f64| {
        Series::new(
            label,
            rows.iter()
                .map(|r| (r.point.parameter * 1e3, -pick(r)))
                .collect(),
        )
    };
    let chart = xy_chart_svg(
        &[
            series("eggshell (virtual work)", &|r| r.eggshell_n),
            series("Maxwell stress, mid-line of air layer", &|r| r.stress_n),
            series("co-energy difference", &|r| r.coenergy_n),
        ],
        &ChartOptions {
            title: format!(
                "Switchable pad (ON), holding force versus gap, {:.0} mm deep",
                depth_m * 1e3
            ),
            x_label: "gap (mm)".into(),
            y_label: "holding force (N)".into(),
            include_zero_y: true,
            ..ChartOptions::default()
        },
    )?;
    std::fs::write(out.join("holding_force.svg"), chart)?;

    // Flux plots (one more solve each; the sweep keeps no solutions): the whole pad at the
    // smallest and the largest gap (leakage grows with the gap), and a zoom on the right
    // pole's face at the smallest gap.
    let g0 = GAPS_MM[0];
    let g1 = GAPS_MM[GAPS_MM.len() - 1];
    let whole = [-0.045, -0.012, 0.045, 0.052];
    let zoom = [0.011, 0.0265, 0.029, 0.0335];
    for (gap, window, file, what) in [
        (g0, whole, "flux_smallest_gap.svg", "|B| and flux lines"),
        (
            g0,
            zoom,
            "flux_smallest_gap_zoom.svg",
            "right pole face, |B| and flux lines",
        ),
        (g1, whole, "flux_largest_gap.svg", "|B| and flux lines"),
    ] {
        let mesh = rigid.mesh_at(&[(
            "pad",
            coercive::mesh::Placement::translation(0.0, (DRAWN_GAP_MM - gap) * 1e-3),
        )])?;
        let sol = build(mesh)?.solve()?;
        let mesh = sol.model().mesh().clone();
        let nv = mesh.vertices().len();
        let cells: Vec<f64> = (0..mesh.triangles().len())
            .map(|t| {
                let b = sol.flux_density_at_quadrature(coercive::mesh::TriangleId(t as u32));
                b.iter().map(|b| b[0].hypot(b[1])).sum::<f64>() / b.len() as f64
            })
            .collect();
        let map = field_map_svg(
            &mesh,
            &sol.potential()[..nv],
            &cells,
            &FieldMapOptions {
                title: format!("Switchable pad (ON) at a {gap} mm gap: {what}"),
                window: Some(window),
                flux_lines: 40,
                value_range: Some((0.0, 2.2)),
                ..FieldMapOptions::default()
            },
        )?;
        std::fs::write(out.join(file), map)?;
    }
    println!(
        "Wrote holding_force.csv, holding_force.json, holding_force.svg, \
         flux_smallest_gap.svg, flux_smallest_gap_zoom.svg and flux_largest_gap.svg to {}",
        out.display()
    );
    Ok(())
}

fn print_cautions() {
    println!("Safety (magnet devices):");
    println!(
        "  - Pinch hazard: a holding magnet snaps onto steel with the forces below; keep fingers"
    );
    println!("    out of the gap and handle large magnets with tools.");
    println!(
        "  - Strong fields affect pacemakers, implanted defibrillators and other implants, and"
    );
    println!(
        "    can erase cards and damage instruments: keep the safety distances of the makers."
    );
    println!(
        "  - Pulse coils that switch the magnet are driven from charged capacitors: discharge"
    );
    println!("    them before touching the circuit.");
    println!("  - Computed holding forces are for ideal flat, clean, thick steel: derate for real");
    println!("    plates, and apply the lifting safety factors of your local codes. These numbers");
    println!("    do not replace local codes or licensed engineering practice.");
}
