//! A hysteretic magnet in a series magnetic circuit, checked against the circuit's closed form.
//!
//! The circuit is a thin toroidal core (r from 100 to 101 mm) made of three sectors: a magnet
//! (60 degrees, easy axis azimuthal, counter-clockwise), an air gap (2 degrees) and ideal
//! steel (linear, mu_r 1e5, the rest). A winding of 200 turns has its sides in two thin
//! annuli of copper (mu_r 1, 20 um thick) hugging the core: + inside it, - outside it. The
//! whole lies between two flux walls: the inside of the inner copper annulus is a fixed
//! potential (A = 0) and the outside of the outer one a floating potential (A an unknown
//! constant), so no flux leaves the circuit and the floating wall carries no net current.
//!
//! Closed form (the magnetic-circuit model; Ampere's circuital law and flux continuity, any
//! magnetics text, e.g. Cheng, Field and Wave Electromagnetics, 2nd ed., sec. 6-2 and
//! magnetic circuits sec. 6-7; the load-line method for permanent magnets, Parker, Advances in
//! Permanent Magnetism, 1990, ch. 4, from memory):
//! - Ampere's law around the core: H_m l_m + H_g g + H_s l_s = N I (mean arc lengths);
//! - flux continuity: the flux per metre between the walls is the same through every radial
//!   cut (A is 0 on one wall and one constant on the other). Through a cut in sector k it is
//!   w B_k(H_k) + 2 c mu_0 H_k + d(N I): the core (width w) and the two copper layers (width
//!   c each, carrying mu_0 H beside the core; d is the same in every sector, it comes from the
//!   copper's own current and cancels). So
//!   w B_m(H_m) + 2 c mu_0 H_m = mu_0 (w + 2 c) H_g = mu_0 (mu_s w + 2 c) H_s.
//!
//! Eliminating H_g and H_s gives one equation in H_m, the intersection of the magnet's loop
//! branch with the load line, solved here by bisection with the standalone law following
//! the same history of N I as the finite-element pulse. The walls are what make the closed
//! form exact: the same circuit with air around it instead (air from r = 50 to 150 mm, A = 0
//! on both circles) leaks through the air beside the magnet and around the gap, and its FE
//! working point at zero current sat at H_m = -12.3 kA/m, B_m = 1.11 T against the leakage-free
//! -26.1 kA/m, 0.99 T (measured once while building this check); its reverse pulses of up to
//! 9 kA did not reverse the magnet at all.
//!
//! The law's parameters are an arbitrary AlNiCo-like loop (coercive field 50 kA/m, recoil
//! permeability 3): the check is the circuit closed form, not a datasheet.

use std::f64::consts::PI;

use coercive_fem::{
    ElementOrder, Formulation, History, HistoryRun, HistorySettings, HysteresisLaw,
    HystereticMagnet, InitialMagnetisation, KeepSolutions, MagnetDirection, MagnetState, Material,
    Model, Pulse, Sense, Solution, Solver, Winding, MU_0,
};
use coercive_mesh::{Mesh, MeshCurve, MeshRegion, Point2, RegionId, TriangleId, VertexId};

/// Inner and outer radius of the core (m).
const CORE: [f64; 2] = [0.100, 0.101];
/// Radial thickness of each copper annulus (m).
const COPPER: f64 = 5e-6;
/// Angular extent of the magnet and of the gap sector (degrees); steel fills the rest.
const MAGNET_DEG: f64 = 60.0;
const GAP_DEG: f64 = 2.0;
/// Relative permeability of the ideal steel.
const STEEL_MU_R: f64 = 1e5;
/// Turns of the winding.
const TURNS: f64 = 200.0;
/// Stack depth (m): planar results per metre are multiplied by it for totals only.
const DEPTH: f64 = 0.02;

fn law() -> HysteresisLaw {
    HysteresisLaw {
        saturation_polarisation: 1.2,
        coercive_field: 50.0e3,
        width: 8.0e3,
        sigmoid: coercive_fem::hysteresis::Sigmoid::Logistic,
        reversible_polarisation: 0.15,
        recoil_permeability: 3.0,
    }
}

/// The ring between the walls as a structured polar mesh: `n_theta` angular cells (a
/// multiple of 180, so the sectors end on cell boundaries), one layer of cells in each copper
/// annulus and `core_layers` across the core. Regions `copper_in`, `copper_out`, and in the
/// core `magnet`, `gap`, `steel` by angle. Curves `inner` and `outer` (closed circles).
fn ring_mesh(n_theta: usize, core_layers: usize) -> Mesh {
    assert_eq!(n_theta % 180, 0);
    let mut radii = vec![CORE[0] - COPPER];
    for k in 0..=core_layers {
        radii.push(CORE[0] + (CORE[1] - CORE[0]) * k as f64 / core_layers as f64);
    }
    radii.push(CORE[1] + COPPER);
    let layers = radii.len() - 1;
    let cells_per_degree = n_theta as f64 / 360.0;
    let magnet_cells = (MAGNET_DEG * cells_per_degree).round() as usize;
    let gap_cells = (GAP_DEG * cells_per_degree).round() as usize;
    let region_of = |k: usize, j: usize| -> &'static str {
        if k == 0 {
            "copper_in"
        } else if k == layers - 1 {
            "copper_out"
        } else if j < magnet_cells {
            "magnet"
        } else if j < magnet_cells + gap_cells {
            "gap"
        } else {
            "steel"
        }
    };
    let mut vertices = Vec::new();
    // ids[k][j]: ring k, angle j; j = n_theta wraps to 0.
    let mut ids: Vec<Vec<VertexId>> = Vec::new();
    for &r in &radii {
        let mut ring = Vec::with_capacity(n_theta + 1);
        for j in 0..n_theta {
            let th = 2.0 * PI * j as f64 / n_theta as f64;
            vertices.push(Point2::new(r * th.cos(), r * th.sin()));
            ring.push(VertexId((vertices.len() - 1) as u32));
        }
        ring.push(ring[0]);
        ids.push(ring);
    }
    let mut names: Vec<&str> = Vec::new();
    let mut triangles = Vec::new();
    let mut tri_regions = Vec::new();
    for k in 0..layers {
        for j in 0..n_theta {
            let name = region_of(k, j);
            let rid = match names.iter().position(|n| *n == name) {
                Some(i) => i,
                None => {
                    names.push(name);
                    names.len() - 1
                }
            };
            let (a, b) = (ids[k][j], ids[k][j + 1]);
            let (c, d) = (ids[k + 1][j + 1], ids[k + 1][j]);
            if (j + k) % 2 == 0 {
                triangles.extend([[a, d, c], [a, c, b]]);
            } else {
                triangles.extend([[a, d, b], [b, d, c]]);
            }
            tri_regions.extend([RegionId(rid as u32); 2]);
        }
    }
    let curves = vec![
        MeshCurve {
            name: Some("inner".into()),
            nodes: ids[0].clone(),
        },
        MeshCurve {
            name: Some("outer".into()),
            nodes: ids[layers].clone(),
        },
    ];
    Mesh::from_parts(
        vertices,
        triangles,
        tri_regions,
        names
            .into_iter()
            .map(|name| MeshRegion {
                name: name.to_string(),
                rigid_group: None,
            })
            .collect(),
        curves,
        Vec::new(),
    )
    .unwrap()
}

fn circuit_model(order: ElementOrder, n_theta: usize, core_layers: usize) -> Model {
    circuit_model_builder(order, n_theta, core_layers)
        .build()
        .unwrap()
}

fn circuit_model_builder(
    order: ElementOrder,
    n_theta: usize,
    core_layers: usize,
) -> coercive_fem::ModelBuilder {
    let magnet = HystereticMagnet {
        law: law(),
        perpendicular_permeability: 1.0,
        direction: MagnetDirection::Azimuthal {
            centre: [0.0, 0.0],
            counter_clockwise: true,
        },
        initial: InitialMagnetisation::Forward,
    };
    Model::builder(
        ring_mesh(n_theta, core_layers),
        Formulation::Planar { depth_m: DEPTH },
    )
    .order(order)
    .material("copper_in", Material::vacuum())
    .material("copper_out", Material::vacuum())
    .material("gap", Material::vacuum())
    .material(
        "steel",
        Material::Linear {
            relative_permeability: STEEL_MU_R,
        },
    )
    .material("magnet", Material::Hysteretic(magnet))
    // A current along +z inside the core and along -z outside it drives H counter-clockwise
    // around the core: along the magnet's easy axis.
    .winding(
        Winding::new("coil", TURNS, 0.0)
            .side("copper_in", Sense::Positive)
            .side("copper_out", Sense::Negative),
    )
    .fixed_potential("inner", 0.0)
    .floating_potential("outer")
}

/// The magnetic-circuit closed form (see the module docs).
struct Circuit {
    law: HysteresisLaw,
    /// Mean arc lengths (m) of the magnet, the gap and the steel.
    magnet_length: f64,
    /// Reluctance factor (A per Wb/m): gap and steel mmf per unit flux per metre, i.e.
    /// H_g g + H_s l_s = (flux per metre) * this.
    reluctance: f64,
}

impl Circuit {
    fn new() -> Circuit {
        let r_mean = 0.5 * (CORE[0] + CORE[1]);
        let w = CORE[1] - CORE[0];
        let arc = |deg: f64| r_mean * deg.to_radians();
        let (lm, g) = (arc(MAGNET_DEG), arc(GAP_DEG));
        let ls = arc(360.0 - MAGNET_DEG - GAP_DEG);
        Circuit {
            law: law(),
            magnet_length: lm,
            reluctance: g / (MU_0 * (w + 2.0 * COPPER))
                + ls / (MU_0 * (STEEL_MU_R * w + 2.0 * COPPER)),
        }
    }

    /// Flux per metre (Wb/m, up to the common offset d) through a radial cut of the magnet
    /// sector at field `h` (A/m) along the branch leaving `history`: core plus copper.
    fn magnet_flux(&self, history: &History, h: f64) -> f64 {
        let w = CORE[1] - CORE[0];
        w * self.law.flux_density(history, h).0 + 2.0 * COPPER * MU_0 * h
    }

    /// The working point (H_m in A/m, B_m in T) at ampere-turns `ni` (A) from the committed
    /// `history`: the root of H l_m + flux(H) * reluctance = N I, which is strictly
    /// increasing in H (the loop's branches are), by bisection to 1e-9 A/m.
    fn working_point(&self, history: &History, ni: f64) -> (f64, f64) {
        let f =
            |h: f64| h * self.magnet_length + self.magnet_flux(history, h) * self.reluctance - ni;
        let (mut lo, mut hi) = (-1.0e7, 1.0e7);
        assert!(f(lo) < 0.0 && f(hi) > 0.0);
        while hi - lo > 1e-9 {
            let mid = 0.5 * (lo + hi);
            if f(mid) > 0.0 {
                hi = mid;
            } else {
                lo = mid;
            }
        }
        let h = 0.5 * (lo + hi);
        (h, self.law.flux_density(history, h).0)
    }

    /// Follows a sequence of ampere-turns extrema from `history`, committing each working
    /// point (the law is rate-independent: between extrema H_m is monotone in N I).
    fn follow(&self, history: &mut History, ni: &[f64]) -> Vec<(f64, f64)> {
        ni.iter()
            .map(|&x| {
                let (h, b) = self.working_point(history, x);
                self.law.apply(history, h);
                (h, b)
            })
            .collect()
    }
}

/// Volume-weighted means over the magnet region of B and H along the easy axis (T, A/m).
fn magnet_means(model: &Model, sol: &Solution) -> (f64, f64) {
    let mesh = model.mesh();
    let magnet = mesh.region_by_name("magnet").unwrap();
    let rule = sol.quadrature_rule();
    let (mut vol, mut sb, mut sh) = (0.0, 0.0, 0.0);
    for (t, r) in mesh.triangle_regions().iter().enumerate() {
        if *r != magnet {
            continue;
        }
        let t = TriangleId(t as u32);
        let p = mesh.triangle_points(t);
        let area = mesh.triangle_area(t);
        let (bs, hs) = (
            sol.flux_density_at_quadrature(t),
            sol.field_strength_at_quadrature(t),
        );
        for (q, (lam, w)) in rule.points.iter().zip(rule.weights).enumerate() {
            let x = lam[0] * p[0].x + lam[1] * p[1].x + lam[2] * p[2].x;
            let y = lam[0] * p[0].y + lam[1] * p[1].y + lam[2] * p[2].y;
            let rr = x.hypot(y);
            let e = [-y / rr, x / rr];
            let dv = w * area;
            vol += dv;
            sb += dv * (bs[q][0] * e[0] + bs[q][1] * e[1]);
            sh += dv * (hs[q][0] * e[0] + hs[q][1] * e[1]);
        }
    }
    (sb / vol, sh / vol)
}

/// The ampere-turns (A) at the waypoints of the check's history: forward to saturation, back
/// to zero, then reverse pulses of growing amplitude, each back to zero, and a forward pulse
/// that runs a minor loop from the reversed state.
const WAYPOINTS: [f64; 11] = [0.0, 20e3, 0.0, -4e3, 0.0, -6.5e3, 0.0, -9e3, 0.0, 4e3, 0.0];

fn waypoint_pulse() -> Pulse {
    WAYPOINTS
        .iter()
        .fold(Pulse::new(&["coil"]), |p, ni| p.then(&[ni / TURNS]))
}

struct WaypointErrors {
    /// Largest relative errors of the mean B and H over the waypoints.
    worst_b: f64,
    worst_h: f64,
    iterations: usize,
    steps: usize,
}

fn compare_waypoints(order: ElementOrder, n_theta: usize, core_layers: usize) -> WaypointErrors {
    let model = circuit_model(order, n_theta, core_layers);
    let solver = Solver::new(&model).unwrap();
    let run: HistoryRun = solver
        .solve_history(
            &model,
            &MagnetState::initial(&model),
            &waypoint_pulse(),
            &HistorySettings::default(),
        )
        .unwrap();
    let circuit = Circuit::new();
    let mut history = History::saturated(true);
    let closed = circuit.follow(&mut history, &WAYPOINTS);
    let waypoint_steps: Vec<_> = run.steps.iter().filter(|s| s.waypoint.is_some()).collect();
    assert_eq!(waypoint_steps.len(), WAYPOINTS.len());
    eprintln!(
        "{order:?}, {n_theta} x {core_layers} core cells: {} unknowns, {} steps, {} Newton \
         iterations, {} cuts",
        solver.unknowns(),
        run.steps.len(),
        run.iterations(),
        run.cuts
    );
    let (mut worst_b, mut worst_h) = (0.0_f64, 0.0_f64);
    for (step, &(h_cf, b_cf)) in waypoint_steps.iter().zip(&closed) {
        let ni = step.currents[0] * TURNS;
        let (b_fe, h_fe) = magnet_means(&model, step.solution.as_ref().unwrap());
        let (eb, eh) = ((b_fe - b_cf) / b_cf, (h_fe - h_cf) / h_cf);
        eprintln!(
            "  NI {ni:9.1} A: B_m FE {b_fe:+.5} T, closed form {b_cf:+.5} T ({eb:+.2e}); \
             H_m FE {:+9.4} kA/m, closed form {:+9.4} kA/m ({eh:+.2e})",
            h_fe / 1e3,
            h_cf / 1e3
        );
        worst_b = worst_b.max(eb.abs());
        worst_h = worst_h.max(eh.abs());
    }
    WaypointErrors {
        worst_b,
        worst_h,
        iterations: run.iterations(),
        steps: run.steps.len(),
    }
}

#[test]
fn the_magnet_working_point_follows_the_load_line_through_a_history() {
    let start = std::time::Instant::now();
    let coarse = compare_waypoints(ElementOrder::P2, 180, 2);
    let fine = compare_waypoints(ElementOrder::P2, 360, 4);
    eprintln!(
        "worst relative error of B_m: {:.2e} coarse, {:.2e} fine; of H_m: {:.2e}, {:.2e} \
         ({} + {} steps, {} + {} Newton iterations; {:.2} s)",
        coarse.worst_b,
        fine.worst_b,
        coarse.worst_h,
        fine.worst_h,
        coarse.steps,
        fine.steps,
        coarse.iterations,
        fine.iterations,
        start.elapsed().as_secs_f64()
    );
    for e in [&coarse, &fine] {
        assert!(e.worst_b < 0.01, "B_m off by {}", e.worst_b);
        assert!(e.worst_h < 0.01, "H_m off by {}", e.worst_h);
    }
    // Halving the cells both ways shrinks the error (measured about 2.6x for B_m and H_m):
    // what is left is discretisation, not a flaw of the closed form.
    assert!(fine.worst_b < 0.6 * coarse.worst_b);
    assert!(fine.worst_h < 0.6 * coarse.worst_h);
}

/// Mean polarisation J = B - mu_0 H along the easy axis over the magnet (T).
fn magnet_polarisation(model: &Model, sol: &Solution) -> f64 {
    let (b, h) = magnet_means(model, sol);
    b - MU_0 * h
}

/// The fraction of the remanent polarisation a switching pulse must reverse: after the pulse
/// and back at zero current, J = -REVERSAL * J_before.
const REVERSAL: f64 = 0.5;

/// The forward magnetising pulse (A-turns) that sets the state every switching pulse starts
/// from.
const FORWARD: f64 = 20e3;

/// The closed-form switching ampere-turns: the reverse pulse amplitude (A) after which the
/// zero-current working point's polarisation is -REVERSAL times its value before the pulse,
/// by bisection to 1e-6 A (the remanent polarisation falls monotonically with the amplitude).
fn closed_form_switching() -> (f64, f64) {
    let circuit = Circuit::new();
    let mut start = History::saturated(true);
    circuit.follow(&mut start, &[FORWARD, 0.0]);
    let j_of = |hb: (f64, f64)| hb.1 - MU_0 * hb.0;
    let j0 = j_of(circuit.working_point(&start, 0.0));
    let after = |ni: f64| {
        let mut h = start.clone();
        j_of(circuit.follow(&mut h, &[-ni, 0.0])[1])
    };
    let target = -REVERSAL * j0;
    let (mut lo, mut hi) = (0.0, FORWARD);
    assert!(after(lo) > target && after(hi) < target);
    while hi - lo > 1e-6 {
        let mid = 0.5 * (lo + hi);
        if after(mid) > target {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    (0.5 * (lo + hi), j0)
}

struct Switching {
    ampere_turns: f64,
    j0: f64,
    pulses: usize,
    iterations: usize,
}

/// The finite-element switching ampere-turns: bisection on the amplitude of a reverse pulse
/// (0 -> -N I -> 0), each solved from the same committed state left by the forward pulse,
/// until the bracket is narrower than 2e-5 of its upper end.
fn fe_switching(order: ElementOrder, n_theta: usize, core_layers: usize) -> Switching {
    let model = circuit_model(order, n_theta, core_layers);
    let solver = Solver::new(&model).unwrap();
    let settings = HistorySettings {
        max_step: 0.2,
        keep: KeepSolutions::Last,
        ..HistorySettings::default()
    };
    let forward = solver
        .solve_history(
            &model,
            &MagnetState::initial(&model),
            &Pulse::single("coil", FORWARD / TURNS),
            &settings,
        )
        .unwrap();
    let j0 = magnet_polarisation(&model, forward.last_solution().unwrap());
    let target = -REVERSAL * j0;
    let (mut pulses, mut iterations) = (0, forward.iterations());
    let mut after = |ni: f64| {
        let run = solver
            .solve_history(
                &model,
                &forward.state,
                &Pulse::single("coil", -ni / TURNS),
                &settings,
            )
            .unwrap();
        pulses += 1;
        iterations += run.iterations();
        magnet_polarisation(&model, run.last_solution().unwrap())
    };
    // A bracket from the circuit's scale, not from the closed form: a reverse pulse of the
    // magnet's coercive field times its length alone does not reach the gap's demand, and
    // the forward pulse's amplitude reverses it fully.
    let (mut lo, mut hi) = (law().coercive_field * Circuit::new().magnet_length, FORWARD);
    assert!(after(lo) > target && after(hi) < target);
    while hi - lo > 2e-5 * hi {
        let mid = 0.5 * (lo + hi);
        if after(mid) > target {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    Switching {
        ampere_turns: 0.5 * (lo + hi),
        j0,
        pulses,
        iterations,
    }
}

#[test]
fn the_switching_ampere_turns_follow_from_the_load_line() {
    let start = std::time::Instant::now();
    let (closed, j0) = closed_form_switching();
    eprintln!(
        "closed form: J before {j0:.5} T, reversal to {:.2} of it after {closed:.2} A-turns",
        -REVERSAL
    );
    for (n_theta, layers) in [(180, 2), (360, 4)] {
        let fe = fe_switching(ElementOrder::P2, n_theta, layers);
        let e = (fe.ampere_turns - closed) / closed;
        eprintln!(
            "P2, {n_theta} x {layers}: J before {:.5} T; switching {:.2} A-turns ({e:+.2e}); \
             {} pulses, {} Newton iterations",
            fe.j0, fe.ampere_turns, fe.pulses, fe.iterations
        );
        assert!(((fe.j0 - j0) / j0).abs() < 0.01, "{} vs {j0}", fe.j0);
        assert!(
            e.abs() < 0.01,
            "switching {} A vs {closed} A",
            fe.ampere_turns
        );
    }
    eprintln!("{:.2} s", start.elapsed().as_secs_f64());
}

#[test]
fn the_floating_wall_is_one_flux_line_and_names_a_missing_curve() {
    let model = circuit_model(ElementOrder::P2, 180, 2);
    let sol = Solver::new(&model)
        .unwrap()
        .solve_with_state(
            &model.with_winding_current("coil", -30.0).unwrap(),
            &MagnetState::initial(&model),
            None,
            &coercive_fem::NewtonSettings::default(),
        )
        .unwrap();
    // A takes one value along the whole outer wall: the flux per metre through the circuit.
    let outer = model.mesh().curves_named("outer")[0];
    let values: Vec<f64> = model
        .mesh()
        .curve_nodes(outer)
        .iter()
        .map(|v| sol.vertex_potential(*v))
        .collect();
    let spread = values
        .iter()
        .fold(0.0_f64, |m, a| m.max((a - values[0]).abs()));
    assert!(values[0].abs() > 0.0);
    assert!(
        spread <= 1e-12 * values[0].abs(),
        "{spread} vs {}",
        values[0]
    );
    // The flux between the walls is the magnet's flux (plus its copper's) at the mean B.
    let (b, h) = magnet_means(&model, &sol);
    let flux = (CORE[1] - CORE[0]) * b + 2.0 * COPPER * MU_0 * h;
    assert!(
        ((values[0].abs() - flux.abs()) / flux).abs() < 0.01,
        "{} vs {flux}",
        values[0]
    );
    // A floating wall on a curve the mesh does not have is refused, naming it.
    let err = circuit_model_builder(ElementOrder::P1, 180, 2)
        .floating_potential("nowhere")
        .build()
        .unwrap_err();
    match err {
        coercive_fem::FemError::UnknownCurve { curve, .. } => assert_eq!(curve, "nowhere"),
        other => panic!("{other:?}"),
    }
}

#[test]
fn the_circuit_energy_balance_closes_per_pulse() {
    // Energy balance per pulse (supplied i dpsi = stored-energy change + hysteresis loss) for
    // each pulse of the check's history: forward saturation, the reverse pulses and the minor
    // loop. The split is exact per quadrature point, so the residual is the trapezoidal
    // rule's error over the load steps: small at the default step, falling as its square.
    // Its scale is the energy that flowed in (the steps with i dpsi > 0), not the net
    // supply: the first pulse meets an already saturated magnet and returns all but 2.5 % of
    // what it delivered. The loss is never negative and below the whole loop's area.
    let model = circuit_model(ElementOrder::P2, 180, 2);
    let solver = Solver::new(&model).unwrap();
    let law = law();
    let magnet_area = PI * (CORE[1] * CORE[1] - CORE[0] * CORE[0]) * MAGNET_DEG / 360.0;
    let loop_bound = 4.0 * law.saturation_polarisation * law.coercive_field * magnet_area * DEPTH;
    let mut residuals: Vec<Vec<f64>> = Vec::new();
    for max_step in [0.1, 0.05] {
        let settings = HistorySettings {
            max_step,
            keep: KeepSolutions::Last,
            ..HistorySettings::default()
        };
        let mut state = MagnetState::initial(&model);
        let mut per_pulse = Vec::new();
        for pulse_waypoints in WAYPOINTS.windows(3).step_by(2) {
            let pulse = pulse_waypoints
                .iter()
                .fold(Pulse::new(&["coil"]), |p, ni| p.then(&[ni / TURNS]));
            let run = solver
                .solve_history(&model, &state, &pulse, &settings)
                .unwrap();
            let balance = run.energy_balance();
            let delivered: f64 = run
                .steps
                .windows(2)
                .map(|w| {
                    let e = 0.5
                        * (w[0].currents[0] + w[1].currents[0])
                        * (w[1].flux_linkages[0] - w[0].flux_linkages[0]);
                    e.max(0.0) * DEPTH
                })
                .sum();
            let relative = balance.residual_j / delivered;
            eprintln!(
                "max_step {max_step}, pulse {pulse_waypoints:?} A-turns: delivered {delivered:.4e} \
                 J, supplied {:+.4e} J, stored change {:+.4e} J, loss {:.4e} J, residual \
                 {relative:+.2e} of delivered",
                balance.supplied_j, balance.stored_change_j, balance.loss_j
            );
            assert!(run.steps.iter().all(|s| s.loss >= 0.0));
            assert!(balance.loss_j > 0.0 && balance.loss_j < loop_bound);
            per_pulse.push(relative.abs());
            state = run.state;
        }
        residuals.push(per_pulse);
    }
    // Measured: 1.7e-3 to 2.6e-3 at max_step 0.1; 0.25 to 0.38 times that at 0.05.
    for (coarse, fine) in residuals[0].iter().zip(&residuals[1]) {
        assert!(*coarse < 4e-3, "residual {coarse} of the delivered energy");
        assert!(
            *fine < 0.45 * coarse,
            "residual {fine} after halving the step, {coarse} before"
        );
    }
}
