//! Times the field, winding and energy post-processing of a large planar solution against
//! the solve itself (a rough check; the criterion benchmark is the measurement of record).
//!
//! A square box of side 0.2 m (A = 0 on its sides) holding a linear iron block, a magnet and a
//! two-sided coil, on an n x n tensor mesh (2 n^2 triangles, P1).
//!
//! Run: `cargo run --release -p coercive-post --example post_timing -- 500`
//! (500 gives 0.5M triangles).

use std::f64::consts::PI;
use std::time::Instant;

use coercive_fem::{
    Formulation, LinearMagnet, MagnetDirection, Material, Model, Sense, Solver, Winding,
};
use coercive_mesh::{Mesh, MeshCurve, MeshRegion, Point2, RegionId, VertexId};
use coercive_post::{flux_linkages, EnergyTable, FieldProbe};

fn mesh(n: usize) -> Mesh {
    let side = 0.2;
    let h = side / n as f64;
    let id = |i: usize, j: usize| VertexId((j * (n + 1) + i) as u32);
    let mut vertices = Vec::with_capacity((n + 1) * (n + 1));
    for j in 0..=n {
        for i in 0..=n {
            vertices.push(Point2::new(i as f64 * h, j as f64 * h));
        }
    }
    let inside = |x: f64, y: f64, b: [f64; 4]| x > b[0] && x < b[1] && y > b[2] && y < b[3];
    let mut triangles = Vec::with_capacity(2 * n * n);
    let mut regions = Vec::with_capacity(2 * n * n);
    for j in 0..n {
        for i in 0..n {
            let (a, b, c, d) = (id(i, j), id(i + 1, j), id(i + 1, j + 1), id(i, j + 1));
            let pair = if (i + j) % 2 == 0 {
                [[a, b, c], [a, c, d]]
            } else {
                [[a, b, d], [b, c, d]]
            };
            for t in pair {
                let cx = t.iter().map(|v| vertices[v.index()].x).sum::<f64>() / 3.0;
                let cy = t.iter().map(|v| vertices[v.index()].y).sum::<f64>() / 3.0;
                let r = if inside(cx, cy, [0.08, 0.12, 0.04, 0.16]) {
                    1
                } else if inside(cx, cy, [0.08, 0.12, 0.17, 0.19]) {
                    2
                } else if inside(cx, cy, [0.05, 0.07, 0.06, 0.14]) {
                    3
                } else if inside(cx, cy, [0.13, 0.15, 0.06, 0.14]) {
                    4
                } else {
                    0
                };
                triangles.push(t);
                regions.push(RegionId(r));
            }
        }
    }
    let boundary: Vec<VertexId> = (0..=n)
        .map(|i| id(i, 0))
        .chain((1..=n).map(|j| id(n, j)))
        .chain((0..n).rev().map(|i| id(i, n)))
        .chain((0..n).rev().map(|j| id(0, j)))
        .collect();
    let names = ["air", "iron", "magnet", "coil_plus", "coil_minus"];
    Mesh::from_parts(
        vertices,
        triangles,
        regions,
        names
            .iter()
            .map(|n| MeshRegion {
                name: n.to_string(),
                rigid_group: None,
            })
            .collect(),
        vec![MeshCurve {
            name: Some("outer".into()),
            nodes: boundary,
        }],
        Vec::new(),
    )
    .expect("valid mesh")
}

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let n: usize = std::env::args()
        .nth(1)
        .map(|s| s.parse())
        .transpose()?
        .unwrap_or(300);
    let t0 = Instant::now();
    let mesh = mesh(n);
    println!(
        "mesh: {} triangles, {:.2} s",
        mesh.triangles().len(),
        t0.elapsed().as_secs_f64()
    );
    let model = Model::builder(mesh, Formulation::Planar { depth_m: 0.05 })
        .material("air", Material::vacuum())
        .material(
            "iron",
            Material::Linear {
                relative_permeability: 1000.0,
            },
        )
        .material(
            "magnet",
            Material::Magnet(LinearMagnet {
                knee_field: None,
                remanence: 1.2,
                recoil_permeability: 1.05,
                perpendicular_permeability: 1.05,
                direction: MagnetDirection::Fixed { angle: -0.5 * PI },
            }),
        )
        .material("coil_plus", Material::vacuum())
        .material("coil_minus", Material::vacuum())
        .winding(
            Winding::new("coil", 200.0, 3.7)
                .side("coil_plus", Sense::Positive)
                .side("coil_minus", Sense::Negative),
        )
        .fixed_potential("outer", 0.0)
        .build()?;
    let t0 = Instant::now();
    let solver = Solver::new(&model)?;
    let sol = solver.solve(&model, &Default::default())?;
    let solve_s = t0.elapsed().as_secs_f64();
    println!("solve (set-up, assembly, factorisation, solve): {solve_s:.2} s");

    let t0 = Instant::now();
    let probe = FieldProbe::new(&sol);
    let locator_s = t0.elapsed().as_secs_f64();
    let t0 = Instant::now();
    let points: Vec<[f64; 2]> = (0..100_000)
        .map(|k| {
            let f = |a: f64| (k as f64 * a).fract() * 0.2;
            [f(0.618_033_988_7), f(0.414_213_562_3)]
        })
        .collect();
    let fields = probe.at_points(&points)?;
    let points_s = t0.elapsed().as_secs_f64();
    let t0 = Instant::now();
    let found = points
        .iter()
        .filter(|p| probe.locator().try_locate(**p).is_some())
        .count();
    println!(
        "100k point locations alone (one thread): {:.3} s ({found} found)",
        t0.elapsed().as_secs_f64()
    );
    let t0 = Instant::now();
    let path = probe.sample_path(&[[0.01, 0.1], [0.19, 0.1]], 10_000)?;
    let path_s = t0.elapsed().as_secs_f64();
    let t0 = Instant::now();
    let averages = probe.region_averages();
    let averages_s = t0.elapsed().as_secs_f64();
    let t0 = Instant::now();
    let working = probe.magnet_working_points();
    let working_s = t0.elapsed().as_secs_f64();
    let t0 = Instant::now();
    let linkages = flux_linkages(&sol)?;
    let linkage_s = t0.elapsed().as_secs_f64();
    let t0 = Instant::now();
    let energy = EnergyTable::new(&sol);
    let energy_s = t0.elapsed().as_secs_f64();
    println!("point locator build: {locator_s:.3} s");
    println!(
        "100k point queries: {points_s:.3} s ({:.2} us each)",
        1e6 * points_s / fields.len() as f64
    );
    println!(
        "path of 10k samples: {path_s:.3} s (mean |B| {:.4} T)",
        path.mean_flux_density_norm()
    );
    println!(
        "region averages: {averages_s:.3} s (iron mean |B| {:.4} T)",
        averages.rows[1].mean_flux_density_norm
    );
    println!(
        "magnet working points: {working_s:.3} s (mean B along axis {:.4} T)",
        working.rows[0].mean_flux_density_t
    );
    println!(
        "flux linkages: {linkage_s:.3} s (psi = {:.4e} Wb)",
        linkages.rows[0].linkage.total_wb
    );
    println!(
        "energy table: {energy_s:.6} s (W = {:.4e} J)",
        energy.total.energy_j
    );
    let post = locator_s + points_s + path_s + averages_s + working_s + linkage_s + energy_s;
    println!(
        "post-processing total {post:.2} s, solve {solve_s:.2} s, ratio {:.2}",
        post / solve_s
    );
    Ok(())
}
