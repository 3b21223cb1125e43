//! The peer benchmark problem of `shared/peers` (see its README): an air box
//! [-0.1, 0.1]^2 m with A = 0 on its boundary, an iron square [-0.03, 0.03]^2 with an unmeshed
//! round hole of radius 0.01 m at the origin, and two coil sides [-0.05, -0.035] x
//! [-0.03, 0.03] (+J) and [0.035, 0.05] x [-0.03, 0.03] (-J).
//!
//! Linear case: iron relative permeability 1000, J = 1e6 A/m^2. Nonlinear case: the iron's
//! reluctivity nu(B^2) = 3.8 exp(2.17 B^2) + 396.2 m/H (Brauer's law, in closed form),
//! J = 1.5e8 A/m^2.
//! Shared by `benches/solve.rs` and `examples/peer_bench.rs`.
#![allow(dead_code)]

use coercive::fem::{ElementOrder, Formulation, Material, Model, Solution};
use coercive::mesh::{Geometry, Mesh, MeshSettings, Point2, TriangleId};

/// Current density of the linear case (A/m^2).
pub const J_LINEAR: f64 = 1.0e6;
/// Current density of the nonlinear case (A/m^2).
pub const J_NONLINEAR: f64 = 1.5e8;

/// Uniform element size (m) giving about `triangles` triangles (calibrated on this mesher:
/// a 30-degree-quality mesh of the 0.04 m^2 domain has about 0.2 / h^2 triangles).
pub fn size_for(triangles: usize) -> f64 {
    (0.2 / triangles as f64).sqrt()
}

/// The peer geometry meshed with a uniform size `h` (m).
pub fn mesh(h: f64) -> Mesh {
    let mut g = Geometry::new();
    for c in g.add_rectangle(Point2::new(-0.1, -0.1), Point2::new(0.1, 0.1)) {
        g.name_curve(c, "outer");
    }
    g.add_rectangle(Point2::new(-0.03, -0.03), Point2::new(0.03, 0.03));
    g.add_circle(Point2::new(0.0, 0.0), 0.01);
    g.add_rectangle(Point2::new(-0.05, -0.03), Point2::new(-0.035, 0.03));
    g.add_rectangle(Point2::new(0.035, -0.03), Point2::new(0.05, 0.03));
    g.add_region("air", Point2::new(0.0, 0.08));
    g.add_region("iron", Point2::new(0.02, 0.02));
    g.add_hole("hole", Point2::new(0.0, 0.0));
    g.add_region("coil_plus", Point2::new(-0.04, 0.0));
    g.add_region("coil_minus", Point2::new(0.04, 0.0));
    g.set_settings(MeshSettings {
        max_size: Some(h),
        min_angle_deg: 30.0,
        ..MeshSettings::default()
    });
    g.mesh().expect("the peer geometry meshes")
}

/// The linear model (iron mu_r = 1000, J = 1e6 A/m^2).
pub fn linear_model(mesh: &std::sync::Arc<Mesh>, order: ElementOrder) -> Model {
    Model::builder(mesh.clone(), Formulation::Planar { depth_m: 1.0 })
        .order(order)
        .material("air", Material::vacuum())
        .material("coil_plus", Material::vacuum())
        .material("coil_minus", Material::vacuum())
        .material(
            "iron",
            Material::Linear {
                relative_permeability: 1000.0,
            },
        )
        .current_density("coil_plus", J_LINEAR)
        .current_density("coil_minus", -J_LINEAR)
        .fixed_potential("outer", 0.0)
        .build()
        .expect("linear peer model")
}

/// The nonlinear model (Brauer-type iron, J = 1.5e8 A/m^2), with the law in closed form at
/// every flux density as the peers use it ([`Material::Brauer`]), also above about 2.06 T
/// where its slope dB/dH falls below mu_0 (a sampled [`coercive::fem::BhCurve::brauer`]
/// table would continue at vacuum slope there and solve a slightly different problem).
pub fn nonlinear_model(mesh: &std::sync::Arc<Mesh>, order: ElementOrder) -> Model {
    let iron = Material::Brauer {
        k1: 3.8,
        k2: 2.17,
        k3: 396.2,
    };
    Model::builder(mesh.clone(), Formulation::Planar { depth_m: 1.0 })
        .order(order)
        .material("air", Material::vacuum())
        .material("coil_plus", Material::vacuum())
        .material("coil_minus", Material::vacuum())
        .material("iron", iron)
        .current_density("coil_plus", J_NONLINEAR)
        .current_density("coil_minus", -J_NONLINEAR)
        .fixed_potential("outer", 0.0)
        .build()
        .expect("nonlinear peer model")
}

/// Integral of the potential over a region (Wb m), exact for the P1 and P2 interpolants.
pub fn region_potential_integral(sol: &Solution, region: &str) -> f64 {
    let mesh = sol.model().mesh();
    let r = mesh.region_by_name(region).expect("region exists");
    let mut s = 0.0;
    for t in 0..mesh.triangles().len() {
        let t = TriangleId(t as u32);
        if mesh.triangle_region(t) != r {
            continue;
        }
        let nodes = sol.triangle_nodes(t);
        let vals = if nodes.len() == 6 { &nodes[3..] } else { nodes };
        let mean = vals
            .iter()
            .map(|&n| sol.potential()[n as usize])
            .sum::<f64>()
            / 3.0;
        s += mean * mesh.triangle_area(t);
    }
    s
}

/// The peer scripts' energy functional W = int w(B) dA - int J A dA (J/m), with w the
/// stored energy density, evaluated on our solution (for the linear case at equilibrium it
/// equals minus the stored energy; the peers print the stored energy 0.5 f.A there).
pub fn energy_functional(sol: &Solution, j: f64) -> f64 {
    sol.energy()
        - j * (region_potential_integral(sol, "coil_plus")
            - region_potential_integral(sol, "coil_minus"))
}

/// Mean |B| over the iron triangles (T), unweighted by area, at each triangle's first
/// quadrature point (as the peer scripts' one-point mean).
pub fn mean_iron_b(sol: &Solution) -> f64 {
    let mesh = sol.model().mesh();
    let iron = mesh.region_by_name("iron").expect("iron region");
    let (mut s, mut n) = (0.0, 0usize);
    for t in 0..mesh.triangles().len() {
        let t = TriangleId(t as u32);
        if mesh.triangle_region(t) == iron {
            let b = sol.flux_density_at_quadrature(t);
            let m = b.iter().map(|v| v[0].hypot(v[1])).sum::<f64>() / b.len() as f64;
            s += m;
            n += 1;
        }
    }
    s / n as f64
}
